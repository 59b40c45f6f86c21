//! What the commands print on the bundled samples, against the outputs
//! recorded before a refactoring (`tests/reference/output_fixtures.sh`).
//!
//! Every command of `tests/fixtures/outputs/commands.tsv` runs in every
//! format; its exit status must match and its output must match token for
//! token, numbers to 1e-9 (absolute) or 1e-10 (relative), so that a change in
//! the last bits of a repricing error (1e-14) does not count and anything a
//! user could see does. Runs of spaces compare equal whatever their length
//! (a column's alignment follows such a rounding-level number's sign).

use crate::common::skewbook;
use std::path::Path;

fn numbers_agree(a: f64, b: f64) -> bool {
    a == b || (a - b).abs() <= 1e-9 || (a - b).abs() <= 1e-10 * a.abs().max(b.abs())
}

/// Splits text into tokens: runs of number characters and runs of anything else.
fn tokens(s: &str) -> Vec<String> {
    let mut out: Vec<String> = Vec::new();
    let mut cur = String::new();
    let mut numeric = false;
    for ch in s.chars() {
        let is_num = ch.is_ascii_digit() || matches!(ch, '.' | '-' | '+' | 'e' | 'E');
        if !cur.is_empty() && is_num != numeric {
            out.push(std::mem::take(&mut cur));
        }
        numeric = is_num;
        cur.push(ch);
    }
    if !cur.is_empty() {
        out.push(cur);
    }
    out
}

/// `t` with every run of spaces made one space.
fn squash_spaces(t: &str) -> String {
    let mut out = String::with_capacity(t.len());
    for ch in t.chars() {
        if !(ch == ' ' && out.ends_with(' ')) {
            out.push(ch);
        }
    }
    out
}

fn same_output(expected: &str, actual: &str) -> Result<(), String> {
    let (e, a) = (tokens(expected), tokens(actual));
    if e.len() != a.len() {
        return Err(format!("{} tokens expected, {} found", e.len(), a.len()));
    }
    for (x, y) in e.iter().zip(&a) {
        // Runs of spaces may differ in length: a right-aligned column moves
        // by a character when a rounding-level number (a 1e-14 repricing
        // error) changes sign or digit count within the tolerance.
        if x == y || squash_spaces(x) == squash_spaces(y) {
            continue;
        }
        match (x.parse::<f64>(), y.parse::<f64>()) {
            (Ok(p), Ok(q)) if numbers_agree(p, q) => {}
            _ => return Err(format!("expected {x:?}, found {y:?}")),
        }
    }
    Ok(())
}

#[test]
fn token_comparison_catches_a_changed_digit() {
    assert!(same_output("EL 12.34 bp", "EL 12.34 bp").is_ok());
    assert!(same_output("err 6e-14", "err 5.9e-14").is_ok());
    assert!(same_output("EL 12.34 bp", "EL 12.35 bp").is_err());
    assert!(same_output("flags: top", "flags: gap").is_err());
    // A rounding-level sign change moves the column by a space: not a change.
    assert!(same_output("gap   7.1e-15 |", "gap  -7.1e-15 |").is_ok());
    assert!(same_output("gap 1", "gap  1").is_ok());
    assert!(same_output("gap 1", "gap\t1").is_err());
    assert!(same_output("gap 1", "gap1").is_err());
}

#[test]
fn sample_outputs_match_the_recorded_fixtures() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/outputs");
    let commands = std::fs::read_to_string(dir.join("commands.tsv")).expect("commands.tsv");
    let mut checked = 0;
    for line in commands.lines().filter(|l| !l.trim().is_empty()) {
        let (name, args) = line.split_once('\t').expect("name<TAB>args");
        for format in ["table", "csv", "json"] {
            let mut argv: Vec<&str> = args.split(' ').collect();
            argv.extend(["--format", format]);
            let (code, out, err) = skewbook(&argv);
            let file = dir.join(format!("{name}.{format}"));
            let expected = std::fs::read_to_string(&file).expect("fixture");
            let status: i32 = std::fs::read_to_string(dir.join(format!("{name}.{format}.status")))
                .expect("status fixture")
                .trim()
                .parse()
                .expect("status");
            assert_eq!(code, status, "{argv:?}: {err}");
            if let Err(why) = same_output(&expected, &out) {
                panic!("{argv:?} differs from {}: {why}", file.display());
            }
            checked += 1;
        }
    }
    assert!(checked >= 30, "only {checked} outputs checked");
}

/// Every number of two JSON documents within `tol` (absolute), every other
/// value equal; the path of the first difference otherwise.
fn json_agrees(
    a: &serde_json::Value,
    b: &serde_json::Value,
    tol: f64,
    path: &str,
) -> Result<(), String> {
    use serde_json::Value;
    match (a, b) {
        (Value::Number(x), Value::Number(y)) => {
            let (x, y) = (
                x.as_f64().unwrap_or(f64::NAN),
                y.as_f64().unwrap_or(f64::NAN),
            );
            if x == y || (x - y).abs() <= tol {
                Ok(())
            } else {
                Err(format!("{path}: {x} vs {y}"))
            }
        }
        (Value::Array(x), Value::Array(y)) if x.len() == y.len() => x
            .iter()
            .zip(y)
            .enumerate()
            .try_for_each(|(i, (u, v))| json_agrees(u, v, tol, &format!("{path}[{i}]"))),
        (Value::Object(x), Value::Object(y)) if x.len() == y.len() => {
            x.iter().try_for_each(|(k, u)| {
                y.get(k)
                    .ok_or_else(|| format!("{path}.{k}: missing"))
                    .and_then(|v| json_agrees(u, v, tol, &format!("{path}.{k}")))
            })
        }
        _ if a == b => Ok(()),
        _ => Err(format!("{path}: {a} vs {b}")),
    }
}

#[test]
fn json_comparison_catches_a_moved_number() {
    let a: serde_json::Value = serde_json::from_str(r#"{"x": [0.25, null, "f"]}"#).unwrap();
    let b: serde_json::Value =
        serde_json::from_str(r#"{"x": [0.25000000001, null, "f"]}"#).unwrap();
    let c: serde_json::Value = serde_json::from_str(r#"{"x": [0.25, null, "g"]}"#).unwrap();
    assert!(json_agrees(&a, &b, 1e-10, "").is_ok());
    assert!(json_agrees(&a, &b, 1e-12, "").is_err());
    assert!(json_agrees(&a, &c, 1e-10, "").is_err());
}

/// `implied` on every sample, JSON: every number within 1e-10 (absolute,
/// in each field's own unit: fractions, bp, percent) of the output
/// recorded before the speed work (`tests/fixtures/outputs/implied-*.json`,
/// made by the code before it), every flag and note the same. Tighter than
/// the token comparison above, which allows 1e-9.
#[test]
fn implied_json_agrees_to_1e10_with_the_recorded_outputs() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/fixtures/outputs");
    let commands = std::fs::read_to_string(dir.join("commands.tsv")).expect("commands.tsv");
    let mut checked = 0;
    for line in commands.lines().filter(|l| l.starts_with("implied-")) {
        let (name, args) = line.split_once('\t').expect("name<TAB>args");
        let mut argv: Vec<&str> = args.split(' ').collect();
        argv.extend(["--format", "json"]);
        let (_, out, err) = skewbook(&argv);
        let expected = std::fs::read_to_string(dir.join(format!("{name}.json"))).expect("fixture");
        let (a, b): (serde_json::Value, serde_json::Value) = (
            serde_json::from_str(&expected).expect("fixture JSON"),
            serde_json::from_str(&out).unwrap_or_else(|e| panic!("{argv:?}: {e}: {err}")),
        );
        if let Err(why) = json_agrees(&a, &b, 1e-10, name) {
            panic!("{argv:?} differs from the recorded output: {why}");
        }
        checked += 1;
    }
    assert!(checked >= 4, "only {checked} implied outputs checked");
}
