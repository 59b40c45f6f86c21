//! Helpers shared by the command-line tests: run the built binary, write a
//! scratch input file.

use std::path::PathBuf;
use std::process::Command;

/// Runs `skewbook ARGS` from the repository root: (exit code, stdout, stderr).
pub fn skewbook(args: &[&str]) -> (i32, String, String) {
    skewbook_with_env(args, &[])
}

/// [`skewbook`] with environment variables `vars` set.
pub fn skewbook_with_env(args: &[&str], vars: &[(&str, &str)]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_skewbook"))
        .args(args)
        .envs(vars.iter().copied())
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("run skewbook");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Writes `contents` to a fresh file `NAME.csv` in a per-process scratch
/// directory and returns its path.
pub fn write_temp(name: &str, contents: impl AsRef<[u8]>) -> String {
    let dir: PathBuf = std::env::temp_dir().join(format!("skewbook-tests-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("scratch directory");
    let path = dir.join(format!("{name}.csv"));
    std::fs::write(&path, contents).expect("scratch file");
    path.to_string_lossy().into_owned()
}

/// `path` under the repository root.
pub fn repo(path: &str) -> String {
    format!("{}/{path}", env!("CARGO_MANIFEST_DIR"))
}

/// `skewbook ARGS --format json`, which must exit 0, parsed.
pub fn json_of(args: &[&str]) -> serde_json::Value {
    let mut all = args.to_vec();
    all.extend(["--format", "json"]);
    let (code, out, err) = skewbook(&all);
    assert_eq!(code, 0, "{args:?}: {err}");
    serde_json::from_str(&out).expect("JSON output")
}

/// A JSON number, which must be one.
pub fn number(v: &serde_json::Value) -> f64 {
    v.as_f64()
        .unwrap_or_else(|| panic!("expected a number, found {v}"))
}

/// The object of a dated JSON array whose `date` is `date`.
pub fn of_date<'a>(report: &'a serde_json::Value, date: &str) -> &'a serde_json::Value {
    report
        .as_array()
        .and_then(|a| a.iter().find(|d| d["date"] == date))
        .unwrap_or_else(|| panic!("date {date} missing"))
}
