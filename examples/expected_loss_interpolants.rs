//! How well candidate interpolants of base expected loss g(K) = E[min(L, K)]
//! give back a known skew: the measurement behind `--interp expected-loss`.
//!
//! ```text
//! cargo run --example expected_loss_interpolants
//! ```
//!
//! Candidates, each through (0, 0), the knots and the top (1 - R, E[L]),
//! flat beyond, all rising and concave with slope in [0, 1]:
//!
//! - `schumaker-parabolic`: [`ConcaveSpline::new`] with its own end slopes
//!   (the end parabola's), the top knot last, so g may kink at 1 - R;
//! - `schumaker-model-ends`: [`ConcaveSpline::with_end_slopes`] with slope
//!   1 at K = 0 and 0 at 1 - R (the large-pool model's P(L > 0) and
//!   P(L > 1 - R));
//! - `hagan-west`: [`MonotoneConvex`], the monotone convex method of Hagan
//!   and West ("Interpolation methods for curve construction", Applied
//!   Mathematical Finance 13, 2006) applied to the slope g' = P(L > K),
//!   whose interval averages are the knot secants, with its own end values
//!   collared to [0, min(1, 2 δ)];
//! - `hagan-west-model-ends`: the same with slope 1 at 0 and 0 at 1 - R:
//!   what skewbook uses.
//!
//! Truths (each a genuine loss distribution, so arbitrage-free): a flat
//! correlation, and mixtures of large-pool distributions with one PD and
//! several correlations, whose base correlation has a skew. Knots are
//! taken off the truth at the usual detachments; every candidate is then
//! compared with the truth on a 0.1% grid: base correlation (below the
//! first knot, between knots, above the last knot) and tranchelet expected
//! loss per width (the exceedance curve), the quantity a thin tranche
//! prices off. Then, with no truth, the base correlation of each
//! candidate on the bundled samples' knots: its largest second difference
//! on the grid between knots (roughness) and how often the target is out of
//! reach.

use skewbook::curve::{MarketOptions, Pool};
use skewbook::input::snapshot::read_snapshot;
use skewbook::loss::{closed, Cap, Correlation, Horizon};
use skewbook::math::interp::ConcaveSpline;
use skewbook::math::monotone_convex::MonotoneConvex;
use skewbook::solve::chain::implied_date;
use skewbook::solve::compound::{RHO_MAX, RHO_MIN};
use skewbook::surface::expected_loss::{correlation_for_loss, IndexLoss};

/// A rising concave interpolant of g on [0, 1 - R], flat beyond.
trait Interpolant {
    fn g(&self, k: f64) -> f64;
}

struct Schumaker(ConcaveSpline);

impl Interpolant for Schumaker {
    fn g(&self, k: f64) -> f64 {
        self.0.eval(k)
    }
}

struct HaganWest(MonotoneConvex);

impl Interpolant for HaganWest {
    fn g(&self, k: f64) -> f64 {
        self.0.eval(k)
    }
}

fn candidates(x: &[f64], y: &[f64]) -> Vec<(&'static str, Box<dyn Interpolant>)> {
    let lgd = *x.last().expect("top");
    let top = *y.last().expect("top");
    let mut xf = x.to_vec();
    let mut yf = y.to_vec();
    if lgd < 1.0 {
        xf.push(1.0);
        yf.push(top);
    }
    vec![
        (
            "schumaker-parabolic",
            Box::new(Schumaker(ConcaveSpline::new(x, y).expect("admissible"))),
        ),
        (
            "schumaker-model-ends",
            Box::new(Schumaker(
                ConcaveSpline::with_end_slopes(&xf, &yf, Some(1.0), None).expect("admissible"),
            )),
        ),
        (
            "hagan-west",
            Box::new(HaganWest(
                MonotoneConvex::new(x, y, None, None).expect("admissible"),
            )),
        ),
        (
            "hagan-west-model-ends",
            Box::new(HaganWest(
                MonotoneConvex::new(&xf, &yf, Some(1.0), None).expect("admissible"),
            )),
        ),
    ]
}

fn base_loss(r: f64, h: &Horizon, k: f64, rho: f64) -> f64 {
    (1.0 - r) * closed::value_at(h, &Cap::new(k / (1.0 - r)), &Correlation::new(rho))
}

/// A truth: a mixture of large-pool distributions with weights and correlations.
struct Truth {
    name: &'static str,
    pd: f64,
    recovery: f64,
    mix: Vec<(f64, f64)>,
    knots: Vec<f64>,
}

impl Truth {
    fn g(&self, h: &Horizon, k: f64) -> f64 {
        self.mix
            .iter()
            .map(|&(w, rho)| w * base_loss(self.recovery, h, k, rho))
            .sum()
    }
}

fn main() -> Result<(), skewbook::Error> {
    let truths = [
        Truth {
            name: "flat 0.30, PD 5.9%, R 40%",
            pd: 0.059,
            recovery: 0.4,
            mix: vec![(1.0, 0.3)],
            knots: vec![0.03, 0.07, 0.10, 0.15, 0.30],
        },
        Truth {
            name: "mix 0.05/0.60, PD 5.9%, R 40%",
            pd: 0.059,
            recovery: 0.4,
            mix: vec![(0.5, 0.05), (0.5, 0.6)],
            knots: vec![0.03, 0.07, 0.10, 0.15, 0.30],
        },
        Truth {
            name: "mix 0.02/0.30/0.90, PD 16%, R 40%",
            pd: 0.16,
            recovery: 0.4,
            mix: vec![(0.4, 0.02), (0.4, 0.3), (0.2, 0.9)],
            knots: vec![0.03, 0.07, 0.10, 0.15, 0.30],
        },
        Truth {
            name: "flat 0.15, PD 2.6%, R 40%",
            pd: 0.026,
            recovery: 0.4,
            mix: vec![(1.0, 0.15)],
            knots: vec![0.03, 0.07, 0.10, 0.15, 0.30],
        },
        Truth {
            name: "flat 0.60, PD 10%, R 40%",
            pd: 0.10,
            recovery: 0.4,
            mix: vec![(1.0, 0.6)],
            knots: vec![0.03, 0.07, 0.10, 0.15, 0.30],
        },
        Truth {
            name: "mix 0.10/0.40, PD 4.9%, R 40%",
            pd: 0.049,
            recovery: 0.4,
            mix: vec![(0.7, 0.1), (0.3, 0.4)],
            knots: vec![0.03, 0.07, 0.15],
        },
        Truth {
            name: "flat 0.10, PD 16%, R 40%",
            pd: 0.16,
            recovery: 0.4,
            mix: vec![(1.0, 0.1)],
            knots: vec![0.03, 0.07, 0.10, 0.15, 0.30],
        },
        Truth {
            name: "flat 0.17, PD 30%, R 30%",
            pd: 0.30,
            recovery: 0.3,
            mix: vec![(1.0, 0.17)],
            knots: vec![0.10, 0.15, 0.25, 0.35],
        },
        Truth {
            name: "mix 0.10/0.50, PD 30%, R 30%",
            pd: 0.30,
            recovery: 0.3,
            mix: vec![(0.6, 0.1), (0.4, 0.5)],
            knots: vec![0.10, 0.15, 0.25, 0.35],
        },
    ];
    println!(
        "Against a known skew (0.1% grid; rho errors absolute, e = tranchelet loss per width):"
    );
    println!("(max over the region; 'mean' columns: mean absolute error from K1 to Kn)");
    println!(
        "{:<34} {:<22} {:>8} {:>8} {:>8} {:>8} {:>9} {:>9} {:>9} {:>6}",
        "truth",
        "candidate",
        "rho<K1",
        "rho in",
        "mean",
        "rho>Kn",
        "e max",
        "e in",
        "e mean",
        "at end"
    );
    for t in &truths {
        let h = Horizon::new(t.pd)?;
        let lgd = 1.0 - t.recovery;
        let mut x = vec![0.0];
        let mut y = vec![0.0];
        for &k in &t.knots {
            x.push(k);
            y.push(t.g(&h, k));
        }
        x.push(lgd);
        y.push(lgd * t.pd);
        let step = 0.001;
        let grid: Vec<f64> = (1..)
            .map(|j| j as f64 * step)
            .take_while(|&k| k < lgd - 1e-9)
            .collect();
        let (k1, kn) = (t.knots[0], *t.knots.last().expect("knots"));
        for (name, c) in candidates(&x, &y) {
            let (mut below, mut inside, mut above, mut e_err) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
            let (mut sum_in, mut e_in, mut e_sum, mut n_in) = (0.0f64, 0.0f64, 0.0f64, 0usize);
            let mut at_end = 0;
            for &k in &grid {
                let truth = correlation_for_loss(t.recovery, k, &h, t.g(&h, k));
                let got = correlation_for_loss(t.recovery, k, &h, c.g(k));
                let err = (got.rho - truth.rho).abs();
                if got.rho <= RHO_MIN || got.rho >= RHO_MAX {
                    at_end += 1;
                }
                if k < k1 {
                    below = below.max(err);
                } else if k <= kn {
                    inside = inside.max(err);
                    sum_in += err;
                    n_in += 1;
                } else {
                    above = above.max(err);
                }
                let e = (c.g(k + step) - c.g(k)) / step;
                let e_true = (t.g(&h, (k + step).min(lgd)) - t.g(&h, k)) / step;
                e_err = e_err.max((e - e_true).abs());
                if k >= k1 && k < kn {
                    e_in = e_in.max((e - e_true).abs());
                    e_sum += (e - e_true).abs();
                }
            }
            let n = n_in.max(1) as f64;
            println!(
                "{:<34} {:<22} {:>8.4} {:>8.4} {:>8.4} {:>8.4} {:>9.2e} {:>9.2e} {:>9.2e} {:>6}",
                t.name,
                name,
                below,
                inside,
                sum_in / n,
                above,
                e_err,
                e_in,
                e_sum / n,
                at_end
            );
        }
    }

    println!();
    println!("On the samples' knots (0.1% grid between the first and the last knot):");
    println!(
        "{:<26} {:<22} {:>12} {:>12} {:>12}",
        "sample maturity", "candidate", "max |d2 rho|", "rho range", "out of reach"
    );
    for file in [
        "market-samples/hgx-2026-06-18.csv",
        "market-samples/kcx-2026-06-18.csv",
        "market-samples/lhy-2026-06-18.csv",
        "market-samples/ptx-2026-06-18.csv",
    ] {
        let path = format!("{}/{file}", env!("CARGO_MANIFEST_DIR"));
        let snap = read_snapshot(&path)?;
        let md = &snap.dates[0];
        let pool = Pool::build(md, &MarketOptions::default(), &path)?;
        let implied = implied_date(md, pool)?;
        let index = IndexLoss::of_pool(&implied.pool);
        let lgd = 1.0 - index.recovery;
        for c in implied.base_curves() {
            let h = index.horizon(c.maturity)?;
            let mut x = vec![0.0];
            let mut y = vec![0.0];
            for k in &c.knots {
                x.push(k.detach);
                y.push(base_loss(index.recovery, &h, k.detach, k.rho));
            }
            x.push(lgd);
            y.push(lgd * h.pd);
            let secants: Vec<f64> = (0..x.len() - 1)
                .map(|i| (y[i + 1] - y[i]) / (x[i + 1] - x[i]))
                .collect();
            if secants.windows(2).any(|w| w[1] > w[0]) {
                println!(
                    "{:<26} (knots not admissible: the candidates need the repair first)",
                    format!("{} {}", &file[15..18], c.maturity)
                );
                continue;
            }
            let (k1, kn) = (c.knots[0].detach, c.knots.last().expect("knots").detach);
            for (name, cand) in candidates(&x, &y) {
                let grid: Vec<f64> = (0..)
                    .map(|j| k1 + j as f64 * 0.001)
                    .take_while(|&k| k <= kn + 1e-12)
                    .collect();
                let rhos: Vec<_> = grid
                    .iter()
                    .map(|&k| correlation_for_loss(index.recovery, k, &h, cand.g(k)))
                    .collect();
                let d2 = rhos
                    .windows(3)
                    .map(|w| (w[2].rho - 2.0 * w[1].rho + w[0].rho).abs())
                    .fold(0.0, f64::max);
                let (lo, hi) = rhos
                    .iter()
                    .fold((1.0f64, 0.0f64), |(a, b), r| (a.min(r.rho), b.max(r.rho)));
                let out = rhos.iter().filter(|r| r.unattainable()).count();
                println!(
                    "{:<26} {:<22} {:>12.2e} {:>5.3}-{:<6.3} {:>12}",
                    format!("{} {}", &file[15..18], c.maturity),
                    name,
                    d2,
                    lo,
                    hi,
                    out
                );
            }
        }
    }
    Ok(())
}
