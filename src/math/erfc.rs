//! The complementary error function of a non-negative argument, in two
//! steps around its exponentials, so that a caller can take them in one
//! SIMD batch with its own ([`crate::math::exp::exp_in_place`]).
//!
//! The tranche pricer needs `N(-|A|) = erfc(|A| / sqrt 2) / 2` at every
//! horizon beside the bivariate normal's node sum; taking the two
//! exponentials of `erfc` in the same batch as the node sum's saves two
//! scalar `exp` calls per horizon.
//!
//! # Method (Sun Microsystems / FreeBSD `s_erf.c`, as in the `libm` crate)
//!
//! ```text
//! 0 <= x < 0.84375:     erfc(x) = 1 - (x + x R(x²))               (no exponential)
//! 0.84375 <= x < 1.25:  erfc(x) = 1 - erx - P(x - 1) / Q(x - 1)    (no exponential)
//! 1.25 <= x < 28:       erfc(x) = exp(-z² - 0.5625) exp((z - x)(z + x) + R(1/x²) / S(1/x²)) / x
//!                       (z: x with the low 32 bits of its mantissa cleared)
//! x >= 28:              erfc(x) = 0 (underflow)
//! ```
//!
//! The rational approximations and their constants are FreeBSD's; the
//! exponentials are [`crate::math::exp::exp`]'s (below one ulp, as
//! `libm`'s), so the result is `libm::erfc`'s to within an ulp or two (the
//! tests check it), except below 1e-300 (x above 26.5), where that
//! exponential's flush to zero gives 0.
//!
//! # References
//!
//! Sun Microsystems `s_erf.c` (1993), as in FreeBSD msun and the `libm` crate.

// The constants as the original prints them (more digits than an f64 holds).
#![allow(clippy::excessive_precision)]

const ERX: f64 = 8.450_629_115_104_675_292_97e-1;
const PP: [f64; 5] = [
    1.283_791_670_955_125_585_61e-1,
    -3.250_421_072_470_014_993_70e-1,
    -2.848_174_957_559_851_047_66e-2,
    -5.770_270_296_489_441_591_57e-3,
    -2.376_301_665_665_016_260_84e-5,
];
const QQ: [f64; 5] = [
    3.979_172_239_591_553_528_19e-1,
    6.502_224_998_876_729_444_85e-2,
    5.081_306_281_875_765_627_76e-3,
    1.324_947_380_043_216_445_26e-4,
    -3.960_228_278_775_368_123_20e-6,
];
const PA: [f64; 7] = [
    -2.362_118_560_752_659_440_77e-3,
    4.148_561_186_837_483_316_66e-1,
    -3.722_078_760_357_013_238_47e-1,
    3.183_466_199_011_617_536_74e-1,
    -1.108_946_942_823_966_774_76e-1,
    3.547_830_432_561_823_593_71e-2,
    -2.166_375_594_868_790_843_00e-3,
];
const QA: [f64; 6] = [
    1.064_208_804_008_442_282_86e-1,
    5.403_979_177_021_710_489_37e-1,
    7.182_865_441_419_626_628_68e-2,
    1.261_712_198_087_616_421_12e-1,
    1.363_708_391_202_905_073_62e-2,
    1.198_449_984_679_910_741_70e-2,
];
const RA: [f64; 8] = [
    -9.864_944_034_847_148_227_05e-3,
    -6.938_585_727_071_817_643_72e-1,
    -1.055_862_622_532_329_098_14e1,
    -6.237_533_245_032_600_603_96e1,
    -1.623_966_694_625_734_703_55e2,
    -1.846_050_929_067_110_359_94e2,
    -8.128_743_550_630_659_342_46e1,
    -9.814_329_344_169_145_485_92,
];
const SA: [f64; 8] = [
    1.965_127_166_743_925_712_92e1,
    1.376_577_541_435_190_426_00e2,
    4.345_658_774_752_292_288_21e2,
    6.453_872_717_332_678_803_36e2,
    4.290_081_400_275_678_333_86e2,
    1.086_350_055_417_794_351_34e2,
    6.570_249_770_319_281_701_35,
    -6.042_441_521_485_809_874_38e-2,
];
const RB: [f64; 7] = [
    -9.864_942_924_700_099_285_97e-3,
    -7.992_832_376_805_230_065_74e-1,
    -1.775_795_491_775_475_198_89e1,
    -1.606_363_848_558_219_160_62e2,
    -6.375_664_433_683_896_277_22e2,
    -1.025_095_131_611_077_249_54e3,
    -4.835_191_916_086_513_970_19e2,
];
const SB: [f64; 7] = [
    3.033_806_074_348_245_829_24e1,
    3.257_925_129_965_739_188_26e2,
    1.536_729_586_084_436_959_94e3,
    3.199_858_219_508_595_539_08e3,
    2.553_050_406_433_164_425_83e3,
    4.745_285_412_069_553_672_15e2,
    -2.244_095_244_658_581_833_62e1,
];

/// Horner's rule, highest coefficient last: `c[0] + s (c[1] + s (...))`.
#[inline(always)]
fn horner(c: &[f64], s: f64) -> f64 {
    c.iter().rev().fold(0.0, |acc, &ci| ci + s * acc)
}

/// `1 + s (c[0] + s (c[1] + ...))`.
#[inline(always)]
fn one_plus(c: &[f64], s: f64) -> f64 {
    1.0 + s * horner(c, s)
}

/// `erfc(x)` before its exponentials: either done, or `e1 e2 / x` with
/// `e1`, `e2` the exponentials of [`Prepared::exponents`].
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Prepared {
    /// The value, no exponential needed.
    Done(f64),
    /// `exp(exponents[0]) · exp(exponents[1]) / x`.
    Scaled {
        /// The argument.
        x: f64,
        /// The two exponents.
        exponents: [f64; 2],
    },
}

impl Prepared {
    /// The two exponents to take (zeros when none is needed).
    pub fn exponents(&self) -> [f64; 2] {
        match *self {
            Prepared::Done(_) => [0.0; 2],
            Prepared::Scaled { exponents, .. } => exponents,
        }
    }

    /// `erfc(x)` from the exponentials of [`Prepared::exponents`].
    #[inline]
    pub fn finish(&self, e: [f64; 2]) -> f64 {
        match *self {
            Prepared::Done(v) => v,
            Prepared::Scaled { x, .. } => e[0] * e[1] / x,
        }
    }
}

/// Whether `erfc(x)` takes its exponentials (1.25 <= x < 28): when not,
/// [`prepare`] has the value already.
#[inline]
pub fn exponentials_needed(p: &Prepared) -> bool {
    matches!(p, Prepared::Scaled { .. })
}

/// `erfc(x)` from the exponentials of `prepare(x).exponents()`, without
/// preparing again when they carry the value (`prepare(x).finish(e)`, to
/// the bit).
#[inline]
pub fn finish_at(x: f64, e: [f64; 2]) -> f64 {
    let ix = ((x.to_bits() >> 32) as u32) & 0x7fff_ffff;
    if (0x3ff4_0000..0x403c_0000).contains(&ix) && !x.is_nan() {
        e[0] * e[1] / x
    } else {
        prepare(x).finish(e)
    }
}

/// The first step of `erfc(x)` for `x >= 0` (or NaN): everything but the
/// exponentials.
///
/// # Formula
/// See the module docs.
///
/// # References
/// Sun Microsystems `s_erf.c` (1993).
///
/// # Example
/// ```
/// use skewbook::math::erfc::prepare;
/// use skewbook::math::exp::exp;
/// let p = prepare(2.0);
/// let [a, b] = p.exponents();
/// let erfc2 = p.finish([exp(a), exp(b)]);
/// assert!((erfc2 - 0.004677734981047266).abs() < 2e-18);
/// ```
#[inline]
pub fn prepare(x: f64) -> Prepared {
    let ix = ((x.to_bits() >> 32) as u32) & 0x7fff_ffff;
    if x.is_nan() {
        return Prepared::Done(x);
    }
    if ix < 0x3feb_0000 {
        // |x| < 0.84375
        if ix < 0x3c70_0000 {
            return Prepared::Done(1.0 - x);
        }
        let z = x * x;
        let y = horner(&PP, z) / one_plus(&QQ, z);
        return Prepared::Done(if ix < 0x3fd0_0000 {
            1.0 - (x + x * y)
        } else {
            0.5 - (x - 0.5 + x * y)
        });
    }
    if ix < 0x3ff4_0000 {
        // 0.84375 <= |x| < 1.25
        let s = x - 1.0;
        return Prepared::Done(1.0 - ERX - horner(&PA, s) / one_plus(&QA, s));
    }
    if ix >= 0x403c_0000 {
        // x >= 28 (and +inf): underflow
        return Prepared::Done(0.0);
    }
    let s = 1.0 / (x * x);
    let (r, big_s) = if ix < 0x4006_db6d {
        (horner(&RA, s), one_plus(&SA, s))
    } else {
        (horner(&RB, s), one_plus(&SB, s))
    };
    let z = f64::from_bits(x.to_bits() & 0xffff_ffff_0000_0000);
    Prepared::Scaled {
        x,
        exponents: [-z * z - 0.5625, (z - x) * (z + x) + r / big_s],
    }
}

#[cfg(test)]
mod tests {
    use super::prepare;
    use crate::math::exp::exp;

    fn erfc(x: f64) -> f64 {
        let p = prepare(x);
        let [a, b] = p.exponents();
        p.finish([exp(a), exp(b)])
    }

    /// Against the `libm` crate's `erfc` (the same method with its own
    /// `exp`): within two ulps on a dense grid over every branch, and the
    /// same at the branch points and ends.
    #[test]
    fn agrees_with_libm() {
        let n = 200_000;
        let mut worst = 0u64;
        // Below 1e-300 the exponential's flush to zero (under e^-708) shows.
        let close = |a: f64, b: f64| a.to_bits().abs_diff(b.to_bits()) <= 2 || a.max(b) < 1e-300;
        for i in 0..=n {
            let x = 30.0 * i as f64 / n as f64;
            let (a, b) = (erfc(x), libm::erfc(x));
            assert!(close(a, b), "erfc({x}) = {a:e}, libm {b:e}");
            if b > 1e-300 {
                worst = worst.max(a.to_bits().abs_diff(b.to_bits()));
            }
        }
        for x in [
            0.0,
            1e-300,
            1e-17,
            0.25,
            0.84375,
            1.25,
            2.857142857142857,
            27.999,
            28.0,
        ] {
            assert!(close(erfc(x), libm::erfc(x)), "{x}");
        }
        assert_eq!(erfc(f64::INFINITY), 0.0);
        assert!(erfc(f64::NAN).is_nan());
        assert!(worst <= 2);
    }

    /// Values from mpmath (30 digits), rounded to f64 (as in the normal
    /// module's check of `libm::erfc`).
    #[test]
    fn against_mpmath() {
        #[allow(clippy::excessive_precision)]
        let cases = [
            (0.0, 1.0),
            (0.1, 0.8875370839817151078),
            (0.5, 0.479500122186953462317),
            (1.0, 0.157299207050285130659),
            (2.0, 0.00467773498104726583793),
            (3.5, 7.43098372341412745523e-7),
            (6.0, 2.15197367124989131e-17),
            (20.0, 5.395865611607900928934e-176),
        ];
        for (x, want) in cases {
            let got = erfc(x);
            assert!(
                (got - want).abs() <= 2.0 * f64::EPSILON * want,
                "erfc({x}) = {got:e}, mpmath {want:e}"
            );
        }
    }
}
