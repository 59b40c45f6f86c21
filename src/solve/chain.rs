//! One trade date's implied correlations as library data: every compound
//! root per tranche, and the base-correlation chain per maturity (its knots,
//! and where and why it broke).
//!
//! [`implied_date`] is pure (no printing, no shared state), so dates can run
//! in parallel; reports only format what it returns.

use super::base::{base_correlation_with_legs, BaseSolve, Side};
use super::compound::{compound_roots_from_scan, scan_grid, CompoundSolve, RHO_MAX, RHO_MIN};
use crate::curve::Pool;
use crate::error::Result;
use crate::flags::Flag;
use crate::loss::{Correlation, PoolModel};
use crate::market::{tiles_from_zero, MarketDate, TrancheQuote};
use crate::math::root::Solution;
use crate::tranche::{BaseLegs, Tranche, TrancheLegs, TrancheSchedule, TrancheValuer};
use chrono::NaiveDate;

/// How close to a search limit ([`RHO_MIN`], [`RHO_MAX`]) a compound or
/// base correlation may come before it is flagged
/// [`Flag::NearSearchLimit`]: 0.005 (0.5%, absolute). A quote in the wrong
/// unit (a spread of 2.41 meant as 241 bp) solves to the search floor.
pub const NEAR_LIMIT: f64 = 0.005;

/// Whether `rho` lies within [`NEAR_LIMIT`] of a search limit.
///
/// ```
/// use skewbook::solve::chain::near_limit;
/// assert!(near_limit(0.0003) && near_limit(0.9993));
/// assert!(!near_limit(0.18) && !near_limit(0.99));
/// ```
pub fn near_limit(rho: f64) -> bool {
    rho - RHO_MIN <= NEAR_LIMIT || RHO_MAX - rho <= NEAR_LIMIT
}

/// One knot of a base-correlation curve.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Knot {
    /// Detachment, fraction of pool notional (below 100%).
    pub detach: f64,
    /// Base correlation at that detachment.
    pub rho: f64,
}

/// What the base-correlation chain gave one quoted tranche.
#[derive(Debug, Clone, PartialEq)]
pub enum BaseOutcome {
    /// Solved: the base correlation at the detachment.
    Solved {
        /// Base correlation at the attachment (0 for an equity tranche).
        rho_attach: f64,
        /// Base correlation at the detachment.
        rho_detach: f64,
    },
    /// The tranche ends at 100%: valued with the attachment's correlation
    /// on both bases, since [0, 100%] does not depend on correlation.
    Top {
        /// Base correlation at the attachment.
        rho_attach: f64,
    },
    /// The tranche is [0, 100%]: no correlation at all.
    WholePool,
    /// The maturity's tranches do not tile from 0.
    NotTiled,
    /// No correlation in the range reaches the quote.
    NoSolution {
        /// Which side of the attainable range the quote lies on.
        side: Side,
        /// Model quotes (file unit) at the ends of the range.
        range: (Option<f64>, Option<f64>),
    },
    /// A root lies in `bracket` but the solver did not converge.
    SolverFailed {
        /// Where the root lies.
        bracket: (f64, f64),
    },
    /// A tranche below has no base correlation.
    ChainBroken {
        /// The tranche where the chain broke.
        at: Tranche,
    },
}

/// Where a maturity's chain broke, and why.
#[derive(Debug, Clone, PartialEq)]
pub struct ChainBreak {
    /// The first tranche without a base correlation.
    pub at: Tranche,
    /// Its outcome (no solution, or a solver failure).
    pub why: BaseOutcome,
}

/// The base-correlation curve of one maturity.
#[derive(Debug, Clone, PartialEq)]
pub struct BaseCurve {
    /// Tranche maturity.
    pub maturity: NaiveDate,
    /// Solved detachments below 100%, increasing.
    pub knots: Vec<Knot>,
    /// Where the chain broke, if it did.
    pub broken: Option<ChainBreak>,
    /// Whether the maturity's tranches tile from 0 (no chain without it).
    pub tiles: bool,
}

/// A quoted tranche repriced off the base curve.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Repriced {
    /// Model quote minus the quote, file unit; `None` when the model has no
    /// quote (a spread quote with no annuity left).
    pub error: Option<f64>,
    /// Expected tranche loss at the protection end, fraction of the width.
    pub expected_loss: f64,
    /// What the quote's premiums are worth at the base correlations, per
    /// unit tranche notional: running spread (or coupon) times the annuity,
    /// plus the upfront discounted from settlement (the index check's term).
    pub premium: f64,
}

/// Everything implied for one quoted tranche.
#[derive(Debug, Clone, PartialEq)]
pub struct TrancheImplied {
    /// The quote as read.
    pub quote: TrancheQuote,
    /// Compound correlation search (`None` for the whole pool).
    pub compound: Option<CompoundSolve>,
    /// The whole pool's one model quote (file unit), which no correlation moves.
    pub whole_pool_quote: Option<f64>,
    /// Base-correlation outcome.
    pub base: BaseOutcome,
    /// The quote repriced off the base curve, where there is one.
    pub repriced: Option<Repriced>,
    /// Flags, in the order the report lists them.
    pub flags: Vec<Flag>,
}

impl TrancheImplied {
    /// Base correlation at the detachment, if solved.
    pub fn base_correlation(&self) -> Option<f64> {
        match self.base {
            BaseOutcome::Solved { rho_detach, .. } => Some(rho_detach),
            _ => None,
        }
    }

    /// Whether this quote has a solution missing (drives exit status 1): no
    /// compound root, or below the top no base correlation. The whole pool
    /// and a tranche flat in correlation have nothing to solve.
    pub fn unsolved(&self) -> bool {
        if self.flags.contains(&Flag::NoCorrelationDependence)
            || self.flags.contains(&Flag::FlatInCorrelation)
        {
            return false;
        }
        let no_compound = self.compound.as_ref().is_none_or(|c| c.roots.is_empty());
        no_compound
            || (self.base_correlation().is_none() && !matches!(self.base, BaseOutcome::Top { .. }))
    }
}

/// One maturity's implied correlations.
#[derive(Debug, Clone, PartialEq)]
pub struct MaturityImplied {
    /// Tranches by attachment.
    pub tranches: Vec<TrancheImplied>,
    /// The base-correlation curve.
    pub base_curve: BaseCurve,
    /// The whole pool's legs, [0, 100%] on this maturity's schedule (no
    /// correlation moves them), pool units.
    pub whole_pool: BaseLegs,
}

/// One trade date's implied correlations and the pool they were solved on.
#[derive(Debug, Clone, PartialEq)]
pub struct DateImplied {
    /// The index pool of the date.
    pub pool: Pool,
    /// Tranche maturities, increasing.
    pub maturities: Vec<MaturityImplied>,
}

impl DateImplied {
    /// Every tranche of the date, by maturity then attachment.
    pub fn tranches(&self) -> impl Iterator<Item = &TrancheImplied> {
        self.maturities.iter().flat_map(|m| &m.tranches)
    }

    /// The base curves that have at least one knot, increasing maturity.
    pub fn base_curves(&self) -> Vec<&BaseCurve> {
        self.maturities
            .iter()
            .map(|m| &m.base_curve)
            .filter(|c| !c.knots.is_empty())
            .collect()
    }
}

/// Implied correlations of one date: its pool bootstrapped already (see
/// [`Pool::build`]) and its tranche quotes, sorted by maturity then
/// attachment as the snapshot reader leaves them.
///
/// # Errors
/// [`crate::ErrorKind::InvalidInput`] for a tranche the library cannot
/// price (bounds outside [0, 1], a maturity not after the trade date).
/// Quotes with no solution are not errors: they are outcomes and flags.
pub fn implied_date(md: &MarketDate, pool: Pool) -> Result<DateImplied> {
    implied_date_with(md, pool, PoolModel::LargePool)
}

/// [`implied_date`] with the tranches priced in `model` (the large pool,
/// or a pool of n names): the same solvers, flags and outcomes.
///
/// # Errors
/// As [`implied_date`].
pub fn implied_date_with(md: &MarketDate, pool: Pool, model: PoolModel) -> Result<DateImplied> {
    let mut maturities = Vec::new();
    for same in md.tranches.chunk_by(|a, b| a.maturity == b.maturity) {
        let group: Vec<&TrancheQuote> = same.iter().collect();
        let schedule = TrancheSchedule::for_pool_with(&pool, same[0].maturity, model)?;
        maturities.push(implied_maturity(&schedule, &group)?);
    }
    Ok(DateImplied { pool, maturities })
}

/// Implied correlations for the tranches of one maturity (sorted by
/// attachment) on a schedule of that maturity.
///
/// # Errors
/// As [`implied_date`].
pub fn implied_maturity(
    schedule: &TrancheSchedule,
    quotes: &[&TrancheQuote],
) -> Result<MaturityImplied> {
    let tiles = tiles_from_zero(quotes);
    // Each bound's base-tranche legs on the scan grid, shared by the
    // tranches above and below it (compound scans and base brackets).
    // The bivariate normal's rule at each scan correlation, built once.
    let grid: Vec<Correlation> = scan_grid().iter().map(|&r| Correlation::new(r)).collect();
    let mut scans: Vec<(f64, Vec<BaseLegs>)> = Vec::new();
    for t in quotes {
        for k in [t.attach, t.detach] {
            if !scans.iter().any(|(b, _)| *b == k) {
                let base = schedule.base(k)?;
                let legs = grid
                    .iter()
                    .map(|r| schedule.base_legs_at(&base, r))
                    .collect();
                scans.push((k, legs));
            }
        }
    }
    let scan_of = |k: f64| {
        scans
            .iter()
            .find(|(b, _)| *b == k)
            .map(|(_, s)| s.as_slice())
    };
    let mut curve = BaseCurve {
        maturity: schedule.maturity(),
        knots: Vec::new(),
        broken: None,
        tiles,
    };
    // Base correlation at the previous detachment and the legs of the base
    // tranche up to it there (the next tranche's lower base, when the bounds
    // meet exactly); None once the chain breaks.
    let mut chain: Option<(f64, f64, BaseLegs)> = Some((0.0, 0.0, BaseLegs::default()));
    let mut out = Vec::with_capacity(quotes.len());
    for t in quotes {
        let tranche = Tranche::new(t.attach, t.detach)?;
        let v = TrancheValuer::new(schedule, tranche, t.quote)?;
        if tranche.is_whole_pool() {
            out.push(whole_pool(&v, t));
            continue;
        }
        let (Some(lower_scan), Some(upper_scan)) = (scan_of(t.attach), scan_of(t.detach)) else {
            unreachable!("every bound of every quote was scanned above");
        };
        let flat: Vec<_> = lower_scan
            .iter()
            .zip(upper_scan)
            .map(|(a, d)| v.combine(a, d, true))
            .collect();
        let comp = compound_roots_from_scan(&v, &flat);
        let mut flags = compound_flags(&comp);
        // The quote repriced from the lower base's legs at rho_A and the
        // upper base's at rho_D.
        let reprice = |lower: &BaseLegs, upper: &BaseLegs| {
            let legs = v.combine(lower, upper, false);
            Repriced {
                error: v
                    .model_quote(&legs)
                    .map(|q| q - t.quote.exact_in_file_unit()),
                expected_loss: legs.expected_loss,
                premium: premium(&v, &legs),
            }
        };
        let below = chain.map(|(detach, rho_a, legs)| {
            let lower = if detach == t.attach {
                legs
            } else {
                v.lower_legs(rho_a)
            };
            (rho_a, lower)
        });
        let (base, repriced) = match below {
            _ if !tiles => (BaseOutcome::NotTiled, None),
            None => {
                let at = curve.broken.as_ref().map_or(tranche, |b| b.at);
                (BaseOutcome::ChainBroken { at }, None)
            }
            Some((rho_a, lower)) if tranche.is_top() => (
                BaseOutcome::Top { rho_attach: rho_a },
                Some(reprice(&lower, &v.upper_legs(rho_a))),
            ),
            Some((rho_a, lower)) => {
                let (solved, upper) = match equity_root(&comp, &v, &flat) {
                    // [0, D]: the base solve is the compound solve.
                    Some(root) if t.attach == 0.0 => {
                        (BaseSolve::Solved(root), Some(v.upper_legs(root.value)))
                    }
                    _ => base_correlation_with_legs(&v, &lower, upper_scan),
                };
                let outcome = match solved {
                    BaseSolve::Solved(s) => BaseOutcome::Solved {
                        rho_attach: rho_a,
                        rho_detach: s.value,
                    },
                    BaseSolve::NoSolution { side, range } => {
                        BaseOutcome::NoSolution { side, range }
                    }
                    BaseSolve::Failed { bracket } => BaseOutcome::SolverFailed { bracket },
                };
                if let (BaseOutcome::Solved { rho_detach, .. }, Some(upper)) = (&outcome, upper) {
                    let rho_detach = *rho_detach;
                    chain = Some((t.detach, rho_detach, upper));
                    curve.knots.push(Knot {
                        detach: t.detach,
                        rho: rho_detach,
                    });
                    (outcome, Some(reprice(&lower, &upper)))
                } else {
                    chain = None;
                    curve.broken = Some(ChainBreak {
                        at: tranche,
                        why: outcome.clone(),
                    });
                    (outcome, None)
                }
            }
        };
        flags.extend(base_flag(&base));
        let base_rho = match base {
            BaseOutcome::Solved { rho_detach, .. } => Some(rho_detach),
            _ => None,
        };
        if comp
            .roots
            .iter()
            .map(|r| r.value)
            .chain(base_rho)
            .any(near_limit)
        {
            flags.push(Flag::NearSearchLimit);
        }
        out.push(TrancheImplied {
            quote: (*t).clone(),
            compound: Some(comp),
            whole_pool_quote: None,
            base,
            repriced,
            flags,
        });
    }
    Ok(MaturityImplied {
        tranches: out,
        base_curve: curve,
        whole_pool: schedule.base_legs(&schedule.base(1.0)?, 0.5),
    })
}

/// The quote's premiums on these legs, per unit tranche notional.
fn premium(v: &TrancheValuer, legs: &TrancheLegs) -> f64 {
    v.running() * legs.annuity + v.upfront() * v.schedule.df_settlement()
}

/// An equity tranche's base correlation is its compound correlation: with
/// nothing below it, the base solve's function is the compound solve's.
/// The compound root serves when it is the root the base solve would
/// take, the one in the first sign change of the scan (`flat`, the
/// tranche's legs at each scan correlation), found without failures.
fn equity_root(c: &CompoundSolve, v: &TrancheValuer, flat: &[TrancheLegs]) -> Option<Solution> {
    let root = *c.roots.first()?;
    if c.failures > 0 || c.tangent {
        return None;
    }
    let grid = scan_grid();
    let values: Vec<f64> = flat.iter().map(|l| v.value(l)).collect();
    let i = values.windows(2).position(|w| w[0] * w[1] <= 0.0)?;
    (grid[i] <= root.value && root.value <= grid[i + 1]).then_some(root)
}

/// [0, 100%]: no correlation moves it; its one model quote and loss.
fn whole_pool(v: &TrancheValuer, t: &TrancheQuote) -> TrancheImplied {
    let legs = v.legs_flat(0.5);
    let q = v.model_quote(&legs);
    TrancheImplied {
        quote: t.clone(),
        compound: None,
        whole_pool_quote: q,
        base: BaseOutcome::WholePool,
        repriced: Some(Repriced {
            error: q.map(|q| q - t.quote.exact_in_file_unit()),
            expected_loss: legs.expected_loss,
            premium: premium(v, &legs),
        }),
        flags: vec![Flag::NoCorrelationDependence],
    }
}

fn compound_flags(c: &CompoundSolve) -> Vec<Flag> {
    let mut flags = Vec::new();
    if c.flat {
        flags.push(Flag::FlatInCorrelation);
    } else {
        match c.roots.len() {
            0 => flags.push(Flag::NoCompoundRoot),
            2.. => flags.push(Flag::TwoCompoundRoots),
            _ => {}
        }
    }
    if c.tangent {
        flags.push(Flag::CompoundTangent);
    }
    if c.failures > 0 {
        flags.push(Flag::SolverFailed);
    }
    flags
}

fn base_flag(b: &BaseOutcome) -> Option<Flag> {
    match b {
        BaseOutcome::NotTiled => Some(Flag::BoundsDoNotTile),
        BaseOutcome::Top { .. } => Some(Flag::TopTranche),
        BaseOutcome::NoSolution {
            side: Side::Above, ..
        } => Some(Flag::BaseQuoteAboveRange),
        BaseOutcome::NoSolution {
            side: Side::Below, ..
        } => Some(Flag::BaseQuoteBelowRange),
        BaseOutcome::SolverFailed { .. } => Some(Flag::SolverFailed),
        BaseOutcome::ChainBroken { .. } => Some(Flag::BaseChainBroken),
        BaseOutcome::Solved { .. } | BaseOutcome::WholePool => None,
    }
}
