//! Estimators of PD and asset correlation from a default history.
//!
//! Every estimator returns an [`Estimate`]: PD and rho (or `None` where the
//! estimator does not apply, with the reason in `notes`), standard errors,
//! 95 % intervals, which standard-error method was used, the number of
//! periods and of zero-default periods.
//!
//! # Intervals
//! Standard errors are on the natural scale (PD, rho). The 95 % intervals
//! are Wald intervals on the probit scale for PD (G(PD) ± 1.96 se / phi(G(PD)))
//! and the logit scale for rho (logit(rho) ± 1.96 se / (rho (1 - rho))),
//! mapped back, so they always lie in (0, 1).
//!
//! # Moment and likelihood estimates of rho are biased low in short samples
//! Gordy and Heitfield (2002) find the bias material at 10-20 periods; the
//! intervals are asymptotic. Every estimate under 20 periods says so.

use crate::input::history::History;
use crate::math::bvn::bvn_cdf;
use crate::math::normal::{cdf, inv_cdf, pdf};
use crate::realworld::vasicek::quantile_pair as invert_quantile_pair;
use crate::Result;
use gauss_quad::legendre::GaussLegendre;
use serde::Serialize;
use std::f64::consts::PI;
use std::num::NonZeroUsize;
use std::sync::OnceLock;

/// The 97.5 % standard normal quantile (two-sided 95 % intervals).
pub const Z_975: f64 = 1.959_963_984_540_054;

/// Below this many periods an estimate carries a short-sample note.
pub const SHORT_SAMPLE: usize = 20;

/// rho below this is reported as on the boundary rho ≈ 0.
pub const RHO_BOUNDARY: f64 = 1e-6;

/// The estimators.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Method {
    /// Maximum likelihood on probit-transformed default rates.
    ProbitMoments,
    /// Mean and variance of the default rates matched to the Vasicek moments.
    MomentMatching,
    /// Mean rate and finite-pool joint default probability matched (counts).
    JointDefaultMoments,
    /// Maximum likelihood of the binomial mixture over the factor (counts).
    BinomialMl,
    /// Exact inversion of two quantiles of the default-rate distribution.
    QuantilePair,
}

impl Method {
    /// The name used in every output.
    pub fn name(&self) -> &'static str {
        match self {
            Method::ProbitMoments => "probit_moments",
            Method::MomentMatching => "moment_matching",
            Method::JointDefaultMoments => "joint_default_moments",
            Method::BinomialMl => "binomial_ml",
            Method::QuantilePair => "quantile_pair",
        }
    }
}

/// How the standard errors were computed.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum SeMethod {
    /// Delta method from the asymptotic covariance of the sample moments.
    DeltaMethod,
    /// Inverse of the observed information (negative Hessian of the log-likelihood).
    ObservedInformation,
}

impl SeMethod {
    /// The name used in every output.
    pub fn name(&self) -> &'static str {
        match self {
            SeMethod::DeltaMethod => "delta_method",
            SeMethod::ObservedInformation => "observed_information",
        }
    }
}

/// Divisor of the sample variance in the moment estimators.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum VarianceDivisor {
    /// T, the maximum-likelihood form (default).
    #[default]
    T,
    /// T - 1, the unbiased sample variance.
    TMinus1,
}

impl VarianceDivisor {
    fn value(&self, t: usize) -> f64 {
        match self {
            VarianceDivisor::T => t as f64,
            VarianceDivisor::TMinus1 => (t - 1) as f64,
        }
    }
    fn label(&self) -> &'static str {
        match self {
            VarianceDivisor::T => "T (maximum likelihood form)",
            VarianceDivisor::TMinus1 => "T - 1",
        }
    }
}

/// One estimator's result.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Estimate {
    /// Which estimator.
    pub method: Method,
    /// PD, a fraction; `None` where the estimator does not apply.
    pub pd: Option<f64>,
    /// Asset correlation, a fraction; `None` where the estimator does not apply.
    pub rho: Option<f64>,
    /// Standard error of PD.
    pub pd_se: Option<f64>,
    /// Standard error of rho.
    pub rho_se: Option<f64>,
    /// 95 % interval for PD (probit-scale Wald interval).
    pub pd_ci: Option<[f64; 2]>,
    /// 95 % interval for rho (logit-scale Wald interval).
    pub rho_ci: Option<[f64; 2]>,
    /// How the standard errors were computed; `None` without standard errors.
    pub se_method: Option<SeMethod>,
    /// Periods used.
    pub periods: usize,
    /// Periods with no default.
    pub zero_default_periods: usize,
    /// Remarks: why it does not apply, short sample, boundary, divisor used.
    pub notes: Vec<String>,
}

impl Estimate {
    fn empty(method: Method, h: Option<&History>) -> Estimate {
        Estimate {
            method,
            pd: None,
            rho: None,
            pd_se: None,
            rho_se: None,
            pd_ci: None,
            rho_ci: None,
            se_method: None,
            periods: h.map_or(0, |h| h.periods.len()),
            zero_default_periods: h.map_or(0, |h| h.zero_default_periods().len()),
            notes: Vec::new(),
        }
    }

    fn short_sample_note(&mut self) {
        if self.periods < SHORT_SAMPLE {
            self.notes.push(format!(
                "short sample ({} periods): rho is likely biased low and the intervals are asymptotic",
                self.periods
            ));
        }
    }

    /// Sets PD with its standard error and the probit-scale interval.
    fn set_pd(&mut self, pd: f64, se: Option<f64>) {
        self.pd = Some(pd);
        if let Some(se) = se.filter(|s| s.is_finite() && *s > 0.0) {
            let c = inv_cdf(pd);
            let se_c = se / pdf(c);
            self.pd_se = Some(se);
            self.pd_ci = Some([cdf(c - Z_975 * se_c), cdf(c + Z_975 * se_c)]);
        }
    }

    /// Sets rho with its standard error and the logit-scale interval.
    fn set_rho(&mut self, rho: f64, se: Option<f64>) {
        self.rho = Some(rho);
        if let Some(se) = se.filter(|s| s.is_finite() && *s > 0.0) {
            let eta = (rho / (1.0 - rho)).ln();
            let se_eta = se / (rho * (1.0 - rho));
            let back = |x: f64| 1.0 / (1.0 + (-x).exp());
            self.rho_se = Some(se);
            self.rho_ci = Some([back(eta - Z_975 * se_eta), back(eta + Z_975 * se_eta)]);
        }
    }
}

/// Options of [`estimate_all`].
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct Options {
    /// Divisor of the sample variance in `probit_moments` and `moment_matching`.
    pub divisor: VarianceDivisor,
    /// Two (level, default rate) pairs for `quantile_pair`, when given.
    pub quantiles: Option<[(f64, f64); 2]>,
}

/// Every estimator that applies to the history, in a fixed order: the two
/// rate estimators, the two count estimators (counts only), then
/// `quantile_pair` when quantiles are given. An estimator that cannot run on
/// these data still appears, with `None` values and the reason.
///
/// # Errors
/// Only from `quantile_pair`: quantiles no Vasicek distribution has.
pub fn estimate_all(h: &History, opts: &Options) -> Result<Vec<Estimate>> {
    let mut out = vec![
        probit_moments(h, opts.divisor),
        moment_matching(h, opts.divisor),
    ];
    if h.counts().is_some() {
        out.push(joint_default_moments(h));
        out.push(binomial_ml(h));
    }
    if let Some([a, b]) = opts.quantiles {
        out.push(quantile_pair(a, b)?);
    }
    Ok(out)
}

fn mean(x: &[f64]) -> f64 {
    x.iter().sum::<f64>() / x.len() as f64
}

/// Maximum likelihood on the probit-transformed default rates.
///
/// # Formula
/// ```text
/// x_t = G(DR_t),  m = mean x_t,  v = Σ (x_t - m)² / D   (D = T, or T - 1 as an option)
/// rho = v / (1 + v),   PD = N(m sqrt(1 - rho))
/// se(rho) = rho (1 - rho) sqrt(2 / D)
/// se(PD)  = phi(c) sqrt(v / (T (1 + v)) + m² v² / (2 D (1 + v)³)),   c = G(PD)
/// ```
/// With divisor T this is the exact maximum-likelihood estimate of the
/// Vasicek distribution fitted to the rates (the probit map does not depend
/// on the parameters). Undefined when a rate is exactly 0 or 1 (G = ∓inf):
/// the estimate names those periods and has no values.
///
/// # References
/// Vasicek, "Loan portfolio value", Risk 15(12), 2002 (x_t is normal with
/// mean c / sqrt(1 - rho) and variance rho / (1 - rho)).
///
/// ```
/// use skewbook::input::history::History;
/// use skewbook::realworld::estimators::{probit_moments, VarianceDivisor};
/// use skewbook::math::normal::cdf;
/// // Probits -1.9, -2.1, -2.0: m = -2, v = 0.02 / 3.
/// let h = History::from_rates(&[cdf(-1.9), cdf(-2.1), cdf(-2.0)])?;
/// let e = probit_moments(&h, VarianceDivisor::T);
/// let v = 0.02 / 3.0;
/// assert!((e.rho.unwrap_or(0.0) - v / (1.0 + v)).abs() < 1e-12);
/// assert!((e.pd.unwrap_or(0.0) - cdf(-2.0 / (1.0 + v).sqrt())).abs() < 1e-10);
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn probit_moments(h: &History, divisor: VarianceDivisor) -> Estimate {
    let mut e = Estimate::empty(Method::ProbitMoments, Some(h));
    let bad: Vec<&str> = h
        .periods
        .iter()
        .filter(|p| p.rate <= 0.0 || p.rate >= 1.0)
        .map(|p| p.label.as_str())
        .collect();
    if !bad.is_empty() {
        e.notes.push(format!(
            "undefined: the probit of a default rate of exactly 0 or 1 is infinite, in period{} {}; \
             use the count estimators",
            if bad.len() > 1 { "s" } else { "" },
            bad.join(", ")
        ));
        return e;
    }
    let x: Vec<f64> = h.rates().iter().map(|&r| inv_cdf(r)).collect();
    let t = x.len();
    let d = divisor.value(t);
    let m = mean(&x);
    let v = x.iter().map(|xi| (xi - m).powi(2)).sum::<f64>() / d;
    e.notes
        .push(format!("variance divisor {}", divisor.label()));
    if v <= 0.0 {
        e.notes
            .push("all probit rates are equal: rho on the boundary 0".to_string());
        e.set_pd(cdf(m), None);
        e.set_rho(0.0, None);
        return e;
    }
    let rho = v / (1.0 + v);
    let c = m / (1.0 + v).sqrt();
    let tf = t as f64;
    let se_pd =
        pdf(c) * (v / (tf * (1.0 + v)) + m * m * v * v / (2.0 * d * (1.0 + v).powi(3))).sqrt();
    let se_rho = rho * (1.0 - rho) * (2.0 / d).sqrt();
    e.se_method = Some(SeMethod::DeltaMethod);
    e.set_pd(cdf(c), Some(se_pd));
    e.set_rho(rho, Some(se_rho));
    e.short_sample_note();
    e
}

/// rho solving Phi2(c, c; rho) = target, with c = G(pd); `Err` with the
/// reason when no rho in [0, 1) does.
fn solve_joint_probability(pd: f64, target: f64) -> std::result::Result<f64, String> {
    let c = inv_cdf(pd);
    let lo_val = pd * pd;
    if target <= lo_val {
        return Ok(0.0);
    }
    if target >= pd {
        return Err(format!(
            "no solution: the second moment {target:.6e} is at or above PD = {pd:.6e}, \
             which only rho = 1 reaches"
        ));
    }
    let f = |r: f64| bvn_cdf(c, c, r) - target;
    let df = |r: f64| (-c * c / (1.0 + r)).exp() / (2.0 * PI * (1.0 - r * r).sqrt());
    let (mut lo, mut hi) = (0.0_f64, 1.0_f64);
    let mut r = 0.5;
    for _ in 0..200 {
        let fr = f(r);
        if fr > 0.0 {
            hi = r;
        } else {
            lo = r;
        }
        let step = fr / df(r);
        let mut next = r - step;
        if !(next > lo && next < hi && next.is_finite()) {
            next = 0.5 * (lo + hi);
        }
        if (next - r).abs() < 1e-15 || hi - lo < 1e-15 {
            return Ok(next);
        }
        r = next;
    }
    Ok(r)
}

/// Moment fit shared by `moment_matching` and `joint_default_moments`.
///
/// x_t: per-period rate; y_t: per-period second-moment term; target =
/// m1² + k (m2 - m1²).
fn moment_fit(e: &mut Estimate, x: &[f64], y: &[f64], k: f64) {
    let t = x.len() as f64;
    let m1 = mean(x);
    let m2 = mean(y);
    if m1 <= 0.0 {
        e.notes
            .push("undefined: no defaults in any period (PD = 0)".to_string());
        return;
    }
    if m1 >= 1.0 {
        e.notes
            .push("undefined: every obligor defaulted in every period (PD = 1)".to_string());
        return;
    }
    let target = m1 * m1 + k * (m2 - m1 * m1);
    // Asymptotic covariance of (m1, m2): sample covariance / T.
    let s11 = x.iter().map(|a| (a - m1).powi(2)).sum::<f64>() / (t - 1.0) / t;
    let s22 = y.iter().map(|b| (b - m2).powi(2)).sum::<f64>() / (t - 1.0) / t;
    let s12 = x
        .iter()
        .zip(y)
        .map(|(a, b)| (a - m1) * (b - m2))
        .sum::<f64>()
        / (t - 1.0)
        / t;
    e.se_method = Some(SeMethod::DeltaMethod);
    e.set_pd(m1, Some(s11.sqrt()));
    match solve_joint_probability(m1, target) {
        Err(msg) => {
            e.notes.push(msg);
        }
        Ok(rho) if rho < RHO_BOUNDARY => {
            e.set_rho(0.0, None);
            e.notes.push(format!(
                "rho on the boundary 0: the second moment {target:.6e} is at or below PD² = {:.6e} \
                 (no excess dispersion); no interval for rho",
                m1 * m1
            ));
        }
        Ok(rho) => {
            let c = inv_cdf(m1);
            let phi2 = (-c * c / (1.0 + rho)).exp() / (2.0 * PI * (1.0 - rho * rho).sqrt());
            let dbvn_dm1 = 2.0 * cdf(c * ((1.0 - rho) / (1.0 + rho)).sqrt());
            let g1 = -(dbvn_dm1 - 2.0 * m1 * (1.0 - k)) / phi2;
            let g2 = k / phi2;
            let var = g1 * g1 * s11 + 2.0 * g1 * g2 * s12 + g2 * g2 * s22;
            e.set_rho(rho, Some(var.max(0.0).sqrt()));
        }
    }
    e.short_sample_note();
}

/// Mean and variance of the default rates matched to the Vasicek moments.
///
/// # Formula
/// ```text
/// PD = mean DR_t,   Phi2(G(PD), G(PD); rho) - PD² = Σ (DR_t - PD)² / D   (D = T or T - 1)
/// ```
/// Solved for rho by safeguarded Newton (d Phi2 / d rho = phi2, Plackett
/// 1954). Standard errors by the delta method from the sample covariance of
/// (DR_t, DR_t²). The rates are used as given: for small cohorts their
/// binomial noise inflates the variance (see [`joint_default_moments`]).
///
/// # References
/// Vasicek, "Loan portfolio value", Risk 15(12), 2002 (`E[X²] = Phi2(c, c; rho)`);
/// Gordy, "A comparative anatomy of credit risk models", JBF 24 (2000).
///
/// ```
/// use skewbook::input::history::History;
/// use skewbook::realworld::estimators::{moment_matching, VarianceDivisor};
/// // Equal rates: no dispersion, rho on the boundary 0, PD the rate.
/// let h = History::from_rates(&[0.02, 0.02, 0.02])?;
/// let e = moment_matching(&h, VarianceDivisor::T);
/// assert_eq!(e.rho, Some(0.0));
/// assert!((e.pd.unwrap_or(0.0) - 0.02).abs() < 1e-15);
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn moment_matching(h: &History, divisor: VarianceDivisor) -> Estimate {
    let mut e = Estimate::empty(Method::MomentMatching, Some(h));
    let x = h.rates();
    let y: Vec<f64> = x.iter().map(|r| r * r).collect();
    let t = x.len();
    e.notes
        .push(format!("variance divisor {}", divisor.label()));
    if h.counts().is_some() {
        e.notes.push(
            "rates d/n used as given: binomial noise of finite cohorts raises the variance"
                .to_string(),
        );
    }
    moment_fit(&mut e, &x, &y, t as f64 / divisor.value(t));
    e
}

/// Mean default rate and the finite-pool joint default probability matched
/// to the Vasicek moments (needs counts).
///
/// # Formula
/// ```text
/// PD = (1/T) Σ d_t / n_t,   pi2 = (1/T) Σ d_t (d_t - 1) / (n_t (n_t - 1))
/// Phi2(G(PD), G(PD); rho) = pi2
/// ```
/// pi2 is unbiased for the probability that two distinct obligors both
/// default, so it carries no binomial noise. Standard errors by the delta
/// method from the sample covariance of (d_t / n_t, d_t (d_t - 1) / (n_t (n_t - 1))).
/// Needs every cohort to have at least 2 obligors.
///
/// # References
/// Frey and McNeil, "Dependent defaults in models of portfolio credit risk",
/// Journal of Risk 6(1), 2003.
///
/// ```
/// use skewbook::input::history::History;
/// use skewbook::realworld::estimators::joint_default_moments;
/// // pi2 = PD²: independent defaults, rho = 0.
/// let h = History::from_counts(&[(1, 2), (1, 2), (1, 2), (1, 2)])?;
/// let e = joint_default_moments(&h);
/// assert_eq!(e.pd, Some(0.5));
/// assert_eq!(e.rho, Some(0.0));
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn joint_default_moments(h: &History) -> Estimate {
    let mut e = Estimate::empty(Method::JointDefaultMoments, Some(h));
    let Some(counts) = h.counts() else {
        e.notes
            .push("needs counts (defaults and obligors); the history has rates only".to_string());
        return e;
    };
    let small: Vec<&str> = h
        .periods
        .iter()
        .filter(|p| p.counts.is_some_and(|c| c.obligors < 2))
        .map(|p| p.label.as_str())
        .collect();
    if !small.is_empty() {
        e.notes.push(format!(
            "undefined: the joint default probability needs at least 2 obligors a period; \
             fewer in {}",
            small.join(", ")
        ));
        return e;
    }
    let x: Vec<f64> = counts.iter().map(|&(d, n)| d as f64 / n as f64).collect();
    let y: Vec<f64> = counts
        .iter()
        .map(|&(d, n)| {
            let (d, n) = (d as f64, n as f64);
            d * (d - 1.0) / (n * (n - 1.0))
        })
        .collect();
    moment_fit(&mut e, &x, &y, 1.0);
    e
}

// ---------------------------------------------------------------------------
// Binomial mixture likelihood
// ---------------------------------------------------------------------------

/// ln N(x), accurate in both tails.
fn ln_cdf(x: f64) -> f64 {
    if x > 0.0 {
        (-cdf(-x)).ln_1p()
    } else if x > -35.0 {
        cdf(x).ln()
    } else {
        // N(x) = phi(x) / (-x) (1 - 1/x² + 3/x⁴ - 15/x⁶ + ...)
        let u = 1.0 / (x * x);
        -0.5 * x * x - (-x).ln() - 0.5 * (2.0 * PI).ln()
            + (1.0 - u + 3.0 * u * u - 15.0 * u * u * u).ln()
    }
}

/// phi(x) / N(x).
fn mills(x: f64) -> f64 {
    if x > -35.0 {
        pdf(x) / cdf(x)
    } else {
        let u = 1.0 / (x * x);
        -x / (1.0 - u + 3.0 * u * u - 15.0 * u * u * u)
    }
}

/// The integrand's log: g(z) = d ln p(z) + (n - d) ln(1 - p(z)) - z² / 2.
struct Integrand {
    d: f64,
    nd: f64,
    c: f64,
    sr: f64,
    s1r: f64,
}

impl Integrand {
    fn new(d: u64, n: u64, c: f64, rho: f64) -> Self {
        Integrand {
            d: d as f64,
            nd: (n - d) as f64,
            c,
            sr: rho.sqrt(),
            s1r: (1.0 - rho).sqrt(),
        }
    }
    fn a(&self, z: f64) -> f64 {
        (self.c - self.sr * z) / self.s1r
    }
    fn g(&self, z: f64) -> f64 {
        let a = self.a(z);
        let mut v = -0.5 * z * z;
        if self.d > 0.0 {
            v += self.d * ln_cdf(a);
        }
        if self.nd > 0.0 {
            v += self.nd * ln_cdf(-a);
        }
        v
    }
    /// g'(z) and g''(z).
    fn derivs(&self, z: f64) -> (f64, f64) {
        let a = self.a(z);
        let b = self.sr / self.s1r;
        let (mut g1, mut g2) = (-z, -1.0);
        if self.d > 0.0 {
            let l = mills(a);
            g1 -= b * self.d * l;
            g2 += b * b * self.d * (-l * (a + l));
        }
        if self.nd > 0.0 {
            let l = mills(-a);
            g1 += b * self.nd * l;
            g2 += b * b * self.nd * (-l * (-a + l));
        }
        (g1, g2)
    }
    /// The mode of g (g is strictly concave) by safeguarded Newton.
    fn mode(&self) -> (f64, f64) {
        let (mut lo, mut hi) = (-1.0_f64, 1.0_f64);
        while self.derivs(lo).0 <= 0.0 && lo > -1e6 {
            lo *= 2.0;
        }
        while self.derivs(hi).0 >= 0.0 && hi < 1e6 {
            hi *= 2.0;
        }
        let mut z = 0.0_f64.clamp(lo, hi);
        for _ in 0..200 {
            let (g1, g2) = self.derivs(z);
            if g1 > 0.0 {
                lo = z;
            } else {
                hi = z;
            }
            let mut next = z - g1 / g2;
            if !(next > lo && next < hi && next.is_finite()) {
                next = 0.5 * (lo + hi);
            }
            if (next - z).abs() < 1e-13 * (1.0 + z.abs()) || hi - lo < 1e-13 {
                z = next;
                break;
            }
            z = next;
        }
        (z, self.derivs(z).1)
    }
}

/// Nodes of the Gauss-Legendre rule used on each side of the mode.
pub const MIXTURE_NODES: usize = 32;
/// The integration range ends where the integrand has dropped by e^-DROP.
const DROP: f64 = 42.0;

fn mixture_rule() -> &'static GaussLegendre {
    static RULE: OnceLock<GaussLegendre> = OnceLock::new();
    RULE.get_or_init(|| {
        GaussLegendre::new(NonZeroUsize::new(MIXTURE_NODES).unwrap_or(NonZeroUsize::MIN))
    })
}

/// Distance from the mode, in direction `dir`, at which g has dropped by DROP.
fn reach(f: &Integrand, z0: f64, g0: f64, s: f64, dir: f64) -> f64 {
    let drop = |t: f64| g0 - f.g(z0 + dir * t);
    let mut hi = (2.0 * DROP).sqrt() * s;
    let mut lo = 0.0;
    while drop(hi) < DROP && hi < 1e3 {
        lo = hi;
        hi *= 2.0;
    }
    for _ in 0..10 {
        let mid = 0.5 * (lo + hi);
        if drop(mid) < DROP {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    hi
}

/// ln of the probability of d defaults among n obligors, binomial given the
/// factor, mixed over the factor.
///
/// # Formula
/// ```text
/// P(d | n) = C(n, d) ∫ p(z)^d (1 - p(z))^(n-d) phi(z) dz,
/// p(z) = N((G(PD) - sqrt(rho) z) / sqrt(1 - rho))
/// ```
///
/// # The integrand is sharply peaked for large cohorts
/// Its width is about 1 / sqrt(n) in z, so a fixed Gauss-Hermite rule
/// misses it. The log-integrand is strictly concave: the code finds its mode
/// by Newton, walks out on each side to where the integrand has fallen by
/// e^-42, and integrates each side with a 32-node Gauss-Legendre rule, in
/// logs (no underflow for thousands of obligors).
///
/// # References
/// Gordy and Heitfield, "Estimating default correlations from short panels
/// of credit rating performance data" (2002), the binomial-mixture likelihood.
///
/// ```
/// use skewbook::realworld::estimators::ln_mixture_probability;
/// // One obligor: P(default) = PD whatever rho.
/// let lp = ln_mixture_probability(1, 1, 0.03, 0.4);
/// assert!((lp.exp() - 0.03).abs() < 1e-12);
/// ```
pub fn ln_mixture_probability(d: u64, n: u64, pd: f64, rho: f64) -> f64 {
    ln_binom(n, d) + ln_mixture_integral(d, n, inv_cdf(pd), rho)
}

fn ln_binom(n: u64, d: u64) -> f64 {
    use statrs::function::gamma::ln_gamma;
    ln_gamma(n as f64 + 1.0) - ln_gamma(d as f64 + 1.0) - ln_gamma((n - d) as f64 + 1.0)
}

/// ln ∫ p^d (1-p)^(n-d) phi(z) dz, without the binomial coefficient.
fn ln_mixture_integral(d: u64, n: u64, c: f64, rho: f64) -> f64 {
    let f = Integrand::new(d, n, c, rho);
    let (z0, g2) = f.mode();
    let g0 = f.g(z0);
    let s = 1.0 / (-g2).max(1e-12).sqrt();
    let left = reach(&f, z0, g0, s, -1.0);
    let right = reach(&f, z0, g0, s, 1.0);
    let q = mixture_rule();
    let mut sum = q.integrate(z0 - left, z0, |z| (f.g(z) - g0).exp());
    sum += q.integrate(z0, z0 + right, |z| (f.g(z) - g0).exp());
    g0 + sum.ln() - 0.5 * (2.0 * PI).ln()
}

/// Distinct (d, n) cohorts with multiplicities.
fn cohorts(counts: &[(u64, u64)]) -> Vec<((u64, u64), f64)> {
    let mut v: Vec<(u64, u64)> = counts.to_vec();
    v.sort_unstable();
    let mut out: Vec<((u64, u64), f64)> = Vec::new();
    for p in v {
        match out.last_mut() {
            Some((q, m)) if *q == p => *m += 1.0,
            _ => out.push((p, 1.0)),
        }
    }
    out
}

/// Log-likelihood of the binomial mixture (binomial coefficients included).
///
/// # Formula
/// ```text
/// ln L(PD, rho) = Σ_t ln P(d_t | n_t)      (see [`ln_mixture_probability`])
/// ```
///
/// # References
/// Gordy and Heitfield (2002).
///
/// ```
/// use skewbook::realworld::estimators::binomial_log_likelihood;
/// // rho -> 0: independent binomials, ln L = Σ ln(C(n,d) PD^d (1-PD)^(n-d)).
/// let l = binomial_log_likelihood(&[(1, 10), (0, 10), (2, 10)], 0.1, 1e-14);
/// let want = (10.0 * 0.1 * 0.9f64.powi(9)).ln() + 0.9f64.powi(10).ln() + (45.0 * 0.01 * 0.9f64.powi(8)).ln();
/// assert!((l - want).abs() < 1e-9);
/// ```
pub fn binomial_log_likelihood(counts: &[(u64, u64)], pd: f64, rho: f64) -> f64 {
    let c = inv_cdf(pd);
    cohorts(counts)
        .iter()
        .map(|&((d, n), m)| m * (ln_binom(n, d) + ln_mixture_integral(d, n, c, rho)))
        .sum()
}

/// Log-likelihood in the transformed parameters theta = (G(PD), logit(rho)).
fn ll_theta(coh: &[((u64, u64), f64)], th: [f64; 2]) -> f64 {
    let rho = 1.0 / (1.0 + (-th[1]).exp());
    coh.iter()
        .map(|&((d, n), m)| m * ln_mixture_integral(d, n, th[0], rho))
        .sum()
}

const FD_STEP: f64 = 1e-4;
const ETA_MIN: f64 = -16.0;
const ETA_MAX: f64 = 12.0;

/// Gradient and Hessian by central differences.
fn grad_hess(f: &dyn Fn([f64; 2]) -> f64, x: [f64; 2]) -> (f64, [f64; 2], [[f64; 2]; 2]) {
    let h = FD_STEP;
    let f0 = f(x);
    let fp0 = f([x[0] + h, x[1]]);
    let fm0 = f([x[0] - h, x[1]]);
    let f0p = f([x[0], x[1] + h]);
    let f0m = f([x[0], x[1] - h]);
    let fpp = f([x[0] + h, x[1] + h]);
    let fmm = f([x[0] - h, x[1] - h]);
    let g = [(fp0 - fm0) / (2.0 * h), (f0p - f0m) / (2.0 * h)];
    let h11 = (fp0 - 2.0 * f0 + fm0) / (h * h);
    let h22 = (f0p - 2.0 * f0 + f0m) / (h * h);
    let h12 = (fpp - fp0 - f0p + 2.0 * f0 - fm0 - f0m + fmm) / (2.0 * h * h);
    (f0, g, [[h11, h12], [h12, h22]])
}

/// Maximum likelihood of the binomial mixture over the factor (needs counts).
///
/// # Formula
/// ```text
/// (PD, rho) = argmax Σ_t ln ∫ C(n_t, d_t) p(z)^d_t (1 - p(z))^(n_t - d_t) phi(z) dz
/// ```
/// maximised over theta = (G(PD), logit(rho)) by Newton's method with
/// finite-difference derivatives and a backtracking line search, started
/// from the joint-default moments. Standard errors from the observed
/// information in theta, carried to (PD, rho) by the chain rule. Zero-default
/// periods enter the likelihood like any other.
///
/// # References
/// Gordy and Heitfield, "Estimating default correlations from short panels
/// of credit rating performance data" (2002).
///
/// ```
/// use skewbook::input::history::History;
/// use skewbook::realworld::estimators::binomial_ml;
/// // Every cohort defaults at the same rate of 2 %: the fit sits at rho ≈ 0, PD = 2 %.
/// let h = History::from_counts(&[(2, 100), (2, 100), (2, 100), (2, 100)])?;
/// let e = binomial_ml(&h);
/// assert!((e.pd.unwrap_or(0.0) - 0.02).abs() < 1e-6);
/// assert!(e.rho.unwrap_or(1.0) < 1e-4);
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn binomial_ml(h: &History) -> Estimate {
    let mut e = Estimate::empty(Method::BinomialMl, Some(h));
    let Some(counts) = h.counts() else {
        e.notes
            .push("needs counts (defaults and obligors); the history has rates only".to_string());
        return e;
    };
    let total_d: u64 = counts.iter().map(|c| c.0).sum();
    let total_n: u64 = counts.iter().map(|c| c.1).sum();
    if total_d == 0 {
        e.notes.push(
            "undefined: no defaults in any period (the likelihood rises as PD -> 0)".to_string(),
        );
        return e;
    }
    if total_d == total_n {
        e.notes.push(
            "undefined: every obligor defaulted (the likelihood rises as PD -> 1)".to_string(),
        );
        return e;
    }
    /// A failed line search counts as converged only when a Newton step
    /// promises less than this gain in log-likelihood, or the gradient in
    /// (G(PD), logit rho) is below the second tolerance.
    const DECREMENT_TOLERANCE: f64 = 1e-8;
    const GRADIENT_TOLERANCE: f64 = 1e-5;
    let coh = cohorts(&counts);
    let f = |th: [f64; 2]| ll_theta(&coh, th);
    // Start: pooled PD and the joint-default rho, kept away from the boundaries.
    let pd0 = total_d as f64 / total_n as f64;
    let rho0 = joint_default_moments(h)
        .rho
        .unwrap_or(0.05)
        .clamp(0.01, 0.5);
    let mut x = [inv_cdf(pd0), (rho0 / (1.0 - rho0)).ln()];
    let mut converged = false;
    let mut iterations = 0;
    for it in 0..100 {
        iterations = it + 1;
        let (f0, g, hm) = grad_hess(&f, x);
        let det = hm[0][0] * hm[1][1] - hm[0][1] * hm[0][1];
        let newton = hm[0][0] < 0.0 && det > 0.0;
        let mut step = if newton {
            // Newton: step = -H^-1 g
            [
                -(hm[1][1] * g[0] - hm[0][1] * g[1]) / det,
                -(-hm[0][1] * g[0] + hm[0][0] * g[1]) / det,
            ]
        } else {
            // Not concave here: scaled gradient ascent.
            let s = 0.1 / (g[0].abs() + g[1].abs()).max(1e-12);
            [s * g[0], s * g[1]]
        };
        // Keep the step modest and inside the parameter box.
        let len = (step[0] * step[0] + step[1] * step[1]).sqrt();
        if len > 2.0 {
            step = [step[0] * 2.0 / len, step[1] * 2.0 / len];
        }
        let mut t = 1.0;
        let mut accepted = None;
        for _ in 0..40 {
            let cand = [
                x[0] + t * step[0],
                (x[1] + t * step[1]).clamp(ETA_MIN, ETA_MAX),
            ];
            if f(cand) >= f0 - 1e-12 {
                accepted = Some(cand);
                break;
            }
            t *= 0.5;
        }
        let Some(next) = accepted else {
            // No step improves the likelihood: a maximum only if the
            // quadratic model promises no gain (Newton decrement) or the
            // gradient is flat.
            let promised = 0.5 * (g[0] * step[0] + g[1] * step[1]).abs();
            converged = (newton && promised < DECREMENT_TOLERANCE)
                || g[0].abs().max(g[1].abs()) < GRADIENT_TOLERANCE;
            break;
        };
        let moved = ((next[0] - x[0]).powi(2) + (next[1] - x[1]).powi(2)).sqrt();
        x = next;
        if moved < 1e-10 || (x[1] <= ETA_MIN && g[1] < 0.0 && (g[0] * step[0]).abs() < 1e-12) {
            converged = true;
            break;
        }
    }
    let rho = 1.0 / (1.0 + (-x[1]).exp());
    let c = x[0];
    let (_, g, hm) = grad_hess(&f, x);
    // The step test can keep failing on finite-difference noise at the
    // optimum itself: a flat gradient there is convergence too.
    converged |= g[0].abs().max(g[1].abs()) < GRADIENT_TOLERANCE;
    if !converged {
        // Never report where a failed search happened to stop.
        e.notes.push(format!(
            "no estimate: the optimiser stopped after {iterations} iterations without converging \
             (gradient {:.2e}, {:.2e})",
            g[0], g[1]
        ));
        return e;
    }
    e.se_method = Some(SeMethod::ObservedInformation);
    if rho < RHO_BOUNDARY || x[1] <= ETA_MIN + 1.0 {
        // Boundary: the information in logit(rho) vanishes; PD's from the c-direction alone.
        let se_c = if hm[0][0] < 0.0 {
            (-1.0 / hm[0][0]).sqrt()
        } else {
            f64::NAN
        };
        e.set_pd(cdf(c), Some(pdf(c) * se_c));
        e.set_rho(0.0, None);
        e.notes.push(
            "fit on the boundary rho ≈ 0 (no excess dispersion); no standard error for rho"
                .to_string(),
        );
    } else {
        let det = hm[0][0] * hm[1][1] - hm[0][1] * hm[0][1];
        if hm[0][0] < 0.0 && det > 0.0 {
            let v11 = -hm[1][1] / det;
            let v22 = -hm[0][0] / det;
            e.set_pd(cdf(c), Some(pdf(c) * v11.sqrt()));
            e.set_rho(rho, Some(rho * (1.0 - rho) * v22.sqrt()));
        } else {
            // The likelihood is flat (or not concave) in rho here: the data
            // do not identify it, so report none rather than the start value.
            let se_c = (hm[0][0] < 0.0).then(|| (-1.0 / hm[0][0]).sqrt());
            e.set_pd(cdf(c), se_c.map(|s| pdf(c) * s));
            if se_c.is_none() {
                e.se_method = None;
            }
            e.notes.push(
                "no rho estimate: the observed information is not positive definite at the fit \
                 (the likelihood does not identify rho)"
                    .to_string(),
            );
        }
    }
    e.short_sample_note();
    e
}

/// PD and rho from two quantiles of the one-period default-rate distribution.
///
/// # Formula
/// See [`crate::realworld::vasicek::quantile_pair`]: exact inversion of
/// `x_q = N((c + sqrt(rho) G(q)) / sqrt(1 - rho))` at two levels. No sampling
/// error: no standard errors or intervals.
///
/// # Errors
/// [`crate::ErrorKind::Usage`] when the quantiles are not those of any
/// Vasicek distribution.
///
/// # References
/// Vasicek, "Loan portfolio value", Risk 15(12), 2002.
///
/// ```
/// use skewbook::realworld::estimators::quantile_pair;
/// let e = quantile_pair((0.5, 0.00657105077249435), (0.999, 0.0903258313260653))?;
/// assert!((e.rho.unwrap_or(0.0) - 0.12).abs() < 1e-8);
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn quantile_pair(first: (f64, f64), second: (f64, f64)) -> Result<Estimate> {
    let (pd, rho) = invert_quantile_pair(first, second)?;
    let mut e = Estimate::empty(Method::QuantilePair, None);
    e.pd = Some(pd);
    e.rho = Some(rho);
    e.notes.push(format!(
        "exact inversion of the quantiles {} at {} and {} at {}; no sampling error",
        first.1, first.0, second.1, second.0
    ));
    Ok(e)
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Brute-force reference: composite Gauss-Legendre, 4000 panels of 10
    /// nodes on [-14, 14] in z (280 points per unit of z), in logs.
    fn ln_integral_fine(d: u64, n: u64, c: f64, rho: f64) -> f64 {
        let f = Integrand::new(d, n, c, rho);
        let gl = GaussLegendre::new(NonZeroUsize::new(10).unwrap());
        let (a, b, panels) = (-14.0, 14.0, 4000);
        let w = (b - a) / panels as f64;
        let mut vals = Vec::new();
        for i in 0..panels {
            let lo = a + w * i as f64;
            for (x, wt) in gl.iter() {
                let z = lo + 0.5 * w * (x + 1.0);
                vals.push((f.g(z), 0.5 * w * wt));
            }
        }
        let gmax = vals.iter().map(|v| v.0).fold(f64::NEG_INFINITY, f64::max);
        let s: f64 = vals.iter().map(|(g, wt)| wt * (g - gmax).exp()).sum();
        gmax + s.ln() - 0.5 * (2.0 * PI).ln()
    }

    // Independent method: the adaptive split rule against a rule ~50x finer
    // on a fixed grid, over small and large cohorts, zero and all defaults.
    #[test]
    fn mixture_integral_agrees_with_much_finer_rule() {
        let cases = [
            (0, 50, 0.02, 0.1),
            (0, 5000, 0.01, 0.05),
            (3, 200, 0.01, 0.2),
            (40, 5000, 0.01, 0.02),
            (150, 1000, 0.05, 0.3),
            (12, 12, 0.3, 0.5),
            (1, 20000, 0.0005, 0.15),
            (900, 20000, 0.03, 0.01),
        ];
        for (d, n, pd, rho) in cases {
            let c = inv_cdf(pd);
            let got = ln_mixture_integral(d, n, c, rho);
            let want = ln_integral_fine(d, n, c, rho);
            assert!(
                (got - want).abs() < 1e-8,
                "d {d} n {n} pd {pd} rho {rho}: {got} vs {want}"
            );
        }
    }

    // Vasicek (2002): with divisor T the probit estimator is the maximum of
    // the exact likelihood of the rates, Σ ln f(DR_t; PD, rho). Check the
    // closed form against a direct numerical maximisation of that density.
    #[test]
    fn probit_closed_form_maximises_the_vasicek_likelihood() {
        use crate::realworld::vasicek::Vasicek;
        let rates = [
            0.012, 0.031, 0.008, 0.019, 0.054, 0.022, 0.015, 0.009, 0.027, 0.041,
        ];
        let h = History::from_rates(&rates).unwrap();
        let e = probit_moments(&h, VarianceDivisor::T);
        let (pd, rho) = (e.pd.unwrap(), e.rho.unwrap());
        let ll = |pd: f64, rho: f64| -> f64 {
            let v = Vasicek::new(pd, rho, 1.0).unwrap();
            rates.iter().map(|&x| v.density(x).ln()).sum()
        };
        // Newton on the density likelihood with finite differences, started
        // from the moment-matching estimate (another estimator).
        let f = |th: [f64; 2]| ll(cdf(th[0]), 1.0 / (1.0 + (-th[1]).exp()));
        let m = moment_matching(&h, VarianceDivisor::T);
        let (pd0, rho0) = (m.pd.unwrap(), m.rho.unwrap());
        assert!((rho0 - rho).abs() > 1e-3, "start away from the answer");
        let mut x = [inv_cdf(pd0), (rho0 / (1.0 - rho0)).ln()];
        for _ in 0..30 {
            let (_, g, hm) = grad_hess(&f, x);
            let det = hm[0][0] * hm[1][1] - hm[0][1] * hm[0][1];
            let step = [
                -(hm[1][1] * g[0] - hm[0][1] * g[1]) / det,
                -(-hm[0][1] * g[0] + hm[0][0] * g[1]) / det,
            ];
            x = [x[0] + step[0], x[1] + step[1]];
        }
        let (pd_n, rho_n) = (cdf(x[0]), 1.0 / (1.0 + (-x[1]).exp()));
        assert!((pd_n - pd).abs() < 1e-8, "{pd_n} vs {pd}");
        assert!((rho_n - rho).abs() < 1e-7, "{rho_n} vs {rho}");
    }

    // reference-values.md: se(rho) = rho (1 - rho) sqrt(2 / T) (delta method).
    #[test]
    fn probit_rho_standard_error_and_zero_periods() {
        let rates = [0.01, 0.02, 0.015, 0.03, 0.012];
        let e = probit_moments(&History::from_rates(&rates).unwrap(), VarianceDivisor::T);
        let r = e.rho.unwrap();
        assert!((e.rho_se.unwrap() - r * (1.0 - r) * (2.0f64 / 5.0).sqrt()).abs() < 1e-15);
        assert_eq!(e.se_method, Some(SeMethod::DeltaMethod));
        let ci = e.rho_ci.unwrap();
        assert!(ci[0] < r && r < ci[1]);
        let h = History::from_counts(&[(0, 100), (2, 100), (0, 90), (1, 80)]).unwrap();
        let e = probit_moments(&h, VarianceDivisor::T);
        assert!(e.pd.is_none() && e.rho.is_none());
        assert_eq!(e.zero_default_periods, 2);
        assert!(e.notes[0].contains("periods 1, 3"), "{:?}", e.notes);
    }

    // The T - 1 divisor scales v by T / (T - 1) (definition).
    #[test]
    fn divisor_option_changes_the_variance() {
        let rates = [0.01, 0.02, 0.015, 0.03, 0.012, 0.05];
        let h = History::from_rates(&rates).unwrap();
        let a = probit_moments(&h, VarianceDivisor::T).rho.unwrap();
        let b = probit_moments(&h, VarianceDivisor::TMinus1).rho.unwrap();
        let (va, vb) = (a / (1.0 - a), b / (1.0 - b));
        assert!((vb / va - 6.0 / 5.0).abs() < 1e-12);
        let m = moment_matching(&h, VarianceDivisor::TMinus1);
        assert!(m.notes.iter().any(|n| n.contains("T - 1")));
    }

    // Definition: the solved rho reproduces the moment equation through an
    // independent Phi2 evaluation (quadrature over the factor).
    #[test]
    fn moment_equation_holds_at_the_solution() {
        let rates = [0.012, 0.031, 0.008, 0.019, 0.054, 0.022, 0.015, 0.009];
        let h = History::from_rates(&rates).unwrap();
        let e = moment_matching(&h, VarianceDivisor::T);
        let (pd, rho) = (e.pd.unwrap(), e.rho.unwrap());
        let t = rates.len() as f64;
        let var = rates.iter().map(|r| (r - pd).powi(2)).sum::<f64>() / t;
        // E[p(Z)^2] by Gauss-Legendre over z in [-12, 12].
        let gl = GaussLegendre::new(NonZeroUsize::new(200).unwrap());
        let c = inv_cdf(pd);
        let ex2 = gl.integrate(-12.0, 12.0, |z| {
            cdf((c - rho.sqrt() * z) / (1.0 - rho).sqrt()).powi(2) * pdf(z)
        });
        assert!(
            (ex2 - pd * pd - var).abs() < 1e-12 * var.max(1e-6) / 1e-6,
            "{}",
            ex2 - pd * pd - var
        );
    }

    #[test]
    fn joint_moments_need_counts_and_two_obligors() {
        let h = History::from_rates(&[0.01, 0.02, 0.03]).unwrap();
        assert!(joint_default_moments(&h).pd.is_none());
        assert!(binomial_ml(&h).pd.is_none());
        let h = History::from_counts(&[(0, 1), (1, 5), (0, 5)]).unwrap();
        let e = joint_default_moments(&h);
        assert!(e.pd.is_none() && e.notes[0].contains("fewer in 1"));
    }

    #[test]
    fn no_defaults_at_all_is_said() {
        let h = History::from_counts(&[(0, 100), (0, 100), (0, 100)]).unwrap();
        for e in [
            moment_matching(&h, VarianceDivisor::T),
            joint_default_moments(&h),
            binomial_ml(&h),
        ] {
            assert!(e.pd.is_none(), "{e:?}");
            assert!(e.notes.iter().any(|n| n.contains("no defaults")));
        }
    }
}
