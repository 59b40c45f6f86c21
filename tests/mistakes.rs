//! The mistakes people make with their files, each run through the binary:
//! the exit code and the flag, warning or error text that names the
//! mistake.
//!
//! - numbers outside a market's domain (a spread of 5e298 bp, a
//!   detachment of 4.9e-324 percent) are bad input at their cell;
//! - a tranche spread typed in percent solves to the search floor and is
//!   flagged `near_search_limit`; a quote outside the attainable range says
//!   where the range is, in the quote's unit, and on which side;
//! - a top tranche quote that disagrees with the index is flagged
//!   `index_mismatch` with the gap;
//! - default rates typed as fractions, and a gap in the periods, draw
//!   warnings;
//! - a file of errors prints at most 20 lines; a `;` or tab delimiter and a
//!   missing header are said in one line;
//! - a run of many dates ends with a summary; `--from`, `--to` and
//!   `--date` choose the dates.

use crate::common::{skewbook, write_temp};
use serde_json::Value;

const HGX: &str = "market-samples/hgx-2026-06-18.csv";
const HISTORY: &str = "market-samples/hgx-history-2026-06.csv";
const H: &str = "date,instrument,maturity,attach_pct,detach_pct,quote_kind,quote,coupon_bp";
const INDEX: &str = "2026-06-18,index,2031-06-20,,,spread_bp,60,";

fn json(out: &str) -> Value {
    serde_json::from_str(out).unwrap_or_else(|e| panic!("{e}: {out}"))
}

/// The sample snapshot with one line replaced (`from` must occur once).
fn hgx_with(name: &str, from: &str, to: &str) -> String {
    let text = std::fs::read_to_string(HGX).expect("sample");
    assert_eq!(text.matches(from).count(), 1, "{from}");
    write_temp(name, text.replace(from, to))
}

/// The flags of the tranche `attach-detach` of the first date.
fn flags_of(v: &Value, attach: f64) -> Vec<String> {
    v[0]["tranches"]
        .as_array()
        .expect("tranches")
        .iter()
        .find(|t| t["attach_pct"].as_f64() == Some(attach))
        .expect("tranche")["flags"]
        .as_array()
        .expect("flags")
        .iter()
        .map(|f| f.as_str().expect("flag").to_string())
        .collect()
}

fn tranche(v: &Value, attach: f64) -> &Value {
    v[0]["tranches"]
        .as_array()
        .expect("tranches")
        .iter()
        .find(|t| t["attach_pct"].as_f64() == Some(attach))
        .expect("tranche")
}

/// Asserts exit 2, nothing on standard output, and `want` as the first error line.
fn refused(args: &[&str], want: &str) {
    let (code, out, err) = skewbook(args);
    assert_eq!(code, 2, "{args:?}: {err}");
    assert!(out.is_empty(), "{args:?} printed {out}");
    assert_eq!(err.lines().next(), Some(want), "{args:?}: {err}");
}

// ------------------------------------------------- issue 10: plausible domains

/// Issue 10, finding 1: a quote of 5e298 bp was accepted; `implied --format
/// csv` printed it as `inf` and `price --format json` as `null` with a
/// value of -3.4e304. Now it is bad input at its cell, with the domain.
#[test]
fn a_quote_or_coupon_of_5e298_bp_is_refused_at_its_cell() {
    for (row, column, header, found, domain) in [
        (
            "2026-06-18,tranche,2031-06-20,3,7,spread_bp,5e298,",
            7,
            "quote",
            "5e298",
            "a spread from 0 up to (not including) 100000 bp",
        ),
        (
            "2026-06-18,tranche,2031-06-20,0,3,upfront_pct,40,1e308",
            8,
            "coupon_bp",
            "1e308",
            "a coupon from 0 up to (not including) 100000 bp",
        ),
        (
            "2026-06-18,index,2033-06-20,,,spread_bp,1e100,",
            7,
            "quote",
            "1e100",
            "a spread from 0 up to (not including) 100000 bp",
        ),
    ] {
        let path = write_temp("huge_quote", format!("{H}\n{INDEX}\n{row}\n"));
        let want = format!(
            "error: {path}:3:{column}: column \"{header}\": expected {domain}, found \"{found}\""
        );
        refused(&["implied", &path, "--format", "csv"], &want);
        refused(
            &["price", &path, "--correlation", "30", "--format", "json"],
            &want,
        );
    }
}

/// Issue 10, finding 2: a detachment of 4.9e-324 percent passed the check
/// attach < detach and underflowed (NaN legs from `price`, a compound range
/// `[inf, -inf]` from `implied`); 1e-320 gave an expected loss of 100% and
/// an annuity of 0. A bound is now 0 or at least 0.01%, and a tranche at
/// least 0.01% wide.
#[test]
fn a_detachment_of_4_9e_324_percent_is_refused_at_its_cell() {
    for (bounds, column, header, says) in [
        (
            "0,4.9e-324",
            5,
            "detach_pct",
            "expected a detachment from 0.01 to 100 percent, found \"4.9e-324\"",
        ),
        (
            "0,1e-320",
            5,
            "detach_pct",
            "expected a detachment from 0.01 to 100 percent, found \"1e-320\"",
        ),
        (
            "1e-20,3",
            4,
            "attach_pct",
            "expected an attachment of 0, or from 0.01 to 100 percent, found \"1e-20\"",
        ),
        (
            "3,3.001",
            5,
            "detach_pct",
            "expected a detachment at least 0.01 percent above the attachment \"3\" (column 4; \
             the narrowest tranche is 0.01 percent wide), found \"3.001\"",
        ),
    ] {
        let path = write_temp(
            "tiny_bounds",
            format!("{H}\n{INDEX}\n2026-06-18,tranche,2031-06-20,{bounds},spread_bp,300,\n"),
        );
        let want = format!("error: {path}:3:{column}: column \"{header}\": {says}");
        refused(&["price", &path, "--correlation", "30"], &want);
        refused(&["implied", &path, "--format", "json"], &want);
    }
}

/// The same domains hold in the trades and pools files of `value`, and a
/// zero rate is below 50% in size.
#[test]
fn trades_pools_and_zero_rates_have_market_domains() {
    let trades = write_temp(
        "huge_notional",
        "trade_id,pool,maturity,attach_pct,detach_pct,coupon_bp,notional,side\n\
         A,index,2031-06-20,0,3,500,1e300,buy\n",
    );
    refused(
        &[
            "value",
            &trades,
            "--skew",
            "market-samples/kcx-2026-06-18.csv",
        ],
        &format!(
            "error: {trades}:2:7: column \"notional\": expected a notional above 0 and below \
             1e15, found \"1e300\""
        ),
    );
    // A name the output would take for a number that is not finite.
    let named_inf = write_temp(
        "trade_named_inf",
        "trade_id,pool,maturity,attach_pct,detach_pct,coupon_bp,notional,side\n\
         inf,index,2031-06-20,0,3,500,1e7,buy\n",
    );
    refused(
        &[
            "value",
            &named_inf,
            "--skew",
            "market-samples/kcx-2026-06-18.csv",
        ],
        &format!(
            "error: {named_inf}:2:1: column \"trade_id\": expected a trade id without the word \
             \"inf\" (the output would show it where a number that is not finite is refused), \
             found \"inf\""
        ),
    );
    let pools = write_temp(
        "huge_pool_spread",
        "pool,maturity,quote_kind,quote,coupon_bp,recovery_pct\n\
         blue,2031-06-20,spread_bp,5e298,,35\n",
    );
    refused(
        &[
            "value",
            "market-samples/kcx-trades.csv",
            "--skew",
            "market-samples/kcx-2026-06-18.csv",
            "--pools",
            &pools,
        ],
        &format!(
            "error: {pools}:2:4: column \"quote\": expected a spread above 0 and below 100000 \
             bp, found \"5e298\""
        ),
    );
    let zero = write_temp(
        "big_zero_rate",
        format!("{H}\n{INDEX}\n2026-06-18,zero,2027-06-18,,,zero_rate_pct,250,\n"),
    );
    refused(
        &["curve", &zero],
        &format!(
            "error: {zero}:3:7: column \"quote\": expected a zero rate above -50 and below 50 \
             percent, found \"250\""
        ),
    );
}

// ------------------------------------------------- issue 9: plausibility flags

/// A mezzanine spread typed in percent (2.411 for 241.1 bp) solves to a
/// compound correlation at the search floor: flagged `near_search_limit`
/// with a note that says to check the unit. It is a warning: exit 0.
#[test]
fn a_spread_typed_in_percent_is_flagged_to_check_its_unit() {
    let path = hgx_with(
        "spread_in_percent",
        ",3,7,spread_bp,241.1,",
        ",3,7,spread_bp,2.411,",
    );
    let (code, out, err) = skewbook(&["implied", &path, "--format", "json"]);
    assert_eq!(code, 0, "{err}");
    let v = json(&out);
    assert!(
        flags_of(&v, 3.0).contains(&"near_search_limit".to_string()),
        "{:?}",
        flags_of(&v, 3.0)
    );
    let note = tranche(&v, 3.0)["check_note"].as_str().expect("check_note");
    assert!(
        note.starts_with("compound correlation 0.01")
            && note.contains("within 0.5% of the search floor 0.01%: check the quote's unit")
            && note.contains("basis points (241.1, not 2.411"),
        "{note}"
    );
    let (code, table, _) = skewbook(&["implied", &path]);
    assert_eq!(code, 0);
    assert!(table.contains("check unit"), "{table}");
    let table = table.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        table.contains("3-7: compound correlation 0.01")
            && table.contains("check the quote's unit"),
        "{table}"
    );
    // The sample as it is: no tranche near the floor.
    let (_, out, _) = skewbook(&["implied", HGX, "--format", "json"]);
    assert!(!out.contains("near_search_limit"), "{out}");
}

/// A quote no correlation reaches says where the model's range is, in the
/// quote's own unit, and which side the quote lies on, for the compound
/// and the base correlation alike; the run exits 1 (unsolved).
#[test]
fn a_quote_out_of_range_states_the_range_and_the_side() {
    // The equity upfront typed in a spread row.
    let path = hgx_with(
        "upfront_in_spread_row",
        ",0,3,upfront_pct,42.8704,500,",
        ",0,3,spread_bp,42.8704,,",
    );
    let (code, out, err) = skewbook(&["implied", &path, "--format", "json"]);
    assert_eq!(code, 1, "{err}");
    let v = json(&out);
    let t = tranche(&v, 0.0);
    let flags = flags_of(&v, 0.0);
    assert!(flags.contains(&"no_compound_root".to_string()), "{flags:?}");
    assert!(
        flags.contains(&"base_quote_below_range".to_string()),
        "{flags:?}"
    );
    let [lo, hi] = [0, 1].map(|i| t["compound_range"][i].as_f64().expect("range"));
    assert!(42.8704 < lo && lo < hi, "{lo} {hi}");
    let note = t["compound_note"].as_str().expect("compound_note");
    assert!(
        note.starts_with(
            "no compound correlation in [0.01%, 99.99%] reaches the quote 42.8704 bp: it lies \
             below the model's range, "
        ) && note.contains(" bp to ")
            && note.contains("check the quote's unit and kind"),
        "{note}"
    );
    let base = t["base_note"].as_str().expect("base_note");
    assert!(
        base.starts_with(
            "no base correlation in [0.01%, 99.99%] reaches the quote 42.8704 bp: it lies below \
             the model's range, "
        ) && base.contains(" bp at rho 0.01% and "),
        "{base}"
    );
    // Above the range: a mezzanine spread of 5000 bp.
    let path = hgx_with(
        "spread_too_high",
        ",3,7,spread_bp,241.1,",
        ",3,7,spread_bp,5000,",
    );
    let (code, out, _) = skewbook(&["implied", &path, "--format", "json"]);
    assert_eq!(code, 1);
    let v = json(&out);
    let note = tranche(&v, 3.0)["compound_note"].as_str().expect("note");
    assert!(
        note.contains("5000 bp: it lies above the model's range"),
        "{note}"
    );
    assert!(flags_of(&v, 3.0).contains(&"base_quote_above_range".to_string()));
}

/// A 5-year 15-100% quote more than double what the index curve gives
/// (14.1 bp for 6.1 bp): the tranches still tile and solve, but their
/// quotes imply a pool protection about 6.9 bp of running spread above the
/// index curve's. Every tranche of the maturity is flagged
/// `index_mismatch`, `index_check` shows the gap, exit 0.
#[test]
fn a_top_tranche_quote_off_the_index_is_flagged_with_the_gap() {
    let (code, out, _) = skewbook(&["implied", HGX, "--format", "json"]);
    assert_eq!(code, 0);
    let v = json(&out);
    let check = &v[0]["index_check"][0];
    // The sample's quotes were made from one base curve on this index
    // curve (examples/quotes_from_skew.rs) and rounded: they agree.
    let consistent = check["gap_bp"].as_f64().expect("gap");
    assert!(consistent.abs() < 0.01, "{consistent}");
    assert_eq!(check["mismatch"], false);

    let path = hgx_with(
        "top_off_index",
        ",15,100,spread_bp,6.1,",
        ",15,100,spread_bp,14.1,",
    );
    let (code, out, err) = skewbook(&["implied", &path, "--format", "json"]);
    assert_eq!(code, 0, "{err}");
    let v = json(&out);
    let check = &v[0]["index_check"][0];
    assert_eq!(check["maturity"], "2031-06-20");
    assert_eq!(check["mismatch"], true);
    assert_eq!(check["tolerance_bp"].as_f64(), Some(1.0));
    let gap = check["gap_bp"].as_f64().expect("gap");
    // Independent of the code: the only quote that moved is the top's, by
    // 8 bp on 85% of the pool, so the gap moves by 0.85 · 8 bp times the
    // top tranche's annuity over the pool's. The top tranche loses notional
    // only to recoveries (R p / (1 - A)) where the pool loses all defaults
    // (p), so that ratio lies between 1 and 1 / (1 - PD) with PD the
    // 5-year default probability, 4.872% (`curve` on the sample).
    let moved = (gap - consistent) / (0.85 * 8.0);
    assert!((1.0..1.0 / (1.0 - 0.04872)).contains(&moved), "{moved}");
    for attach in [0.0, 3.0, 7.0, 15.0] {
        assert!(
            flags_of(&v, attach).contains(&"index_mismatch".to_string()),
            "{attach}"
        );
    }
    let (code, table, _) = skewbook(&["implied", &path]);
    assert_eq!(code, 0);
    assert!(table.contains("index gap"), "{table}");
    // Notes are wrapped at 79 columns: read them as one line.
    let table = table.split_whitespace().collect::<Vec<_>>().join(" ");
    assert!(
        table.contains("index check: the tranche quotes imply a pool protection 6.8")
            && table.contains("bp of running spread above the index curve's, more than the"),
        "{table}"
    );
    // A wider tolerance lets it pass; a negative one is a usage error.
    let (code, out, _) = skewbook(&[
        "implied",
        &path,
        "--index-tolerance",
        "10",
        "--format",
        "json",
    ]);
    assert_eq!(code, 0);
    assert!(!out.contains("\"index_mismatch\""), "{out}");
    let (code, _, err) = skewbook(&["implied", &path, "--index-tolerance", "-1"]);
    assert_eq!(code, 2);
    assert!(err.contains("--index-tolerance: expected a number of bp of 0 or more, found -1"));
}

/// Fractions typed in the snapshot's percent and bp columns are read as
/// written, with a warning that names the mistake: a recovery of 0.4,
/// index spreads below 1 bp, zero rates below 0.1%, bounds up to 1%; and a
/// pool recovery of 0.35 in the pools file.
#[test]
fn fractions_in_percent_or_bp_columns_draw_warnings() {
    let sample = std::fs::read_to_string(HGX).expect("sample");
    let divide = |text: &str, cells: &[usize], by: &str, rows: &str| -> String {
        text.lines()
            .map(|l| {
                if !l.contains(rows) {
                    return l.to_string();
                }
                let mut c: Vec<String> = l.split(',').map(str::to_string).collect();
                for &i in cells {
                    if !c[i].is_empty() {
                        c[i] = format!("{}{by}", c[i]);
                    }
                }
                c.join(",")
            })
            .collect::<Vec<_>>()
            .join("\n")
    };
    for (name, text, command, code, says) in [
        (
            "recovery_fraction",
            sample.replace(",40\n", ",0.4\n"),
            "curve",
            0,
            ":2:9: column \"recovery_pct\": a recovery of \"0.4\" on 2026-06-18 is read as 0.4%; \
             if it is a fraction (0.4 meaning 40%), write 40 (recovery_pct is in percent)",
        ),
        (
            "index_spreads_in_percent",
            divide(&sample, &[6], "e-2", ",index,"),
            "curve",
            0,
            ":2:7: column \"quote\": every index spread of 2026-06-18 is below 1 bp (the largest \
             is 0.88): spreads are in basis points; if these are percents (0.88 meaning 88 bp), \
             multiply them by 100",
        ),
        (
            "zero_rates_as_fractions",
            divide(&sample, &[6], "e-2", ",zero,"),
            "curve",
            0,
            ":6:7: column \"quote\": every zero rate of 2026-06-18 is below 0.1% in size (the \
             largest is 0.0305): zero rates are in percent; if these are fractions (0.0305 \
             meaning 3.05%), multiply them by 100",
        ),
        (
            "bounds_as_fractions",
            divide(&sample, &[3, 4], "e-2", ",tranche,"),
            "implied",
            1,
            ":10:5: column \"detach_pct\": every detachment of 2026-06-18 is at most 1% of the \
             pool (the largest is 1): bounds are in percent; if these are fractions (1 meaning \
             100%), multiply them by 100",
        ),
    ] {
        let path = write_temp(name, text);
        let (got, _, err) = skewbook(&[command, &path, "--format", "json"]);
        assert_eq!(got, code, "{name}: {err}");
        let want = format!("warning: {path}{says}");
        assert!(
            err.lines().any(|l| l == want),
            "{name}: expected\n{want}\nfound\n{err}"
        );
    }
    let pools = std::fs::read_to_string("market-samples/kcx-pools.csv")
        .expect("pools")
        .replace(",35\n", ",0.35\n");
    let pools = write_temp("pool_recovery_fraction", pools);
    let (code, _, err) = skewbook(&[
        "value",
        "market-samples/kcx-trades.csv",
        "--skew",
        "market-samples/kcx-2026-06-18.csv",
        "--pools",
        &pools,
        "--format",
        "json",
    ]);
    assert!(code <= 1, "{err}");
    assert!(
        err.contains(&format!(
            "warning: {pools}:2:6: column \"recovery_pct\": a recovery of \"0.35\" for pool \
             \"alder-midcap\" is read as 0.35%; if it is a fraction, write it in percent (0.35 \
             meaning 35%)"
        )),
        "{err}"
    );
}

// ------------------------------------------------- issue 9: default histories

/// Rates typed as fractions in a percent column (every one below 0.1) and
/// a missing year draw warnings; the estimators still run (exit 0).
#[test]
fn default_rates_as_fractions_and_a_missing_year_draw_warnings() {
    let path = write_temp(
        "rates_as_fractions",
        "period,default_rate_pct\n2005,0.0158\n2006,0.01436\n2008,0.0078\n2009,0.00108\n2010,0.023\n",
    );
    let (code, _, err) = skewbook(&["realworld", &path, "--format", "json"]);
    assert_eq!(code, 0, "{err}");
    let lines: Vec<&str> = err.lines().collect();
    assert_eq!(lines.len(), 2, "{err}");
    assert_eq!(
        lines[0],
        format!(
            "warning: {path}:1:2: column \"default_rate_pct\": every default rate is below 0.1 \
             (the largest is 0.023): the column is in percent, so they read as below 0.1%; if \
             they are fractions (0.023 meaning 2.3%), multiply them by 100"
        )
    );
    assert_eq!(
        lines[1],
        format!(
            "warning: {path}:4:1: column \"period\": a gap in the periods: \"2006\" (line 3) is \
             followed by \"2008\" (line 4), and 2007 is missing; the estimators take the \
             periods as given, so check the file for a lost row"
        )
    );
    // The samples, in percent and without gaps, run quietly.
    for sample in [
        "market-samples/hgx-default-rates.csv",
        "market-samples/lhy-default-counts.csv",
    ] {
        let (code, _, err) = skewbook(&["realworld", sample]);
        assert_eq!((code, err.as_str()), (0, ""), "{sample}");
    }
    // Quarterly dates with one quarter lost.
    let path = write_temp(
        "quarters_with_a_gap",
        "period,defaults,obligors\n2020-03-31,1,100\n2020-06-30,2,100\n2020-12-31,0,100\n2021-03-31,1,100\n",
    );
    let (code, _, err) = skewbook(&["realworld", &path]);
    assert_eq!(code, 0);
    assert!(
        err.contains(":4:1: column \"period\": a gap in the periods: \"2020-06-30\" (line 3) is followed by \"2020-12-31\" (line 4), 184 days later where periods are usually 91 days apart"),
        "{err}"
    );
}

// ------------------------------------------------- issue 9: errors

/// A history of 30 dates written the US way: 20 error lines, then one
/// line for the rest.
#[test]
fn errors_stop_at_20_lines_per_file() {
    let mut text = format!("{H}\n");
    for day in 1..=30 {
        text.push_str(&format!(
            "06/{day:02}/2026,index,2031-06-20,,,spread_bp,60,\n"
        ));
    }
    let path = write_temp("us_dates", text);
    let (code, out, err) = skewbook(&["curve", &path]);
    assert_eq!(code, 2);
    assert!(out.is_empty());
    let lines: Vec<&str> = err.lines().collect();
    assert_eq!(lines.len(), 21, "{err}");
    assert_eq!(
        lines[0],
        format!(
            "error: {path}:2:1: column \"date\": expected an ISO 8601 date YYYY-MM-DD, found \
             \"06/01/2026\" (a day-month-year or month-day-year date: write it year first, as \
             2026-06-18)"
        )
    );
    assert!(
        lines[19].starts_with(&format!("error: {path}:21:1:")),
        "{err}"
    );
    assert_eq!(lines[20], format!("error: {path}: and 10 more like this"));
}

/// A file saved with `;` or tabs, or without its header row, is said so in
/// one line.
#[test]
fn a_wrong_delimiter_or_a_missing_header_is_one_line() {
    let sample = std::fs::read_to_string(HGX).expect("sample");
    for (name, text, says) in [
        (
            "semicolons",
            sample.replace(',', ";").replace('.', ","),
            "expected comma-separated values, found a header separated by semicolons",
        ),
        (
            "tabs",
            sample.replace(',', "\t"),
            "expected comma-separated values, found a header separated by tabs",
        ),
        (
            "no_header",
            sample.lines().skip(1).collect::<Vec<_>>().join("\n"),
            "expected a header row naming the columns (date, instrument, maturity, attach_pct, \
             detach_pct, quote_kind, quote, coupon_bp, recovery_pct), found a data row \
             (\"2026-06-18\", \"index\", \"2029-06-20\", \"\", ...): the file has no header row; \
             add one",
        ),
    ] {
        let path = write_temp(name, text);
        let (code, out, err) = skewbook(&["implied", &path]);
        assert_eq!(code, 2, "{name}");
        assert!(out.is_empty());
        assert_eq!(err.lines().count(), 1, "{name}: {err}");
        assert!(
            err.starts_with(&format!("error: {path}:1: {says}")),
            "{name}: {err}"
        );
    }
    let history = write_temp(
        "history_semicolons",
        "period;default_rate_pct\n2005;0,158\n",
    );
    let (code, _, err) = skewbook(&["realworld", &history]);
    assert_eq!((code, err.lines().count()), (2, 1), "{err}");
    assert!(err.contains("separated by semicolons"), "{err}");
    let trades = write_temp(
        "trades_no_header",
        "A,index,2031-06-20,0,3,500,1e7,buy\nB,index,2031-06-20,3,7,100,1e7,sell\n",
    );
    let (code, _, err) = skewbook(&[
        "value",
        &trades,
        "--skew",
        "market-samples/kcx-2026-06-18.csv",
    ]);
    assert_eq!((code, err.lines().count()), (2, 1), "{err}");
    assert!(err.contains("the file has no header row"), "{err}");
}

// ------------------------------------------------- issue 9: long runs

/// A run of many dates ends with a summary on standard error, in every
/// format (the JSON stays an array); a date with an unsolved quote is named
/// there and makes the exit status 1.
#[test]
fn a_run_of_many_dates_ends_with_a_summary() {
    for format in ["table", "csv", "json"] {
        let (code, out, err) = skewbook(&["implied", HISTORY, "--format", format]);
        assert_eq!(code, 0, "{err}");
        assert!(!out.contains("summary"), "{format}");
        assert_eq!(
            err.lines().collect::<Vec<_>>(),
            [
                "summary: 22 dates run, 2026-06-01 to 2026-06-30",
                "summary: dates with each flag: two_compound_roots 22, top_tranche 22",
                "summary: every quote of every date has a solution",
            ],
            "{format}"
        );
        if format == "json" {
            assert!(json(&out).is_array());
        }
    }
    // One date of the history with a mezzanine quote out of reach.
    let text = std::fs::read_to_string(HISTORY).expect("history");
    let row = "2026-06-10,tranche,2031-06-20,3,7,spread_bp,";
    let at = text.find(row).expect("row") + row.len();
    let end = at + text[at..].find(',').expect("cell");
    let path = write_temp(
        "history_one_bad",
        format!("{}5000{}", &text[..at], &text[end..]),
    );
    let (code, _, err) = skewbook(&["implied", &path, "--format", "json"]);
    assert_eq!(code, 1);
    assert!(
        err.contains(
            "summary: dates with each flag: no_compound_root 1, two_compound_roots 21, \
             base_quote_above_range 1, base_chain_broken 1, top_tranche 21"
        ),
        "{err}"
    );
    assert!(
        err.contains(
            "summary: 1 date with a quote that has no solution (exit status 1): 2026-06-10"
        ),
        "{err}"
    );
    // One date: no summary.
    let (_, _, err) = skewbook(&["implied", HGX]);
    assert!(err.is_empty(), "{err}");
}

/// `--from`, `--to` and `--date` choose the dates of a history in
/// `implied`, `price`, `curve` and `surface`.
#[test]
fn from_to_and_date_choose_the_dates_of_every_history_command() {
    for command in [
        &["curve"][..],
        &["implied"],
        &["price", "--correlation", "30"],
        &["surface"],
    ] {
        let run = |extra: &[&str]| {
            let mut args = command.to_vec();
            args.push(HISTORY);
            args.extend(extra);
            args.extend(["--format", "json"]);
            let (code, out, err) = skewbook(&args);
            assert_eq!(code, 0, "{args:?}: {err}");
            let dates: Vec<String> = json(&out)
                .as_array()
                .expect("dates")
                .iter()
                .map(|d| d["date"].as_str().expect("date").to_string())
                .collect();
            dates
        };
        assert_eq!(run(&[]).len(), 22, "{command:?}");
        let week = run(&["--from", "2026-06-08", "--to", "2026-06-12"]);
        assert_eq!(
            week,
            [
                "2026-06-08",
                "2026-06-09",
                "2026-06-10",
                "2026-06-11",
                "2026-06-12"
            ],
            "{command:?}"
        );
        assert_eq!(
            run(&["--date", "2026-06-15"]),
            ["2026-06-15"],
            "{command:?}"
        );
        assert_eq!(run(&["--from", "2026-06-29"]), ["2026-06-29", "2026-06-30"]);
        assert_eq!(run(&["--to", "2026-06-01"]), ["2026-06-01"]);
    }
    let (code, _, err) = skewbook(&["implied", HISTORY, "--from", "2026-07-01"]);
    assert_eq!(code, 2);
    assert_eq!(
        err.trim(),
        format!(
            "error: --from 2026-07-01: no quotes on or after 2026-07-01 in {HISTORY} (it has 22 \
             dates, 2026-06-01 to 2026-06-30)"
        )
    );
    let (code, _, err) = skewbook(&[
        "curve",
        HISTORY,
        "--from",
        "2026-06-20",
        "--to",
        "2026-06-10",
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("expected --from on or before --to"), "{err}");
    let (code, _, _) = skewbook(&[
        "curve",
        HISTORY,
        "--date",
        "2026-06-10",
        "--to",
        "2026-06-12",
    ]);
    assert_eq!(code, 2, "--date with --to is a usage error");
}

// ------------------------------------------------- issue 9: formats written down

/// The README links the format and conventions documents, which are in
/// the repository, and cites no document that is not; the format document
/// names every column of every sample file and every flag with its short
/// form and meaning as the program prints them.
#[test]
fn formats_are_written_down_in_the_repository() {
    let root = env!("CARGO_MANIFEST_DIR");
    let read = |p: &str| {
        std::fs::read_to_string(format!("{root}/{p}")).unwrap_or_else(|e| panic!("{p}: {e}"))
    };
    let readme = read("README.md");
    for doc in ["docs/formats.md", "docs/conventions.md"] {
        assert!(
            readme.contains(&format!("]({doc})")),
            "README does not link {doc}"
        );
    }
    // Every relative link of the README and of the docs resolves.
    for (file, text) in [
        ("README.md", readme.clone()),
        ("docs/formats.md", read("docs/formats.md")),
        ("docs/conventions.md", read("docs/conventions.md")),
    ] {
        let dir = std::path::Path::new(root).join(file);
        let dir = dir.parent().expect("dir");
        for (i, _) in text.match_indices("](") {
            let target = &text[i + 2..];
            let target = &target[..target.find(')').expect("link end")];
            if target.starts_with("http") || target.starts_with('#') {
                continue;
            }
            let path = target.split('#').next().unwrap_or(target);
            assert!(
                dir.join(path).exists(),
                "{file} links {target}, not in the repository"
            );
        }
        assert!(
            !text.contains("reference-values.md"),
            "{file} cites reference-values.md"
        );
    }
    assert!(
        readme.contains("cargo install --path ."),
        "README: how to put skewbook on the PATH"
    );
    let formats = read("docs/formats.md");
    for sample in [
        "hgx-2026-06-18.csv",
        "hgx-default-rates.csv",
        "lhy-default-counts.csv",
        "kcx-trades.csv",
        "kcx-pools.csv",
    ] {
        let text = read(&format!("market-samples/{sample}"));
        for column in text.lines().next().expect("header").split(',') {
            assert!(
                formats.contains(&format!("| `{column}` |")),
                "docs/formats.md: no row for column {column} of {sample}"
            );
        }
    }
    for flag in skewbook::flags::Flag::ALL {
        let row = format!(
            "| `{}` | {} | {} |",
            flag.name(),
            flag.short(),
            flag.meaning()
        );
        assert!(
            formats.contains(&row),
            "docs/formats.md: expected the row\n{row}"
        );
    }
}
