//! One rule for units on the command line: the files' rule.
//!
//! Recovery, rates, correlation, PD, rho, LGD, confidence levels and default
//! rates are typed in percent (`--correlation 30` is 30 %, `--levels 99.9`
//! is 99.9 %); the library works in fractions. Each option's domain is
//! checked here, in percent, so an error names the number as typed and its
//! unit. A value that more plausibly is a fraction typed by habit draws a
//! warning on standard error (the run goes on):
//!
//! | option | domain (percent) | warning when |
//! | --- | --- | --- |
//! | `--recovery` | [0, 100) | 0 < x < 1 |
//! | `--rate` | (-100, 100) | 0 < abs(x) < 0.1 (a rate under 10 bp) |
//! | `--correlation` | (0, 100) | x < 1 |
//! | `--pd` | [0.000001, 100) | x < 0.03 (below the Basel II corporate PD floor) |
//! | `--rho` | [0.0001, 100) | x < 1 |
//! | `--lgd` | (0, 100] | x <= 1 |
//! | `--levels`, `--quantiles` levels | (0, 100) | x < 1 |
//! | `--quantiles` rates | (0, 100) | (with its level) |
//!
//! The thresholds sit where the fraction reading is the more plausible one:
//! a recovery, correlation, LGD or confidence level under 1 % is rare while
//! the same number as a fraction is ordinary; a PD of 0.5 % is ordinary, so
//! `--pd` warns only below the 0.03 % corporate floor, where the fraction
//! reading (0.03 % to 3 %) is the usual one.

use skewbook::output::significant;
use skewbook::{Error, ErrorKind};

/// A percentage option: its name, domain and the values that look like a
/// fraction.
#[derive(Clone, Copy)]
pub struct Percent {
    /// The option as typed, `--pd`.
    pub option: &'static str,
    /// Lower bound, percent.
    pub low: f64,
    /// Whether the lower bound itself is excluded.
    pub low_open: bool,
    /// Upper bound, percent.
    pub high: f64,
    /// Whether the upper bound itself is excluded.
    pub high_open: bool,
    /// Values that more plausibly are a fraction typed by habit.
    pub looks_like_fraction: fn(f64) -> bool,
}

/// `--recovery`.
pub const RECOVERY: Percent = Percent {
    option: "--recovery",
    low: 0.0,
    low_open: false,
    high: 100.0,
    high_open: true,
    looks_like_fraction: |x| x > 0.0 && x < 1.0,
};

/// `--rate`.
pub const RATE: Percent = Percent {
    option: "--rate",
    low: -100.0,
    low_open: true,
    high: 100.0,
    high_open: true,
    looks_like_fraction: |x| x != 0.0 && x.abs() < 0.1,
};

/// `price --correlation`.
pub const CORRELATION: Percent = Percent {
    option: "--correlation",
    low: 0.0,
    low_open: true,
    high: 100.0,
    high_open: true,
    looks_like_fraction: |x| x < 1.0,
};

/// `loss --pd`: 1e-8 as a fraction (`skewbook::report::loss::LOSS_PD_MIN`).
pub const PD: Percent = Percent {
    option: "--pd",
    low: 1e-6,
    low_open: false,
    high: 100.0,
    high_open: true,
    looks_like_fraction: |x| x < 0.03,
};

/// `loss --rho`: 1e-6 as a fraction (`skewbook::report::loss::LOSS_RHO_MIN`).
pub const RHO: Percent = Percent {
    option: "--rho",
    low: 1e-4,
    low_open: false,
    high: 100.0,
    high_open: true,
    looks_like_fraction: |x| x < 1.0,
};

/// `--lgd` of `loss` and `realworld`.
pub const LGD: Percent = Percent {
    option: "--lgd",
    low: 0.0,
    low_open: true,
    high: 100.0,
    high_open: false,
    looks_like_fraction: |x| x <= 1.0,
};

/// One of `--levels`.
pub const LEVEL: Percent = Percent {
    option: "--levels",
    low: 0.0,
    low_open: true,
    high: 100.0,
    high_open: true,
    looks_like_fraction: |x| x < 1.0,
};

/// The level of a `--quantiles` pair.
pub const QUANTILE_LEVEL: Percent = Percent {
    option: "--quantiles level",
    ..LEVEL
};

/// The default rate of a `--quantiles` pair.
pub const QUANTILE_RATE: Percent = Percent {
    option: "--quantiles rate",
    looks_like_fraction: |_| false,
    ..LEVEL
};

/// A percentage as the library's fraction: the decimal typed, divided by
/// 100 exactly, then rounded once to the nearest double (99.9 gives 0.999,
/// not the 0.9990000000000001 of a floating-point division). A value that
/// needs more than 15 significant digits is divided as a double.
pub fn to_fraction(percent: f64) -> f64 {
    let e_form = format!("{percent:.14e}");
    if e_form.parse::<f64>() == Ok(percent) {
        if let Some((mantissa, exponent)) = e_form.split_once('e') {
            if let Ok(exponent) = exponent.parse::<i32>() {
                if let Ok(f) = format!("{mantissa}e{}", exponent - 2).parse::<f64>() {
                    return f;
                }
            }
        }
    }
    percent / 100.0
}

/// `x` as typed, for messages (at most 6 significant digits).
fn shown(x: f64) -> String {
    significant(x, 6)
}

impl Percent {
    fn domain(&self) -> String {
        format!(
            "{}{}, {}{}",
            if self.low_open { '(' } else { '[' },
            shown(self.low),
            shown(self.high),
            if self.high_open { ')' } else { ']' }
        )
    }

    fn contains(&self, x: f64) -> bool {
        let above = if self.low_open {
            x > self.low
        } else {
            x >= self.low
        };
        let below = if self.high_open {
            x < self.high
        } else {
            x <= self.high
        };
        x.is_finite() && above && below
    }

    /// Checks a typed percentage against the domain.
    ///
    /// # Errors
    /// A usage error naming the option, the domain in percent and the value.
    pub fn check(&self, x: f64) -> Result<f64, Error> {
        let f = to_fraction(x);
        // The fraction must keep the domain (a typed 1e-322 % is 0 as a double).
        let kept = Percent {
            low: self.low / 100.0,
            high: self.high / 100.0,
            ..*self
        };
        if self.contains(x) && kept.contains(f) {
            Ok(f)
        } else {
            Err(Error::msg(
                ErrorKind::Usage,
                format!(
                    "{}: expected a percentage in {}, found {}",
                    self.option,
                    self.domain(),
                    shown(x)
                ),
            ))
        }
    }

    /// The warning for a value that looks like a fraction typed by habit.
    pub fn warning(&self, x: f64) -> Option<String> {
        (self.contains(x) && (self.looks_like_fraction)(x)).then(|| {
            format!(
                "{} {} is read as {}%; if you meant the fraction {} ({}%), type {} {}",
                self.option,
                shown(x),
                shown(x),
                shown(x),
                shown(100.0 * x),
                self.option,
                shown(100.0 * x)
            )
        })
    }

    /// Checks `x`, prints its warning if any, and returns the fraction.
    ///
    /// # Errors
    /// See [`Percent::check`].
    pub fn read(&self, x: f64) -> Result<f64, Error> {
        let f = self.check(x)?;
        if let Some(w) = self.warning(x) {
            eprintln!("warning: {w}");
        }
        Ok(f)
    }
}

fn usage(message: String) -> Error {
    Error::msg(ErrorKind::Usage, message)
}

/// `--levels` in percent: each in (0, 100), none twice; one warning when
/// some look like fractions. Returns fractions, in the order typed.
///
/// # Errors
/// A usage error naming the level.
pub fn levels(typed: &[f64]) -> Result<Vec<f64>, Error> {
    let mut out = Vec::with_capacity(typed.len());
    for (i, &x) in typed.iter().enumerate() {
        out.push(LEVEL.check(x)?);
        if typed[..i].contains(&x) {
            return Err(usage(format!(
                "--levels: expected each level once, found {} twice",
                shown(x)
            )));
        }
    }
    if typed.iter().any(|&x| (LEVEL.looks_like_fraction)(x)) {
        let list = |xs: Vec<String>| xs.join(",");
        eprintln!(
            "warning: --levels {} is read in percent ({}); if you meant fractions, type --levels {}",
            list(typed.iter().map(|&x| shown(x)).collect()),
            list(typed.iter().map(|&x| format!("{}%", shown(x))).collect()),
            list(typed.iter().map(|&x| shown(100.0 * x)).collect()),
        );
    }
    Ok(out)
}

/// `--quantiles LEVEL:RATE,LEVEL:RATE` in percent (already split at the
/// comma), as fractions sorted by level: the pair is unordered, so
/// `99.9:9,50:0.66` is `50:0.66,99.9:9`.
///
/// # Errors
/// A usage error for a count other than two, a pair without `:`, a number
/// that does not parse, a level or rate outside (0, 100), two equal levels,
/// or a rate that does not rise with the level (no Vasicek distribution has
/// such quantiles).
pub fn quantiles(items: &[String]) -> Result<Option<[(f64, f64); 2]>, Error> {
    if items.is_empty() {
        return Ok(None);
    }
    if items.len() != 2 {
        return Err(usage(format!(
            "--quantiles: expected two LEVEL:RATE pairs, found {}",
            items.len()
        )));
    }
    let mut typed = [(0.0, 0.0); 2];
    for (slot, item) in typed.iter_mut().zip(items) {
        let (a, b) = item.split_once(':').ok_or_else(|| {
            usage(format!(
                "--quantiles: expected LEVEL:RATE, found \"{item}\""
            ))
        })?;
        let num = |s: &str| {
            s.trim().parse::<f64>().map_err(|_| {
                usage(format!(
                    "--quantiles: expected a number, found \"{s}\" in \"{item}\""
                ))
            })
        };
        *slot = (num(a)?, num(b)?);
    }
    typed.sort_by(|x, y| x.0.total_cmp(&y.0));
    let mut pairs = [(0.0, 0.0); 2];
    for (slot, &(level, rate)) in pairs.iter_mut().zip(&typed) {
        *slot = (QUANTILE_LEVEL.check(level)?, QUANTILE_RATE.check(rate)?);
    }
    let [(l1, r1), (l2, r2)] = typed;
    if l1 == l2 {
        return Err(usage(format!(
            "--quantiles: expected two different levels, found {} twice",
            shown(l1)
        )));
    }
    if r2 <= r1 {
        return Err(usage(format!(
            "--quantiles: expected the rate at level {}% ({}%) above the rate at level {}% \
             ({}%); no Vasicek distribution has these quantiles",
            shown(l2),
            shown(r2),
            shown(l1),
            shown(r1)
        )));
    }
    if typed
        .iter()
        .any(|&(level, _)| (QUANTILE_LEVEL.looks_like_fraction)(level))
    {
        let show = |f: &dyn Fn(f64) -> String| {
            typed
                .iter()
                .map(|&(l, r)| format!("{}:{}", f(l), f(r)))
                .collect::<Vec<_>>()
                .join(",")
        };
        eprintln!(
            "warning: --quantiles {} is read in percent (levels {}); if you meant fractions, type --quantiles {}",
            show(&|x| shown(x)),
            typed
                .iter()
                .map(|&(l, _)| format!("{}%", shown(l)))
                .collect::<Vec<_>>()
                .join(" and "),
            show(&|x| shown(100.0 * x)),
        );
    }
    Ok(Some(pairs))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn typed_percentages_become_the_nearest_fraction() {
        // 99.9 / 100 is 0.9990000000000001 in doubles; the fraction typed is 0.999.
        assert_ne!(99.9 / 100.0, 0.999);
        assert_eq!(to_fraction(99.9), 0.999);
        assert_eq!(to_fraction(30.0), 0.3);
        assert_eq!(to_fraction(0.657105077249435), 0.00657105077249435);
        assert_eq!(to_fraction(-2.5), -0.025);
        assert_eq!(to_fraction(0.0), 0.0);
        // 16 digits: divided as a double, and still below 1.
        assert!(to_fraction(99.99999999999999) < 1.0);
        assert!(LEVEL.check(99.99999999999999).is_ok());
        assert!(LEVEL.check(1e-322).is_err());
        assert!(to_fraction(f64::INFINITY).is_infinite() && to_fraction(f64::NAN).is_nan());
    }

    #[test]
    fn domains_and_messages_are_in_percent() {
        let e = RECOVERY.check(-1.0).unwrap_err().to_string();
        assert_eq!(e, "--recovery: expected a percentage in [0, 100), found -1");
        let e = PD.check(1e-300).unwrap_err().to_string();
        assert_eq!(
            e,
            "--pd: expected a percentage in [1e-6, 100), found 1e-300"
        );
        assert!(RHO.check(4.9e-324).is_err());
        assert!(RHO.check(1e-4).is_ok() && RHO.check(99.99).is_ok());
        assert!(LGD.check(100.0).is_ok() && LGD.check(0.0).is_err());
        assert!(CORRELATION.check(100.0).is_err() && CORRELATION.check(f64::NAN).is_err());
        assert!(RATE.check(-3.0).is_ok() && RATE.check(-100.0).is_err());
    }

    /// Each threshold of the module's table, on both sides.
    #[test]
    fn warnings_where_the_fraction_reading_is_more_plausible() {
        for (rule, warned, quiet) in [
            (&RECOVERY, 0.4, 40.0),
            (&RECOVERY, 0.99, 0.0),
            (&RATE, 0.03, 3.0),
            (&RATE, -0.05, 0.0),
            (&CORRELATION, 0.3, 30.0),
            (&CORRELATION, 0.9999, 1.0),
            (&PD, 0.02, 0.5),
            (&PD, 0.0003, 0.03),
            (&RHO, 0.12, 12.0),
            (&LGD, 0.45, 45.0),
            (&LGD, 1.0, 1.5),
            (&LEVEL, 0.999, 99.9),
        ] {
            assert!(rule.warning(warned).is_some(), "{} {warned}", rule.option);
            assert!(rule.warning(quiet).is_none(), "{} {quiet}", rule.option);
        }
        assert_eq!(
            RECOVERY.warning(0.4).unwrap(),
            "--recovery 0.4 is read as 0.4%; if you meant the fraction 0.4 (40%), type --recovery 40"
        );
        // Outside the domain: an error, not a warning.
        assert!(CORRELATION.warning(-0.5).is_none());
    }

    #[test]
    fn levels_once_each_in_percent() {
        assert_eq!(levels(&[99.0, 99.9]).unwrap(), vec![0.99, 0.999]);
        let e = levels(&[99.9, 99.9]).unwrap_err().to_string();
        assert_eq!(e, "--levels: expected each level once, found 99.9 twice");
        let e = levels(&[150.0]).unwrap_err().to_string();
        assert_eq!(e, "--levels: expected a percentage in (0, 100), found 150");
    }

    #[test]
    fn quantile_pairs_sorted_and_checked_in_percent() {
        let q = |a: &str, b: &str| quantiles(&[a.to_string(), b.to_string()]);
        let sorted = q("50:0.66", "99.9:9").unwrap().unwrap();
        assert_eq!(sorted, [(0.5, 0.0066), (0.999, 0.09)]);
        assert_eq!(q("99.9:9", "50:0.66").unwrap().unwrap(), sorted);
        let e = q("50:0.66", "-1:9").unwrap_err().to_string();
        assert_eq!(
            e,
            "--quantiles level: expected a percentage in (0, 100), found -1"
        );
        let e = q("50:0.66", "99.9:120").unwrap_err().to_string();
        assert!(
            e.starts_with("--quantiles rate:") && e.ends_with("found 120"),
            "{e}"
        );
        assert!(q("50", "99.9:9").is_err());
        let e = q("50:10.123456789", "99.9:5").unwrap_err().to_string();
        assert_eq!(
            e,
            "--quantiles: expected the rate at level 99.9% (5%) above the rate at level 50% \
             (10.1235%); no Vasicek distribution has these quantiles"
        );
        assert!(q("50:1", "50:2").is_err());
        assert!(quantiles(&["50:1".to_string()]).is_err());
        assert_eq!(quantiles(&[]).unwrap(), None);
    }
}
