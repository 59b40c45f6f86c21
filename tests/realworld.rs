//! Real-world calibration against outside sources and the two commands.

use serde_json::Value;
use skewbook::input::history::History;
use skewbook::realworld::estimators::{
    binomial_log_likelihood, binomial_ml, joint_default_moments, moment_matching, probit_moments,
    VarianceDivisor,
};

/// tests/fixtures/realworld_estimators.json: an independent implementation
/// (tests/reference/realworld_fixtures.py: numpy closed form, mpmath 30-digit
/// moment equations, scipy quad + Nelder-Mead/BFGS for the binomial ML) on
/// invented histories that are not in market-samples/. Acceptance: PD to
/// 1e-6, rho to 1e-5, binomial ML to 1e-4.
#[test]
fn estimators_agree_with_independent_python_implementation() {
    let fx: Value =
        serde_json::from_str(include_str!("fixtures/realworld_estimators.json")).unwrap();
    let mut checked = 0;
    for (name, h) in fx["histories"].as_object().unwrap() {
        let history = if let Some(c) = h.get("counts") {
            let c: Vec<(u64, u64)> = c
                .as_array()
                .unwrap()
                .iter()
                .map(|p| (p[0].as_u64().unwrap(), p[1].as_u64().unwrap()))
                .collect();
            History::from_counts(&c).unwrap()
        } else {
            let r: Vec<f64> = h["rates_pct"]
                .as_array()
                .unwrap()
                .iter()
                .map(|x| x.as_f64().unwrap() / 100.0)
                .collect();
            History::from_rates(&r).unwrap()
        };
        for (method, want) in h["estimates"].as_object().unwrap() {
            let e = match method.as_str() {
                "probit_moments" => probit_moments(&history, VarianceDivisor::T),
                "moment_matching" => moment_matching(&history, VarianceDivisor::T),
                "joint_default_moments" => joint_default_moments(&history),
                "binomial_ml" => binomial_ml(&history),
                other => panic!("unknown method {other}"),
            };
            let (tol_pd, tol_rho) = if method == "binomial_ml" {
                (1e-4, 1e-4)
            } else {
                (1e-6, 1e-5)
            };
            let (pd, rho) = (e.pd.unwrap(), e.rho.unwrap());
            let (wpd, wrho) = (want["pd"].as_f64().unwrap(), want["rho"].as_f64().unwrap());
            assert!(
                (pd - wpd).abs() < tol_pd,
                "{name} {method}: pd {pd} vs {wpd}"
            );
            assert!(
                (rho - wrho).abs() < tol_rho,
                "{name} {method}: rho {rho} vs {wrho}"
            );
            // Tighter than acceptance where the methods allow it.
            if method != "binomial_ml" {
                assert!(
                    (pd - wpd).abs() < 1e-9 && (rho - wrho).abs() < 1e-8,
                    "{name} {method}"
                );
            } else {
                assert!(
                    (pd - wpd).abs() < 1e-6 && (rho - wrho).abs() < 1e-5,
                    "{name} {method}"
                );
                let ll = binomial_log_likelihood(&history.counts().unwrap(), pd, rho);
                let wll = want["log_likelihood"].as_f64().unwrap();
                assert!(
                    (ll - wll).abs() < 1e-7,
                    "{name}: log-likelihood {ll} vs {wll}"
                );
            }
            if let Some(se) = want.get("rho_se") {
                assert!((e.rho_se.unwrap() - se.as_f64().unwrap()).abs() < 1e-9);
            }
            checked += 1;
        }
    }
    assert_eq!(checked, 8);
}

/// No cell or JSON value is NaN or infinite.
fn no_nan(out: &str) -> bool {
    !out.split(|c: char| c.is_whitespace() || c == ',' || c == '"' || c == ':' || c == '[')
        .any(|tok| ["NaN", "nan", "inf", "-inf", "Infinity", "-Infinity"].contains(&tok))
}

use crate::common::{skewbook, write_temp};

#[test]
fn realworld_runs_on_bundled_histories_in_every_format() {
    for file in [
        "market-samples/hgx-default-rates.csv",
        "market-samples/lhy-default-counts.csv",
    ] {
        for format in ["table", "csv", "json"] {
            let (code, out, err) = skewbook(&["realworld", file, "--format", format]);
            assert_eq!(code, 0, "{file} {format}: {err}");
            assert!(no_nan(&out), "{out}");
            if format == "table" {
                for line in out.lines() {
                    assert!(line.chars().count() <= 80, "over 80 columns: {line}");
                }
            }
            if format == "json" {
                let v: Value = serde_json::from_str(&out).unwrap();
                let methods = v["methods"].as_array().unwrap();
                for m in methods {
                    for key in [
                        "method", "pd", "rho", "pd_se", "rho_se", "pd_ci", "rho_ci", "notes",
                    ] {
                        assert!(m.get(key).is_some(), "{key} missing");
                    }
                }
            }
        }
    }
}

#[test]
fn zero_default_years_stated_for_probit_numbers_for_the_others() {
    let (code, out, _) = skewbook(&[
        "realworld",
        "market-samples/lhy-default-counts.csv",
        "--format",
        "json",
    ]);
    assert_eq!(code, 0);
    let v: Value = serde_json::from_str(&out).unwrap();
    let zeros: Vec<&str> = v["zero_default_periods"]
        .as_array()
        .unwrap()
        .iter()
        .map(|x| x.as_str().unwrap())
        .collect();
    assert!(!zeros.is_empty());
    for m in v["methods"].as_array().unwrap() {
        if m["method"] == "probit_moments" {
            assert!(m["pd"].is_null() && m["rho"].is_null());
            let note = m["notes"][0].as_str().unwrap();
            for z in &zeros {
                assert!(note.contains(z), "{note}");
            }
        } else {
            assert!(m["pd"].as_f64().unwrap() > 0.0 && m["rho"].as_f64().unwrap() > 0.0);
            assert_eq!(
                m["zero_default_periods"].as_u64().unwrap(),
                zeros.len() as u64
            );
        }
    }
}

#[test]
fn malformed_history_exits_2_with_line_and_column() {
    let path = write_temp(
        "bad-history",
        "period,defaults,obligors\n2001,3,100\n2002,7,abc\n2003,1,50\n",
    );
    let p = path.as_str();
    let (code, out, err) = skewbook(&["realworld", p]);
    assert_eq!(code, 2);
    assert!(out.is_empty());
    assert_eq!(
        err.trim(),
        format!("error: {p}:3:3: column \"obligors\": expected a whole number (0, 1, 2, ...), found \"abc\"")
    );
}

#[test]
fn quantile_pair_from_the_command_line() {
    // reference-values.md [hp]: median 0.00657105077249435 and 99.9 %
    // quantile 0.0903258313260653 give PD 1 %, rho 0.12 (typed in percent).
    let (code, out, err) = skewbook(&[
        "realworld",
        "market-samples/hgx-default-rates.csv",
        "--quantiles",
        "50:0.657105077249435,99.9:9.03258313260653",
        "--format",
        "json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: Value = serde_json::from_str(&out).unwrap();
    let m = v["methods"]
        .as_array()
        .unwrap()
        .iter()
        .find(|m| m["method"] == "quantile_pair")
        .unwrap();
    assert!((m["pd"].as_f64().unwrap() - 0.01).abs() < 1e-9);
    assert!((m["rho"].as_f64().unwrap() - 0.12).abs() < 1e-9);
    assert!(m["pd_se"].is_null());
    let (code, _, err) = skewbook(&[
        "realworld",
        "market-samples/hgx-default-rates.csv",
        "--quantiles",
        "50:10,99.9:5",
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("no Vasicek distribution"), "{err}");
}

#[test]
fn loss_command_matches_published_figures() {
    // Hull (2009) worked example: PD 2 %, rho 0.1 -> 99.9 % worst-case
    // default rate 12.8 %; Basel II Annex 5: PD 2 %, LGD 45 % -> RW 114.86 %.
    let (code, out, err) = skewbook(&[
        "loss", "--pd", "2", "--rho", "10", "--lgd", "45", "--levels", "99.9", "--format", "json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: Value = serde_json::from_str(&out).unwrap();
    let l = &v["levels"][0];
    assert!((l["default_rate_quantile"].as_f64().unwrap() - 0.12823710729942).abs() < 1e-10);
    assert!((l["loss_quantile"].as_f64().unwrap() - 0.45 * 0.12823710729942).abs() < 1e-10);
    assert!((v["irb"]["risk_weight"].as_f64().unwrap() - 1.1486).abs() < 1e-4);
    for format in ["table", "csv"] {
        let (code, out, _) = skewbook(&["loss", "--pd", "1", "--rho", "12", "--format", format]);
        assert_eq!(code, 0);
        assert!(no_nan(&out));
        for line in out.lines().filter(|_| format == "table") {
            assert!(line.chars().count() <= 80, "{line}");
        }
    }
    let (code, _, err) = skewbook(&["loss", "--pd", "1", "--rho", "150"]);
    assert_eq!(code, 2);
    assert!(err.contains("found 150"), "{err}");
}

/// `--against`: the risk-neutral one-year PD equals 1 - exp(-h1) with h1
/// the first hazard segment that `curve` prints (its first knot is past one
/// year), the implied correlations are `implied`'s, and each ratio is the
/// quotient of the two sides.
#[test]
fn against_a_snapshot_sets_the_market_beside_the_estimates() {
    let snap = "market-samples/hgx-2026-06-18.csv";
    let (code, out, err) = skewbook(&[
        "realworld",
        "market-samples/hgx-default-rates.csv",
        "--against",
        snap,
        "--format",
        "json",
    ]);
    assert_eq!(code, 0, "{err}");
    let v: Value = serde_json::from_str(&out).unwrap();
    let rn = &v["risk_neutral"];
    let (_, curve, _) = skewbook(&["curve", snap, "--format", "json"]);
    let curve: Value = serde_json::from_str(&curve).unwrap();
    let h1 = curve[0]["index"][0]["hazard"].as_f64().unwrap();
    let pd1 = rn["pd_one_year"].as_f64().unwrap();
    assert!((pd1 - (1.0 - (-h1).exp())).abs() < 1e-15, "{pd1}");
    let (_, implied, _) = skewbook(&["implied", snap, "--format", "json"]);
    let implied: Value = serde_json::from_str(&implied).unwrap();
    let tranches = implied[0]["tranches"].as_array().unwrap();
    for (i, t) in tranches.iter().enumerate() {
        assert_eq!(rn["tranches"][i]["base_correlation"], t["base_correlation"]);
    }
    for r in rn["ratios"].as_array().unwrap() {
        let m = v["methods"]
            .as_array()
            .unwrap()
            .iter()
            .find(|m| m["method"] == r["method"])
            .unwrap();
        let pd = m["pd"].as_f64().unwrap();
        let rho = m["rho"].as_f64().unwrap();
        assert!((r["pd_ratio"].as_f64().unwrap() - pd1 / pd).abs() < 1e-12);
        let b0 = tranches[0]["base_correlation"].as_f64().unwrap();
        assert!((r["base_correlation_ratio"][0].as_f64().unwrap() - b0 / rho).abs() < 1e-12);
    }
    assert!(rn["reading"].as_str().unwrap().contains("risk"));
    for format in ["table", "csv"] {
        let (code, out, _) = skewbook(&[
            "realworld",
            "market-samples/lhy-default-counts.csv",
            "--against",
            "market-samples/lhy-2026-06-18.csv",
            "--format",
            format,
        ]);
        assert_eq!(code, 0);
        assert!(no_nan(&out) && out.contains("1.") && out.to_lowercase().contains("ratio"));
    }
}

/// Usage errors exit 2 and say what was expected: a repeated level, a
/// Basel maturity outside its one-to-five-year floor and cap (Basel II
/// para. 320, from memory), a level outside (0, 100) percent.
#[test]
fn loss_rejects_levels_and_maturities_it_cannot_honour() {
    for args in [
        vec!["loss", "--pd", "2", "--rho", "10", "--levels", "99,99"],
        vec!["loss", "--pd", "2", "--rho", "10", "--maturity", "1e308"],
        vec!["loss", "--pd", "2", "--rho", "10", "--maturity", "0.5"],
        vec!["loss", "--pd", "2", "--rho", "10", "--levels", "150"],
    ] {
        let (code, out, err) = skewbook(&args);
        assert_eq!(code, 2, "{args:?}: {out}");
        assert!(
            err.starts_with("error: ") && err.contains("expected"),
            "{err}"
        );
    }
}

/// Single-obligor cohorts: the binomial mixture's likelihood does not
/// depend on rho (each period is one Bernoulli draw), so binomial_ml gives
/// no rho, never the point where the optimiser happened to stop, and its PD
/// is the default frequency 2/3 (the Bernoulli maximum likelihood).
#[test]
fn binomial_ml_gives_no_rho_where_the_likelihood_is_flat_in_it() {
    let path = write_temp(
        "single-obligors",
        "period,defaults,obligors\n2001,1,1\n2002,0,1\n2003,1,1\n",
    );
    let (code, out, _) = skewbook(&["realworld", &path, "--format", "json"]);
    assert_eq!(code, 0);
    let v: Value = serde_json::from_str(&out).unwrap();
    let m = v["methods"]
        .as_array()
        .unwrap()
        .iter()
        .find(|m| m["method"] == "binomial_ml")
        .unwrap();
    assert!(m["rho"].is_null(), "{m}");
    assert!((m["pd"].as_f64().unwrap() - 2.0 / 3.0).abs() < 1e-6, "{m}");
    assert!(m["notes"].to_string().contains("no rho estimate"), "{m}");
}
