//! Helpers shared by the command-line tests: run the built binary, write a
//! scratch input file.

use std::path::PathBuf;
use std::process::Command;

/// Runs `skewbook ARGS` from the repository root: (exit code, stdout, stderr).
pub fn skewbook(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_skewbook"))
        .args(args)
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
