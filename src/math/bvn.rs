//! The standard bivariate normal CDF `Phi2(h, k; r)` at double precision.
//!
//! This is the inner loop of large-pool tranche pricing (one call per base
//! tranche, horizon and correlation), so it is a fixed Gauss-Legendre sum
//! with no allocation and no adaptive steps.
//!
//! # Method (Genz 2004, after Drezner and Wesolowsky 1990)
//!
//! The upper probability `P(X > h, Y > k)` is computed, then
//! `Phi2(h, k; r) = P(X > -h, Y > -k)`.
//!
//! - `|r| < 0.925`: the angle form of Plackett's identity,
//!   `P = N(-h) N(-k) + 1/(2 pi) int_0^{asin r} exp(-(h^2 + k^2 - 2hk sin t) / (2 cos^2 t)) dt`,
//!   with Gauss-Legendre on 6, 12 or 20 points for `|r| < 0.3`, `< 0.75`
//!   and above.
//! - `|r| >= 0.925`: the integral in `sqrt(1 - r^2)` of Drezner and
//!   Wesolowsky, with the leading behaviour of the integrand near `|r| = 1`
//!   subtracted in closed form (a short series) and the remainder on 20
//!   Gauss-Legendre points; `|r| = 1` exactly is the degenerate limit.
//!
//! # Accuracy: absolute, not relative
//!
//! Genz reports about 5e-16 absolute over the whole plane. Against 40-digit
//! mpmath on the fixture grid (1629 points, `h, k` down to -8, `r` to
//! +/-0.9999) the largest absolute error here is 2.2e-16. Relative accuracy
//! in the lower tail is not guaranteed: for `r >= 0` it is about 1e-13 on
//! values above 1e-6, 1e-11 above 1e-15, and degrades further below (6e-6
//! at `Phi2(-8, -8; 0.29) = 1.2e-24`); for `r < 0` the value is a
//! difference and only the absolute bound holds.
//!
//! # One correlation, many bounds
//!
//! [`Bvn::new`] does the work that depends on `r` only (the node angles and
//! their sines, or the series nodes); [`Bvn::cdf`] is then one exponential
//! per node. [`bvn_cdf`] builds and evaluates in one go.
//!
//! # The normal CDF used
//!
//! `statrs` 0.18's `erfc` is off by up to 1e-10 relative, which would cap
//! this function at ~1e-11; it uses [`crate::math::normal::cdf`], built on
//! the `libm` crate's `erfc` (below one ulp).
//!
//! # References
//!
//! - A. Genz, "Numerical computation of rectangular bivariate and trivariate
//!   normal and t probabilities", Statistics and Computing 14 (2004) 251-260.
//! - Z. Drezner and G. O. Wesolowsky, "On the computation of the bivariate
//!   normal integral", J. Statist. Comput. Simul. 35 (1990) 101-107.
//! - R. L. Plackett, "A reduction formula for normal multivariate
//!   integrals", Biometrika 41 (1954) 351-360.

use super::erfc;
use super::exp::exp_in_place;
use super::normal::cdf as norm_cdf;

use std::f64::consts::PI;

const TWO_PI: f64 = 2.0 * PI;

/// Beyond this magnitude `N(-x)` underflows to zero in `f64`
/// (`N(-38.5)` is already below the smallest subnormal), so a bound at or
/// past it is treated as infinite.
const FAR: f64 = 40.0;

// Gauss-Legendre rules on [-1, 1], positive half of the symmetric nodes.
// The values are Genz's (2004) 6, 12 and 20 point rules; his tables give 16
// digits, here each is the correctly rounded f64 of a 40-digit mpmath
// evaluation (they agree with the paper's to the digits it prints). A unit
// test checks them against the independent `gauss-quad` construction.

/// 6-point nodes.
const X6: [f64; 3] = [0.932469514203152, 0.6612093864662645, 0.2386191860831969];
/// 6-point weights.
const W6: [f64; 3] = [0.17132449237917036, 0.3607615730481386, 0.46791393457269104];
/// 12-point nodes.
const X12: [f64; 6] = [
    0.9815606342467192,
    0.9041172563704749,
    0.7699026741943047,
    0.5873179542866175,
    0.3678314989981802,
    0.1252334085114689,
];
/// 12-point weights.
const W12: [f64; 6] = [
    0.04717533638651183,
    0.10693932599531843,
    0.16007832854334622,
    0.20316742672306592,
    0.2334925365383548,
    0.24914704581340277,
];
/// 20-point nodes.
const X20: [f64; 10] = [
    0.9931285991850949,
    0.9639719272779138,
    0.912234428251326,
    0.8391169718222188,
    0.7463319064601508,
    0.636053680726515,
    0.5108670019508271,
    0.37370608871541955,
    0.22778585114164507,
    0.07652652113349734,
];
/// 20-point weights.
const W20: [f64; 10] = [
    0.017614007139152118,
    0.04060142980038694,
    0.06267204833410907,
    0.08327674157670475,
    0.10193011981724044,
    0.11819453196151841,
    0.13168863844917664,
    0.14209610931838204,
    0.14917298647260374,
    0.15275338713072584,
];

/// Standard bivariate normal CDF `Phi2(h, k; r) = P(X <= h, Y <= k)`, where
/// `X`, `Y` are standard normal with correlation `r`.
///
/// `h` and `k` may be infinite; `r` is clamped to `[-1, 1]`, and `r = +/-1`
/// give the degenerate limits exactly. The result is clamped to `[0, 1]`.
/// It is never NaN unless an argument is NaN.
///
/// # Formula
///
/// ```text
/// Phi2(h, k; r) = int_{-inf}^{h} int_{-inf}^{k} phi2(x, y; r) dy dx
/// phi2(x, y; r) = exp(-(x² - 2 r x y + y²) / (2 (1 - r²))) / (2 pi sqrt(1 - r²))
///
/// |r| < 0.925:  Phi2 = N(h) N(k) + 1/(2 pi) ∫_0^{asin r} exp(-(h² + k² - 2hk sin t) / (2 cos² t)) dt
/// |r| ≥ 0.925:  Drezner-Wesolowsky form in sqrt(1 - r²), singular part in closed form
/// r = 1:        N(min(h, k))
/// r = -1:       max(0, N(h) + N(k) - 1)
/// ```
///
/// Gauss-Legendre with 6 / 12 / 20 points for `|r| < 0.3 / 0.75 / above`.
/// Absolute error about 5e-16.
///
/// # References
///
/// A. Genz (2004), "Numerical computation of rectangular bivariate and
/// trivariate normal and t probabilities", Statistics and Computing 14;
/// Z. Drezner and G. O. Wesolowsky (1990), J. Statist. Comput. Simul. 35.
///
/// # Example
///
/// `Phi2(0, 0; r) = 1/4 + asin(r) / (2 pi)` (Sheppard), so at `r = 0.5` it
/// is `1/3`:
///
/// ```
/// use skewbook::math::bvn::bvn_cdf;
/// assert!((bvn_cdf(0.0, 0.0, 0.5) - 1.0 / 3.0).abs() < 1e-15);
/// assert_eq!(bvn_cdf(f64::INFINITY, f64::INFINITY, -0.3), 1.0);
/// assert_eq!(bvn_cdf(f64::NEG_INFINITY, 0.7, 0.9), 0.0);
/// ```
///
/// Builds a [`Bvn`] for `r` and evaluates it once; when many `(h, k)` share
/// one `r` (tranche pricing at one correlation), build the [`Bvn`] once.
#[inline]
pub fn bvn_cdf(h: f64, k: f64, r: f64) -> f64 {
    if r.is_nan() {
        return f64::NAN;
    }
    Bvn::new(r).cdf(h, k)
}

/// Which of Genz's forms applies at a correlation.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Form {
    /// `r = 0`: `N(h) N(k)`.
    Independent,
    /// `0 < |r| < 0.925`: the angle form of Plackett's identity.
    Angle,
    /// `0.925 <= |r| < 1`: Drezner-Wesolowsky in `sqrt(1 - r^2)`.
    Series,
    /// `|r| = 1`.
    Degenerate,
}

/// The bivariate normal CDF at one fixed correlation `r`, with everything
/// that depends on `r` alone (Gauss-Legendre nodes mapped to the
/// integration variable, their sines, square roots and reciprocals)
/// computed once in [`Bvn::new`].
///
/// [`Bvn::cdf`] then costs one exponential per node (6, 12 or 20 for
/// `|r| < 0.925`, two per node above) and two normal CDFs.
///
/// # Example
///
/// ```
/// use skewbook::math::bvn::{bvn_cdf, Bvn};
/// let at = Bvn::new(-0.6);
/// assert_eq!(at.cdf(-1.0, 0.5), bvn_cdf(-1.0, 0.5, -0.6));
/// ```
#[derive(Debug, Clone)]
pub struct Bvn {
    r: f64,
    form: Form,
    len: usize,
    /// Angle: sin of the node angle. Series: `1 / x_j^2` of the node.
    p: [f64; 20],
    /// Angle: `1 / (1 - sin^2)`. Series: `x_j^2`.
    q: [f64; 20],
    /// Series only: `(1 - r_j) / (2 (1 + r_j))`, `r_j = sqrt(1 - x_j^2)`.
    t: [f64; 20],
    /// Series only: `1 / r_j`.
    u: [f64; 20],
    /// Weights, scaled for the form.
    w: [f64; 20],
    /// Angle: `asin(r) / (4 pi)`. Series: `1 - r^2`.
    scale: f64,
}

impl Bvn {
    /// Precompute Genz's rule for correlation `r` (clamped to `[-1, 1]`;
    /// NaN is treated as 0 — use [`bvn_cdf`] to propagate NaN).
    ///
    /// # Example
    ///
    /// ```
    /// use skewbook::math::bvn::Bvn;
    /// assert_eq!(Bvn::new(0.3).correlation(), 0.3);
    /// ```
    pub fn new(r: f64) -> Bvn {
        let r = if r.is_nan() { 0.0 } else { r.clamp(-1.0, 1.0) };
        let mut out = Bvn {
            r,
            form: Form::Independent,
            len: 0,
            p: [0.0; 20],
            q: [0.0; 20],
            t: [0.0; 20],
            u: [0.0; 20],
            w: [0.0; 20],
            scale: 0.0,
        };
        let ar = r.abs();
        if r == 0.0 {
            return out;
        }
        if ar >= 1.0 {
            out.form = Form::Degenerate;
            return out;
        }
        let (x, w): (&[f64], &[f64]) = if ar < 0.3 {
            (&X6, &W6)
        } else if ar < 0.75 {
            (&X12, &W12)
        } else {
            (&X20, &W20)
        };
        out.len = 2 * x.len();
        if ar < 0.925 {
            out.form = Form::Angle;
            // nodes t = theta (1 -/+ x_i) on [0, asin r], theta = asin(r) / 2:
            // sin(theta (1 -/+ x)) = sin(theta) cos(theta x) -/+ cos(theta) sin(theta x)
            let asr = r.asin();
            let theta = 0.5 * asr;
            let (st, ct) = theta.sin_cos();
            for (i, (&xi, &wi)) in x.iter().zip(w).enumerate() {
                let (sx, cx) = (theta * xi).sin_cos();
                for (j, sn) in [(2 * i, st * cx - ct * sx), (2 * i + 1, st * cx + ct * sx)] {
                    out.p[j] = sn;
                    out.q[j] = 1.0 / (1.0 - sn * sn);
                    out.w[j] = wi;
                }
            }
            out.scale = asr / (2.0 * TWO_PI);
        } else {
            out.form = Form::Series;
            let a_s = (1.0 - r) * (1.0 + r);
            let half_a = 0.5 * a_s.sqrt();
            for (i, (&xi, &wi)) in x.iter().zip(w).enumerate() {
                for (j, node) in [(2 * i, 1.0 - xi), (2 * i + 1, 1.0 + xi)] {
                    let xs = a_s * node * node / 4.0;
                    let rs = (1.0 - xs).sqrt();
                    out.p[j] = 1.0 / xs;
                    out.q[j] = xs;
                    out.t[j] = (1.0 - rs) / (2.0 * (1.0 + rs));
                    out.u[j] = 1.0 / rs;
                    out.w[j] = half_a * wi;
                }
            }
            out.scale = a_s;
        }
        out
    }

    /// The correlation this rule is for (after clamping).
    pub fn correlation(&self) -> f64 {
        self.r
    }

    /// `Phi2(h, k; r)` at this rule's `r`; same contract as [`bvn_cdf`].
    ///
    /// # Formula
    ///
    /// See [`bvn_cdf`].
    ///
    /// # References
    ///
    /// A. Genz (2004), Statistics and Computing 14.
    ///
    /// # Example
    ///
    /// ```
    /// use skewbook::math::bvn::Bvn;
    /// // Sheppard: Phi2(0, 0; 0.5) = 1/4 + asin(0.5) / (2 pi) = 1/3
    /// assert!((Bvn::new(0.5).cdf(0.0, 0.0) - 1.0 / 3.0).abs() < 1e-15);
    /// ```
    #[inline]
    pub fn cdf(&self, h: f64, k: f64) -> f64 {
        self.cdf_by(h, k, &OnDemand { h, k })
    }

    /// [`Bvn::cdf`] with the normal CDF at `h`, `-h`, `k` and `-k` already
    /// known: the tranche pricer keeps them per horizon and per bound, so a
    /// call costs the node sum and at most one more normal CDF.
    ///
    /// # Formula
    ///
    /// See [`bvn_cdf`]; `tails` must hold `N(h)`, `N(-h)`, `N(k)`, `N(-k)`.
    ///
    /// # References
    ///
    /// A. Genz (2004), Statistics and Computing 14.
    ///
    /// # Example
    ///
    /// ```
    /// use skewbook::math::bvn::{Bvn, Tails};
    /// use skewbook::math::normal::cdf;
    /// let (h, k) = (-1.0, 0.5);
    /// let tails = Tails { h: cdf(h), minus_h: cdf(-h), k: cdf(k), minus_k: cdf(-k) };
    /// let at = Bvn::new(-0.6);
    /// assert_eq!(at.cdf_with(h, k, &tails), at.cdf(h, k));
    /// ```
    #[inline]
    pub fn cdf_with(&self, h: f64, k: f64, tails: &Tails) -> f64 {
        self.cdf_by(h, k, tails)
    }

    #[inline]
    fn cdf_by(&self, h: f64, k: f64, n: &impl NormalAt) -> f64 {
        if let Some(v) = self.edge(h, k, n) {
            return v;
        }
        // upper(-h, -k): its "N(-h')" is N(h), and so on.
        self.upper(-h, -k, &Negated(n)).clamp(0.0, 1.0)
    }

    /// The value where no node sum is needed (NaN or a bound beyond
    /// [`FAR`]), else `None`.
    #[inline]
    fn edge(&self, h: f64, k: f64, n: &impl NormalAt) -> Option<f64> {
        if h.is_nan() || k.is_nan() {
            Some(f64::NAN)
        } else if h <= -FAR || k <= -FAR {
            Some(0.0)
        } else if h >= FAR {
            Some(if k >= FAR { 1.0 } else { n.k() })
        } else if k >= FAR {
            Some(n.h())
        } else {
            None
        }
    }

    /// Whether `Phi2(h, k; r)` takes the node sum (no NaN, no bound beyond
    /// [`FAR`]); when not, [`Bvn::cdf_from`] reads no exponential.
    #[inline]
    pub(crate) fn needs_nodes(&self, h: f64, k: f64) -> bool {
        !(h.is_nan() || k.is_nan() || h.abs() >= FAR || k.abs() >= FAR)
    }

    /// How many exponentials [`Bvn::cdf_from`] takes: one per node in the
    /// angle form; in the series form two per node, two outside the sum and
    /// two of the normal CDF in it; none otherwise.
    pub(crate) fn exponentials(&self) -> usize {
        match self.form {
            Form::Angle => self.len,
            Form::Series => 2 * self.len + 4,
            Form::Independent | Form::Degenerate => 0,
        }
    }

    /// The exponents of the node sum of `Phi2(h, k; r)`, into `out`
    /// ([`Self::exponentials`] of them; any values where [`Bvn::cdf_from`]
    /// will not need them). The caller takes their exponentials, in one
    /// batch with others of its own, and hands them to [`Bvn::cdf_from`].
    #[inline]
    pub(crate) fn cdf_exponents(&self, h: f64, k: f64, out: &mut [f64]) {
        self.node_exponents(-h, -k, out);
    }

    /// `Phi2(h, k; r)` from the exponentials of [`Bvn::cdf_exponents`]:
    /// [`Bvn::cdf_with`] to the bit.
    #[inline]
    pub(crate) fn cdf_from(&self, h: f64, k: f64, e: &[f64], tails: &Tails) -> f64 {
        match self.edge(h, k, tails) {
            Some(v) => v,
            None => self.upper_from(-h, -k, e, &Negated(tails)).clamp(0.0, 1.0),
        }
    }

    /// `P(X > h, Y > k)` for `|h|, |k| < FAR`; Genz's BVND. `n` gives the
    /// normal CDF at `h`, `-h`, `k`, `-k` of these arguments.
    #[inline]
    fn upper(&self, h: f64, k: f64, n: &impl NormalAt) -> f64 {
        let mut e = [0.0; 44];
        let e = &mut e[..self.exponentials()];
        self.node_exponents(h, k, e);
        exp_in_place(e);
        self.upper_from(h, k, e, n)
    }

    /// The exponents of [`Self::upper`]'s node sum at `(h, k)`.
    #[inline]
    fn node_exponents(&self, h: f64, k: f64, out: &mut [f64]) {
        let hk = h * k;
        let len = self.len;
        match self.form {
            Form::Angle => {
                let hs = 0.5 * (h * h + k * k);
                for ((e, p), q) in out[..len].iter_mut().zip(&self.p).zip(&self.q) {
                    *e = (p * hk - hs) * q;
                }
            }
            Form::Series => {
                // |r| >= 0.925: reflect r < 0 onto r > 0 through k -> -k.
                let (k, hk) = if self.r < 0.0 { (-k, -hk) } else { (k, hk) };
                let bs = (h - k) * (h - k);
                let (nodes, outside) = out[..2 * len + 4].split_at_mut(2 * len);
                let (e1, e2) = nodes.split_at_mut(len);
                for (((e1, e2), p), t) in e1.iter_mut().zip(e2).zip(&self.p).zip(&self.t) {
                    *e1 = -0.5 * (bs * p + hk);
                    *e2 = -hk * t;
                }
                let a_s = self.scale;
                let tail = erfc::prepare(series_tail_argument(bs, a_s));
                let [t0, t1] = if erfc::exponentials_needed(&tail) {
                    tail.exponents()
                } else {
                    [0.0; 2]
                };
                outside.copy_from_slice(&[-0.5 * (bs / a_s + hk), -0.5 * hk, t0, t1]);
            }
            Form::Independent | Form::Degenerate => {}
        }
    }

    /// [`Self::upper`] from the exponentials of its node exponents.
    #[inline]
    fn upper_from(&self, h: f64, k: f64, e: &[f64], n: &impl NormalAt) -> f64 {
        let hk = h * k;
        let len = self.len;
        match self.form {
            Form::Independent => return n.minus_h() * n.minus_k(),
            Form::Angle => {
                // The weighted sum in node order.
                let mut sum = 0.0;
                for (w, e) in self.w[..len].iter().zip(&e[..len]) {
                    sum += w * e;
                }
                return sum * self.scale + n.minus_h() * n.minus_k();
            }
            Form::Series | Form::Degenerate => {}
        }
        // |r| >= 0.925: reflect r < 0 onto r > 0 through k -> -k.
        let reflect = self.r < 0.0;
        let (k, hk) = if reflect { (-k, -hk) } else { (k, hk) };
        // N(-k) and N(k) of the reflected k.
        let (n_minus_k, n_k) = if reflect {
            (n.k(), n.minus_k())
        } else {
            (n.minus_k(), n.k())
        };
        let mut bvn = 0.0;
        if self.form == Form::Series {
            let a_s = self.scale;
            let a = a_s.sqrt();
            let bs = (h - k) * (h - k);
            let c = (4.0 - hk) / 8.0;
            let d = (12.0 - hk) / 16.0;
            let outside = &e[2 * len..2 * len + 4];
            bvn = a
                * outside[0]
                * (1.0 - c * (bs - a_s) * (1.0 - d * bs / 5.0) / 3.0 + c * d * a_s * a_s / 5.0);
            if hk > -160.0 {
                let b = bs.sqrt();
                // N(-b / a) = erfc(b / (a sqrt 2)) / 2, its exponentials taken
                // with the nodes'.
                let tail = erfc::finish_at(series_tail_argument(bs, a_s), [outside[2], outside[3]]);
                bvn -= outside[1]
                    * TWO_PI.sqrt()
                    * (0.5 * tail)
                    * b
                    * (1.0 - c * bs * (1.0 - d * bs / 5.0) / 3.0);
            }
            // Both halves of the rule in Genz's second form:
            // exp(-(bs/xs + hk)/2) (exp(-hk (1-rs)/(2(1+rs))) / rs - (1 + c xs (1 + d xs)))
            let (e1, e2) = e[..2 * len].split_at(len);
            for j in 0..len {
                let xs = self.q[j];
                bvn += self.w[j] * e1[j] * (e2[j] * self.u[j] - (1.0 + c * xs * (1.0 + d * xs)));
            }
            bvn = -bvn / TWO_PI;
        }
        if self.r > 0.0 {
            bvn + if h >= k { n.minus_h() } else { n_minus_k }
        } else {
            let mut bvn = -bvn;
            if k > h {
                bvn += if h < 0.0 {
                    n_k - n.h()
                } else {
                    n.minus_h() - n_minus_k
                };
            }
            bvn
        }
    }
}

/// The argument of `erfc` in the series form's `N(-b / a)`, `b = |h - k|`,
/// `a = sqrt(1 - r²)`: `b / a / sqrt 2` (as `N(x) = erfc(-x / sqrt 2) / 2`
/// forms it).
#[inline]
fn series_tail_argument(bs: f64, a_s: f64) -> f64 {
    -(-bs.sqrt() / a_s.sqrt()) * std::f64::consts::FRAC_1_SQRT_2
}

/// The normal CDF at `h`, `-h`, `k` and `-k`, for [`Bvn::cdf_with`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Tails {
    /// `N(h)`.
    pub h: f64,
    /// `N(-h)`.
    pub minus_h: f64,
    /// `N(k)`.
    pub k: f64,
    /// `N(-k)`.
    pub minus_k: f64,
}

/// Where the node sums find the normal CDF of their bounds: computed on
/// demand ([`OnDemand`]) or given ([`Tails`]).
trait NormalAt {
    fn h(&self) -> f64;
    fn minus_h(&self) -> f64;
    fn k(&self) -> f64;
    fn minus_k(&self) -> f64;
}

impl NormalAt for Tails {
    #[inline]
    fn h(&self) -> f64 {
        self.h
    }
    #[inline]
    fn minus_h(&self) -> f64 {
        self.minus_h
    }
    #[inline]
    fn k(&self) -> f64 {
        self.k
    }
    #[inline]
    fn minus_k(&self) -> f64 {
        self.minus_k
    }
}

/// The bounds themselves; each normal CDF is computed when asked for.
struct OnDemand {
    h: f64,
    k: f64,
}

impl NormalAt for OnDemand {
    #[inline]
    fn h(&self) -> f64 {
        norm_cdf(self.h)
    }
    #[inline]
    fn minus_h(&self) -> f64 {
        norm_cdf(-self.h)
    }
    #[inline]
    fn k(&self) -> f64 {
        norm_cdf(self.k)
    }
    #[inline]
    fn minus_k(&self) -> f64 {
        norm_cdf(-self.k)
    }
}

/// The tails of `-h` and `-k`, from those of `h` and `k`.
struct Negated<'a, N: ?Sized>(&'a N);

impl<N: NormalAt> NormalAt for Negated<'_, N> {
    #[inline]
    fn h(&self) -> f64 {
        self.0.minus_h()
    }
    #[inline]
    fn minus_h(&self) -> f64 {
        self.0.h()
    }
    #[inline]
    fn k(&self) -> f64 {
        self.0.minus_k()
    }
    #[inline]
    fn minus_k(&self) -> f64 {
        self.0.k()
    }
}

/// Standard bivariate normal density `phi2(h, k; r)`.
///
/// For `|r| = 1` the distribution is singular (it lives on the line
/// `k = r h`): the result is 0 off that line and `+inf` on it.
///
/// # Formula
///
/// ```text
/// phi2(h, k; r) = exp(-(h² - 2 r h k + k²) / (2 (1 - r²))) / (2 pi sqrt(1 - r²))
/// ```
///
/// Plackett (1954): `d Phi2(h, k; r) / dr = phi2(h, k; r)`.
///
/// # References
///
/// R. L. Plackett (1954), Biometrika 41.
///
/// # Example
///
/// ```
/// use skewbook::math::bvn::bvn_pdf;
/// let at_origin = 1.0 / (2.0 * std::f64::consts::PI);
/// assert!((bvn_pdf(0.0, 0.0, 0.0) - at_origin).abs() < 1e-16);
/// ```
pub fn bvn_pdf(h: f64, k: f64, r: f64) -> f64 {
    if h.is_nan() || k.is_nan() || r.is_nan() {
        return f64::NAN;
    }
    let r = r.clamp(-1.0, 1.0);
    let one_minus_r2 = (1.0 - r) * (1.0 + r);
    if one_minus_r2 <= 0.0 {
        return if k == r * h { f64::INFINITY } else { 0.0 };
    }
    if h.is_infinite() || k.is_infinite() {
        return 0.0;
    }
    let q = (h * h - 2.0 * r * h * k + k * k) / (2.0 * one_minus_r2);
    (-q).exp() / (TWO_PI * one_minus_r2.sqrt())
}

#[cfg(test)]
mod tests {
    use super::*;
    use gauss_quad::legendre::GaussLegendre;
    use std::num::NonZeroUsize;

    /// The constant rules equal gauss-quad's independent construction
    /// (Bogaert's algorithm) to rounding.
    #[test]
    fn rules_match_gauss_quad() {
        let rules: [(&[f64], &[f64]); 3] = [(&X6, &W6), (&X12, &W12), (&X20, &W20)];
        for (x, w) in rules {
            let n = 2 * x.len();
            let rule = GaussLegendre::new(NonZeroUsize::new(n).expect("n > 0"));
            let mut pos: Vec<(f64, f64)> = rule
                .iter()
                .filter(|(node, _)| *node > 0.0)
                .map(|(node, weight)| (*node, *weight))
                .collect();
            pos.sort_by(|a, b| b.0.total_cmp(&a.0));
            assert_eq!(pos.len(), x.len());
            for ((xn, wn), (xg, wg)) in x.iter().zip(w).zip(pos) {
                assert!((xn - xg).abs() < 4e-16, "node {xn} vs {xg}");
                assert!((wn - wg).abs() < 4e-16, "weight {wn} vs {wg}");
            }
        }
    }

    /// Sheppard: Phi2(0, 0; r) = 1/4 + asin(r) / (2 pi), across all branches.
    #[test]
    fn origin_is_sheppard() {
        for r in [
            -1.0, -0.99, -0.93, -0.8, -0.5, -0.1, 0.0, 0.2, 0.6, 0.9, 0.95, 1.0,
        ] {
            let exact = 0.25 + f64::asin(r) / TWO_PI;
            assert!((bvn_cdf(0.0, 0.0, r) - exact).abs() < 5e-16, "r = {r}");
        }
    }

    /// No NaN at the edges, including infinite and huge bounds.
    #[test]
    fn edges_are_finite() {
        let vals = [
            f64::NEG_INFINITY,
            -1e300,
            -39.0,
            -8.0,
            0.0,
            3.0,
            39.9,
            1e300,
            f64::INFINITY,
        ];
        for &h in &vals {
            for &k in &vals {
                for r in [-2.0, -1.0, -0.9999, -0.5, 0.0, 0.5, 0.9999, 1.0, 2.0] {
                    let p = bvn_cdf(h, k, r);
                    assert!((0.0..=1.0).contains(&p), "{h} {k} {r} -> {p}");
                }
            }
        }
    }
}
