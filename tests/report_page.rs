//! The HTML report without a browser: well-formed (an XML parser reads it),
//! self-contained (no script, no URL, no file), and carrying every number
//! that `implied` and `realworld` print in JSON, formatted as the page
//! documents (`skewbook::report::html`), in the row of its tranche.

use crate::common::skewbook;
use serde_json::Value;
use skewbook::flags::Flag;
use std::collections::HashMap;

const HGX: &str = "market-samples/hgx-2026-06-18.csv";
const SAMPLES: [&str; 3] = [
    "market-samples/hgx-2026-06-18.csv",
    "market-samples/lhy-2026-06-18.csv",
    "market-samples/kcx-2026-06-18.csv",
];

/// `skewbook report ARGS --out -`: the page (exit 0).
fn page(args: &[&str]) -> String {
    let mut all = vec!["report"];
    all.extend(args);
    all.extend(["--out", "-"]);
    let (code, out, err) = skewbook(&all);
    assert_eq!(code, 0, "{args:?}: {err}");
    out
}

fn json(args: &[&str]) -> Value {
    let mut all = args.to_vec();
    all.extend(["--format", "json"]);
    let (code, out, err) = skewbook(&all);
    assert_eq!(code, 0, "{args:?}: {err}");
    serde_json::from_str(&out).expect("JSON")
}

fn parse(page: &str) -> roxmltree::Document<'_> {
    let opts = roxmltree::ParsingOptions {
        allow_dtd: true,
        ..Default::default()
    };
    roxmltree::Document::parse_with_options(page, opts)
        .unwrap_or_else(|e| panic!("the page is not well-formed: {e}"))
}

/// Text of each element with an id, its descendants' text joined by " | ".
fn texts_by_id(doc: &roxmltree::Document) -> HashMap<String, String> {
    doc.descendants()
        .filter_map(|n| {
            let id = n.attribute("id")?;
            let text: Vec<&str> = n
                .descendants()
                .filter(|d| d.is_text())
                .filter_map(|d| d.text())
                .collect();
            Some((id.to_string(), text.join(" | ")))
        })
        .collect()
}

/// The page's rule for a number with `d` decimals (`-0.00` shown as `0.00`).
fn fixed(x: f64, d: usize) -> String {
    let s = format!("{x:.d$}");
    if s.starts_with('-') && s[1..].chars().all(|c| c == '0' || c == '.') {
        s[1..].to_string()
    } else {
        s
    }
}

fn f(v: &Value) -> f64 {
    v.as_f64()
        .unwrap_or_else(|| panic!("expected a number, found {v}"))
}

/// Whether `hay` holds `needle` as a whole number: not inside a longer
/// number, not after a minus sign it does not have.
fn has_number(hay: &str, needle: &str) -> bool {
    let bytes = hay.as_bytes();
    hay.match_indices(needle).any(|(i, _)| {
        let before = i.checked_sub(1).map(|j| bytes[j]);
        let after = bytes.get(i + needle.len()).copied();
        let glued_before = before.is_some_and(|b| b.is_ascii_digit() || b == b'.' || b == b'-');
        let glued_after = after.is_some_and(|b| b.is_ascii_digit() || b == b'e')
            || (after == Some(b'.')
                && bytes
                    .get(i + needle.len() + 1)
                    .is_some_and(|b| b.is_ascii_digit()));
        !glued_before && !glued_after
    })
}

#[test]
fn number_matching_respects_boundaries() {
    assert!(has_number("-18.6191 to 74.9759", "-18.6191"));
    assert!(!has_number("-18.6191 to 74.9759", "18.6191"));
    assert!(has_number("5.20, 82.96", "5.20"));
    assert!(!has_number("15.20", "5.20"));
    assert!(!has_number("5.201", "5.20"));
    assert!(!has_number("7.11e-15", "7.11"));
}

#[test]
fn page_is_well_formed_and_self_contained() {
    let p = page(&[
        HGX,
        "--history",
        "market-samples/hgx-history-2026-06.csv",
        "--defaults",
        "market-samples/hgx-default-rates.csv",
        "--at",
        "5,10",
    ]);
    assert!(p.starts_with("<!DOCTYPE html>"));
    let doc = parse(&p);
    assert!(doc.root_element().has_tag_name("html"));
    let lower = p.to_ascii_lowercase();
    for banned in [
        "http",
        "<script",
        "src=",
        "url(",
        "@import",
        "<link",
        "<iframe",
        "<object",
        "<embed",
        "<img",
        "javascript:",
    ] {
        assert!(!lower.contains(banned), "the page contains {banned:?}");
    }
    let ids: Vec<&str> = doc
        .descendants()
        .filter_map(|n| n.attribute("id"))
        .collect();
    let mut unique = ids.clone();
    unique.sort_unstable();
    unique.dedup();
    assert_eq!(unique.len(), ids.len(), "ids repeat");
    for n in doc.descendants().filter(|n| n.has_attribute("href")) {
        let href = n.attribute("href").unwrap_or("");
        let target = href
            .strip_prefix('#')
            .unwrap_or_else(|| panic!("a link leaves the page: {href}"));
        assert!(ids.contains(&target), "a link to a missing id: {href}");
    }
    // Every chart is inline: skew, 4 quotes, exceedance, history.
    let svgs = doc.descendants().filter(|n| n.has_tag_name("svg")).count();
    assert_eq!(svgs, 7);
    for section in [
        "index",
        "implied",
        "quotes",
        "surface",
        "realworld",
        "history",
        "flags",
        "assumptions",
        "caution",
    ] {
        assert!(ids.contains(&section), "section {section} missing");
    }
    // The caution, escaped and read back, in full: at the top and at the end.
    let caution = doc
        .descendants()
        .filter(|n| n.is_element() && n.text() == Some(skewbook::CAUTION))
        .count();
    assert_eq!(caution, 2);
}

/// Every number of `implied --format json` for each sample is on the page,
/// in its row, as the page formats it; so are the flags and the notes.
#[test]
fn page_carries_every_number_of_the_implied_json() {
    for sample in SAMPLES {
        let implied = json(&["implied", sample]);
        let p = page(&[sample]);
        let doc = parse(&p);
        let rows = texts_by_id(&doc);
        let all_text: String = doc
            .descendants()
            .filter_map(|n| n.text())
            .collect::<Vec<_>>()
            .join(" | ");
        let d = &implied[0];
        // A field added to the JSON must be added to the page (and here).
        let keys = |v: &Value| -> Vec<String> {
            let mut k: Vec<String> = v.as_object().expect("object").keys().cloned().collect();
            k.sort();
            k
        };
        assert_eq!(
            keys(d),
            ["date", "index", "index_check", "recovery", "tranches"]
        );
        for c in d["index_check"].as_array().expect("index_check") {
            let m = c["maturity"].as_str().expect("maturity");
            let row = rows
                .get(&format!("index-check-{m}"))
                .unwrap_or_else(|| panic!("{sample}: no index check row {m}"));
            for w in [fixed(f(&c["gap_bp"]), 4), fixed(f(&c["tolerance_bp"]), 4)] {
                assert!(
                    has_number(row, &w),
                    "{sample} index check {m}: {w} not in {row}"
                );
            }
        }
        for p in d["index"].as_array().expect("index") {
            assert_eq!(
                keys(p),
                [
                    "annuity",
                    "coupon_bp",
                    "default_probability",
                    "hazard",
                    "maturity",
                    "quote",
                    "quote_kind",
                    "reprice_error",
                    "repriced_quote",
                    "survival"
                ]
            );
        }
        for t in d["tranches"].as_array().expect("tranches") {
            assert_eq!(
                keys(t),
                [
                    "attach_pct",
                    "base_correlation",
                    "base_note",
                    "base_reprice_error",
                    "check_note",
                    "compound_correlation",
                    "compound_note",
                    "compound_range",
                    "coupon_bp",
                    "detach_pct",
                    "expected_loss_pct",
                    "flags",
                    "maturity",
                    "quote",
                    "quote_kind"
                ]
            );
        }
        assert!(all_text.contains(&format!(
            "recovery {}%",
            fixed(f(&d["recovery"]) * 100.0, 2)
        )));
        for pillar in d["index"].as_array().expect("index") {
            let m = pillar["maturity"].as_str().expect("maturity");
            let row = rows
                .get(&format!("index-{m}"))
                .unwrap_or_else(|| panic!("{sample}: no row for pillar {m}"));
            let mut want = vec![
                fixed(f(&pillar["quote"]), 4),
                fixed(f(&pillar["hazard"]) * 100.0, 4),
                fixed(f(&pillar["survival"]), 6),
                fixed(f(&pillar["default_probability"]) * 100.0, 4),
                fixed(f(&pillar["annuity"]), 4),
                fixed(f(&pillar["repriced_quote"]), 4),
                format!("{:.2e}", f(&pillar["reprice_error"])),
            ];
            if let Some(c) = pillar["coupon_bp"].as_f64() {
                want.push(format!("{c}"));
            }
            for w in want {
                assert!(has_number(row, &w), "{sample} pillar {m}: {w} not in {row}");
            }
        }
        for t in d["tranches"].as_array().expect("tranches") {
            let (a, dd) = (f(&t["attach_pct"]), f(&t["detach_pct"]));
            let id = format!("tranche-{}-{a}-{dd}", t["maturity"].as_str().unwrap_or(""));
            let row = rows
                .get(&id)
                .unwrap_or_else(|| panic!("{sample}: no row {id}"));
            assert!(
                row.starts_with(&format!("{a}-{dd}%")),
                "{sample} {id}: {row}"
            );
            let mut want = vec![fixed(f(&t["quote"]), 4)];
            if let Some(c) = t["coupon_bp"].as_f64() {
                want.push(format!("{c}"));
            }
            for r in t["compound_correlation"].as_array().expect("roots") {
                want.push(fixed(f(r) * 100.0, 2));
            }
            if let Some(range) = t["compound_range"].as_array() {
                want.extend(range.iter().map(|x| fixed(f(x), 4)));
            }
            if let Some(b) = t["base_correlation"].as_f64() {
                want.push(fixed(b * 100.0, 2));
            }
            if let Some(e) = t["expected_loss_pct"].as_f64() {
                want.push(fixed(e, 4));
            }
            if let Some(e) = t["base_reprice_error"].as_f64() {
                want.push(format!("{e:.2e}"));
            }
            for w in want {
                assert!(has_number(row, &w), "{sample} {id}: {w} not in {row}");
            }
            let unit = if t["quote_kind"] == "spread_bp" {
                "bp"
            } else {
                "upfront"
            };
            assert!(row.contains(unit), "{sample} {id}: {unit} not in {row}");
            for flag in t["flags"].as_array().expect("flags") {
                let name = flag.as_str().expect("flag name");
                assert!(
                    row.contains(name),
                    "{sample} {id}: flag {name} not in {row}"
                );
                let meaning = Flag::ALL
                    .iter()
                    .find(|f| f.name() == name)
                    .map(|f| f.meaning())
                    .expect("a known flag");
                let explained =
                    rows.contains_key(&format!("flag-{name}")) && all_text.contains(&meaning[1..]);
                assert!(explained, "{sample}: flag {name} not explained");
            }
            for field in ["compound_note", "base_note", "check_note"] {
                if let Some(note) = t[field].as_str() {
                    assert!(
                        all_text.contains(note),
                        "{sample} {id}: {field} {note:?} missing"
                    );
                }
            }
        }
    }
}

/// The real-world estimates on the page are `realworld`'s.
#[test]
fn page_carries_the_real_world_estimates() {
    for (history, n) in [
        ("market-samples/hgx-default-rates.csv", 2),
        ("market-samples/lhy-default-counts.csv", 4),
    ] {
        let rw = json(&["realworld", history]);
        let p = page(&["market-samples/lhy-2026-06-18.csv", "--defaults", history]);
        let rows = texts_by_id(&parse(&p));
        let methods = rw["methods"].as_array().expect("methods");
        assert_eq!(methods.len(), n);
        for m in methods {
            let name = m["method"].as_str().expect("method");
            let row = rows
                .get(&format!("estimate-{name}"))
                .unwrap_or_else(|| panic!("no row for {name}"));
            let mut want = Vec::new();
            if let Some(pd) = m["pd"].as_f64() {
                want.push(fixed(pd * 100.0, 4));
            }
            if let Some(rho) = m["rho"].as_f64() {
                want.push(fixed(rho * 100.0, 2));
            }
            for (key, d) in [("pd_ci", 4), ("rho_ci", 2)] {
                if let Some(ci) = m[key].as_array() {
                    want.extend(ci.iter().map(|x| fixed(f(x) * 100.0, d)));
                }
            }
            for w in want {
                assert!(has_number(row, &w), "{history} {name}: {w} not in {row}");
            }
        }
    }
}

#[test]
fn report_and_chart_refuse_bad_options() {
    let dir = std::env::temp_dir().join(format!("skewbook-bad-{}", std::process::id()));
    let dir = dir.to_string_lossy().into_owned();
    for (args, says) in [
        (
            vec!["chart", HGX, "--out", dir.as_str(), "--at", "0"],
            "--at: expected a percentage in (0, 100), found 0",
        ),
        (
            vec!["report", HGX, "--out", "-", "--step-pct", "0.3"],
            "--step-pct: expected a step in percent that divides 100",
        ),
        (
            vec!["report", HGX, "--out", "-", "--date", "2020-01-02"],
            "--date 2020-01-02",
        ),
        (
            vec!["report", "-", "--history", "-", "--out", "-"],
            "standard input can be read once",
        ),
        (
            vec![
                "report",
                HGX,
                "--out",
                "-",
                "--defaults",
                "market-samples/hgx-default-rates.csv",
                "--estimator",
                "binomial_ml",
            ],
            "--estimator binomial_ml",
        ),
        (
            vec!["chart", HGX, "--out", "/dev/null/charts"],
            "/dev/null/charts: cannot create the directory",
        ),
        (
            vec!["report", HGX, "--out", "/dev/null/page.html"],
            "/dev/null/page.html: cannot write",
        ),
    ] {
        let (code, out, err) = skewbook(&args);
        assert_eq!(code, 2, "{args:?}: {err}");
        assert!(out.is_empty(), "{args:?} printed {out}");
        assert!(err.contains(says), "{args:?}: {err}");
    }
}

#[test]
fn chart_and_report_options_name_their_units() {
    for command in ["chart", "report"] {
        let (code, help, _) = skewbook(&[command, "--help"]);
        assert_eq!(code, 0);
        for option in ["--at", "--step-pct", "--recovery", "--rate"] {
            let start = help
                .find(&format!("      {option} "))
                .unwrap_or_else(|| panic!("{command} {option} missing from help"));
            let rest = &help[start + 6..];
            let block = &rest[..rest.find("\n      --").unwrap_or(rest.len())];
            assert!(block.contains("percent"), "{command} {option}: {block}");
        }
    }
}

/// Text from the user (here a file name with markup characters) is escaped:
/// the page still parses and shows the name as it is.
#[test]
fn text_from_the_user_is_escaped() {
    let text =
        std::fs::read_to_string(format!("{}/{HGX}", env!("CARGO_MANIFEST_DIR"))).expect("hgx");
    let path = crate::common::write_temp("odd <name> & \"quotes\" 'too'", text);
    let p = page(&[path.as_str()]);
    let doc = parse(&p);
    let shown = doc
        .descendants()
        .filter_map(|n| n.text())
        .any(|t| t.contains(&path));
    assert!(shown, "the file name is not shown as it is");
    assert!(!p.contains("<name>"));
}
