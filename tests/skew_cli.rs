//! `surface` and `value` on the command line: the contract's JSON fields,
//! CSV shapes, exit statuses and located errors.

use crate::common::{skewbook, write_temp};

const KCX: &str = "market-samples/kcx-2026-06-18.csv";
const TRADES: &str = "market-samples/kcx-trades.csv";
const POOLS: &str = "market-samples/kcx-pools.csv";

fn json(out: &str) -> serde_json::Value {
    serde_json::from_str(out).expect("valid JSON")
}

#[test]
fn value_json_has_every_contract_field() {
    for mapping in ["none", "moneyness", "tlp", "probability"] {
        for interp in ["linear", "pchip"] {
            let (code, out, err) = skewbook(&[
                "value",
                TRADES,
                "--skew",
                KCX,
                "--pools",
                POOLS,
                "--mapping",
                mapping,
                "--interp",
                interp,
                "--format",
                "json",
            ]);
            assert_eq!(code, 0, "{mapping} {interp}: {err}");
            let v = json(&out);
            for k in [
                "date", "interp", "mapping", "names", "recovery", "note", "trades",
            ] {
                assert!(v.get(k).is_some(), "missing {k}");
            }
            assert_eq!(v["date"], "2026-06-18");
            assert_eq!(v["interp"], interp);
            assert_eq!(v["mapping"], mapping);
            assert_eq!(v["names"], 125);
            assert_eq!(v["note"].is_null(), mapping == "none");
            let trades = v["trades"].as_array().unwrap();
            assert_eq!(trades.len(), 22);
            assert_eq!(trades[0]["trade_id"], "K5-EQ-B");
            for t in trades {
                for k in [
                    "trade_id",
                    "pool",
                    "maturity",
                    "side",
                    "attach_pct",
                    "detach_pct",
                    "coupon_bp",
                    "notional",
                    "base_correlation_attach",
                    "base_correlation_detach",
                    "index_equivalent_attach_pct",
                    "index_equivalent_detach_pct",
                    "par_spread_bp",
                    "upfront_pct",
                    "expected_loss",
                    "pv",
                    "spread_01",
                    "correlation_01",
                    "recovery_01",
                    "jump_to_default",
                    "index_01",
                    "delta",
                    "flags",
                ] {
                    assert!(t.get(k).is_some(), "{}: missing {k}", t["trade_id"]);
                }
                assert!(t["pv"].is_f64(), "{}", t["trade_id"]);
                assert_eq!(
                    t["base_correlation_attach"].is_null(),
                    t["attach_pct"] == 0.0
                );
                assert_eq!(
                    t["base_correlation_detach"].is_null(),
                    t["detach_pct"] == 100.0
                );
                if t["pool"] == "index" || mapping == "none" {
                    assert_eq!(t["index_equivalent_attach_pct"], t["attach_pct"]);
                    assert_eq!(t["index_equivalent_detach_pct"], t["detach_pct"]);
                }
            }
        }
    }
}

#[test]
fn value_csv_has_one_row_per_trade() {
    let (code, out, _) = skewbook(&[
        "value", TRADES, "--skew", KCX, "--pools", POOLS, "--format", "csv",
    ]);
    assert_eq!(code, 0);
    assert_eq!(out.lines().count(), 23);
    assert!(out
        .lines()
        .next()
        .unwrap()
        .starts_with("date,interp,mapping,trade_id"));
}

#[test]
fn surface_json_follows_the_contract() {
    let (code, out, err) = skewbook(&["surface", KCX, "--step-pct", "0.5", "--format", "json"]);
    assert_eq!(code, 0, "{err}");
    let v = json(&out);
    let d = &v.as_array().unwrap()[0];
    assert_eq!(d["interp"], "linear");
    assert_eq!(d["step_pct"], 0.5);
    let ms = d["maturities"].as_array().unwrap();
    assert_eq!(ms.len(), 4);
    for m in ms {
        let grid = m["grid"].as_array().unwrap();
        assert_eq!(grid.len(), 201);
        assert!(grid[0]["base_correlation"].is_null());
        assert!(grid[200]["base_correlation"].is_null());
        assert!(grid[200]["tranchelet_loss"].is_null());
        assert_eq!(m["knots"].as_array().unwrap().len(), 5);
        for k in ["outside_unit", "increasing", "maturity_order"] {
            assert!(m["violations"][k].is_u64());
            assert_eq!(m["worst"][k].is_null(), m["violations"][k] == 0);
        }
    }
    // The steep 10-year skew: linear interpolation implies a negative
    // tranchelet loss just below the 30% knot (the finding the sample is for).
    let ten = &ms[3]["worst"]["outside_unit"];
    assert!(ten["tranchelet_loss"].as_f64().unwrap() < 0.0);
    assert_eq!(ten["k_to_pct"], 30.0);
    assert!(ms[0]["worst"]["maturity_order"].is_null());
}

#[test]
fn surface_csv_has_one_row_per_grid_point() {
    let (code, out, _) = skewbook(&[
        "surface",
        KCX,
        "--step-pct",
        "1",
        "--interp",
        "pchip",
        "--format",
        "csv",
    ]);
    assert_eq!(code, 0);
    assert_eq!(out.lines().count(), 1 + 4 * 101);
}

#[test]
fn surface_step_must_divide_100() {
    let (code, out, err) = skewbook(&["surface", KCX, "--step-pct", "0.3"]);
    assert_eq!(code, 2);
    assert!(out.is_empty());
    assert!(err.contains("--step-pct"), "{err}");
}

#[test]
fn a_date_without_tranches_prices_nothing_and_exits_1() {
    let snap = write_temp(
        "curve_only",
        "date,instrument,maturity,attach_pct,detach_pct,quote_kind,quote,coupon_bp\n\
         2026-06-18,index,2031-06-20,,,spread_bp,60,\n",
    );
    let (code, out, err) = skewbook(&[
        "value", TRADES, "--skew", &snap, "--pools", POOLS, "--format", "json",
    ]);
    assert_eq!(code, 1, "{err}");
    let v = json(&out);
    for t in v["trades"].as_array().unwrap() {
        assert_eq!(t["flags"], serde_json::json!(["no_skew"]));
        assert!(t["pv"].is_null() && t["delta"].is_null() && t["par_spread_bp"].is_null());
    }
}

#[test]
fn value_date_option_picks_a_date_of_a_history() {
    let (code, out, err) = skewbook(&[
        "value",
        TRADES,
        "--skew",
        "market-samples/hgx-history-2026-06.csv",
        "--pools",
        POOLS,
        "--date",
        "2026-06-10",
        "--format",
        "json",
    ]);
    assert_eq!(code, 0, "{err}");
    assert_eq!(json(&out)["date"], "2026-06-10");
    let (code, _, err) = skewbook(&[
        "value",
        TRADES,
        "--skew",
        KCX,
        "--pools",
        POOLS,
        "--date",
        "2026-06-10",
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("no quotes on that date"), "{err}");
}

#[test]
fn trades_that_do_not_fit_the_snapshot_are_located_errors() {
    let trades = write_temp(
        "bad_trades",
        "trade_id,pool,maturity,attach_pct,detach_pct,coupon_bp,notional,side\n\
         A,index,2026-06-18,0,3,500,1000000,buy\n\
         B,cedar,2031-06-20,3,7,100,1000000,sell\n",
    );
    let (code, out, err) = skewbook(&["value", &trades, "--skew", KCX, "--pools", POOLS]);
    assert_eq!(code, 2);
    assert!(out.is_empty());
    assert!(err.contains(&format!("{trades}:2:3")), "{err}");
    assert!(err.contains(&format!("{trades}:3:2")), "{err}");
}

#[test]
fn only_one_input_from_standard_input() {
    let (code, _, err) = skewbook(&["value", "-", "--skew", "-"]);
    assert_eq!(code, 2);
    assert!(err.contains("standard input"), "{err}");
}
