//! Report of `skewbook realworld`: every estimator that applies to a
//! default history, side by side, with loss quantiles at each estimate.
//!
//! # JSON schema
//! - `source`: the history's path; `kind`: `rates` or `counts`;
//! - `periods`: number of periods; `zero_default_periods`: their labels;
//! - `mean_default_rate`: fraction; `variance_divisor`: `t` or `t_minus1`;
//! - `lgd`: the LGD the loss quantiles use (fraction; 1 = default rate);
//! - `methods`: one object per estimator:
//!   `method` (`probit_moments`, `moment_matching`, `joint_default_moments`,
//!   `binomial_ml`, `quantile_pair`); `pd`, `rho` (fractions, null where the
//!   estimator does not apply); `pd_se`, `rho_se` (null without a standard
//!   error); `pd_ci`, `rho_ci` (`[low, high]` 95 % intervals or null);
//!   `se_method` (`delta_method`, `observed_information` or null);
//!   `periods`; `zero_default_periods` (a count); `notes` (strings);
//!   `loss` (one object per level: `level`, `loss_quantile`,
//!   `expected_shortfall`, loss fractions; empty when pd or rho is null);
//! - `notes`: strings about the whole run.

use crate::error::Result;
use crate::input::history::{History, HistoryKind};
use crate::output::{csv_num, fixed, fixed_or, Report, Table};
use crate::realworld::estimators::{estimate_all, Estimate, Options, VarianceDivisor};
use crate::realworld::vasicek::Vasicek;
use serde::Serialize;

/// Loss quantile and shortfall at one level, for one estimate.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LevelLoss {
    /// Confidence level, a fraction.
    pub level: f64,
    /// Loss fraction at the level.
    pub loss_quantile: f64,
    /// Expected shortfall of the loss fraction at the level.
    pub expected_shortfall: f64,
}

/// One estimator's row.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct MethodRow {
    /// The estimate.
    #[serde(flatten)]
    pub estimate: Estimate,
    /// Loss quantiles at the estimate (empty when PD or rho is missing).
    pub loss: Vec<LevelLoss>,
}

/// The `realworld` command's report.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RealworldReport {
    /// Path of the history.
    pub source: String,
    /// Rates or counts.
    pub kind: HistoryKind,
    /// Number of periods.
    pub periods: usize,
    /// Labels of the zero-default periods.
    pub zero_default_periods: Vec<String>,
    /// Mean of the per-period default rates, a fraction.
    pub mean_default_rate: f64,
    /// Variance divisor of the moment estimators.
    pub variance_divisor: VarianceDivisor,
    /// LGD of the loss quantiles (1: default rate).
    pub lgd: f64,
    /// One row per estimator.
    pub methods: Vec<MethodRow>,
    /// Remarks about the run.
    pub notes: Vec<String>,
}

/// Loss quantiles at an estimate; rho = 0 is the point mass at PD.
fn loss_at(pd: f64, rho: f64, lgd: f64, levels: &[f64]) -> Result<Vec<LevelLoss>> {
    let mut out = Vec::new();
    if rho <= 0.0 {
        for &q in levels {
            // Validate the level like the Vasicek path does.
            Vasicek::new(0.5, 0.5, 1.0)?.quantile(q)?;
            out.push(LevelLoss {
                level: q,
                loss_quantile: lgd * pd,
                expected_shortfall: lgd * pd,
            });
        }
        return Ok(out);
    }
    let v = Vasicek::new(pd, rho, lgd)?;
    for &q in levels {
        out.push(LevelLoss {
            level: q,
            loss_quantile: v.quantile(q)?,
            expected_shortfall: v.expected_shortfall(q)?,
        });
    }
    Ok(out)
}

/// Runs every estimator on the history and the loss quantiles at each estimate.
///
/// # Errors
/// [`crate::ErrorKind::Usage`] for levels outside (0, 1), an LGD outside
/// (0, 1], or quantiles no Vasicek distribution has.
///
/// ```
/// use skewbook::input::history::History;
/// use skewbook::realworld::estimators::Options;
/// use skewbook::report::realworld::build_realworld;
/// let h = History::from_counts(&[(0, 400), (3, 410), (1, 395), (9, 420), (2, 405)])?;
/// let r = build_realworld(&h, &Options::default(), &[0.999], 1.0)?;
/// assert_eq!(r.methods.len(), 4);
/// assert!(r.methods[0].estimate.pd.is_none()); // probit: zero-default period
/// assert!(r.methods[3].estimate.pd.is_some()); // binomial ML handles it
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn build_realworld(
    h: &History,
    opts: &Options,
    levels: &[f64],
    lgd: f64,
) -> Result<RealworldReport> {
    if !(lgd.is_finite() && lgd > 0.0 && lgd <= 1.0) {
        return Err(crate::Error::msg(
            crate::ErrorKind::Usage,
            format!("LGD: expected a fraction in (0, 1], found {lgd}"),
        ));
    }
    let mut methods = Vec::new();
    for e in estimate_all(h, opts)? {
        let loss = match (e.pd, e.rho) {
            (Some(pd), Some(rho)) => loss_at(pd, rho, lgd, levels)?,
            _ => Vec::new(),
        };
        methods.push(MethodRow { estimate: e, loss });
    }
    let rates = h.rates();
    let mut notes = Vec::new();
    if lgd < 1.0 {
        notes.push(format!("loss quantiles use LGD {}%", fixed(100.0 * lgd, 2)));
    }
    Ok(RealworldReport {
        source: h.path.clone(),
        kind: h.kind,
        periods: h.periods.len(),
        zero_default_periods: h
            .zero_default_periods()
            .iter()
            .map(|s| s.to_string())
            .collect(),
        mean_default_rate: rates.iter().sum::<f64>() / rates.len() as f64,
        variance_divisor: opts.divisor,
        lgd,
        methods,
        notes,
    })
}

fn interval(ci: Option<[f64; 2]>, scale: f64, decimals: usize) -> String {
    ci.map_or_else(
        || "-".to_string(),
        |[a, b]| {
            format!(
                "{}..{}",
                fixed(scale * a, decimals),
                fixed(scale * b, decimals)
            )
        },
    )
}

/// Wraps `text` at `width` columns, continuation lines indented by `indent`.
fn wrap(text: &str, width: usize, indent: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut cur = String::new();
    for word in text.split_whitespace() {
        if !cur.is_empty() && cur.chars().count() + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut cur));
            cur = " ".repeat(indent);
        } else if !cur.is_empty() && !cur.ends_with(' ') {
            cur.push(' ');
        }
        cur.push_str(word);
    }
    if !cur.trim().is_empty() {
        lines.push(cur);
    }
    lines
}

fn level_label(q: f64) -> String {
    let s = format!("{}", 100.0 * q);
    let s = if s.len() > 7 {
        format!("{:.4}", 100.0 * q)
    } else {
        s
    };
    format!("{s}%")
}

impl Report for RealworldReport {
    fn sections(&self) -> Vec<Table> {
        let kind = match self.kind {
            HistoryKind::Rates => "default rates",
            HistoryKind::Counts => "default counts",
        };
        let mut est = Table::new(&["method", "PD %", "PD 95% CI", "rho", "rho 95% CI", "se by"])
            .with_title(format!(
                "Real-world PD and asset correlation: {}\n{kind}, {} periods, {} with no default, mean rate {}%",
                if self.source.is_empty() { "history" } else { &self.source },
                self.periods,
                self.zero_default_periods.len(),
                fixed(100.0 * self.mean_default_rate, 3)
            ));
        for m in &self.methods {
            let e = &m.estimate;
            est.push(vec![
                e.method.name().to_string(),
                fixed_or(e.pd.map(|x| 100.0 * x), 3, "-"),
                interval(e.pd_ci, 100.0, 3),
                fixed_or(e.rho, 4, "-"),
                interval(e.rho_ci, 1.0, 4),
                e.se_method
                    .map_or("-", |s| match s.name() {
                        "delta_method" => "delta",
                        _ => "obs.info",
                    })
                    .to_string(),
            ]);
        }
        est.notes.push(
            "95% intervals: Wald on the probit scale for PD and the logit scale for rho;"
                .to_string(),
        );
        est.notes.push(
            "se by: delta = delta method, obs.info = observed information of the likelihood."
                .to_string(),
        );
        let mut se = Table::new(&["method", "PD se %", "rho se", "periods", "zero-default"])
            .with_title("Standard errors and data used");
        for m in &self.methods {
            let e = &m.estimate;
            se.push(vec![
                e.method.name().to_string(),
                fixed_or(e.pd_se.map(|x| 100.0 * x), 4, "-"),
                fixed_or(e.rho_se, 4, "-"),
                e.periods.to_string(),
                e.zero_default_periods.to_string(),
            ]);
        }
        for m in &self.methods {
            for n in &m.estimate.notes {
                se.notes
                    .extend(wrap(&format!("{}: {n}", m.estimate.method.name()), 79, 4));
            }
        }
        let levels: Vec<f64> = self
            .methods
            .iter()
            .find(|m| !m.loss.is_empty())
            .map(|m| m.loss.iter().map(|l| l.level).collect())
            .unwrap_or_default();
        let mut headers = vec!["method".to_string()];
        for q in &levels {
            headers.push(format!("q {}", level_label(*q)));
            headers.push(format!("ES {}", level_label(*q)));
        }
        let mut loss = Table::new(&headers).with_title(format!(
            "Large-pool one-period {} at each estimate, %",
            if self.lgd < 1.0 {
                "loss"
            } else {
                "default rate"
            }
        ));
        for m in &self.methods {
            let mut row = vec![m.estimate.method.name().to_string()];
            for (i, _) in levels.iter().enumerate() {
                let l = m.loss.get(i);
                row.push(fixed_or(l.map(|l| 100.0 * l.loss_quantile), 3, "-"));
                row.push(fixed_or(l.map(|l| 100.0 * l.expected_shortfall), 3, "-"));
            }
            loss.push(row);
        }
        for n in &self.notes {
            loss.notes.extend(wrap(n, 79, 4));
        }
        vec![est, se, loss]
    }

    fn csv(&self) -> Table {
        let levels: Vec<f64> = self
            .methods
            .iter()
            .find(|m| !m.loss.is_empty())
            .map(|m| m.loss.iter().map(|l| l.level).collect())
            .unwrap_or_default();
        let mut headers: Vec<String> = [
            "method",
            "pd_pct",
            "pd_se_pct",
            "pd_ci_low_pct",
            "pd_ci_high_pct",
            "rho",
            "rho_se",
            "rho_ci_low",
            "rho_ci_high",
            "se_method",
            "periods",
            "zero_default_periods",
        ]
        .iter()
        .map(|s| s.to_string())
        .collect();
        for q in &levels {
            headers.push(format!("loss_q{q}_pct"));
            headers.push(format!("es_q{q}_pct"));
        }
        headers.push("notes".into());
        let mut t = Table::new(&headers);
        let p = |x: Option<f64>| csv_num(x.map(|v| 100.0 * v));
        for m in &self.methods {
            let e = &m.estimate;
            let mut row = vec![
                e.method.name().to_string(),
                p(e.pd),
                p(e.pd_se),
                p(e.pd_ci.map(|c| c[0])),
                p(e.pd_ci.map(|c| c[1])),
                csv_num(e.rho),
                csv_num(e.rho_se),
                csv_num(e.rho_ci.map(|c| c[0])),
                csv_num(e.rho_ci.map(|c| c[1])),
                e.se_method.map_or(String::new(), |s| s.name().to_string()),
                e.periods.to_string(),
                e.zero_default_periods.to_string(),
            ];
            for (i, _) in levels.iter().enumerate() {
                let l = m.loss.get(i);
                row.push(p(l.map(|l| l.loss_quantile)));
                row.push(p(l.map(|l| l.expected_shortfall)));
            }
            row.push(e.notes.join("; "));
            t.push(row);
        }
        t
    }
}
