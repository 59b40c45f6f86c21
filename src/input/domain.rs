//! Plausible domains: the values a market can have, checked where a file
//! is read.
//!
//! A number can parse and still be no market quote: a spread of 5e298 bp
//! overflows when turned into a model quote, a detachment of 4.9e-324
//! percent underflows to a tranche of no width. Each reader takes a value
//! only inside the domain below; outside, it is bad input at the file,
//! line and column, with the domain in the message, e.g.
//!
//! ```text
//! q.csv:7:7: column "quote": expected a spread from 0 up to (not including) 100000 bp, found "5e298"
//! ```
//!
//! | value | unit in files | domain |
//! | --- | --- | --- |
//! | spread (`spread_bp` quote) | bp | 0 <= s < 100000 (pools: 0 < s) |
//! | upfront (`upfront_pct` quote) | percent | -100 < u < 100 |
//! | running coupon (`coupon_bp`) | bp | 0 <= c < 100000 |
//! | zero rate (`zero_rate_pct`) | percent | -50 < r < 50 |
//! | attachment (`attach_pct`) | percent | exactly 0, or 0.01 <= A <= 100 |
//! | detachment (`detach_pct`) | percent | 0.01 <= D <= 100 |
//! | tranche width D - A | percent | at least 0.01 |
//! | recovery (`recovery_pct`) | percent | 0 <= R < 100 |
//! | notional (`notional`) | currency | 0 < N < 1e15 |
//! | default rate (`default_rate_pct`) | percent | 0 <= x <= 100 |
//! | `defaults`, `obligors` | whole numbers | 0 <= defaults <= obligors, 1 <= obligors <= 10^9 |
//!
//! The limits are far outside any market (a spread of 1000%, a
//! tranche a hundredth of a percent wide, a notional of a thousand
//! trillion, a billion obligors), so no real file meets them, while every number inside
//! keeps the model's arithmetic finite. A `-0` is read as 0.

use super::cells::{quoted, Row};

/// Largest spread or coupon, exclusive, in bp (1000% a year).
pub const MAX_SPREAD_BP: f64 = 100_000.0;
/// Largest upfront in size, exclusive, in percent.
pub const MAX_UPFRONT_PCT: f64 = 100.0;
/// Largest zero rate in size, exclusive, in percent.
pub const MAX_ZERO_RATE_PCT: f64 = 50.0;
/// Smallest nonzero attachment or detachment, and narrowest tranche, in
/// percent of pool notional.
pub const MIN_BOUND_PCT: f64 = 0.01;
/// Largest notional, exclusive, in currency.
pub const MAX_NOTIONAL: f64 = 1e15;
/// Most obligors in one period of a default history (a billion): sums over
/// a million periods stay far from the end of 64-bit integers.
pub const MAX_OBLIGORS: u64 = 1_000_000_000;

/// Slack on the width check: 3.01 - 3 is 0.00999999999999979 in binary.
const WIDTH_SLACK: f64 = 1e-9;

impl Row<'_, '_, '_> {
    /// A spread in bp, `0 <= s < 100000`, or with `positive` `0 < s < 100000`.
    pub(crate) fn spread_bp(&mut self, id: usize, what: &str, positive: bool) -> Option<f64> {
        let v = self.number(id, what)?;
        let (range, ok) = if positive {
            ("a spread above 0 and below 100000 bp", v > 0.0)
        } else {
            ("a spread from 0 up to (not including) 100000 bp", v >= 0.0)
        };
        self.within(id, v, range, |v| ok && v < MAX_SPREAD_BP)
            .map(|v| v + 0.0)
    }

    /// A running coupon in bp, `0 <= c < 100000`.
    pub(crate) fn coupon_bp(&mut self, id: usize, what: &str) -> Option<f64> {
        self.checked(
            id,
            what,
            "a coupon from 0 up to (not including) 100000 bp",
            |v| (0.0..MAX_SPREAD_BP).contains(&v),
        )
        .map(|v| v + 0.0)
    }

    /// An upfront in percent, `-100 < u < 100`.
    pub(crate) fn upfront_pct(&mut self, id: usize, v: f64) -> Option<f64> {
        self.within(id, v, "an upfront above -100 and below 100 percent", |v| {
            v.abs() < MAX_UPFRONT_PCT
        })
        .map(|v| v + 0.0)
    }

    /// A zero rate in percent, `-50 < r < 50`.
    pub(crate) fn zero_rate_pct(&mut self, id: usize, v: f64) -> Option<f64> {
        self.within(id, v, "a zero rate above -50 and below 50 percent", |v| {
            v.abs() < MAX_ZERO_RATE_PCT
        })
        .map(|v| v + 0.0)
    }

    /// A recovery in percent, `0 <= R < 100`.
    pub(crate) fn recovery_pct(&mut self, id: usize) -> Option<f64> {
        self.checked(
            id,
            "a recovery in percent",
            "a recovery from 0 up to (not including) 100 percent",
            |v| (0.0..100.0).contains(&v),
        )
        .map(|v| v + 0.0)
    }

    /// A notional in currency, `0 < N < 1e15`.
    pub(crate) fn notional(&mut self, id: usize) -> Option<f64> {
        self.checked(
            id,
            "a notional (a currency amount)",
            "a notional above 0 and below 1e15",
            |v| v > 0.0 && v < MAX_NOTIONAL,
        )
    }

    /// Tranche bounds in percent: the attachment exactly 0 or at least
    /// 0.01, the detachment at least 0.01 and at most 100, and at least
    /// 0.01 above the attachment. The width problem sits at the detachment.
    pub(crate) fn bounds_pct(&mut self, attach: usize, detach: usize) -> Option<(f64, f64)> {
        let a = self.checked(
            attach,
            "an attachment in percent",
            "an attachment of 0, or from 0.01 to 100 percent",
            |v| v == 0.0 || (MIN_BOUND_PCT..=100.0).contains(&v),
        );
        let d = self.checked(
            detach,
            "a detachment in percent",
            "a detachment from 0.01 to 100 percent",
            |v| (MIN_BOUND_PCT..=100.0).contains(&v),
        );
        let (a, d) = (a? + 0.0, d?);
        let column = self.header.col(attach).map_or(0, |i| i + 1);
        if a >= d {
            let msg = format!(
                "expected a detachment above the attachment {} (column {column}), found {}",
                quoted(self.cell(attach)),
                quoted(self.cell(detach))
            );
            self.bad(detach, msg);
            return None;
        }
        if d - a < MIN_BOUND_PCT - WIDTH_SLACK {
            let msg = format!(
                "expected a detachment at least 0.01 percent above the attachment {} \
                 (column {column}; the narrowest tranche is 0.01 percent wide), found {}",
                quoted(self.cell(attach)),
                quoted(self.cell(detach))
            );
            self.bad(detach, msg);
            return None;
        }
        Some((a, d))
    }
}

#[cfg(test)]
mod tests {
    use super::super::cells::{invalid, records, Header};

    const NAMES: &[&str] = &["a", "d", "x"];

    /// The messages of the checks on one row `a,d,x`.
    fn check(row: &str, f: impl Fn(&mut super::Row) -> bool) -> (bool, Vec<String>) {
        let mut problems = Vec::new();
        let text = format!("a,d,x\n{row}\n");
        let recs = records(&text, "f.csv", &mut problems);
        let h = Header::read("f.csv", &recs[0], NAMES, &mut problems);
        let mut r = super::Row::new(&h, &recs[1], &mut problems);
        let ok = f(&mut r);
        let m = if problems.is_empty() {
            Vec::new()
        } else {
            invalid(problems)
                .problems
                .iter()
                .map(|p| p.to_string())
                .collect()
        };
        (ok, m)
    }

    #[test]
    fn bounds_are_zero_or_a_hundredth_of_a_percent_and_as_wide() {
        for (row, ok) in [
            ("0,3,", true),
            ("-0,3,", true),
            ("0,0.01,", true),
            ("99.99,100,", true),
            ("3,3.01,", true),
            ("0,4.9e-324,", false),
            ("0,1e-320,", false),
            ("0,0.0099,", false),
            ("1e-20,3,", false),
            ("0.005,3,", false),
            ("3,3.005,", false),
            ("99.995,100,", false),
            ("3,100.5,", false),
        ] {
            let (got, m) = check(row, |r| r.bounds_pct(0, 1).is_some());
            assert_eq!(got, ok, "{row}: {m:?}");
            assert_eq!(m.is_empty(), ok, "{row}: {m:?}");
        }
        let (_, m) = check("0,4.9e-324,", |r| r.bounds_pct(0, 1).is_some());
        assert_eq!(
            m,
            ["f.csv:2:2: column \"d\": expected a detachment from 0.01 to 100 percent, found \"4.9e-324\""]
        );
        let (_, m) = check("3,3.005,", |r| r.bounds_pct(0, 1).is_some());
        assert_eq!(
            m,
            ["f.csv:2:2: column \"d\": expected a detachment at least 0.01 percent above the \
              attachment \"3\" (column 1; the narrowest tranche is 0.01 percent wide), found \"3.005\""]
        );
    }

    #[test]
    fn quotes_coupons_rates_and_notionals_have_market_sized_domains() {
        let spread = |row: &str| check(row, |r| r.spread_bp(2, "a spread", false).is_some()).0;
        assert!(spread(",,0") && spread(",,-0") && spread(",,99999.99"));
        assert!(!spread(",,100000") && !spread(",,5e298") && !spread(",,-1"));
        let positive = |row: &str| check(row, |r| r.spread_bp(2, "a spread", true).is_some()).0;
        assert!(!positive(",,0") && positive(",,1e-3"));
        let coupon = |row: &str| check(row, |r| r.coupon_bp(2, "a coupon").is_some()).0;
        assert!(coupon(",,500") && !coupon(",,1e308") && !coupon(",,100000"));
        let rate = |v: f64| check(",,", |r| r.zero_rate_pct(2, v).is_some()).0;
        assert!(rate(-49.99) && rate(49.99) && !rate(50.0) && !rate(-50.0));
        let upfront = |v: f64| check(",,", |r| r.upfront_pct(2, v).is_some()).0;
        assert!(upfront(-99.99) && !upfront(100.0) && !upfront(-100.0));
        let notional = |row: &str| check(row, |r| r.notional(2).is_some()).0;
        assert!(notional(",,1e7") && !notional(",,1e15") && !notional(",,0"));
        let (_, m) = check(",,5e298", |r| r.spread_bp(2, "a spread", false).is_some());
        assert_eq!(
            m,
            ["f.csv:2:3: column \"x\": expected a spread from 0 up to (not including) 100000 bp, found \"5e298\""]
        );
    }
}
