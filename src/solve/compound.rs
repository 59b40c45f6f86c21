//! Compound correlation: every flat correlation at which a tranche's model
//! value at its own quote is zero.
//!
//! # Compound correlation may have zero or two solutions
//!
//! A mezzanine tranche's expected loss rises and then falls with
//! correlation, so its value at a quote can cross zero twice, or never
//! (Torresetti, Brigo and Pallavicini 2006, "Implied correlation in CDO
//! tranches: a paradigm to be handled with care"). Newton from one start
//! silently returns one root or diverges near the peak, so the search is:
//!
//! 1. a scan of value and analytic derivative on [`SCAN_POINTS`] correlations
//!    in [[`RHO_MIN`], [`RHO_MAX`]], spaced as rho = sin²θ with θ uniform
//!    (denser near 0 and 1, where the value moves fastest);
//! 2. each sign change is polished by bracketed Newton, started from the
//!    root of the cubic through the scan's values and slopes at its ends;
//! 3. an interval whose ends share a sign but whose derivative changes
//!    sign towards zero hides an extremum: it is located (Brent on the
//!    derivative) and, if the value there crosses zero, both roots are polished.

use crate::math::root::{brent, newton_root_hermite, Solution, Tolerance};
use crate::tranche::{TrancheLegs, TrancheValuer};

/// Lower end of the correlation search.
pub const RHO_MIN: f64 = 1e-4;
/// Upper end of the correlation search.
pub const RHO_MAX: f64 = 0.9999;
/// Correlations sampled by the scan.
pub const SCAN_POINTS: usize = 12;

/// Stopping rule for correlation solves: value per unit tranche notional
/// below 1e-14, or the bracket in rho below 1e-13.
pub const CORRELATION_TOLERANCE: Tolerance = Tolerance {
    residual: 1e-14,
    width: 1e-13,
    max_iterations: 100,
};

/// What the compound search found for one tranche.
#[derive(Debug, Clone, PartialEq)]
pub struct CompoundSolve {
    /// Every root in [RHO_MIN, RHO_MAX], ascending (0, 1 or 2 in practice).
    pub roots: Vec<Solution>,
    /// Smallest and largest model quote (file unit) seen over the search
    /// range: scan points and located extrema. For an upfront quote the
    /// extremes are exact; for a spread quote they are the scan's.
    /// `None` when the model has no quote anywhere in the range (a spread
    /// quote on a tranche with no annuity).
    pub attainable: Option<(f64, f64)>,
    /// Whether a root is a tangency (a double root at an extremum).
    pub tangent: bool,
    /// Whether the value is zero at every scanned correlation with zero
    /// slope: the tranche does not depend on correlation at this quote
    /// (for example [60%, 100%] at 40% recovery and a zero spread), so it
    /// has no roots rather than a root everywhere.
    pub flat: bool,
    /// Solves that stopped without converging (a sign change that could
    /// not be polished, an extremum that could not be located): each may
    /// hide a root that is not listed.
    pub failures: usize,
}

/// The correlations of the scan: rho = sin²θ, θ uniform.
pub fn scan_grid() -> [f64; SCAN_POINTS] {
    let (t0, t1) = (RHO_MIN.sqrt().asin(), RHO_MAX.sqrt().asin());
    let mut g = [0.0; SCAN_POINTS];
    for (i, r) in g.iter_mut().enumerate() {
        let th = t0 + (t1 - t0) * i as f64 / (SCAN_POINTS - 1) as f64;
        *r = th.sin().powi(2);
    }
    g[0] = RHO_MIN;
    g[SCAN_POINTS - 1] = RHO_MAX;
    g
}

struct Sample {
    rho: f64,
    value: f64,
    slope: f64,
}

/// Every compound correlation of a tranche at its quote.
///
/// # Formula
/// ```text
/// find all rho in [1e-4, 0.9999] with  protection(rho) - c · annuity(rho) - u · DF(ts) = 0
/// ```
///
/// # References
/// Torresetti, Brigo and Pallavicini (2006) for the zero- and two-root cases.
pub fn compound_roots(v: &TrancheValuer) -> CompoundSolve {
    let scan: Vec<TrancheLegs> = scan_grid().iter().map(|&rho| v.legs_flat(rho)).collect();
    compound_roots_from_scan(v, &scan)
}

/// [`compound_roots`] from the tranche's legs already evaluated at each
/// correlation of [`scan_grid`] (flat: derivatives in the common rho), so
/// tranches of one maturity can share their base tranches' scans.
pub fn compound_roots_from_scan(v: &TrancheValuer, scan: &[TrancheLegs]) -> CompoundSolve {
    assert_eq!(scan.len(), SCAN_POINTS, "one set of legs per scan point");
    let mut lo_q = f64::INFINITY;
    let mut hi_q = f64::NEG_INFINITY;
    let mut note = |legs: &TrancheLegs| {
        if let Some(q) = v.model_quote(legs) {
            lo_q = lo_q.min(q);
            hi_q = hi_q.max(q);
        }
    };
    let samples: Vec<Sample> = scan_grid()
        .iter()
        .zip(scan)
        .map(|(&rho, legs)| {
            note(legs);
            Sample {
                rho,
                value: v.value(legs),
                slope: v.d_value(legs),
            }
        })
        .collect();
    let flat = samples
        .iter()
        .all(|s| s.value.abs() < CORRELATION_TOLERANCE.residual && s.slope.abs() < 1e-12);
    if flat {
        return CompoundSolve {
            roots: Vec::new(),
            attainable: (lo_q <= hi_q).then_some((lo_q, hi_q)),
            tangent: false,
            flat,
            failures: 0,
        };
    }
    let fdf = |rho: f64| {
        let legs = v.legs_flat(rho);
        (v.value(&legs), v.d_value(&legs))
    };
    let mut failures = 0;
    let mut polish = |a: &Sample, b: &Sample| {
        let s = newton_root_hermite(
            fdf,
            (a.rho, b.rho),
            (a.value, b.value),
            (a.slope, b.slope),
            CORRELATION_TOLERANCE,
        );
        if s.is_err() {
            failures += 1;
        }
        s.ok()
    };
    let mut roots: Vec<Solution> = Vec::new();
    let mut tangent = false;
    let mut extremum_failures = 0;
    if samples[0].value == 0.0 {
        roots.push(Solution {
            value: samples[0].rho,
            evaluations: 0,
            residual: 0.0,
            termination: crate::math::root::Termination::Residual,
        });
    }
    for w in samples.windows(2) {
        let (a, b) = (&w[0], &w[1]);
        if b.value == 0.0 || a.value * b.value < 0.0 {
            roots.extend(polish(a, b));
            continue;
        }
        // Same sign at both ends: is there an extremum inside that turns back towards zero?
        let towards_zero = if a.value > 0.0 {
            a.slope < 0.0 && b.slope > 0.0
        } else {
            a.slope > 0.0 && b.slope < 0.0
        };
        if !towards_zero {
            continue;
        }
        let slope = |rho: f64| v.d_value(&v.legs_flat(rho));
        let tol = Tolerance {
            residual: 0.0,
            width: 1e-12,
            max_iterations: 100,
        };
        let Ok(ext) = brent(slope, a.rho, b.rho, tol) else {
            extremum_failures += 1;
            continue;
        };
        let legs = v.legs_flat(ext.value);
        if let Some(q) = v.model_quote(&legs) {
            lo_q = lo_q.min(q);
            hi_q = hi_q.max(q);
        }
        let m = Sample {
            rho: ext.value,
            value: v.value(&legs),
            slope: 0.0,
        };
        if m.value.abs() < CORRELATION_TOLERANCE.residual {
            tangent = true;
            roots.push(Solution {
                value: m.rho,
                evaluations: ext.evaluations,
                residual: m.value,
                termination: crate::math::root::Termination::Residual,
            });
        } else if m.value * a.value < 0.0 {
            roots.extend(polish(a, &m));
            roots.extend(polish(&m, b));
        }
    }
    roots.sort_by(|x, y| x.value.total_cmp(&y.value));
    roots.dedup_by(|x, y| (x.value - y.value).abs() < 1e-10);
    CompoundSolve {
        roots,
        attainable: (lo_q <= hi_q).then_some((lo_q, hi_q)),
        tangent,
        flat,
        failures: failures + extremum_failures,
    }
}
