//! `--names N` on `skew-history`, `chart` and `report`: their numbers are
//! the finite pool's (against `implied --names` and `surface --names` on
//! dates drawn at random from the bundled history, and against the
//! library pricing the quotes back in a pool of 125 names), the large
//! pool's numbers are not, and every output names the pool.

use crate::charts::knots_are_the_base_correlations;
use crate::common::{json_of, number, of_date, repo, skewbook};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use serde_json::Value;
use skewbook::chart::{Charts, Inputs};
use skewbook::curve::{MarketOptions, Pool};
use skewbook::input::snapshot::read_snapshot;
use skewbook::loss::PoolModel;
use skewbook::market::Snapshot;
use skewbook::math::interp::Interp;
use skewbook::tranche::{Tranche, TrancheSchedule, TrancheValuer};

const HISTORY: &str = "market-samples/hgx-history-2026-06.csv";
const HGX: &str = "market-samples/hgx-2026-06-18.csv";
const NAMES: PoolModel = PoolModel::Names(125);

/// The grid point of `surface` JSON at maturity `m`, detachment `k_pct`.
fn surface_point<'a>(surface: &'a Value, date: &str, m: &str, k_pct: f64) -> &'a Value {
    of_date(surface, date)["maturities"]
        .as_array()
        .and_then(|a| a.iter().find(|x| x["maturity"] == m))
        .and_then(|sm| sm["grid"].as_array())
        .and_then(|g| {
            g.iter()
                .find(|g| (number(&g["k_pct"]) - k_pct).abs() < 1e-9)
        })
        .unwrap_or_else(|| panic!("{date} {m}: no grid point at {k_pct}%"))
}

/// `count` distinct indices below `n`, drawn with a fixed seed.
fn random_dates(n: usize, count: usize, seed: u64) -> Vec<usize> {
    let mut rng = ChaCha8Rng::seed_from_u64(seed);
    let mut picked = Vec::new();
    while picked.len() < count {
        let i = rng.random_range(0..n);
        if !picked.contains(&i) {
            picked.push(i);
        }
    }
    picked
}

/// Every quoted tranche below the top of `date`, priced back in `model`
/// with the base correlations `rho_at(detachment)` at its two bounds:
/// the largest gap between model quote and quote, in the quote's unit.
fn repricing_gap(
    snapshot: &Snapshot,
    date: &str,
    model: PoolModel,
    rho_at: &dyn Fn(&str, f64) -> Option<f64>,
) -> f64 {
    let md = snapshot
        .dates
        .iter()
        .find(|d| d.date.to_string() == date)
        .expect("date");
    let pool = Pool::build(md, &MarketOptions::default(), HISTORY).expect("pool");
    let mut worst: f64 = 0.0;
    let mut priced = 0;
    for t in md.tranches.iter().filter(|t| t.detach < 1.0) {
        let m = t.maturity.to_string();
        let lower = if t.attach > 0.0 {
            rho_at(&m, t.attach * 100.0)
        } else {
            Some(0.3)
        };
        let (Some(lower), Some(upper)) = (lower, rho_at(&m, t.detach * 100.0)) else {
            continue;
        };
        let schedule = TrancheSchedule::for_pool_with(&pool, t.maturity, model).expect("schedule");
        let tranche = Tranche::new(t.attach, t.detach).expect("bounds");
        let v = TrancheValuer::new(&schedule, tranche, t.quote).expect("valuer");
        let q = v.model_quote(&v.legs(lower, upper)).expect("a model quote");
        worst = worst.max((q - t.quote.in_file_unit()).abs());
        priced += 1;
    }
    assert!(priced >= 3, "{date}: only {priced} tranches priced");
    worst
}

/// `skew-history --names 125` on six dates drawn at random: every
/// observation says `names_125`; base and compound correlations are
/// `implied --names 125`'s, the `--at` values `surface --names 125`'s;
/// the base correlations reprice every quote in a pool of 125 names
/// (library, to 1e-6 in the quote's unit) and not in the large pool; and
/// every base correlation differs from the large-pool `skew-history`.
#[test]
fn skew_history_in_125_names_is_the_finite_pool_skew_on_random_dates() {
    let names = json_of(&["skew-history", HISTORY, "--names", "125", "--at", "5,10"]);
    let large = json_of(&["skew-history", HISTORY, "--at", "5,10"]);
    let implied = json_of(&["implied", HISTORY, "--names", "125"]);
    let surface = json_of(&["surface", HISTORY, "--names", "125"]);
    let snapshot = read_snapshot(&repo(HISTORY)).expect("history");
    let obs = names.as_array().expect("observations");
    let large_obs = large.as_array().expect("observations");
    assert_eq!(obs.len(), large_obs.len());
    assert!(obs.iter().all(|o| o["model"] == "names_125"));
    assert!(large_obs.iter().all(|o| o.get("model").is_none()));
    for i in random_dates(snapshot.dates.len(), 6, 29) {
        let ds = snapshot.dates[i].date.to_string();
        let today: Vec<(&Value, &Value)> = obs
            .iter()
            .zip(large_obs)
            .filter(|(o, _)| o["date"] == ds.as_str())
            .collect();
        assert!(today.len() >= 10, "{ds}: {} observations", today.len());
        let tranches = of_date(&implied, &ds)["tranches"]
            .as_array()
            .expect("tranches");
        for (o, l) in &today {
            let m = o["maturity"].as_str().expect("maturity");
            let detach = number(&o["detach_pct"]);
            let tranche = |attach: Option<f64>| {
                tranches.iter().find(|t| {
                    t["maturity"] == m
                        && (number(&t["detach_pct"]) - detach).abs() < 1e-9
                        && attach.is_none_or(|a| (number(&t["attach_pct"]) - a).abs() < 1e-9)
                })
            };
            let want = match o["series"].as_str().expect("series") {
                "base" => tranche(None).expect("tranche")["base_correlation"].clone(),
                "compound" => {
                    let t = tranche(Some(number(&o["attach_pct"]))).expect("tranche");
                    let root = o["root"].as_u64().expect("root") as usize;
                    t["compound_correlation"][root - 1].clone()
                }
                _ => surface_point(&surface, &ds, m, detach)["base_correlation"].clone(),
            };
            match (o["value"].as_f64(), want.as_f64()) {
                (Some(got), Some(want)) => {
                    assert!((got - want).abs() < 1e-15, "{ds} {o}: {want}")
                }
                (got, want) => assert_eq!(got, want, "{ds} {o}"),
            }
            if o["series"] == "base" {
                let (n, l) = (number(&o["value"]), number(&l["value"]));
                assert!((n - l).abs() > 1e-4, "{ds} {o}: the same as the large pool");
            }
        }
        let base_of = |history: &Value| {
            let history = history.clone();
            let ds = ds.clone();
            move |m: &str, k_pct: f64| {
                history.as_array().and_then(|a| {
                    a.iter()
                        .find(|o| {
                            o["date"] == ds.as_str()
                                && o["maturity"] == m
                                && o["series"] == "base"
                                && (number(&o["detach_pct"]) - k_pct).abs() < 1e-9
                        })
                        .and_then(|o| o["value"].as_f64())
                })
            }
        };
        let finite = base_of(&names);
        let gap = repricing_gap(&snapshot, &ds, NAMES, &finite);
        assert!(gap < 1e-6, "{ds}: finite-pool repricing gap {gap}");
        let gap = repricing_gap(&snapshot, &ds, PoolModel::LargePool, &finite);
        assert!(gap > 1e-2, "{ds}: the large pool reprices too ({gap})");
        let gap = repricing_gap(&snapshot, &ds, PoolModel::LargePool, &base_of(&large));
        assert!(gap < 1e-6, "{ds}: large-pool repricing gap {gap}");
    }
    // The table and the CSV name the pool too.
    let (code, table, err) = skewbook(&["skew-history", HISTORY, "--names", "125"]);
    assert_eq!(code, 0, "{err}");
    assert!(table
        .lines()
        .next()
        .expect("title")
        .ends_with("pool of 125 names"));
    let (code, csv, err) =
        skewbook(&["skew-history", HISTORY, "--names", "125", "--format", "csv"]);
    assert_eq!(code, 0, "{err}");
    assert!(csv
        .lines()
        .next()
        .expect("header")
        .starts_with("date,model,"));
    assert!(csv
        .lines()
        .skip(1)
        .all(|l| l.split(',').nth(1) == Some("names_125")));
    let (_, plain, _) = skewbook(&["skew-history", HISTORY, "--format", "csv"]);
    assert!(!plain.contains("model") && !plain.contains("names"));
}

fn inputs<'a>(
    snapshot: &'a Snapshot,
    options: &'a MarketOptions,
    date: chrono::NaiveDate,
    at: &'a [f64],
    model: PoolModel,
) -> Inputs<'a> {
    Inputs {
        snapshot,
        options,
        date: Some(date),
        history: Some(snapshot),
        defaults: None,
        estimator: None,
        at,
        step: 0.005,
        history_interp: Interp::Linear,
        model,
    }
}

/// The charts in a pool of 125 names on three dates drawn at random: the
/// knots, the skew curves and the tranchelet losses are `implied` and
/// `surface --names 125`'s; the quote curves are the library's pricing in
/// that pool (and meet the quote at `implied --names 125`'s compound
/// roots); the skew through time is `implied` and `surface` in that pool;
/// expected-loss is not drawn; every title names the pool.
#[test]
fn charts_in_125_names_draw_the_finite_pool() {
    let snapshot = read_snapshot(&repo(HISTORY)).expect("history");
    let options = MarketOptions::default();
    let implied = json_of(&["implied", HISTORY, "--names", "125"]);
    let surfaces: Vec<(Interp, Value)> = [Interp::Linear, Interp::Pchip]
        .into_iter()
        .map(|i| {
            let s = json_of(&["surface", HISTORY, "--names", "125", "--interp", i.name()]);
            (i, s)
        })
        .collect();
    let at = [0.05, 0.10];
    for i in random_dates(snapshot.dates.len(), 3, 31) {
        let date = snapshot.dates[i].date;
        let ds = date.to_string();
        let charts = Charts::build(&inputs(&snapshot, &options, date, &at, NAMES)).expect("charts");
        let large = Charts::build(&inputs(
            &snapshot,
            &options,
            date,
            &at,
            PoolModel::LargePool,
        ))
        .expect("charts");
        assert_eq!(charts.model, NAMES);
        let tranches = of_date(&implied, &ds)["tranches"]
            .as_array()
            .expect("tranches");
        let pool = charts.implied.pool.clone();

        for c in &charts.skews {
            let m = c.maturity.to_string();
            knots_are_the_base_correlations(c, tranches, &ds);
            let interps: Vec<Interp> = c.curves.iter().map(|c| c.interp).collect();
            assert_eq!(interps, [Interp::Linear, Interp::Pchip]);
            for (curve, (_, surface)) in c.curves.iter().zip(&surfaces) {
                for p in curve.points.iter().filter(|p| {
                    let steps = p.0 / 0.005;
                    (steps - steps.round()).abs() < 1e-9
                }) {
                    let g = surface_point(surface, &ds, &m, p.0 * 100.0);
                    let want = g["base_correlation"].as_f64().expect("a grid value");
                    assert!((p.1 - want).abs() < 1e-14, "{ds} {m}");
                }
            }
            assert!(c.title().ends_with(", pool of 125 names"), "{}", c.title());
        }

        for c in &charts.quotes {
            let t = tranches
                .iter()
                .find(|t| {
                    t["maturity"] == c.maturity.to_string().as_str()
                        && (number(&t["attach_pct"]) - c.attach * 100.0).abs() < 1e-9
                        && (number(&t["detach_pct"]) - c.detach * 100.0).abs() < 1e-9
                })
                .expect("a tranche per curve");
            let roots: Vec<f64> = t["compound_correlation"]
                .as_array()
                .expect("roots")
                .iter()
                .map(number)
                .collect();
            assert_eq!(c.roots.len(), roots.len(), "{ds}");
            for (got, want) in c.roots.iter().zip(&roots) {
                assert!((got - want).abs() < 1e-15, "{ds}: {got} vs {want}");
                let at_root = c.points.iter().find(|p| p.0 == *got).and_then(|p| p.1);
                assert!((at_root.expect("a point at the root") - c.quote).abs() < 1e-6);
            }
            // the library's price in a pool of 125 names, not the large pool's
            let schedule = TrancheSchedule::for_pool_with(&pool, c.maturity, NAMES).expect("s");
            let tranche = Tranche::new(c.attach, c.detach).expect("bounds");
            let quote = snapshot.dates[i]
                .tranches
                .iter()
                .find(|q| q.maturity == c.maturity && q.attach == c.attach)
                .expect("quote")
                .quote;
            let v = TrancheValuer::new(&schedule, tranche, quote).expect("valuer");
            let lc = large
                .quotes
                .iter()
                .find(|l| l.file_name() == c.file_name())
                .expect("the same curve in the large pool");
            let mut differ = 0;
            for ((rho, q), (_, lq)) in c.points.iter().zip(&lc.points).step_by(20) {
                let want = v.model_quote(&v.legs_flat(*rho));
                assert_eq!(*q, want, "{ds} {} at {rho}", c.label());
                if let (Some(q), Some(lq)) = (q, lq) {
                    differ += usize::from((q - lq).abs() > 1e-3 * q.abs().max(1.0));
                }
            }
            assert!(differ >= 5, "{ds} {}: close to the large pool", c.label());
            assert!(c.title().ends_with(", pool of 125 names"), "{}", c.title());
        }

        for chart in &charts.exceedance {
            let m = chart.maturity.to_string();
            assert_eq!(chart.implied.len(), 2);
            for (curve, (interp, surface)) in chart.implied.iter().zip(&surfaces) {
                assert_eq!(curve.interp, *interp);
                for t in &curve.tranchelets {
                    let g = surface_point(surface, &ds, &m, t.k_from * 100.0);
                    assert!(
                        (t.loss - number(&g["tranchelet_loss"])).abs() < 1e-15,
                        "{ds} {m}"
                    );
                }
            }
            assert!(chart.title().ends_with(", pool of 125 names"));
        }

        let h = &charts.history[0];
        let m = h.maturity.to_string();
        for s in &h.series {
            let p = s.points.iter().find(|p| p.date == date).expect("a point");
            let want = if s.quoted {
                tranches
                    .iter()
                    .find(|t| (number(&t["detach_pct"]) / 100.0 - s.detach).abs() < 1e-12)
                    .map(|t| number(&t["base_correlation"]))
            } else {
                surface_point(&surfaces[0].1, &ds, &m, s.detach * 100.0)["base_correlation"]
                    .as_f64()
            };
            let (got, want) = (p.rho.expect("a value"), want.expect("a reference"));
            assert!(
                (got - want).abs() < 1e-14,
                "{ds} {}: {got} vs {want}",
                s.detach
            );
        }
        assert!(h.title().ends_with(", pool of 125 names"));

        // Each drawn SVG's title names the pool; the large pool's none.
        for s in charts.svgs().expect("svgs") {
            assert!(
                s.svg.contains(", pool of 125 names</title>"),
                "{}",
                s.file_name
            );
        }
        for s in large.svgs().expect("svgs") {
            assert!(!s.svg.contains("names"), "{}", s.file_name);
        }
    }
}

/// The text of each cell of the table row with id `id` on `page`.
fn cells(page: &str, id: &str) -> Vec<String> {
    let opts = roxmltree::ParsingOptions {
        allow_dtd: true,
        ..Default::default()
    };
    let doc = roxmltree::Document::parse_with_options(page, opts).expect("well-formed");
    let row = doc
        .descendants()
        .find(|n| n.attribute("id") == Some(id))
        .unwrap_or_else(|| panic!("no row {id}"));
    row.children()
        .filter(|c| c.has_tag_name("td"))
        .map(|c| {
            c.descendants()
                .filter(|d| d.is_text())
                .filter_map(|d| d.text())
                .collect()
        })
        .collect()
}

/// `report --names 125`: the page says which pool under its title, in
/// the assumptions, the caution and every chart's title, and each
/// tranche's row carries `implied --names 125`'s base correlation (which
/// differs from the large pool's page); without `--names` the page names
/// no pool of names.
#[test]
fn report_page_in_125_names_names_the_pool() {
    let (code, page, err) = skewbook(&[
        "report",
        HGX,
        "--out",
        "-",
        "--names",
        "125",
        "--history",
        HISTORY,
    ]);
    assert_eq!(code, 0, "{err}");
    let (code, plain, err) = skewbook(&["report", HGX, "--out", "-", "--history", HISTORY]);
    assert_eq!(code, 0, "{err}");
    assert!(page.contains(
        "recovery 40.00%; pool of 125 names (binomial defaults given the factor, not the large pool)"
    ));
    assert!(page.contains("A homogeneous pool of 125 names (--names 125)"));
    assert!(page.contains("The assumptions above are a homogeneous pool of 125 names,"));
    assert!(!plain.contains("125 names") && plain.contains("Large homogeneous pool"));
    let titles = page.matches("<title>").count() - 1;
    assert!(titles >= 7, "{titles} charts");
    assert_eq!(page.matches(", pool of 125 names</title>").count(), titles);

    let implied = json_of(&["implied", HGX, "--names", "125"]);
    let mut differ = 0;
    for t in implied[0]["tranches"].as_array().expect("tranches") {
        let id = format!(
            "tranche-{}-{}-{}",
            t["maturity"].as_str().expect("maturity"),
            number(&t["attach_pct"]),
            number(&t["detach_pct"])
        );
        let (row, plain_row) = (cells(&page, &id), cells(&plain, &id));
        let want = t["base_correlation"]
            .as_f64()
            .map_or("-".to_string(), |b| format!("{:.2}", b * 100.0));
        assert_eq!(row[4], want, "{id}");
        differ += usize::from(row[4] != plain_row[4]);
    }
    assert!(differ >= 3, "only {differ} rows differ from the large pool");
}

/// Usage errors (exit 2, nothing written): 0 names, and expected-loss
/// (which reads correlations back through the large pool) with `--names`.
#[test]
fn names_usage_errors() {
    let dir = std::env::temp_dir().join(format!("skewbook-names-{}", std::process::id()));
    let dir = dir.to_string_lossy().into_owned();
    for args in [
        vec!["skew-history", HISTORY, "--names", "0"],
        vec!["chart", HGX, "--out", &dir, "--names", "0"],
        vec!["report", HGX, "--out", "-", "--names", "0"],
    ] {
        let (code, out, err) = skewbook(&args);
        assert_eq!(code, 2, "{args:?}");
        assert!(out.is_empty() && err.contains("--names"), "{args:?}: {err}");
    }
    for args in [
        vec![
            "skew-history",
            HISTORY,
            "--names",
            "125",
            "--interp",
            "expected-loss",
        ],
        vec![
            "chart",
            HGX,
            "--out",
            &dir,
            "--names",
            "125",
            "--history",
            HISTORY,
            "--interp",
            "expected-loss",
        ],
    ] {
        let (code, out, err) = skewbook(&args);
        assert_eq!(code, 2, "{args:?}");
        assert!(out.is_empty(), "{args:?}: {out}");
        assert!(err.contains("use linear or pchip with --names"), "{err}");
    }
    assert!(!std::path::Path::new(&dir).exists());
}

/// The README's command table lists `--names N` exactly for the commands
/// whose `--help` offers it, and `docs/formats.md` names each of them
/// where it says how the output names the pool.
#[test]
fn readme_command_table_lists_names_where_the_commands_take_it() {
    let readme = std::fs::read_to_string(repo("README.md")).expect("README");
    let formats = std::fs::read_to_string(repo("docs/formats.md")).expect("formats");
    let pool_section = formats
        .split("## The pool in the output")
        .nth(1)
        .expect("docs/formats.md: a section on the pool in the output");
    let commands = [
        "implied",
        "curve",
        "price",
        "loss",
        "realworld",
        "surface",
        "skew-history",
        "value",
        "chart",
        "report",
    ];
    for cmd in commands {
        let row = readme
            .lines()
            .find(|l| l.starts_with(&format!("| `skewbook {cmd} ")))
            .unwrap_or_else(|| panic!("README: no row for {cmd}"));
        let (code, help, err) = skewbook(&[cmd, "--help"]);
        assert_eq!(code, 0, "{err}");
        assert_eq!(
            row.contains("--names N"),
            help.contains("--names <N>"),
            "{cmd}: README row and --help disagree on --names"
        );
        if help.contains("--names <N>") {
            assert!(
                pool_section.contains(&format!("`{cmd}`")),
                "docs/formats.md: the pool section does not name {cmd}"
            );
        }
    }
}
