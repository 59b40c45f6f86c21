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
use super::{curves_for_all_dates, QuotedTranche};
use crate::curve::MarketOptions;
use crate::error::Result;
use crate::market::{tiles_from_zero, Snapshot, TrancheQuote};
use crate::output::{csv_num, fixed, fixed_or, pct, sci, wrap, Report, Table};
use crate::solve::base::{base_correlation_from_scan, BaseSolve, Side};
use crate::solve::compound::{compound_roots_from_scan, scan_grid, RHO_MAX, RHO_MIN};
use crate::tranche::{BaseLegs, TrancheSchedule, TrancheValuer};
use serde::Serialize;

/// One tranche's implied correlations.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct ImpliedTranche {
    /// Which tranche and its quote.
    #[serde(flatten)]
    pub tranche: QuotedTranche,
    /// Every compound correlation, ascending.
    pub compound_correlation: Vec<f64>,
    /// Lowest and highest model quote over the search range, file unit.
    pub compound_range: [f64; 2],
    /// Base correlation at the detachment.
    pub base_correlation: Option<f64>,
    /// Why there is no base correlation.
    pub base_note: Option<String>,
    /// Repriced quote off the base curve minus the quote, file unit.
    pub base_reprice_error: Option<f64>,
    /// Expected tranche loss off the base curve, percent of tranche notional.
    pub expected_loss_pct: Option<f64>,
    /// Flags (see the module docs).
    pub flags: Vec<&'static str>,
}

impl ImpliedTranche {
    /// Whether this quote has a solution missing (drives exit status 1).
    pub fn unsolved(&self) -> bool {
        if self.flags.contains(&"no_correlation_dependence") {
            return false;
        }
        self.compound_correlation.is_empty()
            || (self.base_correlation.is_none() && !self.flags.contains(&"top_tranche"))
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

fn is_top(t: &TrancheQuote) -> bool {
    t.detach >= 1.0 - 1e-12
}

/// Implied correlations for the tranches of one maturity (sorted by attachment).
pub fn implied_for_maturity(
    schedule: &TrancheSchedule,
    recovery: f64,
    tranches: &[&TrancheQuote],
) -> Vec<ImpliedTranche> {
    let tiles = tiles_from_zero(tranches);
    // Each bound's base-tranche legs on the scan grid, shared by the
    // tranches above and below it (compound scans and base brackets).
    let grid = scan_grid();
    let mut scans: Vec<(f64, Vec<BaseLegs>)> = Vec::new();
    for t in tranches {
        for k in [t.attach, t.detach] {
            if !scans.iter().any(|(b, _)| *b == k) {
                let legs = grid
                    .iter()
                    .map(|&r| schedule.base_legs(recovery, k, r))
                    .collect();
                scans.push((k, legs));
            }
        }
    }
    let scan_of = |k: f64| {
        &scans
            .iter()
            .find(|(b, _)| *b == k)
            .expect("every bound was scanned above")
            .1
    };
    // Base correlation at the previous detachment; None once the chain breaks.
    let mut chain: Option<f64> = Some(0.0);
    let mut broken_at: Option<String> = None;
    let mut out = Vec::with_capacity(tranches.len());
    for t in tranches {
        let v = TrancheValuer {
            schedule,
            recovery,
            attach: t.attach,
            detach: t.detach,
            quote: t.quote,
        };
        let mut flags = Vec::new();
        if t.attach <= 0.0 && is_top(t) {
            // [0, 100%] is the whole pool: no correlation moves it.
            let legs = v.legs_flat(0.5);
            let q = v.model_quote(&legs);
            out.push(ImpliedTranche {
                tranche: QuotedTranche::from(*t),
                compound_correlation: Vec::new(),
                compound_range: q.map_or([0.0, 0.0], |q| [q, q]),
                base_correlation: None,
                base_note: Some("[0, 100%] does not depend on correlation".to_string()),
                base_reprice_error: q.map(|q| q - t.quote.exact_in_file_unit()),
                expected_loss_pct: Some(legs.expected_loss * 100.0),
                flags: vec!["no_correlation_dependence"],
            });
            continue;
        }
        let (lower_scan, upper_scan) = (scan_of(t.attach), scan_of(t.detach));
        let flat: Vec<_> = lower_scan
            .iter()
            .zip(upper_scan)
            .map(|(a, d)| v.combine(a, d, true))
            .collect();
        let comp = compound_roots_from_scan(&v, &flat);
        match comp.roots.len() {
            0 => flags.push("no_compound_root"),
            2.. => flags.push("two_compound_roots"),
            _ => {}
        }
        if comp.tangent {
            flags.push("compound_tangent");
        }
        let label = bounds_label(pct(t.attach), pct(t.detach));
        let (mut base, mut note, mut reprice, mut el) = (None, None, None, None);
        let reprice_at = |rho_a: f64, rho_d: f64| {
            let legs = v.legs(rho_a, rho_d);
            let err = v
                .model_quote(&legs)
                .map(|q| q - t.quote.exact_in_file_unit());
            (err, legs.expected_loss * 100.0)
        };
        if !tiles {
            flags.push("bounds_do_not_tile");
            note = Some(
                "the tranches of this maturity do not tile the capital structure from 0%"
                    .to_string(),
            );
        } else if let Some(rho_a) = chain {
            if is_top(t) {
                flags.push("top_tranche");
                note = Some("[0, 100%] does not depend on correlation".to_string());
                let (err, loss) = reprice_at(rho_a, rho_a);
                reprice = err;
                el = Some(loss);
            } else {
                let lower = schedule.base_legs(recovery, t.attach, rho_a);
                match base_correlation_from_scan(&v, &lower, upper_scan) {
                    BaseSolve::Solved(s) => {
                        base = Some(s.value);
                        let (err, loss) = reprice_at(rho_a, s.value);
                        reprice = err;
                        el = Some(loss);
                        chain = Some(s.value);
                    }
                    BaseSolve::NoSolution { side, range } => {
                        flags.push(match side {
                            Side::Above => "base_quote_above_range",
                            Side::Below => "base_quote_below_range",
                        });
                        note = Some(format!(
                            "no base correlation in [{RHO_MIN}, {RHO_MAX}] reaches the quote {}: the model gives {} at rho {RHO_MIN} and {} at rho {RHO_MAX}",
                            fixed(t.quote.in_file_unit(), 4),
                            fixed(range.0, 4),
                            fixed(range.1, 4)
                        ));
                        chain = None;
                        broken_at = Some(label.clone());
                    }
                }
            }
        } else {
            flags.push("base_chain_broken");
            note = Some(format!(
                "tranche {} below has no base correlation",
                broken_at.clone().unwrap_or_default()
            ));
        }
        out.push(ImpliedTranche {
            tranche: QuotedTranche::from(*t),
            compound_correlation: comp.roots.iter().map(|r| r.value).collect(),
            compound_range: [comp.attainable.0, comp.attainable.1],
            base_correlation: base,
            base_note: note,
            base_reprice_error: reprice,
            expected_loss_pct: el,
            flags,
        });
    }
    out
}

/// Implied correlations of every tranche of every date.
///
/// # Errors
/// Curve errors of any date (unfittable index quotes, bad zero pillars).
/// Tranches with no solution are not errors: they are flagged in the report.
pub fn build(snapshot: &Snapshot, opts: &MarketOptions) -> Result<ImpliedReport> {
    let mut dates = Vec::with_capacity(snapshot.dates.len());
    for (md, c) in curves_for_all_dates(snapshot, opts)? {
        let mut tranches = Vec::with_capacity(md.tranches.len());
        let mut i = 0;
        while i < md.tranches.len() {
            let m = md.tranches[i].maturity;
            let group: Vec<&TrancheQuote> = md.tranches[i..]
                .iter()
                .take_while(|t| t.maturity == m)
                .collect();
            i += group.len();
            let schedule = TrancheSchedule::new(md.date, m, &c.discount, &c.hazard);
            tranches.extend(implied_for_maturity(&schedule, c.recovery, &group));
        }
        dates.push(ImpliedDate {
            date: md.date.to_string(),
            recovery: c.recovery,
            index: c.pillars.iter().map(CurvePillar::from).collect(),
            tranches,
        });
    }
    Ok(ImpliedReport { dates })
}

/// The table's short form of a flag (CSV and JSON carry the full names).
fn short_flag(flag: &str) -> &str {
    match flag {
        "no_compound_root" => "no root",
        "two_compound_roots" => "2 roots",
        "compound_tangent" => "tangent",
        "base_quote_above_range" => "above range",
        "base_quote_below_range" => "below range",
        "base_chain_broken" => "chain broken",
        "bounds_do_not_tile" => "gaps",
        "top_tranche" => "top",
        "no_correlation_dependence" => "whole pool",
        other => other,
    }
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
                        r.flags
                            .iter()
                            .map(|f| short_flag(f))
                            .collect::<Vec<_>>()
                            .join(","),
                    ]);
                    if r.compound_correlation.is_empty() {
                        t.notes.extend(wrap(&format!(
                            "{}: no compound correlation; model quotes span {} to {} over rho in [{RHO_MIN}, {RHO_MAX}]",
                            bounds_label(r.tranche.attach_pct, r.tranche.detach_pct),
                            fixed(r.compound_range[0], 4),
                            fixed(r.compound_range[1], 4)
                        ), 79, 4));
                    }
                    if let (Some(n), false) = (&r.base_note, r.flags.contains(&"top_tranche")) {
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
                    csv_num(Some(r.compound_range[0])),
                    csv_num(Some(r.compound_range[1])),
                    csv_num(r.base_correlation),
                    csv_num(r.base_reprice_error),
                    csv_num(r.expected_loss_pct),
                    r.flags.join(";"),
                    r.base_note.clone().unwrap_or_default(),
                ]);
                t.push(row);
            }
        }
        t
    }
}
