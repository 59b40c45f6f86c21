//! Calendar, day counts and the premium schedule.
//!
//! - [`calendar`]: business days (Monday to Friday), the following-day roll,
//!   quarterly roll dates (20 March, June, September, December), step-in and
//!   settlement dates, Act/360 accrual and Act/365F curve time;
//! - [`schedule`]: the coupon periods of an index or tranche from trade date
//!   to maturity.

pub mod calendar;
pub mod schedule;

pub use calendar::{act_360, curve_time, settlement_date, step_in_date};
pub use schedule::{Period, Schedule};
