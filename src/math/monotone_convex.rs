//! A rising concave curve through knots, built by interpolating its slope
//! with the monotone convex method of Hagan and West.
//!
//! Base expected loss g(K) = E[min(L, K)] rises with slope P(L > K), a
//! probability that falls with K. Its knots fix the slope's average over
//! each interval (the secant). The monotone convex method builds a
//! continuous slope with exactly those averages that is monotone wherever
//! the averages are; its integral passes through every knot, rises, bends
//! down, and is C1 (the implied loss density -g'' is piecewise linear and
//! never negative).

use super::interp::{concave_shape, slope_interval, value_interval, SLOPE_TOLERANCE};

/// One interval's slope: the secant δ plus a deviation d(x), x in [0, 1]
/// across the interval, with d(0) = g0, d(1) = g1 and ∫₀¹ d = 0.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Deviation {
    /// d = c on [0, 1] (c = 0 for a straight interval; otherwise the data
    /// force a jump of the slope at one end).
    Flat(f64),
    /// d = g0 (1 - 4x + 3x²) + g1 (-2x + 3x²).
    Quadratic { g0: f64, g1: f64 },
    /// d = g0 on [0, η], then g0 + (g1 - g0) ((x - η)/(1 - η))².
    FlatThenBend { g0: f64, g1: f64, eta: f64 },
    /// d = g1 + (g0 - g1) ((η - x)/η)² on [0, η], then g1.
    BendThenFlat { g0: f64, g1: f64, eta: f64 },
    /// d = A + (g0 - A) ((η - x)/η)² on [0, η], A + (g1 - A) ((x - η)/(1 - η))²
    /// after (a local extreme of the slope; not reached by admissible data).
    Trough { g0: f64, g1: f64, eta: f64, a: f64 },
    /// d falls linearly from g0 > 0 to 0 at ξ = -g1/(g0 - g1), then to
    /// g1 < 0 (Schumaker's interval: the slope is two straight pieces).
    Kinked { g0: f64, g1: f64, xi: f64 },
}

impl Deviation {
    /// Hagan and West's sectors for the end deviations g0, g1.
    fn new(g0: f64, g1: f64) -> Deviation {
        if g0 == 0.0 && g1 == 0.0 {
            return Deviation::Flat(0.0);
        }
        if (g0 < 0.0 && -0.5 * g0 <= g1 && g1 <= -2.0 * g0)
            || (g0 > 0.0 && -0.5 * g0 >= g1 && g1 >= -2.0 * g0)
        {
            return Deviation::Quadratic { g0, g1 };
        }
        if (g0 <= 0.0 && g1 > -2.0 * g0) || (g0 >= 0.0 && g1 < -2.0 * g0) {
            let eta = (g1 + 2.0 * g0) / (g1 - g0);
            return if eta >= 1.0 {
                Deviation::Flat(g0)
            } else {
                Deviation::FlatThenBend { g0, g1, eta }
            };
        }
        if (g0 > 0.0 && 0.0 >= g1 && g1 > -0.5 * g0) || (g0 < 0.0 && 0.0 <= g1 && g1 < -0.5 * g0) {
            let eta = 3.0 * g1 / (g1 - g0);
            return if eta <= 0.0 {
                Deviation::Flat(g1)
            } else {
                Deviation::BendThenFlat { g0, g1, eta }
            };
        }
        let eta = g1 / (g1 + g0);
        let a = -g0 * g1 / (g0 + g1);
        Deviation::Trough { g0, g1, eta, a }
    }

    /// Schumaker's two straight slope pieces for g0 > 0 > g1.
    fn kinked(g0: f64, g1: f64) -> Deviation {
        Deviation::Kinked {
            g0,
            g1,
            xi: -g1 / (g0 - g1),
        }
    }

    /// Whether the slope rests at its left end value over a stretch (a
    /// flat start), or at its right end value (a flat finish).
    fn rests(&self) -> (bool, bool) {
        match *self {
            Deviation::Flat(c) => (c != 0.0, c != 0.0),
            Deviation::FlatThenBend { .. } => (true, false),
            Deviation::BendThenFlat { .. } => (false, true),
            _ => (false, false),
        }
    }

    /// d(x) and d'(x) (right-hand at a joint), x in [0, 1].
    fn value(&self, x: f64) -> (f64, f64) {
        match *self {
            Deviation::Flat(c) => (c, 0.0),
            Deviation::Kinked { g0, g1, xi } => {
                if x < xi {
                    (g0 * (1.0 - x / xi), -g0 / xi)
                } else {
                    (g1 * (x - xi) / (1.0 - xi), g1 / (1.0 - xi))
                }
            }
            Deviation::Quadratic { g0, g1 } => (
                g0 * (1.0 - 4.0 * x + 3.0 * x * x) + g1 * (-2.0 * x + 3.0 * x * x),
                g0 * (-4.0 + 6.0 * x) + g1 * (-2.0 + 6.0 * x),
            ),
            Deviation::FlatThenBend { g0, g1, eta } => {
                if x < eta {
                    (g0, 0.0)
                } else {
                    let u = (x - eta) / (1.0 - eta);
                    (g0 + (g1 - g0) * u * u, 2.0 * (g1 - g0) * u / (1.0 - eta))
                }
            }
            Deviation::BendThenFlat { g0, g1, eta } => {
                if x < eta {
                    let u = (eta - x) / eta;
                    (g1 + (g0 - g1) * u * u, -2.0 * (g0 - g1) * u / eta)
                } else {
                    (g1, 0.0)
                }
            }
            Deviation::Trough { g0, g1, eta, a } => {
                if x < eta {
                    let u = (eta - x) / eta;
                    (a + (g0 - a) * u * u, -2.0 * (g0 - a) * u / eta)
                } else {
                    let u = (x - eta) / (1.0 - eta);
                    (a + (g1 - a) * u * u, 2.0 * (g1 - a) * u / (1.0 - eta))
                }
            }
        }
    }

    /// ∫₀ˣ d, x in [0, 1].
    fn integral(&self, x: f64) -> f64 {
        let cube = |t: f64| t * t * t;
        match *self {
            Deviation::Flat(c) => c * x,
            Deviation::Kinked { g0, g1, xi } => {
                if x <= xi {
                    g0 * (x - x * x / (2.0 * xi))
                } else {
                    g0 * xi / 2.0 + g1 * (x - xi) * (x - xi) / (2.0 * (1.0 - xi))
                }
            }
            Deviation::Quadratic { g0, g1 } => {
                g0 * (x - 2.0 * x * x + cube(x)) + g1 * (-x * x + cube(x))
            }
            Deviation::FlatThenBend { g0, g1, eta } => {
                let bend = if x > eta {
                    (g1 - g0) * cube(x - eta) / (3.0 * (1.0 - eta) * (1.0 - eta))
                } else {
                    0.0
                };
                g0 * x + bend
            }
            Deviation::BendThenFlat { g0, g1, eta } => {
                let m = x.min(eta);
                g1 * x + (g0 - g1) * (eta / 3.0) * (1.0 - cube((eta - m) / eta))
            }
            Deviation::Trough { g0, g1, eta, a } => {
                let m = x.min(eta);
                let mut v = a * x + (g0 - a) * (eta / 3.0) * (1.0 - cube((eta - m) / eta));
                if x > eta {
                    v += (g1 - a) * cube(x - eta) / (3.0 * (1.0 - eta) * (1.0 - eta));
                }
                v
            }
        }
    }

    /// Where d changes formula inside (0, 1).
    fn joint(&self) -> Option<f64> {
        match *self {
            Deviation::FlatThenBend { eta, .. }
            | Deviation::BendThenFlat { eta, .. }
            | Deviation::Trough { eta, .. } => Some(eta),
            Deviation::Kinked { xi, .. } => Some(xi),
            _ => None,
        }
    }

    /// d just below x = 1 (differs from g1 only where the data force a jump).
    fn at_right_end(&self) -> f64 {
        match *self {
            Deviation::Flat(c) => c,
            Deviation::Quadratic { g1, .. }
            | Deviation::Kinked { g1, .. }
            | Deviation::FlatThenBend { g1, .. }
            | Deviation::BendThenFlat { g1, .. }
            | Deviation::Trough { g1, .. } => g1,
        }
    }
}

/// One piece of the slope between joints: on [from, to] the slope is a
/// quadratic in K (or linear, or constant), falling from `slope_from` to
/// `slope_to`; the loss density -g'' is linear there, from `density_from`
/// to `density_to`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SlopePiece {
    /// Left end.
    pub from: f64,
    /// Right end.
    pub to: f64,
    /// Slope at `from` (right limit).
    pub slope_from: f64,
    /// Slope at `to` (left limit).
    pub slope_to: f64,
    /// -g'' at `from` (right limit).
    pub density_from: f64,
    /// -g'' at `to` (left limit).
    pub density_to: f64,
}

/// A rising concave curve through knots (x_i, y_i) with slope in [0, 1],
/// built by interpolating its slope with the monotone convex method.
///
/// # Formula
/// ```text
/// Data: knots t_0 < … < t_n, values z_i, h_i = t_(i+1) - t_i,
///       secants δ_i = (z_(i+1) - z_i) / h_i (the slope's interval averages).
///
/// Slope at the knots (Hagan and West 2006, with their positivity collar):
///   interior  f_i = (h_i δ_(i-1) + h_(i-1) δ_i) / (h_(i-1) + h_i),  collared to [0, 2 min(δ_(i-1), δ_i)]
///   ends      f_0 = δ_0 - (f_1 - δ_0)/2         collared to [0, min(1, 2 δ_0)]
///             f_n = δ_(n-1) - (f_(n-1) - δ_(n-1))/2   collared to [0, 2 δ_(n-1)]
///             (either may be given instead)
/// On interval i, x = (t - t_i)/h_i, g0 = f_i - δ_i, g1 = f_(i+1) - δ_i, the
/// slope is δ_i + d(x), with d by the sign pattern of (g0, g1):
///   (ii)  g1 between -2 g0 and -g0/2:   d = g0 (1 - 4x + 3x²) + g1 (-2x + 3x²)
///   (iii) g1 beyond -2 g0:             η = (g1 + 2 g0)/(g1 - g0);  d = g0 on [0, η],
///                                       g0 + (g1 - g0) ((x - η)/(1 - η))² after
///   (iv)  g1 between -g0/2 and 0:       η = 3 g1/(g1 - g0);  d = g1 + (g0 - g1) ((η - x)/η)²
///                                       on [0, η], g1 after
///   (v)   g0, g1 of one sign (a local extreme of the data; not reached here)
/// Each d has ∫₀¹ d = 0, so g(t) = z_i + h_i (δ_i x + ∫₀ˣ d) passes through
/// every knot.
/// ```
/// With secants in [0, 1] and non-increasing, every f_i lies between its
/// neighbouring secants, so g0 ≥ 0 ≥ g1 on every interval and the slope is
/// non-increasing, continuous, and within [f_n, f_0] ⊂ [0, 1].
///
/// # Straight intervals: where the data force a kink
/// An interval whose secant is 0 or 1, or equals a neighbour's, is straight
/// (a concave curve through three collinear points is the line between
/// them, and one with average slope 0 or 1 has that slope throughout); a
/// curved neighbour meets it at its secant, so the curve stays C1 there.
/// Only where two straight intervals of different secants meet does the
/// slope jump (a kink of g; for base expected loss, a probability mass at
/// that detachment): no continuous non-increasing slope has those
/// averages. This is Schumaker's rule for the same case.
///
/// # The slope does not rest at 1 or 0 unless the data say so
/// Sectors (iii) and (iv) hold the slope at an end value over part of the
/// interval. Where that value is 1 (at the interval's start) or 0 (at its
/// end), the plateau would say, for base expected loss, that the pool loses
/// at least K for sure or at most K for sure over a stretch, which no
/// correlation strictly between 0 and 1 gives. Such an interval (g0 > 0 >
/// g1) takes instead the two straight slope pieces of Schumaker's interval
/// construction (1983, Lemma 2.2 with its middle knot):
/// ```text
/// d = g0 (1 - x/ξ) on [0, ξ],  g1 (x - ξ)/(1 - ξ) after,   ξ = -g1/(g0 - g1)
/// ```
/// with the same end slopes and mean, so the curve stays C1, concave and
/// through the knots.
///
/// # References
/// - P. S. Hagan and G. West, "Interpolation methods for curve
///   construction", Applied Mathematical Finance 13 (2006) 89-129, the
///   monotone convex method (there applied to forward rates, whose interval
///   averages are the discrete forwards; here to the slope of base expected
///   loss, whose interval averages are the secants).
/// - P. S. Hagan and G. West, "Methods for constructing a yield curve",
///   Wilmott (2008) (the same method, with the positivity collar).
/// - L. L. Schumaker, "On shape preserving quadratic spline interpolation",
///   SIAM J. Numer. Anal. 20 (1983) (the interval with a middle knot).
///
/// ```
/// use skewbook::math::monotone_convex::MonotoneConvex;
/// // g(x) = 0.9 x - 0.4 x² on [0, 1], equal steps: its slope 0.9 - 0.8 x is
/// // linear, and the method gives it back inside (ends as given)
/// let x = [0.0, 0.25, 0.5, 0.75, 1.0];
/// let y: Vec<f64> = x.iter().map(|t| 0.9 * t - 0.4 * t * t).collect();
/// let g = MonotoneConvex::new(&x, &y, Some(0.9), Some(0.1))?;
/// assert!((g.eval(0.6) - (0.9 * 0.6 - 0.4 * 0.36)).abs() < 1e-15);
/// assert!((g.slope(0.6) - (0.9 - 0.8 * 0.6)).abs() < 1e-14);
/// # Ok::<(), skewbook::error::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct MonotoneConvex {
    x: Vec<f64>,
    y: Vec<f64>,
    delta: Vec<f64>,
    nodes: Vec<f64>,
    dev: Vec<Deviation>,
}

impl MonotoneConvex {
    /// The curve through (x_i, y_i), with the slope at the first and/or the
    /// last knot given (`first` in [δ_0, 1], `last` in [0, δ_(n-1)]) or, when
    /// `None`, the method's own end rule.
    ///
    /// # Errors
    /// [`crate::ErrorKind::InvalidInput`] when the knots are malformed (as
    /// for [`super::interp::Curve1d::new`]), a secant lies outside [0, 1] or
    /// rises from one interval to the next (each by more than
    /// [`super::interp::SLOPE_TOLERANCE`]), or an end slope is out of its
    /// range; every offending knot pair is named.
    pub fn new(
        x: &[f64],
        y: &[f64],
        first: Option<f64>,
        last: Option<f64>,
    ) -> crate::Result<MonotoneConvex> {
        let (h, delta) = concave_shape(x, y, first, last)?;
        let n = h.len();
        let tol = SLOPE_TOLERANCE;
        // A straight interval (secant 0 or 1, or equal to a neighbour's):
        // a concave curve through collinear points is the line between them.
        let straight: Vec<bool> = (0..n)
            .map(|i| {
                delta[i] <= tol
                    || delta[i] >= 1.0 - tol
                    || (i > 0 && (delta[i] - delta[i - 1]).abs() <= tol)
                    || (i + 1 < n && (delta[i] - delta[i + 1]).abs() <= tol)
            })
            .collect();
        // The method's slope at each knot (Hagan and West's nodes).
        let mut nodes = vec![0.0; n + 1];
        if n >= 1 {
            for i in 1..n {
                let f = (h[i] * delta[i - 1] + h[i - 1] * delta[i]) / (h[i - 1] + h[i]);
                nodes[i] = f.clamp(0.0, 2.0 * delta[i - 1].min(delta[i]).max(0.0));
            }
            let (f1, fn1) = if n >= 2 {
                (nodes[1], nodes[n - 1])
            } else {
                (delta[0], delta[0])
            };
            nodes[0] = first.unwrap_or_else(|| {
                (delta[0] - 0.5 * (f1 - delta[0])).clamp(0.0, (2.0 * delta[0]).clamp(0.0, 1.0))
            });
            nodes[n] = last.unwrap_or_else(|| {
                (delta[n - 1] - 0.5 * (fn1 - delta[n - 1])).clamp(0.0, 2.0 * delta[n - 1].max(0.0))
            });
        }
        // Each interval's end slopes: a straight interval keeps its secant,
        // and a curved one meets a straight neighbour at that secant.
        let ends: Vec<(f64, f64)> = (0..n)
            .map(|i| {
                if straight[i] {
                    return (delta[i], delta[i]);
                }
                let start = if i > 0 && straight[i - 1] {
                    delta[i - 1]
                } else {
                    nodes[i]
                };
                let end = if i + 1 < n && straight[i + 1] {
                    delta[i + 1]
                } else {
                    nodes[i + 1]
                };
                (start, end)
            })
            .collect();
        let dev = ends
            .iter()
            .enumerate()
            .map(|(i, &(start, end))| {
                let (g0, g1) = (start - delta[i], end - delta[i]);
                let d = Deviation::new(g0, g1);
                let (flat_start, flat_finish) = d.rests();
                let at_bound = (flat_start && start >= 1.0 - tol) || (flat_finish && end <= tol);
                if at_bound && g0 > 0.0 && g1 < 0.0 {
                    Deviation::kinked(g0, g1)
                } else {
                    d
                }
            })
            .collect();
        for (i, &(start, _)) in ends.iter().enumerate() {
            nodes[i] = start;
        }
        if let Some(&(_, end)) = ends.last() {
            nodes[n] = end;
        }
        Ok(MonotoneConvex {
            x: x.to_vec(),
            y: y.to_vec(),
            delta,
            nodes,
            dev,
        })
    }

    /// The value at `x`: the curve inside the knots (each knot's y exactly
    /// at the knot), y_first below the first knot, y_last from the last
    /// knot on. NaN in, NaN out.
    pub fn eval(&self, x: f64) -> f64 {
        let i = match value_interval(&self.x, &self.y, x) {
            Ok(i) => i,
            Err(v) => return v,
        };
        let h = self.x[i + 1] - self.x[i];
        let u = (x - self.x[i]) / h;
        self.y[i] + h * (self.delta[i] * u + self.dev[i].integral(u))
    }

    /// The right-hand derivative at `x`: inside the knots the interpolated
    /// slope, in [0, 1] and non-increasing; 0 below the first knot and from
    /// the last knot on, where [`MonotoneConvex::eval`] is flat. NaN in,
    /// NaN out.
    pub fn slope(&self, x: f64) -> f64 {
        let i = match slope_interval(&self.x, x) {
            Ok(i) => i,
            Err(s) => return s,
        };
        let h = self.x[i + 1] - self.x[i];
        self.delta[i] + self.dev[i].value((x - self.x[i]) / h).0
    }

    /// The slope at each knot (the method's f_i; at a kink, the slope of the
    /// interval that starts there; at the last knot, the left limit).
    pub fn knot_slopes(&self) -> &[f64] {
        &self.nodes
    }

    /// The knots (x, y) the curve was built from.
    pub fn knots(&self) -> (&[f64], &[f64]) {
        (&self.x, &self.y)
    }

    /// The slope on [x_first, x_last] as consecutive pieces between knots
    /// and joints, increasing x. A drop from one piece's `slope_to` to the
    /// next one's `slope_from` is a jump of the slope (for base expected
    /// loss, a probability mass there).
    pub fn slope_pieces(&self) -> Vec<SlopePiece> {
        let mut out = Vec::with_capacity(2 * self.dev.len());
        for (i, d) in self.dev.iter().enumerate() {
            let (x0, h) = (self.x[i], self.x[i + 1] - self.x[i]);
            let mut cuts = vec![0.0];
            cuts.extend(d.joint().filter(|&e| e > 0.0 && e < 1.0));
            cuts.push(1.0);
            for w in cuts.windows(2) {
                let (a, b) = (w[0], w[1]);
                let (va, da) = d.value(a);
                // left limits at b: the piece's own formula approached from inside
                let (vb, db) = if b < 1.0 {
                    let (v, _) = d.value(b);
                    (v, left_derivative(d, b))
                } else {
                    (d.at_right_end(), left_derivative(d, 1.0))
                };
                out.push(SlopePiece {
                    from: x0 + h * a,
                    to: x0 + h * b,
                    slope_from: self.delta[i] + va,
                    slope_to: self.delta[i] + vb,
                    density_from: -da / h,
                    density_to: -db / h,
                });
            }
        }
        out
    }
}

/// d'(x) approached from the left, x in (0, 1].
fn left_derivative(d: &Deviation, x: f64) -> f64 {
    match *d {
        Deviation::Flat(_) => 0.0,
        Deviation::Kinked { g0, g1, xi } => {
            if x <= xi {
                -g0 / xi
            } else {
                g1 / (1.0 - xi)
            }
        }
        Deviation::Quadratic { g0, g1 } => g0 * (-4.0 + 6.0 * x) + g1 * (-2.0 + 6.0 * x),
        Deviation::FlatThenBend { g0, g1, eta } => {
            if x <= eta {
                0.0
            } else {
                2.0 * (g1 - g0) * (x - eta) / ((1.0 - eta) * (1.0 - eta))
            }
        }
        Deviation::BendThenFlat { g0, g1, eta } => {
            if x <= eta {
                -2.0 * (g0 - g1) * (eta - x) / (eta * eta)
            } else {
                0.0
            }
        }
        Deviation::Trough { g0, g1, eta, a } => {
            if x <= eta {
                -2.0 * (g0 - a) * (eta - x) / (eta * eta)
            } else {
                2.0 * (g1 - a) * (x - eta) / ((1.0 - eta) * (1.0 - eta))
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Each sector's deviation integrates to zero over the interval (so the
    /// curve hits the next knot) and starts at g0; the continuous ones end
    /// at g1.
    #[test]
    fn sectors_have_zero_mean_and_the_end_values() {
        let cases = [
            Deviation::new(0.3, -0.3),  // (ii)
            Deviation::new(0.3, -0.5),  // (ii)
            Deviation::new(0.1, -0.5),  // (iii)
            Deviation::new(0.4, -0.1),  // (iv)
            Deviation::new(0.2, 0.1),   // (v)
            Deviation::new(-0.2, -0.3), // (v)
            Deviation::kinked(0.3, -0.2),
        ];
        for d in cases {
            let (g0, g1) = match d {
                Deviation::Quadratic { g0, g1 }
                | Deviation::FlatThenBend { g0, g1, .. }
                | Deviation::BendThenFlat { g0, g1, .. }
                | Deviation::Trough { g0, g1, .. }
                | Deviation::Kinked { g0, g1, .. } => (g0, g1),
                Deviation::Flat(c) => (c, c),
            };
            assert!(d.integral(1.0).abs() < 1e-15, "{d:?}");
            assert!((d.value(0.0).0 - g0).abs() < 1e-15, "{d:?}");
            assert!((d.at_right_end() - g1).abs() < 1e-15, "{d:?}");
            // d' against a central difference inside each piece
            for x in [0.05, 0.33, 0.71, 0.95] {
                if d.joint().is_some_and(|e| (x - e).abs() < 1e-3) {
                    continue;
                }
                let e = 1e-6;
                let fd = (d.value(x + e).0 - d.value(x - e).0) / (2.0 * e);
                assert!((d.value(x).1 - fd).abs() < 1e-7, "{d:?} at {x}");
                let fi = (d.integral(x + e) - d.integral(x - e)) / (2.0 * e);
                assert!((d.value(x).0 - fi).abs() < 1e-8, "{d:?} at {x}");
            }
        }
        assert!(matches!(
            Deviation::new(0.3, -0.3),
            Deviation::Quadratic { .. }
        ));
        assert!(matches!(
            Deviation::new(0.1, -0.5),
            Deviation::FlatThenBend { .. }
        ));
        assert!(matches!(
            Deviation::new(0.4, -0.1),
            Deviation::BendThenFlat { .. }
        ));
        assert!(matches!(Deviation::new(0.2, 0.1), Deviation::Trough { .. }));
    }

    /// Hand-worked: knots (0,0), (1,0.6), (2,1), own end rule. Secants 0.6,
    /// 0.4; f_1 = (0.6 + 0.4)/2 = 0.5; f_0 = 0.6 - (0.5 - 0.6)/2 = 0.65;
    /// f_2 = 0.4 - (0.5 - 0.4)/2 = 0.35. Interval 0: g0 = 0.05, g1 = -0.1
    /// = -2 g0, so d = g0 (1 - 3x²), ∫₀ˣ d = g0 (x - x³): at x = 0.5,
    /// g = 0.3 + 0.375·0.05 = 0.31875, slope 0.6 + 0.05·0.25 = 0.6125.
    /// Interval 1: g0 = 0.1, g1 = -0.05 = -g0/2, d = 0.1 - 0.3x + 0.15x²,
    /// ∫₀ˣ d = 0.1x - 0.15x² + 0.05x³: at x = 0.5, g = 0.6 + 0.2 + 0.01875,
    /// slope 0.4 - 0.0125.
    #[test]
    fn by_hand() {
        let g = MonotoneConvex::new(&[0.0, 1.0, 2.0], &[0.0, 0.6, 1.0], None, None).unwrap();
        for (a, b) in g.knot_slopes().iter().zip([0.65, 0.5, 0.35]) {
            assert!((a - b).abs() < 1e-15, "{:?}", g.knot_slopes());
        }
        assert!((g.eval(0.5) - 0.31875).abs() < 1e-15);
        assert!((g.slope(0.5) - 0.6125).abs() < 1e-15);
        assert!((g.eval(1.5) - 0.81875).abs() < 1e-15);
        assert!((g.slope(1.5) - 0.3875).abs() < 1e-15);
        // a collar: secants 0.8, 0.2 give f_1 = 0.5 > 2·0.2, so f_1 = 0.4
        let c = MonotoneConvex::new(&[0.0, 1.0, 2.0], &[0.0, 0.8, 1.0], None, None).unwrap();
        assert!((c.knot_slopes()[1] - 0.4).abs() < 1e-15);
    }
}
