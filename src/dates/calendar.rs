//! Business days, roll dates and day counts.
//!
//! # Weekends only
//!
//! A business day is Monday to Friday. Holiday calendars are an extension
//! point: every roll goes through [`roll_following`], so a calendar would
//! plug in there.

use chrono::{Datelike, Days, NaiveDate, Weekday};

/// Whether `d` is a business day (Monday to Friday).
pub fn is_business_day(d: NaiveDate) -> bool {
    !matches!(d.weekday(), Weekday::Sat | Weekday::Sun)
}

/// `d` if it is a business day, otherwise the following Monday.
///
/// ```
/// use chrono::NaiveDate;
/// use skewbook::dates::calendar::roll_following;
/// // 2026-12-20 is a Sunday.
/// let d = NaiveDate::from_ymd_opt(2026, 12, 20).ok_or("date")?;
/// assert_eq!(roll_following(d), NaiveDate::from_ymd_opt(2026, 12, 21).ok_or("date")?);
/// # Ok::<(), &'static str>(())
/// ```
pub fn roll_following(d: NaiveDate) -> NaiveDate {
    match d.weekday() {
        Weekday::Sat => d + Days::new(2),
        Weekday::Sun => d + Days::new(1),
        _ => d,
    }
}

/// `d` moved forward by `n` business days.
pub fn add_business_days(d: NaiveDate, n: u32) -> NaiveDate {
    let mut out = d;
    let mut left = n;
    while left > 0 {
        out = out + Days::new(1);
        if is_business_day(out) {
            left -= 1;
        }
    }
    out
}

/// Step-in date (protection start, first accrual start): trade date + 1 calendar day.
pub fn step_in_date(trade: NaiveDate) -> NaiveDate {
    trade + Days::new(1)
}

/// Cash settlement date of an upfront: trade date + 3 business days.
pub fn settlement_date(trade: NaiveDate) -> NaiveDate {
    add_business_days(trade, 3)
}

/// Whether `d` is a quarterly roll date: the 20th of March, June, September or December.
pub fn is_roll_date(d: NaiveDate) -> bool {
    d.day() == 20 && d.month().is_multiple_of(3)
}

/// The first unadjusted roll date strictly after `d`.
pub fn next_roll_date_after(d: NaiveDate) -> NaiveDate {
    let (y, m) = (d.year(), d.month());
    // Roll month of this quarter (3, 6, 9, 12).
    let qm = m.div_ceil(3) * 3;
    let candidate = NaiveDate::from_ymd_opt(y, qm, 20).expect("the 20th exists in every month");
    if candidate > d {
        candidate
    } else if qm == 12 {
        NaiveDate::from_ymd_opt(y + 1, 3, 20).expect("20 March exists")
    } else {
        NaiveDate::from_ymd_opt(y, qm + 3, 20).expect("the 20th exists in every month")
    }
}

/// Act/360 accrual fraction from `start` to `end`.
///
/// # Formula
/// ```text
/// (end - start in days) / 360
/// ```
pub fn act_360(start: NaiveDate, end: NaiveDate) -> f64 {
    (end - start).num_days() as f64 / 360.0
}

/// Curve time of `d` from the trade date, Act/365 Fixed, in years.
///
/// # Formula
/// ```text
/// t(d) = (d - T in days) / 365
/// ```
pub fn curve_time(trade: NaiveDate, d: NaiveDate) -> f64 {
    (d - trade).num_days() as f64 / 365.0
}

#[cfg(test)]
mod tests {
    use super::*;

    fn d(y: i32, m: u32, day: u32) -> NaiveDate {
        NaiveDate::from_ymd_opt(y, m, day).unwrap()
    }

    #[test]
    fn weekend_rolls_to_monday() {
        // 2027-03-20 is a Saturday, 2026-09-20 a Sunday.
        assert_eq!(roll_following(d(2027, 3, 20)), d(2027, 3, 22));
        assert_eq!(roll_following(d(2026, 9, 20)), d(2026, 9, 21));
        assert_eq!(roll_following(d(2026, 12, 18)), d(2026, 12, 18));
    }

    #[test]
    fn settlement_is_three_business_days() {
        // Thursday 2026-12-17 -> Tuesday 2026-12-22 (skips the weekend).
        assert_eq!(settlement_date(d(2026, 12, 17)), d(2026, 12, 22));
        // Monday -> Thursday.
        assert_eq!(settlement_date(d(2026, 12, 14)), d(2026, 12, 17));
        // Saturday trade date -> Wednesday.
        assert_eq!(settlement_date(d(2026, 12, 19)), d(2026, 12, 23));
    }

    #[test]
    fn next_roll_is_strictly_after() {
        assert_eq!(next_roll_date_after(d(2026, 6, 19)), d(2026, 6, 20));
        assert_eq!(next_roll_date_after(d(2026, 6, 20)), d(2026, 9, 20));
        assert_eq!(next_roll_date_after(d(2026, 12, 20)), d(2027, 3, 20));
        assert_eq!(next_roll_date_after(d(2026, 12, 31)), d(2027, 3, 20));
        assert_eq!(next_roll_date_after(d(2027, 1, 1)), d(2027, 3, 20));
        assert!(is_roll_date(d(2027, 9, 20)) && !is_roll_date(d(2027, 10, 20)));
    }

    #[test]
    fn day_counts_across_a_leap_day() {
        // 2028 is a leap year: 2028-02-20 to 2028-03-20 spans 29 days.
        assert_eq!(act_360(d(2028, 2, 20), d(2028, 3, 20)), 29.0 / 360.0);
        assert_eq!(curve_time(d(2027, 12, 20), d(2028, 12, 20)), 366.0 / 365.0);
    }
}
