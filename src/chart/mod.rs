//! Pictures of the skew, as SVG text.
//!
//! Each chart is library data first (what is drawn, in fractions, so tests
//! can hold it against `implied` and `surface`) and an SVG document second
//! (plotters' SVG backend, written into a string: nothing here touches a
//! file or a font file):
//!
//! - [`skew`]: base correlation against detachment per maturity, knots
//!   marked, one curve per interpolation of [`SKEW_INTERPOLATIONS`];
//! - [`quote`]: each tranche's model quote against flat correlation, with
//!   its quote and compound roots (why there can be no root, or two);
//! - [`exceedance`]: the implied exceedance curve P(L > K) beside the
//!   real-world Vasicek one, with a band from the estimate's intervals;
//! - [`history`]: the base correlation at each detachment through time.
//!
//! [`Charts::build`] computes all of them for one trade date (and a history
//! and a default history, when given); [`Charts::svgs`] draws them.
//!
//! # In black and white
//! Every series is black; series differ by dash pattern and marker shape
//! ([`style`]); a confidence band is light grey. Axes name their units.

pub mod exceedance;
mod frame;
pub mod history;
pub mod quote;
pub mod skew;
pub mod style;

use crate::curve::{MarketOptions, Pool};
use crate::error::{Error, ErrorKind, Result};
use crate::flags::Flag;
use crate::input::history::History;
use crate::loss::PoolModel;
use crate::market::Snapshot;
use crate::math::interp::Interp;
use crate::realworld::estimators::{estimate_all, Estimate, Method, Options};
use crate::solve::chain::{implied_date_with, DateImplied};
use crate::surface::diagnostics::grid_intervals;
use crate::surface::MaturityDiagnostics;
use chrono::NaiveDate;
use exceedance::{diagnostics_by_interp, exceedance_charts, ExceedanceChart, RealWorld};
use history::{HistoryChart, HistoryCollector};
use quote::{quote_curves, QuoteCurve};
use skew::{skew_charts, SkewChart};

pub use frame::{LEGEND_ROW, PLOT_HEIGHT, WIDTH};

/// The interpolations the skew and exceedance charts draw, in order (each
/// takes the next line style). A new interpolation is one more entry here.
pub const SKEW_INTERPOLATIONS: &[Interp] = &[Interp::Linear, Interp::Pchip, Interp::ExpectedLoss];

/// The interpolations drawn in `model`: [`SKEW_INTERPOLATIONS`] in the
/// large pool; in a pool of n names all but `expected-loss`, which reads
/// correlations back through the large pool.
pub fn skew_interpolations(model: PoolModel) -> Vec<Interp> {
    SKEW_INTERPOLATIONS
        .iter()
        .copied()
        .filter(|&i| model == PoolModel::LargePool || i != Interp::ExpectedLoss)
        .collect()
}

/// `, pool of 125 names` for a chart title; nothing for the large pool.
fn model_suffix(model: PoolModel) -> String {
    match model {
        PoolModel::LargePool => String::new(),
        PoolModel::Names(_) => format!(", pool of {}", model.describe()),
    }
}

/// Escapes text for XML and HTML, in element content and in quoted
/// attribute values alike: `&`, `<`, `>`, `"` and `'`.
///
/// ```
/// assert_eq!(skewbook::chart::escape("a<b & \"c\" 'd'"), "a&lt;b &amp; &quot;c&quot; &#39;d&#39;");
/// ```
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

/// What the charts are made from.
#[derive(Debug, Clone, Copy)]
pub struct Inputs<'a> {
    /// The snapshot; its last trade date is drawn unless `date` picks one.
    pub snapshot: &'a Snapshot,
    /// Recovery and flat rate choices.
    pub options: &'a MarketOptions,
    /// The trade date to draw (one of the snapshot's).
    pub date: Option<NaiveDate>,
    /// A history of snapshots for the skew through time.
    pub history: Option<&'a Snapshot>,
    /// The index pool's default history, for the real-world curve.
    pub defaults: Option<&'a History>,
    /// The estimator for the real-world curve; default the first usable of
    /// [`exceedance::ESTIMATOR_PREFERENCE`].
    pub estimator: Option<Method>,
    /// Detachments off the surface drawn through time (fractions in (0, 1)).
    pub at: &'a [f64],
    /// Grid step of the exceedance curve (fraction dividing 1).
    pub step: f64,
    /// Interpolation for the detachments off the surface through time.
    pub history_interp: Interp,
    /// The pool every date is solved and every tranche priced in: the
    /// large pool, or a pool of n names.
    pub model: PoolModel,
}

/// A chart ready to write: a plain file name, its title, its SVG.
#[derive(Debug, Clone, PartialEq)]
pub struct NamedSvg {
    /// File name, e.g. `skew-2031-06-20.svg`.
    pub file_name: String,
    /// The chart's title.
    pub title: String,
    /// The SVG document.
    pub svg: String,
}

/// Every chart of one trade date, with the data behind them.
#[derive(Debug, Clone)]
pub struct Charts {
    /// The snapshot's path.
    pub source: String,
    /// The date's implied correlations.
    pub implied: DateImplied,
    /// Grid step of the exceedance curves (fraction).
    pub step: f64,
    /// Surface diagnostics per interpolation of [`SKEW_INTERPOLATIONS`].
    pub diagnostics: Vec<(Interp, Vec<MaturityDiagnostics>)>,
    /// The skew per maturity.
    pub skews: Vec<SkewChart>,
    /// Model quote against correlation per tranche.
    pub quotes: Vec<QuoteCurve>,
    /// Exceedance curves per maturity.
    pub exceedance: Vec<ExceedanceChart>,
    /// Every estimate from the default history, when given.
    pub estimates: Option<Vec<Estimate>>,
    /// The estimate the real-world curves use.
    pub real_world: Option<RealWorld>,
    /// The history's path, when given.
    pub history_source: Option<String>,
    /// The skew through time per maturity (empty without a history).
    pub history: Vec<HistoryChart>,
    /// Flags that occur in the history, with the number of tranches (over
    /// all dates) that carry each.
    pub history_flags: Vec<(Flag, usize)>,
    /// Whether some quote of the history has no solution.
    pub history_unsolved: bool,
    /// The pool everything was solved and priced in.
    pub model: PoolModel,
}

/// The snapshot's date to draw: `date`, or the last.
fn pick_date(snapshot: &Snapshot, date: Option<NaiveDate>) -> Result<&crate::market::MarketDate> {
    let picked = crate::market::select_date(snapshot, date)?;
    let want = picked.dates.last().map(|d| d.date);
    snapshot
        .dates
        .iter()
        .find(|d| Some(d.date) == want)
        .ok_or_else(|| {
            Error::msg(
                ErrorKind::InvalidInput,
                format!("{}: the snapshot has no trade date", snapshot.path),
            )
        })
}

impl Charts {
    /// Computes every chart's data, in the pool of `inputs.model`: the
    /// date and every history date solved there
    /// ([`implied_date_with`]), the quote curves priced there, the surface
    /// checks and exceedance curves with its base expected loss, and the
    /// skew drawn by [`skew_interpolations`] of it. The real-world curve is
    /// Vasicek's large pool whatever the model.
    ///
    /// # Errors
    /// [`ErrorKind::Usage`] for a date not in the snapshot, a grid step that
    /// does not divide 100%, a detachment of `at` outside (0, 1), a named
    /// estimator the default history gives no PD, rho and intervals, or
    /// `expected-loss` for the history in a pool of n names; curve errors
    /// of any date; [`ErrorKind::InvalidInput`] for a pool of 0 names.
    pub fn build(inputs: &Inputs) -> Result<Charts> {
        let n = grid_intervals(inputs.step)?;
        let model = inputs.model;
        if inputs.history.is_some() {
            crate::surface::check_interp_in_model(inputs.history_interp, model)?;
        }
        if let Some(k) = inputs.at.iter().find(|k| !(**k > 0.0 && **k < 1.0)) {
            return Err(Error::msg(
                ErrorKind::Usage,
                format!(
                    "--at: expected detachments strictly between 0% and 100%, found {}%",
                    crate::output::significant(k * 100.0, 6)
                ),
            ));
        }
        let md = pick_date(inputs.snapshot, inputs.date)?;
        let pool = Pool::build(md, inputs.options, &inputs.snapshot.path)?;
        let implied = implied_date_with(md, pool, model)?;
        let estimates = inputs
            .defaults
            .map(|h| estimate_all(h, &Options::default()))
            .transpose()?;
        let real_world = match &estimates {
            Some(e) => {
                let chosen = RealWorld::choose(e, inputs.estimator);
                if let (None, Some(m)) = (chosen, inputs.estimator) {
                    return Err(Error::msg(
                        ErrorKind::Usage,
                        format!(
                            "--estimator {}: the default history gives it no PD and asset correlation with 95% intervals",
                            m.name()
                        ),
                    ));
                }
                chosen
            }
            None => None,
        };
        let interps = skew_interpolations(model);
        let diagnostics = diagnostics_by_interp(&implied, &interps, n, model)?;
        let skews = skew_charts(&implied, &interps, model)?;
        let quotes = quote_curves(&implied, model)?;
        let exceedance = exceedance_charts(&implied, &diagnostics, real_world.as_ref(), model)?;
        let mut history = Vec::new();
        let mut counts: std::collections::BTreeMap<Flag, usize> = Default::default();
        let mut history_unsolved = false;
        if let Some(h) = inputs.history {
            let mut collector = HistoryCollector::new(inputs.at, inputs.history_interp, model);
            for (md, pool) in crate::curve::pool::pools_for_all_dates(h, inputs.options)? {
                let d = implied_date_with(&md, pool, model)?;
                for t in d.tranches() {
                    history_unsolved |= t.unsolved();
                    for f in &t.flags {
                        *counts.entry(*f).or_default() += 1;
                    }
                }
                collector.add(&d)?;
            }
            history = collector.finish();
        }
        Ok(Charts {
            source: inputs.snapshot.path.clone(),
            implied,
            step: inputs.step,
            diagnostics,
            skews,
            quotes,
            exceedance,
            estimates,
            real_world,
            history_source: inputs.history.map(|h| h.path.clone()),
            history,
            history_flags: counts.into_iter().collect(),
            history_unsolved,
            model,
        })
    }

    /// Whether some quote of the drawn date or of the history has no solution.
    pub fn any_unsolved(&self) -> bool {
        self.history_unsolved || self.implied.tranches().any(|t| t.unsolved())
    }

    /// Every chart drawn: skews, then quotes, exceedance curves, histories.
    ///
    /// # Errors
    /// A value that is not finite (not expected).
    pub fn svgs(&self) -> Result<Vec<NamedSvg>> {
        let mut out = Vec::new();
        for c in &self.skews {
            out.push(NamedSvg {
                file_name: c.file_name(),
                title: c.title(),
                svg: c.svg()?,
            });
        }
        for c in &self.quotes {
            out.push(NamedSvg {
                file_name: c.file_name(),
                title: c.title(),
                svg: c.svg()?,
            });
        }
        for c in &self.exceedance {
            out.push(NamedSvg {
                file_name: c.file_name(),
                title: c.title(),
                svg: c.svg()?,
            });
        }
        for c in &self.history {
            out.push(NamedSvg {
                file_name: c.file_name(),
                title: c.title(),
                svg: c.svg()?,
            });
        }
        Ok(out)
    }
}
