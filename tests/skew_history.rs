//! `skew-history` against `implied` and `surface` on dates picked at random
//! from the bundled history: the time series is the same numbers.

use crate::common::skewbook;
use rand::{Rng, SeedableRng};

const HISTORY: &str = "market-samples/hgx-history-2026-06.csv";

fn json(args: &[&str]) -> serde_json::Value {
    let (code, out, err) = skewbook(args);
    assert_eq!(code, 0, "{args:?}: {err}");
    serde_json::from_str(&out).expect("JSON")
}

#[test]
fn series_match_implied_and_surface_on_random_dates() {
    let series = json(&["skew-history", HISTORY, "--at", "5,10", "--format", "json"]);
    let obs = series.as_array().unwrap();
    let implied = json(&["implied", HISTORY, "--format", "json"]);
    let dates: Vec<&str> = implied
        .as_array()
        .unwrap()
        .iter()
        .map(|d| d["date"].as_str().unwrap())
        .collect();
    let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(20261202);
    for _ in 0..5 {
        let i = rng.random_range(0..dates.len());
        let date = dates[i];
        let day = &implied[i];
        let on = |series: &str| -> Vec<&serde_json::Value> {
            obs.iter()
                .filter(|o| o["date"] == date && o["series"] == series)
                .collect()
        };
        for t in day["tranches"].as_array().unwrap() {
            if t["detach_pct"].as_f64().unwrap() < 100.0 {
                let b = on("base")
                    .into_iter()
                    .find(|o| o["detach_pct"] == t["detach_pct"])
                    .expect("base observation");
                assert_eq!(b["value"], t["base_correlation"], "{date} {t}");
            }
            let roots = t["compound_correlation"].as_array().unwrap();
            for (r, o) in on("compound")
                .into_iter()
                .filter(|o| {
                    o["attach_pct"] == t["attach_pct"] && o["detach_pct"] == t["detach_pct"]
                })
                .enumerate()
            {
                assert_eq!(
                    o["value"],
                    roots.get(r).cloned().unwrap_or(serde_json::Value::Null)
                );
            }
        }
        let surface = json(&[
            "surface",
            HISTORY,
            "--date",
            date,
            "--step-pct",
            "1",
            "--format",
            "json",
        ]);
        let grid = surface[0]["maturities"][0]["grid"].as_array().unwrap();
        for o in on("surface") {
            let k = o["detach_pct"].as_f64().unwrap();
            let g = grid
                .iter()
                .find(|g| g["k_pct"].as_f64() == Some(k))
                .unwrap();
            assert!(
                (o["value"].as_f64().unwrap() - g["base_correlation"].as_f64().unwrap()).abs()
                    < 1e-15
            );
        }
        if i > 0 {
            let prev = dates[i - 1];
            for o in on("base") {
                let p = obs
                    .iter()
                    .find(|p| {
                        p["date"] == prev
                            && p["series"] == "base"
                            && p["detach_pct"] == o["detach_pct"]
                    })
                    .unwrap();
                let change = o["value"].as_f64().unwrap() - p["value"].as_f64().unwrap();
                assert!((o["change"].as_f64().unwrap() - change).abs() < 1e-15);
            }
        }
    }
}

#[test]
fn wide_csv_has_one_row_per_date() {
    let (code, out, _) = skewbook(&["skew-history", HISTORY, "--at", "5", "--format", "csv"]);
    assert_eq!(code, 0);
    assert_eq!(out.lines().count(), 1 + 22);
    let header = out.lines().next().unwrap();
    assert!(
        header.starts_with("date,2031-06-20 base 3%,chg 2031-06-20 base 3%"),
        "{header}"
    );
}

#[test]
fn at_outside_the_capital_structure_is_a_usage_error() {
    let (code, out, err) = skewbook(&["skew-history", HISTORY, "--at", "0.5,120"]);
    assert_eq!(code, 2);
    assert!(out.is_empty());
    assert!(err.contains("--at"), "{err}");
}
