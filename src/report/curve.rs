//! `skewbook curve`: the bootstrapped pool hazard curve of every date.
//!
//! # JSON schema
//! An array with one object per trade date:
//! ```text
//! { "date": "2026-06-19",            trade date
//!   "recovery": 0.4,                 fraction
//!   "index": [ {
//!       "maturity": "2031-06-20",
//!       "quote_kind": "spread_bp",   or "upfront_pct"
//!       "quote": 61.5,               in the kind's unit (bp or percent)
//!       "coupon_bp": null,           running coupon of an upfront quote, else null
//!       "hazard": 0.0102,            hazard rate on the segment ending at this pillar, per year
//!       "survival": 0.95,            survival to the protection end (maturity + 1 day)
//!       "default_probability": 0.05, 1 - survival
//!       "annuity": 4.6,              risky annuity per unit notional and unit spread (years)
//!       "repriced_quote": 61.5,      the quote repriced off the curve, same unit as quote
//!       "reprice_error": 1e-12       repriced_quote - quote
//!   } ] }
//! ```

use super::pools_for_all_dates;
use super::stream::HistoryPlan;
use crate::curve::{MarketOptions, Pillar, Pool};
use crate::error::{collect_all, Result};
use crate::market::Snapshot;
use crate::output::{csv_num, fixed, pct, sci, Report, Table};
use rayon::prelude::*;
use serde::Serialize;

/// One pillar of the curve report.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct CurvePillar {
    /// Maturity, ISO 8601.
    pub maturity: String,
    /// `spread_bp` or `upfront_pct`.
    pub quote_kind: &'static str,
    /// The quote in its file unit.
    pub quote: f64,
    /// Coupon in bp of an upfront quote; null for a par-spread quote.
    pub coupon_bp: Option<f64>,
    /// Hazard rate of the segment ending at this pillar (per year).
    pub hazard: f64,
    /// Survival to the protection end.
    pub survival: f64,
    /// Default probability to the protection end.
    pub default_probability: f64,
    /// Risky annuity (years).
    pub annuity: f64,
    /// Quote repriced off the bootstrapped curve, file unit.
    pub repriced_quote: f64,
    /// `repriced_quote - quote`.
    pub reprice_error: f64,
}

impl From<&Pillar> for CurvePillar {
    fn from(p: &Pillar) -> Self {
        let quote = p.quote.in_file_unit();
        CurvePillar {
            maturity: p.maturity.to_string(),
            quote_kind: p.quote.kind_name(),
            quote,
            coupon_bp: p.quote.coupon_bp(),
            hazard: p.hazard,
            survival: p.survival,
            default_probability: p.default_probability,
            annuity: p.annuity,
            repriced_quote: p.repriced,
            reprice_error: p.repriced - p.quote.exact_in_file_unit(),
        }
    }
}

/// The curve of one trade date.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct CurveDate {
    /// Trade date, ISO 8601.
    pub date: String,
    /// Recovery in force (fraction).
    pub recovery: f64,
    /// Pillars, shortest maturity first.
    pub index: Vec<CurvePillar>,
}

/// The whole `curve` report: one entry per trade date.
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(transparent)]
pub struct CurveReport {
    /// Trade dates in order.
    pub dates: Vec<CurveDate>,
}

/// Bootstraps every date of the snapshot.
///
/// # Errors
/// Every date's unfittable index quote or bad zero pillar, together.
pub fn build(snapshot: &Snapshot, opts: &MarketOptions) -> Result<CurveReport> {
    let dates = pools_for_all_dates(snapshot, opts)?
        .iter()
        .map(|(_, pool)| CurveDate::from(pool))
        .collect();
    Ok(CurveReport { dates })
}

impl From<&Pool> for CurveDate {
    fn from(pool: &Pool) -> Self {
        CurveDate {
            date: pool.date.to_string(),
            recovery: pool.recovery,
            index: pool.pillars.iter().map(CurvePillar::from).collect(),
        }
    }
}

/// The curves of every date of a history read in two passes
/// ([`crate::report::stream::plan`]): a chunk of dates at a time,
/// bootstrapped in parallel, each chunk's report to `emit` in date order,
/// to be printed and dropped. Put together, the chunks are the report
/// [`build`] gives for the file read whole.
///
/// # Errors
/// Before any chunk, every curve error, as [`build`]; then an error of
/// `emit` or the file changing between the passes.
pub fn build_streamed<E: From<crate::Error>>(
    plan: &HistoryPlan,
    opts: &MarketOptions,
    emit: &mut dyn FnMut(&CurveReport) -> std::result::Result<(), E>,
) -> std::result::Result<(), E> {
    plan.curves()?;
    plan.for_each_chunk(
        &|chunk| {
            let built: Vec<Result<CurveDate>> = chunk
                .par_iter()
                .map(|md| Pool::build(md, opts, plan.path()).map(|pool| CurveDate::from(&pool)))
                .collect();
            collect_all(built).map(|dates| CurveReport { dates })
        },
        &mut |report| emit(&report),
    )
}

/// A quote as the table shows it: `61.50bp` or `-2.125%+500`.
pub(crate) fn quote_label(kind: &str, quote: f64, coupon_bp: Option<f64>) -> String {
    match (kind, coupon_bp) {
        ("spread_bp", _) => format!("{}bp", fixed(quote, 2)),
        (_, Some(c)) => format!("{}%+{}", fixed(quote, 3), fixed(c, 0)),
        _ => format!("{}%", fixed(quote, 3)),
    }
}

impl Report for CurveReport {
    fn sections(&self) -> Vec<Table> {
        self.dates
            .iter()
            .map(|d| {
                let mut t = Table::new(&[
                    "maturity",
                    "quote",
                    "hazard%",
                    "surv",
                    "default%",
                    "annuity",
                    "reprice err",
                ])
                .with_title(format!(
                    "{}  recovery {}%",
                    d.date,
                    fixed(d.recovery * 100.0, 1)
                ));
                for p in &d.index {
                    t.push(vec![
                        p.maturity.clone(),
                        quote_label(p.quote_kind, p.quote, p.coupon_bp),
                        fixed(p.hazard * 100.0, 4),
                        fixed(p.survival, 5),
                        fixed(p.default_probability * 100.0, 3),
                        fixed(p.annuity, 4),
                        sci(p.reprice_error, 1),
                    ]);
                }
                t
            })
            .collect()
    }

    fn csv(&self) -> Table {
        let mut t = Table::new(&[
            "date",
            "recovery_pct",
            "maturity",
            "quote_kind",
            "quote",
            "coupon_bp",
            "hazard",
            "survival",
            "default_probability",
            "annuity",
            "repriced_quote",
            "reprice_error",
        ]);
        for d in &self.dates {
            for p in &d.index {
                t.push(vec![
                    d.date.clone(),
                    csv_num(Some(pct(d.recovery))),
                    p.maturity.clone(),
                    p.quote_kind.to_string(),
                    csv_num(Some(p.quote)),
                    csv_num(p.coupon_bp),
                    csv_num(Some(p.hazard)),
                    csv_num(Some(p.survival)),
                    csv_num(Some(p.default_probability)),
                    csv_num(Some(p.annuity)),
                    csv_num(Some(p.repriced_quote)),
                    csv_num(Some(p.reprice_error)),
                ]);
            }
        }
        t
    }
}
