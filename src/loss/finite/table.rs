//! The factor integral as a trapezoid sum over one table per base tranche.
//!
//! # What is tabulated
//!
//! In `v = (c - sqrt(rho) z) / sqrt(1 - rho)` (so `p = N(v)`) the factor
//! integral is a Gaussian average, `v ~ N(mu, sigma²)`,
//! `mu = c / sqrt(1 - rho)`, `sigma = sqrt(rho / (1 - rho))`, of one fixed
//! function `F(v) = f(N(v))`. The table holds the residual
//!
//! ```text
//! R(v) = F(v) - top N(v)        (top = cap: the cap binds at m <= n defaults)
//! ```
//!
//! on a uniform grid `v_i = -T_MAX + i δ`. `top N(v)` averages in closed
//! form, `E[N(v)] = N(mu / sqrt(1 + sigma²)) = N(c) = PD`, and `R` falls to
//! zero in both tails like the normal density (`R ≈ (n min(u, cap) - cap)
//! N(v)` on the left, `-cap N(-v)` on the right), below 1e-17 beyond
//! `|v| = T_MAX = 8.5`. `R` depends on the pool, the unit and the cap only:
//! one table serves every horizon and every correlation.
//!
//! # The rule: trapezoid sums, whose error falls faster than any power
//!
//! ```text
//! E[min(D u, cap)] = cap PD + Δ Σ_j R(v_j) phi(y_j) / sigma,        y_j = (v_j - mu) / sigma
//! d/drho           = Δ Σ_j R(v_j) phi(y_j) (mu' y_j + sigma' (y_j² - 1)) / sigma²,
//! mu' = c / (2 (1 - rho)^{3/2}),  sigma' = 1 / (2 sqrt(rho) (1 - rho)^{3/2})
//! ```
//!
//! over the nodes `v_j` a stride `s` apart in the table (`Δ = s δ`). The
//! integrand is smooth and negligible at both ends, where the trapezoid
//! rule's error is the aliasing of its Fourier transform at `2π / Δ`
//! (Poisson summation): it falls faster than any power of `Δ`, and the
//! sum needs neither panels nor breakpoints. Two scales set `Δ`:
//!
//! - `D_R`, the largest step at which `R` alone integrates exactly, is
//!   measured when the table is built: the sums over the `s` interleaved
//!   sub-grids of stride `s` (each a trapezoid rule for `∫ R dv` with a
//!   different offset) differ by about twice the aliasing error whatever
//!   the offset, so `D_R = s δ` for the largest `s` whose sums agree to
//!   [`SPREAD`] (about `σ_k`, the rounded kink's width
//!   `sqrt(k (1 - k) / n) / phi(G(k))`, and at most 0.2 to 0.6 for small
//!   pools, whose tails are steeper than the kink);
//! - the Gaussian's width `sigma`: `1 / Δ² = 1 / D_R² + (1.6 / sigma)²`.
//!
//! The sum runs from the node nearest `mu` outwards while `|y| <= 9` and
//! `|R| > 1e-18`. The Gaussian weights cost no exponential per node:
//! `phi(y0 + j h) = phi(y0) e^{-j h y0} e^{-j² h² / 2}`, `h = Δ / sigma`, the
//! last factor computed once per correlation for every horizon
//! ([`crate::math::exp::exp_in_place`]) and the middle one a geometric
//! progression. At 125 names a horizon then costs 80 to 110 nodes (the
//! 5-year mezzanine of `benches/pricing.rs`) of a few multiplications
//! each, in eight SIMD lanes.
//!
//! Below rho = 0.01 (`sigma < 0.1`) the narrow Gaussian would need a step
//! far below the table's, and [`FinitePool::expected_min_direct`] is used.

use super::binomial::probabilities;
use super::FinitePool;
use crate::loss::{Cap, Correlation, Expectation, Horizon};
use crate::math::exp::exp_in_place;
use crate::math::normal::{pdf, INV_SQRT_2PI};
use std::sync::OnceLock;

/// The table covers `v` in `[-T_MAX, T_MAX]`; beyond, `|R| < 1e-17`.
pub const T_MAX: f64 = 8.5;
/// Table step in units of the rounded kink's width in `v`.
const STEPS_PER_WIDTH: f64 = 8.0;
/// Largest table step.
const STEP_MAX: f64 = 0.05;
/// Most table points (a pool of millions of names).
const MAX_POINTS: usize = 1 << 22;
/// Largest stride measured for `D_R`.
const MAX_STRIDE: usize = 64;
/// The offset sums of `∫ R dv` must agree to this (absolute, pool units).
pub const SPREAD: f64 = 1e-12;
/// `1 / Δ² = 1 / D_R² + (GAUSS / sigma)²`.
const GAUSS: f64 = 1.6;
/// The sum stops where the Gaussian weight is below `phi(Y_MAX)`.
const Y_MAX: f64 = 9.0;
/// Table entries below this are left out of the sums.
const R_FLOOR: f64 = 1e-18;
/// Nodes summed together (independent accumulators the compiler can vectorise).
const LANES: usize = 8;

/// `R(v) = F(v) - cap N(v)` on a uniform grid in `v`, for one unit and cap.
#[derive(Debug, Clone, PartialEq)]
pub(super) struct Table {
    /// `(unit, cap)` bits.
    pub key: (u64, u64),
    cap: f64,
    /// Grid step `δ`.
    step: f64,
    /// `R(-T_MAX + i δ)`.
    residual: Vec<f64>,
    /// First and last index with `|R| > R_FLOOR`.
    lo: usize,
    hi: usize,
    /// `D_R / δ`: the largest stride at which `∫ R dv` is exact to `SPREAD`.
    stride: usize,
    /// For each stride `s` in use, the table regrouped by offset (built on
    /// first use).
    regrouped: Vec<OnceLock<Regrouped>>,
}

/// The table regrouped for one stride `s`: `R[o], R[o + s], R[o + 2 s], ...`
/// for `o = 0, 1, ..., s - 1`, one after the other, so that the nodes of a
/// horizon are contiguous.
#[derive(Debug, Clone, PartialEq)]
struct Regrouped {
    values: Vec<f64>,
    /// Where offset `o`'s points start in `values`.
    starts: Vec<usize>,
}

/// What one correlation needs for every horizon on one table.
struct Grid {
    /// Stride in table points, and the step `Δ = s δ`.
    stride: usize,
    delta: f64,
    /// `h = Δ / sigma`.
    h: f64,
    /// `e^{-j² h² / 2}` for `j = -jmax ..= jmax`, at `j + jmax`.
    tail: Vec<f64>,
    jmax: usize,
}

impl Table {
    /// The table of `R` for `min(D unit, cap)`, `m = ceil(cap / unit) <= n`.
    pub fn build(pool: &FinitePool, unit: f64, cap: f64, kink: &Cap) -> Table {
        let n = pool.names();
        let nf = n as f64;
        let m = ((cap / unit).ceil() as usize).clamp(1, n);
        // the rounded kink's width in v sets the step
        let width = if kink.k > 0.0 && kink.k < 1.0 {
            (kink.k * (1.0 - kink.k) / nf).sqrt() / pdf(kink.g)
        } else {
            1.0
        };
        let points = ((2.0 * T_MAX * STEPS_PER_WIDTH / width)
            .max(2.0 * T_MAX / STEP_MAX)
            .ceil() as usize)
            .clamp(2, MAX_POINTS);
        let step = 2.0 * T_MAX / points as f64;
        let residual: Vec<f64> = (0..=points)
            .map(|i| {
                let (p, q) = probabilities(-T_MAX + i as f64 * step);
                let (below, at) = pool.binomial(m - 1, p, q);
                // F - cap p = u n p C + cap (1 - C - q b) - cap p
                unit * nf * p * below + cap * (q - below - q * at)
            })
            .collect();
        let lo = residual.iter().position(|r| r.abs() > R_FLOOR).unwrap_or(0);
        let hi = residual
            .iter()
            .rposition(|r| r.abs() > R_FLOOR)
            .unwrap_or(0);
        let stride = Table::exact_stride(&residual, step);
        Table {
            key: (unit.to_bits(), cap.to_bits()),
            cap,
            step,
            residual,
            lo,
            hi,
            stride,
            regrouped: (0..=stride).map(|_| OnceLock::new()).collect(),
        }
    }

    /// The table regrouped for `stride` (at most `self.stride`).
    fn regrouped(&self, stride: usize) -> &Regrouped {
        self.regrouped[stride].get_or_init(|| {
            let mut values = Vec::with_capacity(self.residual.len());
            let mut starts = Vec::with_capacity(stride);
            for o in 0..stride {
                starts.push(values.len());
                values.extend(self.residual[o..].iter().step_by(stride));
            }
            Regrouped { values, starts }
        })
    }

    /// The largest stride `s` whose `s` interleaved trapezoid sums of
    /// `∫ R dv` agree to [`SPREAD`].
    fn exact_stride(residual: &[f64], step: f64) -> usize {
        let mut good = 1;
        let mut sums = [0.0; MAX_STRIDE];
        for s in 2..=MAX_STRIDE {
            let sums = &mut sums[..s];
            sums.fill(0.0);
            for (i, r) in residual.iter().enumerate() {
                sums[i % s] += r;
            }
            let (lo, hi) = sums
                .iter()
                .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| {
                    (a.min(x), b.max(x))
                });
            if (hi - lo) * s as f64 * step > SPREAD {
                break;
            }
            good = s;
        }
        good
    }

    /// `D_R`, the largest step at which `R` alone integrates exactly.
    #[cfg(test)]
    pub fn exact_step(&self) -> f64 {
        self.stride as f64 * self.step
    }

    /// The step and the Gaussian factors for one correlation.
    fn grid(&self, corr: &Correlation) -> Grid {
        let sigma = corr.sr / corr.s1;
        let d_r = self.stride as f64 * self.step;
        let target = 1.0 / (1.0 / (d_r * d_r) + (GAUSS / sigma).powi(2)).sqrt();
        let stride = ((target / self.step) as usize).clamp(1, self.stride);
        let delta = stride as f64 * self.step;
        let h = delta / sigma;
        // |j| never exceeds the table's nodes nor 2 Y_MAX / h
        let jmax = ((self.hi - self.lo) / stride + 1).min((2.0 * Y_MAX / h) as usize + 2);
        let mut tail: Vec<f64> = (0..=2 * jmax)
            .map(|i| {
                let x = (i as f64 - jmax as f64) * h;
                -0.5 * x * x
            })
            .collect();
        exp_in_place(&mut tail);
        Grid {
            stride,
            delta,
            h,
            tail,
            jmax,
        }
    }

    /// `E[min(D u, cap)]` and its rho-derivative at each horizon in `hs`
    /// (written to `out`, only where `todo` is set).
    pub fn integrate(
        &self,
        hs: &[Horizon],
        corr: &Correlation,
        todo: &[bool],
        out: &mut [Expectation],
    ) {
        let grid = self.grid(corr);
        let (sr, s1) = (corr.sr, corr.s1);
        let sigma = sr / s1;
        let dsigma = 1.0 / (2.0 * sr * s1 * s1 * s1);
        let scale = grid.delta * INV_SQRT_2PI / sigma;
        for ((h, &go), e) in hs.iter().zip(todo).zip(out.iter_mut()) {
            if !go {
                continue;
            }
            let mu = h.c / s1;
            let dmu = h.c / (2.0 * s1 * s1 * s1);
            let [s0, s1_, s2] = self.sums(mu, sigma, &grid);
            *e = Expectation {
                value: self.cap * h.pd + scale * s0,
                drho: scale / sigma * (dmu * s1_ + dsigma * (s2 - s0)),
            };
        }
    }

    /// `Σ R w`, `Σ R w y`, `Σ R w y²` over the nodes, `w = e^{-y² / 2}`.
    #[inline]
    fn sums(&self, mu: f64, sigma: f64, grid: &Grid) -> [f64; 3] {
        let (lo, hi) = (self.lo as f64, self.hi as f64);
        // the anchor: the table point nearest mu (inside the non-zero part)
        let a = ((mu + T_MAX) / self.step).round().clamp(lo, hi);
        let y0 = (-T_MAX + a * self.step - mu) / sigma;
        if y0.abs() > Y_MAX {
            return [0.0; 3];
        }
        let a = a as usize;
        let (s, hh) = (grid.stride, grid.h);
        // nodes a + j s, j in [-left, right]: inside the table, |y| <= Y_MAX
        let left = ((a - self.lo) / s)
            .min(((Y_MAX + y0) / hh) as usize)
            .min(grid.jmax);
        let right = ((self.hi - a) / s)
            .min(((Y_MAX - y0) / hh) as usize)
            .min(grid.jmax);
        let regrouped = self.regrouped(s);
        let at = regrouped.starts[a % s] + a / s;
        let r = &regrouped.values[at - left..=at + right];
        let g = &grid.tail[grid.jmax - left..=grid.jmax + right];
        // w_j = e^{-y0² / 2} b^j e^{-j² h² / 2}, b = e^{-h y0}: a geometric
        // progression, from j = -left
        let first = (-0.5 * y0 * y0 + hh * y0 * left as f64).exp();
        let b = (-hh * y0).exp();
        nodes(r, g, first, b, y0 - left as f64 * hh, hh)
    }
}

/// `Σ r_k w_k y_k^i`, i = 0, 1, 2, over the nodes, with
/// `w_k = first b^k g_k` and `y_k = y_first + k h`, in [`LANES`]
/// independent lanes: in AVX-512 or AVX2 registers when the processor has
/// them, and the same operations in the same order on every path (no fused
/// multiply-add), so the same bits on every machine.
#[inline]
fn nodes(r: &[f64], g: &[f64], first: f64, b: f64, y_first: f64, h: f64) -> [f64; 3] {
    #[cfg(target_arch = "x86_64")]
    {
        if std::arch::is_x86_feature_detected!("avx512f") {
            // SAFETY: the processor has AVX-512F (checked just above).
            return unsafe { nodes_avx512(r, g, first, b, y_first, h) };
        }
        if std::arch::is_x86_feature_detected!("avx2") {
            // SAFETY: the processor has AVX2 (checked just above).
            return unsafe { nodes_avx2(r, g, first, b, y_first, h) };
        }
    }
    nodes_lanes(r, g, first, b, y_first, h)
}

/// [`nodes_lanes`] compiled for AVX-512.
///
/// # Safety
/// The processor must have AVX-512F.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx512f,avx2")]
unsafe fn nodes_avx512(r: &[f64], g: &[f64], first: f64, b: f64, y_first: f64, h: f64) -> [f64; 3] {
    nodes_lanes(r, g, first, b, y_first, h)
}

/// [`nodes_lanes`] compiled for AVX2.
///
/// # Safety
/// The processor must have AVX2.
#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2")]
unsafe fn nodes_avx2(r: &[f64], g: &[f64], first: f64, b: f64, y_first: f64, h: f64) -> [f64; 3] {
    nodes_lanes(r, g, first, b, y_first, h)
}

/// The sums of [`nodes`], lane by lane.
#[inline(always)]
fn nodes_lanes(r: &[f64], g: &[f64], first: f64, b: f64, y_first: f64, h: f64) -> [f64; 3] {
    let mut bk = [0.0; LANES];
    let mut y = [0.0; LANES];
    let mut b_lanes = 1.0;
    for i in 0..LANES {
        bk[i] = first * b_lanes;
        y[i] = y_first + i as f64 * h;
        b_lanes *= b;
    }
    let h_lanes = LANES as f64 * h;
    let (mut s0, mut s1, mut s2) = ([0.0; LANES], [0.0; LANES], [0.0; LANES]);
    let mut rw = [0.0; LANES];
    let (rc, gc) = (r.chunks_exact(LANES), g.chunks_exact(LANES));
    let (r_rest, g_rest) = (rc.remainder(), gc.remainder());
    for (rc, gc) in rc.zip(gc) {
        for i in 0..LANES {
            rw[i] = rc[i] * gc[i] * bk[i];
        }
        for i in 0..LANES {
            s0[i] += rw[i];
            rw[i] *= y[i];
            s1[i] += rw[i];
            rw[i] *= y[i];
            s2[i] += rw[i];
        }
        for i in 0..LANES {
            bk[i] *= b_lanes;
            y[i] += h_lanes;
        }
    }
    for i in 0..r_rest.len().min(g_rest.len()) {
        let rw = r_rest[i] * g_rest[i] * bk[i];
        s0[i] += rw;
        s1[i] += rw * y[i];
        s2[i] += rw * y[i] * y[i];
    }
    [s0, s1, s2].map(|a| a.iter().sum())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn table(n: usize, k: f64) -> (FinitePool, Table) {
        let pool = FinitePool::new(n).expect("pool");
        let unit = 0.6 / n as f64;
        let t = Table::build(&pool, unit, k, &Cap::new(k / 0.6));
        (pool, t)
    }

    /// The weights as a geometric progression times `e^{-j² h² / 2}`
    /// against `e^{-y² / 2}` evaluated at every node: the progression
    /// loses at most a few units in the last place over a horizon's nodes.
    #[test]
    fn progression_of_weights_against_one_exponential_a_node() {
        for (n, k) in [(125, 0.03), (125, 0.3), (1000, 0.07)] {
            let (_, t) = table(n, k);
            for rho in [0.0101, 0.3, 0.9, 0.999999] {
                let corr = Correlation::new(rho);
                let grid = t.grid(&corr);
                let sigma = corr.sr / corr.s1;
                for pd in [1e-9, 1e-4, 0.05, 0.5, 0.999] {
                    let mu = Horizon::new(pd).expect("pd").c / corr.s1;
                    let fast = t.sums(mu, sigma, &grid);
                    // every node within the table and |y| <= Y_MAX, plainly
                    let mut slow = [0.0; 3];
                    let mut scale = 0.0f64;
                    let a = ((mu + T_MAX) / t.step)
                        .round()
                        .clamp(t.lo as f64, t.hi as f64) as i64;
                    let s = grid.stride as i64;
                    let mut i = a - (a - t.lo as i64) / s * s;
                    while i <= t.hi as i64 {
                        let v = -T_MAX + i as f64 * t.step;
                        let y = (v - mu) / sigma;
                        if y.abs() <= Y_MAX {
                            let rw = t.residual[i as usize] * (-0.5 * y * y).exp();
                            slow[0] += rw;
                            slow[1] += rw * y;
                            slow[2] += rw * y * y;
                            scale = scale.max(t.residual[i as usize].abs());
                        }
                        i += s;
                    }
                    for (f, sl) in fast.iter().zip(&slow) {
                        assert!(
                            (f - sl).abs() <= 1e-13 * scale.max(sl.abs()),
                            "n {n} K {k} rho {rho} PD {pd}: {fast:?} {slow:?}"
                        );
                    }
                }
            }
        }
    }

    /// The measured step `D_R` against the rounded kink's width
    /// `sqrt(k (1 - k) / n) / phi(G(k))`: the same order (the kink is
    /// what `R` has that is narrowest), and at least four table steps, so
    /// that the stride has room to follow the Gaussian.
    #[test]
    fn measured_step_follows_the_kink_width() {
        for (n, k) in [(125, 0.03), (125, 0.07), (250, 0.15), (1000, 0.3)] {
            let (_, t) = table(n, k);
            let x = k / 0.6;
            let width = (x * (1.0 - x) / n as f64).sqrt() / pdf(crate::math::normal::inv_cdf(x));
            let ratio = t.exact_step() / width;
            assert!((0.5..=1.5).contains(&ratio), "n {n} K {k}: {ratio}");
            assert!(t.stride >= 4, "n {n} K {k}: stride {}", t.stride);
        }
    }

    /// A Gaussian far off the table (PD = 1e-300 at rho = 0.02, whose mean
    /// in `v` is about -38): every name survives, the value is 0 and the
    /// sums have no node.
    #[test]
    fn gaussian_off_the_table() {
        let (pool, _) = table(125, 0.03);
        let h = Horizon::new(1e-300).expect("pd");
        let corr = Correlation::new(0.02);
        let e = pool.expected_min(&h, &corr, 0.6 / 125.0, 0.03, &Cap::new(0.05));
        assert!(e.value.abs() < 1e-300 && e.drho.abs() < 1e-290, "{e:?}");
    }
}
