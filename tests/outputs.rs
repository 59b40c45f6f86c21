//! What the commands print on the bundled samples, against the outputs
//! recorded before a refactoring (`tests/reference/output_fixtures.sh`).
//!
//! Every command of `tests/fixtures/outputs/commands.tsv` runs in every
//! format; its exit status must match and its output must match token for
//! token, numbers to 1e-9 (absolute) or 1e-10 (relative), so that a change in
//! the last bits of a repricing error (1e-14) does not count and anything a
//! user could see does.

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

fn same_output(expected: &str, actual: &str) -> Result<(), String> {
    let (e, a) = (tokens(expected), tokens(actual));
    if e.len() != a.len() {
        return Err(format!("{} tokens expected, {} found", e.len(), a.len()));
    }
    for (x, y) in e.iter().zip(&a) {
        if x == y {
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
