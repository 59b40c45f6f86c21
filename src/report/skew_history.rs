//! `skewbook skew-history`: the skew through time. Per date and tranche
//! maturity, the base correlation at each quoted detachment and at chosen
//! detachments off the surface, every compound correlation, and the change
//! since the previous date of the file.
//!
//! # JSON schema (long: one object per observation)
//! ```text
//! [ { "date": "2026-06-02", "maturity": "2031-06-20",
//!     "series": "base" | "surface" | "compound",
//!     "attach_pct": 3.0,        the tranche's attachment (compound), else null
//!     "detach_pct": 7.0,        the detachment (base, surface) or the tranche's
//!     "root": 1,                compound root number (1 or 2), else null
//!     "value": 0.28,            correlation, fraction; null when there is none
//!     "change": -0.004,         value minus the previous date's value of the same
//!                               series; null on the first date or when either is null
//!     "model": "names_125" } ]  only with --names: the pool of n names every
//!                               correlation was solved in (absent for the large pool)
//! ```
//! CSV is wide: one row per date, one column per series (and one `chg`
//! column beside each), ready for a spreadsheet; with `--names` a `model`
//! column follows the date. The table's titles name the pool of n names.
//!
//! With `--names N` every date is solved in a pool of N names
//! ([`crate::solve::chain::implied_date_with`]), and `--at` reads that
//! date's skew of finite-pool knots; `--interp expected-loss` is refused
//! there (it reads correlations back through the large pool).

use super::pools_for_all_dates;
use super::price::{model_field, model_title};
use crate::curve::MarketOptions;
use crate::error::Result;
use crate::loss::PoolModel;
use crate::market::Snapshot;
use crate::math::interp::Interp;
use crate::output::{csv_num, fixed_or, pct, Report, Table};
use crate::solve::chain::implied_date_with;
use crate::surface::Surface;
use serde::Serialize;
use std::collections::HashMap;

/// Which correlation an observation is.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Series {
    /// Base correlation at a quoted detachment.
    Base,
    /// Base correlation off the surface at a chosen detachment.
    Surface,
    /// A compound correlation of a quoted tranche.
    Compound,
}

/// What identifies a series: maturity, kind, attachment and detachment
/// (as bits), root number.
type Key = (String, Series, Option<u64>, u64, Option<usize>);

/// One observation.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct Observation {
    /// Trade date.
    pub date: String,
    /// Tranche maturity.
    pub maturity: String,
    /// Which correlation.
    pub series: Series,
    /// Attachment of a compound correlation's tranche, percent.
    pub attach_pct: Option<f64>,
    /// Detachment, percent.
    pub detach_pct: f64,
    /// Compound root number (1 or 2).
    pub root: Option<usize>,
    /// The correlation, fraction.
    pub value: Option<f64>,
    /// Change since the previous date, fraction.
    pub change: Option<f64>,
    /// `names_N` for a pool of N names; absent for the large pool.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub model: Option<String>,
}

impl Observation {
    /// The series' key: everything but the date and the numbers.
    fn key(&self) -> Key {
        (
            self.maturity.clone(),
            self.series,
            self.attach_pct.map(f64::to_bits),
            self.detach_pct.to_bits(),
            self.root,
        )
    }

    /// The wide CSV's column name.
    fn column(&self) -> String {
        match self.series {
            Series::Base => format!("{} base {}%", self.maturity, self.detach_pct),
            Series::Surface => format!("{} surface {}%", self.maturity, self.detach_pct),
            Series::Compound => format!(
                "{} compound {}-{}% root {}",
                self.maturity,
                self.attach_pct.unwrap_or(0.0),
                self.detach_pct,
                self.root.unwrap_or(1)
            ),
        }
    }
}

/// The whole time series, long form.
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(transparent)]
pub struct SkewHistory {
    /// Observations by date, then maturity, then series.
    pub observations: Vec<Observation>,
}

/// The skew of every date of `snapshot`; `at` are detachments (fractions)
/// read off each date's surface under `interp`.
///
/// # Errors
/// Curve errors of any date.
pub fn build(
    snapshot: &Snapshot,
    opts: &MarketOptions,
    at: &[f64],
    interp: Interp,
) -> Result<SkewHistory> {
    build_with(snapshot, opts, at, interp, PoolModel::LargePool)
}

/// [`build`] with every date solved in `model`: the large pool, or a pool
/// of n names.
///
/// # Errors
/// As [`build`]; [`crate::ErrorKind::Usage`] for `expected-loss` in a pool
/// of n names.
pub fn build_with(
    snapshot: &Snapshot,
    opts: &MarketOptions,
    at: &[f64],
    interp: Interp,
    model: PoolModel,
) -> Result<SkewHistory> {
    crate::surface::check_interp_in_model(interp, model)?;
    let mut observations = Vec::new();
    let mut last: HashMap<Key, Option<f64>> = HashMap::new();
    for (md, pool) in pools_for_all_dates(snapshot, opts)? {
        let implied = implied_date_with(&md, pool, model)?;
        let surface = Surface::from_implied(&implied, interp)?;
        let date = md.date.to_string();
        let mut today = Vec::new();
        for m in &implied.maturities {
            let Some(first) = m.tranches.first() else {
                continue;
            };
            let maturity = first.quote.maturity;
            let obs = |series, attach: Option<f64>, detach: f64, root, value| Observation {
                date: date.clone(),
                maturity: maturity.to_string(),
                series,
                attach_pct: attach.map(pct),
                detach_pct: pct(detach),
                root,
                value,
                change: None,
                model: model_field(model),
            };
            for t in m.tranches.iter().filter(|t| t.quote.detach < 1.0 - 1e-12) {
                today.push(obs(
                    Series::Base,
                    None,
                    t.quote.detach,
                    None,
                    t.base_correlation(),
                ));
            }
            let has_knots = surface.maturities.iter().any(|s| s.maturity == maturity);
            for &k in at {
                let value = has_knots
                    .then(|| surface.rho(k, maturity).map(|l| l.rho))
                    .flatten();
                today.push(obs(Series::Surface, None, k, None, value));
            }
            for t in &m.tranches {
                let roots: Vec<f64> = t
                    .compound
                    .as_ref()
                    .map_or(Vec::new(), |c| c.roots.iter().map(|r| r.value).collect());
                // Two slots per tranche so that a second root has a column
                // on every date (empty where it does not exist).
                for i in 0..2 {
                    today.push(obs(
                        Series::Compound,
                        Some(t.quote.attach),
                        t.quote.detach,
                        Some(i + 1),
                        roots.get(i).copied(),
                    ));
                }
            }
        }
        for o in &mut today {
            let key = o.key();
            if let Some(Some(prev)) = last.get(&key) {
                o.change = o.value.map(|v| v - prev);
            }
            last.insert(key, o.value);
        }
        observations.extend(today);
    }
    Ok(SkewHistory { observations })
}

impl SkewHistory {
    /// Column names of the wide form, in first-seen order.
    fn columns(&self) -> Vec<(String, Key)> {
        let mut cols: Vec<(String, Key)> = Vec::new();
        let mut seen = std::collections::HashSet::new();
        for o in &self.observations {
            if seen.insert(o.key()) {
                cols.push((o.column(), o.key()));
            }
        }
        cols
    }

    /// Observations by date and series key.
    fn by_date(&self) -> HashMap<&str, HashMap<Key, &Observation>> {
        let mut m: HashMap<&str, HashMap<Key, &Observation>> = HashMap::new();
        for o in &self.observations {
            m.entry(o.date.as_str()).or_default().insert(o.key(), o);
        }
        m
    }

    /// The pool model's name when it is not the large pool.
    fn model(&self) -> Option<String> {
        self.observations.first().and_then(|o| o.model.clone())
    }

    /// Dates in order.
    fn dates(&self) -> Vec<&str> {
        let mut d: Vec<&str> = Vec::new();
        for o in &self.observations {
            if d.last() != Some(&o.date.as_str()) {
                d.push(&o.date);
            }
        }
        d
    }
}

impl Report for SkewHistory {
    fn sections(&self) -> Vec<Table> {
        // One table per maturity: dates down, base correlations (quoted and
        // off the surface) across, percent.
        let mut maturities: Vec<&str> = Vec::new();
        for o in &self.observations {
            if !maturities.contains(&o.maturity.as_str()) {
                maturities.push(&o.maturity);
            }
        }
        let by_date = self.by_date();
        let mut out = Vec::new();
        for m in maturities {
            let cols: Vec<(String, _)> = self
                .columns()
                .into_iter()
                .filter(|(_, k)| k.0 == m && k.1 != Series::Compound)
                .collect();
            let mut headers = vec!["date".to_string()];
            headers.extend(cols.iter().map(|(_, k)| {
                let d = f64::from_bits(k.3);
                if k.1 == Series::Base {
                    format!("{d}%")
                } else {
                    format!("@{d}%")
                }
            }));
            let mut t = Table::new(&headers).with_title(format!(
                "base correlation (%) of tranches maturing {m}; @K: off the surface{}",
                model_title(&self.model())
            ));
            for date in self.dates() {
                let mut row = vec![date.to_string()];
                for (_, key) in &cols {
                    let v = by_date
                        .get(date)
                        .and_then(|d| d.get(key))
                        .and_then(|o| o.value);
                    row.push(fixed_or(v.map(|x| x * 100.0), 2, "-"));
                }
                t.push(row);
            }
            out.push(t);
        }
        out
    }

    fn csv(&self) -> Table {
        let cols = self.columns();
        let model = self.model();
        let mut headers = vec!["date".to_string()];
        if model.is_some() {
            headers.push("model".to_string());
        }
        for (name, _) in &cols {
            headers.push(name.clone());
            headers.push(format!("chg {name}"));
        }
        let mut t = Table::new(&headers);
        let by_date = self.by_date();
        for date in self.dates() {
            let mut row = vec![date.to_string()];
            if let Some(m) = &model {
                row.push(m.clone());
            }
            for (_, key) in &cols {
                let o = by_date.get(date).and_then(|d| d.get(key));
                row.push(csv_num(o.and_then(|o| o.value)));
                row.push(csv_num(o.and_then(|o| o.change)));
            }
            t.push(row);
        }
        t
    }
}
