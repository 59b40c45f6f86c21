//! Simulation: histories drawn from a known (PD, rho) with a seeded RNG;
//! each estimator's 95 % interval should cover the truth in about 95 % of
//! repetitions. The band [0.90, 0.985] is wide enough for a correct
//! implementation at this fixed seed and narrow enough that standard errors
//! off by a factor 2 either way fail: the test checks that too, by
//! rebuilding each interval with half and double the standard error.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use skewbook::input::history::History;
use skewbook::math::normal::{cdf, inv_cdf, pdf};
use skewbook::realworld::estimators::{
    binomial_ml, joint_default_moments, moment_matching, probit_moments, Estimate, VarianceDivisor,
    Z_975,
};

const BAND: (f64, f64) = (0.90, 0.985);

fn normal(rng: &mut ChaCha8Rng) -> f64 {
    loop {
        let u: f64 = rng.random();
        if u > 0.0 {
            return inv_cdf(u);
        }
    }
}

fn rate(pd: f64, rho: f64, z: f64) -> f64 {
    cdf((inv_cdf(pd) - rho.sqrt() * z) / (1.0 - rho).sqrt())
}

/// Coverage counters at standard-error scales 0.5, 1, 2, for PD and rho.
#[derive(Default)]
struct Tally {
    reps: usize,
    pd: [usize; 3],
    rho: [usize; 3],
}

impl Tally {
    fn add(&mut self, e: &Estimate, pd: f64, rho: f64) {
        self.reps += 1;
        let (p, ps) = (e.pd.unwrap(), e.pd_se.unwrap());
        let (r, rs) = (e.rho.unwrap(), e.rho_se.unwrap());
        let (c, se_c) = (inv_cdf(p), ps / pdf(inv_cdf(p)));
        let (eta, se_eta) = ((r / (1.0 - r)).ln(), rs / (r * (1.0 - r)));
        let eta_true = (rho / (1.0 - rho)).ln();
        for (i, k) in [0.5, 1.0, 2.0].iter().enumerate() {
            if (inv_cdf(pd) - c).abs() <= k * Z_975 * se_c {
                self.pd[i] += 1;
            }
            if (eta_true - eta).abs() <= k * Z_975 * se_eta {
                self.rho[i] += 1;
            }
        }
        // The reported interval is the k = 1 one.
        let [lo, hi] = e.rho_ci.unwrap();
        assert_eq!(
            lo <= rho && rho <= hi,
            (eta_true - eta).abs() <= Z_975 * se_eta
        );
    }
    fn check(&self, name: &str) {
        let f = |n: usize| n as f64 / self.reps as f64;
        let msg = format!(
            "{name}: PD coverage {:?}, rho coverage {:?} at se x 0.5, 1, 2",
            self.pd.map(f),
            self.rho.map(f)
        );
        for cov in [f(self.pd[1]), f(self.rho[1])] {
            assert!(cov >= BAND.0 && cov <= BAND.1, "{msg}");
        }
        // A standard error off by 2x would fail the band.
        for cov in [f(self.pd[0]), f(self.rho[0])] {
            assert!(cov < BAND.0, "{msg}");
        }
        for cov in [f(self.pd[2]), f(self.rho[2])] {
            assert!(cov > BAND.1, "{msg}");
        }
    }
}

#[test]
fn probit_moments_cover_the_truth() {
    let (pd, rho, t, reps) = (0.02, 0.15, 40, 400);
    let mut rng = ChaCha8Rng::seed_from_u64(20260619);
    let mut probit = Tally::default();
    for _ in 0..reps {
        let rates: Vec<f64> = (0..t).map(|_| rate(pd, rho, normal(&mut rng))).collect();
        let h = History::from_rates(&rates).unwrap();
        probit.add(&probit_moments(&h, VarianceDivisor::T), pd, rho);
    }
    probit.check("probit_moments");
}

// The moment estimators' delta-method intervals need long histories: at 40
// periods the sample variance of the skewed default rates is itself so
// noisy that the rho interval covers only about 75 % (PD 2 %, rho 0.15,
// measured here), and still 88 % at 400 periods: the fourth moment of the
// squared rates converges slowly. The test uses a long history of a less
// skewed pool (PD 5 %, rho 0.08).
#[test]
fn moment_matching_covers_the_truth() {
    let (pd, rho, t, reps) = (0.05, 0.08, T_LONG, 300);
    let mut rng = ChaCha8Rng::seed_from_u64(20260620);
    let mut moments = Tally::default();
    for _ in 0..reps {
        let rates: Vec<f64> = (0..t).map(|_| rate(pd, rho, normal(&mut rng))).collect();
        let h = History::from_rates(&rates).unwrap();
        moments.add(&moment_matching(&h, VarianceDivisor::T), pd, rho);
    }
    moments.check("moment_matching");
}

const T_LONG: usize = 400;

fn binomial(rng: &mut ChaCha8Rng, n: u64, p: f64) -> u64 {
    (0..n).filter(|_| rng.random::<f64>() < p).count() as u64
}

#[test]
fn count_estimators_cover_the_truth() {
    let (pd, rho) = (0.03, 0.12);
    let mut rng = ChaCha8Rng::seed_from_u64(7_2026);
    let mut joint = Tally::default();
    for _ in 0..300 {
        let counts: Vec<(u64, u64)> = (0..T_LONG)
            .map(|_| {
                let p = rate(pd, rho, normal(&mut rng));
                (binomial(&mut rng, 100, p), 100)
            })
            .collect();
        let h = History::from_counts(&counts).unwrap();
        joint.add(&joint_default_moments(&h), pd, rho);
    }
    joint.check("joint_default_moments");
}

#[test]
fn binomial_ml_covers_the_truth() {
    let (pd, rho) = (0.03, 0.12);
    let mut rng = ChaCha8Rng::seed_from_u64(41);
    let mut ml = Tally::default();
    for _ in 0..120 {
        let counts: Vec<(u64, u64)> = (0..40)
            .map(|_| {
                let p = rate(pd, rho, normal(&mut rng));
                (binomial(&mut rng, 150, p), 150)
            })
            .collect();
        let h = History::from_counts(&counts).unwrap();
        ml.add(&binomial_ml(&h), pd, rho);
    }
    ml.check("binomial_ml");
}
