//! The discount curve: zero pillars with piecewise-flat forwards, or a flat rate.

use super::piecewise::PiecewiseConstant;
use crate::dates::curve_time;
use crate::error::{Error, ErrorKind, Location, Problem, Result};
use crate::market::ZeroPillar;
use chrono::NaiveDate;

/// Discount factors DF(t) = exp(-r(t) t) in curve time (Act/365F).
#[derive(Debug, Clone, PartialEq)]
pub struct DiscountCurve {
    forward: PiecewiseConstant,
}

impl DiscountCurve {
    /// A flat continuously compounded rate (fraction).
    pub fn flat(rate: f64) -> Self {
        DiscountCurve {
            forward: PiecewiseConstant::flat(rate),
        }
    }

    /// The curve through continuously compounded Act/365F zero rates at
    /// pillar dates, sorted by date. With no pillars it is a zero rate:
    /// callers wanting another flat rate use [`DiscountCurve::flat`].
    ///
    /// # Formula
    /// ```text
    /// r(t) t linear in t between pillars  (piecewise-flat forwards)
    /// forward on [0, t1] = r1             (flat zero rate before the first pillar)
    /// forward on [t(i-1), t(i)] = (r(i) t(i) - r(i-1) t(i-1)) / (t(i) - t(i-1))
    /// forward after the last pillar = the last forward
    /// ```
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] when two pillars share a date or a pillar
    /// is not after the trade date (the snapshot reader rejects both first).
    pub fn from_zero_pillars(trade: NaiveDate, pillars: &[ZeroPillar], path: &str) -> Result<Self> {
        if pillars.is_empty() {
            return Ok(DiscountCurve::flat(0.0));
        }
        let mut times = Vec::with_capacity(pillars.len());
        let mut fwd = Vec::with_capacity(pillars.len() + 1);
        let (mut prev_t, mut prev_rt) = (0.0, 0.0);
        for p in pillars {
            let t = curve_time(trade, p.date);
            if t <= prev_t {
                return Err(Error::new(
                    ErrorKind::InvalidInput,
                    Problem::at(
                        Location {
                            path: path.to_string(),
                            line: p.line,
                            column: None,
                            header: None,
                        },
                        format!("zero pillar {}: expected a date after the trade date and the previous pillar", p.date),
                    ),
                ));
            }
            let rt = p.rate * t;
            fwd.push((rt - prev_rt) / (t - prev_t));
            times.push(t);
            prev_t = t;
            prev_rt = rt;
        }
        let last = *fwd.last().expect("at least one pillar");
        fwd.push(last);
        Ok(DiscountCurve {
            forward: PiecewiseConstant::new(times, fwd),
        })
    }

    /// DF(t) = exp(-integral of the forward from 0 to t).
    pub fn df(&self, t: f64) -> f64 {
        (-self.forward.integral(t)).exp()
    }

    /// Continuously compounded zero rate r(t) (the short rate at t = 0).
    pub fn zero_rate(&self, t: f64) -> f64 {
        if t <= 0.0 {
            self.forward.value_at(0.0)
        } else {
            self.forward.integral(t) / t
        }
    }

    /// The piecewise-flat forward curve.
    pub fn forward(&self) -> &PiecewiseConstant {
        &self.forward
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn d(y: i32, m: u32, day: u32) -> NaiveDate {
        NaiveDate::from_ymd_opt(y, m, day).unwrap()
    }

    #[test]
    fn reproduces_pillars_and_interpolates_rt_linearly() {
        let trade = d(2026, 1, 1);
        let p = |date, rate| ZeroPillar {
            date,
            rate,
            line: 2,
        };
        let pillars = [p(d(2027, 1, 1), 0.02), p(d(2031, 1, 1), 0.03)];
        let c = DiscountCurve::from_zero_pillars(trade, &pillars, "x").unwrap();
        let t1 = curve_time(trade, d(2027, 1, 1));
        let t2 = curve_time(trade, d(2031, 1, 1));
        assert!((c.zero_rate(t1) - 0.02).abs() < 1e-15);
        assert!((c.zero_rate(t2) - 0.03).abs() < 1e-15);
        // Flat zero before the first pillar.
        assert!((c.zero_rate(0.3) - 0.02).abs() < 1e-15);
        // r t linear between pillars.
        let tm = 0.5 * (t1 + t2);
        let rt = 0.5 * (0.02 * t1 + 0.03 * t2);
        assert!((c.df(tm) - (-rt).exp()).abs() < 1e-15);
        // Flat forward after the last.
        let f = (0.03 * t2 - 0.02 * t1) / (t2 - t1);
        assert!((c.df(t2 + 1.0) / c.df(t2) - (-f).exp()).abs() < 1e-15);
    }
}
