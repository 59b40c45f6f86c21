//! `skewbook implied`: compound and base correlation implied by the quotes.
//!
//! # JSON schema
//! An array with one object per trade date:
//! ```text
//! { "date": "2026-06-19", "recovery": 0.4,
//!   "index": [ ... ],                  the curve report's pillars (see report::curve)
//!   "tranches": [ {
//!       "maturity": "2031-06-20", "attach_pct": 3.0, "detach_pct": 7.0,
//!       "quote_kind": "spread_bp", "quote": 310.0, "coupon_bp": null,
//!       "compound_correlation": [0.12, 0.81],  every root in [1e-4, 0.9999], fractions, ascending
//!       "compound_range": [120.4, 290.1],      lowest and highest model quote over that range
//!                                              (file unit); exact for upfront quotes, from the
//!                                              scan for spread quotes
//!       "compound_note": null,                 why there is no compound root: the range in the
//!                                              quote's unit and the side the quote lies on; else null
//!       "base_correlation": 0.25,              at the detachment, fraction; null when none
//!       "base_note": null,                     why base_correlation is null, else null
//!       "base_reprice_error": 1e-11,           quote repriced off the base curve minus the
//!                                              quote (file unit); null without base correlations
//!       "expected_loss_pct": 12.3,             expected tranche loss at the protection end off
//!                                              the base curve, % of tranche notional; null without
//!       "check_note": null,                    with near_search_limit: which correlation sits at
//!                                              which limit, and the units to check; else null
//!       "flags": ["two_compound_roots"]
//!   } ],
//!   "index_check": [ {                 one per maturity whose tranches tile 0-100% with a
//!                                      base correlation below the top (see crate::consistency)
//!       "maturity": "2031-06-20",
//!       "gap_bp": 0.004,                       protection the tranche quotes imply minus the
//!                                              index curve's, as running spread on the index
//!                                              annuity, bp
//!       "tolerance_bp": 1.0,                   the tolerance (--index-tolerance)
//!       "mismatch": false                      |gap_bp| > tolerance_bp: the maturity's tranches
//!                                              carry the index_mismatch flag
//!   } ],
//!   "model": "names_125" }             only with --names: the pool of n names every
//!                                      correlation was solved in (absent: the large pool,
//!                                      the default)
//! ```
//!
//! With `--names N --compare-pool` each tranche also has
//! `"large_pool": {"compound_correlation": [...], "base_correlation": 0.21}`:
//! the same quote solved in the large pool (fractions; base null when none).
//!
//! # Flags
//! - `no_compound_root`: no correlation reaches the quote; see `compound_range`
//!   and `compound_note`;
//! - `two_compound_roots`: the quote is reached at two correlations;
//! - `compound_tangent`: a root is a tangency (the quote equals the model's extremum);
//! - `base_quote_above_range` / `base_quote_below_range`: no base correlation
//!   reaches the quote, which lies above or below the model's range;
//! - `base_chain_broken`: a tranche below has no base correlation;
//! - `bounds_do_not_tile`: the maturity's tranches do not tile from 0;
//! - `top_tranche`: the tranche ends at 100%, and [0, 100%] does not depend
//!   on correlation, so it has no base correlation; its repricing uses the
//!   base correlation at its attachment;
//! - `no_correlation_dependence`: the tranche is [0, 100%], the whole pool:
//!   it has neither compound nor base correlation (not counted as unsolved);
//!   `compound_range` is its one model quote and `base_reprice_error` the
//!   gap between that and the quote;
//! - `flat_in_correlation`, `solver_failed`: see [`crate::flags::Flag`];
//! - `near_search_limit`: a compound or base correlation lies within 0.5%
//!   ([`crate::solve::chain::NEAR_LIMIT`]) of 0.01% or 99.99%; a quote
//!   in the wrong unit lands there (see `check_note`);
//! - `index_mismatch`: the maturity's tiling disagrees with the index by
//!   more than the tolerance (see `index_check`).
//!
//! A tranche is *unsolved* (exit status 1) when it has no compound root or,
//! below the top, no base correlation. `near_search_limit` and
//! `index_mismatch` are warnings about the input: they do not change the
//! exit status.
//!
//! # A run of many dates: the summary
//! [`ImpliedReport::summary`] counts the dates run, the dates with each
//! flag, and the dates with an unsolved quote. The JSON stays an array of
//! dates (a summary field would change its top level), so the command line
//! prints the summary on standard error in every format, after the output,
//! when the run has more than one date.

use super::curve::{quote_label, CurvePillar};
use super::price::{bounds_label, model_field, model_title};
use super::QuotedTranche;
use crate::consistency::{index_gap, DEFAULT_TOLERANCE_BP};
use crate::curve::{MarketOptions, Pool};
use crate::error::collect_all;
use crate::error::Result;
use crate::flags::Flag;
use crate::loss::PoolModel;
use crate::market::Quote;
use crate::market::{MarketDate, Snapshot};
use crate::output::significant;
use crate::output::{csv_num, fixed, fixed_or, pct, sci, wrap, Report, Table};
use crate::solve::base::Side;
use crate::solve::chain::{
    implied_date, implied_date_with, near_limit, BaseOutcome, DateImplied, TrancheImplied,
    NEAR_LIMIT,
};
use crate::solve::compound::{RHO_MAX, RHO_MIN};
use rayon::prelude::*;
use serde::Serialize;

mod stream;
pub use stream::{build_streamed, ImpliedPart};

/// One tranche's implied correlations.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct ImpliedTranche {
    /// Which tranche and its quote.
    #[serde(flatten)]
    pub tranche: QuotedTranche,
    /// Every compound correlation, ascending.
    pub compound_correlation: Vec<f64>,
    /// Lowest and highest model quote over the search range, file unit;
    /// null when the model has no quote anywhere in the range.
    pub compound_range: Option<[f64; 2]>,
    /// Why there is no compound correlation: the attainable range in the
    /// quote's unit and the side the quote lies on.
    pub compound_note: Option<String>,
    /// Base correlation at the detachment.
    pub base_correlation: Option<f64>,
    /// Why there is no base correlation.
    pub base_note: Option<String>,
    /// Repriced quote off the base curve minus the quote, file unit.
    pub base_reprice_error: Option<f64>,
    /// Expected tranche loss off the base curve, percent of tranche notional.
    pub expected_loss_pct: Option<f64>,
    /// With `near_search_limit`: which correlation lies near which search
    /// limit, and the units to check.
    pub check_note: Option<String>,
    /// Flags (see the module docs).
    pub flags: Vec<Flag>,
    /// Whether the quote has a solution missing (not printed).
    #[serde(skip)]
    pub unsolved: bool,
    /// The same quote solved in the large pool (with `--compare-pool`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub large_pool: Option<LargePoolSide>,
}

impl ImpliedTranche {
    /// Whether this quote has a solution missing (drives exit status 1).
    pub fn unsolved(&self) -> bool {
        self.unsolved
    }

    /// The report row of one tranche's implied data.
    pub fn from_implied(t: &TrancheImplied) -> Self {
        let label = |a: f64, d: f64| bounds_label(pct(a), pct(d));
        let range_text = |q: Option<f64>| {
            q.map_or("no quote (no annuity left)".to_string(), |q| {
                in_unit(&t.quote.quote, q)
            })
        };
        let base_note = match &t.base {
            BaseOutcome::Solved { .. } => None,
            BaseOutcome::Top { .. } | BaseOutcome::WholePool => {
                Some("[0, 100%] does not depend on correlation".to_string())
            }
            BaseOutcome::NotTiled => Some(
                "the tranches of this maturity do not tile the capital structure from 0%"
                    .to_string(),
            ),
            BaseOutcome::NoSolution { side, range } => Some(format!(
                "no base correlation in [{}] reaches the quote {}: it lies {} the model's range, {} at rho {} and {} at rho {}",
                search_range(),
                in_unit(&t.quote.quote, t.quote.quote.exact_in_file_unit()),
                side_word(*side),
                range_text(range.0),
                pct_text(RHO_MIN),
                range_text(range.1),
                pct_text(RHO_MAX)
            )),
            BaseOutcome::SolverFailed { bracket } => Some(format!(
                "a base correlation lies between {} and {} but the solver stopped without converging",
                fixed(bracket.0, 6),
                fixed(bracket.1, 6)
            )),
            BaseOutcome::ChainBroken { at } => Some(format!(
                "tranche {} below has no base correlation",
                label(at.attach(), at.detach())
            )),
        };
        let compound_range = match (&t.compound, t.whole_pool_quote) {
            (Some(c), _) => c.attainable.map(|(lo, hi)| [lo, hi]),
            (None, q) => Some(q.map_or([0.0, 0.0], |q| [q, q])),
        };
        ImpliedTranche {
            compound_note: compound_note(t),
            check_note: check_note(t),
            tranche: QuotedTranche::from(&t.quote),
            compound_correlation: t
                .compound
                .as_ref()
                .map_or(Vec::new(), |c| c.roots.iter().map(|r| r.value).collect()),
            compound_range,
            base_correlation: t.base_correlation(),
            base_note,
            base_reprice_error: t.repriced.and_then(|r| r.error),
            expected_loss_pct: t.repriced.map(|r| r.expected_loss * 100.0),
            flags: t.flags.clone(),
            unsolved: t.unsolved(),
            large_pool: None,
        }
    }
}

/// The search range in percent: `0.01%, 99.99%`.
fn search_range() -> String {
    format!("{}, {}", pct_text(RHO_MIN), pct_text(RHO_MAX))
}

/// A correlation as a percentage for messages: `0.01%`, `18.2%`.
fn pct_text(rho: f64) -> String {
    format!("{}%", significant(rho * 100.0, 4))
}

/// A number in a quote's file unit with the unit: `2.41 bp`, `-3.5%`.
fn in_unit(q: &Quote, x: f64) -> String {
    match q {
        Quote::Spread(_) => format!("{} bp", significant(x, 6)),
        Quote::Upfront { .. } => format!("{}%", significant(x, 6)),
    }
}

fn side_word(side: Side) -> &'static str {
    match side {
        Side::Below => "below",
        Side::Above => "above",
    }
}

/// Why a quote has no compound root: the range over the search and the
/// side of it the quote lies on.
fn compound_note(t: &TrancheImplied) -> Option<String> {
    let c = t.compound.as_ref()?;
    if !c.roots.is_empty() || c.flat {
        return None;
    }
    let q = &t.quote.quote;
    let quote = q.exact_in_file_unit();
    let head = format!(
        "no compound correlation in [{}] reaches the quote {}",
        search_range(),
        in_unit(q, quote)
    );
    Some(match c.attainable {
        None => format!("{head}: the model has no quote there (no annuity left)"),
        Some((lo, hi)) => {
            let range = format!("{} to {}", in_unit(q, lo), in_unit(q, hi));
            let side = if quote < lo {
                "below"
            } else if quote > hi {
                "above"
            } else {
                return Some(format!(
                    "{head}: it lies inside the model's range {range}, but a root finder stopped \
                     without converging"
                ));
            };
            format!(
                "{head}: it lies {side} the model's range, {range}; check the quote's unit and \
                 kind: {}",
                unit_hint(q)
            )
        }
    })
}

/// What to check about a quote's unit.
fn unit_hint(q: &Quote) -> &'static str {
    match q {
        Quote::Spread(_) => {
            "spread_bp quotes are in basis points (241.1, not 2.411 for 2.411%), and an upfront \
             belongs in an upfront_pct row with its coupon"
        }
        Quote::Upfront { .. } => {
            "upfront_pct quotes are in percent of the tranche notional (35.5, not 0.355) and \
             coupon_bp in basis points (500, not 5)"
        }
    }
}

/// With `near_search_limit`: which correlations lie near which limit, and
/// what to check.
fn check_note(t: &TrancheImplied) -> Option<String> {
    if !t.flags.contains(&Flag::NearSearchLimit) {
        return None;
    }
    let mut near: Vec<String> = Vec::new();
    if let Some(c) = &t.compound {
        for r in c.roots.iter().filter(|r| near_limit(r.value)) {
            near.push(format!("compound correlation {}", pct_text(r.value)));
        }
    }
    if let Some(b) = t.base_correlation().filter(|b| near_limit(*b)) {
        near.push(format!("base correlation {}", pct_text(b)));
    }
    let all: Vec<f64> = t
        .compound
        .iter()
        .flat_map(|c| c.roots.iter().map(|r| r.value))
        .chain(t.base_correlation())
        .filter(|r| near_limit(*r))
        .collect();
    let floor = all.iter().any(|r| *r < 0.5);
    let ceiling = all.iter().any(|r| *r >= 0.5);
    let limits = {
        match (floor, ceiling) {
            (true, true) => format!(
                "the search limits {} and {}",
                pct_text(RHO_MIN),
                pct_text(RHO_MAX)
            ),
            (true, false) => format!("the search floor {}", pct_text(RHO_MIN)),
            _ => format!("the search ceiling {}", pct_text(RHO_MAX)),
        }
    };
    let unit = unit_hint(&t.quote.quote);
    let verb = if near.len() > 1 { "lie" } else { "lies" };
    // A mezzanine's second compound root near 100% is a fact of the model.
    let second_root = t.compound.as_ref().is_some_and(|c| c.roots.len() == 2);
    let genuine = if ceiling && !floor && second_root && t.base_correlation().is_some() {
        " (a mezzanine's second compound root near 100% can be genuine)"
    } else {
        ""
    };
    Some(format!(
        "{} {verb} within {} of {limits}: check the quote's unit: {unit}{genuine}",
        near.join(" and "),
        pct_text(NEAR_LIMIT)
    ))
}

/// The index check of one maturity.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct IndexCheck {
    /// Tranche maturity.
    pub maturity: String,
    /// Protection the tranche quotes imply minus the index curve's, as
    /// running spread on the index annuity, bp.
    pub gap_bp: f64,
    /// The tolerance, bp.
    pub tolerance_bp: f64,
    /// Whether the gap exceeds the tolerance.
    pub mismatch: bool,
}

/// A quote's correlations in the large pool, beside a finite pool's.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct LargePoolSide {
    /// Every compound correlation, ascending.
    pub compound_correlation: Vec<f64>,
    /// Base correlation at the detachment.
    pub base_correlation: Option<f64>,
}

/// Options of [`build_with`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ImpliedOptions {
    /// Largest gap, in bp of running spread, between a tiling's quotes and
    /// the index curve that passes without the `index_mismatch` flag.
    pub index_tolerance_bp: f64,
    /// The pool the correlations are solved in (the large pool by default).
    pub model: PoolModel,
    /// Also solve every quote in the large pool (`--compare-pool`).
    pub compare_pool: bool,
}

impl ImpliedOptions {
    /// Checks the options before a run.
    ///
    /// # Errors
    /// [`crate::ErrorKind::Usage`] for a tolerance that is not a finite
    /// number of 0 bp or more.
    pub fn check(&self) -> Result<()> {
        let tol = self.index_tolerance_bp;
        if tol.is_finite() && tol >= 0.0 {
            return Ok(());
        }
        Err(crate::Error::msg(
            crate::ErrorKind::Usage,
            format!(
                "--index-tolerance: expected a number of bp of 0 or more, found {}",
                significant(tol, 6)
            ),
        ))
    }
}

impl Default for ImpliedOptions {
    fn default() -> Self {
        ImpliedOptions {
            index_tolerance_bp: DEFAULT_TOLERANCE_BP,
            model: PoolModel::LargePool,
            compare_pool: false,
        }
    }
}

/// One date of the implied report.
#[derive(Debug, Clone, Serialize, PartialEq)]
pub struct ImpliedDate {
    /// Trade date.
    pub date: String,
    /// Recovery (fraction).
    pub recovery: f64,
    /// The bootstrapped index curve.
    pub index: Vec<CurvePillar>,
    /// Tranches by maturity then attachment.
    pub tranches: Vec<ImpliedTranche>,
    /// Per maturity that tiles 0-100%: the tranche quotes against the index.
    pub index_check: Vec<IndexCheck>,
    /// `names_N` for a pool of N names; absent for the large pool.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub model: Option<String>,
}

impl ImpliedDate {
    /// The report of one date's implied data, with the index check at the
    /// default tolerance.
    pub fn from_implied(d: &DateImplied) -> Self {
        Self::with_options(d, &ImpliedOptions::default())
    }

    /// The report of one date's implied data; a maturity whose index gap
    /// exceeds the tolerance has every tranche flagged `index_mismatch`.
    pub fn with_options(d: &DateImplied, opts: &ImpliedOptions) -> Self {
        let mut tranches = Vec::new();
        let mut index_check = Vec::new();
        for m in &d.maturities {
            let gap = index_gap(m);
            let mismatch = gap.is_some_and(|g| g.exceeds(opts.index_tolerance_bp));
            if let Some(g) = gap {
                index_check.push(IndexCheck {
                    maturity: g.maturity.to_string(),
                    gap_bp: g.gap_bp,
                    tolerance_bp: opts.index_tolerance_bp,
                    mismatch,
                });
            }
            for t in &m.tranches {
                let mut row = ImpliedTranche::from_implied(t);
                if mismatch {
                    row.flags.push(Flag::IndexMismatch);
                }
                tranches.push(row);
            }
        }
        ImpliedDate {
            date: d.pool.date.to_string(),
            recovery: d.pool.recovery,
            index: d.pool.pillars.iter().map(CurvePillar::from).collect(),
            tranches,
            index_check,
            model: None,
        }
    }
}

/// The whole `implied` report.
#[derive(Debug, Clone, Serialize, PartialEq)]
#[serde(transparent)]
pub struct ImpliedReport {
    /// Dates in order.
    pub dates: Vec<ImpliedDate>,
}

impl ImpliedReport {
    /// Whether any quote has no solution.
    pub fn any_unsolved(&self) -> bool {
        self.dates
            .iter()
            .flat_map(|d| &d.tranches)
            .any(ImpliedTranche::unsolved)
    }

    /// What the run came to: dates run, dates with each flag, dates with a
    /// quote that has no solution.
    pub fn summary(&self) -> RunSummary {
        let mut summary = RunSummary::default();
        for d in &self.dates {
            summary.add(d);
        }
        summary
    }

    /// Which optional CSV columns the report has: `model` when a date was
    /// solved in a pool of n names, the large pool's when a tranche has it.
    fn csv_columns(&self) -> CsvColumns {
        CsvColumns {
            model: self.dates.iter().any(|d| d.model.is_some()),
            large_pool: self
                .dates
                .iter()
                .flat_map(|d| &d.tranches)
                .any(|t| t.large_pool.is_some()),
        }
    }
}

/// The optional columns of the CSV (see [`ImpliedReport::csv_columns`]).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
struct CsvColumns {
    model: bool,
    large_pool: bool,
}

/// How many dates have a flag on at least one tranche.
#[derive(Debug, Clone, Copy, Serialize, PartialEq)]
pub struct FlagCount {
    /// The flag.
    pub flag: Flag,
    /// Dates with at least one tranche carrying it.
    pub dates: usize,
}

/// What a run of `implied` came to ([`ImpliedReport::summary`]), counted
/// date by date with [`RunSummary::add`] (from `RunSummary::default()`).
#[derive(Debug, Clone, Default, Serialize, PartialEq)]
pub struct RunSummary {
    /// Dates run.
    pub dates: usize,
    /// First date run.
    pub first: Option<String>,
    /// Last date run.
    pub last: Option<String>,
    /// For each flag that occurs, in the order of [`Flag::ALL`], the dates
    /// that have it.
    pub dates_with_flag: Vec<FlagCount>,
    /// Dates with a quote that has no solution (they make the exit status 1).
    pub unsolved: usize,
    /// The first [`Self::DATES_SHOWN`] of those dates.
    pub unsolved_dates: Vec<String>,
}

impl RunSummary {
    /// Most unsolved dates named in [`Self::lines`] (and kept).
    pub const DATES_SHOWN: usize = 10;

    /// Counts one more date of the run (dates come in order).
    pub fn add(&mut self, d: &ImpliedDate) {
        self.dates += 1;
        if self.first.is_none() {
            self.first = Some(d.date.clone());
        }
        self.last = Some(d.date.clone());
        for flag in Flag::ALL {
            if !d.tranches.iter().any(|t| t.flags.contains(&flag)) {
                continue;
            }
            match self.dates_with_flag.iter_mut().find(|c| c.flag == flag) {
                Some(c) => c.dates += 1,
                None => {
                    self.dates_with_flag.push(FlagCount { flag, dates: 1 });
                    let rank = |f: Flag| Flag::ALL.iter().position(|&g| g == f);
                    self.dates_with_flag.sort_by_key(|c| rank(c.flag));
                }
            }
        }
        if d.tranches.iter().any(ImpliedTranche::unsolved) {
            self.unsolved += 1;
            if self.unsolved_dates.len() < Self::DATES_SHOWN {
                self.unsolved_dates.push(d.date.clone());
            }
        }
    }

    /// The summary in three lines: dates run, dates with each flag, dates
    /// with an unsolved quote (the first [`Self::DATES_SHOWN`] named).
    ///
    /// ```
    /// use skewbook::report::implied::RunSummary;
    /// let s = RunSummary { dates: 2, first: Some("2026-06-01".into()),
    ///     last: Some("2026-06-02".into()), dates_with_flag: vec![], unsolved: 0,
    ///     unsolved_dates: vec![] };
    /// assert_eq!(s.lines(), [
    ///     "2 dates run, 2026-06-01 to 2026-06-02",
    ///     "no flags",
    ///     "every quote of every date has a solution",
    /// ]);
    /// ```
    pub fn lines(&self) -> Vec<String> {
        let span = match (&self.first, &self.last) {
            (Some(f), Some(l)) if f != l => format!(", {f} to {l}"),
            (Some(f), _) => format!(", {f}"),
            _ => String::new(),
        };
        let flags = if self.dates_with_flag.is_empty() {
            "no flags".to_string()
        } else {
            let each: Vec<String> = self
                .dates_with_flag
                .iter()
                .map(|c| format!("{} {}", c.flag.name(), c.dates))
                .collect();
            format!("dates with each flag: {}", each.join(", "))
        };
        let n = self.unsolved;
        let unsolved = if n == 0 {
            "every quote of every date has a solution".to_string()
        } else {
            let shown =
                self.unsolved_dates[..self.unsolved_dates.len().min(Self::DATES_SHOWN)].join(", ");
            let more = if n > Self::DATES_SHOWN {
                format!(" and {} more", n - Self::DATES_SHOWN)
            } else {
                String::new()
            };
            let dates = if n == 1 { "date" } else { "dates" };
            format!("{n} {dates} with a quote that has no solution (exit status 1): {shown}{more}")
        };
        vec![
            format!(
                "{} {} run{span}",
                self.dates,
                if self.dates == 1 { "date" } else { "dates" }
            ),
            flags,
            unsolved,
        ]
    }
}

/// Implied correlations of every tranche of every date.
///
/// Dates run in parallel (rayon, on the current thread pool); the report
/// is in date order and the same, to the byte, whatever the number of
/// threads.
///
/// # Errors
/// Curve errors of any date (unfittable index quotes, bad zero pillars),
/// all of them together; else the first date's pricing error.
/// Tranches with no solution are not errors: they are flagged in the report.
pub fn build(snapshot: &Snapshot, opts: &MarketOptions) -> Result<ImpliedReport> {
    build_with(snapshot, opts, &ImpliedOptions::default())
}

/// [`build`] with the index check's tolerance of `implied`.
///
/// # Errors
/// As [`build`]; [`crate::ErrorKind::Usage`] for a tolerance that is not
/// a finite number of 0 bp or more.
pub fn build_with(
    snapshot: &Snapshot,
    opts: &MarketOptions,
    implied: &ImpliedOptions,
) -> Result<ImpliedReport> {
    build_with_progress(snapshot, opts, implied, &|| {})
}

/// [`build_with`], calling `done` once as each date is finished (from
/// whichever thread finished it), so a front end can show progress. The
/// library prints nothing itself. Dates run in parallel (rayon) and come
/// out in date order, whatever the number of threads.
///
/// # Errors
/// As [`build_with`].
pub fn build_with_progress(
    snapshot: &Snapshot,
    opts: &MarketOptions,
    implied: &ImpliedOptions,
    done: &(dyn Fn() + Sync),
) -> Result<ImpliedReport> {
    implied.check()?;
    let dates = build_dates(&snapshot.dates, &snapshot.path, opts, implied, done)?;
    Ok(ImpliedReport { dates })
}

/// The report of `dates` (of the file `path`), in parallel, calling `done`
/// as each is finished.
///
/// # Errors
/// Curve errors of any date, all of them together; else the first date's
/// pricing error.
fn build_dates(
    dates: &[MarketDate],
    path: &str,
    opts: &MarketOptions,
    implied: &ImpliedOptions,
    done: &(dyn Fn() + Sync),
) -> Result<Vec<ImpliedDate>> {
    // Each date on its own: bootstrap, then every compound root and the
    // base chain. A curve error is kept apart from a pricing error so that
    // the errors come out as they did date by date: every curve error first.
    let per_date: Vec<Result<Result<ImpliedDate>>> = dates
        .par_iter()
        .map(|md| {
            let out = Pool::build(md, opts, path).map(|pool| implied_in_model(md, pool, implied));
            done();
            out
        })
        .collect();
    let priced = collect_all(per_date)?;
    priced.into_iter().collect()
}

/// One date in the options' pool model, with the large pool beside it
/// when asked for.
fn implied_in_model(md: &MarketDate, pool: Pool, implied: &ImpliedOptions) -> Result<ImpliedDate> {
    if implied.model == PoolModel::LargePool {
        return implied_date(md, pool).map(|d| ImpliedDate::with_options(&d, implied));
    }
    let large = if implied.compare_pool {
        Some(implied_date(md, pool.clone())?)
    } else {
        None
    };
    let mut date = ImpliedDate::with_options(&implied_date_with(md, pool, implied.model)?, implied);
    date.model = model_field(implied.model);
    if let Some(large) = large {
        for (t, l) in date.tranches.iter_mut().zip(large.tranches()) {
            let l = ImpliedTranche::from_implied(l);
            t.large_pool = Some(LargePoolSide {
                compound_correlation: l.compound_correlation,
                base_correlation: l.base_correlation,
            });
        }
    }
    Ok(date)
}

/// The table's line on a maturity's index check.
fn index_check_text(c: &IndexCheck) -> String {
    let tol = significant(c.tolerance_bp, 6);
    if c.mismatch {
        let side = if c.gap_bp > 0.0 { "above" } else { "below" };
        format!(
            "index check: the tranche quotes imply a pool protection {} bp of running spread \
             {side} the index curve's, more than the tolerance {tol} bp: the tranche quotes and \
             the index quote disagree (check the top tranche's quote and the index quote)",
            significant(c.gap_bp.abs(), 3)
        )
    } else {
        format!(
            "index check: the tranche quotes and the index curve agree on the pool's protection \
             to {} bp of running spread (tolerance {tol} bp)",
            significant(c.gap_bp.abs(), 3)
        )
    }
}

fn pct_list(xs: &[f64]) -> String {
    if xs.is_empty() {
        "none".to_string()
    } else {
        xs.iter()
            .map(|x| fixed(x * 100.0, 2))
            .collect::<Vec<_>>()
            .join(" ")
    }
}

impl Report for ImpliedReport {
    fn sections(&self) -> Vec<Table> {
        let mut out = Vec::new();
        for d in &self.dates {
            let curve = super::curve::CurveReport {
                dates: vec![super::curve::CurveDate {
                    date: d.date.clone(),
                    recovery: d.recovery,
                    index: d.index.clone(),
                }],
            };
            out.extend(curve.sections());
            for group in d
                .tranches
                .chunk_by(|a, b| a.tranche.maturity == b.tranche.maturity)
            {
                let m = &group[0].tranche.maturity;
                let compare = group.iter().any(|r| r.large_pool.is_some());
                let mut headers = vec!["tranche", "quote", "compound%", "base%"];
                if compare {
                    headers.extend(["large-pool compound%", "large-pool base%"]);
                }
                headers.extend(["EL%", "reprice", "flags"]);
                let mut t = Table::new(&headers).with_title(format!(
                    "{}  tranches maturing {m}{}",
                    d.date,
                    model_title(&d.model)
                ));
                for r in group {
                    let mut row = vec![
                        bounds_label(r.tranche.attach_pct, r.tranche.detach_pct),
                        quote_label(r.tranche.quote_kind, r.tranche.quote, r.tranche.coupon_bp),
                        pct_list(&r.compound_correlation),
                        fixed_or(r.base_correlation.map(|b| b * 100.0), 2, "-"),
                    ];
                    if compare {
                        let l = r.large_pool.as_ref();
                        row.push(l.map_or("-".to_string(), |l| pct_list(&l.compound_correlation)));
                        row.push(fixed_or(
                            l.and_then(|l| l.base_correlation).map(|b| b * 100.0),
                            2,
                            "-",
                        ));
                    }
                    row.extend([
                        fixed_or(r.expected_loss_pct, 2, "-"),
                        r.base_reprice_error.map_or("-".to_string(), |e| sci(e, 0)),
                        crate::flags::join(&r.flags, true),
                    ]);
                    t.push(row);
                    let label = bounds_label(r.tranche.attach_pct, r.tranche.detach_pct);
                    let top = r.flags.contains(&Flag::TopTranche);
                    let notes = [
                        r.compound_note.as_ref(),
                        r.base_note.as_ref().filter(|_| !top),
                        r.check_note.as_ref(),
                    ];
                    for n in notes.into_iter().flatten() {
                        t.notes.extend(wrap(&format!("{label}: {n}"), 79, 4));
                    }
                }
                if let Some(c) = d.index_check.iter().find(|c| &c.maturity == m) {
                    t.notes.extend(wrap(&index_check_text(c), 79, 4));
                }
                out.push(t);
            }
        }
        out
    }

    fn csv(&self) -> Table {
        csv_table(&self.dates, self.csv_columns())
    }
}

/// The CSV of `dates` with the optional columns `columns`.
fn csv_table(dates: &[ImpliedDate], columns: CsvColumns) -> Table {
    let mut headers = vec!["date", "recovery_pct"];
    headers.extend(QuotedTranche::CSV_HEADERS);
    headers.extend([
        "compound_root_count",
        "compound_correlation_1",
        "compound_correlation_2",
        "compound_range_low",
        "compound_range_high",
        "base_correlation",
        "base_reprice_error",
        "expected_loss_pct",
        "flags",
        "base_note",
        "compound_note",
        "check_note",
        "index_gap_bp",
    ]);
    let (with_model, compare) = (columns.model, columns.large_pool);
    if with_model {
        headers.push("model");
    }
    if compare {
        headers.extend([
            "large_pool_compound_correlation_1",
            "large_pool_compound_correlation_2",
            "large_pool_base_correlation",
        ]);
    }
    let mut t = Table::new(&headers);
    for d in dates {
        for r in &d.tranches {
            let mut row = vec![d.date.clone(), csv_num(Some(pct(d.recovery)))];
            row.extend(r.tranche.csv_cells());
            row.extend([
                r.compound_correlation.len().to_string(),
                csv_num(r.compound_correlation.first().copied()),
                csv_num(r.compound_correlation.get(1).copied()),
                csv_num(r.compound_range.map(|r| r[0])),
                csv_num(r.compound_range.map(|r| r[1])),
                csv_num(r.base_correlation),
                csv_num(r.base_reprice_error),
                csv_num(r.expected_loss_pct),
                crate::flags::join(&r.flags, false),
                r.base_note.clone().unwrap_or_default(),
                r.compound_note.clone().unwrap_or_default(),
                r.check_note.clone().unwrap_or_default(),
                csv_num(
                    d.index_check
                        .iter()
                        .find(|c| c.maturity == r.tranche.maturity)
                        .map(|c| c.gap_bp),
                ),
            ]);
            if with_model {
                row.push(d.model.clone().unwrap_or_default());
            }
            if compare {
                let l = r.large_pool.as_ref();
                row.extend([
                    csv_num(l.and_then(|l| l.compound_correlation.first().copied())),
                    csv_num(l.and_then(|l| l.compound_correlation.get(1).copied())),
                    csv_num(l.and_then(|l| l.base_correlation)),
                ]);
            }
            t.push(row);
        }
    }
    t
}
