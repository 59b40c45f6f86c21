//! Report of `skewbook loss`: the Vasicek large-pool loss distribution at
//! one (PD, rho, LGD) and the Basel II IRB corporate capital figure.
//!
//! # JSON schema
//! - `pd`, `rho`, `lgd`: the inputs, fractions;
//! - `mean_loss`, `loss_sd`: mean and standard deviation of the loss fraction;
//! - `levels`: one object per confidence level: `level` (fraction),
//!   `loss_quantile` (loss fraction at that level), `default_rate_quantile`
//!   (the same for the default rate, LGD 1), `density` (of the loss fraction
//!   at the quantile; null only where it exceeds the largest double, with a
//!   note), `expected_shortfall` (loss fraction);
//! - `irb`: `pd`, `lgd`, `maturity` (years), `turnover_m` (millions or
//!   null), `correlation`, `maturity_slope` (b), `capital` (K per unit
//!   exposure, floored at 0), `floored` (true when the formula gave a
//!   negative K), `risk_weight` (12.5 K, a fraction);
//! - `notes`: strings;
//! - `caution`: [`crate::CAUTION`].
//!
//! # Domain
//! PD in [1e-8, 1) (0.000001 % to 100 %) and rho in [1e-6, 1): below those
//! the distribution is a point mass to double precision and its density at
//! a quantile overflows (a PD of 1e-300 gave an infinite density, a rho of
//! 4.9e-324 a NaN).

use crate::error::{Error, ErrorKind, Result};
use crate::output::{csv_num, fixed, sci, significant, wrap, Report, Table};
use crate::realworld::irb::{irb_corporate, IrbCapital, CORPORATE_PD_FLOOR, IRB_CONFIDENCE};
use crate::realworld::vasicek::Vasicek;
use serde::Serialize;

/// One confidence level of the loss distribution.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LossLevel {
    /// Confidence level, a fraction.
    pub level: f64,
    /// Loss fraction at the level (LGD times the default-rate quantile).
    pub loss_quantile: f64,
    /// Default-rate quantile at the level.
    pub default_rate_quantile: f64,
    /// Density of the loss fraction at the quantile; `None` where it
    /// exceeds the largest double (the quantile within about 1e-300 of 0).
    pub density: Option<f64>,
    /// Expected shortfall of the loss fraction at the level.
    pub expected_shortfall: f64,
}

/// The `loss` command's report.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LossReport {
    /// PD, a fraction.
    pub pd: f64,
    /// Asset correlation.
    pub rho: f64,
    /// LGD, a fraction.
    pub lgd: f64,
    /// Mean loss fraction, PD · LGD.
    pub mean_loss: f64,
    /// Standard deviation of the loss fraction.
    pub loss_sd: f64,
    /// Quantiles and shortfalls, one per level.
    pub levels: Vec<LossLevel>,
    /// Basel II IRB corporate capital at the same PD and LGD.
    pub irb: IrbCapital,
    /// Remarks.
    pub notes: Vec<String>,
    /// What these figures are and are not: [`crate::CAUTION`].
    pub caution: &'static str,
}

/// Smallest PD `loss` accepts, a fraction (0.000001 %).
pub const LOSS_PD_MIN: f64 = 1e-8;

/// Smallest asset correlation `loss` accepts, a fraction (0.0001 %).
pub const LOSS_RHO_MIN: f64 = 1e-6;

/// Builds the `loss` report.
///
/// # Errors
/// [`crate::ErrorKind::Usage`] when PD is not in [[`LOSS_PD_MIN`], 1), rho
/// not in [[`LOSS_RHO_MIN`], 1), LGD not in (0, 1], a level not in (0, 1),
/// or the IRB maturity / turnover invalid.
///
/// ```
/// use skewbook::report::loss::build_loss;
/// let r = build_loss(0.02, 0.1, 1.0, &[0.999], 2.5, None)?;
/// assert!((r.levels[0].loss_quantile - 0.128237).abs() < 1e-6);
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn build_loss(
    pd: f64,
    rho: f64,
    lgd: f64,
    levels: &[f64],
    maturity: f64,
    turnover_m: Option<f64>,
) -> Result<LossReport> {
    for (name, x, min) in [("PD", pd, LOSS_PD_MIN), ("rho", rho, LOSS_RHO_MIN)] {
        if !(x >= min && x < 1.0) {
            return Err(Error::msg(
                ErrorKind::Usage,
                format!(
                    "{name}: expected a fraction in [{}, 1), found {}",
                    significant(min, 6),
                    significant(x, 6)
                ),
            ));
        }
    }
    crate::realworld::check_levels(levels)?;
    let v = Vasicek::new(pd, rho, lgd)?;
    let mut out = Vec::new();
    for &q in levels {
        let loss_quantile = v.quantile(q)?;
        out.push(LossLevel {
            level: q,
            loss_quantile,
            default_rate_quantile: loss_quantile / lgd,
            density: Some(v.density(loss_quantile)).filter(|f| f.is_finite()),
            expected_shortfall: v.expected_shortfall(q)?,
        });
    }
    let irb = irb_corporate(pd, lgd, maturity, turnover_m)?;
    let mut notes = vec![format!(
        "IRB: Basel II corporate formula (confidence {IRB_CONFIDENCE}) with its own \
         supervisory correlation {}, not the input rho: a reference figure.",
        fixed(irb.correlation, 4)
    )];
    if out.iter().any(|l| l.density.is_none()) {
        notes.push(
            "density: beyond the largest double at a quantile within about 1e-300 of 0 \
             (shown as -, null in JSON)"
                .into(),
        );
    }
    if pd < CORPORATE_PD_FLOOR {
        notes
            .push("IRB: PD below the Basel II corporate floor of 0.03% (floor not applied)".into());
    }
    let denominator = 1.0 - 1.5 * irb.maturity_slope;
    if denominator < 0.1 {
        notes.push(format!(
            "IRB: at this PD the maturity adjustment's denominator 1 - 1.5 b is {} \
             (b = {}), near zero or negative: the formula is far outside its range and \
             the figure has no meaning.",
            significant(denominator, 4),
            significant(irb.maturity_slope, 4)
        ));
    }
    if irb.floored {
        notes.push(
            "IRB: the formula gave a negative capital; K is floored at 0 (Basel II, \
             footnote to para. 272)."
                .into(),
        );
    }
    Ok(LossReport {
        pd,
        rho,
        lgd,
        mean_loss: v.mean(),
        loss_sd: v.std_dev(),
        levels: out,
        irb,
        notes,
        caution: crate::CAUTION,
    })
}

fn density(x: Option<f64>) -> String {
    match x {
        Some(x) if (1e-3..1e6).contains(&x) => fixed(x, 4),
        Some(x) if x == 0.0 => fixed(x, 4),
        Some(x) => sci(x, 3),
        None => "-".to_string(),
    }
}

/// A fraction as the percentage a user would have typed: as many significant
/// digits as the fraction's shortest representation has (0.999 is 99.9%,
/// 0.9999999999999999 is 99.99999999999999%, 1e-8 is 1e-6%).
fn typed_pct(q: f64) -> String {
    let shortest = format!("{q:e}");
    let mantissa = shortest.split('e').next().unwrap_or("");
    let digits = mantissa.chars().filter(char::is_ascii_digit).count();
    format!("{}%", significant(100.0 * q, digits))
}

fn pct(x: f64) -> String {
    fixed(100.0 * x, 4)
}

impl Report for LossReport {
    fn sections(&self) -> Vec<Table> {
        let mut t = Table::new(&["level", "loss %", "ES %", "default rate %", "density"])
            .with_title(format!(
            "Vasicek large-pool loss: PD {}, rho {}, LGD {}\nmean loss {}%, standard deviation {}%",
            typed_pct(self.pd),
            typed_pct(self.rho),
            typed_pct(self.lgd),
            pct(self.mean_loss),
            pct(self.loss_sd)
        ));
        for l in &self.levels {
            t.push(vec![
                typed_pct(l.level),
                pct(l.loss_quantile),
                pct(l.expected_shortfall),
                pct(l.default_rate_quantile),
                density(l.density),
            ]);
        }
        let mut k = Table::new(&["quantity", "value"]).with_title(format!(
            "Basel II IRB corporate capital (reference): PD {}, LGD {}, M {}",
            typed_pct(self.irb.pd),
            typed_pct(self.irb.lgd),
            significant(self.irb.maturity, 6)
        ));
        k.push(vec!["correlation R".into(), fixed(self.irb.correlation, 6)]);
        k.push(vec![
            "maturity slope b".into(),
            fixed(self.irb.maturity_slope, 6),
        ]);
        if let Some(s) = self.irb.turnover_m {
            k.push(vec!["SME turnover (m)".into(), fixed(s, 2)]);
        }
        k.push(vec!["capital K %".into(), pct(self.irb.capital)]);
        k.push(vec![
            "risk weight %".into(),
            fixed(100.0 * self.irb.risk_weight, 2),
        ]);
        for n in &self.notes {
            k.notes.extend(wrap(n, 79, 4));
        }
        k.notes.push(String::new());
        k.notes
            .extend(wrap(&format!("Caution: {}", self.caution), 79, 0));
        vec![t, k]
    }

    fn csv(&self) -> Table {
        let mut t = Table::new(&[
            "pd_pct",
            "rho",
            "lgd_pct",
            "level",
            "loss_quantile_pct",
            "expected_shortfall_pct",
            "default_rate_quantile_pct",
            "density",
            "irb_correlation",
            "irb_capital_pct",
            "irb_risk_weight_pct",
        ]);
        for l in &self.levels {
            t.push(vec![
                csv_num(Some(100.0 * self.pd)),
                csv_num(Some(self.rho)),
                csv_num(Some(100.0 * self.lgd)),
                csv_num(Some(l.level)),
                csv_num(Some(100.0 * l.loss_quantile)),
                csv_num(Some(100.0 * l.expected_shortfall)),
                csv_num(Some(100.0 * l.default_rate_quantile)),
                csv_num(l.density),
                csv_num(Some(self.irb.correlation)),
                csv_num(Some(100.0 * self.irb.capital)),
                csv_num(Some(100.0 * self.irb.risk_weight)),
            ]);
        }
        t
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::output::{check_report, Format};

    /// Across the whole domain, edges included, every number of the report
    /// is finite in every format (the output guard would refuse it), and a
    /// missing density comes with its note.
    #[test]
    fn every_number_is_finite_across_the_domain() {
        let levels = [
            1e-12,
            1e-6,
            0.5,
            0.99,
            0.999,
            1.0 - 1e-12,
            0.9999999999999999,
        ];
        let below_one = 1.0 - f64::EPSILON / 2.0;
        for pd in [
            LOSS_PD_MIN,
            1e-6,
            3e-6,
            0.0003,
            0.02,
            0.5,
            0.999999,
            below_one,
        ] {
            for rho in [LOSS_RHO_MIN, 1e-3, 0.12, 0.5, 0.95, 0.999999, below_one] {
                for lgd in [1e-6, 0.45, 1.0] {
                    for maturity in [1.0, 2.5, 5.0] {
                        let r = build_loss(pd, rho, lgd, &levels, maturity, Some(20.0)).unwrap();
                        for format in [Format::Table, Format::Csv, Format::Json] {
                            if let Err(e) = check_report(&r, format) {
                                panic!("pd {pd} rho {rho} lgd {lgd} M {maturity}: {e}");
                            }
                        }
                        assert!(r.irb.capital >= 0.0);
                        if r.levels.iter().any(|l| l.density.is_none()) {
                            assert!(r.notes.iter().any(|n| n.starts_with("density")));
                        }
                    }
                }
            }
        }
    }

    #[test]
    fn outside_the_domain_is_a_usage_error() {
        for (pd, rho) in [
            (1e-300, 0.12),
            (0.03, 4.9e-324),
            (1e-9, 0.1),
            (1.0, 0.1),
            (0.01, 1.0),
        ] {
            let e = build_loss(pd, rho, 1.0, &[0.999], 2.5, None).unwrap_err();
            assert_eq!(e.kind, ErrorKind::Usage);
        }
        let e = build_loss(1e-300, 0.12, 1.0, &[0.999], 2.5, None).unwrap_err();
        assert_eq!(
            e.to_string(),
            "PD: expected a fraction in [1e-8, 1), found 1e-300"
        );
    }

    #[test]
    fn labels_read_as_typed() {
        assert_eq!(typed_pct(0.999), "99.9%");
        assert_eq!(typed_pct(0.9999999999999999), "99.99999999999999%");
        assert_eq!(typed_pct(1e-8), "1e-6%");
        assert_eq!(typed_pct(0.45), "45%");
    }
}
