//! `skewbook report`: one self-contained HTML page of a trade date.
//!
//! The page holds, in order: the index curve; the implied correlations of
//! each maturity with its skew chart; each tranche's model quote against
//! correlation; the surface diagnostics with the loss exceedance charts
//! (beside the real-world curve when a default history is given); the
//! real-world estimates; the skew through time (with a history); the flags
//! that occur, in plain words ([`Flag::meaning`]); the model's
//! assumptions; and the caution ([`crate::CAUTION`]).
//!
//! # The pool model
//! With `--names N` ([`Charts::model`]) everything on the page is solved
//! and priced in a pool of N names: the line under the title, the
//! implied section, every chart's title and the assumptions say so; the
//! real-world curves stay Vasicek's large pool.
//!
//! # Self-contained
//! Charts are inline SVG, style is one inline `<style>` element; there is no
//! script, no image file, no font file and no URL (the inline SVG leaves
//! out its namespace declaration, which the HTML parser supplies). The page
//! is XHTML-compatible: every element is closed and every text escaped, so
//! an XML parser reads it.
//!
//! # Numbers on the page
//! Rates, probabilities and correlations in percent; each as `fixed(x, d)`
//! ([`crate::output::fixed`]):
//!
//! | value | shown as | digits |
//! | --- | --- | --- |
//! | recovery, correlations (compound, base, knots, estimates) | percent | 2 |
//! | hazard rate, default probability | percent | 4 |
//! | survival | fraction | 6 |
//! | annuity | years | 4 |
//! | quotes, repriced quotes, model quote range | file unit (bp or %) | 4 |
//! | expected tranche loss | percent of tranche notional | 4 |
//! | tranche bounds, coupons | file unit | shortest form (`3`, `2.5`, `500`) |
//! | reprice errors, arbitrage sizes | scientific | 2 after the point (`7.11e-15`) |
//!
//! Rows carry ids: `index-MATURITY` for a pillar, `tranche-MATURITY-A-D`
//! for a tranche (bounds in percent, shortest form), `estimate-METHOD` for
//! a real-world estimate; a flag's explanation is `flag-NAME`.

mod writer;

use super::curve::CurvePillar;
use super::implied::{ImpliedDate, ImpliedOptions, ImpliedTranche};
use super::surface::SurfaceMaturity;
use crate::chart::Charts;
use crate::error::Result;
use crate::flags::Flag;
use crate::loss::PoolModel;
use crate::output::{fixed, sci};
use std::collections::BTreeMap;
use writer::Html;

const STYLE: &str = "
body { font-family: sans-serif; color: #000; background: #fff; margin: 24px auto; max-width: 1180px; padding: 0 12px; line-height: 1.4; }
h1 { font-size: 1.6em; margin-bottom: 0.2em; }
h2 { font-size: 1.3em; border-bottom: 2px solid #000; padding-bottom: 2px; margin-top: 2em; }
h3 { font-size: 1.05em; margin-top: 1.4em; }
p.meta { margin-top: 0; }
.caution { border: 2px solid #000; padding: 8px 12px; }
nav ol { columns: 2; }
table { border-collapse: collapse; margin: 8px 0 12px 0; font-size: 0.85em; }
caption { text-align: left; font-weight: bold; padding: 4px 0; }
th, td { border: 1px solid #999; padding: 3px 7px; vertical-align: top; }
th { background: #e8e8e8; text-align: left; }
td.n { text-align: right; font-variant-numeric: tabular-nums; white-space: nowrap; }
td.t { white-space: nowrap; }
.scroll { overflow-x: auto; }
.charts { display: flex; flex-wrap: wrap; gap: 14px; }
figure { margin: 0; width: 570px; max-width: 100%; }
figure svg { width: 100%; height: auto; border: 1px solid #ccc; }
dt { font-family: monospace; font-weight: bold; margin-top: 6px; }
dd { margin-left: 24px; }
ul.notes { font-size: 0.9em; }
@media print { figure { break-inside: avoid; } h2 { break-after: avoid; } }
";

/// A percent-like bound or coupon in its shortest form (`3`, `2.5`, `500`).
fn short(x: f64) -> String {
    format!("{x}")
}

/// A fraction as a percent with `d` decimals.
fn pct(x: f64, d: usize) -> String {
    fixed(x * 100.0, d)
}

fn tranche_id(maturity: &str, a: f64, d: f64) -> String {
    format!("tranche-{maturity}-{}-{}", short(a), short(d))
}

/// A table: caption, header, rows of (class, text) cells, optional row ids.
struct Table<'a> {
    caption: String,
    headers: &'a [&'a str],
    rows: Vec<(Option<String>, Vec<Cell>)>,
}

/// A cell: numbers right-aligned.
enum Cell {
    /// A number (right-aligned).
    N(String),
    /// Short text, kept on one line.
    T(String),
    /// Longer text, wrapped.
    W(String),
    /// Flags, each linked to its explanation.
    Flags(Vec<Flag>),
}

impl Table<'_> {
    fn write(&self, h: &mut Html) {
        h.open("div", &[("class", "scroll")]);
        h.open("table", &[]);
        h.el("caption", &[], &self.caption);
        h.open("thead", &[]).open("tr", &[]);
        for c in self.headers {
            h.el("th", &[("scope", "col")], c);
        }
        h.close("tr").close("thead");
        h.open("tbody", &[]);
        for (id, cells) in &self.rows {
            match id {
                Some(id) => h.open("tr", &[("id", id)]),
                None => h.open("tr", &[]),
            };
            for c in cells {
                match c {
                    Cell::N(s) => h.el("td", &[("class", "n")], s),
                    Cell::T(s) => h.el("td", &[("class", "t")], s),
                    Cell::W(s) => h.el("td", &[], s),
                    Cell::Flags(flags) => {
                        h.open("td", &[]);
                        for (i, f) in flags.iter().enumerate() {
                            if i > 0 {
                                h.text(", ");
                            }
                            h.el("a", &[("href", &format!("#flag-{}", f.name()))], f.name());
                        }
                        h.close("td")
                    }
                };
            }
            h.close("tr");
        }
        h.close("tbody").close("table").close("div");
    }
}

fn charts_block(h: &mut Html, svgs: &[&str]) {
    if svgs.is_empty() {
        return;
    }
    h.open("div", &[("class", "charts")]);
    for s in svgs {
        h.open("figure", &[]).svg(s).close("figure");
    }
    h.close("div");
}

fn index_table(h: &mut Html, d: &ImpliedDate) {
    let rows = d
        .index
        .iter()
        .map(|p: &CurvePillar| {
            (
                Some(format!("index-{}", p.maturity)),
                vec![
                    Cell::T(p.maturity.clone()),
                    Cell::N(quote_text(p.quote_kind, p.quote, p.coupon_bp)),
                    Cell::N(pct(p.hazard, 4)),
                    Cell::N(fixed(p.survival, 6)),
                    Cell::N(pct(p.default_probability, 4)),
                    Cell::N(fixed(p.annuity, 4)),
                    Cell::N(fixed(p.repriced_quote, 4)),
                    Cell::N(sci(p.reprice_error, 2)),
                ],
            )
        })
        .collect();
    Table {
        caption: format!(
            "Index curve on {}, recovery {}%",
            d.date,
            pct(d.recovery, 2)
        ),
        headers: &[
            "maturity",
            "quote",
            "hazard (% a year)",
            "survival to maturity + 1 day",
            "default probability (%)",
            "risky annuity (years)",
            "repriced quote",
            "reprice error",
        ],
        rows,
    }
    .write(h);
}

/// The tiled maturities' quotes against the index curve.
fn index_check_table(h: &mut Html, d: &ImpliedDate) {
    if d.index_check.is_empty() {
        return;
    }
    let rows = d
        .index_check
        .iter()
        .map(|c| {
            (
                Some(format!("index-check-{}", c.maturity)),
                vec![
                    Cell::T(c.maturity.clone()),
                    Cell::N(fixed(c.gap_bp, 4)),
                    Cell::N(fixed(c.tolerance_bp, 4)),
                    Cell::T(
                        if c.mismatch {
                            "index_mismatch"
                        } else {
                            "agree"
                        }
                        .to_string(),
                    ),
                ],
            )
        })
        .collect();
    Table {
        caption: "Tranches that tile 0-100% against the index: protection gap as running spread on the index annuity".to_string(),
        headers: &["maturity", "gap (bp)", "tolerance (bp)", "result"],
        rows,
    }
    .write(h);
}

/// A quote in its file unit: `241.1000 bp`, `42.8700% upfront + 500 bp`.
fn quote_text(kind: &str, quote: f64, coupon_bp: Option<f64>) -> String {
    match (kind, coupon_bp) {
        ("spread_bp", _) => format!("{} bp", fixed(quote, 4)),
        (_, Some(c)) => format!("{}% upfront + {} bp", fixed(quote, 4), short(c)),
        _ => format!("{}% upfront", fixed(quote, 4)),
    }
}

fn implied_table(h: &mut Html, maturity: &str, rows: &[ImpliedTranche]) {
    let list = |xs: &[f64]| {
        if xs.is_empty() {
            "none".to_string()
        } else {
            xs.iter().map(|x| pct(*x, 2)).collect::<Vec<_>>().join(", ")
        }
    };
    let table_rows = rows
        .iter()
        .map(|t| {
            let q = &t.tranche;
            (
                Some(tranche_id(maturity, q.attach_pct, q.detach_pct)),
                vec![
                    Cell::T(format!("{}-{}%", short(q.attach_pct), short(q.detach_pct))),
                    Cell::N(quote_text(q.quote_kind, q.quote, q.coupon_bp)),
                    Cell::N(list(&t.compound_correlation)),
                    Cell::N(t.compound_range.map_or("-".to_string(), |[lo, hi]| {
                        format!("{} to {}", fixed(lo, 4), fixed(hi, 4))
                    })),
                    Cell::N(t.base_correlation.map_or("-".to_string(), |b| pct(b, 2))),
                    Cell::N(t.expected_loss_pct.map_or("-".to_string(), |e| fixed(e, 4))),
                    Cell::N(t.base_reprice_error.map_or("-".to_string(), |e| sci(e, 2))),
                    Cell::Flags(t.flags.clone()),
                ],
            )
        })
        .collect();
    Table {
        caption: format!("Tranches maturing {maturity}"),
        headers: &[
            "tranche",
            "quote",
            "compound correlation (%)",
            "model quotes over 0.01% to 99.99%",
            "base correlation (%)",
            "expected loss (% of tranche)",
            "reprice error off the base curve",
            "flags",
        ],
        rows: table_rows,
    }
    .write(h);
    let notes: Vec<String> = rows
        .iter()
        .flat_map(|t| {
            [&t.compound_note, &t.base_note, &t.check_note]
                .into_iter()
                .flatten()
                .map(|n| {
                    format!(
                        "{}-{}%: {n}",
                        short(t.tranche.attach_pct),
                        short(t.tranche.detach_pct)
                    )
                })
        })
        .collect();
    if !notes.is_empty() {
        h.open("ul", &[("class", "notes")]);
        for n in notes {
            h.el("li", &[], &n);
        }
        h.close("ul");
    }
}

fn surface_table(h: &mut Html, charts: &Charts) {
    let mut rows = Vec::new();
    for (interp, diags) in &charts.diagnostics {
        for m in diags.iter().map(SurfaceMaturity::from) {
            let knots: Vec<String> = m
                .knots
                .iter()
                .map(|k| format!("{}%: {}", short(k.detach_pct), pct(k.base_correlation, 2)))
                .collect();
            let mut worst = Vec::new();
            if let Some(w) = &m.worst.outside_unit {
                worst.push(format!(
                    "tranchelet {}-{}% loses {} of its width",
                    short(w.k_from_pct),
                    short(w.k_to_pct),
                    sci(w.tranchelet_loss, 2)
                ));
            }
            if let Some(w) = &m.worst.increasing {
                worst.push(format!(
                    "exceedance rises by {} over {}-{}%",
                    sci(w.rise, 2),
                    short(w.k_from_pct),
                    short(w.k_to_pct)
                ));
            }
            if let Some(w) = &m.worst.maturity_order {
                worst.push(format!(
                    "at {}% base expected loss {} below {}'s",
                    short(w.k_pct),
                    sci(w.excess, 2),
                    w.earlier_maturity
                ));
            }
            rows.push((
                None,
                vec![
                    Cell::T(interp.name().to_string()),
                    Cell::T(m.maturity.clone()),
                    Cell::N(pct(m.protection_end_pd, 4)),
                    Cell::W(knots.join("; ")),
                    Cell::N(m.violations.outside_unit.to_string()),
                    Cell::N(m.violations.increasing.to_string()),
                    Cell::N(m.violations.maturity_order.to_string()),
                    Cell::W(if worst.is_empty() {
                        "none".to_string()
                    } else {
                        worst.join("; ")
                    }),
                ],
            ));
        }
    }
    Table {
        caption: format!(
            "Arbitrage checks of the surface on a {}% grid",
            short(crate::output::pct(charts.step))
        ),
        headers: &[
            "interpolation",
            "maturity",
            "index PD to maturity + 1 day (%)",
            "knots (detachment: base correlation %)",
            "tranchelet loss outside 0-100%",
            "exceedance rises",
            "base EL falls with maturity",
            "worst",
        ],
        rows,
    }
    .write(h);
}

fn exceedance_table(h: &mut Html, charts: &Charts) {
    let Some(r) = &charts.real_world else {
        return;
    };
    let rows = charts
        .exceedance
        .iter()
        .filter_map(|c| c.real_world.as_ref().map(|w| (c, w)))
        .map(|(c, w)| {
            let over = |p: f64| crate::chart::exceedance::pd_over(p, w.horizon);
            (
                None,
                vec![
                    Cell::T(c.maturity.to_string()),
                    Cell::N(fixed(w.horizon, 4)),
                    Cell::N(pct(c.protection_end_pd, 4)),
                    Cell::N(pct(w.pd_horizon, 4)),
                    Cell::N(format!(
                        "{} to {}",
                        pct(over(r.pd_ci[0]), 4),
                        pct(over(r.pd_ci[1]), 4)
                    )),
                    Cell::N(pct(w.lgd, 2)),
                ],
            )
        })
        .collect();
    Table {
        caption: format!(
            "Risk-neutral and real-world PD over each maturity's horizon ({}: PD {}% a year, rho {}%)",
            r.method.name(),
            pct(r.pd, 4),
            pct(r.rho, 2)
        ),
        headers: &[
            "maturity",
            "horizon (years)",
            "index PD (%)",
            "real-world PD (%)",
            "real-world PD, 95% interval (%)",
            "loss given default (%)",
        ],
        rows,
    }
    .write(h);
}

fn realworld_section(h: &mut Html, charts: &Charts) {
    h.open("section", &[("id", "realworld")]);
    h.el("h2", &[], "Real-world estimates");
    let Some(estimates) = &charts.estimates else {
        h.el(
            "p",
            &[],
            "No default history was given (--defaults FILE), so the exceedance charts show the risk-neutral side only.",
        );
        h.close("section");
        return;
    };
    let ci = |c: Option<[f64; 2]>, d: usize| {
        c.map_or("-".to_string(), |[a, b]| {
            format!("{} to {}", pct(a, d), pct(b, d))
        })
    };
    let rows = estimates
        .iter()
        .map(|e| {
            (
                Some(format!("estimate-{}", e.method.name())),
                vec![
                    Cell::T(e.method.name().to_string()),
                    Cell::N(e.pd.map_or("-".to_string(), |p| pct(p, 4))),
                    Cell::N(ci(e.pd_ci, 4)),
                    Cell::N(e.rho.map_or("-".to_string(), |r| pct(r, 2))),
                    Cell::N(ci(e.rho_ci, 2)),
                    Cell::T(e.se_method.map_or("-", |s| s.name()).to_string()),
                    Cell::N(e.periods.to_string()),
                    Cell::W(e.notes.join("; ")),
                ],
            )
        })
        .collect();
    Table {
        caption: "PD (a year) and asset correlation from the default history".to_string(),
        headers: &[
            "estimator",
            "PD (%)",
            "PD, 95% interval (%)",
            "asset correlation (%)",
            "correlation, 95% interval (%)",
            "standard errors by",
            "periods",
            "notes",
        ],
        rows,
    }
    .write(h);
    match &charts.real_world {
        Some(r) => h.el(
            "p",
            &[],
            &format!(
                "The real-world curves use {}: the first of binomial_ml, probit_moments, moment_matching and joint_default_moments (or the one named with --estimator) that gives PD, asset correlation and both 95% intervals.",
                r.method.name()
            ),
        ),
        None => h.el(
            "p",
            &[],
            "No estimator gave PD, asset correlation and both 95% intervals, so no real-world curve is drawn.",
        ),
    };
    h.close("section");
}

fn history_section(h: &mut Html, charts: &Charts, svgs: &BTreeMap<String, String>) {
    let Some(source) = &charts.history_source else {
        return;
    };
    h.open("section", &[("id", "history")]);
    h.el("h2", &[], "The skew through time");
    h.el(
        "p",
        &[],
        &format!(
            "From {source}: on each trade date, the base correlation at each quoted detachment, and at the detachments chosen with --at read off that date's skew."
        ),
    );
    for c in &charts.history {
        h.el("h3", &[], &format!("Maturity {}", c.maturity));
        if let Some(svg) = svgs.get(&c.file_name()) {
            charts_block(h, &[svg]);
        }
        let dates = c.dates();
        let value = |p: &crate::chart::history::HistoryPoint| {
            p.rho.map_or("-".to_string(), |r| {
                let mut s = pct(r, 2);
                if p.extrapolated {
                    s.push_str(" (flat)");
                }
                s
            })
        };
        let rows = c
            .series
            .iter()
            .map(|s| {
                let with: Vec<f64> = s.points.iter().filter_map(|p| p.rho).collect();
                let first = s.points.iter().find(|p| p.rho.is_some());
                let last = s.points.iter().rev().find(|p| p.rho.is_some());
                let lo = with.iter().copied().fold(f64::INFINITY, f64::min);
                let hi = with.iter().copied().fold(f64::NEG_INFINITY, f64::max);
                let change = match (first.and_then(|p| p.rho), last.and_then(|p| p.rho)) {
                    (Some(a), Some(b)) => pct(b - a, 2),
                    _ => "-".to_string(),
                };
                (
                    None,
                    vec![
                        Cell::T(s.label(c.interp)),
                        Cell::N(first.map_or("-".to_string(), value)),
                        Cell::N(last.map_or("-".to_string(), value)),
                        Cell::N(change),
                        Cell::N(if with.is_empty() {
                            "-".to_string()
                        } else {
                            pct(lo, 2)
                        }),
                        Cell::N(if with.is_empty() {
                            "-".to_string()
                        } else {
                            pct(hi, 2)
                        }),
                        Cell::N(format!("{} of {}", with.len(), dates.len())),
                    ],
                )
            })
            .collect();
        Table {
            caption: format!(
                "Base correlation (%) through time, maturity {}: summary",
                c.maturity
            ),
            headers: &[
                "detachment",
                "first",
                "last",
                "change (points)",
                "lowest",
                "highest",
                "dates with a value",
            ],
            rows,
        }
        .write(h);
        if dates.len() <= FULL_HISTORY_TABLE {
            let mut headers: Vec<String> = vec!["date".to_string()];
            headers.extend(c.series.iter().map(|s| s.label(c.interp)));
            let header_refs: Vec<&str> = headers.iter().map(String::as_str).collect();
            let rows = dates
                .iter()
                .enumerate()
                .map(|(i, d)| {
                    let mut cells = vec![Cell::T(d.to_string())];
                    cells.extend(c.series.iter().map(|s| Cell::N(value(&s.points[i]))));
                    (None, cells)
                })
                .collect();
            Table {
                caption: format!("Base correlation (%) on each date, maturity {}", c.maturity),
                headers: &header_refs,
                rows,
            }
            .write(h);
        }
    }
    h.close("section");
}

/// Up to this many dates, the history's table lists every date.
pub const FULL_HISTORY_TABLE: usize = 60;

/// The page's sentence on the pool model.
fn pool_sentence(model: PoolModel) -> String {
    match model {
        PoolModel::LargePool => "Large homogeneous pool: the pool is taken as infinitely many names of equal size, each with the index curve's default probability and the same recovery; given the common factor, the pool's loss is certain.".to_string(),
        PoolModel::Names(n) => format!("A homogeneous pool of {n} names (--names {n}): each name of equal size, with the index curve's default probability and the same recovery; given the common factor the number of defaults is binomial (Hull and White 2004). The large pool is the quoting convention: correlations in a pool of {n} names differ from the quoted ones."),
    }
}

fn assumptions(h: &mut Html, charts: &Charts) {
    let recovery = pct(charts.implied.pool.recovery, 2);
    let interpolation = match charts.model {
        PoolModel::LargePool => "Across detachment the skew is interpolated linearly or by a monotone cubic (pchip), flat outside the knots, or through the base expected loss (expected-loss: a rising concave curve of E[min(L, K)] through the knots, whose correlation continues outside them); across maturity linearly in time. An interpolated skew need not be free of arbitrage: the surface checks say where it is not.".to_string(),
        PoolModel::Names(n) => format!("Across detachment the skew is interpolated linearly or by a monotone cubic (pchip), flat outside the knots; across maturity linearly in time. The expected-loss interpolation reads correlations back through the large pool and is not drawn in a pool of {n} names. An interpolated skew need not be free of arbitrage: the surface checks say where it is not."),
    };
    let real_world_pool = match charts.model {
        PoolModel::LargePool => String::new(),
        PoolModel::Names(n) => format!(" The real-world curve stays the large pool's, while the risk-neutral one is the pool of {n} names'."),
    };
    let items = [
        pool_sentence(charts.model),
        "Gaussian one-factor copula: a name defaults when a normal variable, made of one common factor and its own part, falls below a threshold set by its default probability; correlation is the common factor's share of that variable's variance.".to_string(),
        format!("Recovery is constant at {recovery}% for every name, whatever the state of the economy."),
        "The index hazard curve is piecewise constant, bootstrapped so that every index quote reprices; discounting is by the snapshot's zero rates, or a flat rate.".to_string(),
        "Compound correlation: one flat correlation on both bases of a tranche; a mezzanine tranche can have none or two. Base correlation: bootstrapped from the equity tranche up, per maturity; [0, 100%] has none.".to_string(),
        interpolation,
        format!("The exceedance curve is the tranchelet expected loss on a {}% grid, drawn at each tranchelet's middle; it approximates the probability that the pool loss to the protection end exceeds K.", short(crate::output::pct(charts.step))),
        format!("Real world: the Vasicek large-pool loss at the estimated annual PD compounded over the maturity's horizon, 1 - (1 - PD)^T, the estimated asset correlation, and loss given default one minus the index recovery. The grey band runs, at each K, from the lowest to the highest probability with PD and correlation each anywhere in its own 95% interval; it is not a joint confidence region. Short histories bias correlation estimates low, and the intervals are asymptotic.{real_world_pool}"),
        "Dates: step-in the day after the trade date, upfronts settle three business days later, coupons on the 20th of March, June, September and December and at maturity, accrual Act/360; business days are weekdays, with no holiday calendar.".to_string(),
    ];
    h.open("section", &[("id", "assumptions")]);
    h.el("h2", &[], "Model and assumptions");
    h.open("ul", &[]);
    for i in &items {
        h.el("li", &[], i);
    }
    h.close("ul");
    h.close("section");
}

/// The report page of `charts`' trade date.
///
/// # Errors
/// A chart value that is not finite (not expected).
pub fn page(charts: &Charts) -> Result<String> {
    let svgs: BTreeMap<String, String> = charts
        .svgs()?
        .into_iter()
        .map(|s| (s.file_name, s.svg))
        .collect();
    let svg_of = |name: String| svgs.get(&name).map(String::as_str);
    // the index check in the pool the date was solved in
    let d = ImpliedDate::with_options(
        &charts.implied,
        &ImpliedOptions {
            model: charts.model,
            ..ImpliedOptions::default()
        },
    );
    let in_pool = match charts.model {
        PoolModel::LargePool => String::new(),
        PoolModel::Names(n) => format!(" in a pool of {n} names"),
    };
    let mut h = Html::new();
    h.open("html", &[("lang", "en")]);
    h.open("head", &[]);
    h.void("meta", &[("charset", "utf-8")]);
    h.void(
        "meta",
        &[
            ("name", "viewport"),
            ("content", "width=device-width, initial-scale=1"),
        ],
    );
    h.el(
        "title",
        &[],
        &format!("Correlation skew report {} ({})", d.date, charts.source),
    );
    h.open("style", &[]).text(STYLE).close("style");
    h.close("head");
    h.open("body", &[]);
    h.el(
        "h1",
        &[],
        &format!("Correlation skew report, trade date {}", d.date),
    );
    let pool = match charts.model {
        PoolModel::LargePool => String::new(),
        PoolModel::Names(n) => {
            format!("; pool of {n} names (binomial defaults given the factor, not the large pool)")
        }
    };
    h.el(
        "p",
        &[("class", "meta")],
        &format!(
            "Snapshot {}; recovery {}%{pool}; skewbook {}.",
            charts.source,
            pct(d.recovery, 2),
            env!("CARGO_PKG_VERSION")
        ),
    );
    h.el("p", &[("class", "caution")], crate::CAUTION);
    let mut contents = vec![
        ("index", "Index curve"),
        ("implied", "Implied correlations and the skew"),
        ("quotes", "Model quote against correlation"),
        ("surface", "Surface checks and loss exceedance"),
        ("realworld", "Real-world estimates"),
    ];
    if charts.history_source.is_some() {
        contents.push(("history", "The skew through time"));
    }
    contents.extend([
        ("flags", "Flags on this page"),
        ("assumptions", "Model and assumptions"),
        ("caution", "Caution"),
    ]);
    h.open("nav", &[]).open("ol", &[]);
    for (id, name) in &contents {
        h.open("li", &[]);
        h.el("a", &[("href", &format!("#{id}"))], name);
        h.close("li");
    }
    h.close("ol").close("nav");

    h.open("section", &[("id", "index")]);
    h.el("h2", &[], "Index curve");
    index_table(&mut h, &d);
    index_check_table(&mut h, &d);
    h.close("section");

    h.open("section", &[("id", "implied")]);
    h.el("h2", &[], "Implied correlations and the skew");
    h.el(
        "p",
        &[],
        &format!("Compound correlation: every flat correlation at which the model reprices the tranche's quote{in_pool}. Base correlation: the correlation of the base tranche [0, detachment]{in_pool}, bootstrapped from the bottom. The charts mark the solved base correlations (knots) and draw the skew between them by each interpolation."),
    );
    for group in d
        .tranches
        .chunk_by(|a, b| a.tranche.maturity == b.tranche.maturity)
    {
        implied_table(&mut h, &group[0].tranche.maturity, group);
    }
    let skew_svgs: Vec<&str> = charts
        .skews
        .iter()
        .filter_map(|c| svg_of(c.file_name()))
        .collect();
    let without: Vec<String> = charts
        .implied
        .maturities
        .iter()
        .filter(|m| m.base_curve.knots.is_empty())
        .map(|m| m.base_curve.maturity.to_string())
        .collect();
    if !without.is_empty() {
        h.el(
            "p",
            &[],
            &format!(
                "No base correlation was solved at {}, so there is no skew to draw there.",
                without.join(", ")
            ),
        );
    }
    charts_block(&mut h, &skew_svgs);
    h.close("section");

    h.open("section", &[("id", "quotes")]);
    h.el("h2", &[], "Model quote against correlation");
    h.el(
        "p",
        &[],
        &format!("Each tranche priced{in_pool} at one flat correlation from 0.01% to 99.99%, against its market quote (the dashed line). Where the curve crosses the line is a compound correlation (circled): a curve that never reaches the line has none, and a mezzanine curve that rises and falls can cross it twice."),
    );
    let quote_svgs: Vec<&str> = charts
        .quotes
        .iter()
        .filter_map(|c| svg_of(c.file_name()))
        .collect();
    charts_block(&mut h, &quote_svgs);
    h.close("section");

    h.open("section", &[("id", "surface")]);
    h.el("h2", &[], "Surface checks and loss exceedance");
    h.el(
        "p",
        &[],
        "A skew is free of arbitrage in detachment when every tranchelet loses between 0% and 100% of its width and the exceedance curve never rises; in maturity when no base tranche loses less at a later maturity. Counts are grid points that break each rule.",
    );
    surface_table(&mut h, charts);
    exceedance_table(&mut h, charts);
    let ex_svgs: Vec<&str> = charts
        .exceedance
        .iter()
        .filter_map(|c| svg_of(c.file_name()))
        .collect();
    charts_block(&mut h, &ex_svgs);
    h.close("section");

    realworld_section(&mut h, charts);
    history_section(&mut h, charts, &svgs);

    let mut flags: BTreeMap<Flag, (usize, usize)> = BTreeMap::new();
    for t in &d.tranches {
        for f in &t.flags {
            flags.entry(*f).or_default().0 += 1;
        }
    }
    for (f, n) in &charts.history_flags {
        flags.entry(*f).or_default().1 += n;
    }
    h.open("section", &[("id", "flags")]);
    h.el("h2", &[], "Flags on this page");
    if flags.is_empty() {
        h.el("p", &[], "No tranche carries a flag.");
    } else {
        h.el(
            "p",
            &[],
            "Flags are results, not errors: a flagged tranche is still shown.",
        );
        h.open("dl", &[]);
        for (f, (here, history)) in &flags {
            h.el("dt", &[("id", &format!("flag-{}", f.name()))], f.name());
            let mut count = Vec::new();
            if *here > 0 {
                count.push(format!("{here} tranche(s) on {}", d.date));
            }
            if *history > 0 {
                count.push(format!("{history} tranche-date(s) in the history"));
            }
            h.el(
                "dd",
                &[],
                &format!("{} ({}).", capitalised(f.meaning()), count.join(", ")),
            );
        }
        h.close("dl");
    }
    h.close("section");

    assumptions(&mut h, charts);

    h.open("section", &[("id", "caution")]);
    h.el("h2", &[], "Caution");
    h.el("p", &[], crate::CAUTION);
    let pool_words = match charts.model {
        PoolModel::LargePool => "the large homogeneous pool".to_string(),
        PoolModel::Names(n) => format!("a homogeneous pool of {n} names"),
    };
    h.el(
        "p",
        &[],
        &format!("The assumptions above are {pool_words}, the Gaussian one-factor copula, constant recovery and the conventions stated; the real-world side adds the Vasicek model of default rates and whatever the default history leaves out."),
    );
    h.close("section");
    h.close("body");
    h.close("html");
    let html = h.finish()?;
    if let Some(at) = non_finite_shown(&html) {
        return Err(crate::Error::msg(
            crate::ErrorKind::InvalidInput,
            format!(
                "HTML report: a number that is not finite would be shown near \"{}\" (a bug: please report it with the command and its input)",
                &html[at.saturating_sub(40)..(at + 10).min(html.len())]
            ),
        ));
    }
    Ok(html)
}

/// Where the page shows `NaN` or `inf` as a word of its own (the output
/// guard's rule for the other printers: never a number that is not finite).
fn non_finite_shown(html: &str) -> Option<usize> {
    let bytes = html.as_bytes();
    let letter = |i: Option<usize>| {
        i.and_then(|i| bytes.get(i))
            .is_some_and(|b| b.is_ascii_alphabetic())
    };
    ["NaN", "inf"].iter().find_map(|word| {
        html.match_indices(word)
            .map(|(i, _)| i)
            .find(|&i| !letter(i.checked_sub(1)) && !letter(Some(i + word.len())))
    })
}

fn capitalised(s: &str) -> String {
    let mut c = s.chars();
    match c.next() {
        Some(f) => f.to_uppercase().chain(c).collect(),
        None => String::new(),
    }
}

#[cfg(test)]
mod tests {
    use super::non_finite_shown;

    #[test]
    fn the_guard_finds_nan_and_infinity_but_not_words() {
        assert_eq!(non_finite_shown("<td>NaN</td>"), Some(4));
        assert!(non_finite_shown("<td>-inf</td>").is_some());
        assert!(non_finite_shown("the probit of 0 is infinite; information").is_none());
    }
}
