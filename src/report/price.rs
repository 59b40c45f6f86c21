//! `skewbook price`: every tranche of every date at one flat correlation.
//!
//! # JSON schema
//! An array with one object per trade date:
//! ```text
//! { "date": "2026-06-19", "recovery": 0.4, "correlation": 0.3,
//!   "tranches": [ {
//!       "maturity": "2031-06-20", "attach_pct": 0.0, "detach_pct": 3.0,
//!       "quote_kind": "upfront_pct", "quote": 35.5, "coupon_bp": 500.0 (null for spread quotes),
//!       "model_upfront_pct": 36.1,   upfront at the row's coupon (0 bp for a spread row), percent
//!       "model_spread_bp": 1890.2,   par running spread with no upfront, bp; null if the
//!                                    tranche is certain to be wiped out (no annuity)
//!       "expected_loss_pct": 41.2,   expected tranche loss at the protection end, % of tranche notional
//!       "protection_leg": 0.38,      per unit tranche notional
//!       "premium_annuity": 4.1,      per unit tranche notional and unit running spread (years)
//!       "value": 0.0012              value to the protection buyer at the quote, per unit notional
//!   } ],
//!   "model": "names_125" }           only with --names: the pool of n names the tranches were
//!                                    priced in (absent: the large pool, the default)
//! ```

use super::{pools_for_all_dates, QuotedTranche};
use crate::curve::MarketOptions;
use crate::error::{Error, ErrorKind, Result};
use crate::loss::PoolModel;
use crate::market::{Snapshot, TrancheQuote};
use crate::output::{csv_num, fixed, fixed_or, pct, Report, Table};
use crate::tranche::{Tranche, TrancheSchedule, TrancheValuer};
use serde::Serialize;

/// One tranche priced at a flat correlation.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct PricedTranche {
    /// Which tranche and its quote.
    #[serde(flatten)]
    pub tranche: QuotedTranche,
    /// Model upfront at the row's coupon, percent.
    pub model_upfront_pct: f64,
    /// Model par spread with no upfront, bp.
    pub model_spread_bp: Option<f64>,
    /// Expected tranche loss at the protection end, percent of tranche notional.
    pub expected_loss_pct: f64,
    /// Protection leg per unit tranche notional.
    pub protection_leg: f64,
    /// Premium annuity per unit tranche notional and unit spread.
    pub premium_annuity: f64,
    /// Value to the protection buyer at the quote.
    pub value: f64,
}

/// One date of the price report.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct PriceDate {
    /// Trade date.
    pub date: String,
    /// Recovery (fraction).
    pub recovery: f64,
    /// The flat correlation used (fraction).
    pub correlation: f64,
    /// Tranches by maturity then attachment.
    pub tranches: Vec<PricedTranche>,
    /// `names_N` for a pool of N names; absent for the large pool.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub model: Option<String>,
}

/// The whole `price` report.
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(transparent)]
pub struct PriceReport {
    /// Dates in order.
    pub dates: Vec<PriceDate>,
}

/// Prices one tranche at a flat correlation on its schedule.
///
/// # Errors
/// [`ErrorKind::InvalidInput`] for bounds the library cannot price.
pub fn price_tranche(
    schedule: &TrancheSchedule,
    t: &TrancheQuote,
    rho: f64,
) -> Result<PricedTranche> {
    let v = TrancheValuer::new(schedule, Tranche::new(t.attach, t.detach)?, t.quote)?;
    let legs = v.legs_flat(rho);
    Ok(PricedTranche {
        tranche: QuotedTranche::from(t),
        model_upfront_pct: v.model_upfront(&legs) * 100.0,
        model_spread_bp: v.model_spread(&legs).map(|s| s * 1e4),
        expected_loss_pct: legs.expected_loss * 100.0,
        protection_leg: legs.protection,
        premium_annuity: legs.annuity,
        value: v.value(&legs),
    })
}

/// Prices every tranche of every date at correlation `rho`.
///
/// # Errors
/// [`ErrorKind::Usage`] for rho outside (0, 1); curve errors of any date.
pub fn build(snapshot: &Snapshot, opts: &MarketOptions, rho: f64) -> Result<PriceReport> {
    build_with(snapshot, opts, rho, PoolModel::LargePool)
}

/// [`build`] in a pool model: the large pool, or a pool of n names.
///
/// # Errors
/// As [`build`]; [`ErrorKind::InvalidInput`] for a pool of 0 names.
pub fn build_with(
    snapshot: &Snapshot,
    opts: &MarketOptions,
    rho: f64,
    model: PoolModel,
) -> Result<PriceReport> {
    if !(rho > 0.0 && rho < 1.0) {
        return Err(Error::msg(
            ErrorKind::Usage,
            format!("--correlation: expected a fraction in (0, 1), found {rho}"),
        ));
    }
    let mut dates = Vec::new();
    for (md, c) in pools_for_all_dates(snapshot, opts)? {
        let mut tranches = Vec::with_capacity(md.tranches.len());
        let mut schedule: Option<TrancheSchedule> = None;
        for t in &md.tranches {
            if schedule.as_ref().is_none_or(|s| s.maturity() != t.maturity) {
                schedule = Some(TrancheSchedule::for_pool_with(&c, t.maturity, model)?);
            }
            if let Some(s) = schedule.as_ref() {
                tranches.push(price_tranche(s, t, rho)?);
            }
        }
        dates.push(PriceDate {
            date: md.date.to_string(),
            recovery: c.recovery,
            correlation: rho,
            tranches,
            model: model_field(model),
        });
    }
    Ok(PriceReport { dates })
}

/// The `model` field of a report: `None` for the large pool (the default,
/// whose output is unchanged), `names_N` otherwise.
pub(crate) fn model_field(model: PoolModel) -> Option<String> {
    match model {
        PoolModel::LargePool => None,
        PoolModel::Names(_) => Some(model.name()),
    }
}

/// `  125 names` for a table title (empty for the large pool).
pub(crate) fn model_title(model: &Option<String>) -> String {
    model
        .as_deref()
        .and_then(|m| m.strip_prefix("names_"))
        .map_or(String::new(), |n| format!("  pool of {n} names"))
}

/// `0-3` for the table.
pub(crate) fn bounds_label(attach_pct: f64, detach_pct: f64) -> String {
    let f = |x: f64| {
        let s = format!("{x:.4}");
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    };
    format!("{}-{}", f(attach_pct), f(detach_pct))
}

impl Report for PriceReport {
    fn sections(&self) -> Vec<Table> {
        self.dates
            .iter()
            .map(|d| {
                let mut t = Table::new(&[
                    "maturity",
                    "tranche",
                    "quote",
                    "upfront%",
                    "spread bp",
                    "EL%",
                    "value",
                ])
                .with_title(format!(
                    "{}  recovery {}%  correlation {}%{}",
                    d.date,
                    fixed(d.recovery * 100.0, 1),
                    fixed(d.correlation * 100.0, 2),
                    model_title(&d.model)
                ));
                for p in &d.tranches {
                    t.push(vec![
                        p.tranche.maturity.clone(),
                        bounds_label(p.tranche.attach_pct, p.tranche.detach_pct),
                        super::curve::quote_label(
                            p.tranche.quote_kind,
                            p.tranche.quote,
                            p.tranche.coupon_bp,
                        ),
                        fixed(p.model_upfront_pct, 4),
                        fixed_or(p.model_spread_bp, 2, "-"),
                        fixed(p.expected_loss_pct, 3),
                        fixed(p.value, 6),
                    ]);
                }
                t
            })
            .collect()
    }

    fn csv(&self) -> Table {
        let mut headers = vec!["date", "recovery_pct", "correlation"];
        headers.extend(QuotedTranche::CSV_HEADERS);
        headers.extend([
            "model_upfront_pct",
            "model_spread_bp",
            "expected_loss_pct",
            "protection_leg",
            "premium_annuity",
            "value",
        ]);
        let with_model = self.dates.iter().any(|d| d.model.is_some());
        if with_model {
            headers.push("model");
        }
        let mut t = Table::new(&headers);
        for d in &self.dates {
            for p in &d.tranches {
                let mut row = vec![
                    d.date.clone(),
                    csv_num(Some(pct(d.recovery))),
                    csv_num(Some(d.correlation)),
                ];
                row.extend(p.tranche.csv_cells());
                row.extend([
                    csv_num(Some(p.model_upfront_pct)),
                    csv_num(p.model_spread_bp),
                    csv_num(Some(p.expected_loss_pct)),
                    csv_num(Some(p.protection_leg)),
                    csv_num(Some(p.premium_annuity)),
                    csv_num(Some(p.value)),
                ]);
                if with_model {
                    row.push(d.model.clone().unwrap_or_default());
                }
                t.push(row);
            }
        }
        t
    }
}
