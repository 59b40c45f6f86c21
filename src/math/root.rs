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
    /// The last Newton step fell below the width tolerance; the root is
    /// that step, not evaluated ([`newton_root_hermite`] only).
    Step,
    /// The root is Newton's last step, not evaluated: the two evaluations
    /// before it converge quadratically and predict it within 1% of the
    /// width tolerance ([`newton_root_hermite`] only).
    Predicted,
}

/// A root and how it was found.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Solution {
    /// The root.
    pub value: f64,
    /// Function evaluations spent.
    pub evaluations: usize,
    /// f at the root (for a root not evaluated, [`Termination::Step`] or
    /// [`Termination::Predicted`], the size Newton's error predicts).
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
    fdf: F,
    a: f64,
    b: f64,
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
    // Start from the secant point (from the end where f < 0).
    let (neg, pos) = if fa < 0.0 { (a, b) } else { (b, a) };
    let (flo, fhi) = (fa.min(fb), fa.max(fb));
    let x = neg + (pos - neg) * (-flo) / (fhi - flo);
    newton_from(fdf, a, b, fa, x, tol, Finish::Evaluated)
}

/// Whether a Newton solve may end on a step it has not evaluated.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Finish {
    /// Every root returned has been evaluated (callers that need f's
    /// by-products there).
    Evaluated,
    /// The last step may be returned unevaluated when quadratic
    /// convergence puts it well inside the width tolerance.
    Predicted,
}

/// [`newton_bracketed`] started from the root of the cubic Hermite
/// interpolant through `(a, fa, da)` and `(b, fb, db)` (values and
/// derivatives at the ends, as a scan has them) instead of the secant
/// point: when the scan is fine enough that the cubic is close to `f`, one
/// or two Newton steps fewer.
///
/// # Errors
/// As [`newton_bracketed`].
pub fn newton_bracketed_hermite<F: FnMut(f64) -> (f64, f64)>(
    fdf: F,
    ends: (f64, f64),
    values: (f64, f64),
    slopes: (f64, f64),
    tol: Tolerance,
) -> Result<Solution, Failure> {
    newton_hermite(fdf, ends, values, slopes, tol, Finish::Evaluated)
}

/// [`newton_bracketed_hermite`] for callers that need the root alone: the
/// confirming evaluation is skipped when the last two evaluations predict
/// Newton's next step to lie within 1% of the width tolerance of the root
/// ([`Termination::Predicted`]).
///
/// # Formula
/// With `x_k` the last evaluation, `x_(k-1)` the one before and
/// `delta = f(x_k) / f'(x_k)`, Newton's error after the step is
/// `|f'' / (2 f')| delta²`; the curvature comes from the two slopes:
/// ```text
/// f''(x_k) ≈ (f'(x_k) - f'(x_(k-1))) / (x_k - x_(k-1))
/// return x_k - delta  when  |f'' / (2 f')| delta² < width / 100  and  |delta| < |x_k - x_(k-1)|
/// ```
///
/// # Errors
/// As [`newton_bracketed`].
pub fn newton_root_hermite<F: FnMut(f64) -> (f64, f64)>(
    fdf: F,
    ends: (f64, f64),
    values: (f64, f64),
    slopes: (f64, f64),
    tol: Tolerance,
) -> Result<Solution, Failure> {
    newton_hermite(fdf, ends, values, slopes, tol, Finish::Predicted)
}

/// The Hermite-started bracketed Newton of both public forms.
fn newton_hermite<F: FnMut(f64) -> (f64, f64)>(
    fdf: F,
    ends: (f64, f64),
    values: (f64, f64),
    slopes: (f64, f64),
    tol: Tolerance,
    finish: Finish,
) -> Result<Solution, Failure> {
    let ((a, b), (fa, fb)) = (ends, values);
    if fa == 0.0 || fb == 0.0 {
        return newton_bracketed(fdf, a, b, fa, fb, tol);
    }
    if fa.signum() == fb.signum() {
        return Err(Failure::NotBracketed);
    }
    let x = hermite_root(ends, values, slopes);
    newton_from(fdf, a, b, fa, x, tol, finish)
}

/// A zero inside (a, b) of the cubic Hermite interpolant through
/// `(a, fa, da)` and `(b, fb, db)`, `fa` and `fb` of opposite signs (so the
/// cubic has one there): bisection-safeguarded Newton on the cubic. Falls
/// back to the secant point when a slope is not finite.
///
/// # Formula
/// ```text
/// t = (x - a) / (b - a),  h = b - a
/// p(t) = (2t³ - 3t² + 1) fa + (t³ - 2t² + t) h da + (-2t³ + 3t²) fb + (t³ - t²) h db
/// ```
pub fn hermite_root(ends: (f64, f64), values: (f64, f64), slopes: (f64, f64)) -> f64 {
    let ((a, b), (fa, fb), (da, db)) = (ends, values, slopes);
    let secant = a + (b - a) * (-fa) / (fb - fa);
    if !(da.is_finite() && db.is_finite()) {
        return secant;
    }
    let h = b - a;
    let (ma, mb) = (h * da, h * db);
    // p(t) = c0 + c1 t + c2 t² + c3 t³
    let (c0, c1) = (fa, ma);
    let c2 = -3.0 * fa - 2.0 * ma + 3.0 * fb - mb;
    let c3 = 2.0 * fa + ma - 2.0 * fb + mb;
    let p = |t: f64| ((c3 * t + c2) * t + c1) * t + c0;
    let dp = |t: f64| (3.0 * c3 * t + 2.0 * c2) * t + c1;
    // Bracket in t with p(lo) < 0 < p(hi).
    let (mut lo, mut hi) = if fa < 0.0 { (0.0, 1.0) } else { (1.0, 0.0) };
    let mut t = (secant - a) / h;
    for _ in 0..60 {
        let v = p(t);
        if v == 0.0 {
            break;
        }
        if v < 0.0 {
            lo = t;
        } else {
            hi = t;
        }
        let step = t - v / dp(t);
        let (l, u) = (lo.min(hi), lo.max(hi));
        let next = if step > l && step < u {
            step
        } else {
            0.5 * (lo + hi)
        };
        if (next - t).abs() <= 1e-15 {
            t = next;
            break;
        }
        t = next;
    }
    let x = a + t * h;
    // Strictly inside the bracket, as the Newton iteration expects.
    if x > a.min(b) && x < a.max(b) {
        x
    } else {
        secant
    }
}

/// Newton kept inside the bracket [a, b] (f(a) = `fa`, f(b) of the other
/// sign), from `x`. It stops on a small residual or a narrow bracket; with
/// [`Finish::Predicted`] also on a Newton step below the width tolerance,
/// or a last step predicted to land within 1% of it.
fn newton_from<F: FnMut(f64) -> (f64, f64)>(
    mut fdf: F,
    mut a: f64,
    mut b: f64,
    fa: f64,
    mut x: f64,
    tol: Tolerance,
    finish: Finish,
) -> Result<Solution, Failure> {
    // Orient so that f(a) < 0 < f(b).
    if fa > 0.0 {
        std::mem::swap(&mut a, &mut b);
    }
    // The previous evaluation's point and slope.
    let mut previous: Option<(f64, f64)> = None;
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
        let newton = dfx != 0.0 && step.is_finite() && step > lo && step < hi;
        if newton && finish == Finish::Predicted {
            let delta = (x - step).abs();
            // Newton's error after the step, |f'' / (2 f')| delta², with
            // the curvature from the last two slopes.
            let predicted = previous.map(|(xp, dp)| {
                let curvature = ((dfx - dp) / (x - xp) / (2.0 * dfx)).abs();
                (curvature * delta * delta, delta < (x - xp).abs())
            });
            let termination = match predicted {
                _ if delta < tol.width => Some(Termination::Step),
                Some((error, true)) if error < 0.01 * tol.width => Some(Termination::Predicted),
                _ => None,
            };
            if let Some(termination) = termination {
                let error = predicted.map_or(0.0, |(e, _)| e);
                return Ok(Solution {
                    value: step,
                    evaluations,
                    residual: error * dfx.abs(),
                    termination,
                });
            }
        }
        previous = Some((x, dfx));
        x = if newton { step } else { 0.5 * (a + b) };
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

    /// A cubic is its own Hermite interpolant: the start is its root, and
    /// one evaluation confirms it. (x - 0.3)(x + 2)(x - 5) on [0, 1].
    #[test]
    fn hermite_start_on_a_cubic_is_the_root() {
        let f = |x: f64| (x - 0.3) * (x + 2.0) * (x - 5.0);
        let df = |x: f64| (x + 2.0) * (x - 5.0) + (x - 0.3) * (2.0 * x - 3.0);
        let t = hermite_root((0.0, 1.0), (f(0.0), f(1.0)), (df(0.0), df(1.0)));
        assert!((t - 0.3).abs() < 1e-15, "{t}");
        let n = newton_bracketed_hermite(
            |x| (f(x), df(x)),
            (0.0, 1.0),
            (f(0.0), f(1.0)),
            (df(0.0), df(1.0)),
            TOL,
        )
        .unwrap();
        assert!((n.value - 0.3).abs() < 1e-15);
        assert!(n.evaluations <= 2, "{}", n.evaluations);
        // Reversed orientation (f(a) > 0) and a non-finite slope (secant start).
        let g = |x: f64| -f(x);
        let r = hermite_root((0.0, 1.0), (g(0.0), g(1.0)), (-df(0.0), -df(1.0)));
        assert!((r - 0.3).abs() < 1e-15, "{r}");
        let s = hermite_root((0.0, 1.0), (f(0.0), f(1.0)), (f64::NEG_INFINITY, 1.0));
        assert_eq!(s, -f(0.0) / (f(1.0) - f(0.0)));
    }

    /// sqrt 2 from a wide bracket with the Hermite start: no more Newton
    /// steps than from the secant point.
    #[test]
    fn hermite_start_is_no_slower() {
        let fdf = |x: f64| (x * x - 2.0, 2.0 * x);
        let secant = newton_bracketed(fdf, 0.0, 2.0, -2.0, 2.0, TOL).unwrap();
        let hermite =
            newton_bracketed_hermite(fdf, (0.0, 2.0), (-2.0, 2.0), (0.0, 4.0), TOL).unwrap();
        assert!((hermite.value - 2f64.sqrt()).abs() < 1e-14);
        assert!(hermite.evaluations <= secant.evaluations);
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

    /// Skipping the confirming evaluation: on exp(x) - 3 (root ln 3) from
    /// a wide bracket, the predicted last step lands within the width
    /// tolerance of the root, in fewer evaluations than a solve that
    /// evaluates its root, and says it was predicted.
    #[test]
    fn a_predicted_last_step_is_the_root_in_fewer_evaluations() {
        let fdf = |x: f64| (x.exp() - 3.0, x.exp());
        let (ends, values, slopes) = ((0.0, 2.0), (-2.0, 2f64.exp() - 3.0), (1.0, 2f64.exp()));
        let tol = Tolerance {
            residual: 1e-14,
            width: 1e-13,
            max_iterations: 100,
        };
        let evaluated = newton_bracketed_hermite(fdf, ends, values, slopes, tol).unwrap();
        let predicted = newton_root_hermite(fdf, ends, values, slopes, tol).unwrap();
        let root = 3f64.ln();
        assert!((evaluated.value - root).abs() < 1e-15);
        assert!(
            (predicted.value - root).abs() < 1e-15,
            "{}",
            predicted.value - root
        );
        assert!(predicted.evaluations < evaluated.evaluations);
        assert!(matches!(
            predicted.termination,
            Termination::Step | Termination::Predicted
        ));
        // A width no Newton step gets below: the prediction ends it.
        let fine = Tolerance {
            width: 1e-17,
            ..tol
        };
        let p = newton_root_hermite(fdf, ends, values, slopes, fine).unwrap();
        assert_eq!(p.termination, Termination::Predicted);
        assert!((p.value - root).abs() <= 4.5e-16, "{}", p.value - root);
        // Unbracketed input is refused as by the evaluating solver.
        assert_eq!(
            newton_root_hermite(fdf, (2.0, 3.0), (1.0, 2.0), (1.0, 1.0), tol),
            Err(Failure::NotBracketed)
        );
    }
}
