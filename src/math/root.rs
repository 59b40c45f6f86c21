//! One-dimensional root finding with an explicit stopping rule.

use roots::Convergency;

/// When a solve stops: the residual is small enough, the bracket is narrow
/// enough, or the iteration budget is spent.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Tolerance {
    /// Stop when |f(x)| is below this (in the unit of the function).
    pub residual: f64,
    /// Stop when the bracket is narrower than this.
    pub width: f64,
    /// Give up after this many iterations.
    pub max_iterations: usize,
}

impl Convergency<f64> for Tolerance {
    fn is_root_found(&mut self, y: f64) -> bool {
        y.abs() < self.residual
    }
    fn is_converged(&mut self, x1: f64, x2: f64) -> bool {
        (x1 - x2).abs() < self.width
    }
    fn is_iteration_limit_reached(&mut self, iter: usize) -> bool {
        iter >= self.max_iterations
    }
}

/// Why a solve stopped.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Termination {
    /// |f| fell below the residual tolerance.
    Residual,
    /// The bracket fell below the width tolerance.
    Bracket,
}

/// A root and how it was found.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Solution {
    /// The root.
    pub value: f64,
    /// Function evaluations spent.
    pub evaluations: usize,
    /// f at the root.
    pub residual: f64,
    /// Why the solver stopped.
    pub termination: Termination,
}

/// Why a solve failed.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Failure {
    /// f has the same sign at both ends.
    NotBracketed,
    /// The iteration budget ran out.
    NoConvergence,
}

/// Brent's method (the `roots` crate) on a bracket [a, b], counting evaluations.
///
/// # Errors
/// [`Failure::NotBracketed`] when f(a) and f(b) have the same sign;
/// [`Failure::NoConvergence`] when the iteration budget runs out.
pub fn brent<F: FnMut(f64) -> f64>(
    mut f: F,
    a: f64,
    b: f64,
    tol: Tolerance,
) -> Result<Solution, Failure> {
    let mut evaluations = 0;
    let mut counted = |x: f64| {
        evaluations += 1;
        f(x)
    };
    let mut conv = tol;
    let x = roots::find_root_brent(a, b, &mut counted, &mut conv).map_err(|e| match e {
        roots::SearchError::NoBracketing => Failure::NotBracketed,
        _ => Failure::NoConvergence,
    })?;
    let residual = counted(x);
    let termination = if residual.abs() < tol.residual {
        Termination::Residual
    } else {
        Termination::Bracket
    };
    Ok(Solution {
        value: x,
        evaluations,
        residual,
        termination,
    })
}

/// Newton's method kept inside a bracket, falling back to bisection when a
/// step leaves it. `fdf` returns (f(x), f'(x)); `fa`, `fb` are f at the ends
/// and must differ in sign (or one be zero).
///
/// # Errors
/// [`Failure::NotBracketed`] when `fa` and `fb` have the same sign;
/// [`Failure::NoConvergence`] when the iteration budget runs out.
pub fn newton_bracketed<F: FnMut(f64) -> (f64, f64)>(
    mut fdf: F,
    mut a: f64,
    mut b: f64,
    fa: f64,
    fb: f64,
    tol: Tolerance,
) -> Result<Solution, Failure> {
    if fa == 0.0 || fb == 0.0 {
        let value = if fa == 0.0 { a } else { b };
        return Ok(Solution {
            value,
            evaluations: 0,
            residual: 0.0,
            termination: Termination::Residual,
        });
    }
    if fa.signum() == fb.signum() {
        return Err(Failure::NotBracketed);
    }
    // Orient so that f(a) < 0 < f(b).
    if fa > 0.0 {
        std::mem::swap(&mut a, &mut b);
    }
    // Start from the secant point.
    let (flo, fhi) = (fa.min(fb), fa.max(fb));
    let mut x = a + (b - a) * (-flo) / (fhi - flo);
    for evaluations in 1..=tol.max_iterations {
        let (fx, dfx) = fdf(x);
        if fx.abs() < tol.residual {
            return Ok(Solution {
                value: x,
                evaluations,
                residual: fx,
                termination: Termination::Residual,
            });
        }
        if fx < 0.0 {
            a = x;
        } else {
            b = x;
        }
        if (b - a).abs() < tol.width {
            return Ok(Solution {
                value: x,
                evaluations,
                residual: fx,
                termination: Termination::Bracket,
            });
        }
        let step = x - fx / dfx;
        let (lo, hi) = (a.min(b), a.max(b));
        x = if dfx != 0.0 && step.is_finite() && step > lo && step < hi {
            step
        } else {
            0.5 * (a + b)
        };
    }
    Err(Failure::NoConvergence)
}

impl std::fmt::Display for Failure {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Failure::NotBracketed => write!(
                f,
                "the function has the same sign at both ends of the bracket"
            ),
            Failure::NoConvergence => write!(f, "no convergence within the iteration budget"),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    const TOL: Tolerance = Tolerance {
        residual: 1e-14,
        width: 1e-15,
        max_iterations: 100,
    };

    #[test]
    fn both_solvers_find_sqrt2() {
        let b = brent(|x| x * x - 2.0, 0.0, 2.0, TOL).unwrap();
        let n = newton_bracketed(|x| (x * x - 2.0, 2.0 * x), 0.0, 2.0, -2.0, 2.0, TOL).unwrap();
        assert!((b.value - 2f64.sqrt()).abs() < 1e-14);
        assert!((n.value - 2f64.sqrt()).abs() < 1e-14);
        // Newton from the secant start: quadratic convergence, a handful of steps.
        assert!(n.evaluations <= 7, "{}", n.evaluations);
    }

    #[test]
    fn unbracketed_is_an_error() {
        assert_eq!(
            brent(|x| x * x + 1.0, 0.0, 2.0, TOL),
            Err(Failure::NotBracketed)
        );
        assert_eq!(
            newton_bracketed(|x| (x * x + 1.0, 2.0 * x), 0.0, 2.0, 1.0, 5.0, TOL),
            Err(Failure::NotBracketed)
        );
    }
}
