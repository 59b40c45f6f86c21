//! `skewbook implied`: compound and base correlation implied by the quotes.
//!
//! # JSON schema
//! An array with one object per trade date:
//! ```text
//! { "date": "2026-06-19", "recovery": 0.4,
//!   "index": [ ... ],                  the curve report's pillars (see report::curve)
//!   "tranches": [ {
//!       "maturity": "2031-06-20", "attach_pct": 3.0, "detach_pct": 7.0,
//!       "quote_kind": "spread_bp", "quote": 310.0, "coupon_bp": null,
//!       "compound_correlation": [0.12, 0.81],  every root in [1e-4, 0.9999], fractions, ascending
//!       "compound_range": [120.4, 290.1],      lowest and highest model quote over that range
//!                                              (file unit); exact for upfront quotes, from the
//!                                              scan for spread quotes
//!       "base_correlation": 0.25,              at the detachment, fraction; null when none
//!       "base_note": null,                     why base_correlation is null, else null
//!       "base_reprice_error": 1e-11,           quote repriced off the base curve minus the
//!                                              quote (file unit); null without base correlations
//!       "expected_loss_pct": 12.3,             expected tranche loss at the protection end off
//!                                              the base curve, % of tranche notional; null without
//!       "flags": ["two_compound_roots"]
//!   } ] }
//! ```
//!
//! # Flags
//! - `no_compound_root`: no correlation reaches the quote; see `compound_range`;
//! - `two_compound_roots`: the quote is reached at two correlations;
//! - `compound_tangent`: a root is a tangency (the quote equals the model's extremum);
//! - `base_quote_above_range` / `base_quote_below_range`: no base correlation
//!   reaches the quote, which lies above or below the model's range;
//! - `base_chain_broken`: a tranche below has no base correlation;
//! - `bounds_do_not_tile`: the maturity's tranches do not tile from 0;
//! - `top_tranche`: the tranche ends at 100%, and [0, 100%] does not depend
//!   on correlation, so it has no base correlation; its repricing uses the
//!   base correlation at its attachment;
//! - `no_correlation_dependence`: the tranche is [0, 100%], the whole pool:
//!   it has neither compound nor base correlation (not counted as unsolved);
//!   `compound_range` is its one model quote and `base_reprice_error` the
//!   gap between that and the quote.
//!
//! A tranche is *unsolved* (exit status 1) when it has no compound root or,
//! below the top, no base correlation.

use super::curve::{quote_label, CurvePillar};
use super::price::bounds_label;
use super::{all_or_every_error, QuotedTranche};
use crate::curve::{MarketOptions, Pool};
use crate::error::Result;
use crate::flags::Flag;
use crate::market::Snapshot;
use crate::output::{csv_num, fixed, fixed_or, pct, sci, wrap, Report, Table};
use crate::solve::chain::{implied_date, BaseOutcome, DateImplied, TrancheImplied};
use crate::solve::compound::{RHO_MAX, RHO_MIN};
use rayon::prelude::*;
use serde::Serialize;

/// One tranche's implied correlations.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct ImpliedTranche {
    /// Which tranche and its quote.
    #[serde(flatten)]
    pub tranche: QuotedTranche,
    /// Every compound correlation, ascending.
    pub compound_correlation: Vec<f64>,
    /// Lowest and highest model quote over the search range, file unit;
    /// null when the model has no quote anywhere in the range.
    pub compound_range: Option<[f64; 2]>,
    /// Base correlation at the detachment.
    pub base_correlation: Option<f64>,
    /// Why there is no base correlation.
    pub base_note: Option<String>,
    /// Repriced quote off the base curve minus the quote, file unit.
    pub base_reprice_error: Option<f64>,
    /// Expected tranche loss off the base curve, percent of tranche notional.
    pub expected_loss_pct: Option<f64>,
    /// Flags (see the module docs).
    pub flags: Vec<Flag>,
    /// Whether the quote has a solution missing (not printed).
    #[serde(skip)]
    pub unsolved: bool,
}

impl ImpliedTranche {
    /// Whether this quote has a solution missing (drives exit status 1).
    pub fn unsolved(&self) -> bool {
        self.unsolved
    }

    /// The report row of one tranche's implied data.
    pub fn from_implied(t: &TrancheImplied) -> Self {
        let label = |a: f64, d: f64| bounds_label(pct(a), pct(d));
        let quote_text = fixed(t.quote.quote.in_file_unit(), 4);
        let range_text =
            |q: Option<f64>| q.map_or("no quote (no annuity left)".to_string(), |q| fixed(q, 4));
        let base_note = match &t.base {
            BaseOutcome::Solved { .. } => None,
            BaseOutcome::Top { .. } | BaseOutcome::WholePool => {
                Some("[0, 100%] does not depend on correlation".to_string())
            }
            BaseOutcome::NotTiled => Some(
                "the tranches of this maturity do not tile the capital structure from 0%"
                    .to_string(),
            ),
            BaseOutcome::NoSolution { range, .. } => Some(format!(
                "no base correlation in [{RHO_MIN}, {RHO_MAX}] reaches the quote {quote_text}: the model gives {} at rho {RHO_MIN} and {} at rho {RHO_MAX}",
                range_text(range.0),
                range_text(range.1)
            )),
            BaseOutcome::SolverFailed { bracket } => Some(format!(
                "a base correlation lies between {} and {} but the solver stopped without converging",
                fixed(bracket.0, 6),
                fixed(bracket.1, 6)
            )),
            BaseOutcome::ChainBroken { at } => Some(format!(
                "tranche {} below has no base correlation",
                label(at.attach(), at.detach())
            )),
        };
        let compound_range = match (&t.compound, t.whole_pool_quote) {
            (Some(c), _) => c.attainable.map(|(lo, hi)| [lo, hi]),
            (None, q) => Some(q.map_or([0.0, 0.0], |q| [q, q])),
        };
        ImpliedTranche {
            tranche: QuotedTranche::from(&t.quote),
            compound_correlation: t
                .compound
                .as_ref()
                .map_or(Vec::new(), |c| c.roots.iter().map(|r| r.value).collect()),
            compound_range,
            base_correlation: t.base_correlation(),
            base_note,
            base_reprice_error: t.repriced.and_then(|r| r.error),
            expected_loss_pct: t.repriced.map(|r| r.expected_loss * 100.0),
            flags: t.flags.clone(),
            unsolved: t.unsolved(),
        }
    }
}

/// One date of the implied report.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct ImpliedDate {
    /// Trade date.
    pub date: String,
    /// Recovery (fraction).
    pub recovery: f64,
    /// The bootstrapped index curve.
    pub index: Vec<CurvePillar>,
    /// Tranches by maturity then attachment.
    pub tranches: Vec<ImpliedTranche>,
}

impl ImpliedDate {
    /// The report of one date's implied data.
    pub fn from_implied(d: &DateImplied) -> Self {
        ImpliedDate {
            date: d.pool.date.to_string(),
            recovery: d.pool.recovery,
            index: d.pool.pillars.iter().map(CurvePillar::from).collect(),
            tranches: d.tranches().map(ImpliedTranche::from_implied).collect(),
        }
    }
}

/// The whole `implied` report.
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(transparent)]
pub struct ImpliedReport {
    /// Dates in order.
    pub dates: Vec<ImpliedDate>,
}

impl ImpliedReport {
    /// Whether any quote has no solution.
    pub fn any_unsolved(&self) -> bool {
        self.dates
            .iter()
            .flat_map(|d| &d.tranches)
            .any(ImpliedTranche::unsolved)
    }
}

/// Implied correlations of every tranche of every date.
///
/// Dates run in parallel (rayon, on the current thread pool); the report
/// is in date order and the same, to the byte, whatever the number of
/// threads.
///
/// # Errors
/// Curve errors of any date (unfittable index quotes, bad zero pillars),
/// all of them together; else the first date's pricing error.
/// Tranches with no solution are not errors: they are flagged in the report.
pub fn build(snapshot: &Snapshot, opts: &MarketOptions) -> Result<ImpliedReport> {
    build_with_progress(snapshot, opts, &|| {})
}

/// [`build`], calling `done` once as each date is finished (from whichever
/// thread finished it), so a front end can show progress. The library
/// prints nothing itself.
///
/// # Errors
/// As [`build`].
pub fn build_with_progress(
    snapshot: &Snapshot,
    opts: &MarketOptions,
    done: &(dyn Fn() + Sync),
) -> Result<ImpliedReport> {
    // Each date on its own: bootstrap, then every compound root and the
    // base chain. A curve error is kept apart from a pricing error so that
    // the errors come out as they did date by date: every curve error first.
    let per_date: Vec<Result<Result<ImpliedDate>>> = snapshot
        .dates
        .par_iter()
        .map(|md| {
            let out = Pool::build(md, opts, &snapshot.path)
                .map(|pool| implied_date(md, pool).map(|d| ImpliedDate::from_implied(&d)));
            done();
            out
        })
        .collect();
    let priced = all_or_every_error(per_date)?;
    let dates = priced.into_iter().collect::<Result<Vec<_>>>()?;
    Ok(ImpliedReport { dates })
}

fn pct_list(xs: &[f64]) -> String {
    if xs.is_empty() {
        "none".to_string()
    } else {
        xs.iter()
            .map(|x| fixed(x * 100.0, 2))
            .collect::<Vec<_>>()
            .join(" ")
    }
}

impl Report for ImpliedReport {
    fn sections(&self) -> Vec<Table> {
        let mut out = Vec::new();
        for d in &self.dates {
            let curve = super::curve::CurveReport {
                dates: vec![super::curve::CurveDate {
                    date: d.date.clone(),
                    recovery: d.recovery,
                    index: d.index.clone(),
                }],
            };
            out.extend(curve.sections());
            let mut i = 0;
            while i < d.tranches.len() {
                let m = d.tranches[i].tranche.maturity.clone();
                let group: Vec<&ImpliedTranche> = d.tranches[i..]
                    .iter()
                    .take_while(|t| t.tranche.maturity == m)
                    .collect();
                i += group.len();
                let mut t = Table::new(&[
                    "tranche",
                    "quote",
                    "compound%",
                    "base%",
                    "EL%",
                    "reprice",
                    "flags",
                ])
                .with_title(format!("{}  tranches maturing {m}", d.date));
                for r in group {
                    t.push(vec![
                        bounds_label(r.tranche.attach_pct, r.tranche.detach_pct),
                        quote_label(r.tranche.quote_kind, r.tranche.quote, r.tranche.coupon_bp),
                        pct_list(&r.compound_correlation),
                        fixed_or(r.base_correlation.map(|b| b * 100.0), 2, "-"),
                        fixed_or(r.expected_loss_pct, 2, "-"),
                        r.base_reprice_error.map_or("-".to_string(), |e| sci(e, 0)),
                        crate::flags::join(&r.flags, true),
                    ]);
                    if r.compound_correlation.is_empty() {
                        let span = r.compound_range.map_or(
                            "the model has no quote".to_string(),
                            |[lo, hi]| {
                                format!("model quotes span {} to {}", fixed(lo, 4), fixed(hi, 4))
                            },
                        );
                        t.notes.extend(wrap(&format!(
                            "{}: no compound correlation; {span} over rho in [{RHO_MIN}, {RHO_MAX}]",
                            bounds_label(r.tranche.attach_pct, r.tranche.detach_pct),
                        ), 79, 4));
                    }
                    if let (Some(n), false) = (&r.base_note, r.flags.contains(&Flag::TopTranche)) {
                        t.notes.extend(wrap(
                            &format!(
                                "{}: {n}",
                                bounds_label(r.tranche.attach_pct, r.tranche.detach_pct)
                            ),
                            79,
                            4,
                        ));
                    }
                }
                out.push(t);
            }
        }
        out
    }

    fn csv(&self) -> Table {
        let mut headers = vec!["date", "recovery_pct"];
        headers.extend(QuotedTranche::CSV_HEADERS);
        headers.extend([
            "compound_root_count",
            "compound_correlation_1",
            "compound_correlation_2",
            "compound_range_low",
            "compound_range_high",
            "base_correlation",
            "base_reprice_error",
            "expected_loss_pct",
            "flags",
            "base_note",
        ]);
        let mut t = Table::new(&headers);
        for d in &self.dates {
            for r in &d.tranches {
                let mut row = vec![d.date.clone(), csv_num(Some(pct(d.recovery)))];
                row.extend(r.tranche.csv_cells());
                row.extend([
                    r.compound_correlation.len().to_string(),
                    csv_num(r.compound_correlation.first().copied()),
                    csv_num(r.compound_correlation.get(1).copied()),
                    csv_num(r.compound_range.map(|r| r[0])),
                    csv_num(r.compound_range.map(|r| r[1])),
                    csv_num(r.base_correlation),
                    csv_num(r.base_reprice_error),
                    csv_num(r.expected_loss_pct),
                    crate::flags::join(&r.flags, false),
                    r.base_note.clone().unwrap_or_default(),
                ]);
                t.push(row);
            }
        }
        t
    }
}
