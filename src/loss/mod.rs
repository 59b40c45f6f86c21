//! Large-homogeneous-pool expected tranche loss and outstanding notional.
//!
//! TEMPORARY (lead's stand-in until the numerics branch lands): quadrature
//! over the factor split at the kink, derivatives by central differences.
#![allow(missing_docs)]

use crate::math::normal::{cdf, inv_cdf, pdf};
use gauss_quad::GaussLegendre;
use std::num::NonZeroUsize;
use std::sync::OnceLock;

#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Horizon {
    pub pd: f64,
    pub c: f64,
}
impl Horizon {
    pub fn new(pd: f64) -> Self {
        Horizon { pd, c: inv_cdf(pd) }
    }
}
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct BaseExpectation {
    pub loss: f64,
    pub outstanding: f64,
    pub dloss_drho: f64,
    pub doutstanding_drho: f64,
}

fn rule() -> &'static GaussLegendre {
    static R: OnceLock<GaussLegendre> = OnceLock::new();
    R.get_or_init(|| GaussLegendre::new(NonZeroUsize::new(40).unwrap()))
}

/// E[min(p(Z), k)].
fn emin(h: &Horizon, k: f64, rho: f64) -> f64 {
    if h.pd <= 0.0 || k <= 0.0 {
        return 0.0;
    }
    if k >= 1.0 {
        return h.pd;
    }
    let (sr, s1) = (rho.sqrt(), (1.0 - rho).sqrt());
    let zk = (h.c - s1 * inv_cdf(k)) / sr;
    let p = |z: f64| cdf((h.c - sr * z) / s1);
    let zs = h.c / sr;
    let w = s1 / sr;
    let lo = zk.max(-10.0);
    let hi = 10.0f64.max(lo);
    let mut cuts = vec![lo];
    for m in [-8.0, -3.0, -1.0, 0.0, 1.0, 3.0, 8.0] {
        let x = zs + m * w;
        if x > lo && x < hi {
            cuts.push(x);
        }
    }
    cuts.push(hi);
    cuts.sort_by(f64::total_cmp);
    let mut s = k * cdf(zk);
    for c in cuts.windows(2) {
        s += rule().integrate(c[0], c[1], |z| p(z) * pdf(z));
    }
    s
}

fn base_at(h: &Horizon, r: f64, k: f64, rho: f64) -> (f64, f64) {
    let loss = (1.0 - r) * emin(h, k / (1.0 - r), rho);
    let rec_all = r * h.pd;
    let rec_k = if r > 0.0 {
        r * emin(h, (1.0 - k) / r, rho)
    } else {
        0.0
    };
    (loss, k - loss - (rec_all - rec_k))
}

pub fn base_tranche(h: &Horizon, r: f64, k: f64, rho: f64) -> BaseExpectation {
    let (loss, outstanding) = base_at(h, r, k, rho);
    let e = 1e-6 * rho.min(1.0 - rho);
    let (l1, o1) = base_at(h, r, k, rho + e);
    let (l0, o0) = base_at(h, r, k, rho - e);
    BaseExpectation {
        loss,
        outstanding,
        dloss_drho: (l1 - l0) / (2.0 * e),
        doutstanding_drho: (o1 - o0) / (2.0 * e),
    }
}
