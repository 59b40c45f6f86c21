//! Report of `skewbook loss`: the Vasicek large-pool loss distribution at
//! one (PD, rho, LGD) and the Basel II IRB corporate capital figure.
//!
//! # JSON schema
//! - `pd`, `rho`, `lgd`: the inputs, fractions;
//! - `mean_loss`, `loss_sd`: mean and standard deviation of the loss fraction;
//! - `levels`: one object per confidence level: `level` (fraction),
//!   `loss_quantile` (loss fraction at that level), `default_rate_quantile`
//!   (the same for the default rate, LGD 1), `density` (of the loss fraction
//!   at the quantile), `expected_shortfall` (loss fraction);
//! - `irb`: `pd`, `lgd`, `maturity` (years), `turnover_m` (millions or
//!   null), `correlation`, `maturity_slope` (b), `capital` (K per unit
//!   exposure), `risk_weight` (12.5 K, a fraction);
//! - `notes`: strings.

use crate::error::Result;
use crate::output::{csv_num, fixed, sci, Report, Table};
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
    /// Density of the loss fraction at the quantile.
    pub density: f64,
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
}

/// Builds the `loss` report.
///
/// # Errors
/// [`crate::ErrorKind::Usage`] when PD or rho is not in (0, 1), LGD not in
/// (0, 1], a level not in (0, 1), or the IRB maturity / turnover invalid.
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
    crate::realworld::check_levels(levels)?;
    let v = Vasicek::new(pd, rho, lgd)?;
    let mut out = Vec::new();
    for &q in levels {
        let loss_quantile = v.quantile(q)?;
        out.push(LossLevel {
            level: q,
            loss_quantile,
            default_rate_quantile: loss_quantile / lgd,
            density: v.density(loss_quantile),
            expected_shortfall: v.expected_shortfall(q)?,
        });
    }
    let irb = irb_corporate(pd, lgd, maturity, turnover_m)?;
    let mut notes = vec![
        format!(
            "IRB: Basel II corporate formula (confidence {IRB_CONFIDENCE}) with its own \
             supervisory"
        ),
        format!(
            "correlation {}, not the input rho: a reference figure.",
            fixed(irb.correlation, 4)
        ),
    ];
    if pd < CORPORATE_PD_FLOOR {
        notes
            .push("IRB: PD below the Basel II corporate floor of 0.03% (floor not applied)".into());
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
    })
}

fn density(x: f64) -> String {
    if (1e-3..1e6).contains(&x) {
        fixed(x, 4)
    } else {
        sci(x, 3)
    }
}

/// A level as typed (0.999), or in exponent form when it is tiny.
fn level_label(q: f64) -> String {
    if q < 1e-4 {
        sci(q, 3)
    } else {
        format!("{q}")
    }
}

fn pct(x: f64) -> String {
    fixed(100.0 * x, 4)
}

impl Report for LossReport {
    fn sections(&self) -> Vec<Table> {
        let mut t = Table::new(&["level", "loss %", "ES %", "default rate %", "density"]).with_title(
            format!(
                "Vasicek large-pool loss: PD {}%, rho {}, LGD {}%\nmean loss {}%, standard deviation {}%",
                pct(self.pd),
                fixed(self.rho, 4),
                fixed(100.0 * self.lgd, 2),
                pct(self.mean_loss),
                pct(self.loss_sd)
            ),
        );
        for l in &self.levels {
            t.push(vec![
                level_label(l.level),
                pct(l.loss_quantile),
                pct(l.expected_shortfall),
                pct(l.default_rate_quantile),
                density(l.density),
            ]);
        }
        let mut k = Table::new(&["quantity", "value"]).with_title(format!(
            "Basel II IRB corporate capital (reference): PD {}%, LGD {}%, M {}",
            pct(self.irb.pd),
            fixed(100.0 * self.irb.lgd, 2),
            self.irb.maturity
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
        k.notes = self.notes.clone();
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
                csv_num(Some(l.density)),
                csv_num(Some(self.irb.correlation)),
                csv_num(Some(100.0 * self.irb.capital)),
                csv_num(Some(100.0 * self.irb.risk_weight)),
            ]);
        }
        t
    }
}
