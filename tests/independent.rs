//! The command line against an independent implementation of the contract.
//!
//! Source of the expected values: `tests/reference/independent.py`, a plain
//! numpy/scipy implementation written only from `conventions.md` (quad over
//! time for the index legs, quad over the common factor split at the kink for
//! the large-pool expectations, brentq after a 201-point scan for every root).
//! Its outputs on the invented snapshots in `tests/fixtures/scenarios/` are
//! committed in `tests/fixtures/independent/<scenario>.json`, with the exact
//! command line and the numpy/scipy versions in the `metadata` object;
//! `python3 tests/reference/make_scenarios.py` regenerates both.
//!
//! Each scenario runs the built binary three times (`curve`, `implied`,
//! `price --correlation X`, all `--format json`, with the scenario's options)
//! and compares row by row, matched by (date, maturity) for index rows and
//! (date, maturity, attachment, detachment) for tranches.

use serde_json::Value;
use std::path::PathBuf;
use std::process::Command;

/// Hazard rates, relative.
const HAZARD_REL: f64 = 1e-6;
/// Index risky annuity (premium leg per unit spread, with accrued on default), relative.
const ANNUITY_REL: f64 = 1e-8;
/// Index quote repriced on the bootstrapped curve, in the quote's unit (bp or
/// percent points): the contract's bootstrap tolerance.
const REPRICE: f64 = 1e-8;
/// Compound and base correlations, absolute.
const CORRELATION_ABS: f64 = 2e-4;
/// Model upfront, percentage points.
const UPFRONT_PP: f64 = 1e-4;
/// Model par spread, bp.
const SPREAD_BP: f64 = 0.05;
/// Expected tranche loss to maturity, percentage points of tranche notional.
const EXPECTED_LOSS_PP: f64 = 1e-4;

/// A scenario: fixture name and the options it was run with (besides
/// `--correlation`, which `price` alone takes). Keep in step with `RUNS` in
/// `tests/reference/make_scenarios.py`. The Python implementation takes its
/// `--correlation` as a fraction, skewbook as a percentage: `correlation`
/// is the fraction the fixture was made with, `correlation_pct` what
/// skewbook is given (checked to be 100 times the other).
struct Scenario {
    /// Fixture name (`tests/fixtures/independent/<name>.json`).
    name: &'static str,
    /// Snapshot name (`tests/fixtures/scenarios/<file>.csv`).
    file: &'static str,
    options: &'static [&'static str],
    correlation: &'static str,
    correlation_pct: &'static str,
}

const SCENARIOS: &[Scenario] = &[
    Scenario {
        name: "ig_pool",
        file: "ig_pool",
        options: &[],
        correlation: "0.3",
        correlation_pct: "30",
    },
    Scenario {
        name: "hy_pool",
        file: "hy_pool",
        options: &["--rate", "2.5"],
        correlation: "0.25",
        correlation_pct: "25",
    },
    Scenario {
        name: "zero_curve",
        file: "zero_curve",
        options: &[],
        correlation: "0.3",
        correlation_pct: "30",
    },
    Scenario {
        name: "calendar_edges",
        file: "calendar_edges",
        options: &["--recovery", "35"],
        correlation: "0.35",
        correlation_pct: "35",
    },
    Scenario {
        name: "compound_roots",
        file: "compound_roots",
        options: &[],
        correlation: "0.2",
        correlation_pct: "20",
    },
    Scenario {
        name: "ig_pool_rho_low",
        file: "ig_pool",
        options: &[],
        correlation: "0.0001",
        correlation_pct: "0.01",
    },
    Scenario {
        name: "ig_pool_rho_high",
        file: "ig_pool",
        options: &[],
        correlation: "0.9999",
        correlation_pct: "99.99",
    },
];

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn fixture(name: &str) -> Value {
    let path = root().join(format!("tests/fixtures/independent/{name}.json"));
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    let doc: Value =
        serde_json::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    doc["dates"].clone()
}

/// Runs the binary; `ok_codes` are the exit statuses accepted (implied exits 1
/// when some quote has no solution, and still prints every row).
fn run(command: &str, sc: &Scenario, extra: &[&str], ok_codes: &[i32]) -> Value {
    let file = root().join(format!("tests/fixtures/scenarios/{}.csv", sc.file));
    let out = Command::new(env!("CARGO_BIN_EXE_skewbook"))
        .arg(command)
        .arg(&file)
        .args(sc.options)
        .args(extra)
        .args(["--format", "json"])
        .output()
        .expect("run skewbook");
    let code = out.status.code().unwrap_or(-1);
    assert!(
        ok_codes.contains(&code),
        "skewbook {command} {}: exit {code}\nstderr: {}",
        sc.name,
        String::from_utf8_lossy(&out.stderr)
    );
    serde_json::from_slice(&out.stdout).unwrap_or_else(|e| {
        panic!(
            "skewbook {command} {}: not JSON ({e}): {}",
            sc.name,
            String::from_utf8_lossy(&out.stdout)
        )
    })
}

fn num(v: &Value, field: &str, ctx: &str) -> f64 {
    v[field]
        .as_f64()
        .unwrap_or_else(|| panic!("{ctx}: field {field:?} is not a number: {}", v[field]))
}

fn text<'a>(v: &'a Value, field: &str, ctx: &str) -> &'a str {
    v[field]
        .as_str()
        .unwrap_or_else(|| panic!("{ctx}: field {field:?} is not a string: {}", v[field]))
}

fn rows<'a>(v: &'a Value, field: &str, ctx: &str) -> &'a Vec<Value> {
    v[field]
        .as_array()
        .unwrap_or_else(|| panic!("{ctx}: field {field:?} is not an array"))
}

/// The date entry of `output` for `date`.
fn find_date<'a>(output: &'a Value, date: &str, ctx: &str) -> &'a Value {
    let all = output
        .as_array()
        .unwrap_or_else(|| panic!("{ctx}: output is not an array"));
    let found: Vec<&Value> = all
        .iter()
        .filter(|d| d["date"].as_str() == Some(date))
        .collect();
    assert_eq!(
        found.len(),
        1,
        "{ctx}: date {date} found {} times",
        found.len()
    );
    found[0]
}

/// The tranche of `list` with this maturity and these bounds (percent, to 1e-9).
fn find_tranche<'a>(list: &'a [Value], like: &Value, ctx: &str) -> &'a Value {
    let m = text(like, "maturity", ctx);
    let a = num(like, "attach_pct", ctx);
    let d = num(like, "detach_pct", ctx);
    let found: Vec<&Value> = list
        .iter()
        .filter(|t| {
            t["maturity"].as_str() == Some(m)
                && (t["attach_pct"].as_f64().unwrap_or(f64::NAN) - a).abs() < 1e-9
                && (t["detach_pct"].as_f64().unwrap_or(f64::NAN) - d).abs() < 1e-9
        })
        .collect();
    assert_eq!(
        found.len(),
        1,
        "{ctx}: tranche {m} [{a}, {d}] found {} times",
        found.len()
    );
    found[0]
}

fn close(got: f64, want: f64, tol: f64, what: &str) -> Option<String> {
    if (got - want).abs() <= tol {
        None
    } else {
        Some(format!(
            "{what}: skewbook {got:.10} independent {want:.10} (diff {:.3e}, tol {tol:e})",
            got - want
        ))
    }
}

/// Collects every disagreement of a scenario, then fails once listing them all.
fn finish(name: &str, command: &str, problems: Vec<String>) {
    assert!(
        problems.is_empty(),
        "{name}: `{command}` disagrees with the independent implementation in {} place(s):\n  {}",
        problems.len(),
        problems.join("\n  ")
    );
}

fn check_curve(sc: &Scenario) {
    let want = fixture(sc.name);
    let got = run("curve", sc, &[], &[0]);
    let mut problems = Vec::new();
    for wd in want.as_array().expect("fixture dates") {
        let date = text(wd, "date", sc.name);
        let gd = find_date(&got, date, sc.name);
        let gi = rows(gd, "index", sc.name);
        let wi = rows(wd, "index", sc.name);
        assert_eq!(
            gi.len(),
            wi.len(),
            "{} {date}: number of index rows",
            sc.name
        );
        for w in wi {
            let m = text(w, "maturity", sc.name);
            let g = gi
                .iter()
                .find(|g| g["maturity"].as_str() == Some(m))
                .unwrap_or_else(|| panic!("{} {date}: index {m} missing", sc.name));
            let (hg, hw) = (num(g, "hazard", m), num(w, "hazard", m));
            problems.extend(close(
                hg,
                hw,
                HAZARD_REL * hw.abs(),
                &format!("{date} index {m} hazard"),
            ));
            let (ag, aw) = (num(g, "annuity", m), num(w, "annuity", m));
            problems.extend(close(
                ag,
                aw,
                ANNUITY_REL * aw.abs(),
                &format!("{date} index {m} annuity"),
            ));
            problems.extend(close(
                num(g, "repriced_quote", m),
                num(w, "quote", m),
                REPRICE,
                &format!("{date} index {m} repriced quote"),
            ));
        }
    }
    finish(sc.name, "curve", problems);
}

/// Every fixture tranche with its counterpart in the command's output and a
/// label for messages; the two must list the same number of tranches per date.
fn paired_tranches<'a>(
    want: &'a Value,
    got: &'a Value,
    name: &str,
) -> Vec<(String, &'a Value, &'a Value)> {
    let mut out = Vec::new();
    for wd in want.as_array().expect("fixture dates") {
        let date = text(wd, "date", name);
        let gd = find_date(got, date, name);
        let gt = rows(gd, "tranches", name);
        let wt = rows(wd, "tranches", name);
        assert_eq!(gt.len(), wt.len(), "{name} {date}: number of tranche rows");
        for w in wt {
            let g = find_tranche(gt, w, name);
            let label = format!(
                "{date} {} [{}, {}]",
                text(w, "maturity", name),
                num(w, "attach_pct", name),
                num(w, "detach_pct", name)
            );
            out.push((label, w, g));
        }
    }
    out
}

fn check_implied(sc: &Scenario) {
    let want = fixture(sc.name);
    let got = run("implied", sc, &[], &[0, 1]);
    let mut problems = Vec::new();
    for (label, w, g) in paired_tranches(&want, &got, sc.name) {
        let wc = rows(w, "compound_correlation", &label);
        let gc = rows(g, "compound_correlation", &label);
        if wc.len() != gc.len() {
            problems.push(format!(
                "{label} compound correlation: skewbook {gc:?} independent {wc:?}"
            ));
        } else {
            for (k, (a, b)) in gc.iter().zip(wc).enumerate() {
                let (a, b) = (a.as_f64().expect("root"), b.as_f64().expect("root"));
                problems.extend(close(
                    a,
                    b,
                    CORRELATION_ABS,
                    &format!("{label} compound root {k}"),
                ));
            }
        }
        match (
            g["base_correlation"].as_f64(),
            w["base_correlation"].as_f64(),
        ) {
            (Some(a), Some(b)) => problems.extend(close(
                a,
                b,
                CORRELATION_ABS,
                &format!("{label} base correlation"),
            )),
            (None, None) => {
                assert!(
                    g["base_correlation"].is_null(),
                    "{label}: base_correlation neither number nor null"
                )
            }
            (a, b) => problems.push(format!(
                "{label} base correlation: skewbook {a:?} independent {b:?}"
            )),
        }
    }
    finish(sc.name, "implied", problems);
}

fn check_price(sc: &Scenario) {
    let want = fixture(sc.name);
    let got = run("price", sc, &["--correlation", sc.correlation_pct], &[0]);
    let mut problems = Vec::new();
    for (label, w, g) in paired_tranches(&want, &got, sc.name) {
        for (field, tol) in [
            ("model_upfront_pct", UPFRONT_PP),
            ("model_spread_bp", SPREAD_BP),
            ("expected_loss_pct", EXPECTED_LOSS_PP),
        ] {
            problems.extend(close(
                num(g, field, &label),
                num(w, field, &label),
                tol,
                &format!("{label} {field}"),
            ));
        }
    }
    finish(sc.name, "price", problems);
}

macro_rules! scenario_tests {
    ($($module:ident => $index:expr),* $(,)?) => {$(
        mod $module {
            #[test]
            fn curve_hazards_match() {
                super::check_curve(&super::SCENARIOS[$index]);
            }
            #[test]
            fn implied_correlations_match() {
                super::check_implied(&super::SCENARIOS[$index]);
            }
            #[test]
            fn price_at_flat_correlation_matches() {
                super::check_price(&super::SCENARIOS[$index]);
            }
        }
    )*};
}

scenario_tests! {
    ig_pool => 0,
    hy_pool => 1,
    zero_curve => 2,
    calendar_edges => 3,
    compound_roots => 4,
    ig_pool_rho_low => 5,
    ig_pool_rho_high => 6,
}

#[test]
fn scenario_list_matches_fixtures() {
    for sc in SCENARIOS {
        let path = root().join(format!("tests/fixtures/independent/{}.json", sc.name));
        let doc: Value =
            serde_json::from_str(&std::fs::read_to_string(&path).expect("fixture")).expect("json");
        let command = doc["metadata"]["command"]
            .as_str()
            .expect("metadata.command");
        let file = format!("tests/fixtures/scenarios/{}.csv ", sc.file);
        assert!(
            command.contains(&file),
            "{}: fixture made with `{command}`",
            sc.name
        );
        for opt in sc.options {
            assert!(
                command.contains(opt),
                "{}: fixture made with `{command}`, test passes {:?}",
                sc.name,
                sc.options
            );
        }
        assert!(
            command.ends_with(&format!("--correlation {}", sc.correlation)),
            "{}: fixture made with `{command}`",
            sc.name
        );
        let fraction: f64 = sc.correlation.parse().expect("fraction");
        let pct: f64 = sc.correlation_pct.parse().expect("percent");
        assert!((pct - 100.0 * fraction).abs() < 1e-12, "{}", sc.name);
    }
}
