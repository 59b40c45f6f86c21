//! Basel II IRB capital for corporate exposures, a labelled reference figure.

use crate::error::significant;
use crate::error::{Error, ErrorKind, Result};
use crate::math::normal::{cdf, inv_cdf};
use serde::Serialize;

/// The supervisory 99.9 % confidence level of the IRB formula.
pub const IRB_CONFIDENCE: f64 = 0.999;

/// Basel II's PD floor for corporate exposures (0.03 %); reported, not applied.
pub const CORPORATE_PD_FLOOR: f64 = 0.0003;

/// The IRB capital figure and its intermediates.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct IrbCapital {
    /// PD, a fraction.
    pub pd: f64,
    /// LGD, a fraction.
    pub lgd: f64,
    /// Effective maturity M in years.
    pub maturity: f64,
    /// Annual turnover in millions for the SME adjustment, clipped to [5, 50]; `None` without it.
    pub turnover_m: Option<f64>,
    /// Supervisory asset correlation R.
    pub correlation: f64,
    /// Maturity adjustment b.
    pub maturity_slope: f64,
    /// Capital requirement K per unit exposure, floored at 0.
    pub capital: f64,
    /// Whether the formula gave a negative K that the floor set to 0.
    pub floored: bool,
    /// Risk weight 12.5 K, a fraction of exposure (0.9232 for 92.32 %).
    pub risk_weight: f64,
}

/// Basel II IRB capital requirement for a corporate exposure.
///
/// # Formula
/// ```text
/// w = (1 - exp(-50 PD)) / (1 - exp(-50))
/// R = 0.12 w + 0.24 (1 - w)        [SME: R -= 0.04 (1 - (S - 5) / 45), S in [5, 50]]
/// b = (0.11852 - 0.05478 ln PD)²
/// K = max(0, [LGD N((G(PD) + sqrt(R) G(0.999)) / sqrt(1 - R)) - PD LGD] (1 + (M - 2.5) b) / (1 - 1.5 b))
/// RW = 12.5 K
/// ```
///
/// # The floor at zero
/// Basel II (June 2006 comprehensive version), a footnote to paragraph 272
/// (from memory): if the calculation gives a negative capital charge, a zero
/// charge applies. The footnote speaks of sovereign exposures, which use this
/// same formula; flooring every exposure of the formula at zero is common
/// practice. A negative K needs `1 - 1.5 b < 0`, that is a PD below about
/// 0.0003 %, far under the corporate PD floor of 0.03 %; near that PD the
/// maturity adjustment `1 / (1 - 1.5 b)` is singular and the figure has no
/// meaning (the `loss` report says so).
///
/// # Errors
/// [`ErrorKind::Usage`] when PD is not in (0, 1), LGD not in (0, 1], M not
/// in [1, 5] years, or the turnover not positive.
///
/// # References
/// Basel Committee on Banking Supervision, "An Explanatory Note on the Basel
/// II IRB Risk Weight Functions" (2005); Basel II text (2004/2006),
/// paragraphs 272-273 and Annex 5.
///
/// ```
/// use skewbook::realworld::irb::irb_corporate;
/// // Basel II Annex 5: PD 1 %, LGD 45 %, M 2.5 -> risk weight 92.32 %.
/// let k = irb_corporate(0.01, 0.45, 2.5, None)?;
/// assert!((k.risk_weight - 0.9232).abs() < 1e-4);
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn irb_corporate(
    pd: f64,
    lgd: f64,
    maturity: f64,
    turnover_m: Option<f64>,
) -> Result<IrbCapital> {
    if !(pd.is_finite() && pd > 0.0 && pd < 1.0) {
        return Err(Error::msg(
            ErrorKind::Usage,
            format!(
                "IRB PD: expected a fraction strictly between 0 and 1, found {}",
                significant(pd, 6)
            ),
        ));
    }
    if !(lgd.is_finite() && lgd > 0.0 && lgd <= 1.0) {
        return Err(Error::msg(
            ErrorKind::Usage,
            format!(
                "IRB LGD: expected a fraction in (0, 1], found {}",
                significant(lgd, 6)
            ),
        ));
    }
    // Basel II floors the effective maturity at one year and caps it at
    // five (para. 320; from memory): outside that the formula is not the rule.
    if !(1.0..=5.0).contains(&maturity) {
        return Err(Error::msg(
            ErrorKind::Usage,
            format!(
                "IRB maturity: expected years from 1 to 5 (the Basel II floor and cap), found {}",
                significant(maturity, 6)
            ),
        ));
    }
    if let Some(s) = turnover_m {
        if !(s.is_finite() && s > 0.0) {
            return Err(Error::msg(
                ErrorKind::Usage,
                format!(
                    "IRB turnover: expected a positive amount in millions, found {}",
                    significant(s, 6)
                ),
            ));
        }
    }
    let w = (-(50.0 * pd)).exp_m1() / (-50.0f64).exp_m1();
    let mut r = 0.12 * w + 0.24 * (1.0 - w);
    let turnover_m = turnover_m.map(|s| s.clamp(5.0, 50.0));
    if let Some(s) = turnover_m {
        r -= 0.04 * (1.0 - (s - 5.0) / 45.0);
    }
    let b = (0.11852 - 0.05478 * pd.ln()).powi(2);
    let stressed = cdf((inv_cdf(pd) + r.sqrt() * inv_cdf(IRB_CONFIDENCE)) / (1.0 - r).sqrt());
    let formula = (lgd * stressed - pd * lgd) * (1.0 + (maturity - 2.5) * b) / (1.0 - 1.5 * b);
    let floored = formula < 0.0;
    let k = formula.max(0.0);
    Ok(IrbCapital {
        pd,
        lgd,
        maturity,
        turnover_m,
        correlation: r,
        maturity_slope: b,
        capital: k,
        floored,
        risk_weight: 12.5 * k,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    // Basel II text, Annex 5 (illustrative risk weights, corporate, LGD 45 %,
    // M 2.5). The table is rounded to 0.01 pp; seven cells differ from the
    // exact formula by up to 0.006 pp, hence the 0.01 pp tolerance.
    #[test]
    fn annex5_corporate_risk_weights() {
        for (pd, rw_pct) in [
            (0.0003, 14.44),
            (0.001, 29.65),
            (0.005, 69.61),
            (0.01, 92.32),
            (0.02, 114.86),
            (0.03, 128.44),
        ] {
            let k = irb_corporate(pd, 0.45, 2.5, None).unwrap();
            assert!(
                (k.risk_weight * 100.0 - rw_pct).abs() < 0.01,
                "PD {pd}: {}",
                k.risk_weight
            );
        }
    }

    // Basel II text, Annex 5: SME with turnover 5 (million), PD 1 %: 72.40 %.
    #[test]
    fn annex5_sme_turnover_5() {
        let k = irb_corporate(0.01, 0.45, 2.5, Some(5.0)).unwrap();
        assert!((k.risk_weight * 100.0 - 72.40).abs() < 0.01);
    }

    // High-precision intermediates at PD 1 % (mpmath, reference-values.md [hp]).
    #[test]
    fn intermediates_at_one_percent() {
        let k = irb_corporate(0.01, 0.45, 2.5, None).unwrap();
        assert!((k.correlation - 0.19278368).abs() < 5e-9);
        assert!((k.maturity_slope - 0.13748613).abs() < 5e-9);
        assert!((k.capital - 0.07385344).abs() < 5e-9);
        assert!((k.risk_weight - 0.92316801).abs() < 5e-9);
    }

    // The footnote to Basel II para. 272 (see `irb_corporate`): a negative
    // charge becomes zero. At PD 1e-8, b = (0.11852 + 0.05478 ln 1e8)² =
    // 1.2715 (by hand) > 2/3, so 1 - 1.5 b < 0 while the bracket LGD (N(..) -
    // PD) is positive (the 99.9 % quantile is above the mean): at M = 2.5 the
    // formula is negative. At M = 1 the maturity factor (1 - 1.5 b) / (1 -
    // 1.5 b) is exactly 1, so K is the bracket itself: the Vasicek 99.9 %
    // default-rate quantile at rho = R minus PD (an identity of the formula,
    // evaluated through `vasicek`).
    #[test]
    fn negative_capital_is_floored_at_zero() {
        let k = irb_corporate(1e-8, 1.0, 2.5, None).unwrap();
        assert!(k.floored);
        assert!((k.maturity_slope - 1.2715).abs() < 1e-4);
        assert_eq!((k.capital, k.risk_weight), (0.0, 0.0));
        let k = irb_corporate(1e-8, 1.0, 1.0, None).unwrap();
        assert!(!k.floored);
        let v = crate::realworld::vasicek::Vasicek::new(1e-8, k.correlation, 1.0).unwrap();
        let bracket = v.quantile(IRB_CONFIDENCE).unwrap() - 1e-8;
        assert!(bracket > 0.0);
        assert!(
            (k.capital - bracket).abs() < 1e-9 * bracket,
            "{}",
            k.capital
        );
        assert!(!irb_corporate(0.01, 0.45, 2.5, None).unwrap().floored);
    }

    #[test]
    fn bad_inputs_are_errors() {
        assert!(irb_corporate(0.0, 0.45, 2.5, None).is_err());
        assert!(irb_corporate(0.01, 0.0, 2.5, None).is_err());
        assert!(irb_corporate(0.01, 0.45, 0.0, None).is_err());
        assert!(irb_corporate(0.01, 0.45, 2.5, Some(-1.0)).is_err());
    }
}
