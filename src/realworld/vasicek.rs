//! The Vasicek large-pool default-rate (and loss) distribution.
//!
//! In the one-factor Gaussian model with default probability `pd` and asset
//! correlation `rho`, the default rate of an infinitely granular pool over one
//! period is `X = N((c - sqrt(rho) Z) / sqrt(1 - rho))`, `c = G(pd)`,
//! `Z ~ N(0, 1)`; the loss fraction is `LGD · X`.

use crate::error::significant;
use crate::error::{Error, ErrorKind, Result};
use crate::math::bvn::bvn_cdf;
use crate::math::normal::{cdf, inv_cdf};
use serde::Serialize;

/// A checked Vasicek distribution: `pd` and `rho` in (0, 1), `lgd` in (0, 1].
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Vasicek {
    /// One-period default probability, a fraction in (0, 1).
    pub pd: f64,
    /// Asset correlation, a fraction in (0, 1).
    pub rho: f64,
    /// Loss given default, a fraction in (0, 1]; losses are `lgd` times the default rate.
    pub lgd: f64,
}

fn check_open_unit(name: &str, x: f64) -> Result<()> {
    if x.is_finite() && x > 0.0 && x < 1.0 {
        Ok(())
    } else {
        Err(Error::msg(
            ErrorKind::Usage,
            format!(
                "{name}: expected a fraction strictly between 0 and 1, found {}",
                significant(x, 6)
            ),
        ))
    }
}

impl Vasicek {
    /// A distribution with these parameters.
    ///
    /// # Errors
    /// [`ErrorKind::Usage`] when `pd` or `rho` is not in (0, 1) or `lgd` not in (0, 1].
    ///
    /// ```
    /// use skewbook::realworld::vasicek::Vasicek;
    /// let v = Vasicek::new(0.01, 0.12, 1.0)?;
    /// assert_eq!(v.pd, 0.01);
    /// assert!(Vasicek::new(0.0, 0.12, 1.0).is_err());
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    pub fn new(pd: f64, rho: f64, lgd: f64) -> Result<Self> {
        check_open_unit("PD", pd)?;
        check_open_unit("correlation", rho)?;
        if !(lgd.is_finite() && lgd > 0.0 && lgd <= 1.0) {
            return Err(Error::msg(
                ErrorKind::Usage,
                format!(
                    "LGD: expected a fraction in (0, 1], found {}",
                    significant(lgd, 6)
                ),
            ));
        }
        Ok(Vasicek { pd, rho, lgd })
    }

    /// The default threshold c = G(pd).
    pub fn threshold(&self) -> f64 {
        inv_cdf(self.pd)
    }

    /// P(loss <= y) for a loss fraction y.
    ///
    /// # Formula
    /// ```text
    /// P(L <= y) = N((sqrt(1 - rho) G(y / LGD) - c) / sqrt(rho)),   0 < y < LGD
    /// ```
    /// 0 below 0, 1 at and above LGD.
    ///
    /// # References
    /// Vasicek, "Loan portfolio value", Risk 15(12), 2002.
    ///
    /// ```
    /// use skewbook::realworld::vasicek::Vasicek;
    /// // The median default rate is N(c / sqrt(1 - rho)).
    /// let v = Vasicek::new(0.02, 0.1, 1.0)?;
    /// let median = skewbook::math::normal::cdf(v.threshold() / 0.9f64.sqrt());
    /// assert!((v.cdf(median) - 0.5).abs() < 1e-9);
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    pub fn cdf(&self, y: f64) -> f64 {
        let x = y / self.lgd;
        if x <= 0.0 {
            return 0.0;
        }
        if x >= 1.0 {
            return 1.0;
        }
        cdf(((1.0 - self.rho).sqrt() * inv_cdf(x) - self.threshold()) / self.rho.sqrt())
    }

    /// Density of the loss fraction at y in (0, LGD); 0 outside.
    ///
    /// # Formula
    /// ```text
    /// f(y) = (1 / LGD) sqrt((1 - rho) / rho)
    ///        · exp(G(x)² / 2 - (sqrt(1 - rho) G(x) - c)² / (2 rho)),   x = y / LGD
    /// ```
    /// evaluated as the exponential of its logarithm, so that a tiny rho
    /// gives 0 or a large number and never 0 · inf = NaN. The density is
    /// never NaN; it is `+inf` only where the true value exceeds the largest
    /// double (y within about 1e-300 of 0, or rho within about 1e-300 of 0,
    /// where the distribution is nearly a point mass).
    ///
    /// # References
    /// Vasicek, "Loan portfolio value", Risk 15(12), 2002.
    ///
    /// ```
    /// use skewbook::realworld::vasicek::Vasicek;
    /// // rho = 1/2, pd = 1/2 (c = 0): f(1/2) = 1.
    /// let v = Vasicek::new(0.5, 0.5, 1.0)?;
    /// assert!((v.density(0.5) - 1.0).abs() < 1e-15);
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    pub fn density(&self, y: f64) -> f64 {
        let x = y / self.lgd;
        if !(x > 0.0 && x < 1.0) {
            return 0.0;
        }
        let g = inv_cdf(x);
        if !g.is_finite() {
            return 0.0;
        }
        let e = (1.0 - self.rho).sqrt() * g - self.threshold();
        let ln_f = 0.5 * ((-self.rho).ln_1p() - self.rho.ln()) + 0.5 * g * g
            - e * e / (2.0 * self.rho)
            - self.lgd.ln();
        if ln_f.is_nan() {
            return 0.0;
        }
        ln_f.exp()
    }

    /// Loss quantile at level q in (0, 1).
    ///
    /// # Formula
    /// ```text
    /// y_q = LGD · N((c + sqrt(rho) G(q)) / sqrt(1 - rho))
    /// ```
    ///
    /// # Errors
    /// [`ErrorKind::Usage`] when q is not in (0, 1).
    ///
    /// # References
    /// Vasicek, "Loan portfolio value", Risk 15(12), 2002; Hull, Risk
    /// Management and Financial Institutions, 2nd ed. (2009), worst-case
    /// default rate.
    ///
    /// ```
    /// use skewbook::realworld::vasicek::Vasicek;
    /// // Worked example: PD 2 %, rho 0.1: 99.9 % worst-case default rate 12.8 %.
    /// let v = Vasicek::new(0.02, 0.1, 1.0)?;
    /// assert!((v.quantile(0.999)? - 0.128).abs() < 5e-4);
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    pub fn quantile(&self, q: f64) -> Result<f64> {
        check_open_unit("level", q)?;
        Ok(self.lgd
            * cdf((self.threshold() + self.rho.sqrt() * inv_cdf(q)) / (1.0 - self.rho).sqrt()))
    }

    /// Expected shortfall of the loss at level q: E[L | L >= y_q].
    ///
    /// # Formula
    /// ```text
    /// ES_q = LGD · Phi2(c, -G(q); sqrt(rho)) / (1 - q)
    /// ```
    ///
    /// # Errors
    /// [`ErrorKind::Usage`] when q is not in (0, 1).
    ///
    /// # References
    /// Follows from the Vasicek distribution: the default rate exceeds its
    /// q-quantile exactly when Z <= -G(q), and E[X; Z <= z] = Phi2(c, z; sqrt(rho)).
    ///
    /// ```
    /// use skewbook::realworld::vasicek::Vasicek;
    /// // At q -> 0 the expected shortfall is the mean, PD · LGD.
    /// let v = Vasicek::new(0.03, 0.2, 0.6)?;
    /// assert!((v.expected_shortfall(1e-12)? - 0.018).abs() < 1e-10);
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    pub fn expected_shortfall(&self, q: f64) -> Result<f64> {
        check_open_unit("level", q)?;
        Ok(self.lgd * bvn_cdf(self.threshold(), -inv_cdf(q), self.rho.sqrt()) / (1.0 - q))
    }

    /// Mean loss, PD · LGD.
    pub fn mean(&self) -> f64 {
        self.pd * self.lgd
    }

    /// Standard deviation of the loss.
    ///
    /// # Formula
    /// ```text
    /// Var L = LGD² (Phi2(c, c; rho) - PD²)
    /// ```
    ///
    /// # References
    /// Vasicek, "Loan portfolio value", Risk 15(12), 2002.
    ///
    /// ```
    /// use skewbook::realworld::vasicek::Vasicek;
    /// // rho -> 0: no dispersion.
    /// let v = Vasicek::new(0.05, 1e-12, 1.0)?;
    /// assert!(v.std_dev() < 1e-6);
    /// # Ok::<(), skewbook::Error>(())
    /// ```
    pub fn std_dev(&self) -> f64 {
        let c = self.threshold();
        let var = bvn_cdf(c, c, self.rho) - self.pd * self.pd;
        self.lgd * var.max(0.0).sqrt()
    }
}

/// PD and correlation from two quantiles of the default-rate (or loss)
/// distribution: the exact inversion of the Vasicek quantile formula.
///
/// Inputs are pairs (level q_i, value x_i) of the *default rate*; for a loss
/// divide the loss by LGD first.
///
/// # Formula
/// ```text
/// r   = (G(x2) - G(x1)) / (G(q2) - G(q1))      (= sqrt(rho / (1 - rho)))
/// rho = r² / (1 + r²)
/// c   = sqrt(1 - rho) G(x1) - sqrt(rho) G(q1),   PD = N(c)
/// ```
///
/// # Errors
/// [`ErrorKind::Usage`] when a level or value is not in (0, 1), the levels
/// are equal, or the values do not increase with the level (no Vasicek
/// distribution has such quantiles).
///
/// # References
/// Vasicek, "Loan portfolio value", Risk 15(12), 2002 (the quantile formula
/// inverted at two levels).
///
/// ```
/// use skewbook::realworld::vasicek::{quantile_pair, Vasicek};
/// let v = Vasicek::new(0.01, 0.12, 1.0)?;
/// let (pd, rho) = quantile_pair((0.5, v.quantile(0.5)?), (0.999, v.quantile(0.999)?))?;
/// assert!((pd - 0.01).abs() < 1e-9 && (rho - 0.12).abs() < 1e-9);
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn quantile_pair(first: (f64, f64), second: (f64, f64)) -> Result<(f64, f64)> {
    for (q, x) in [first, second] {
        check_open_unit("quantile level", q)?;
        check_open_unit("quantile value", x)?;
    }
    let ((q1, x1), (q2, x2)) = if first.0 <= second.0 {
        (first, second)
    } else {
        (second, first)
    };
    if q1 == q2 {
        return Err(Error::msg(
            ErrorKind::Usage,
            format!(
                "quantile pair: expected two different levels, found {} twice",
                significant(q1, 6)
            ),
        ));
    }
    if x2 <= x1 {
        return Err(Error::msg(
            ErrorKind::Usage,
            format!(
                "quantile pair: expected the value at level {} ({}) above the value at \
                 level {} ({}); no Vasicek distribution has these quantiles",
                significant(q2, 6),
                significant(x2, 6),
                significant(q1, 6),
                significant(x1, 6)
            ),
        ));
    }
    let r = (inv_cdf(x2) - inv_cdf(x1)) / (inv_cdf(q2) - inv_cdf(q1));
    let rho = r * r / (1.0 + r * r);
    let c = (1.0 - rho).sqrt() * inv_cdf(x1) - rho.sqrt() * inv_cdf(q1);
    Ok((cdf(c), rho))
}

#[cfg(test)]
mod tests {
    use super::*;
    use gauss_quad::legendre::GaussLegendre;

    /// Relative accuracy of the crate's normal CDF today: statrs 0.18's
    /// `erfc` is good to about 1e-10 relative (measured against mpmath on a
    /// grid from -10 to 10), so checks of closed forms built on it use this
    /// relative tolerance; tighten once the normal CDF is full precision.
    const CDF_REL: f64 = 1e-11;

    fn close(got: f64, want: f64, rel: f64) -> bool {
        (got - want).abs() <= rel * want.abs()
    }

    // Hull, Risk Management and Financial Institutions, 2nd ed. (2009),
    // Table 11.4 (99.9 % worst-case default rate); the extra digits are the
    // [hp] values of reference-values.md.
    #[test]
    fn hull_worst_case_default_rate_table() {
        let pds = [0.001, 0.005, 0.01, 0.02];
        let table = [
            (0.2, [0.028075, 0.090979, 0.145525, 0.226313]),
            (0.4, [0.071282, 0.211214, 0.315565, 0.448990]),
            (0.6, [0.135374, 0.386674, 0.542394, 0.704533]),
        ];
        for (rho, row) in table {
            for (pd, want) in pds.iter().zip(row) {
                let got = Vasicek::new(*pd, rho, 1.0)
                    .unwrap()
                    .quantile(0.999)
                    .unwrap();
                assert!((got - want).abs() < 6e-7, "pd {pd} rho {rho}: {got}");
            }
        }
        // Worked example, same book: PD 2 %, rho 0.1 -> 0.128 (hp 0.12823710729942).
        let v = Vasicek::new(0.02, 0.1, 1.0).unwrap();
        assert!(close(v.quantile(0.999).unwrap(), 0.12823710729942, CDF_REL));
    }

    // [hp] Vasicek distribution table of reference-values.md (mpmath).
    #[test]
    fn high_precision_quantiles_second_moment_and_shortfall() {
        let rows = [
            (
                0.01,
                0.12,
                0.0903258313261,
                0.00657105077249,
                2.1709607968929e-4,
                0.109210355273,
            ),
            (
                0.02,
                0.10,
                0.128237107299,
                0.0151999152940,
                6.8798399411143e-4,
                0.149500491063,
            ),
            (
                0.05,
                0.30,
                0.522749631012,
                0.0246506849657,
                7.1346288078411e-3,
                0.592415644051,
            ),
        ];
        for (pd, rho, q999, median, ex2, es999) in rows {
            let v = Vasicek::new(pd, rho, 1.0).unwrap();
            // The table has 12-14 significant digits.
            assert!(close(v.quantile(0.999).unwrap(), q999, CDF_REL));
            assert!(close(v.quantile(0.5).unwrap(), median, CDF_REL));
            let sd = v.std_dev();
            assert!(close(sd * sd + pd * pd, ex2, CDF_REL));
            assert!(close(v.expected_shortfall(0.999).unwrap(), es999, CDF_REL));
        }
    }

    // The quantile formula inverts the CDF (Vasicek 2002), and LGD only scales.
    #[test]
    fn quantile_inverts_cdf() {
        for (pd, rho) in [(0.001, 0.05), (0.02, 0.2), (0.2, 0.6)] {
            let v = Vasicek::new(pd, rho, 0.45).unwrap();
            for q in [1e-6, 0.01, 0.3, 0.5, 0.9, 0.999, 0.99999] {
                let y = v.quantile(q).unwrap();
                assert!(close(v.cdf(y), q, 2.0 * CDF_REL), "{pd} {rho} {q}");
            }
        }
    }

    // Independent method: the density integrates to the CDF, the shortfall
    // integral of y f(y) over the tail matches the closed form.
    #[test]
    fn density_and_shortfall_against_quadrature() {
        let v = Vasicek::new(0.02, 0.15, 0.6).unwrap();
        // Integrate in u = G(x) (x = y / LGD) to remove the end singularities.
        let gl = GaussLegendre::new(std::num::NonZeroUsize::new(60).unwrap());
        let in_u = |f: &dyn Fn(f64) -> f64, a: f64, b: f64| {
            gl.integrate(a, b, |u| {
                let x = cdf(u);
                f(x * v.lgd) * crate::math::normal::pdf(u) * v.lgd
            })
        };
        let y = v.quantile(0.7).unwrap();
        let by_density = in_u(&|y| v.density(y), -12.0, inv_cdf(y / v.lgd));
        assert!((by_density - 0.7).abs() < 1e-11, "{by_density}");
        let q = 0.99;
        let yq = v.quantile(q).unwrap();
        let mut tail = 0.0;
        let (a, b) = (inv_cdf(yq / v.lgd), 3.0);
        for i in 0..8 {
            let lo = a + (b - a) * i as f64 / 8.0;
            let hi = a + (b - a) * (i + 1) as f64 / 8.0;
            tail += in_u(&|y| y * v.density(y), lo, hi);
        }
        let es = v.expected_shortfall(q).unwrap();
        assert!(
            (tail / (1.0 - q) - es).abs() < 1e-10,
            "{} vs {es}",
            tail / (1.0 - q)
        );
    }

    // reference-values.md [hp]: median 0.00657105077249435 and 99.9 %
    // quantile 0.0903258313260653 invert to rho = 0.12, PD = 0.01.
    #[test]
    fn quantile_pair_check_value() {
        let (pd, rho) =
            quantile_pair((0.5, 0.00657105077249435), (0.999, 0.0903258313260653)).unwrap();
        assert!(close(pd, 0.01, CDF_REL), "{pd}");
        assert!(close(rho, 0.12, CDF_REL), "{rho}");
        let (pd2, rho2) =
            quantile_pair((0.999, 0.0903258313260653), (0.5, 0.00657105077249435)).unwrap();
        assert_eq!((pd, rho), (pd2, rho2));
    }

    // The density's logarithm form against the plain formula where both are
    // representable, and never NaN at the edges (rho = 4.9e-324 gave
    // 0 · inf = NaN in the plain form).
    #[test]
    fn density_is_finite_or_infinite_never_nan() {
        let v = Vasicek::new(0.02, 0.15, 0.6).unwrap();
        for y in [1e-6, 0.001, 0.01, 0.1, 0.5] {
            let x = y / v.lgd;
            let g = inv_cdf(x);
            let e = (1.0 - v.rho).sqrt() * g - v.threshold();
            let plain = ((1.0 - v.rho) / v.rho).sqrt()
                * (0.5 * g * g - e * e / (2.0 * v.rho)).exp()
                / v.lgd;
            assert!(close(v.density(y), plain, 1e-12), "{y}");
        }
        for rho in [f64::from_bits(1), 1e-300, 1e-6, 0.5, 1.0 - 1e-16] {
            for pd in [1e-300, 1e-8, 0.3, 1.0 - 1e-16] {
                let v = Vasicek::new(pd, rho, 1.0).unwrap();
                for y in [f64::from_bits(1), 1e-300, 1e-8, pd, 0.5, 1.0 - 1e-16] {
                    let f = v.density(y);
                    assert!(!f.is_nan() && f >= 0.0, "pd {pd} rho {rho} y {y}: {f}");
                }
            }
        }
    }

    #[test]
    fn quantile_pair_rejects_impossible_inputs() {
        assert!(quantile_pair((0.5, 0.01), (0.5, 0.02)).is_err());
        assert!(quantile_pair((0.5, 0.02), (0.9, 0.01)).is_err());
        assert!(quantile_pair((0.5, 0.0), (0.9, 0.01)).is_err());
        assert!(quantile_pair((1.0, 0.1), (0.9, 0.01)).is_err());
    }
}
