//! The command line's own rules: options in percent (the files' unit) with
//! a warning for a value that looks like a fraction, negative numbers that
//! reach the range checks, the `loss` domains, the IRB floor, a broken pipe,
//! numbers in messages, standard input read once, quantile pairs in either
//! order, and the cautions.

use crate::common::{skewbook, write_temp};
use serde_json::Value;
use std::process::{Command, Stdio};

const HGX: &str = "market-samples/hgx-2026-06-18.csv";
const RATES: &str = "market-samples/hgx-default-rates.csv";

fn json(out: &str) -> Value {
    serde_json::from_str(out).unwrap_or_else(|e| panic!("{e}: {out}"))
}

/// `price --correlation 30` is 30 %; `0.3` runs as 0.3 % with a warning
/// naming the likely mistake; the same for `--recovery`, `--lgd`, `--rho`,
/// `--levels`; `--pd 0.5` is a plausible 0.5 % and runs quietly.
#[test]
fn options_are_percentages_and_fraction_lookalikes_draw_a_warning() {
    let (code, thirty, err) = skewbook(&["price", HGX, "--correlation", "30", "--format", "json"]);
    assert_eq!(code, 0, "{err}");
    assert!(err.is_empty(), "{err}");
    let (code, small, err) = skewbook(&["price", HGX, "--correlation", "0.3", "--format", "json"]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(
        err.trim(),
        "warning: --correlation 0.3 is read as 0.3%; if you meant the fraction 0.3 (30%), \
         type --correlation 30"
    );
    assert_ne!(json(&thirty), json(&small));

    // --recovery 40 is the default 40 %; 0.4 is 0.4 %, with a warning.
    let (_, default, _) = skewbook(&["curve", HGX, "--format", "json"]);
    let (code, forty, err) = skewbook(&["curve", HGX, "--recovery", "40", "--format", "json"]);
    assert_eq!((code, err.as_str()), (0, ""));
    assert_eq!(json(&default), json(&forty));
    let (code, _, err) = skewbook(&["curve", HGX, "--recovery", "0.4"]);
    assert_eq!(code, 0);
    assert!(
        err.contains("--recovery 0.4 is read as 0.4%") && err.contains("type --recovery 40"),
        "{err}"
    );

    // loss: every one of these is percent; the JSON holds fractions.
    let (code, out, err) = skewbook(&[
        "loss", "--pd", "0.5", "--rho", "12", "--lgd", "45", "--levels", "99,99.9", "--format",
        "json",
    ]);
    assert_eq!(
        (code, err.as_str()),
        (0, ""),
        "--pd 0.5 is a plausible 0.5 %"
    );
    let v = json(&out);
    assert_eq!(
        (v["pd"].as_f64(), v["rho"].as_f64(), v["lgd"].as_f64()),
        (Some(0.005), Some(0.12), Some(0.45))
    );
    assert_eq!(v["levels"][1]["level"].as_f64(), Some(0.999));
    let (code, _, err) = skewbook(&[
        "loss", "--pd", "0.02", "--rho", "0.12", "--lgd", "1", "--levels", "0.999",
    ]);
    assert_eq!(code, 0);
    for says in [
        "--pd 0.02 is read as 0.02%",
        "--rho 0.12 is read as 0.12%",
        "--lgd 1 is read as 1%",
        "--levels 0.999 is read in percent (0.999%)",
    ] {
        assert!(err.contains(says), "{says}: {err}");
    }
    assert_eq!(err.lines().count(), 4, "{err}");

    // realworld: --lgd and --levels in percent too.
    let (code, out, err) = skewbook(&[
        "realworld",
        RATES,
        "--lgd",
        "45",
        "--levels",
        "99.5",
        "--format",
        "json",
    ]);
    assert_eq!((code, err.as_str()), (0, ""));
    let v = json(&out);
    assert_eq!(v["lgd"].as_f64(), Some(0.45));
    assert_eq!(v["methods"][0]["loss"][0]["level"].as_f64(), Some(0.995));
}

/// The help text of every option with a number names its unit.
#[test]
fn every_numeric_option_names_its_unit_in_the_help() {
    for (command, option, unit) in [
        ("curve", "--recovery", "percent"),
        ("curve", "--rate", "percent"),
        ("implied", "--recovery", "percent"),
        ("implied", "--index-tolerance", "bp"),
        ("price", "--correlation", "percent"),
        ("price", "--rate", "percent"),
        ("loss", "--pd", "percent"),
        ("loss", "--rho", "percent"),
        ("loss", "--lgd", "percent"),
        ("loss", "--levels", "percent"),
        ("loss", "--maturity", "years"),
        ("loss", "--turnover", "millions"),
        ("realworld", "--levels", "percent"),
        ("realworld", "--lgd", "percent"),
        ("realworld", "--quantiles", "percent"),
        ("realworld", "--recovery", "percent"),
    ] {
        let (code, help, _) = skewbook(&[command, "--help"]);
        assert_eq!(code, 0);
        // The option's block: from its line to the next option's.
        let start = help
            .find(&format!("      {option} "))
            .unwrap_or_else(|| panic!("{command} {option} missing from help:\n{help}"));
        let rest = &help[start + 6..];
        let end = rest.find("\n      --").map_or(rest.len(), |i| i);
        let block = &rest[..end];
        assert!(block.contains(unit), "{command} {option}: {block}");
    }
}

/// A negative number is a value, so the range check answers in the
/// option's unit (clap used to take `-1` for an option and suggest `-- -1`).
#[test]
fn negative_numbers_reach_the_range_checks() {
    for (args, says) in [
        (
            vec!["curve", HGX, "--recovery", "-1"],
            "--recovery: expected a percentage in [0, 100), found -1",
        ),
        (
            vec!["curve", HGX, "--recovery", "-40"],
            "--recovery: expected a percentage in [0, 100), found -40",
        ),
        (
            vec!["implied", HGX, "--rate", "-150"],
            "--rate: expected a percentage in (-100, 100), found -150",
        ),
        (
            vec!["price", HGX, "--correlation", "-0.5"],
            "--correlation: expected a percentage in (0, 100), found -0.5",
        ),
        (
            vec!["loss", "--pd", "-1", "--rho", "10"],
            "--pd: expected a percentage in [1e-6, 100), found -1",
        ),
        (
            vec!["loss", "--pd", "1", "--rho", "-10"],
            "--rho: expected a percentage in [0.0001, 100), found -10",
        ),
        (
            vec!["loss", "--pd", "1", "--rho", "10", "--lgd", "-45"],
            "--lgd: expected a percentage in (0, 100], found -45",
        ),
        (
            vec!["loss", "--pd", "1", "--rho", "10", "--levels", "-5,99"],
            "--levels: expected a percentage in (0, 100), found -5",
        ),
        (
            vec!["loss", "--pd", "1", "--rho", "10", "--maturity", "-1"],
            "IRB maturity: expected years from 1 to 5 (the Basel II floor and cap), found -1",
        ),
        (
            vec!["loss", "--pd", "1", "--rho", "10", "--turnover", "-5"],
            "IRB turnover: expected a positive amount in millions, found -5",
        ),
        (
            vec!["realworld", RATES, "--quantiles", "-50:1,99.9:9"],
            "--quantiles level: expected a percentage in (0, 100), found -50",
        ),
    ] {
        let (code, out, err) = skewbook(&args);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert!(out.is_empty(), "{args:?}");
        assert_eq!(err.trim(), format!("error: {says}"), "{args:?}");
    }
}

/// `loss` takes PD in [0.000001 %, 100 %) and rho in [0.0001 %, 100 %):
/// a PD of 1e-300 (it printed an infinite density) and a rho of 4.9e-324
/// (NaN) are refused; at the edges of the domain every number is finite.
#[test]
fn loss_domains_refuse_what_cannot_be_printed_and_edges_stay_finite() {
    for (args, says) in [
        (
            vec!["loss", "--pd", "1e-298", "--rho", "12"],
            "--pd: expected a percentage in [1e-6, 100), found 1e-298",
        ),
        (
            vec!["loss", "--pd", "3", "--rho", "4.9e-324"],
            "--rho: expected a percentage in [0.0001, 100), found 4.94066e-324",
        ),
        (
            vec!["loss", "--pd", "100", "--rho", "12"],
            "--pd: expected a percentage in [1e-6, 100), found 100",
        ),
    ] {
        let (code, out, err) = skewbook(&args);
        assert_eq!((code, out.as_str()), (2, ""), "{args:?}");
        assert_eq!(err.trim(), format!("error: {says}"));
    }
    for pd in ["0.000001", "0.03", "50", "99.9999"] {
        for rho in ["0.0001", "12", "99.9999"] {
            let args = [
                "loss",
                "--pd",
                pd,
                "--rho",
                rho,
                "--levels",
                "0.000001,50,99.9,99.99999999",
                "--format",
                "json",
            ];
            let (code, out, err) = skewbook(&args);
            assert_eq!(code, 0, "{args:?}: {err}");
            let v = json(&out);
            for l in v["levels"].as_array().unwrap() {
                for key in [
                    "level",
                    "loss_quantile",
                    "default_rate_quantile",
                    "expected_shortfall",
                ] {
                    assert!(l[key].is_number(), "{args:?}: {key} {l}");
                }
                // The density is null only with its note.
                if l["density"].is_null() {
                    assert!(v["notes"].to_string().contains("density"), "{args:?}");
                }
            }
            for key in ["mean_loss", "loss_sd"] {
                assert!(v[key].is_number(), "{args:?}: {key}");
            }
            for key in ["capital", "risk_weight", "correlation", "maturity_slope"] {
                assert!(
                    v["irb"][key].as_f64().is_some_and(|x| x >= 0.0),
                    "{args:?}: irb {key}"
                );
            }
        }
    }
}

/// Basel II para. 272's footnote: a negative capital charge is zero. At PD
/// 0.000001 % the formula's 1 - 1.5 b is negative (b = 1.2715) and K came
/// out negative; now it is 0, flagged, with notes.
#[test]
fn irb_capital_is_floored_at_zero_with_a_note() {
    let (code, out, err) = skewbook(&[
        "loss", "--pd", "0.000001", "--rho", "10", "--format", "json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v = json(&out);
    assert_eq!(v["irb"]["capital"].as_f64(), Some(0.0));
    assert_eq!(v["irb"]["risk_weight"].as_f64(), Some(0.0));
    assert_eq!(v["irb"]["floored"].as_bool(), Some(true));
    let notes = v["notes"].to_string();
    assert!(
        notes.contains("floored at 0") && notes.contains("para. 272"),
        "{notes}"
    );
    assert!(notes.contains("no meaning"), "{notes}");
    let (_, table, _) = skewbook(&["loss", "--pd", "0.000001", "--rho", "10"]);
    assert!(table.contains("K is floored at 0"), "{table}");
    // At an ordinary PD nothing is floored and no such note appears.
    let (_, out, _) = skewbook(&["loss", "--pd", "1", "--rho", "10", "--format", "json"]);
    let v = json(&out);
    assert_eq!(v["irb"]["floored"].as_bool(), Some(false));
    assert!(!v["notes"].to_string().contains("floored"));
}

/// `skewbook implied history.csv | head -1`: when the reader goes away the
/// program stops quietly with status 0 (the documented choice), in every
/// format (JSON and CSV used to exit 2 with "writing output: Broken pipe").
#[test]
fn a_closed_pipe_ends_quietly_with_status_0() {
    for format in ["table", "csv", "json"] {
        let mut child = Command::new(env!("CARGO_BIN_EXE_skewbook"))
            .args([
                "implied",
                "market-samples/hgx-history-2026-06.csv",
                "--format",
                format,
            ])
            .current_dir(env!("CARGO_MANIFEST_DIR"))
            .stdout(Stdio::piped())
            .stderr(Stdio::piped())
            .spawn()
            .expect("run skewbook");
        // Close the reading end before the program has written anything.
        drop(child.stdout.take());
        let out = child.wait_with_output().expect("wait");
        let err = String::from_utf8_lossy(&out.stderr);
        assert_eq!(out.status.code(), Some(0), "{format}: {err}");
        assert!(err.is_empty(), "{format}: {err}");
    }
}

/// Every number in `text` that is not part of a date has at most `n`
/// significant digits.
fn numbers_have_at_most(text: &str, n: usize) -> Result<(), String> {
    for token in text.split(|c: char| !(c.is_ascii_digit() || c == '.' || c == 'e' || c == '-')) {
        let t = token.trim_matches(|c: char| c == '.' || c == '-' || c == 'e');
        if t.is_empty() || t.parse::<f64>().is_err() {
            continue;
        }
        let mantissa = t.split('e').next().unwrap_or("");
        let digits: String = mantissa.chars().filter(char::is_ascii_digit).collect();
        let significant = digits.trim_start_matches('0');
        let significant = if mantissa.contains('.') {
            significant
        } else {
            significant.trim_end_matches('0')
        };
        if significant.len() > n {
            return Err(format!("{t} has {} significant digits", significant.len()));
        }
    }
    Ok(())
}

/// Messages give numbers in the quote's unit with at most 6 significant
/// digits (they gave `{:.6}`: 55.123456, and 300-digit numbers for huge
/// quotes); the largest attainable upfront is evaluated directly, not as
/// the quote plus a gap.
#[test]
fn numbers_in_messages_have_at_most_six_significant_digits() {
    let head = "date,instrument,maturity,attach_pct,detach_pct,quote_kind,quote,coupon_bp\n";
    // At 40 % recovery no hazard rate gives an upfront of 70 % (the
    // protection leg is below 60 %); an upfront of -30 % is below what a
    // riskless pool pays (about -22 % for a 500 bp coupon over 5 years).
    for (name, quote, says) in [
        ("upfront-too-high", "70", "the largest attainable value is "),
        (
            "upfront-too-low",
            "-30",
            "even a zero hazard rate on this pillar gives ",
        ),
    ] {
        let path = write_temp(
            name,
            format!("{head}2026-06-18,index,2031-06-20,,,upfront_pct,{quote},500\n"),
        );
        let (code, _, err) = skewbook(&["curve", &path]);
        assert_eq!(code, 2, "{err}");
        let why = err
            .split("cannot be fitted: ")
            .nth(1)
            .unwrap_or_else(|| panic!("{err}"));
        assert!(why.starts_with(says), "{err}");
        numbers_have_at_most(why, 6).unwrap_or_else(|e| panic!("{e}: {err}"));
        let value: f64 = why[says.len()..]
            .split([',', ' '])
            .next()
            .and_then(|x| x.parse().ok())
            .unwrap_or_else(|| panic!("{err}"));
        if quote == "70" {
            assert!(value > 40.0 && value < 60.0, "{err}");
        } else {
            assert!(value > -30.0 && value < -15.0, "{err}");
        }
    }
    let (_, _, err) = skewbook(&["realworld", RATES, "--quantiles", "50:10.123456789,99.9:5"]);
    assert!(err.contains("no Vasicek distribution"), "{err}");
    numbers_have_at_most(&err, 6).unwrap_or_else(|e| panic!("{e}: {err}"));
    assert!(numbers_have_at_most("0.123456789", 6).is_err());
    assert!(numbers_have_at_most("2026-06-18 1e-300 55.1235 0.000123457 100000", 6).is_ok());
}

/// `realworld - --against -` would read standard input twice.
#[test]
fn standard_input_is_read_once() {
    let (code, out, err) = skewbook(&["realworld", "-", "--against", "-"]);
    assert_eq!((code, out.as_str()), (2, ""));
    assert_eq!(
        err.trim(),
        "error: standard input can be read once: expected a file name for the history or \
         for --against, found `-` for both"
    );
}

/// The two quantiles of `quantile_pair` are an unordered pair: given in
/// reverse order they give the same report, notes included.
#[test]
fn quantile_pairs_in_either_order_give_the_same_report() {
    let run = |q: &str| {
        let (code, out, err) =
            skewbook(&["realworld", RATES, "--quantiles", q, "--format", "json"]);
        assert_eq!(code, 0, "{err}");
        json(&out)
    };
    let ordered = run("50:0.657105077249435,99.9:9.03258313260653");
    let reversed = run("99.9:9.03258313260653,50:0.657105077249435");
    assert_eq!(ordered, reversed);
}

/// `loss` and `realworld` end their tables with the caution and carry it
/// in JSON; the README's caution section contains the same sentence.
#[test]
fn cautions_in_the_output_and_the_readme() {
    let flat = |s: &str| s.split_whitespace().collect::<Vec<_>>().join(" ");
    let caution = skewbook::CAUTION;
    for text in [
        "licensed professional practice",
        "local regulation",
        "not advice",
        "model-risk governance",
    ] {
        assert!(caution.contains(text), "{text}");
    }
    for args in [
        vec!["loss", "--pd", "1", "--rho", "12"],
        vec!["realworld", RATES],
        vec!["realworld", RATES, "--against", HGX],
    ] {
        let (code, table, _) = skewbook(&args);
        assert_eq!(code, 0);
        assert!(
            flat(&table).ends_with(&format!("Caution: {}", flat(caution))),
            "{args:?}: {table}"
        );
        let mut with_json = args.clone();
        with_json.extend(["--format", "json"]);
        let (_, out, _) = skewbook(&with_json);
        assert_eq!(json(&out)["caution"].as_str(), Some(caution), "{args:?}");
    }
    let readme =
        std::fs::read_to_string(concat!(env!("CARGO_MANIFEST_DIR"), "/README.md")).unwrap();
    assert!(
        flat(&readme).contains(&flat(caution)),
        "README lacks the caution sentence"
    );
}
