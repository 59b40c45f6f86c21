//! The built binary on bad input: every malformed snapshot fixture exits
//! with status 2 (bad input, the documented exit code) and an
//! `error: path:line:col:` message on stderr, never a panic; `-` reads
//! standard input and names it `-` in messages.

use super::snapshot::MALFORMED;
use std::io::Write;
use std::process::{Command, Output, Stdio};

const BIN: &str = env!("CARGO_BIN_EXE_skewbook");
const DIR: &str = "tests/fixtures/malformed";

fn curve(path: &str, stdin: Option<&[u8]>) -> Output {
    let mut child = Command::new(BIN)
        .args(["curve", path])
        .stdin(if stdin.is_some() {
            Stdio::piped()
        } else {
            Stdio::null()
        })
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("run skewbook");
    if let Some(bytes) = stdin {
        let mut pipe = child.stdin.take().expect("stdin");
        pipe.write_all(bytes).expect("write stdin");
    }
    child.wait_with_output().expect("skewbook output")
}

#[test]
fn every_malformed_fixture_exits_2_with_a_located_message() {
    // `snapshot::every_malformed_fixture_fails_where_the_table_says` checks
    // that MALFORMED lists every file in the directory.
    for (name, at, says) in MALFORMED {
        let path = format!("{DIR}/{name}");
        let out = curve(&path, None);
        let stderr = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(2), "{name}: {stderr}");
        assert!(!stderr.contains("panicked"), "{name}: {stderr}");
        let first = stderr.lines().next().unwrap_or("");
        assert!(
            first.starts_with(&format!("error: {path}:{at}:")),
            "{name}: {stderr}"
        );
        assert!(first.contains(says), "{name}: {stderr}");
        assert!(out.stdout.is_empty(), "{name}: printed output on error");
    }
}

#[test]
fn all_problems_of_a_file_reach_stderr() {
    let path = format!("{DIR}/many_problems.csv");
    let out = curve(&path, None);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    let lines: Vec<&str> = stderr.lines().collect();
    assert_eq!(lines.len(), 3, "{stderr}");
    for (line, at) in lines.iter().zip(["2:7", "4:7", "6:1"]) {
        assert!(
            line.starts_with(&format!("error: {path}:{at}:")),
            "{stderr}"
        );
    }
}

#[test]
fn dash_reads_standard_input() {
    let bytes = std::fs::read(format!("{DIR}/bad_number.csv")).expect("fixture");
    let out = curve("-", Some(&bytes));
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.starts_with("error: -:4:7: column \"quote\": expected a number, found \"12,5\""),
        "{stderr}"
    );

    // A valid snapshot through stdin runs clean and prints something.
    let good = "date,instrument,maturity,attach_pct,detach_pct,quote_kind,quote,coupon_bp\n\
                2026-06-19,index,2031-06-20,,,spread_bp,60,\n";
    let out = curve("-", Some(good.as_bytes()));
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(0), "{stderr}");
    assert!(!out.stdout.is_empty());
}

#[test]
fn a_missing_file_exits_2_naming_it() {
    let path = format!("{DIR}/no-such-file.csv");
    let out = curve(&path, None);
    let stderr = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{stderr}");
    assert!(
        stderr.contains(&path) && !stderr.contains("panicked"),
        "{stderr}"
    );
}
