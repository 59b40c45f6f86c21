//! The pool hazard curve and its bootstrap from index quotes.
//!
//! # Knots at the protection end
//!
//! The hazard rate is piecewise constant with a knot at each index quote's
//! protection end, maturity + 1 day, and flat after the last knot. A quote
//! depends only on the hazard up to its own protection end, so once a pillar
//! is solved, later pillars cannot disturb it: every quote reprices exactly.

use super::legs::{index_legs_of_periods, IndexLegs, LastPieceLegs};
use super::piecewise::PiecewiseConstant;
use super::DiscountCurve;
use crate::dates::Schedule;
use crate::error::{significant, Error, ErrorKind, Problem, Result};
use crate::market::{IndexQuote, Quote};
use crate::math::root::{newton_root_hermite, Tolerance};
use chrono::NaiveDate;

/// Piecewise-constant pool hazard rate in curve time (Act/365F).
#[derive(Debug, Clone, PartialEq)]
pub struct HazardCurve {
    rate: PiecewiseConstant,
}

impl HazardCurve {
    /// A flat hazard rate.
    pub fn flat(h: f64) -> Self {
        HazardCurve {
            rate: PiecewiseConstant::flat(h),
        }
    }

    /// Hazard `values[i]` up to `knots[i]`, the last value flat after the
    /// last knot (`values.len() == knots.len()`, knots increasing, > 0).
    pub fn from_knots(knots: &[f64], values: &[f64]) -> Self {
        assert_eq!(knots.len(), values.len(), "one hazard per knot");
        if values.is_empty() {
            return HazardCurve::flat(0.0);
        }
        let mut v = values.to_vec();
        v.push(*values.last().expect("non-empty"));
        HazardCurve {
            rate: PiecewiseConstant::new(knots.to_vec(), v),
        }
    }

    /// Survival probability S(t) = exp(-∫₀ᵗ h).
    pub fn survival(&self, t: f64) -> f64 {
        (-self.rate.integral(t)).exp()
    }

    /// Default probability PD(t) = 1 - S(t), computed without cancellation.
    pub fn default_probability(&self, t: f64) -> f64 {
        -(-self.rate.integral(t)).exp_m1()
    }

    /// The piecewise-constant rate itself.
    pub fn rate(&self) -> &PiecewiseConstant {
        &self.rate
    }
}

/// One bootstrapped pillar.
#[derive(Debug, Clone, PartialEq)]
pub struct Pillar {
    /// Maturity of the index quote.
    pub maturity: NaiveDate,
    /// The quote.
    pub quote: Quote,
    /// Curve time of the knot, maturity + 1 day.
    pub knot: f64,
    /// Hazard rate on the segment ending at this knot.
    pub hazard: f64,
    /// Survival to the protection end, S(knot).
    pub survival: f64,
    /// Default probability to the protection end, 1 - S(knot).
    pub default_probability: f64,
    /// Protection leg per unit notional.
    pub protection: f64,
    /// Risky annuity per unit notional and unit spread.
    pub annuity: f64,
    /// The quote repriced off the bootstrapped curve, in its file unit.
    pub repriced: f64,
    /// Evaluations the solve spent.
    pub evaluations: usize,
}

/// The model quote of an index in its file unit: par spread in bp, or
/// upfront in percent at the quote's coupon.
///
/// # Formula
/// ```text
/// par spread      = protection / annuity
/// upfront DF(ts)  = protection - c · annuity      (ts: settlement date)
/// ```
pub fn model_quote(legs: IndexLegs, quote: Quote, df_settlement: f64) -> f64 {
    match quote {
        Quote::Spread(_) => legs.protection / legs.annuity * 1e4,
        Quote::Upfront { coupon, .. } => {
            (legs.protection - coupon * legs.annuity) / df_settlement * 100.0
        }
    }
}

/// The maximum of a unimodal `f` on [a, b] by golden-section search (80
/// steps shrink the bracket by 1e-17 of its width).
fn maximise(f: &impl Fn(f64) -> f64, mut a: f64, mut b: f64) -> (f64, f64) {
    let g = (5f64.sqrt() - 1.0) / 2.0;
    let (mut x1, mut x2) = (b - g * (b - a), a + g * (b - a));
    let (mut f1, mut f2) = (f(x1), f(x2));
    for _ in 0..80 {
        if f1 < f2 {
            a = x1;
            x1 = x2;
            f1 = f2;
            x2 = a + g * (b - a);
            f2 = f(x2);
        } else {
            b = x2;
            x2 = x1;
            f2 = f1;
            x1 = b - g * (b - a);
            f1 = f(x1);
        }
    }
    if f1 > f2 {
        (x1, f1)
    } else {
        (x2, f2)
    }
}

/// Residual tolerance of a pillar solve, in the quote's file unit (bp or
/// percent): well inside the 1e-8 the contract asks for.
pub const REPRICE_TOLERANCE: f64 = 1e-11;

/// Bootstraps the hazard curve from one date's index quotes, shortest
/// maturity first, one Brent solve per pillar.
///
/// # Errors
/// [`ErrorKind::Unfittable`] naming the date and the pillar when no
/// non-negative hazard rate reproduces a quote (a spread below what the
/// earlier pillars already imply, or an upfront above what the recovery allows).
pub fn bootstrap(
    trade: NaiveDate,
    quotes: &[IndexQuote],
    discount: &DiscountCurve,
    recovery: f64,
    path: &str,
) -> Result<(HazardCurve, Vec<Pillar>)> {
    let mut knots: Vec<f64> = Vec::with_capacity(quotes.len());
    let mut hazards: Vec<f64> = Vec::with_capacity(quotes.len());
    let mut pillars = Vec::with_capacity(quotes.len());
    for q in quotes {
        let schedule = Schedule::new(trade, q.maturity);
        let knot = schedule.protection_end_time();
        let df_settle = discount.df(schedule.settlement_time());
        let target = q.quote.exact_in_file_unit();
        // Periods ending by the previous knot do not depend on this pillar's
        // hazard: price them once.
        let previous = knots.last().copied().unwrap_or(0.0);
        let split = schedule.periods.partition_point(|p| p.t_end <= previous);
        let n = schedule.periods.len();
        let mut k = knots.clone();
        k.push(knot);
        let mut v = hazards.clone();
        v.push(0.0);
        let fixed = index_legs_of_periods(
            &schedule,
            discount,
            HazardCurve::from_knots(&k, &v).rate(),
            recovery,
            0..split,
        );
        v.pop();
        v.push(0.0);
        // The periods this pillar's hazard moves, with everything else
        // about them computed once.
        let curve0 = HazardCurve::from_knots(&k, &v);
        let moving = LastPieceLegs::new(
            &schedule,
            discount,
            curve0.rate(),
            previous,
            recovery,
            split..n,
        );
        let legs_at = |h: f64| {
            let rest = moving.legs(h);
            IndexLegs {
                protection: fixed.protection + rest.protection,
                annuity: fixed.annuity + rest.annuity,
            }
        };
        let quote_at = |h: f64| model_quote(legs_at(h), q.quote, df_settle);
        // The gap and its derivative in h, for Newton.
        let gap_and_slope = |h: f64| {
            let (rest, d) = moving.legs_and_slope(h);
            let legs = IndexLegs {
                protection: fixed.protection + rest.protection,
                annuity: fixed.annuity + rest.annuity,
            };
            let slope = match q.quote {
                Quote::Spread(_) => {
                    (d.protection * legs.annuity - legs.protection * d.annuity)
                        / (legs.annuity * legs.annuity)
                        * 1e4
                }
                Quote::Upfront { coupon, .. } => {
                    (d.protection - coupon * d.annuity) / df_settle * 100.0
                }
            };
            (model_quote(legs, q.quote, df_settle) - target, slope)
        };
        let fail = |why: String| {
            Error::new(
                ErrorKind::Unfittable,
                Problem::new(format!(
                    "{path}:{}: trade date {trade}, index pillar {}: {} {} cannot be fitted: {why}",
                    q.line,
                    q.maturity,
                    q.quote.kind_name(),
                    significant(target, 6)
                )),
            )
        };
        let (g0, s0) = gap_and_slope(0.0);
        if g0 > REPRICE_TOLERANCE {
            let why = if knots.is_empty() {
                "a pool with no default risk already pays more than the quote"
            } else {
                "the earlier pillars already imply more default risk"
            };
            return Err(fail(format!(
                "even a zero hazard rate on this pillar gives {} ({why})",
                significant(quote_at(0.0), 6)
            )));
        }
        // Bracket on a geometric grid of hazard rates. The model quote rises
        // with the hazard until, at very large hazards, most defaults fall
        // before step-in and the protection bought shrinks again; so when no
        // grid point reaches the quote, look for the maximum in between.
        let (mut lo, mut hi) = (0.0, 0.05);
        let (mut glo, mut slo) = (g0, s0);
        let (mut ghi, mut shi) = gap_and_slope(hi);
        let mut best = (0.0, g0);
        while ghi < 0.0 && hi < 1e3 {
            if ghi > best.1 {
                best = (hi, ghi);
            }
            (lo, glo, slo) = (hi, ghi, shi);
            hi *= 4.0;
            (ghi, shi) = gap_and_slope(hi);
        }
        if ghi < 0.0 {
            let (a, b) = if best.0 == 0.0 {
                (0.0, 0.05)
            } else {
                (best.0 / 4.0, best.0 * 4.0)
            };
            // Model quotes, not gaps to the quote: against a huge quote
            // every gap rounds to the same number.
            let (peak, qpeak) = maximise(&quote_at, a, b);
            if qpeak - target < 0.0 {
                return Err(fail(format!(
                    "the largest attainable value is {}, at a hazard rate near {}",
                    significant(qpeak, 6),
                    significant(peak, 6)
                )));
            }
            // The rising branch: every grid point below the peak is below the quote.
            lo = if best.0 == 0.0 { 0.0 } else { best.0 / 4.0 }.min(peak);
            hi = peak;
            (glo, slo) = gap_and_slope(lo);
            (ghi, shi) = gap_and_slope(hi);
        }
        let tol = Tolerance {
            residual: REPRICE_TOLERANCE * 1e-2,
            width: 1e-16,
            max_iterations: 200,
        };
        // Newton with the analytic slope, kept inside the bracket, started
        // from the cubic through the bracket's values and slopes.
        let sol = newton_root_hermite(gap_and_slope, (lo, hi), (glo, ghi), (slo, shi), tol)
            .map_err(|e| fail(format!("the solver stopped: {e}")))?;
        let h = sol.value.max(0.0);
        knots.push(knot);
        hazards.push(h);
        let curve = HazardCurve::from_knots(&knots, &hazards);
        // The periods before the knot as priced once, the rest at h.
        let legs = legs_at(h);
        pillars.push(Pillar {
            maturity: q.maturity,
            quote: q.quote,
            knot,
            hazard: h,
            survival: curve.survival(knot),
            default_probability: curve.default_probability(knot),
            protection: legs.protection,
            annuity: legs.annuity,
            repriced: model_quote(legs, q.quote, df_settle),
            evaluations: sol.evaluations,
        });
    }
    Ok((HazardCurve::from_knots(&knots, &hazards), pillars))
}
