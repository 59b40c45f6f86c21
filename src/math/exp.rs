//! The exponential without branches, so that a batch of them runs in SIMD
//! lanes.
//!
//! The bivariate normal's Gauss-Legendre sums ([`crate::math::bvn`]) spend
//! most of their time in `exp`, one call per node. The platform's `exp` is
//! a function call with branches for special cases, which the compiler
//! cannot vectorise; [`exp`] here is straight-line arithmetic on the bits
//! of the argument, and [`exp_in_place`] runs it on a slice eight lanes at
//! a time (AVX-512, when the processor has it), four (AVX2), two (SSE2,
//! every x86-64) or one. Every path performs the same IEEE operations in the same order
//! (no fused multiply-add), so the results are the same bits on every
//! machine and every path.
//!
//! # Method (Sun Microsystems / FreeBSD `e_exp.c`)
//!
//! ```text
//! x = k ln2 + r,  |r| <= ln2 / 2,  k = round(x / ln2)    (ln2 = ln2_hi + ln2_lo, k ln2_hi exact)
//! c = r - r² (P1 + r² (P2 + r² (P3 + r² (P4 + r² P5))))  (Remez, error below 2^-59)
//! exp(r) = 1 - ((lo - r c / (2 - c)) - hi)
//! exp(x) = 2^k exp(r)
//! ```
//!
//! The rounding of `x / ln2` adds and subtracts 1.5 · 2^52, which leaves
//! `k` in the low bits of the sum; `2^k` is built from those bits. Error
//! below one ulp, as the original's (the tests check it against the
//! platform's `exp` over the whole range).
//!
//! # Range
//!
//! Arguments below -708 give 0 (the true value is below 3.3e-308, which no
//! sum of probabilities here can see); above 709.78 they give `+inf`; NaN
//! gives NaN.
//!
//! # References
//!
//! Sun Microsystems `e_exp.c` (2004), as in FreeBSD msun and the `libm` crate.

// The constants as the original prints them (more digits than an f64 holds).
#![allow(clippy::excessive_precision)]

const LN2_HI: f64 = 6.931_471_803_691_238_164_90e-1;
const LN2_LO: f64 = 1.908_214_929_270_587_700_02e-10;
const INV_LN2: f64 = std::f64::consts::LOG2_E;
const P1: f64 = 1.666_666_666_666_660_190_37e-1;
const P2: f64 = -2.777_777_777_701_559_338_42e-3;
const P3: f64 = 6.613_756_321_437_934_361_17e-5;
const P4: f64 = -1.653_390_220_546_525_153_90e-6;
const P5: f64 = 4.138_136_797_057_238_460_39e-8;
/// 1.5 · 2^52: adding it rounds to an integer and leaves it in the low bits.
const SHIFT: f64 = 6_755_399_441_055_744.0;

/// The lowest argument with a non-zero result here.
const LOWEST: f64 = -708.0;
/// The clamp's upper end, and where the result overflows.
const HIGHEST: f64 = 709.0;
const OVERFLOW: f64 = 709.782_712_893_384;

/// `e^x` with no branches (selects only), accurate to below one ulp.
///
/// # Formula
/// ```text
/// exp(x) = 2^k · (1 - ((lo - r c / (2 - c)) - hi)),  x = k ln2 + r
/// ```
///
/// # References
/// Sun Microsystems `e_exp.c` (2004).
///
/// # Example
/// ```
/// use skewbook::math::exp::exp;
/// assert_eq!(exp(0.0), 1.0);
/// assert!((exp(1.0) - std::f64::consts::E).abs() <= f64::EPSILON * 3.0);
/// assert_eq!(exp(-800.0), 0.0);
/// ```
#[inline(always)]
pub fn exp(x: f64) -> f64 {
    let xc = x.clamp(LOWEST, HIGHEST);
    let t = xc * INV_LN2 + SHIFT;
    let k = t - SHIFT;
    let hi = xc - k * LN2_HI;
    let lo = k * LN2_LO;
    let r = hi - lo;
    let rr = r * r;
    let c = r - rr * (P1 + rr * (P2 + rr * (P3 + rr * (P4 + rr * P5))));
    let y = 1.0 - ((lo - (r * c) / (2.0 - c)) - hi);
    // The low bits of t hold k (two's complement, |k| <= 1022); shifted into
    // the exponent field with the bias they give 2^k.
    let scale = f64::from_bits(t.to_bits().wrapping_add(1023) << 52);
    let v = y * scale;
    if x < LOWEST {
        0.0
    } else if x > OVERFLOW {
        f64::INFINITY
    } else {
        v
    }
}

/// Replaces every element of `xs` by its exponential, [`exp`] bit for bit,
/// several lanes at a time.
///
/// # Example
/// ```
/// use skewbook::math::exp::{exp, exp_in_place};
/// let mut xs = [-1.0, 0.5, -30.0, 2.0, -0.25];
/// exp_in_place(&mut xs);
/// assert_eq!(xs[2], exp(-30.0));
/// ```
#[inline]
pub fn exp_in_place(xs: &mut [f64]) {
    #[cfg(target_arch = "x86_64")]
    {
        if std::arch::is_x86_feature_detected!("avx512f") {
            // SAFETY: the processor has AVX-512F (checked just above).
            unsafe { lanes::exp_avx512(xs) };
        } else if std::arch::is_x86_feature_detected!("avx2") {
            // SAFETY: the processor has AVX2 (checked just above).
            unsafe { lanes::exp_avx2(xs) };
        } else {
            lanes::exp_sse2(xs);
        }
    }
    #[cfg(not(target_arch = "x86_64"))]
    for x in xs.iter_mut() {
        *x = exp(*x);
    }
}

/// [`exp`] in two and four SIMD lanes: the same operations, in the same
/// order, on each lane.
#[cfg(target_arch = "x86_64")]
mod lanes {
    use super::*;
    use std::arch::x86_64::*;

    /// Two lanes (SSE2, part of every x86-64), the odd one out by [`exp`].
    pub fn exp_sse2(xs: &mut [f64]) {
        let mut pairs = xs.chunks_exact_mut(2);
        for p in &mut pairs {
            // SAFETY: SSE2 is part of the x86-64 baseline; the loads and
            // stores touch the two elements of the chunk.
            unsafe {
                let x = _mm_loadu_pd(p.as_ptr());
                _mm_storeu_pd(p.as_mut_ptr(), exp_m128(x));
            }
        }
        for x in pairs.into_remainder() {
            *x = exp(*x);
        }
    }

    #[inline(always)]
    unsafe fn exp_m128(x: __m128d) -> __m128d {
        let xc = _mm_max_pd(_mm_set1_pd(LOWEST), _mm_min_pd(_mm_set1_pd(HIGHEST), x));
        let shift = _mm_set1_pd(SHIFT);
        let t = _mm_add_pd(_mm_mul_pd(xc, _mm_set1_pd(INV_LN2)), shift);
        let k = _mm_sub_pd(t, shift);
        let hi = _mm_sub_pd(xc, _mm_mul_pd(k, _mm_set1_pd(LN2_HI)));
        let lo = _mm_mul_pd(k, _mm_set1_pd(LN2_LO));
        let r = _mm_sub_pd(hi, lo);
        let rr = _mm_mul_pd(r, r);
        let mut p = _mm_add_pd(_mm_set1_pd(P4), _mm_mul_pd(rr, _mm_set1_pd(P5)));
        p = _mm_add_pd(_mm_set1_pd(P3), _mm_mul_pd(rr, p));
        p = _mm_add_pd(_mm_set1_pd(P2), _mm_mul_pd(rr, p));
        p = _mm_add_pd(_mm_set1_pd(P1), _mm_mul_pd(rr, p));
        let c = _mm_sub_pd(r, _mm_mul_pd(rr, p));
        let q = _mm_div_pd(_mm_mul_pd(r, c), _mm_sub_pd(_mm_set1_pd(2.0), c));
        let y = _mm_sub_pd(_mm_set1_pd(1.0), _mm_sub_pd(_mm_sub_pd(lo, q), hi));
        let bits = _mm_slli_epi64::<52>(_mm_add_epi64(_mm_castpd_si128(t), _mm_set1_epi64x(1023)));
        let v = _mm_mul_pd(y, _mm_castsi128_pd(bits));
        let under = _mm_cmplt_pd(x, _mm_set1_pd(LOWEST));
        let over = _mm_cmpgt_pd(x, _mm_set1_pd(OVERFLOW));
        let v = _mm_andnot_pd(under, v);
        _mm_or_pd(
            _mm_andnot_pd(over, v),
            _mm_and_pd(over, _mm_set1_pd(f64::INFINITY)),
        )
    }

    /// Eight lanes; the rest by [`exp_avx2`].
    ///
    /// # Safety
    /// The processor must have AVX-512F (and so AVX2).
    #[target_feature(enable = "avx512f,avx2")]
    pub unsafe fn exp_avx512(xs: &mut [f64]) {
        let mut octs = xs.chunks_exact_mut(8);
        for p in &mut octs {
            let x = _mm512_loadu_pd(p.as_ptr());
            let xc = _mm512_max_pd(
                _mm512_set1_pd(LOWEST),
                _mm512_min_pd(_mm512_set1_pd(HIGHEST), x),
            );
            let shift = _mm512_set1_pd(SHIFT);
            let t = _mm512_add_pd(_mm512_mul_pd(xc, _mm512_set1_pd(INV_LN2)), shift);
            let k = _mm512_sub_pd(t, shift);
            let hi = _mm512_sub_pd(xc, _mm512_mul_pd(k, _mm512_set1_pd(LN2_HI)));
            let lo = _mm512_mul_pd(k, _mm512_set1_pd(LN2_LO));
            let r = _mm512_sub_pd(hi, lo);
            let rr = _mm512_mul_pd(r, r);
            let mut q = _mm512_add_pd(_mm512_set1_pd(P4), _mm512_mul_pd(rr, _mm512_set1_pd(P5)));
            q = _mm512_add_pd(_mm512_set1_pd(P3), _mm512_mul_pd(rr, q));
            q = _mm512_add_pd(_mm512_set1_pd(P2), _mm512_mul_pd(rr, q));
            q = _mm512_add_pd(_mm512_set1_pd(P1), _mm512_mul_pd(rr, q));
            let c = _mm512_sub_pd(r, _mm512_mul_pd(rr, q));
            let f = _mm512_div_pd(_mm512_mul_pd(r, c), _mm512_sub_pd(_mm512_set1_pd(2.0), c));
            let y = _mm512_sub_pd(_mm512_set1_pd(1.0), _mm512_sub_pd(_mm512_sub_pd(lo, f), hi));
            let bits = _mm512_slli_epi64::<52>(_mm512_add_epi64(
                _mm512_castpd_si512(t),
                _mm512_set1_epi64(1023),
            ));
            let v = _mm512_mul_pd(y, _mm512_castsi512_pd(bits));
            // Below the range 0, above it +inf, NaN as it came.
            let under = _mm512_cmp_pd_mask::<_CMP_LT_OQ>(x, _mm512_set1_pd(LOWEST));
            let over = _mm512_cmp_pd_mask::<_CMP_GT_OQ>(x, _mm512_set1_pd(OVERFLOW));
            let v = _mm512_mask_blend_pd(under, v, _mm512_setzero_pd());
            let v = _mm512_mask_blend_pd(over, v, _mm512_set1_pd(f64::INFINITY));
            _mm512_storeu_pd(p.as_mut_ptr(), v);
        }
        exp_avx2(octs.into_remainder());
    }

    /// Four lanes; the rest by [`exp_sse2`].
    ///
    /// # Safety
    /// The processor must have AVX2.
    #[target_feature(enable = "avx2")]
    pub unsafe fn exp_avx2(xs: &mut [f64]) {
        let mut quads = xs.chunks_exact_mut(4);
        for p in &mut quads {
            let x = _mm256_loadu_pd(p.as_ptr());
            let xc = _mm256_max_pd(
                _mm256_set1_pd(LOWEST),
                _mm256_min_pd(_mm256_set1_pd(HIGHEST), x),
            );
            let shift = _mm256_set1_pd(SHIFT);
            let t = _mm256_add_pd(_mm256_mul_pd(xc, _mm256_set1_pd(INV_LN2)), shift);
            let k = _mm256_sub_pd(t, shift);
            let hi = _mm256_sub_pd(xc, _mm256_mul_pd(k, _mm256_set1_pd(LN2_HI)));
            let lo = _mm256_mul_pd(k, _mm256_set1_pd(LN2_LO));
            let r = _mm256_sub_pd(hi, lo);
            let rr = _mm256_mul_pd(r, r);
            let mut q = _mm256_add_pd(_mm256_set1_pd(P4), _mm256_mul_pd(rr, _mm256_set1_pd(P5)));
            q = _mm256_add_pd(_mm256_set1_pd(P3), _mm256_mul_pd(rr, q));
            q = _mm256_add_pd(_mm256_set1_pd(P2), _mm256_mul_pd(rr, q));
            q = _mm256_add_pd(_mm256_set1_pd(P1), _mm256_mul_pd(rr, q));
            let c = _mm256_sub_pd(r, _mm256_mul_pd(rr, q));
            let f = _mm256_div_pd(_mm256_mul_pd(r, c), _mm256_sub_pd(_mm256_set1_pd(2.0), c));
            let y = _mm256_sub_pd(_mm256_set1_pd(1.0), _mm256_sub_pd(_mm256_sub_pd(lo, f), hi));
            let bits = _mm256_slli_epi64::<52>(_mm256_add_epi64(
                _mm256_castpd_si256(t),
                _mm256_set1_epi64x(1023),
            ));
            let v = _mm256_mul_pd(y, _mm256_castsi256_pd(bits));
            let under = _mm256_cmp_pd::<_CMP_LT_OQ>(x, _mm256_set1_pd(LOWEST));
            let over = _mm256_cmp_pd::<_CMP_GT_OQ>(x, _mm256_set1_pd(OVERFLOW));
            let v = _mm256_andnot_pd(under, v);
            let v = _mm256_or_pd(
                _mm256_andnot_pd(over, v),
                _mm256_and_pd(over, _mm256_set1_pd(f64::INFINITY)),
            );
            _mm256_storeu_pd(p.as_mut_ptr(), v);
        }
        exp_sse2(quads.into_remainder());
    }
}

#[cfg(test)]
mod tests {
    use super::exp;

    /// Distance in units in the last place between two positive numbers.
    fn ulps(a: f64, b: f64) -> u64 {
        a.to_bits().abs_diff(b.to_bits())
    }

    /// Against the platform's `exp` (glibc's is correctly rounded in
    /// practice): at most one ulp apart over the range the pricer uses and
    /// beyond, on a dense grid and on random arguments.
    #[test]
    fn within_one_ulp_of_the_platform_exp() {
        let mut worst = 0;
        let mut check = |x: f64| {
            let (a, b) = (exp(x), x.exp());
            let d = ulps(a, b);
            assert!(d <= 1, "exp({x:e}) = {a:e}, platform {b:e}: {d} ulp");
            worst = worst.max(d);
        };
        let n = 400_000;
        for i in 0..=n {
            check(-708.0 + 1417.0 * i as f64 / n as f64);
        }
        for i in 0..=n {
            check(-2.0 + 4.0 * i as f64 / n as f64);
        }
        // Tiny arguments and the reduction's half-way points.
        for x in [
            1e-300,
            -1e-300,
            1e-17,
            -1e-17,
            0.3465735902799726,
            -0.3465735902799727,
        ] {
            check(x);
        }
        use rand::{Rng, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(7);
        for _ in 0..200_000 {
            check(rng.random_range(-708.0..709.0));
        }
        assert!(worst <= 1);
    }

    /// Every lane width gives the scalar function's bits, on slices of every
    /// length up to 41 (so every remainder path runs) and on the range ends.
    #[test]
    fn lanes_give_the_scalar_bits() {
        use rand::{Rng, SeedableRng};
        let mut rng = rand_chacha::ChaCha8Rng::seed_from_u64(11);
        for len in 0..=41 {
            let xs: Vec<f64> = (0..len)
                .map(|i| match i % 7 {
                    0 => rng.random_range(-800.0..800.0),
                    1 => -708.0 - rng.random_range(0.0..1.0),
                    2 => f64::NAN,
                    _ => rng.random_range(-40.0..1.0),
                })
                .collect();
            let mut got = xs.clone();
            super::exp_in_place(&mut got);
            let mut lanes = vec![got];
            #[cfg(target_arch = "x86_64")]
            {
                let mut pairs = xs.clone();
                super::lanes::exp_sse2(&mut pairs);
                lanes.push(pairs);
                if std::arch::is_x86_feature_detected!("avx2") {
                    let mut quads = xs.clone();
                    // SAFETY: checked just above.
                    unsafe { super::lanes::exp_avx2(&mut quads) };
                    lanes.push(quads);
                }
            }
            for got in &lanes {
                for (x, a) in xs.iter().zip(got) {
                    let want = exp(*x);
                    assert!(
                        want.to_bits() == a.to_bits() || (want.is_nan() && a.is_nan()),
                        "exp({x}): {a} vs {want}"
                    );
                }
            }
        }
    }

    #[test]
    fn range_ends_and_nan() {
        assert_eq!(exp(-708.5), 0.0);
        assert_eq!(exp(f64::NEG_INFINITY), 0.0);
        assert_eq!(exp(710.0), f64::INFINITY);
        assert_eq!(exp(f64::INFINITY), f64::INFINITY);
        assert!(exp(f64::NAN).is_nan());
        assert_eq!(exp(0.0), 1.0);
        assert_eq!(exp(-0.0), 1.0);
        // 2^k exactly at multiples of ln2 away from the subnormals.
        assert!((exp(-700.0) / (-700f64).exp() - 1.0).abs() < 3e-16);
    }
}
