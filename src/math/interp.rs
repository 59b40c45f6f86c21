//! Interpolation of one trade date's skew: knots in, a curve out.
//!
//! - [`Curve1d`]: base correlation across detachment, linear or monotone
//!   piecewise-cubic (PCHIP), flat outside the knots (the convention of
//!   "The correlation surface of one trade date").
//! - [`isotonic_non_increasing`]: the weighted least-squares non-increasing
//!   fit (pool-adjacent-violators), to repair interval slopes of a base
//!   expected-loss curve that should fall with the detachment.
//! - [`ConcaveSpline`]: a shape-preserving quadratic spline (Schumaker 1983)
//!   for a rising concave function such as base expected loss
//!   g(K) = E[min(L, K)], whose slope P(L > K) lies in [0, 1] and falls.
//!
//! # Interpolating base correlation can create arbitrage
//!
//! A smooth, even monotone, correlation curve in K does not make the base
//! expected loss g(K) rise and bend down: with the reference sheet's nodes
//! (PD 5%, R 40%; 3%:0.10, 7%:0.30, 10%:0.42, 15%:0.58, 30%:0.90) linear
//! interpolation gives the [29%, 30%] tranchlet an expected loss of -0.0307 of
//! its width. [`Curve1d`] only interpolates; whether the result is free of
//! arbitrage is a separate check. Interpolating g itself with
//! [`ConcaveSpline`] keeps g monotone and concave whenever its knots are
//! (Parcell and Wood 2007, "Wiping the smile off your base (correlation
//! curve)"; Garcia and Goossens 2008, on interpolating base expected loss).

use crate::error::{Error, ErrorKind, Problem};
use std::fmt;
use std::str::FromStr;

/// Slack allowed on the shape of [`ConcaveSpline`] data: secant slopes may
/// rise by up to this much from one knot pair to the next, and may lie this
/// far outside [0, 1], before the data are refused; secant slopes closer than
/// this are treated as equal (collinear knots). Absolute, in units of y per
/// unit of x (for base expected loss: a probability).
pub const SLOPE_TOLERANCE: f64 = 1e-14;

/// How the skew is interpolated across detachment between knots.
///
/// `Linear` and `Pchip` interpolate base correlation itself ([`Curve1d`]);
/// `ExpectedLoss` interpolates base expected loss with a [`ConcaveSpline`]
/// and reads the correlation back off it (see
/// [`crate::surface::expected_loss`]), so it needs the index pool and is
/// built by [`crate::surface::Surface`], not by [`Curve1d`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Interp {
    /// Straight lines between knots.
    Linear,
    /// Monotone piecewise-cubic Hermite interpolation (Fritsch and Carlson
    /// 1980, slopes as in Moler 2004 and scipy's `PchipInterpolator`).
    Pchip,
    /// Base expected loss E[min(L, K)] interpolated by a rising concave
    /// spline with slope in [0, 1]; the correlation at K is the one that
    /// gives it. Free of arbitrage in detachment by construction.
    ExpectedLoss,
}

impl Interp {
    /// Every interpolation, in the documentation's order.
    pub const ALL: [Interp; 3] = [Interp::Linear, Interp::Pchip, Interp::ExpectedLoss];

    /// The name used on the command line and in JSON: `linear`, `pchip` or
    /// `expected-loss`.
    pub fn name(&self) -> &'static str {
        match self {
            Interp::Linear => "linear",
            Interp::Pchip => "pchip",
            Interp::ExpectedLoss => "expected-loss",
        }
    }
}

impl fmt::Display for Interp {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.name())
    }
}

impl FromStr for Interp {
    type Err = Error;

    /// Parses `linear`, `pchip` or `expected-loss` (exactly, lower case).
    ///
    /// # Errors
    /// [`ErrorKind::Usage`] for any other text, quoting it.
    fn from_str(s: &str) -> crate::Result<Interp> {
        Interp::ALL
            .into_iter()
            .find(|i| i.name() == s)
            .ok_or_else(|| {
                Error::msg(
                    ErrorKind::Usage,
                    format!(
                        "expected an interpolation \"linear\", \"pchip\" or \"expected-loss\", found \"{s}\""
                    ),
                )
            })
    }
}

/// Checks knots for [`Curve1d`] and [`ConcaveSpline`]: as many y as x, at
/// least one knot, all finite, x strictly increasing, every secant slope
/// finite. Knots are counted from 1 in messages.
fn check_knots(x: &[f64], y: &[f64]) -> crate::Result<()> {
    let invalid = |m: String| Err(Error::msg(ErrorKind::InvalidInput, m));
    if x.len() != y.len() {
        return invalid(format!(
            "expected as many knot values as abscissas, found {} x and {} y",
            x.len(),
            y.len()
        ));
    }
    if x.is_empty() {
        return invalid("expected at least one knot, found none".to_string());
    }
    for (i, (&xi, &yi)) in x.iter().zip(y).enumerate() {
        if !xi.is_finite() || !yi.is_finite() {
            return invalid(format!(
                "knot {}: expected finite x and y, found x = {xi}, y = {yi}",
                i + 1
            ));
        }
    }
    for i in 1..x.len() {
        if x[i] <= x[i - 1] {
            return invalid(format!(
                "expected strictly increasing x, found knot {} at x = {} not after knot {} at x = {}",
                i + 1,
                x[i],
                i,
                x[i - 1]
            ));
        }
        let secant = (y[i] - y[i - 1]) / (x[i] - x[i - 1]);
        if !secant.is_finite() {
            return invalid(format!(
                "knots {} and {} (x = {} and {}): the secant slope overflows",
                i,
                i + 1,
                x[i - 1],
                x[i]
            ));
        }
    }
    Ok(())
}

/// Checks data for a rising concave curve with slope in [0, 1]
/// ([`ConcaveSpline`], [`super::monotone_convex::MonotoneConvex`]): knots
/// as for [`Curve1d`], secants in [0, 1] and not rising, optional end
/// slopes in range (each to [`SLOPE_TOLERANCE`]). Returns the interval
/// widths and secants.
pub(crate) fn concave_shape(
    x: &[f64],
    y: &[f64],
    first: Option<f64>,
    last: Option<f64>,
) -> crate::Result<(Vec<f64>, Vec<f64>)> {
    check_knots(x, y)?;
    let n = x.len() - 1; // intervals
    let h: Vec<f64> = x.windows(2).map(|w| w[1] - w[0]).collect();
    let delta: Vec<f64> = (0..n).map(|i| (y[i + 1] - y[i]) / h[i]).collect();
    let mut problems = Vec::new();
    for i in 0..n {
        if delta[i] < -SLOPE_TOLERANCE || delta[i] > 1.0 + SLOPE_TOLERANCE {
            problems.push(Problem::new(format!(
                "knots at x = {} and x = {}: expected a secant slope in [0, 1], found {}",
                x[i],
                x[i + 1],
                delta[i]
            )));
        }
        if i > 0 && delta[i] - delta[i - 1] > SLOPE_TOLERANCE {
            problems.push(Problem::new(format!(
                "knots at x = {} and x = {}: expected a secant slope at most the {} of the \
                 pair before (x = {} to {}), found {}: the data are not concave",
                x[i],
                x[i + 1],
                delta[i - 1],
                x[i - 1],
                x[i],
                delta[i]
            )));
        }
    }
    if n >= 1 {
        if let Some(s1) = first {
            if !(s1 >= delta[0] - SLOPE_TOLERANCE && s1 <= 1.0 + SLOPE_TOLERANCE) {
                problems.push(Problem::new(format!(
                    "slope at x = {}: expected a value in [{}, 1] (the first secant to 1), found {s1}",
                    x[0], delta[0]
                )));
            }
        }
        if let Some(s2) = last {
            if !(s2 >= -SLOPE_TOLERANCE && s2 <= delta[n - 1] + SLOPE_TOLERANCE) {
                problems.push(Problem::new(format!(
                    "slope at x = {}: expected a value in [0, {}] (0 to the last secant), found {s2}",
                    x[n],
                    delta[n - 1]
                )));
            }
        }
    }
    if !problems.is_empty() {
        return Err(Error {
            kind: ErrorKind::InvalidInput,
            problems,
        });
    }
    Ok((h, delta))
}

/// Index k of the interval [x_k, x_(k+1)) holding t, for x_0 < t < x_last.
pub(crate) fn interval(x: &[f64], t: f64) -> usize {
    x.partition_point(|&xi| xi <= t) - 1
}

/// For a curve through knots (x, y) held flat outside them: `Err` with
/// its value where no interval is needed (NaN for NaN, the first y at or
/// below the first knot, the last y at or above the last), else `Ok` with
/// the interval of t (see [`interval`]).
pub(crate) fn value_interval(x: &[f64], y: &[f64], t: f64) -> Result<usize, f64> {
    let n = x.len() - 1;
    if t.is_nan() {
        Err(f64::NAN)
    } else if t <= x[0] {
        Err(y[0])
    } else if t >= x[n] {
        Err(y[n])
    } else {
        Ok(interval(x, t))
    }
}

/// The same for the right-hand slope of such a curve: NaN for NaN, 0
/// below the first knot and from the last knot on.
pub(crate) fn slope_interval(x: &[f64], t: f64) -> Result<usize, f64> {
    let n = x.len() - 1;
    if t.is_nan() {
        Err(f64::NAN)
    } else if t < x[0] || t >= x[n] {
        Err(0.0)
    } else {
        Ok(interval(x, t))
    }
}

/// Sign as -1, 0 or 1 (0 for zero, unlike `f64::signum`), as numpy's `sign`.
fn sign(v: f64) -> i8 {
    if v > 0.0 {
        1
    } else if v < 0.0 {
        -1
    } else {
        0
    }
}

/// A curve through knots (x_i, y_i), x strictly increasing: linear or PCHIP
/// between knots, flat (the nearest knot's value) outside them.
///
/// Built once from the knots (the cubic of each interval is computed then),
/// evaluated many times.
///
/// # Formula
/// ```text
/// h_k = x_(k+1) - x_k,   m_k = (y_(k+1) - y_k) / h_k          (secants)
///
/// on [x_k, x_(k+1)], t = x - x_k, with knot slopes d_k:
///   c = (d_k + d_(k+1) - 2 m_k) / h_k
///   y(x) = ((c/h_k · t + (m_k - d_k)/h_k - c) · t + d_k) · t + y_k
///
/// linear:  d_k = m_k on interval k (the cubic and quadratic terms vanish)
///
/// pchip, interior knot k (Fritsch-Butland weighted harmonic mean):
///   d_k = 0   if m_(k-1) = 0, m_k = 0 or their signs differ, else
///   1/d_k = (w1/m_(k-1) + w2/m_k) / (w1 + w2),
///            w1 = 2 h_k + h_(k-1),  w2 = h_k + 2 h_(k-1)
/// pchip, end knot (three-point, shape-preserving; first knot shown):
///   d = ((2 h_0 + h_1) m_0 - h_0 m_1) / (h_0 + h_1)
///   d_0 = 0      if sign d ≠ sign m_0
///   d_0 = 3 m_0  else if sign m_0 ≠ sign m_1 and |d| > 3 |m_0|
///   d_0 = d      otherwise
/// two knots: d_0 = d_1 = m_0 (linear); one knot: the constant y_0.
/// ```
/// These slopes keep the cubic monotone on every interval where the data
/// are, and make a local extremum of the data one of the curve (d = 0).
///
/// # References
/// - F. N. Fritsch and R. E. Carlson, "Monotone piecewise cubic
///   interpolation", SIAM J. Numer. Anal. 17 (1980) 238-246.
/// - F. N. Fritsch and J. Butland, "A method for constructing local monotone
///   piecewise cubic interpolants", SIAM J. Sci. Stat. Comput. 5 (1984)
///   (the weighted harmonic mean).
/// - C. Moler, "Numerical Computing with MATLAB" (2004), section 3.4 (the
///   end slopes; the code `pchiptx` is listed in section 3.6).
/// - The same rule as scipy's `PchipInterpolator`, which the tests match to
///   1e-13.
///
/// ```
/// use skewbook::math::interp::{Curve1d, Interp};
/// let c = Curve1d::new(&[0.03, 0.07], &[0.2, 0.4], Interp::Pchip)?;
/// assert!((c.eval(0.05) - 0.3).abs() < 1e-15); // two knots: linear
/// assert_eq!(c.eval(0.01), 0.2); // flat below the first knot
/// assert!(c.is_extrapolated(0.5));
/// # Ok::<(), skewbook::error::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct Curve1d {
    x: Vec<f64>,
    y: Vec<f64>,
    interp: Interp,
    /// Per interval k, the coefficients [c0, c1, c2, c3] of
    /// ((c0 t + c1) t + c2) t + c3, t = x - x_k.
    cubics: Vec<[f64; 4]>,
}

impl Curve1d {
    /// A curve through the knots (x_i, y_i).
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] when x and y differ in length, are empty,
    /// hold a non-finite value, x is not strictly increasing, or a secant
    /// slope overflows; the message names the knot (counted from 1).
    /// [`ErrorKind::Usage`] for [`Interp::ExpectedLoss`], which interpolates
    /// base expected loss, not the values given.
    pub fn new(x: &[f64], y: &[f64], interp: Interp) -> crate::Result<Curve1d> {
        if interp == Interp::ExpectedLoss {
            return Err(Error::msg(
                ErrorKind::Usage,
                "expected-loss interpolates base expected loss and needs the index pool: \
                 build it with surface::Surface, not Curve1d",
            ));
        }
        check_knots(x, y)?;
        let n = x.len();
        if n == 1 {
            return Ok(Curve1d {
                x: x.to_vec(),
                y: y.to_vec(),
                interp,
                cubics: Vec::new(),
            });
        }
        let h: Vec<f64> = x.windows(2).map(|w| w[1] - w[0]).collect();
        let m: Vec<f64> = (0..n - 1).map(|k| (y[k + 1] - y[k]) / h[k]).collect();
        let cubics = match interp {
            // ExpectedLoss is refused above
            Interp::Linear | Interp::ExpectedLoss => {
                (0..n - 1).map(|k| [0.0, 0.0, m[k], y[k]]).collect()
            }
            Interp::Pchip => {
                let d = pchip_slopes(&h, &m);
                (0..n - 1)
                    .map(|k| {
                        let c = (d[k] + d[k + 1] - 2.0 * m[k]) / h[k];
                        [c / h[k], (m[k] - d[k]) / h[k] - c, d[k], y[k]]
                    })
                    .collect()
            }
        };
        Ok(Curve1d {
            x: x.to_vec(),
            y: y.to_vec(),
            interp,
            cubics,
        })
    }

    /// The value at `x`: the interval's cubic inside the knots, the first
    /// knot's value at or below the first knot, the last knot's at or above
    /// the last. NaN in, NaN out.
    pub fn eval(&self, x: f64) -> f64 {
        let k = match value_interval(&self.x, &self.y, x) {
            Ok(k) => k,
            Err(v) => return v,
        };
        let [c0, c1, c2, c3] = self.cubics[k];
        let t = x - self.x[k];
        ((c0 * t + c1) * t + c2) * t + c3
    }

    /// True when `x` lies strictly outside [x_first, x_last], where
    /// [`Curve1d::eval`] returns a knot's value unchanged.
    pub fn is_extrapolated(&self, x: f64) -> bool {
        x < self.x[0] || x > self.x[self.x.len() - 1]
    }

    /// The knots (x, y) the curve was built from.
    pub fn knots(&self) -> (&[f64], &[f64]) {
        (&self.x, &self.y)
    }

    /// The interpolation between knots.
    pub fn interp(&self) -> Interp {
        self.interp
    }
}

/// PCHIP knot slopes from interval widths `h` and secants `m` (at least one
/// interval, so at least two knots); see [`Curve1d`] for the formula.
fn pchip_slopes(h: &[f64], m: &[f64]) -> Vec<f64> {
    let n = h.len() + 1;
    if n == 2 {
        return vec![m[0], m[0]];
    }
    let mut d = vec![0.0; n];
    for k in 1..n - 1 {
        let (m0, m1) = (m[k - 1], m[k]);
        if m0 == 0.0 || m1 == 0.0 || sign(m0) != sign(m1) {
            continue;
        }
        let w1 = 2.0 * h[k] + h[k - 1];
        let w2 = h[k] + 2.0 * h[k - 1];
        d[k] = 1.0 / ((w1 / m0 + w2 / m1) / (w1 + w2));
    }
    d[0] = pchip_end_slope(h[0], h[1], m[0], m[1]);
    d[n - 1] = pchip_end_slope(h[n - 2], h[n - 3], m[n - 2], m[n - 3]);
    d
}

/// Moler's shape-preserving three-point end slope; `h0`, `m0` belong to the
/// end interval, `h1`, `m1` to its neighbour.
fn pchip_end_slope(h0: f64, h1: f64, m0: f64, m1: f64) -> f64 {
    let d = ((2.0 * h0 + h1) * m0 - h0 * m1) / (h0 + h1);
    if sign(d) != sign(m0) {
        0.0
    } else if sign(m0) != sign(m1) && d.abs() > 3.0 * m0.abs() {
        3.0 * m0
    } else {
        d
    }
}

/// Weighted least-squares non-increasing fit (pool-adjacent-violators).
///
/// Returns the f that minimises Σ w_i (y_i - f_i)² subject to
/// f_1 ≥ f_2 ≥ … ≥ f_n. Meant for interval slopes of a base expected-loss
/// curve (y_i = tranchelet loss per unit width, w_i = the interval's width),
/// which must not rise with the detachment.
///
/// # Formula
/// ```text
/// Scan left to right keeping blocks of consecutive indices, each with
///   W_B = Σ_B w_i,   A_B = Σ_B w_i y_i / W_B   (its weighted mean);
/// push {i} as a new block; while the previous block's mean is below the
///   last one's (a violation of "non-increasing"), pool the two.
/// f_i = A_B of the block holding i.
/// ```
/// The result is optimal because of the KKT conditions, which the tests
/// check: with C_j = Σ_(i≤j) w_i (f_i - y_i), C_j ≥ 0 for every j, C_n = 0,
/// and C_j = 0 wherever f_j > f_(j+1). It also equals the min-max formula
/// f_i = min_(s≤i) max_(t≥i) Av(s..t), Av the weighted mean of y over s..t
/// (the non-decreasing formulas of Barlow et al. 1972, chapter 1, applied
/// to -y).
///
/// # Panics
/// If the lengths differ, or a value is not finite, or a weight is not
/// finite and positive: the caller builds both from its own grid, so this is
/// a programming error, not bad input.
///
/// # References
/// - M. Ayer, H. D. Brunk, G. M. Ewing, W. T. Reid and E. Silverman, "An
///   empirical distribution function for sampling with incomplete
///   information", Ann. Math. Statist. 26 (1955) (the algorithm).
/// - R. E. Barlow, D. J. Bartholomew, J. M. Bremner and H. D. Brunk,
///   "Statistical Inference under Order Restrictions" (1972), chapter 1.
/// - M. J. Best and N. Chakravarti, "Active set algorithms for isotonic
///   regression; a unifying framework", Math. Programming 47 (1990).
///
/// ```
/// use skewbook::math::interp::isotonic_non_increasing;
/// // 1 < 3 violates the order: both become the weighted mean (1·1 + 3·3)/4
/// let f = isotonic_non_increasing(&[1.0, 3.0, 0.0], &[1.0, 3.0, 1.0]);
/// assert_eq!(f, vec![2.5, 2.5, 0.0]);
/// ```
pub fn isotonic_non_increasing(values: &[f64], weights: &[f64]) -> Vec<f64> {
    assert_eq!(
        values.len(),
        weights.len(),
        "isotonic_non_increasing: {} values but {} weights",
        values.len(),
        weights.len()
    );
    // (Σ w y, Σ w, number of indices) per block
    let mut blocks: Vec<(f64, f64, usize)> = Vec::with_capacity(values.len());
    for (i, (&v, &w)) in values.iter().zip(weights).enumerate() {
        assert!(v.is_finite(), "isotonic_non_increasing: value {i} is {v}");
        assert!(
            w.is_finite() && w > 0.0,
            "isotonic_non_increasing: weight {i} is {w}, expected finite and positive"
        );
        let mut cur = (w * v, w, 1);
        while let Some(&(sum, weight, len)) = blocks.last() {
            if sum / weight >= cur.0 / cur.1 {
                break;
            }
            blocks.pop();
            cur = (sum + cur.0, weight + cur.1, len + cur.2);
        }
        blocks.push(cur);
    }
    let mut fit = Vec::with_capacity(values.len());
    for (sum, weight, len) in blocks {
        fit.extend(std::iter::repeat_n(sum / weight, len));
    }
    fit
}

/// One interval of a [`ConcaveSpline`]: the slope falls linearly from
/// `left` to `mid` over the first `alpha` of the interval, then from `mid`
/// to `right` over the last `beta`. A straight interval has
/// left = mid = right = the secant, alpha = width, beta = 0.
#[derive(Debug, Clone, PartialEq)]
struct Piece {
    left: f64,
    mid: f64,
    right: f64,
    alpha: f64,
    beta: f64,
}

/// A shape-preserving quadratic spline through knots of a non-decreasing
/// concave function with slopes in [0, 1], such as base expected loss
/// g(K) = E[min(L, K)] (slope P(L > K)). The caller passes every knot,
/// (0, 0) first and the flat top knot last.
///
/// On each interval the spline is one quadratic, or two joined with a
/// continuous slope at one added knot, so its slope is piecewise linear; it
/// rises and is concave on every interval, with every slope in [0, 1],
/// whenever the data are (secant slopes in [0, 1], not rising).
///
/// # Formula
/// ```text
/// Data: knots t_0 < … < t_n, values z_i, h_i = t_(i+1) - t_i,
///       secants δ_i = (z_(i+1) - z_i) / h_i.
///
/// Schumaker's interval (Lemma 2.2): given slopes s₁ at t_i and s₂ at
/// t_(i+1), and a knot ξ = t_i + α (β = h_i - α), the quadratic spline with
/// slope s₁ → s̄ on [t_i, ξ], s̄ → s₂ on [ξ, t_(i+1)] interpolates z iff
///     s̄ = (2 (z_(i+1) - z_i) - α s₁ - β s₂) / h_i.
/// With a = s₁ - δ_i > 0 and b = δ_i - s₂ > 0 it is concave (s₁ ≥ s̄ ≥ s₂)
/// exactly for α/h_i in [(b - a)/(a + b), 2b/(a + b)]; the middle of
/// Schumaker's range, α = h_i b/(a + b), β = h_i a/(a + b), gives s̄ = δ_i:
///     t in [t_i, ξ]:        z_i + s₁ d + (δ_i - s₁) d²/(2α),   d = t - t_i
///     t in [ξ, t_(i+1)]:    z_(i+1) - s₂ u - (δ_i - s₂) u²/(2β), u = t_(i+1) - t
/// When s₁ = s₂ = δ_i the interval is straight.
///
/// Slopes (this crate's choice; C1 wherever a C1 concave interpolant with
/// slopes in [0, 1] exists). An interval is straight when it is the only
/// one, or δ_i ≤ tol, or δ_i ≥ 1 - tol, or δ_i is within tol of a
/// neighbouring secant (a concave function through three collinear points
/// is a line between them; one whose average slope is 0 or 1 on an interval
/// has that slope throughout). Every other interval is curved and takes
///   s₁ = δ_(i-1) if interval i-1 is straight, else at an interior knot the
///        three-point (Bessel) slope, the derivative at t_i of the parabola
///        through t_(i-1), t_i, t_(i+1):
///            (h_i δ_(i-1) + h_(i-1) δ_i) / (h_(i-1) + h_i),
///        at t_0 the parabola's end slope, at most 1:
///            min(1, δ_0 + (δ_0 - δ_1) h_0/(h_0 + h_1));
///   s₂ likewise: δ_(i+1) if interval i+1 is straight, else Bessel, at t_n
///            max(0, δ_(n-1) - (δ_(n-2) - δ_(n-1)) h_(n-1)/(h_(n-2) + h_(n-1))).
/// These give s₁ > δ_i > s₂ on a curved interval and a common slope at every
/// knot except between two straight intervals of different secants, where
/// the data force a kink.
/// ```
///
/// # A quadratic is reproduced
/// If the data come from a quadratic q with q' in [0, 1] on [t_0, t_n] and
/// no two secants within tol, every slope above is q'(t_i) (the parabola
/// through three of its points is q itself); then s̄ = q'(ξ) and the spline
/// is q (Schumaker's Lemma 2.1: s₁ + s₂ = 2δ_i lets one quadratic do, and
/// the spline with knot ξ is unique).
///
/// # References
/// - L. L. Schumaker, "On shape preserving quadratic spline interpolation",
///   SIAM J. Numer. Anal. 20 (1983) 854-864: the interval construction and
///   the range of ξ for convexity (its formulas, as recalled here, are
///   re-derived above).
/// - For base expected loss: Parcell and Wood (2007); Garcia and Goossens
///   (2008).
///
/// ```
/// use skewbook::math::interp::ConcaveSpline;
/// // q(x) = 0.9 x - 0.4 x² is rising and concave on [0, 1]
/// let x = [0.0, 0.25, 0.5, 1.0];
/// let y: Vec<f64> = x.iter().map(|t| 0.9 * t - 0.4 * t * t).collect();
/// let g = ConcaveSpline::new(&x, &y)?;
/// assert!((g.eval(0.7) - (0.9 * 0.7 - 0.4 * 0.49)).abs() < 1e-15);
/// assert!((g.slope(0.7) - (0.9 - 0.8 * 0.7)).abs() < 1e-14);
/// # Ok::<(), skewbook::error::Error>(())
/// ```
#[derive(Debug, Clone, PartialEq)]
pub struct ConcaveSpline {
    x: Vec<f64>,
    y: Vec<f64>,
    pieces: Vec<Piece>,
}

impl ConcaveSpline {
    /// The spline through the knots (x_i, y_i).
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] when the knots are malformed (as for
    /// [`Curve1d::new`]), or a secant slope lies outside
    /// [-[`SLOPE_TOLERANCE`], 1 + [`SLOPE_TOLERANCE`]], or rises by more than
    /// [`SLOPE_TOLERANCE`] from one knot pair to the next; every offending
    /// knot pair is named by its x values.
    pub fn new(x: &[f64], y: &[f64]) -> crate::Result<ConcaveSpline> {
        ConcaveSpline::with_end_slopes(x, y, None, None)
    }

    /// [`ConcaveSpline::new`] with the slope at the first knot and/or at the
    /// last knot given instead of taken from the end parabola. A given end
    /// slope applies when its end interval is curved (a straight end
    /// interval keeps its secant); it must lie in [δ_0, 1] at the first knot
    /// and in [0, δ_(n-1)] at the last, so the spline keeps its shape.
    ///
    /// For base expected loss in the large-pool model, P(L > 0) = 1 and
    /// P(L > 1 - R) = 0 whenever 0 < PD and rho < 1: `Some(1.0)` at K = 0
    /// puts no probability mass at zero loss.
    ///
    /// # Errors
    /// As [`ConcaveSpline::new`]; [`ErrorKind::InvalidInput`] for an end
    /// slope outside its range, naming it.
    ///
    /// ```
    /// use skewbook::math::interp::ConcaveSpline;
    /// let (x, y) = ([0.0, 1.0, 2.0], [0.0, 0.8, 1.0]);
    /// let g = ConcaveSpline::with_end_slopes(&x, &y, Some(1.0), Some(0.0))?;
    /// assert_eq!(g.slope(0.0), 1.0);
    /// assert!(g.slope(2.0 - 1e-9) < 1e-8);
    /// assert!((g.eval(1.0) - 0.8).abs() < 1e-15);
    /// # Ok::<(), skewbook::error::Error>(())
    /// ```
    pub fn with_end_slopes(
        x: &[f64],
        y: &[f64],
        first: Option<f64>,
        last: Option<f64>,
    ) -> crate::Result<ConcaveSpline> {
        let (h, delta) = concave_shape(x, y, first, last)?;
        let n = h.len(); // intervals

        let straight: Vec<bool> = (0..n)
            .map(|i| {
                n == 1
                    || delta[i] <= SLOPE_TOLERANCE
                    || delta[i] >= 1.0 - SLOPE_TOLERANCE
                    || (i > 0 && (delta[i] - delta[i - 1]).abs() <= SLOPE_TOLERANCE)
                    || (i + 1 < n && (delta[i] - delta[i + 1]).abs() <= SLOPE_TOLERANCE)
            })
            .collect();
        // Bessel slope at interior knot k (1 <= k < n)
        let bessel = |k: usize| (h[k] * delta[k - 1] + h[k - 1] * delta[k]) / (h[k - 1] + h[k]);

        let pieces = (0..n)
            .map(|i| {
                let d = delta[i];
                let line = Piece {
                    left: d,
                    mid: d,
                    right: d,
                    alpha: h[i],
                    beta: 0.0,
                };
                if straight[i] {
                    return line;
                }
                // curved: n >= 2, so a neighbour exists on at least one side
                let left = if i == 0 {
                    first.unwrap_or_else(|| (d + (d - delta[1]) * h[0] / (h[0] + h[1])).min(1.0))
                } else if straight[i - 1] {
                    delta[i - 1]
                } else {
                    bessel(i)
                };
                let right = if i == n - 1 {
                    last.unwrap_or_else(|| {
                        (d - (delta[i - 1] - d) * h[i] / (h[i - 1] + h[i])).max(0.0)
                    })
                } else if straight[i + 1] {
                    delta[i + 1]
                } else {
                    bessel(i + 1)
                };
                let (a, b) = (left - d, d - right);
                if !(a > 0.0 && b > 0.0) {
                    // only by rounding: the data's bend is below what f64 resolves
                    return line;
                }
                Piece {
                    left,
                    mid: d,
                    right,
                    alpha: h[i] * (b / (a + b)),
                    beta: h[i] * (a / (a + b)),
                }
            })
            .collect();
        Ok(ConcaveSpline {
            x: x.to_vec(),
            y: y.to_vec(),
            pieces,
        })
    }

    /// The value at `x`: the spline inside the knots (each knot's y exactly
    /// at the knot), y_first below the first knot and y_last beyond the last
    /// (no slope is continued: the caller adds the flat top knot). NaN in,
    /// NaN out.
    pub fn eval(&self, x: f64) -> f64 {
        let i = match value_interval(&self.x, &self.y, x) {
            Ok(i) => i,
            Err(v) => return v,
        };
        let p = &self.pieces[i];
        let d = x - self.x[i];
        if d <= p.alpha {
            self.y[i] + p.left * d + (p.mid - p.left) * d * d / (2.0 * p.alpha)
        } else {
            let u = self.x[i + 1] - x;
            self.y[i + 1] - p.right * u - (p.mid - p.right) * u * u / (2.0 * p.beta)
        }
    }

    /// The right-hand derivative at `x` (at a knot where the data force a
    /// kink, the slope of the interval that starts there): piecewise linear
    /// inside the knots, in [0, 1] for admissible data; 0 below the first
    /// knot and from the last knot on, where [`ConcaveSpline::eval`] is
    /// flat. NaN in, NaN out.
    pub fn slope(&self, x: f64) -> f64 {
        let i = match slope_interval(&self.x, x) {
            Ok(i) => i,
            Err(s) => return s,
        };
        let p = &self.pieces[i];
        let d = x - self.x[i];
        if d <= p.alpha {
            p.left + (p.mid - p.left) * d / p.alpha
        } else {
            let u = self.x[i + 1] - x;
            p.right + (p.mid - p.right) * u / p.beta
        }
    }

    /// The knots (x, y) the spline was built from.
    pub fn knots(&self) -> (&[f64], &[f64]) {
        (&self.x, &self.y)
    }

    /// The slope on [x_first, x_last] as consecutive linear pieces
    /// `[from, to, slope at from, slope at to]`, increasing x (each interval
    /// gives one piece when straight, two when curved). For base expected
    /// loss the slope is P(L > K), so a piece's fall over its width is the
    /// loss density there, and a drop from one piece's end to the next
    /// one's start is a probability mass at that point.
    ///
    /// ```
    /// use skewbook::math::interp::ConcaveSpline;
    /// let g = ConcaveSpline::new(&[0.0, 1.0, 2.0], &[0.0, 0.8, 1.0])?;
    /// let p = g.slope_pieces();
    /// assert_eq!(p.len(), 4);
    /// let want = [0.0, 0.6, 1.0, 0.8]; // slope falls from 1 to the secant 0.8 by x = 0.6
    /// assert!(p[0].iter().zip(want).all(|(a, b)| (a - b).abs() < 1e-15));
    /// # Ok::<(), skewbook::error::Error>(())
    /// ```
    pub fn slope_pieces(&self) -> Vec<[f64; 4]> {
        let mut out = Vec::with_capacity(2 * self.pieces.len());
        for (i, p) in self.pieces.iter().enumerate() {
            let (x0, x1) = (self.x[i], self.x[i + 1]);
            if p.beta == 0.0 {
                out.push([x0, x1, p.left, p.mid]);
            } else {
                let xi = x0 + p.alpha;
                out.push([x0, xi, p.left, p.mid]);
                out.push([xi, x1, p.mid, p.right]);
            }
        }
        out
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Hand-worked: knots (0,0), (1,0.8), (2,1): secants 0.8, 0.2; Bessel
    /// slope at 1 is 0.5; end slopes 1.1 -> 1 and -0.1 -> 0 (clipped).
    /// Interval 0: a = 0.2, b = 0.3, alpha = 0.6, beta = 0.4.
    /// Interval 1: a = 0.3, b = 0.2, alpha = 0.4, beta = 0.6.
    #[test]
    fn pieces_by_hand() {
        let s = ConcaveSpline::new(&[0.0, 1.0, 2.0], &[0.0, 0.8, 1.0]).unwrap();
        let want = [
            Piece {
                left: 1.0,
                mid: 0.8,
                right: 0.5,
                alpha: 0.6,
                beta: 0.4,
            },
            Piece {
                left: 0.5,
                mid: 0.2,
                right: 0.0,
                alpha: 0.4,
                beta: 0.6,
            },
        ];
        for (got, want) in s.pieces.iter().zip(&want) {
            for (g, w) in [
                (got.left, want.left),
                (got.mid, want.mid),
                (got.right, want.right),
                (got.alpha, want.alpha),
                (got.beta, want.beta),
            ] {
                assert!((g - w).abs() < 1e-15, "{got:?} vs {want:?}");
            }
        }
    }

    /// A run of slope-1 intervals then a run of slope-0.5 intervals: both
    /// runs are straight and meet in a kink.
    #[test]
    fn collinear_runs_are_straight() {
        let s = ConcaveSpline::new(&[0.0, 1.0, 2.0, 3.0, 4.0], &[0.0, 1.0, 2.0, 2.5, 3.0]).unwrap();
        for p in &s.pieces {
            assert_eq!(p.beta, 0.0);
            assert_eq!(p.left, p.right);
        }
    }

    #[test]
    fn sign_as_numpy() {
        assert_eq!(sign(0.0), 0);
        assert_eq!(sign(-0.0), 0);
        assert_eq!(sign(2.0), 1);
        assert_eq!(sign(-1e-300), -1);
    }
}
