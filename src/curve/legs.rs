//! Index legs integrated exactly under piecewise-flat hazard and forward rates.
//!
//! # Formula
//! On a sub-interval [a, b] where hazard h and forward f are constant, with
//! DS(a) = DF(a) S(a), λ = h + f and Δ = b - a:
//! ```text
//! ∫ DF(t) dPD(t)          = h DS(a) E1,        E1 = (1 - e^(-λΔ)) / λ
//! ∫ (t - a) DF(t) dPD(t)  = h DS(a) E2,        E2 = (1 - e^(-λΔ) (1 + λΔ)) / λ²
//! ```
//! Every period is split at each hazard knot and discount breakpoint inside
//! it. Accrued on default runs from the period start in Act/360 days, so
//! its time weight is (t - start) · 365 / 360 in curve time.

use super::piecewise::PiecewiseConstant;
use super::DiscountCurve;
use crate::dates::Schedule;

/// The two legs of an index (per unit notional).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IndexLegs {
    /// Protection leg, (1 - R) times the discounted default probability
    /// from step-in to maturity + 1 day.
    pub protection: f64,
    /// Risky annuity: premium leg per unit running spread, with accrued on default.
    pub annuity: f64,
}

/// E1 = ∫₀^Δ e^(-λτ) dτ and E2 = ∫₀^Δ τ e^(-λτ) dτ.
///
/// Below |λΔ| = 0.5 the closed form of E2 loses digits to cancellation
/// (1 - e^(-x)(1 + x) ≈ x²/2), so both use their Taylor series there:
/// E1 = Δ Σ (-x)ⁿ / ((n+1) n!), E2 = Δ² Σ (-x)ⁿ / ((n+2) n!).
fn exp_moments(lambda: f64, dt: f64) -> (f64, f64) {
    if (lambda * dt).abs() < 0.5 {
        exp_moments_series(lambda, dt)
    } else {
        exp_moments_closed(lambda, dt)
    }
}

fn exp_moments_series(lambda: f64, dt: f64) -> (f64, f64) {
    let x = lambda * dt;
    let (mut term, mut s1, mut s2) = (1.0, 0.0, 0.0);
    for n in 0..24 {
        let (t1, t2) = (
            s1 + term * RECIPROCALS[n + 1],
            s2 + term * RECIPROCALS[n + 2],
        );
        // |x| < 0.5: each term is under half the one before, so once a
        // term leaves both sums unchanged, every later one does too (the
        // sums are the 24-term sums to the bit).
        if t1 == s1 && t2 == s2 {
            break;
        }
        (s1, s2) = (t1, t2);
        term *= -x * RECIPROCALS[n + 1];
    }
    (dt * s1, dt * dt * s2)
}

/// 1 / n for n = 0..=26 (0 unused): the series' divisions as products.
const RECIPROCALS: [f64; 27] = {
    let mut r = [0.0; 27];
    let mut n = 1;
    while n < 27 {
        r[n] = 1.0 / n as f64;
        n += 1;
    }
    r
};

fn exp_moments_closed(lambda: f64, dt: f64) -> (f64, f64) {
    let x = lambda * dt;
    (
        -(-x).exp_m1() / lambda,
        (1.0 - (-x).exp() * (1.0 + x)) / (lambda * lambda),
    )
}

/// E3 = ∫₀^Δ τ² e^(-λτ) dτ (= -dE2/dλ), by its series below |λΔ| = 0.5
/// (Δ³ Σ (-x)ⁿ / ((n+3) n!)) and in closed form above
/// ((2 - e^(-x)(x² + 2x + 2)) / λ³).
fn exp_moment3(lambda: f64, dt: f64) -> f64 {
    let x = lambda * dt;
    if x.abs() < 0.5 {
        let (mut term, mut s3) = (1.0, 0.0);
        for n in 0..24 {
            let t3 = s3 + term * RECIPROCALS[n + 3];
            if t3 == s3 {
                break;
            }
            s3 = t3;
            term *= -x * RECIPROCALS[n + 1];
        }
        dt * dt * dt * s3
    } else {
        (2.0 - (-x).exp() * (x * x + 2.0 * x + 2.0)) / (lambda * lambda * lambda)
    }
}

/// Sorted breakpoints of both curves strictly inside (a, b).
fn breakpoints(a: f64, b: f64, h: &PiecewiseConstant, f: &PiecewiseConstant, out: &mut Vec<f64>) {
    out.clear();
    out.push(a);
    let (mut i, mut j) = (0, 0);
    let (ht, ft) = (h.times(), f.times());
    loop {
        let next = match (ht.get(i), ft.get(j)) {
            (Some(&x), Some(&y)) if x <= y => {
                i += 1;
                x
            }
            (Some(_), Some(&y)) => {
                j += 1;
                y
            }
            (Some(&x), None) => {
                i += 1;
                x
            }
            (None, Some(&y)) => {
                j += 1;
                y
            }
            (None, None) => break,
        };
        if next > a && next < b && next > *out.last().expect("starts with a") {
            out.push(next);
        }
        if next >= b {
            break;
        }
    }
    out.push(b);
}

/// Protection leg and risky annuity of an index with this schedule.
///
/// # Formula
/// ```text
/// protection = (1 - R) ∫_{step-in}^{maturity+1} DF(t) dPD(t)
/// annuity    = Σ_i accrual_i DF(pay_i) S(end_i)
///            + Σ_i ∫_{start_i}^{end_i} ((t - start_i) days / 360) DF(t) dPD(t)
/// ```
///
/// # References
/// The project's conventions document, "Pool hazard curve".
///
/// ```
/// use chrono::NaiveDate;
/// use skewbook::curve::{legs::index_legs, piecewise::PiecewiseConstant, DiscountCurve};
/// use skewbook::dates::Schedule;
/// let trade = NaiveDate::from_ymd_opt(2026, 12, 1).ok_or("date")?;
/// let maturity = NaiveDate::from_ymd_opt(2031, 12, 20).ok_or("date")?;
/// let s = Schedule::new(trade, maturity);
/// // No default risk: no protection, and the annuity is the sum of accruals.
/// let legs = index_legs(&s, &DiscountCurve::flat(0.0), &PiecewiseConstant::flat(0.0), 0.4);
/// let accruals: f64 = s.periods.iter().map(|p| p.accrual).sum();
/// assert_eq!(legs.protection, 0.0);
/// assert!((legs.annuity - accruals).abs() < 1e-14);
/// # Ok::<(), &'static str>(())
/// ```
pub fn index_legs(
    schedule: &Schedule,
    discount: &DiscountCurve,
    hazard: &PiecewiseConstant,
    recovery: f64,
) -> IndexLegs {
    index_legs_of_periods(
        schedule,
        discount,
        hazard,
        recovery,
        0..schedule.periods.len(),
    )
}

/// The legs' contributions of the periods `range` of the schedule only
/// (their sum over a partition of the periods is [`index_legs`]). The
/// bootstrap uses it to price once the periods a new pillar cannot touch.
pub fn index_legs_of_periods(
    schedule: &Schedule,
    discount: &DiscountCurve,
    hazard: &PiecewiseConstant,
    recovery: f64,
    range: std::ops::Range<usize>,
) -> IndexLegs {
    let fwd = discount.forward();
    let mut cuts = Vec::with_capacity(8);
    let (mut default_pv, mut annuity) = (0.0, 0.0);
    for p in &schedule.periods[range] {
        breakpoints(p.t_start, p.t_end, hazard, fwd, &mut cuts);
        let mut accrued = 0.0;
        for w in cuts.windows(2) {
            let (a, b) = (w[0], w[1]);
            let h = hazard.value_at(a);
            if h == 0.0 {
                continue;
            }
            let lambda = h + fwd.value_at(a);
            let ds = (-(hazard.integral(a) + fwd.integral(a))).exp();
            let (e1, e2) = exp_moments(lambda, b - a);
            default_pv += h * ds * e1;
            accrued += h * ds * ((a - p.t_start) * e1 + e2);
        }
        let survival_end = (-hazard.integral(p.t_end)).exp();
        annuity += p.accrual * discount.df(p.t_pay) * survival_end + accrued * 365.0 / 360.0;
    }
    IndexLegs {
        protection: (1.0 - recovery) * default_pv,
        annuity,
    }
}

/// One sub-interval of a period, as [`LastPieceLegs`] keeps it.
#[derive(Debug, Clone, Copy)]
enum Piece {
    /// Under a hazard knot already solved: its contributions to the
    /// discounted default probability and to the accrued-on-default
    /// integral, computed once (`None` for a zero hazard).
    Fixed(Option<(f64, f64)>),
    /// On the segment being solved, [start, start + dt).
    Solved {
        /// Start of the sub-interval.
        a: f64,
        /// Its length.
        dt: f64,
        /// Start minus the period start (the accrual's time weight).
        since_start: f64,
        /// Forward rate on it.
        fwd: f64,
        /// Integral of the forward rate from 0 to `a`.
        fwd_integral: f64,
    },
}

/// One period of [`LastPieceLegs`]: its sub-intervals and its end.
#[derive(Debug, Clone)]
struct PeriodPieces {
    pieces: Vec<Piece>,
    /// accrual · DF(pay).
    accrual_df: f64,
    /// Curve time of the period end.
    t_end: f64,
}

/// The index legs of some periods of a schedule as a function of the one
/// hazard rate not yet solved: the rate from the last solved knot `s0`
/// onward. Everything else (the sub-intervals, the forward curve on them,
/// the contributions under solved knots) is computed once, so the
/// bootstrap's solver evaluates only what moves with that rate.
///
/// [`LastPieceLegs::legs`] returns what [`index_legs_of_periods`] returns
/// on the curve with that hazard, to the bit: the same operations on the
/// same numbers, in the same order.
#[derive(Debug, Clone)]
pub(crate) struct LastPieceLegs {
    periods: Vec<PeriodPieces>,
    /// Where the solved segment starts (the last solved knot, or 0).
    s0: f64,
    /// The hazard integral from 0 to `s0`.
    integral_s0: f64,
    recovery: f64,
}

impl LastPieceLegs {
    /// The periods `range` of `schedule` on `curve`, a hazard curve whose
    /// knots after `s0` all carry the one rate being solved (any value:
    /// only its knots and the rates before `s0` are read).
    pub(crate) fn new(
        schedule: &Schedule,
        discount: &DiscountCurve,
        curve: &PiecewiseConstant,
        s0: f64,
        recovery: f64,
        range: std::ops::Range<usize>,
    ) -> Self {
        let fwd = discount.forward();
        let mut cuts = Vec::with_capacity(8);
        let mut periods = Vec::with_capacity(range.len());
        for p in &schedule.periods[range] {
            breakpoints(p.t_start, p.t_end, curve, fwd, &mut cuts);
            let pieces = cuts
                .windows(2)
                .map(|w| {
                    let (a, b) = (w[0], w[1]);
                    if s0 > 0.0 && a < s0 {
                        let h = curve.value_at(a);
                        if h == 0.0 {
                            return Piece::Fixed(None);
                        }
                        let lambda = h + fwd.value_at(a);
                        let ds = (-(curve.integral(a) + fwd.integral(a))).exp();
                        let (e1, e2) = exp_moments(lambda, b - a);
                        Piece::Fixed(Some((h * ds * e1, h * ds * ((a - p.t_start) * e1 + e2))))
                    } else {
                        Piece::Solved {
                            a,
                            dt: b - a,
                            since_start: a - p.t_start,
                            fwd: fwd.value_at(a),
                            fwd_integral: fwd.integral(a),
                        }
                    }
                })
                .collect();
            periods.push(PeriodPieces {
                pieces,
                accrual_df: p.accrual * discount.df(p.t_pay),
                t_end: p.t_end,
            });
        }
        LastPieceLegs {
            periods,
            s0,
            integral_s0: curve.integral(s0),
            recovery,
        }
    }

    /// The legs with hazard `h` from `s0` on, and their derivatives in `h`.
    ///
    /// # Formula
    /// On a sub-interval [a, a + Δ] after `s0`, with `g = a - s0`,
    /// `σ = a - period start`, `DS = exp(-(H(a) + F(a)))`, and
    /// `dE1/dλ = -E2`, `dE2/dλ = -E3`:
    /// ```text
    /// d(h DS E1)/dh           = DS (E1 (1 - h g) - h E2)
    /// d(h DS (σ E1 + E2))/dh  = DS ((σ E1 + E2)(1 - h g) - h (σ E2 + E3))
    /// d S(end)/dh             = -(end - s0) S(end)
    /// ```
    pub(crate) fn legs_and_slope(&self, h: f64) -> (IndexLegs, IndexLegs) {
        let integral = |t: f64| self.integral_s0 + h * (t - self.s0);
        let (mut default_pv, mut annuity) = (0.0, 0.0);
        let (mut d_default_pv, mut d_annuity) = (0.0, 0.0);
        for p in &self.periods {
            let (mut accrued, mut d_accrued) = (0.0, 0.0);
            for piece in &p.pieces {
                match *piece {
                    Piece::Fixed(None) => {}
                    Piece::Fixed(Some((pv, acc))) => {
                        default_pv += pv;
                        accrued += acc;
                    }
                    Piece::Solved {
                        a,
                        dt,
                        since_start,
                        fwd,
                        fwd_integral,
                    } => {
                        let lambda = h + fwd;
                        let ds = (-(integral(a) + fwd_integral)).exp();
                        let (e1, e2) = exp_moments(lambda, dt);
                        let e3 = exp_moment3(lambda, dt);
                        let moved = 1.0 - h * (a - self.s0);
                        if h != 0.0 {
                            default_pv += h * ds * e1;
                            accrued += h * ds * (since_start * e1 + e2);
                        }
                        d_default_pv += ds * (e1 * moved - h * e2);
                        d_accrued +=
                            ds * ((since_start * e1 + e2) * moved - h * (since_start * e2 + e3));
                    }
                }
            }
            let survival_end = (-integral(p.t_end)).exp();
            annuity += p.accrual_df * survival_end + accrued * 365.0 / 360.0;
            d_annuity +=
                p.accrual_df * (-(p.t_end - self.s0) * survival_end) + d_accrued * 365.0 / 360.0;
        }
        (
            IndexLegs {
                protection: (1.0 - self.recovery) * default_pv,
                annuity,
            },
            IndexLegs {
                protection: (1.0 - self.recovery) * d_default_pv,
                annuity: d_annuity,
            },
        )
    }

    /// The legs with hazard `h` from `s0` on (the values of
    /// [`Self::legs_and_slope`]; the bootstrap asks for them rarely).
    pub(crate) fn legs(&self, h: f64) -> IndexLegs {
        self.legs_and_slope(h).0
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The slope of [`LastPieceLegs::legs_and_slope`] against a central
    /// difference of its legs, with a solved knot before the segment and a
    /// forward curve with breakpoints; its legs are [`LastPieceLegs::legs`]'s.
    #[test]
    fn last_piece_slope_matches_a_central_difference() {
        use crate::curve::DiscountCurve;
        use chrono::NaiveDate;
        let trade = NaiveDate::from_ymd_opt(2026, 6, 18).expect("date");
        let s = Schedule::new(trade, NaiveDate::from_ymd_opt(2033, 6, 20).expect("date"));
        let pillar = |y: i32, rate: f64| crate::market::ZeroPillar {
            date: NaiveDate::from_ymd_opt(y, 6, 18).expect("date"),
            rate,
            line: 0,
        };
        let zeros = [pillar(2027, 0.02), pillar(2029, 0.025), pillar(2032, 0.03)];
        let discount = DiscountCurve::from_zero_pillars(trade, &zeros, "test").expect("curve");
        let s0 = 3.0;
        let knot = s.protection_end_time();
        let curve = PiecewiseConstant::new(vec![s0, knot], vec![0.012, 0.0, 0.0]);
        let split = s.periods.partition_point(|p| p.t_end <= s0);
        let plan = LastPieceLegs::new(&s, &discount, &curve, s0, 0.4, split..s.periods.len());
        for h in [0.0, 0.004, 0.02, 0.3, 2.0] {
            let (legs, slope) = plan.legs_and_slope(h);
            assert_eq!(legs, plan.legs(h), "{h}");
            let step = 1e-6 * h.max(1e-3);
            let (up, down) = (plan.legs(h + step), plan.legs((h - step).max(0.0)));
            let span = h + step - (h - step).max(0.0);
            let fd_p = (up.protection - down.protection) / span;
            let fd_a = (up.annuity - down.annuity) / span;
            assert!(
                (fd_p - slope.protection).abs() < 1e-7 * (1.0 + fd_p.abs()),
                "{h}: {fd_p} vs {}",
                slope.protection
            );
            assert!(
                (fd_a - slope.annuity).abs() < 1e-7 * (1.0 + fd_a.abs()),
                "{h}: {fd_a} vs {}",
                slope.annuity
            );
        }
    }

    /// E3 by its series and in closed form meet around the switch, and
    /// match a midpoint rule.
    #[test]
    fn third_moment_series_and_closed_form_meet() {
        for &(l, dt) in &[
            (0.05, 0.25),
            (2.0, 0.25),
            (1.9, 0.25),
            (2.1, 0.25),
            (5.0, 0.3),
        ] {
            let n = 20000;
            let mut i3 = 0.0;
            for k in 0..n {
                let t = (k as f64 + 0.5) * dt / n as f64;
                i3 += t * t * (-l * t).exp() * dt / n as f64;
            }
            let e3 = exp_moment3(l, dt);
            assert!((e3 - i3).abs() < 1e-8 * e3, "{l} {dt}: {e3} vs {i3}");
        }
    }

    #[test]
    fn series_and_closed_form_meet() {
        for &(l, dt) in &[
            (0.05, 0.25),
            (1e-3, 0.09),
            (-0.02, 0.3),
            (2.0, 0.25),
            (0.0, 0.25),
            (5.0, 0.3),
        ] {
            let (e1, e2) = exp_moments(l, dt);
            // Midpoint rule on a fine grid as the outside check.
            let n = 20000;
            let (mut i1, mut i2) = (0.0, 0.0);
            for k in 0..n {
                let t = (k as f64 + 0.5) * dt / n as f64;
                i1 += (-l * t).exp() * dt / n as f64;
                i2 += t * (-l * t).exp() * dt / n as f64;
            }
            assert!((e1 - i1).abs() < 1e-9 * e1, "{l} {dt}");
            assert!((e2 - i2).abs() < 1e-9 * e2, "{l} {dt}");
        }
        // Series and closed form agree around the switch at |λΔ| = 0.5.
        for &x in &[0.3, 0.5, 0.7, -0.5] {
            let (s1, s2) = exp_moments_series(x / 0.25, 0.25);
            let (c1, c2) = exp_moments_closed(x / 0.25, 0.25);
            assert!(
                (s1 / c1 - 1.0).abs() < 1e-15 && (s2 / c2 - 1.0).abs() < 1e-14,
                "{x}"
            );
        }
    }
}
