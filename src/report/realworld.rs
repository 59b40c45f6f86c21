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
//! - `notes`: strings about the whole run;
//! - `risk_neutral`: null without `--against`; otherwise the snapshot's last
//!   trade date seen from the market: `snapshot`, `date`, `recovery`
//!   (fraction), `pd_one_year` (default probability to one year, 365 days,
//!   off the bootstrapped index curve), `index` (per pillar: `maturity`,
//!   `default_probability` to its protection end), `tranches` (per tranche:
//!   `maturity`, `attach_pct`, `detach_pct`, `compound_correlation` (every
//!   root), `base_correlation` (null where none)), `ratios` (per estimator
//!   with a PD and rho: `method`, `pd_ratio` = pd_one_year / pd,
//!   `base_correlation_ratio` and `compound_correlation_ratio`, one entry per
//!   tranche in the order of `tranches`, each risk-neutral / real-world rho,
//!   null where the correlation or rho is missing or rho is 0), and
//!   `reading`, a one-line interpretation;
//! - `caution`: [`crate::CAUTION`].

use crate::error::Result;
use crate::input::history::{History, HistoryKind};
use crate::output::{csv_num, fixed, fixed_or, wrap, Report, Table};
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
    /// The risk-neutral side, with `--against`.
    pub risk_neutral: Option<RiskNeutral>,
    /// What these figures are and are not: [`crate::CAUTION`].
    pub caution: &'static str,
}

/// A risk-neutral default probability to one index pillar.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RiskNeutralPillar {
    /// Maturity, ISO 8601.
    pub maturity: String,
    /// Default probability to the protection end, fraction.
    pub default_probability: f64,
}

/// Implied correlations of one tranche.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RiskNeutralTranche {
    /// Maturity, ISO 8601.
    pub maturity: String,
    /// Attachment, percent.
    pub attach_pct: f64,
    /// Detachment, percent.
    pub detach_pct: f64,
    /// Every compound correlation.
    pub compound_correlation: Vec<f64>,
    /// Base correlation at the detachment.
    pub base_correlation: Option<f64>,
}

/// Risk-neutral over real-world ratios for one estimator.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RiskNeutralRatios {
    /// The estimator.
    pub method: String,
    /// Risk-neutral one-year PD over the estimator's PD.
    pub pd_ratio: f64,
    /// Base correlation over the estimator's rho, per tranche.
    pub base_correlation_ratio: Vec<Option<f64>>,
    /// Each compound correlation over the estimator's rho, per tranche.
    pub compound_correlation_ratio: Vec<Vec<f64>>,
}

/// The risk-neutral side of the comparison.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RiskNeutral {
    /// Path of the snapshot.
    pub snapshot: String,
    /// The trade date used (the snapshot's last).
    pub date: String,
    /// Recovery of that date.
    pub recovery: f64,
    /// One-year risk-neutral default probability.
    pub pd_one_year: f64,
    /// Default probability to each index pillar.
    pub index: Vec<RiskNeutralPillar>,
    /// Implied correlations per tranche.
    pub tranches: Vec<RiskNeutralTranche>,
    /// Ratios per estimator.
    pub ratios: Vec<RiskNeutralRatios>,
    /// A one-line reading of the gap.
    pub reading: String,
}

/// The one-line reading of the ratio ranges (risk-neutral / real-world) of
/// PD and of base correlation: which side is higher, and what the gap is.
fn reading(pd: Option<(f64, f64)>, rho: Option<(f64, f64)>) -> String {
    let Some((a, b)) = pd else {
        return "No estimator gave both PD and rho, so there is nothing to compare.".to_string();
    };
    let range = |lo: f64, hi: f64| format!("{}x to {}x", fixed(lo, 2), fixed(hi, 2));
    let mut s = format!(
        "The market's one-year PD is {} the historical estimates",
        range(a, b)
    );
    if let Some((c, e)) = rho {
        s.push_str(&format!(
            " and its base correlations {} the historical asset correlation",
            range(c, e)
        ));
    }
    let above = a > 1.0 && rho.is_none_or(|(c, _)| c > 1.0);
    let below = b < 1.0 && rho.is_none_or(|(_, e)| e < 1.0);
    s.push_str(if above {
        ": the gap is the market's premium for default and correlation risk, plus model and recovery assumptions."
    } else if below {
        ": the market prices less risk than the history shows; check that the snapshot and the history are of the same pool and period, and the recovery assumption."
    } else {
        ": the two sides straddle each other; the gap mixes risk premia with model and recovery assumptions."
    });
    s
}

/// Sets the market's view of `snapshot`'s last trade date beside the
/// estimates: one-year and to-maturity PD off the index curve, compound and
/// base correlations, and the ratios risk-neutral / real-world.
///
/// # Errors
/// Curve errors of that date (see [`crate::curve::Pool::build`]) and
/// whatever [`crate::solve::implied_date`] returns.
pub fn add_risk_neutral(
    report: &mut RealworldReport,
    snapshot: &crate::market::Snapshot,
    opts: &crate::curve::MarketOptions,
) -> Result<()> {
    let Some(last) = snapshot.dates.last() else {
        return Ok(());
    };
    let pool = crate::curve::Pool::build(last, opts, &snapshot.path)?;
    let d = crate::solve::implied_date(last, pool)?;
    let pd_one_year = d.pool.hazard.default_probability(1.0);
    let tranches: Vec<RiskNeutralTranche> = d
        .tranches()
        .map(|t| RiskNeutralTranche {
            maturity: t.quote.maturity.to_string(),
            attach_pct: crate::output::pct(t.quote.attach),
            detach_pct: crate::output::pct(t.quote.detach),
            compound_correlation: t
                .compound
                .as_ref()
                .map_or(Vec::new(), |c| c.roots.iter().map(|r| r.value).collect()),
            base_correlation: t.base_correlation(),
        })
        .collect();
    let mut ratios = Vec::new();
    for m in &report.methods {
        let (Some(pd), Some(rho)) = (m.estimate.pd, m.estimate.rho) else {
            continue;
        };
        let over = |x: f64| (rho > 0.0).then(|| x / rho);
        ratios.push(RiskNeutralRatios {
            method: m.estimate.method.name().to_string(),
            pd_ratio: pd_one_year / pd,
            base_correlation_ratio: tranches
                .iter()
                .map(|t| t.base_correlation.and_then(over))
                .collect(),
            compound_correlation_ratio: tranches
                .iter()
                .map(|t| {
                    t.compound_correlation
                        .iter()
                        .filter_map(|&c| over(c))
                        .collect()
                })
                .collect(),
        });
    }
    let span = |xs: Vec<f64>| {
        let lo = xs.iter().copied().fold(f64::INFINITY, f64::min);
        let hi = xs.iter().copied().fold(f64::NEG_INFINITY, f64::max);
        (lo.is_finite() && hi.is_finite()).then_some((lo, hi))
    };
    let pd_span = span(ratios.iter().map(|r| r.pd_ratio).collect());
    let rho_span = span(
        ratios
            .iter()
            .flat_map(|r| r.base_correlation_ratio.iter().flatten().copied())
            .collect(),
    );
    let reading = reading(pd_span, rho_span);
    report.risk_neutral = Some(RiskNeutral {
        snapshot: snapshot.path.clone(),
        date: d.pool.date.to_string(),
        recovery: d.pool.recovery,
        pd_one_year,
        index: d
            .pool
            .pillars
            .iter()
            .map(|p| RiskNeutralPillar {
                maturity: p.maturity.to_string(),
                default_probability: p.default_probability,
            })
            .collect(),
        tranches,
        ratios,
        reading,
    });
    Ok(())
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
            format!(
                "LGD: expected a fraction in (0, 1], found {}",
                crate::output::significant(lgd, 6)
            ),
        ));
    }
    crate::realworld::check_levels(levels)?;
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
        risk_neutral: None,
        caution: crate::CAUTION,
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
        let mut out = vec![est, se, loss];
        if let Some(rn) = &self.risk_neutral {
            out.extend(rn.sections());
        }
        if let Some(last) = out.last_mut() {
            last.notes.push(String::new());
            last.notes
                .extend(wrap(&format!("Caution: {}", self.caution), 79, 0));
        }
        out
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
        let rn_based: Vec<usize> = self.risk_neutral.as_ref().map_or(Vec::new(), |rn| {
            (0..rn.tranches.len())
                .filter(|&i| rn.tranches[i].base_correlation.is_some())
                .collect()
        });
        if let Some(rn) = &self.risk_neutral {
            headers.push("risk_neutral_pd_one_year_pct".into());
            headers.push("pd_ratio".into());
            for &i in &rn_based {
                let t = &rn.tranches[i];
                headers.push(format!(
                    "base_correlation_ratio_{}_{}",
                    t.maturity, t.detach_pct
                ));
            }
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
            if let Some(rn) = &self.risk_neutral {
                let r = rn.ratios.iter().find(|r| r.method == e.method.name());
                row.push(p(Some(rn.pd_one_year)));
                row.push(csv_num(r.map(|r| r.pd_ratio)));
                for &i in &rn_based {
                    row.push(csv_num(r.and_then(|r| r.base_correlation_ratio[i])));
                }
            }
            row.push(e.notes.join("; "));
            t.push(row);
        }
        t
    }
}

impl RiskNeutral {
    fn label(t: &RiskNeutralTranche) -> String {
        crate::report::price::bounds_label(t.attach_pct, t.detach_pct)
    }

    fn sections(&self) -> Vec<Table> {
        let mut side =
            Table::new(&["tranche", "maturity", "compound", "base"]).with_title(format!(
                "Risk-neutral side: {} on {}\nrecovery {}%, one-year default probability {}%",
                self.snapshot,
                self.date,
                fixed(100.0 * self.recovery, 1),
                fixed(100.0 * self.pd_one_year, 3)
            ));
        for p in &self.index {
            side.notes.push(format!(
                "  default probability to {}: {}%",
                p.maturity,
                fixed(100.0 * p.default_probability, 3)
            ));
        }
        for t in &self.tranches {
            let comp: Vec<String> = t
                .compound_correlation
                .iter()
                .map(|c| fixed(*c, 4))
                .collect();
            side.push(vec![
                Self::label(t),
                t.maturity.clone(),
                if comp.is_empty() {
                    "none".to_string()
                } else {
                    comp.join(" ")
                },
                fixed_or(t.base_correlation, 4, "-"),
            ]);
        }
        // One ratio table per tranche maturity, so each fits 80 columns.
        let mut maturities: Vec<&String> = self.tranches.iter().map(|t| &t.maturity).collect();
        maturities.dedup();
        let mut out = vec![side];
        for m in maturities {
            let based: Vec<usize> = (0..self.tranches.len())
                .filter(|&i| {
                    &self.tranches[i].maturity == m && self.tranches[i].base_correlation.is_some()
                })
                .collect();
            let mut headers = vec!["method".to_string(), "PD ratio".to_string()];
            for &i in &based {
                let label = crate::report::price::bounds_label(0.0, self.tranches[i].detach_pct);
                headers.push(format!("base {}", &label[2..]));
            }
            let mut t = Table::new(&headers).with_title(format!(
                "Risk-neutral / real-world ratios, tranches maturing {m}"
            ));
            for r in &self.ratios {
                let mut row = vec![r.method.clone(), fixed(r.pd_ratio, 2)];
                for &i in &based {
                    row.push(fixed_or(r.base_correlation_ratio[i], 2, "-"));
                }
                t.push(row);
            }
            out.push(t);
        }
        if let Some(last) = out.last_mut() {
            last.notes.extend(wrap(&self.reading, 79, 0));
        }
        out
    }
}
