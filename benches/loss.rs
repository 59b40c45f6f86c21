//! Criterion benches of the large-pool numerics: the bivariate normal (the
//! inner loop of tranche pricing) and base-tranche expectations by the
//! closed form and by quadrature. Each iteration asserts its result.
use criterion::{black_box, criterion_group, criterion_main, Criterion};
use skewbook::loss::{closed, quadrature, BaseTranche, Cap, Horizon, Method};
use skewbook::math::bvn::{bvn_cdf, norm_cdf};

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
    // the pricer's pattern: a sweep of rho at fixed horizon and tranche
    c.bench_function("lhp/base/closed/sweep40", |b| {
        b.iter(|| {
            let mut total = 0.0;
            for i in 1..=40 {
                total += base
                    .expectation(&h, black_box(i as f64 / 41.0), Method::ClosedForm)
                    .loss;
            }
            assert!(total > 0.0 && total < 40.0 * 0.07);
            total
        })
    });
}

criterion_group!(benches, bvn, lhp);
criterion_main!(benches);
