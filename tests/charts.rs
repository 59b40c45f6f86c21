//! The charts' data against `implied` and `surface` on dates picked at
//! random (seeded) from the bundled history; the drawn SVG against its
//! data; the picture of "no root"; the skew history across a broken chain.

use crate::common::{json_of, number, of_date, repo, skewbook, write_temp};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde_json::Value;
use skewbook::chart::{Charts, Inputs, SKEW_INTERPOLATIONS};
use skewbook::curve::MarketOptions;
use skewbook::input::snapshot::{parse_snapshot, read_snapshot};
use skewbook::market::Snapshot;
use skewbook::math::interp::Interp;

const HISTORY: &str = "market-samples/hgx-history-2026-06.csv";
const HGX: &str = "market-samples/hgx-2026-06-18.csv";

fn inputs<'a>(
    snapshot: &'a Snapshot,
    options: &'a MarketOptions,
    date: Option<chrono::NaiveDate>,
    history: Option<&'a Snapshot>,
    at: &'a [f64],
) -> Inputs<'a> {
    Inputs {
        snapshot,
        options,
        date,
        history,
        defaults: None,
        estimator: None,
        at,
        step: 0.005,
        history_interp: Interp::Linear,
        model: skewbook::loss::PoolModel::LargePool,
    }
}

/// A skew chart's knots are the base correlations `implied` printed for
/// its maturity (`tranches`: the JSON tranches of date `ds`), in order.
pub(crate) fn knots_are_the_base_correlations(
    c: &skewbook::chart::skew::SkewChart,
    tranches: &[Value],
    ds: &str,
) {
    let m = c.maturity.to_string();
    let want: Vec<(f64, f64)> = tranches
        .iter()
        .filter(|t| t["maturity"] == m.as_str() && !t["base_correlation"].is_null())
        .map(|t| {
            (
                number(&t["detach_pct"]) / 100.0,
                number(&t["base_correlation"]),
            )
        })
        .collect();
    assert_eq!(c.knots.len(), want.len(), "{ds} {m}");
    for (k, (d, r)) in c.knots.iter().zip(&want) {
        assert!((k.detach - d).abs() < 1e-12 && (k.rho - r).abs() < 1e-15);
    }
}

/// Six dates of the history drawn with a fixed seed; on each, every chart's
/// data equals what `implied` and `surface` print (JSON numbers round-trip
/// exactly, so the tolerances are for rounding only).
#[test]
fn chart_data_matches_implied_and_surface_on_random_dates() {
    let snapshot = read_snapshot(&repo(HISTORY)).expect("history");
    let options = MarketOptions::default();
    let implied = json_of(&["implied", HISTORY]);
    let surfaces: Vec<(Interp, Value)> = SKEW_INTERPOLATIONS
        .iter()
        .map(|&i| (i, json_of(&["surface", HISTORY, "--interp", i.name()])))
        .collect();
    let at = [0.05, 0.10];
    let history = Charts::build(&inputs(&snapshot, &options, None, Some(&snapshot), &at))
        .expect("history charts");
    assert_eq!(history.history.len(), 1);
    let mut rng = ChaCha8Rng::seed_from_u64(13);
    let mut picked = Vec::new();
    while picked.len() < 6 {
        let i = rng.random_range(0..snapshot.dates.len());
        if !picked.contains(&i) {
            picked.push(i);
        }
    }
    for i in picked {
        let date = snapshot.dates[i].date;
        let ds = date.to_string();
        let charts = Charts::build(&inputs(&snapshot, &options, Some(date), None, &[]))
            .expect("charts of the date");
        let jd = of_date(&implied, &ds);
        let tranches = jd["tranches"].as_array().expect("tranches");

        // The skew: knots are the solved base correlations; curves are the surface.
        assert!(!charts.skews.is_empty());
        for c in &charts.skews {
            let m = c.maturity.to_string();
            knots_are_the_base_correlations(c, tranches, &ds);
            for (curve, (interp, surface)) in c.curves.iter().zip(&surfaces) {
                assert_eq!(curve.interp, *interp);
                let sm = of_date(surface, &ds)["maturities"]
                    .as_array()
                    .and_then(|a| a.iter().find(|x| x["maturity"] == m.as_str()))
                    .expect("surface maturity");
                let mut matched = 0;
                for g in sm["grid"].as_array().expect("grid") {
                    let k = number(&g["k_pct"]) / 100.0;
                    if g["base_correlation"].is_null() || k > c.k_max {
                        continue;
                    }
                    let p = curve
                        .points
                        .iter()
                        .find(|p| (p.0 - k).abs() < 1e-12)
                        .unwrap_or_else(|| panic!("{ds} {m} {interp}: no point at {k}"));
                    assert!((p.1 - number(&g["base_correlation"])).abs() < 1e-14);
                    matched += 1;
                }
                assert!(
                    matched >= 30,
                    "{ds} {m}: only {matched} grid points compared"
                );
            }
        }

        // Model quote against correlation: the roots are `implied`'s, and the
        // curve meets the quote there (what a root is).
        for t in tranches
            .iter()
            .filter(|t| t["detach_pct"] != 100.0 || t["attach_pct"] != 0.0)
        {
            let c = charts
                .quotes
                .iter()
                .find(|c| {
                    c.maturity.to_string() == t["maturity"].as_str().unwrap_or("")
                        && (c.attach * 100.0 - number(&t["attach_pct"])).abs() < 1e-9
                        && (c.detach * 100.0 - number(&t["detach_pct"])).abs() < 1e-9
                })
                .expect("a curve per tranche");
            assert!((c.quote - number(&t["quote"])).abs() < 1e-12);
            let roots: Vec<f64> = t["compound_correlation"]
                .as_array()
                .expect("roots")
                .iter()
                .map(number)
                .collect();
            assert_eq!(c.roots.len(), roots.len(), "{ds}");
            for (got, want) in c.roots.iter().zip(&roots) {
                // serde_json may read a double one unit in the last place off.
                assert!((got - want).abs() < 1e-15, "{ds}: {got} vs {want}");
            }
            for r in &c.roots {
                let at_root = c
                    .points
                    .iter()
                    .find(|p| p.0 == *r)
                    .and_then(|p| p.1)
                    .expect("the curve passes through each root");
                assert!(
                    (at_root - c.quote).abs() < 1e-6,
                    "{ds}: {at_root} vs {}",
                    c.quote
                );
            }
        }

        // Exceedance: the tranchelet losses of `surface`, per interpolation.
        assert_eq!(charts.exceedance.len(), charts.skews.len());
        for chart in &charts.exceedance {
            let m = chart.maturity.to_string();
            for (curve, (interp, surface)) in chart.implied.iter().zip(&surfaces) {
                assert_eq!(curve.interp, *interp);
                let sm = of_date(surface, &ds)["maturities"]
                    .as_array()
                    .and_then(|a| a.iter().find(|x| x["maturity"] == m.as_str()))
                    .expect("surface maturity");
                assert!((chart.protection_end_pd - number(&sm["protection_end_pd"])).abs() < 1e-15);
                let grid = sm["grid"].as_array().expect("grid");
                assert_eq!(curve.tranchelets.len() + 1, grid.len());
                for (t, g) in curve.tranchelets.iter().zip(grid) {
                    assert!((t.k_from - number(&g["k_pct"]) / 100.0).abs() < 1e-12);
                    assert!((t.loss - number(&g["tranchelet_loss"])).abs() < 1e-15);
                }
            }
        }

        // The skew through time on this date: quoted detachments from
        // `implied`, the chosen ones from `surface` (linear) at 5% and 10%.
        let h = &history.history[0];
        let m = h.maturity.to_string();
        let linear = &surfaces
            .iter()
            .find(|(i, _)| *i == Interp::Linear)
            .expect("linear")
            .1;
        let sm = of_date(linear, &ds)["maturities"]
            .as_array()
            .and_then(|a| a.iter().find(|x| x["maturity"] == m.as_str()))
            .expect("surface maturity");
        for s in &h.series {
            let p = s
                .points
                .iter()
                .find(|p| p.date == date)
                .expect("a point per date");
            let want = if s.quoted {
                tranches
                    .iter()
                    .find(|t| (number(&t["detach_pct"]) / 100.0 - s.detach).abs() < 1e-12)
                    .map(|t| number(&t["base_correlation"]))
            } else {
                sm["grid"]
                    .as_array()
                    .and_then(|g| {
                        g.iter()
                            .find(|g| (number(&g["k_pct"]) / 100.0 - s.detach).abs() < 1e-12)
                    })
                    .map(|g| number(&g["base_correlation"]))
            };
            let (got, want) = (p.rho.expect("a value"), want.expect("a reference"));
            assert!(
                (got - want).abs() < 1e-14,
                "{ds} {}: {got} vs {want}",
                s.detach
            );
        }
    }
}

/// The circles of one marker kind in an SVG: (cx, cy), legend rows left out.
fn discs(svg: &str, r: &str, fill: &str) -> Vec<(f64, f64)> {
    let doc = roxmltree::Document::parse(svg).expect("SVG parses as XML");
    doc.descendants()
        .filter(|n| n.has_tag_name("circle"))
        .filter(|n| n.attribute("r") == Some(r) && n.attribute("fill") == Some(fill))
        .map(|n| {
            let num = |a: &str| {
                n.attribute(a)
                    .and_then(|v| v.parse().ok())
                    .unwrap_or(f64::NAN)
            };
            (num("cx"), num("cy"))
        })
        .filter(|&(_, y)| y < skewbook::chart::PLOT_HEIGHT as f64)
        .collect()
}

/// The drawn knots sit where the data put them: their pixels are an affine
/// image of (detachment, correlation), to a pixel of rounding.
#[test]
fn skew_svg_marks_every_knot_where_it_is() {
    let snapshot = read_snapshot(&repo("market-samples/kcx-2026-06-18.csv")).expect("kcx");
    let options = MarketOptions::default();
    let charts = Charts::build(&inputs(&snapshot, &options, None, None, &[])).expect("charts");
    assert_eq!(charts.skews.len(), 4);
    for c in &charts.skews {
        let svg = c.svg().expect("svg");
        let mut px = discs(&svg, "5", "#000000");
        px.sort_by(|a, b| a.0.total_cmp(&b.0));
        assert_eq!(px.len(), c.knots.len(), "{}", c.maturity);
        let (k0, kn) = (c.knots[0], c.knots[c.knots.len() - 1]);
        let (p0, pn) = (px[0], px[px.len() - 1]);
        for (k, p) in c.knots.iter().zip(&px) {
            let x = p0.0 + (pn.0 - p0.0) * (k.detach - k0.detach) / (kn.detach - k0.detach);
            let y = p0.1 + (pn.1 - p0.1) * (k.rho - k0.rho) / (kn.rho - k0.rho);
            assert!(
                (x - p.0).abs() <= 1.5 && (y - p.1).abs() <= 1.5,
                "{k:?} at {p:?}"
            );
        }
    }
}

/// HGX with the 3-7% quote raised above the model's highest spread: no
/// compound root, the chart's curve stays below the quote everywhere, the
/// chain breaks there, and the commands still write their output (exit 1).
#[test]
fn no_root_is_a_curve_that_never_meets_the_quote() {
    let text = std::fs::read_to_string(repo(HGX))
        .expect("hgx")
        .replace(",3,7,spread_bp,241.1,", ",3,7,spread_bp,450,");
    assert!(
        text.contains(",3,7,spread_bp,450,"),
        "the sample's 3-7% row changed"
    );
    let path = write_temp("no-root", &text);
    let snapshot = parse_snapshot(&text, &path).expect("snapshot");
    let options = MarketOptions::default();
    let charts = Charts::build(&inputs(&snapshot, &options, None, None, &[])).expect("charts");
    let c = charts
        .quotes
        .iter()
        .find(|c| (c.attach - 0.03).abs() < 1e-12)
        .expect("3-7%");
    assert!(c.roots.is_empty());
    let highest = c.points.iter().filter_map(|p| p.1).fold(f64::MIN, f64::max);
    assert!(highest < c.quote, "{highest} vs {}", c.quote);
    assert!(c.reading().starts_with("no root"), "{}", c.reading());
    assert!(charts.any_unsolved());
    // Base correlation still reaches 3-7% (two bases, not one flat
    // correlation); the chain breaks at 7-15%, and the skew keeps the knots
    // below the break.
    assert_eq!(charts.skews[0].knots.len(), 2);
    let broken = charts.skews[0].broken_at.expect("a break");
    assert!((broken.attach() - 0.07).abs() < 1e-12);

    let dir = std::env::temp_dir().join(format!("skewbook-charts-{}", std::process::id()));
    let dir = dir.to_string_lossy().into_owned();
    let (code, out, err) = skewbook(&["chart", &path, "--out", &dir]);
    assert_eq!(code, 1, "{err}");
    assert!(
        out.lines().any(|l| l.ends_with("quote-2031-06-20-3-7.svg")),
        "{out}"
    );
    let svg = std::fs::read_to_string(format!("{dir}/quote-2031-06-20-3-7.svg")).expect("svg");
    assert!(svg.contains("no root: the curve runs from"));
    let (code, page, err) = skewbook(&["report", &path, "--out", "-"]);
    assert_eq!(code, 1, "{err}");
    assert!(page.contains("id=\"flag-no_compound_root\""));
    assert!(page.contains("id=\"flag-base_chain_broken\""));
}

/// A date of the history whose 3-7% quote (2000 bp) no base correlation
/// reaches: that day
/// the quoted 7% and 15% have no value (a gap), 3% keeps its value, and a
/// detachment off the surface is the 3% knot held flat, marked so.
#[test]
fn history_leaves_a_gap_where_the_chain_broke() {
    let text = std::fs::read_to_string(repo(HISTORY)).expect("history");
    let row = "2026-06-10,tranche,2031-06-20,3,7,spread_bp,";
    let start = text.find(row).expect("the 3-7% row of 2026-06-10");
    let end = start + text[start..].find('\n').expect("line end");
    let broken = format!("{}{row}2000,,{}", &text[..start], &text[end..]);
    let snapshot = parse_snapshot(&broken, "broken-history.csv").expect("snapshot");
    let options = MarketOptions::default();
    let at = [0.10];
    let charts =
        Charts::build(&inputs(&snapshot, &options, None, Some(&snapshot), &at)).expect("charts");
    assert!(charts.history_unsolved);
    let day = chrono::NaiveDate::from_ymd_opt(2026, 6, 10).expect("date");
    let h = &charts.history[0];
    let point = |k: f64| {
        let s = h
            .series
            .iter()
            .find(|s| (s.detach - k).abs() < 1e-12)
            .expect("series");
        *s.points.iter().find(|p| p.date == day).expect("point")
    };
    assert!(point(0.03).rho.is_some());
    assert!(point(0.07).rho.is_none());
    assert!(point(0.15).rho.is_none());
    let off = point(0.10);
    assert_eq!(off.rho, point(0.03).rho);
    assert!(off.extrapolated);
    assert!(h.svg().expect("svg").contains("gap"));
}

/// `chart` writes one parseable SVG per picture, named plainly, each with
/// a title and no number that is not finite.
#[test]
fn chart_command_writes_plain_svg_files() {
    let dir = std::env::temp_dir().join(format!("skewbook-chart-cmd-{}", std::process::id()));
    let dir = dir.to_string_lossy().into_owned();
    let (code, out, err) = skewbook(&[
        "chart",
        HGX,
        "--out",
        &dir,
        "--history",
        HISTORY,
        "--defaults",
        "market-samples/hgx-default-rates.csv",
        "--at",
        "5,10",
    ]);
    assert_eq!(code, 0, "{err}");
    let names: Vec<String> = out
        .lines()
        .map(|l| l.rsplit('/').next().unwrap_or(l).to_string())
        .collect();
    assert_eq!(
        names,
        [
            "skew-2031-06-20.svg",
            "quote-2031-06-20-0-3.svg",
            "quote-2031-06-20-3-7.svg",
            "quote-2031-06-20-7-15.svg",
            "quote-2031-06-20-15-100.svg",
            "exceedance-2031-06-20.svg",
            "history-2031-06-20.svg",
        ]
    );
    for line in out.lines() {
        let svg = std::fs::read_to_string(line).expect("file written");
        let doc = roxmltree::Document::parse(&svg).expect("SVG parses as XML");
        let root = doc.root_element();
        assert!(
            root.has_tag_name(("http://www.w3.org/2000/svg", "svg")),
            "{line}"
        );
        assert!(root.children().any(|n| n.has_tag_name("title")), "{line}");
        for bad in ["=\"NaN", "=\"inf", "=\"-inf", ">NaN", ">inf"] {
            assert!(!svg.contains(bad), "{line}: {bad}");
        }
    }
}
