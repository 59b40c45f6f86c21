//! Snapshot reader: exact values of a valid file (unit conversions of the
//! conventions' "Snapshot file" section: bp / 1e4, percent / 100), one test
//! per validation rule with the line, column, header and quoted value of the
//! problem, the malformed fixtures, and garbage that must never panic.

use chrono::NaiveDate;
use proptest::prelude::*;
use skewbook::error::{Error, ErrorKind, Problem};
use skewbook::input::snapshot::{parse_snapshot, read_snapshot};
use skewbook::market::{IndexQuote, Quote, TrancheQuote, ZeroPillar};

const H: &str =
    "date,instrument,maturity,attach_pct,detach_pct,quote_kind,quote,coupon_bp,recovery_pct";
/// A valid date: index (line 2), two tiling tranches (3, 4), a zero (5).
const BASE: [&str; 4] = [
    "2026-06-19,index,2031-06-20,,,spread_bp,60,,40",
    "2026-06-19,tranche,2031-06-20,0,3,upfront_pct,35,500,",
    "2026-06-19,tranche,2031-06-20,3,7,spread_bp,300,,",
    "2026-06-19,zero,2027-06-21,,,zero_rate_pct,2.5,,",
];

/// Every malformed fixture: file name, where its first problem sits
/// (`line:column`, or `line` for problems of the whole header or file), and
/// a piece of its message. `tests/cli_errors.rs` runs the binary on each.
pub const MALFORMED: &[(&str, &str, &str)] = &[
    (
        "attach_above_detach.csv",
        "3:5",
        "expected a detachment above the attachment \"7\"",
    ),
    (
        "bad_date.csv",
        "3:1",
        "expected an ISO 8601 date YYYY-MM-DD, found \"19/06/2026\"",
    ),
    ("bad_number.csv", "4:7", "expected a number, found \"12,5\""),
    ("coupon_on_spread.csv", "3:8", "found \"100\""),
    ("duplicate_index.csv", "4:3", "(lines 2 and 4)"),
    ("empty.csv", "1", "no quote rows"),
    ("header_only.csv", "1", "no quote rows"),
    (
        "kind_mismatch.csv",
        "3:6",
        "expected \"zero_rate_pct\" on a zero row, found \"spread_bp\"",
    ),
    ("long_row.csv", "3:10", "found 10"),
    (
        "many_problems.csv",
        "2:7",
        "expected a number, found \"sixty\"",
    ),
    ("maturity_before_date.csv", "2:3", "found \"2026-06-19\""),
    (
        "missing_column.csv",
        "1",
        "expected a column named \"coupon_bp\"",
    ),
    ("missing_coupon.csv", "3:8", "found an empty cell"),
    (
        "nan_quote.csv",
        "2:7",
        "expected a finite number, found \"nan\"",
    ),
    (
        "negative_spread.csv",
        "2:7",
        "expected a spread from 0 up to (not including) 100000 bp, found \"-60\"",
    ),
    (
        "recovery_disagree.csv",
        "3:9",
        "found \"35\" here and \"40\" on line 2",
    ),
    ("recovery_out_of_range.csv", "2:9", "found \"100\""),
    ("short_row.csv", "3:9", "found 8"),
    (
        "tranches_without_index.csv",
        "3:1",
        "expected an index quote on 2026-06-22",
    ),
    ("unknown_column.csv", "1:9", "found \"recovery\""),
    ("unknown_instrument.csv", "3:2", "found \"tranch\""),
    ("zeros_only.csv", "3:1", "nothing to price"),
];

fn d(s: &str) -> NaiveDate {
    NaiveDate::parse_from_str(s, "%Y-%m-%d").expect("test date")
}

/// The header and the rows, one a line.
fn file(rows: &[&str]) -> String {
    let mut s = String::from(H);
    for r in rows {
        s.push('\n');
        s.push_str(r);
    }
    s.push('\n');
    s
}

/// BASE with row `line` (2..=5) replaced.
fn base_with(line: usize, row: &str) -> String {
    let mut rows = BASE.to_vec();
    rows[line - 2] = row;
    file(&rows)
}

fn errors(text: &str) -> Error {
    match parse_snapshot(text, "q.csv") {
        Ok(s) => panic!("expected an error, parsed {s:?}"),
        Err(e) => {
            assert_eq!(e.kind, ErrorKind::InvalidInput, "{e}");
            assert!(!e.problems.is_empty());
            e
        }
    }
}

/// The problem at (line, column).
fn find(e: &Error, line: u64, column: Option<usize>) -> &Problem {
    e.problems
        .iter()
        .find(|p| {
            let l = p.location.as_ref().expect("located");
            l.line == line && l.column == column
        })
        .unwrap_or_else(|| panic!("no problem at {line}:{column:?} in\n{e}"))
}

/// Exactly one problem, at line:column under `header`, whose message has
/// every piece of `says`.
fn only(text: &str, line: u64, column: usize, header: &str, says: &[&str]) {
    let e = errors(text);
    assert_eq!(e.problems.len(), 1, "{e}");
    let p = find(&e, line, Some(column));
    let loc = p.location.as_ref().expect("located");
    assert_eq!(loc.path, "q.csv");
    assert_eq!(loc.header.as_deref(), Some(header), "{p}");
    for s in says {
        assert!(p.message.contains(s), "{p:?} lacks {s:?}");
    }
    assert!(p.message.starts_with("expected "), "{p}");
}

// ---------------------------------------------------------------- valid files

#[test]
fn two_dates_parse_into_fractions_in_order() {
    // Rows out of order, BOM, padded cells, CRLF, a blank line in the middle
    // and blank lines at the end.
    let text = "\u{feff}date, instrument ,maturity,attach_pct,detach_pct,quote_kind,quote,coupon_bp,recovery_pct\r\n\
        2026-06-22,index,2031-06-20,,,spread_bp,62.5,,35\r\n\
        2026-06-19,tranche,2031-06-20,3,7,spread_bp,300,,\r\n\
        2026-06-19, tranche ,2031-06-20, 0 ,3,upfront_pct, 35 ,500,\r\n\
        \r\n\
        2026-06-19,index,2033-06-20,,,upfront_pct,-1.25,100,\r\n\
        2026-06-19,index,2031-06-20,,,spread_bp,60,,\r\n\
        2026-06-19,tranche,2029-06-20,0,3,upfront_pct,20,500,\r\n\
        2026-06-19,zero,2031-06-20,,,zero_rate_pct,3,,\r\n\
        2026-06-19,zero,2027-06-21,,,zero_rate_pct,-0.5,,\r\n\
        \r\n\r\n";
    let snap = parse_snapshot(text, "two.csv").expect("valid");
    assert_eq!(snap.path, "two.csv");
    assert!(snap.warnings.is_empty(), "{:?}", snap.warnings);
    assert_eq!(snap.dates.len(), 2);

    let a = &snap.dates[0];
    assert_eq!(a.date, d("2026-06-19"));
    assert_eq!(a.recovery, None);
    assert_eq!(
        a.index,
        vec![
            IndexQuote {
                maturity: d("2031-06-20"),
                quote: Quote::Spread(0.006),
                line: 7,
            },
            IndexQuote {
                maturity: d("2033-06-20"),
                quote: Quote::Upfront {
                    upfront: -0.0125,
                    coupon: 0.01,
                },
                line: 6,
            },
        ]
    );
    assert_eq!(
        a.tranches,
        vec![
            TrancheQuote {
                maturity: d("2029-06-20"),
                attach: 0.0,
                detach: 0.03,
                quote: Quote::Upfront {
                    upfront: 0.2,
                    coupon: 0.05,
                },
                line: 8,
            },
            TrancheQuote {
                maturity: d("2031-06-20"),
                attach: 0.0,
                detach: 0.03,
                quote: Quote::Upfront {
                    upfront: 0.35,
                    coupon: 0.05,
                },
                line: 4,
            },
            TrancheQuote {
                maturity: d("2031-06-20"),
                attach: 0.03,
                detach: 0.07,
                quote: Quote::Spread(0.03),
                line: 3,
            },
        ]
    );
    assert_eq!(
        a.zeros,
        vec![
            ZeroPillar {
                date: d("2027-06-21"),
                rate: -0.005,
                line: 10,
            },
            ZeroPillar {
                date: d("2031-06-20"),
                rate: 0.03,
                line: 9,
            },
        ]
    );

    let b = &snap.dates[1];
    assert_eq!(b.date, d("2026-06-22"));
    assert_eq!(b.recovery, Some(0.35));
    assert_eq!(
        b.index,
        vec![IndexQuote {
            maturity: d("2031-06-20"),
            quote: Quote::Spread(0.00625),
            line: 2,
        }]
    );
    assert!(b.tranches.is_empty() && b.zeros.is_empty());
}

#[test]
fn columns_in_any_order_and_recovery_column_optional() {
    let text = "quote,quote_kind,coupon_bp,detach_pct,attach_pct,maturity,instrument,date\n\
                60,spread_bp,,,,2031-06-20,index,2026-06-19\n\
                35,upfront_pct,500,3,0,2031-06-20,tranche,2026-06-19\n";
    let snap = parse_snapshot(text, "q.csv").expect("valid");
    let day = &snap.dates[0];
    assert_eq!(day.recovery, None);
    assert_eq!(day.index[0].quote, Quote::Spread(0.006));
    assert_eq!(day.tranches[0].attach, 0.0);
    assert_eq!(day.tranches[0].detach, 0.03);
    assert_eq!(
        day.tranches[0].quote,
        Quote::Upfront {
            upfront: 0.35,
            coupon: 0.05
        }
    );
}

#[test]
fn tranche_beyond_the_last_index_maturity_is_fine() {
    let text = file(&[
        "2026-06-19,index,2029-06-20,,,spread_bp,40,,",
        "2026-06-19,tranche,2033-06-20,0,3,upfront_pct,50,500,",
    ]);
    let snap = parse_snapshot(&text, "q.csv").expect("valid");
    assert_eq!(snap.dates[0].tranches[0].maturity, d("2033-06-20"));
}

#[test]
fn negative_zero_rates_and_zero_spreads_are_accepted() {
    let text = file(&[
        "2026-06-19,index,2031-06-20,,,spread_bp,60,,",
        "2026-06-19,tranche,2031-06-20,30,100,spread_bp,0,,",
        "2026-06-19,zero,2027-06-21,,,zero_rate_pct,-49.5,,",
    ]);
    let snap = parse_snapshot(&text, "q.csv").expect("valid");
    assert_eq!(snap.dates[0].zeros[0].rate, -0.495);
    assert_eq!(snap.dates[0].tranches[0].quote, Quote::Spread(0.0));
}

#[test]
fn read_snapshot_reads_a_file_and_names_it() {
    let e = read_snapshot("tests/fixtures/malformed/bad_number.csv").expect_err("malformed");
    assert_eq!(e.kind, ErrorKind::InvalidInput);
    assert_eq!(
        e.problems[0].to_string(),
        "tests/fixtures/malformed/bad_number.csv:4:7: column \"quote\": expected a number, found \"12,5\""
    );
    let e = read_snapshot("tests/fixtures/malformed/no-such-file.csv").expect_err("absent");
    assert_eq!(e.kind, ErrorKind::Io);
}

#[test]
fn every_malformed_fixture_fails_where_the_table_says() {
    let dir = "tests/fixtures/malformed";
    let mut names: Vec<String> = std::fs::read_dir(dir)
        .expect("fixture dir")
        .map(|e| e.expect("entry").file_name().to_string_lossy().into_owned())
        .filter(|n| n.ends_with(".csv"))
        .collect();
    names.sort();
    let listed: Vec<&str> = MALFORMED.iter().map(|m| m.0).collect();
    assert_eq!(names, listed, "MALFORMED must list every fixture, sorted");
    for (name, at, says) in MALFORMED {
        let path = format!("{dir}/{name}");
        let e = read_snapshot(&path).expect_err(name);
        assert_eq!(e.kind, ErrorKind::InvalidInput, "{name}");
        let first = e.problems[0].to_string();
        assert!(first.starts_with(&format!("{path}:{at}:")), "{first}");
        assert!(first.contains(says), "{first} lacks {says:?}");
    }
}

// ---------------------------------------------------------------- header

#[test]
fn empty_file_and_blank_file_have_no_quote_rows() {
    for text in ["", "\u{feff}", "\n\n", "  \n\t\n"] {
        let e = errors(text);
        assert_eq!(e.problems.len(), 1);
        let p = &e.problems[0];
        assert_eq!(p.location.as_ref().map(|l| l.line), Some(1));
        assert!(p.message.contains("no quote rows"), "{p}");
        assert!(p.message.contains("empty file"), "{p}");
    }
}

#[test]
fn header_only_has_no_quote_rows() {
    let e = errors(&format!("{H}\n\n"));
    assert_eq!(e.problems.len(), 1);
    assert_eq!(
        e.problems[0].to_string(),
        "q.csv:1: expected quote rows after the header, found none (no quote rows)"
    );
}

#[test]
fn unknown_column_names_line_1_and_the_column() {
    let text = format!("{H},comment\n{}\n", BASE[0].to_string() + ",hello");
    only(
        &text,
        1,
        10,
        "comment",
        &["expected a column name", "found \"comment\""],
    );
}

#[test]
fn misspelt_column_is_unknown_and_the_right_one_missing() {
    let text = "date,instrument,maturity,attach_pct,detach_pct,quote_knd,quote,coupon_bp\n\
                2026-06-19,index,2031-06-20,,,spread_bp,60,\n";
    let e = errors(text);
    assert_eq!(e.problems.len(), 2, "{e}");
    let unknown = find(&e, 1, Some(6));
    assert_eq!(
        unknown.location.as_ref().unwrap().header.as_deref(),
        Some("quote_knd")
    );
    assert!(unknown.message.contains("found \"quote_knd\""));
    let missing = find(&e, 1, None);
    assert_eq!(
        missing.location.as_ref().unwrap().header.as_deref(),
        Some("quote_kind")
    );
    assert_eq!(
        missing.to_string(),
        "q.csv:1: column \"quote_kind\": expected a column named \"quote_kind\" in the header, found none"
    );
}

#[test]
fn repeated_column_is_an_error() {
    let text = format!("{H},quote\n{},61\n", BASE[0]);
    only(
        &text,
        1,
        10,
        "quote",
        &["expected each column once", "first in column 7"],
    );
}

// ---------------------------------------------------------------- cell counts

#[test]
fn short_row_names_the_first_missing_column() {
    let text = base_with(4, "2026-06-19,tranche,2031-06-20,3,7,spread_bp,300");
    only(
        &text,
        4,
        8,
        "coupon_bp",
        &["expected 9 cells as in the header (line 1), found 7"],
    );
}

#[test]
fn long_row_quotes_the_extra_cells() {
    let e = errors(&base_with(
        2,
        "2026-06-19,index,2031-06-20,,,spread_bp,60,,40,oops,",
    ));
    assert_eq!(e.problems.len(), 1);
    let p = find(&e, 2, Some(10));
    assert_eq!(p.location.as_ref().unwrap().header, None);
    assert!(
        p.message.contains(
            "expected 9 cells as in the header (line 1), found 11: extra cells \"oops\", \"\""
        ),
        "{p}"
    );
}

// ---------------------------------------------------------------- instrument and kind

#[test]
fn unknown_instrument() {
    let text = base_with(3, "2026-06-19,Tranche,2031-06-20,0,3,upfront_pct,35,500,");
    only(
        &text,
        3,
        2,
        "instrument",
        &["expected one of \"index\", \"tranche\", \"zero\", found \"Tranche\""],
    );
}

#[test]
fn unknown_quote_kind() {
    let text = base_with(2, "2026-06-19,index,2031-06-20,,,spread,60,,40");
    only(
        &text,
        2,
        6,
        "quote_kind",
        &["found \"spread\"", "\"zero_rate_pct\""],
    );
}

#[test]
fn zero_row_needs_a_zero_rate_kind() {
    let text = base_with(5, "2026-06-19,zero,2027-06-21,,,upfront_pct,2.5,100,");
    only(
        &text,
        5,
        6,
        "quote_kind",
        &["expected \"zero_rate_pct\" on a zero row, found \"upfront_pct\""],
    );
}

#[test]
fn index_and_tranche_rows_need_spread_or_upfront() {
    let text = base_with(2, "2026-06-19,index,2031-06-20,,,zero_rate_pct,0.6,,40");
    only(
        &text,
        2,
        6,
        "quote_kind",
        &["expected \"spread_bp\" or \"upfront_pct\" on an index row, found \"zero_rate_pct\""],
    );
    let text = base_with(4, "2026-06-19,tranche,2031-06-20,3,7,zero_rate_pct,3,,");
    only(
        &text,
        4,
        6,
        "quote_kind",
        &["on a tranche row, found \"zero_rate_pct\""],
    );
}

// ---------------------------------------------------------------- required cells

#[test]
fn required_cells_may_not_be_empty() {
    let cases: [(usize, &str, usize, &str); 8] = [
        (2, ",index,2031-06-20,,,spread_bp,60,,40", 1, "date"),
        (
            2,
            "2026-06-19,,2031-06-20,,,spread_bp,60,,40",
            2,
            "instrument",
        ),
        (2, "2026-06-19,index,,,,spread_bp,60,,40", 3, "maturity"),
        (2, "2026-06-19,index,2031-06-20,,,,60,,40", 6, "quote_kind"),
        (
            2,
            "2026-06-19,index,2031-06-20,,,spread_bp,  ,,40",
            7,
            "quote",
        ),
        (
            3,
            "2026-06-19,tranche,2031-06-20,,3,upfront_pct,35,500,",
            4,
            "attach_pct",
        ),
        (
            4,
            "2026-06-19,tranche,2031-06-20,3,,spread_bp,300,,",
            5,
            "detach_pct",
        ),
        (
            3,
            "2026-06-19,tranche,2031-06-20,0,3,upfront_pct,35,,",
            8,
            "coupon_bp",
        ),
    ];
    for (line, row, col, header) in cases {
        only(
            &base_with(line, row),
            line as u64,
            col,
            header,
            &["found an empty cell"],
        );
    }
}

#[test]
fn cells_that_must_be_empty() {
    let cases: [(usize, &str, usize, &str, &str); 7] = [
        (
            2,
            "2026-06-19,index,2031-06-20,0,,spread_bp,60,,40",
            4,
            "attach_pct",
            "\"0\"",
        ),
        (
            2,
            "2026-06-19,index,2031-06-20,,100,spread_bp,60,,40",
            5,
            "detach_pct",
            "\"100\"",
        ),
        (
            5,
            "2026-06-19,zero,2027-06-21,,3,zero_rate_pct,2.5,,",
            5,
            "detach_pct",
            "\"3\"",
        ),
        (
            4,
            "2026-06-19,tranche,2031-06-20,3,7,spread_bp,300,100,",
            8,
            "coupon_bp",
            "\"100\"",
        ),
        (
            5,
            "2026-06-19,zero,2027-06-21,,,zero_rate_pct,2.5,0,",
            8,
            "coupon_bp",
            "\"0\"",
        ),
        (
            3,
            "2026-06-19,tranche,2031-06-20,0,3,upfront_pct,35,500,40",
            9,
            "recovery_pct",
            "\"40\"",
        ),
        (
            5,
            "2026-06-19,zero,2027-06-21,,,zero_rate_pct,2.5,,40",
            9,
            "recovery_pct",
            "\"40\"",
        ),
    ];
    for (line, row, col, header, found) in cases {
        only(
            &base_with(line, row),
            line as u64,
            col,
            header,
            &["expected an empty cell on", &format!("found {found}")],
        );
    }
}

// ---------------------------------------------------------------- dates and numbers

#[test]
fn dates_must_be_iso_8601() {
    for bad in ["19/06/2026", "2026-6-19", "20260619", "2026-06-19T00:00"] {
        let text = base_with(2, &format!("{bad},index,2031-06-20,,,spread_bp,60,,40"));
        only(
            &text,
            2,
            1,
            "date",
            &[
                "expected an ISO 8601 date YYYY-MM-DD",
                &format!("found \"{bad}\""),
            ],
        );
    }
    let text = base_with(3, "2026-06-19,tranche,2031-02-29,0,3,upfront_pct,35,500,");
    only(
        &text,
        3,
        3,
        "maturity",
        &["found \"2031-02-29\" (no such day)"],
    );
}

#[test]
fn numbers_must_parse() {
    let text = base_with(4, "2026-06-19,tranche,2031-06-20,3,7,spread_bp,\"12,5\",,");
    only(&text, 4, 7, "quote", &["expected a number, found \"12,5\""]);
    let text = base_with(3, "2026-06-19,tranche,2031-06-20,0,3%,upfront_pct,35,500,");
    only(
        &text,
        3,
        5,
        "detach_pct",
        &["expected a number, found \"3%\""],
    );
}

#[test]
fn nan_and_infinity_are_rejected() {
    for bad in ["nan", "NaN", "inf", "-inf", "infinity", "1e400"] {
        let text = base_with(
            2,
            &format!("2026-06-19,index,2031-06-20,,,spread_bp,{bad},,40"),
        );
        only(
            &text,
            2,
            7,
            "quote",
            &[&format!("expected a finite number, found \"{bad}\"")],
        );
        let text = base_with(
            3,
            &format!("2026-06-19,tranche,2031-06-20,0,3,upfront_pct,35,{bad},"),
        );
        only(&text, 3, 8, "coupon_bp", &[&format!("found \"{bad}\"")]);
    }
}

// ---------------------------------------------------------------- ranges

#[test]
fn negative_spreads_and_coupons() {
    let text = base_with(2, "2026-06-19,index,2031-06-20,,,spread_bp,-0.5,,40");
    only(
        &text,
        2,
        7,
        "quote",
        &["expected a spread from 0 up to (not including) 100000 bp, found \"-0.5\""],
    );
    let text = base_with(4, "2026-06-19,tranche,2031-06-20,3,7,spread_bp,-300,,");
    only(&text, 4, 7, "quote", &["found \"-300\""]);
    let text = base_with(3, "2026-06-19,tranche,2031-06-20,0,3,upfront_pct,35,-500,");
    only(
        &text,
        3,
        8,
        "coupon_bp",
        &["expected a coupon from 0 up to (not including) 100000 bp, found \"-500\""],
    );
}

#[test]
fn upfronts_lie_strictly_between_minus_and_plus_100_percent() {
    for bad in ["100", "-100", "250"] {
        let text = base_with(
            3,
            &format!("2026-06-19,tranche,2031-06-20,0,3,upfront_pct,{bad},500,"),
        );
        only(
            &text,
            3,
            7,
            "quote",
            &[
                "expected an upfront above -100 and below 100 percent",
                &format!("found \"{bad}\""),
            ],
        );
    }
    let ok = base_with(3, "2026-06-19,tranche,2031-06-20,0,3,upfront_pct,99.9,500,");
    assert!(parse_snapshot(&ok, "q.csv").is_ok());
}

#[test]
fn zero_rates_lie_strictly_between_minus_and_plus_50_percent() {
    for bad in ["100", "-100", "50", "-50"] {
        let text = base_with(
            5,
            &format!("2026-06-19,zero,2027-06-21,,,zero_rate_pct,{bad},,"),
        );
        only(
            &text,
            5,
            7,
            "quote",
            &[
                "expected a zero rate above -50 and below 50 percent",
                &format!("found \"{bad}\""),
            ],
        );
    }
}

#[test]
fn bounds_lie_in_0_to_100_percent() {
    let text = base_with(3, "2026-06-19,tranche,2031-06-20,-1,3,upfront_pct,35,500,");
    only(
        &text,
        3,
        4,
        "attach_pct",
        &["expected an attachment of 0, or from 0.01 to 100 percent, found \"-1\""],
    );
    let text = base_with(4, "2026-06-19,tranche,2031-06-20,3,100.5,spread_bp,300,,");
    only(
        &text,
        4,
        5,
        "detach_pct",
        &["expected a detachment from 0.01 to 100 percent, found \"100.5\""],
    );
}

#[test]
fn attachment_must_lie_below_detachment() {
    for (a, dd) in [("7", "3"), ("3", "3"), ("3", "3.0")] {
        let text = base_with(
            4,
            &format!("2026-06-19,tranche,2031-06-20,{a},{dd},spread_bp,300,,"),
        );
        only(
            &text,
            4,
            5,
            "detach_pct",
            &[&format!(
                "expected a detachment above the attachment \"{a}\" (column 4), found \"{dd}\""
            )],
        );
    }
}

#[test]
fn recovery_lies_in_0_up_to_100_percent() {
    for bad in ["100", "-1", "120"] {
        let text = base_with(
            2,
            &format!("2026-06-19,index,2031-06-20,,,spread_bp,60,,{bad}"),
        );
        only(
            &text,
            2,
            9,
            "recovery_pct",
            &[
                "expected a recovery from 0 up to (not including) 100 percent",
                &format!("found \"{bad}\""),
            ],
        );
    }
    let ok = base_with(2, "2026-06-19,index,2031-06-20,,,spread_bp,60,,0");
    assert_eq!(
        parse_snapshot(&ok, "q.csv").expect("valid").dates[0].recovery,
        Some(0.0)
    );
}

#[test]
fn maturity_must_come_after_the_trade_date() {
    let text = base_with(2, "2026-06-19,index,2026-06-19,,,spread_bp,60,,40");
    only(
        &text,
        2,
        3,
        "maturity",
        &["expected a maturity after the trade date 2026-06-19, found \"2026-06-19\""],
    );
    let text = base_with(3, "2026-06-19,tranche,2025-06-20,0,3,upfront_pct,35,500,");
    only(&text, 3, 3, "maturity", &["found \"2025-06-20\""]);
    let text = base_with(5, "2026-06-19,zero,2026-06-19,,,zero_rate_pct,2.5,,");
    only(
        &text,
        5,
        3,
        "maturity",
        &["expected a pillar date after the trade date 2026-06-19, found \"2026-06-19\""],
    );
}

// ---------------------------------------------------------------- across rows

#[test]
fn duplicate_quotes_name_both_lines() {
    let mut rows = BASE.to_vec();
    rows.push("2026-06-19,index,2031-06-20,,,upfront_pct,1,100,40");
    only(
        &file(&rows),
        6,
        3,
        "maturity",
        &[
            "one index quote per maturity on 2026-06-19",
            "(lines 2 and 6)",
        ],
    );

    let mut rows = BASE.to_vec();
    rows.push("2026-06-19,tranche,2031-06-20,3.0,7,spread_bp,310,,");
    only(
        &file(&rows),
        6,
        3,
        "maturity",
        &["[3, 7] percent", "(lines 4 and 6)"],
    );

    let mut rows = BASE.to_vec();
    rows.push("2026-06-19,zero,2027-06-21,,,zero_rate_pct,2.6,,");
    only(
        &file(&rows),
        6,
        3,
        "maturity",
        &["one zero rate per pillar date", "(lines 5 and 6)"],
    );

    // The same quote on another date, or another maturity, is no duplicate.
    let mut rows = BASE.to_vec();
    rows.push("2026-06-22,index,2031-06-20,,,spread_bp,60,,40");
    rows.push("2026-06-19,tranche,2033-06-20,3,7,spread_bp,300,,");
    assert!(parse_snapshot(&file(&rows), "q.csv").is_ok());
}

#[test]
fn index_rows_of_a_date_agree_on_recovery() {
    let mut rows = BASE.to_vec();
    rows.push("2026-06-19,index,2033-06-20,,,spread_bp,80,,35");
    only(&file(&rows), 6, 9, "recovery_pct", &["expected the same recovery on every index row of 2026-06-19, found \"35\" here and \"40\" on line 2"]);

    let mut rows = BASE.to_vec();
    rows.push("2026-06-19,index,2033-06-20,,,spread_bp,80,,");
    only(
        &file(&rows),
        6,
        9,
        "recovery_pct",
        &["found an empty cell here and \"40\" on line 2"],
    );

    // "40" and "40.0" agree; another date may differ.
    let mut rows = BASE.to_vec();
    rows.push("2026-06-19,index,2033-06-20,,,spread_bp,80,,40.0");
    rows.push("2026-06-22,index,2033-06-20,,,spread_bp,80,,30");
    let snap = parse_snapshot(&file(&rows), "q.csv").expect("valid");
    assert_eq!(snap.dates[0].recovery, Some(0.4));
    assert_eq!(snap.dates[1].recovery, Some(0.3));
}

#[test]
fn tranches_need_an_index_quote_on_their_date() {
    let mut rows = BASE.to_vec();
    rows.push("2026-06-22,zero,2027-06-21,,,zero_rate_pct,2.5,,");
    rows.push("2026-06-22,tranche,2031-06-20,0,3,upfront_pct,35,500,");
    rows.push("2026-06-22,tranche,2031-06-20,3,7,spread_bp,300,,");
    only(&file(&rows), 7, 1, "date", &["expected an index quote on 2026-06-22 to price its tranches, found none (first tranche on line 7)"]);
}

#[test]
fn a_date_with_zero_rows_only_has_nothing_to_price() {
    let mut rows = BASE.to_vec();
    rows.push("2026-06-22,zero,2027-06-21,,,zero_rate_pct,2.5,,");
    rows.push("2026-06-22,zero,2028-06-21,,,zero_rate_pct,2.7,,");
    only(&file(&rows), 6, 1, "date", &["expected an index quote on 2026-06-22, found only zero rows (first on line 6): nothing to price"]);
}

#[test]
fn a_broken_index_row_is_not_also_reported_as_missing() {
    let text = base_with(2, "2026-06-19,index,2031-06-20,,,spread_bp,6O,,40");
    only(&text, 2, 7, "quote", &["found \"6O\""]);
    let text = base_with(2, "2026/06/19,index,2031-06-20,,,spread_bp,60,,40");
    only(&text, 2, 1, "date", &["found \"2026/06/19\""]);
}

#[test]
fn several_problems_are_all_reported_in_line_order() {
    let e = read_snapshot("tests/fixtures/malformed/many_problems.csv").expect_err("malformed");
    let got: Vec<String> = e.problems.iter().map(|p| p.to_string()).collect();
    let path = "tests/fixtures/malformed/many_problems.csv";
    assert_eq!(
        got,
        vec![
            format!("{path}:2:7: column \"quote\": expected a number, found \"sixty\""),
            format!("{path}:4:7: column \"quote\": expected a spread from 0 up to (not including) 100000 bp, found \"-1\""),
            format!("{path}:6:1: column \"date\": expected an ISO 8601 date YYYY-MM-DD, found \"2026-13-01\" (no such day)"),
        ]
    );
    // Several problems in one row are all reported too.
    let e = errors(&base_with(
        3,
        "2026-06-19,tranche,2031-06-20,x,3,upfront_pct,35,-5,40",
    ));
    assert_eq!(e.problems.len(), 3, "{e}");
    for col in [4, 8, 9] {
        find(&e, 3, Some(col));
    }
}

#[test]
fn line_numbers_count_blank_lines_and_quoted_newlines() {
    let text = format!(
        "\n{H}\n{}\n\n\n\"2026-06-19\",\"tranche\",\"2031-06-20\",\"0\",\"3\",\"upfront_pct\",\"35\",\"500\",\"\"\n{}\n2026-06-19,index,2033-06-20,,,spread_bp,\"1\n2\",,40\n2026-06-19,index,2034-06-20,,,spread_bp,x,,40\n",
        BASE[0], BASE[2]
    );
    let e = errors(&text);
    // Header on line 2; the quoted newline puts the last row on line 10.
    assert_eq!(e.problems.len(), 2, "{e}");
    assert!(find(&e, 8, Some(7)).message.contains("found \"1\\n2\""));
    find(&e, 10, Some(7));
}

// ---------------------------------------------------------------- warnings

#[test]
fn tranches_that_do_not_tile_are_a_warning() {
    let text = file(&[
        "2026-06-19,index,2031-06-20,,,spread_bp,60,,40",
        "2026-06-19,tranche,2031-06-20,0,3,upfront_pct,35,500,",
        "2026-06-19,tranche,2031-06-20,7,10,spread_bp,150,,",
        "2026-06-19,tranche,2033-06-20,0,3,upfront_pct,45,500,",
        "2026-06-19,tranche,2033-06-20,0,7,upfront_pct,30,500,",
        "2026-06-19,tranche,2029-06-20,0,3,upfront_pct,25,500,",
        "2026-06-19,tranche,2029-06-20,3,7,spread_bp,200,,",
    ]);
    let snap = parse_snapshot(&text, "q.csv").expect("a warning is no error");
    let w: Vec<String> = snap.warnings.iter().map(|p| p.to_string()).collect();
    assert_eq!(
        w,
        vec![
            "q.csv:4:4: column \"attach_pct\": tranches of 2026-06-19 maturing 2031-06-20 do not tile from 0: expected an attachment of 3 percent (the detachment on line 3), found 7 on line 4: a gap from 3 to 7 percent",
            "q.csv:6:4: column \"attach_pct\": tranches of 2026-06-19 maturing 2033-06-20 do not tile from 0: expected an attachment of 3 percent (the detachment on line 5), found 0 on line 6: an overlap from 0 to 3 percent",
            "q.csv:5:3: column \"maturity\": tranches of 2026-06-19 maturing 2033-06-20 run past the last index maturity 2031-06-20: the hazard curve is extended flat beyond it",
        ]
    );
    let text = file(&[
        "2026-06-19,index,2031-06-20,,,spread_bp,60,,40",
        "2026-06-19,tranche,2031-06-20,3,7,spread_bp,300,,",
    ]);
    let snap = parse_snapshot(&text, "q.csv").expect("valid");
    assert!(snap.warnings[0]
        .message
        .contains("(the bottom of the pool), found 3 on line 3: a gap from 0 to 3 percent"));
}

// ---------------------------------------------------------------- garbage

/// Cells a fuzzed row draws from: valid ones, near misses and junk.
fn cell() -> impl Strategy<Value = String> {
    prop_oneof![
        Just(String::new()),
        Just("index".to_string()),
        Just("tranche".to_string()),
        Just("zero".to_string()),
        Just("spread_bp".to_string()),
        Just("upfront_pct".to_string()),
        Just("zero_rate_pct".to_string()),
        Just("2026-06-19".to_string()),
        Just("2031-06-20".to_string()),
        Just("nan".to_string()),
        Just("-inf".to_string()),
        (-200.0f64..200.0).prop_map(|v| format!("{v}")),
        "[0-9]{1,3}",
        "\\PC{0,8}",
    ]
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(300))]

    #[test]
    fn garbage_text_never_panics(text in "\\PC{0,40}(\n\\PC{0,40}){0,6}") {
        check_outcome(&text);
        check_outcome(&format!("{H}\n{text}"));
    }

    #[test]
    fn garbage_bytes_never_panic(bytes in proptest::collection::vec(any::<u8>(), 0..300)) {
        let text = String::from_utf8_lossy(&bytes);
        check_outcome(&text);
    }

    #[test]
    fn fuzzed_rows_never_panic(rows in proptest::collection::vec(proptest::collection::vec(cell(), 7..11), 0..8)) {
        let rows: Vec<String> = rows.iter().map(|r| r.join(",")).collect();
        let refs: Vec<&str> = rows.iter().map(String::as_str).collect();
        let text = file(&refs);
        check_outcome(&text);
    }
}

/// Ok holds only finite fractions; Err is InvalidInput with every problem
/// located on a line of the text.
fn check_outcome(text: &str) {
    // An upper bound on the line count: csv ends lines at \n, \r or \r\n.
    let lines = 1 + text.bytes().filter(|b| *b == b'\n' || *b == b'\r').count() as u64;
    match parse_snapshot(text, "f.csv") {
        Ok(snap) => {
            for day in &snap.dates {
                for q in &day.index {
                    assert!(q.quote.in_file_unit().is_finite() && q.quote.coupon().is_finite());
                }
                for t in &day.tranches {
                    assert!(0.0 <= t.attach && t.attach < t.detach && t.detach <= 1.0);
                    assert!(t.quote.in_file_unit().is_finite());
                }
                for z in &day.zeros {
                    assert!(z.rate.is_finite());
                }
                assert!(!day.index.is_empty());
            }
        }
        Err(e) => {
            assert_eq!(e.kind, ErrorKind::InvalidInput);
            assert!(!e.problems.is_empty());
            for p in &e.problems {
                let l = p.location.as_ref().expect("every problem is located");
                assert!(l.line >= 1 && l.line <= lines, "{p} in {lines} lines");
                assert!(p.message.starts_with("expected "), "{p}");
            }
        }
    }
}
