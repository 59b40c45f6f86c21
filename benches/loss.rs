//! Criterion benches of the large-pool numerics: the bivariate normal (the
//! inner loop of tranche pricing) and base-tranche expectations by the
//! closed form and by quadrature. Each iteration asserts its result.
use criterion::{black_box, criterion_group, criterion_main, Criterion};
use skewbook::loss::{closed, quadrature, BaseTranche, Cap, Correlation, Horizon, Method};
use skewbook::math::bvn::{bvn_cdf, Bvn};
use skewbook::math::normal::cdf as norm_cdf;

fn bvn(c: &mut Criterion) {
    let mut g = c.benchmark_group("bvn/genz");
    // one argument set per branch: 6, 12, 20 points and the |r| >= 0.925 form
    for (name, h, k, r) in [
        ("r0.2", -1.6, 0.4, -0.2),
        ("r0.5", -1.6, 0.4, -0.5),
        ("r0.8", -1.6, 0.4, -0.8),
        ("r0.95", -1.6, 0.4, -0.95),
    ] {
        g.bench_function(name, |b| {
            b.iter(|| {
                let p = bvn_cdf(black_box(h), black_box(k), black_box(r));
                assert!(p > 0.0 && p < 0.06);
                p
            })
        });
    }
    g.finish();
    // the same with the r-dependent part built once (Bvn::new outside the loop)
    let mut g = c.benchmark_group("bvn/genz_fixed_r");
    for (name, h, k, r) in [
        ("r0.2", -1.6, 0.4, -0.2),
        ("r0.5", -1.6, 0.4, -0.5),
        ("r0.8", -1.6, 0.4, -0.8),
        ("r0.95", -1.6, 0.4, -0.95),
    ] {
        let rule = Bvn::new(r);
        g.bench_function(name, |b| {
            b.iter(|| {
                let p = rule.cdf(black_box(h), black_box(k));
                assert!(p > 0.0 && p < 0.06);
                p
            })
        });
    }
    g.finish();
    c.bench_function("normal/cdf", |b| {
        b.iter(|| {
            let p = norm_cdf(black_box(-1.3));
            assert!(p > 0.09 && p < 0.1);
            p
        })
    });
}

fn lhp(c: &mut Criterion) {
    let h = Horizon::new(0.05).expect("pd");
    let base = BaseTranche::new(0.4, 0.07).expect("tranche");
    let cap = Cap::new(0.07 / 0.6);
    c.bench_function("lhp/expected_min/closed", |b| {
        b.iter(|| {
            let v = closed::value(&h, &cap, black_box(0.3));
            assert!(v > 0.0 && v < 0.05);
            v
        })
    });
    c.bench_function("lhp/expected_min/quadrature", |b| {
        b.iter(|| {
            let v = quadrature::value(&h, &cap, black_box(0.3));
            assert!(v > 0.0 && v < 0.05);
            v
        })
    });
    for (name, method) in [
        ("lhp/base/closed", Method::ClosedForm),
        ("lhp/base/quadrature", Method::Quadrature),
    ] {
        c.bench_function(name, |b| {
            b.iter(|| {
                let e = base.expectation(&h, black_box(0.3), method);
                assert!(e.loss > 0.0 && e.loss < 0.07 && e.outstanding > 0.0);
                e
            })
        });
    }
    let at = Correlation::new(0.3);
    c.bench_function("lhp/base/closed_at", |b| {
        b.iter(|| {
            let e = base.closed_form(black_box(&h), &at);
            assert!(e.loss > 0.0 && e.loss < 0.07 && e.outstanding > 0.0);
            e
        })
    });
    // the pricer's pattern: one correlation, a base tranche at 40 horizons
    let horizons: Vec<Horizon> = (1..=40)
        .map(|i| Horizon::new(0.0025 * i as f64).expect("pd"))
        .collect();
    c.bench_function("lhp/base/closed_at/horizons40", |b| {
        b.iter(|| {
            let at = Correlation::new(black_box(0.3));
            let total: f64 = horizons.iter().map(|h| base.closed_form(h, &at).loss).sum();
            assert!(total > 0.0 && total < 40.0 * 0.07);
            total
        })
    });
}

criterion_group!(benches, bvn, lhp);
criterion_main!(benches);
