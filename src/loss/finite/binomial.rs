//! The binomial sums behind the conditional expectation: given `p`, the
//! default count `D` is binomial(n, p), and with `Y ~ binomial(n - 1, p)`
//!
//! ```text
//! f(p) = E[min(D u, cap) | p] = u n p C + cap (1 - C - (1 - p) b),
//! C = P(Y <= m - 2),  b = P(Y = m - 1),  m = ceil(cap / u)
//! ```
//!
//! `C` and `b` come from one pass of the recurrence
//! `P(Y = k + 1) = P(Y = k) (n - 1 - k) / (k + 1) · p / (1 - p)` from
//! `P(Y = 0) = (1 - p)^(n - 1)`, the ratios `(n - 1 - k) / (k + 1)` built
//! once per pool size, stopping early once the terms past the mode are
//! below 1e-18 of the sum. Where `(1 - p)^(n - 1)` would underflow (large
//! `n` or `p` near 1) the pass starts from `P(Y = m - 1)` in logarithms and
//! runs away from the mode, downwards for `C` below the mean or upwards
//! for `1 - C` above it.

use super::FinitePool;
use crate::loss::{Expectation, Horizon};
use crate::math::normal::{cdf as norm_cdf, pdf};

/// `(p, q) = (N(v), N(-v))`, the smaller one from its own tail and the
/// other as its complement, so that neither loses digits to `1 - x`.
#[inline]
pub(super) fn probabilities(v: f64) -> (f64, f64) {
    if v < 0.0 {
        let p = norm_cdf(v);
        (p, 1.0 - p)
    } else {
        let q = norm_cdf(-v);
        (1.0 - q, q)
    }
}

impl FinitePool {
    /// `(P(Y <= j - 1), P(Y = j))` for `Y ~ binomial(n - 1, p)`, `q = 1 - p`.
    #[inline]
    pub(super) fn binomial(&self, j: usize, p: f64, q: f64) -> (f64, f64) {
        let n1 = self.names - 1;
        if j > n1 {
            return (1.0, 0.0);
        }
        if p <= 0.0 {
            return (
                if j == 0 { 0.0 } else { 1.0 },
                if j == 0 { 1.0 } else { 0.0 },
            );
        }
        if q <= 0.0 {
            return (0.0, if j == n1 { 1.0 } else { 0.0 });
        }
        if q > self.q_floor {
            // forward from P(Y = 0), no logarithm needed when n1 is small
            let mut t = q.powi(n1 as i32);
            let ratio = p / q;
            // past the mode the terms only fall: check for an early stop there
            let mode = (((n1 as f64 + 1.0) * p) as usize).min(j);
            let mut sum = 0.0;
            for &r in &self.ratios[..mode] {
                sum += t;
                t *= r * ratio;
            }
            for &r in &self.ratios[mode..j] {
                sum += t;
                t *= r * ratio;
                if t < 1e-18 * sum {
                    return (sum, 0.0);
                }
            }
            return (sum, t);
        }
        self.binomial_from_logs(j, p, q)
    }

    /// [`Self::binomial`] starting at `P(Y = j)` in logarithms and summing
    /// away from the mode (no underflow for large pools).
    pub(super) fn binomial_from_logs(&self, j: usize, p: f64, q: f64) -> (f64, f64) {
        let n1 = self.names - 1;
        let at = (self.ln_choose[j] + j as f64 * p.ln() + (n1 - j) as f64 * q.ln()).exp();
        let mean = n1 as f64 * p;
        if (j as f64) <= mean {
            // P(Y <= j - 1), terms falling downwards from j
            let mut t = at;
            let mut sum = 0.0;
            for k in (1..=j).rev() {
                t *= k as f64 / (n1 - k + 1) as f64 * (q / p);
                sum += t;
                if t < 1e-18 * sum || t == 0.0 {
                    break;
                }
            }
            (sum, at)
        } else {
            // 1 - P(Y >= j), terms falling upwards from j
            let mut t = at;
            let mut upper = at;
            for k in j..n1 {
                t *= (n1 - k) as f64 / (k + 1) as f64 * (p / q);
                upper += t;
                if t < 1e-18 * upper || t == 0.0 {
                    break;
                }
            }
            ((1.0 - upper).max(0.0), at)
        }
    }

    /// rho = 0: every name defaults independently with probability PD.
    pub(super) fn at_zero_correlation(
        &self,
        h: &Horizon,
        unit: f64,
        cap: f64,
        m: usize,
    ) -> Expectation {
        let nf = self.names as f64;
        let (p, q) = (h.pd, 1.0 - h.pd);
        let (cdf_below, at) = self.binomial(m - 1, p, q);
        let value = unit * nf * p * cdf_below + cap * (1.0 - cdf_below - q * at);
        // f''(p) = n (n - 1) [(cap - m u) P(W = m - 2) + ((m - 1) u - cap) P(W = m - 1)],
        // W ~ binomial(n - 2, p); d/drho at 0 = f''(PD) phi(c)^2 / 2.
        let drho = if self.names >= 2 {
            let n2 = self.names - 2;
            let pmf = |k: isize| -> f64 {
                if k < 0 || k as usize > n2 {
                    return 0.0;
                }
                let k = k as usize;
                let lg = |x: usize| libm::lgamma(x as f64 + 1.0);
                (lg(n2) - lg(k) - lg(n2 - k) + k as f64 * p.ln() + (n2 - k) as f64 * q.ln()).exp()
            };
            let mi = m as isize;
            let second = nf
                * (nf - 1.0)
                * ((cap - m as f64 * unit) * pmf(mi - 2)
                    + ((m - 1) as f64 * unit - cap) * pmf(mi - 1));
            0.5 * second * pdf(h.c).powi(2)
        } else {
            0.0
        };
        Expectation { value, drho }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// `P(Y <= j - 1)` and `P(Y = j)` by a direct sum of
    /// `exp(ln C(n1, k) + k ln p + (n1 - k) ln q)`: the recurrence, its
    /// early stop and the logarithmic start against the textbook formula.
    #[test]
    fn binomial_sums_against_direct_terms() {
        for (names, p) in [
            (2usize, 0.3),
            (125, 0.05),
            (125, 0.6),
            (125, 0.999),
            (10_000, 0.3),
            (10_000, 1e-5),
        ] {
            let pool = FinitePool::new(names).unwrap();
            let n1 = names - 1;
            let lg = |x: usize| libm::lgamma(x as f64 + 1.0);
            let term = |k: usize| {
                (lg(n1) - lg(k) - lg(n1 - k)
                    + k as f64 * f64::ln(p)
                    + (n1 - k) as f64 * f64::ln(1.0 - p))
                .exp()
            };
            // ln C(n1, k) from lgamma carries about 1e-16 * n1 of absolute
            // error in the exponent, so the terms themselves are only good
            // to a few 1e-12 at 10,000 names
            let tol = if names > 1000 { 5e-11 } else { 1e-13 };
            for j in [0, 1, n1 / 7, n1 / 3, n1 / 2, n1] {
                let below: f64 = (0..j).map(term).sum();
                let (c, b) = pool.binomial(j, p, 1.0 - p);
                assert!((c - below).abs() < tol, "{names} {p} {j}: {c} vs {below}");
                assert!(
                    (b - term(j)).abs() < tol,
                    "{names} {p} {j}: {b} vs {}",
                    term(j)
                );
                let (c, b) = pool.binomial_from_logs(j, p, 1.0 - p);
                assert!((c - below).abs() < tol && (b - term(j)).abs() < tol);
            }
        }
    }
}
