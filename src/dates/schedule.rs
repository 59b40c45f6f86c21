//! The coupon schedule of an index or tranche.
//!
//! # Accrual runs on payment dates, roll dates are unadjusted
//!
//! The payment dates are the *unadjusted* roll dates strictly after step-in
//! and before maturity, then maturity itself, each rolled to a business day.
//! Periods run payment date to payment date: the first starts at step-in and
//! the last ends at maturity + 1 day, because the maturity date itself is
//! protected. Accrual is Act/360 on those (adjusted) dates.

use super::calendar::{act_360, curve_time, next_roll_date_after, roll_following};
use super::calendar::{settlement_date, step_in_date};
use chrono::{Days, NaiveDate};

/// One coupon period.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Period {
    /// Accrual start.
    pub start: NaiveDate,
    /// Accrual end (the payment date, or maturity + 1 day for the last period).
    pub end: NaiveDate,
    /// Payment date.
    pub pay: NaiveDate,
    /// Act/360 accrual fraction (end - start) / 360.
    pub accrual: f64,
    /// Curve time of `start` (Act/365F from the trade date).
    pub t_start: f64,
    /// Curve time of `end`.
    pub t_end: f64,
    /// Curve time of `pay`.
    pub t_pay: f64,
}

/// The premium schedule from a trade date to a maturity.
#[derive(Debug, Clone, PartialEq)]
pub struct Schedule {
    /// Trade date T.
    pub trade: NaiveDate,
    /// Step-in (protection start): T + 1.
    pub step_in: NaiveDate,
    /// Cash settlement of an upfront: T + 3 business days.
    pub settlement: NaiveDate,
    /// Maturity (protected through the end of this day).
    pub maturity: NaiveDate,
    /// Coupon periods in order; never empty.
    pub periods: Vec<Period>,
}

impl Schedule {
    /// The schedule of an instrument traded on `trade` and maturing on `maturity`.
    ///
    /// `maturity` is expected after `trade` (the snapshot reader checks it);
    /// a maturity on or before step-in gives one period from step-in to
    /// maturity + 1 day, of zero or negative length if it is earlier.
    ///
    /// ```
    /// use chrono::NaiveDate;
    /// use skewbook::dates::Schedule;
    /// let trade = NaiveDate::from_ymd_opt(2026, 12, 1).ok_or("date")?;
    /// let maturity = NaiveDate::from_ymd_opt(2027, 6, 20).ok_or("date")?;
    /// let s = Schedule::new(trade, maturity);
    /// // 20 Dec 2026 (a Sunday, paid Monday 21st), 20 Mar 2027 (a Saturday,
    /// // paid Monday 22nd), then maturity (a Sunday, paid Monday 21 June).
    /// assert_eq!(s.periods.len(), 3);
    /// assert_eq!(s.periods[0].pay, NaiveDate::from_ymd_opt(2026, 12, 21).ok_or("date")?);
    /// // The last period ends the day after maturity: 22 Mar to 21 Jun is 91 days.
    /// assert_eq!(s.periods[2].end, NaiveDate::from_ymd_opt(2027, 6, 21).ok_or("date")?);
    /// assert_eq!(s.periods[2].accrual, 91.0 / 360.0);
    /// # Ok::<(), &'static str>(())
    /// ```
    pub fn new(trade: NaiveDate, maturity: NaiveDate) -> Schedule {
        let step_in = step_in_date(trade);
        let mut pays = Vec::new();
        let mut roll = next_roll_date_after(step_in);
        while roll < maturity {
            pays.push(roll_following(roll));
            roll = next_roll_date_after(roll);
        }
        pays.push(roll_following(maturity));
        let protection_end = maturity + Days::new(1);
        let n = pays.len();
        let mut periods = Vec::with_capacity(n);
        let mut start = step_in;
        for (i, &pay) in pays.iter().enumerate() {
            let end = if i + 1 == n { protection_end } else { pay };
            periods.push(Period {
                start,
                end,
                pay,
                accrual: act_360(start, end),
                t_start: curve_time(trade, start),
                t_end: curve_time(trade, end),
                t_pay: curve_time(trade, pay),
            });
            start = end;
        }
        Schedule {
            trade,
            step_in,
            settlement: settlement_date(trade),
            maturity,
            periods,
        }
    }

    /// Curve time of the protection end, maturity + 1 day.
    pub fn protection_end_time(&self) -> f64 {
        self.periods.last().map_or(0.0, |p| p.t_end)
    }

    /// Curve time of the upfront's settlement date.
    pub fn settlement_time(&self) -> f64 {
        curve_time(self.trade, self.settlement)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn d(y: i32, m: u32, day: u32) -> NaiveDate {
        NaiveDate::from_ymd_opt(y, m, day).unwrap()
    }

    /// Common practice: a trade on the day before a roll date steps in on the
    /// roll date itself, which is not "strictly after step-in", so the first
    /// coupon is the next quarter's: a long first period.
    #[test]
    fn trade_the_day_before_a_roll_date() {
        let s = Schedule::new(d(2026, 6, 19), d(2031, 6, 20));
        assert_eq!(s.step_in, d(2026, 6, 20));
        assert_eq!(s.periods[0].start, d(2026, 6, 20));
        // 2026-09-20 is a Sunday: paid Monday the 21st.
        assert_eq!(s.periods[0].pay, d(2026, 9, 21));
        assert_eq!(s.periods[0].accrual, 93.0 / 360.0);
        // 5 years of quarters from a roll date: 20 coupons.
        assert_eq!(s.periods.len(), 20);
    }

    #[test]
    fn trade_on_a_roll_date() {
        let s = Schedule::new(d(2026, 6, 20), d(2031, 6, 20));
        assert_eq!(s.step_in, d(2026, 6, 21));
        assert_eq!(s.periods[0].pay, d(2026, 9, 21));
        assert_eq!(s.periods[0].accrual, 92.0 / 360.0);
        assert_eq!(s.periods.len(), 20);
    }

    #[test]
    fn short_first_period() {
        // Trade 2026-12-10: step-in 11 Dec, first coupon 21 Dec (20th is a Sunday).
        let s = Schedule::new(d(2026, 12, 10), d(2031, 12, 20));
        assert_eq!(s.periods[0].start, d(2026, 12, 11));
        assert_eq!(s.periods[0].end, d(2026, 12, 21));
        assert_eq!(s.periods[0].accrual, 10.0 / 360.0);
        // The second period starts on the adjusted payment date.
        assert_eq!(s.periods[1].start, d(2026, 12, 21));
        assert_eq!(s.settlement, d(2026, 12, 15));
    }

    #[test]
    fn maturity_on_a_weekend() {
        // 2032-03-20 is a Saturday: paid Monday 22nd, protection to 21st.
        let s = Schedule::new(d(2026, 12, 1), d(2032, 3, 20));
        let last = s.periods.last().unwrap();
        assert_eq!(last.pay, d(2032, 3, 22));
        assert_eq!(last.end, d(2032, 3, 21));
        // Previous coupon 20 Dec 2031 is a Saturday: paid 22 Dec.
        assert_eq!(last.start, d(2031, 12, 22));
        assert_eq!(last.accrual, 90.0 / 360.0);
    }

    #[test]
    fn leap_year_period() {
        // 20 Dec 2027 (Mon) to 20 Mar 2028 (Mon) spans 29 Feb 2028: 91 days.
        let s = Schedule::new(d(2027, 12, 1), d(2028, 6, 20));
        let p = s.periods[1];
        assert_eq!((p.start, p.end), (d(2027, 12, 20), d(2028, 3, 20)));
        assert_eq!(p.accrual, 91.0 / 360.0);
        assert!((p.t_end - p.t_start - 91.0 / 365.0).abs() < 1e-15);
    }

    #[test]
    fn periods_chain_without_gaps() {
        let s = Schedule::new(d(2026, 11, 3), d(2033, 12, 20));
        for w in s.periods.windows(2) {
            assert_eq!(w[0].end, w[1].start);
            assert!(w[0].pay < w[1].pay);
        }
        assert_eq!(s.periods[0].start, d(2026, 11, 4));
    }
}
