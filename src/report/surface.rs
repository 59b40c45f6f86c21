//! `skewbook surface`: the correlation surface of each date, its base
//! expected loss and exceedance curve on a detachment grid, and the
//! arbitrage diagnostics.
//!
//! # JSON schema
//! The contract's "Output of value and surface (JSON)", `surface`: an array
//! with one object per date:
//! ```text
//! { "date", "interp", "step_pct", "recovery",
//!   "maturities": [ { "maturity", "protection_end_pd",
//!       "knots": [ {"detach_pct", "base_correlation"} ],
//!       "grid":  [ {"k_pct", "base_correlation" (null at 0 and 100),
//!                   "base_expected_loss", "tranchelet_loss" (null at the last point)} ],
//!       "violations": {"outside_unit", "increasing", "maturity_order"},
//!       "worst": {"outside_unit": null | {"k_from_pct", "k_to_pct", "tranchelet_loss"},
//!                 "increasing": null | {"k_from_pct", "k_to_pct", "rise"},
//!                 "maturity_order": null | {"earlier_maturity", "k_pct", "excess"}} } ] }
//! ```
//!
//! Under `--interp expected-loss` (and only then, so `linear` and `pchip`
//! print exactly what the contract lists) each maturity adds:
//! ```text
//!   "admissible": bool,   whether the knots admit a rising concave base expected loss
//!   "inadmissible": [ {"kind": "slope_rises" | "slope_outside_unit", "k_from_pct",
//!                      "k_mid_pct" (null for slope_outside_unit), "k_to_pct",
//!                      "lower_slope" (null for slope_outside_unit), "upper_slope",
//!                      "message"} ],   empty when admissible
//!   "adjusted_knots": null when admissible, else the knots the repair moved:
//!       [ {"detach_pct", "base_correlation", "base_expected_loss",
//!          "adjusted_base_expected_loss", "adjusted_base_correlation", "unattainable"} ]
//!   "repricing": [ {"attach_pct", "detach_pct", "quote_kind", "reprice_error",
//!                   "base_curve_reprice_error"} ]
//! ```
//! and each knot adds `base_expected_loss` (at its calibrated correlation,
//! fraction of pool notional), `quote_kind` and `reprice_error` (of the
//! quoted tranche that detaches there). A slope is base expected loss per
//! unit of detachment (a probability); `reprice_error` is model quote off
//! the surface minus the quote, in the quote's unit (`quote_kind`:
//! `spread_bp` in bp, `upfront_pct` in percent), `null` when the model has
//! no quote; `base_curve_reprice_error` is the same off the calibrated
//! base curve (as `implied` reports it: rounding, or for the top tranche,
//! which has no correlation of its own, the quote's rounding), so the
//! repair costs the difference; `lower_slope` and `upper_slope` are the two interval slopes
//! compared, `upper_slope` the one that rises (or lies outside [0, 1]).
//!
//! With `--names N` each date adds `"model": "names_N"`: the knots solved
//! and the base expected loss g computed in a pool of N names (absent for
//! the large pool, the default). `--interp expected-loss` reads
//! correlations back through the large pool and is refused with `--names`.

use super::pools_for_all_dates;
use crate::curve::MarketOptions;
use crate::error::Result;
use crate::loss::PoolModel;
use crate::market::Snapshot;
use crate::math::interp::Interp;
use crate::output::{csv_num, fixed, fixed_or, pct, sci, wrap, Report, Table};
use crate::solve::chain::implied_date_with;
use crate::surface::diagnostics::{self, diagnose_with, MaturityDiagnostics};
use crate::surface::expected_loss::{BaseLossCurve, Inadmissible};
use crate::surface::reprice::{reprice_quotes, QuoteRepricing};
use crate::surface::Surface;
use chrono::NaiveDate;
use serde::Serialize;

/// A knot in the output.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct KnotOut {
    /// Detachment, percent.
    pub detach_pct: f64,
    /// Base correlation, fraction.
    pub base_correlation: f64,
    /// `expected-loss` only: base expected loss at the knot's correlation,
    /// fraction of pool notional.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub base_expected_loss: Option<f64>,
    /// `expected-loss` only: the quote kind of the tranche detaching here.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub quote_kind: Option<&'static str>,
    /// `expected-loss` only: that tranche's repricing error off the
    /// surface, in its quote's unit (`null` when the model has no quote).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub reprice_error: Option<Option<f64>>,
}

/// Why a maturity's knots are not admissible (one violation).
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct InadmissibleOut {
    /// `slope_rises` or `slope_outside_unit`.
    pub kind: &'static str,
    /// Lower detachment, percent.
    pub k_from_pct: f64,
    /// Middle detachment, percent (`null` for `slope_outside_unit`).
    pub k_mid_pct: Option<f64>,
    /// Upper detachment, percent (may be 1 - R, the largest loss).
    pub k_to_pct: f64,
    /// Slope of the lower interval (`null` for `slope_outside_unit`).
    pub lower_slope: Option<f64>,
    /// Slope of the upper interval (the offending one).
    pub upper_slope: f64,
    /// The same in words.
    pub message: String,
}

/// A knot moved to the nearest admissible value.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct AdjustedKnotOut {
    /// Detachment, percent.
    pub detach_pct: f64,
    /// The calibrated base correlation.
    pub base_correlation: f64,
    /// Base expected loss at it, fraction of pool notional.
    pub base_expected_loss: f64,
    /// The nearest admissible base expected loss.
    pub adjusted_base_expected_loss: f64,
    /// The correlation that gives it.
    pub adjusted_base_correlation: f64,
    /// Whether no correlation in [1e-4, 0.9999] gives it (the nearer end is used).
    pub unattainable: bool,
}

/// A quoted tranche repriced off the surface.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct RepricingOut {
    /// Attachment, percent.
    pub attach_pct: f64,
    /// Detachment, percent.
    pub detach_pct: f64,
    /// `spread_bp` or `upfront_pct`.
    pub quote_kind: &'static str,
    /// Model quote minus quote, in the quote's unit; `null` when there is
    /// no model quote.
    pub reprice_error: Option<f64>,
    /// The same off the calibrated base curve.
    pub base_curve_reprice_error: Option<f64>,
}

/// A grid point in the output.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct GridOut {
    /// K_j, percent.
    pub k_pct: f64,
    /// rho(K_j, M); null at 0 and 100%.
    pub base_correlation: Option<f64>,
    /// g(K_j), fraction of pool notional.
    pub base_expected_loss: f64,
    /// e_j, fraction of the tranchelet's width; null at the last point.
    pub tranchelet_loss: Option<f64>,
}

/// Violation counts.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct CountsOut {
    /// Tranchelet losses outside [0, 1].
    pub outside_unit: usize,
    /// Rises of the exceedance curve.
    pub increasing: usize,
    /// Grid points where the earlier maturity loses more.
    pub maturity_order: usize,
}

/// The worst tranchelet loss outside [0, 1].
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct OutsideOut {
    /// K_j, percent.
    pub k_from_pct: f64,
    /// K_(j+1), percent.
    pub k_to_pct: f64,
    /// e_j.
    pub tranchelet_loss: f64,
}

/// The worst rise of the exceedance curve.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct IncreasingOut {
    /// K_j, percent.
    pub k_from_pct: f64,
    /// K_(j+2), percent.
    pub k_to_pct: f64,
    /// e_(j+1) - e_j.
    pub rise: f64,
}

/// The worst maturity-order violation.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct OrderOut {
    /// M_a.
    pub earlier_maturity: String,
    /// K_j, percent.
    pub k_pct: f64,
    /// g_a(K_j) - g_b(K_j).
    pub excess: f64,
}

/// The worst of each kind.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct WorstOut {
    /// Worst tranchelet loss outside [0, 1].
    pub outside_unit: Option<OutsideOut>,
    /// Worst rise.
    pub increasing: Option<IncreasingOut>,
    /// Worst maturity-order violation.
    pub maturity_order: Option<OrderOut>,
}

/// One maturity of the surface.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct SurfaceMaturity {
    /// Maturity, ISO 8601.
    pub maturity: String,
    /// Index PD at maturity + 1 day.
    pub protection_end_pd: f64,
    /// Knots, increasing detachment.
    pub knots: Vec<KnotOut>,
    /// The grid.
    pub grid: Vec<GridOut>,
    /// Counts per kind.
    pub violations: CountsOut,
    /// Worst per kind.
    pub worst: WorstOut,
    /// `expected-loss` only: whether the knots are admissible.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub admissible: Option<bool>,
    /// `expected-loss` only: why not.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub inadmissible: Option<Vec<InadmissibleOut>>,
    /// `expected-loss` only: `null` when admissible, else the knots moved.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub adjusted_knots: Option<Option<Vec<AdjustedKnotOut>>>,
    /// `expected-loss` only: every quoted tranche repriced off the surface.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub repricing: Option<Vec<RepricingOut>>,
}

impl From<&MaturityDiagnostics> for SurfaceMaturity {
    fn from(m: &MaturityDiagnostics) -> Self {
        SurfaceMaturity {
            maturity: m.maturity.to_string(),
            protection_end_pd: m.protection_end_pd,
            knots: m
                .knots
                .iter()
                .map(|k| KnotOut {
                    detach_pct: pct(k.detach),
                    base_correlation: k.rho,
                    base_expected_loss: None,
                    quote_kind: None,
                    reprice_error: None,
                })
                .collect(),
            grid: m
                .grid
                .iter()
                .map(|g| GridOut {
                    k_pct: pct(g.k),
                    base_correlation: g.rho,
                    base_expected_loss: g.base_expected_loss,
                    tranchelet_loss: g.tranchelet_loss,
                })
                .collect(),
            violations: CountsOut {
                outside_unit: m.counts.outside_unit,
                increasing: m.counts.increasing,
                maturity_order: m.counts.maturity_order,
            },
            worst: WorstOut {
                outside_unit: m.worst_outside_unit.map(|w| OutsideOut {
                    k_from_pct: pct(w.k_from),
                    k_to_pct: pct(w.k_to),
                    tranchelet_loss: w.tranchelet_loss,
                }),
                increasing: m.worst_increasing.map(|w| IncreasingOut {
                    k_from_pct: pct(w.k_from),
                    k_to_pct: pct(w.k_to),
                    rise: w.rise,
                }),
                maturity_order: m.worst_maturity_order.map(|w| OrderOut {
                    earlier_maturity: w.earlier_maturity.to_string(),
                    k_pct: pct(w.k),
                    excess: w.excess,
                }),
            },
            admissible: None,
            inadmissible: None,
            adjusted_knots: None,
            repricing: None,
        }
    }
}

impl SurfaceMaturity {
    /// Adds the `expected-loss` fields: the maturity's base expected-loss
    /// curve and its quoted tranches repriced off the surface.
    fn add_expected_loss(&mut self, curve: &BaseLossCurve, repriced: &[&QuoteRepricing]) {
        for (k, g) in self.knots.iter_mut().zip(&curve.knot_losses) {
            k.base_expected_loss = Some(*g);
            if let Some(r) = repriced
                .iter()
                .find(|r| (pct(r.tranche.detach()) - k.detach_pct).abs() < 1e-9)
            {
                k.quote_kind = Some(r.quote.kind_name());
                k.reprice_error = Some(r.error);
            }
        }
        self.admissible = Some(curve.is_admissible());
        self.inadmissible = Some(curve.inadmissible.iter().map(inadmissible_out).collect());
        self.adjusted_knots = Some((!curve.is_admissible()).then(|| {
            curve
                .adjusted
                .iter()
                .map(|a| AdjustedKnotOut {
                    detach_pct: pct(a.detach),
                    base_correlation: a.rho,
                    base_expected_loss: a.loss,
                    adjusted_base_expected_loss: a.adjusted_loss,
                    adjusted_base_correlation: a.adjusted_rho.rho,
                    unattainable: a.adjusted_rho.unattainable(),
                })
                .collect()
        }));
        self.repricing = Some(
            repriced
                .iter()
                .map(|r| RepricingOut {
                    attach_pct: pct(r.tranche.attach()),
                    detach_pct: pct(r.tranche.detach()),
                    quote_kind: r.quote.kind_name(),
                    reprice_error: r.error,
                    base_curve_reprice_error: r.chain_error,
                })
                .collect(),
        );
    }
}

fn inadmissible_out(v: &Inadmissible) -> InadmissibleOut {
    let message = v.to_string();
    match *v {
        Inadmissible::SlopeOutsideUnit { from, to, slope } => InadmissibleOut {
            kind: "slope_outside_unit",
            k_from_pct: pct(from),
            k_mid_pct: None,
            k_to_pct: pct(to),
            lower_slope: None,
            upper_slope: slope,
            message,
        },
        Inadmissible::SlopeRises {
            from,
            mid,
            to,
            lower,
            upper,
        } => InadmissibleOut {
            kind: "slope_rises",
            k_from_pct: pct(from),
            k_mid_pct: Some(pct(mid)),
            k_to_pct: pct(to),
            lower_slope: Some(lower),
            upper_slope: upper,
            message,
        },
    }
}

/// One date of the surface report.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct SurfaceDate {
    /// Trade date.
    pub date: String,
    /// `linear`, `pchip` or `expected-loss`.
    pub interp: &'static str,
    /// Grid step h, percent.
    pub step_pct: f64,
    /// Index recovery, fraction.
    pub recovery: f64,
    /// Maturities with knots, increasing.
    pub maturities: Vec<SurfaceMaturity>,
    /// `names_N` for a pool of N names; absent for the large pool.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub model: Option<String>,
}

/// The whole `surface` report.
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(transparent)]
pub struct SurfaceReport {
    /// Dates in order.
    pub dates: Vec<SurfaceDate>,
}

/// The surface of one date off its implied base correlations.
///
/// # Errors
/// Curve and pricing errors of the date.
pub fn surface_of_date(
    md: &crate::market::MarketDate,
    pool: crate::curve::Pool,
    interp: Interp,
) -> Result<(Surface, crate::curve::Pool)> {
    surface_of_date_with(md, pool, interp, PoolModel::LargePool)
}

/// [`surface_of_date`] with the knots solved in `model`.
///
/// # Errors
/// As [`surface_of_date`]; [`crate::ErrorKind::Usage`] for
/// `expected-loss` in a pool of n names.
pub fn surface_of_date_with(
    md: &crate::market::MarketDate,
    pool: crate::curve::Pool,
    interp: Interp,
    model: PoolModel,
) -> Result<(Surface, crate::curve::Pool)> {
    crate::surface::check_interp_in_model(interp, model)?;
    let implied = implied_date_with(md, pool, model)?;
    let surface = Surface::from_implied(&implied, interp)?;
    Ok((surface, implied.pool))
}

/// The surface report of every date of `snapshot` (or only `only`).
///
/// # Errors
/// [`crate::ErrorKind::Usage`] for a step that does not divide 100%, or a
/// date not in the file; curve errors of any date.
pub fn build(
    snapshot: &Snapshot,
    opts: &MarketOptions,
    interp: Interp,
    step: f64,
    only: Option<NaiveDate>,
) -> Result<SurfaceReport> {
    build_with(snapshot, opts, interp, step, only, PoolModel::LargePool)
}

/// [`build`] in a pool model: knots and base expected loss in the large
/// pool, or in a pool of n names.
///
/// # Errors
/// As [`build`]; [`crate::ErrorKind::Usage`] for `expected-loss` in a pool
/// of n names.
pub fn build_with(
    snapshot: &Snapshot,
    opts: &MarketOptions,
    interp: Interp,
    step: f64,
    only: Option<NaiveDate>,
    model: PoolModel,
) -> Result<SurfaceReport> {
    crate::surface::check_interp_in_model(interp, model)?;
    let n = crate::surface::diagnostics::grid_intervals(step)?;
    let snapshot = super::select_date(snapshot, only)?;
    let mut dates = Vec::new();
    for (md, pool) in pools_for_all_dates(&snapshot, opts)? {
        let implied = implied_date_with(&md, pool, model)?;
        let surface = Surface::from_implied(&implied, interp)?;
        let pool = &implied.pool;
        let diags = diagnose_with(&surface, pool, n, model)?;
        let mut maturities: Vec<SurfaceMaturity> =
            diags.iter().map(SurfaceMaturity::from).collect();
        if interp == Interp::ExpectedLoss {
            let repriced = reprice_quotes(&implied, &surface)?;
            for (out, m) in maturities.iter_mut().zip(&surface.maturities) {
                if let Some(curve) = m.loss_curve() {
                    let mine: Vec<&QuoteRepricing> = repriced
                        .iter()
                        .filter(|r| r.maturity == m.maturity)
                        .collect();
                    out.add_expected_loss(curve, &mine);
                }
            }
        }
        dates.push(SurfaceDate {
            date: md.date.to_string(),
            interp: interp.name(),
            step_pct: step * 100.0,
            recovery: pool.recovery,
            maturities,
            model: super::price::model_field(model),
        });
    }
    Ok(SurfaceReport { dates })
}

/// A grid point's two checks, as the diagnostics count them: its
/// tranchelet loss `e` outside [0, 1], and the exceedance curve rising
/// from it to the `next`.
fn checks(e: Option<f64>, next: Option<f64>) -> (bool, bool) {
    let bad_unit = e.is_some_and(diagnostics::outside_unit);
    let rising = matches!((e, next), (Some(a), Some(b)) if diagnostics::rises(a, b));
    (bad_unit, rising)
}

/// The table's notes for the `expected-loss` fields of a maturity.
fn expected_loss_notes(m: &SurfaceMaturity, notes: &mut Vec<String>) {
    let Some(inadmissible) = &m.inadmissible else {
        return;
    };
    for v in inadmissible {
        notes.extend(wrap(&format!("knots not admissible: {}", v.message), 79, 4));
    }
    if let Some(Some(adjusted)) = &m.adjusted_knots {
        let moved: Vec<String> = adjusted
            .iter()
            .map(|a| {
                format!(
                    "{}% base EL {}% -> {}%, base {}% -> {}%{}",
                    a.detach_pct,
                    fixed(a.base_expected_loss * 100.0, 5),
                    fixed(a.adjusted_base_expected_loss * 100.0, 5),
                    fixed(a.base_correlation * 100.0, 2),
                    fixed(a.adjusted_base_correlation * 100.0, 2),
                    if a.unattainable {
                        " (out of reach)"
                    } else {
                        ""
                    }
                )
            })
            .collect();
        notes.extend(wrap(
            &format!(
                "moved to the nearest admissible values (isotonic slopes): {}",
                moved.join("; ")
            ),
            79,
            4,
        ));
    }
    if let Some(repricing) = &m.repricing {
        let errors: Vec<String> = repricing
            .iter()
            .map(|r| {
                let unit = if r.quote_kind == "spread_bp" {
                    "bp"
                } else {
                    "%"
                };
                format!(
                    "{}-{}% {}{unit}",
                    r.attach_pct,
                    r.detach_pct,
                    r.reprice_error.map_or("-".to_string(), |e| sci(e, 2))
                )
            })
            .collect();
        notes.extend(wrap(
            &format!("repricing errors off the surface: {}", errors.join("  ")),
            79,
            4,
        ));
    }
}

impl Report for SurfaceReport {
    fn sections(&self) -> Vec<Table> {
        let mut out = Vec::new();
        for d in &self.dates {
            if d.maturities.is_empty() {
                let mut t = Table::new(&["maturity"]).with_title(format!(
                    "{}  surface ({}): no base correlation on this date{}",
                    d.date,
                    d.interp,
                    super::price::model_title(&d.model)
                ));
                t.notes
                    .push("no maturity has a knot: nothing can be priced off the skew".to_string());
                out.push(t);
            }
            for m in &d.maturities {
                let mut t = Table::new(&["K%", "base%", "base EL%", "tranchelet%", "check"])
                    .with_title(format!(
                        "{}  surface maturing {} ({}, step {}%, PD {}%){}",
                        d.date,
                        m.maturity,
                        d.interp,
                        d.step_pct,
                        fixed(m.protection_end_pd * 100.0, 3),
                        super::price::model_title(&d.model)
                    ));
                let knots: Vec<String> = m
                    .knots
                    .iter()
                    .map(|k| format!("{}%:{}", k.detach_pct, fixed(k.base_correlation * 100.0, 2)))
                    .collect();
                for (j, g) in m.grid.iter().enumerate() {
                    let e = g.tranchelet_loss;
                    let next = m.grid.get(j + 1).and_then(|n| n.tranchelet_loss);
                    let (bad_unit, rising) = checks(e, next);
                    let mut check = Vec::new();
                    if bad_unit {
                        check.push("outside [0,1]");
                    }
                    if rising {
                        check.push("rises next");
                    }
                    t.push(vec![
                        fixed(g.k_pct, 2),
                        fixed_or(g.base_correlation.map(|r| r * 100.0), 2, "-"),
                        fixed(g.base_expected_loss * 100.0, 5),
                        fixed_or(e.map(|e| e * 100.0), 3, "-"),
                        check.join(","),
                    ]);
                }
                t.notes
                    .push(format!("knots (detachment:base%): {}", knots.join("  ")));
                t.notes.push(format!(
                    "violations: outside [0,1] {}, rising {}, maturity order {}",
                    m.violations.outside_unit, m.violations.increasing, m.violations.maturity_order
                ));
                if let Some(w) = &m.worst.outside_unit {
                    t.notes.push(format!(
                        "worst outside [0,1]: {}-{}% tranchelet loss {}",
                        w.k_from_pct,
                        w.k_to_pct,
                        sci(w.tranchelet_loss, 3)
                    ));
                }
                if let Some(w) = &m.worst.increasing {
                    t.notes.push(format!(
                        "worst rise: {}-{}% by {}",
                        w.k_from_pct,
                        w.k_to_pct,
                        sci(w.rise, 3)
                    ));
                }
                if let Some(w) = &m.worst.maturity_order {
                    t.notes.push(format!(
                        "worst maturity order: at {}% base EL exceeds {}'s by {} of pool",
                        w.k_pct,
                        w.earlier_maturity,
                        sci(w.excess, 3)
                    ));
                }
                expected_loss_notes(m, &mut t.notes);
                out.push(t);
            }
        }
        out
    }

    fn csv(&self) -> Table {
        let mut headers = vec![
            "date",
            "interp",
            "maturity",
            "protection_end_pd",
            "k_pct",
            "is_knot",
            "base_correlation",
            "base_expected_loss",
            "tranchelet_loss",
            "outside_unit",
            "increasing",
        ];
        let with_model = self.dates.iter().any(|d| d.model.is_some());
        if with_model {
            headers.push("model");
        }
        let mut t = Table::new(&headers);
        for d in &self.dates {
            for m in &d.maturities {
                for (j, g) in m.grid.iter().enumerate() {
                    let e = g.tranchelet_loss;
                    let next = m.grid.get(j + 1).and_then(|n| n.tranchelet_loss);
                    let flag = |b: bool| if b { "1" } else { "0" }.to_string();
                    let mut row = vec![
                        d.date.clone(),
                        d.interp.to_string(),
                        m.maturity.clone(),
                        csv_num(Some(m.protection_end_pd)),
                        csv_num(Some(g.k_pct)),
                        flag(
                            m.knots
                                .iter()
                                .any(|k| (k.detach_pct - g.k_pct).abs() < 1e-9),
                        ),
                        csv_num(g.base_correlation),
                        csv_num(Some(g.base_expected_loss)),
                        csv_num(e),
                        flag(checks(e, next).0),
                        flag(checks(e, next).1),
                    ];
                    if with_model {
                        row.push(d.model.clone().unwrap_or_default());
                    }
                    t.push(row);
                }
            }
        }
        t
    }
}
