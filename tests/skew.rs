//! The correlation surface, trades priced off it, mapping and risk: each
//! checked against something outside the code under test.

use chrono::NaiveDate;
use skewbook::book::market::INDEX_POOL;
use skewbook::book::{value_book, value_trade, BookOptions, Mapping, Market, Priced, TradeTerms};
use skewbook::curve::{MarketOptions, Pool, PoolBump};
use skewbook::input::snapshot::read_snapshot;
use skewbook::market::{IndexQuote, Quote};
use skewbook::math::interp::Interp;
use skewbook::solve::chain::{implied_date, Knot};
use skewbook::surface::diagnostics::diagnose;
use skewbook::surface::Surface;
use skewbook::tranche::{Tranche, TrancheSchedule};

const KCX: &str = concat!(
    env!("CARGO_MANIFEST_DIR"),
    "/market-samples/kcx-2026-06-18.csv"
);

fn d(y: i32, m: u32, day: u32) -> NaiveDate {
    NaiveDate::from_ymd_opt(y, m, day).unwrap()
}

/// The KCX sample's date: its implied data and its market under `interp`.
fn kcx(interp: Interp) -> (skewbook::solve::DateImplied, Market) {
    let snap = read_snapshot(KCX).unwrap();
    let md = &snap.dates[0];
    let pool = Pool::build(md, &MarketOptions::default(), KCX).unwrap();
    let implied = implied_date(md, pool).unwrap();
    let surface = Surface::from_implied(&implied, interp).unwrap();
    let market = Market {
        index: implied.pool.clone(),
        surface,
        bespoke: Vec::new(),
    };
    (implied, market)
}

fn trade(pool: &str, maturity: NaiveDate, a: f64, dd: f64, coupon: f64, sign: f64) -> TradeTerms {
    TradeTerms {
        pool: pool.to_string(),
        maturity,
        tranche: Tranche::new(a, dd).unwrap(),
        coupon,
        notional: 1e7,
        sign,
    }
}

fn valued(p: Priced) -> skewbook::book::Valuation {
    match p {
        Priced::Valued(v) => v,
        other => panic!("not priced: {other:?}"),
    }
}

/// Common practice: a tranche at quoted bounds and a quoted maturity,
/// valued off the surface, gives back its quote (the surface passes through
/// its knots under every interpolation). To 1e-8 of the quote's unit.
#[test]
fn quoted_tranches_reprice_off_the_surface() {
    for interp in [Interp::Linear, Interp::Pchip] {
        let (implied, market) = kcx(interp);
        let mut checked = 0;
        for t in implied.tranches() {
            let q = &t.quote;
            if q.detach >= 1.0 || t.base_correlation().is_none() {
                continue;
            }
            let coupon = match q.quote {
                Quote::Spread(s) => s,
                Quote::Upfront { coupon, .. } => coupon,
            };
            let v = valued(
                value_trade(
                    &trade(INDEX_POOL, q.maturity, q.attach, q.detach, coupon, 1.0),
                    &market,
                    Mapping::None,
                )
                .unwrap(),
            );
            let model = match q.quote {
                Quote::Spread(_) => v.par_spread.unwrap() * 1e4,
                Quote::Upfront { .. } => v.upfront * 100.0,
            };
            let err = model - q.quote.exact_in_file_unit();
            assert!(
                err.abs() < 1e-8,
                "{interp:?} {} [{}, {}]: {err}",
                q.maturity,
                q.attach,
                q.detach
            );
            if !v.flags.is_empty() {
                eprintln!(
                    "{interp:?} {} [{}, {}]: {:?}",
                    q.maturity, q.attach, q.detach, v.flags
                );
            }
            checked += 1;
        }
        assert_eq!(checked, 20);
    }
}

/// A flat surface prices like `price --correlation`: the same legs at one
/// correlation (the `price` path is checked against the independent
/// implementation in tests/independent.rs).
#[test]
fn flat_surface_prices_like_a_flat_correlation() {
    let (implied, market) = kcx(Interp::Pchip);
    let knots = |rho| vec![Knot { detach: 0.05, rho }];
    let flat = Surface::from_knots(
        market.index.date,
        Interp::Pchip,
        vec![(d(2029, 6, 20), knots(0.3)), (d(2036, 6, 20), knots(0.3))],
    )
    .unwrap();
    let m = market.with_surface(flat);
    for q in &implied.maturities[1].tranches {
        let t = &q.quote;
        let v = valued(
            value_trade(
                &trade(
                    INDEX_POOL,
                    t.maturity,
                    t.attach,
                    t.detach,
                    t.quote.coupon(),
                    1.0,
                ),
                &m,
                Mapping::None,
            )
            .unwrap(),
        );
        let s = TrancheSchedule::for_pool(&market.index, t.maturity).unwrap();
        let p = skewbook::report::price::price_tranche(&s, t, 0.3).unwrap();
        assert!((v.upfront * 100.0 - p.model_upfront_pct).abs() < 1e-12);
        assert!((v.expected_loss * 100.0 - p.expected_loss_pct).abs() < 1e-12);
    }
}

/// The exceedance curve of a flat-correlation surface is the Vasicek loss
/// distribution's: e_j is the mean of P(L > K) over [K_j, K_(j+1)] (Vasicek
/// 2002), here integrated by Simpson's rule on the independent CDF of
/// `realworld::vasicek`, to the rule's error.
#[test]
fn flat_surface_exceedance_is_the_vasicek_tail() {
    let (_, market) = kcx(Interp::Linear);
    let m = d(2031, 6, 20);
    let flat = Surface::from_knots(
        market.index.date,
        Interp::Linear,
        vec![(
            m,
            vec![Knot {
                detach: 0.1,
                rho: 0.25,
            }],
        )],
    )
    .unwrap();
    let diags = diagnose(&flat, &market.index, 1000).unwrap();
    let g = &diags[0];
    let pd = g.protection_end_pd;
    let v =
        skewbook::realworld::vasicek::Vasicek::new(pd, 0.25, 1.0 - market.index.recovery).unwrap();
    let tail = |k: f64| 1.0 - v.cdf(k);
    for w in g.grid.windows(2).skip(1) {
        let (a, b) = (w[0].k, w[1].k);
        let n = 64;
        let h = (b - a) / n as f64;
        let mut s = tail(a) + tail(b);
        for i in 1..n {
            s += tail(a + i as f64 * h) * if i % 2 == 1 { 4.0 } else { 2.0 };
        }
        let mean = s * h / 3.0 / (b - a);
        let e = w[0].tranchelet_loss.unwrap();
        assert!((e - mean).abs() < 1e-9, "[{a}, {b}]: {e} vs {mean}");
    }
    assert_eq!(g.counts.outside_unit + g.counts.increasing, 0);
}

/// Fact of the trade: a protection seller's position is the buyer's with
/// the sign turned, figure for figure.
#[test]
fn buy_and_sell_are_exact_negatives() {
    let (_, market) = kcx(Interp::Linear);
    let m = d(2032, 6, 20);
    let trades = [
        trade(INDEX_POOL, m, 0.04, 0.08, 0.01, 1.0),
        trade(INDEX_POOL, m, 0.04, 0.08, 0.01, -1.0),
    ];
    let r = value_book(&trades, &market, &BookOptions::default()).unwrap();
    let (b, s) = (
        r[0].priced.valuation().unwrap(),
        r[1].priced.valuation().unwrap(),
    );
    assert_eq!(b.pv, -s.pv);
    let (rb, rs) = (r[0].risk.unwrap(), r[1].risk.unwrap());
    for (x, y) in [
        (rb.spread_01, rs.spread_01),
        (rb.correlation_01, rs.correlation_01),
        (rb.recovery_01, rs.recovery_01),
        (rb.jump_to_default, rs.jump_to_default),
    ] {
        assert_eq!(x.unwrap(), -y.unwrap());
    }
    assert_eq!(rb.delta.unwrap(), -rs.delta.unwrap());
}

/// Fact of the trade: the linear skew of the steep 10-year KCX curve
/// implies a negative expected loss somewhere, and a trade there says so.
#[test]
fn negative_expected_loss_is_flagged_not_clamped() {
    let (_, market) = kcx(Interp::Linear);
    let v = valued(
        value_trade(
            &trade(INDEX_POOL, d(2036, 6, 20), 0.295, 0.30, 0.0, 1.0),
            &market,
            Mapping::None,
        )
        .unwrap(),
    );
    assert!(v.expected_loss < 0.0, "{}", v.expected_loss);
    assert!(v
        .flags
        .contains(&skewbook::flags::Flag::NegativeExpectedLoss));
    let (_, pchip) = kcx(Interp::Pchip);
    let w = valued(
        value_trade(
            &trade(INDEX_POOL, d(2036, 6, 20), 0.295, 0.30, 0.0, 1.0),
            &pchip,
            Mapping::None,
        )
        .unwrap(),
    );
    assert!(w.expected_loss > 0.0);
}

/// A bespoke pool with the index's own quotes and recovery maps onto the
/// index itself under every method: K_I = K and the value of `none`.
#[test]
fn index_mapped_onto_itself_is_the_identity() {
    let (_, mut market) = kcx(Interp::Pchip);
    let twin = Pool::from_quotes(
        market.index.date,
        market.index.quotes.clone(),
        market.index.recovery,
        market.index.discount.clone(),
        "twin",
    )
    .unwrap();
    market.bespoke.push(("twin".to_string(), twin));
    for mapping in Mapping::ALL {
        for (a, dd) in [(0.0, 0.03), (0.05, 0.12), (0.12, 0.25), (0.3, 1.0)] {
            let m = d(2032, 6, 20);
            let on_index = valued(
                value_trade(&trade(INDEX_POOL, m, a, dd, 0.01, 1.0), &market, mapping).unwrap(),
            );
            let on_twin =
                valued(value_trade(&trade("twin", m, a, dd, 0.01, 1.0), &market, mapping).unwrap());
            assert!(
                (on_twin.index_equivalent_attach - a).abs() < 1e-9,
                "{mapping} {a}"
            );
            assert!(
                (on_twin.index_equivalent_detach - dd).abs() < 1e-9,
                "{mapping} {dd}"
            );
            assert!(
                (on_twin.pv - on_index.pv).abs() < 1e-4,
                "{mapping}: {} vs {}",
                on_twin.pv,
                on_index.pv
            );
        }
    }
}

/// Common practice: moneyness mapping scales a detachment by the ratio of
/// pool expected losses at the protection end, EL_I / EL_X.
#[test]
fn moneyness_scales_by_the_expected_loss_ratio() {
    let (_, mut market) = kcx(Interp::Linear);
    let quotes: Vec<IndexQuote> = market
        .index
        .quotes
        .iter()
        .map(|q| IndexQuote {
            quote: Quote::Spread(q.quote.exact_in_file_unit() * 1.8 / 1e4),
            ..q.clone()
        })
        .collect();
    let wide = Pool::from_quotes(
        market.index.date,
        quotes,
        0.35,
        market.index.discount.clone(),
        "wide",
    )
    .unwrap();
    let m = d(2031, 6, 20);
    let tau = skewbook::dates::Schedule::new(market.index.date, m).protection_end_time();
    let ratio = market.index.expected_loss(tau) / wide.expected_loss(tau);
    market.bespoke.push(("wide".to_string(), wide));
    let v = valued(
        value_trade(
            &trade("wide", m, 0.05, 0.12, 0.01, 1.0),
            &market,
            Mapping::Moneyness,
        )
        .unwrap(),
    );
    assert!((v.index_equivalent_attach - 0.05 * ratio).abs() < 1e-15);
    assert!((v.index_equivalent_detach - 0.12 * ratio).abs() < 1e-15);
    assert!(ratio < 0.6);
}

/// The whole pool [0, 100%] on the index: no correlation risk, and a delta
/// of about one (its legs run on the coupon schedule, the index's are exact
/// integrals: within 0.5%); a tiling of [0, 100%] with notionals in
/// proportion to the widths adds up to it exactly (each base tranche is
/// valued once on each side of a bound).
#[test]
fn whole_pool_delta_is_one_and_a_tiling_adds_up() {
    let (_, market) = kcx(Interp::Pchip);
    let m = d(2031, 6, 20);
    let whole = trade(INDEX_POOL, m, 0.0, 1.0, 0.007, 1.0);
    let bounds = [0.0, 0.03, 0.07, 0.1, 0.15, 0.3, 1.0];
    let mut book = vec![whole.clone()];
    for w in bounds.windows(2) {
        let mut t = trade(INDEX_POOL, m, w[0], w[1], 0.007, 1.0);
        t.notional = whole.notional * (w[1] - w[0]);
        book.push(t);
    }
    let r = value_book(&book, &market, &BookOptions::default()).unwrap();
    let k = r[0].risk.unwrap();
    assert!(
        k.correlation_01.unwrap().abs() < 1e-6,
        "{:?}",
        k.correlation_01
    );
    let delta = k.delta.unwrap();
    assert!((delta - 1.0).abs() < 0.005, "delta {delta}");
    let sum = |f: &dyn Fn(&skewbook::book::TradeResult) -> f64| r[1..].iter().map(f).sum::<f64>();
    let pv = sum(&|x| x.priced.pv().unwrap());
    assert!(
        (pv - r[0].priced.pv().unwrap()).abs() < 1e-6 * whole.notional * 1e-3,
        "{pv}"
    );
    for (f, name) in [
        (
            &(|x: &skewbook::book::TradeResult| x.risk.unwrap().spread_01.unwrap())
                as &dyn Fn(&skewbook::book::TradeResult) -> f64,
            "spread_01",
        ),
        (
            &|x: &skewbook::book::TradeResult| x.risk.unwrap().recovery_01.unwrap(),
            "recovery_01",
        ),
        (
            &|x: &skewbook::book::TradeResult| x.risk.unwrap().jump_to_default.unwrap(),
            "jump_to_default",
        ),
    ] {
        let whole_figure = f(&r[0]);
        assert!(
            (sum(f) - whole_figure).abs() < 1e-6,
            "{name}: {} vs {whole_figure}",
            sum(f)
        );
    }
}

/// spread_01 and correlation_01 are one-sided differences of pv; a central
/// difference with a quarter of the bump gives the derivative, and the two
/// may differ only by the curvature term, half the second difference
/// scaled to the full bump (with a 50% margin for its own estimate).
#[test]
fn sensitivities_match_central_differences() {
    let (_, market) = kcx(Interp::Pchip);
    let t = trade(INDEX_POOL, d(2032, 6, 20), 0.04, 0.08, 0.01, -1.0);
    let r = value_book(std::slice::from_ref(&t), &market, &BookOptions::default()).unwrap();
    let pv = r[0].priced.pv().unwrap();
    let risk = r[0].risk.unwrap();
    let pv_in = |m: &Market| value_trade(&t, m, Mapping::None).unwrap().pv().unwrap();
    let h = 0.25e-4;
    let up = pv_in(
        &market
            .with_pool_bumped(INDEX_POOL, PoolBump::ParSpread(h))
            .unwrap(),
    );
    let dn = pv_in(
        &market
            .with_pool_bumped(INDEX_POOL, PoolBump::ParSpread(-h))
            .unwrap(),
    );
    let slope = (up - dn) / (2.0 * h);
    let curvature = (up - 2.0 * pv + dn) / (h * h);
    let tol = 1.5 * 0.5 * curvature.abs() * 1e-8 + 1e-6;
    assert!(
        (risk.spread_01.unwrap() - slope * 1e-4).abs() < tol,
        "{} vs {}",
        risk.spread_01.unwrap(),
        slope * 1e-4
    );
    let h = 0.0025;
    let up = pv_in(&market.with_surface(market.surface.bumped(h).unwrap()));
    let dn = pv_in(&market.with_surface(market.surface.bumped(-h).unwrap()));
    let slope = (up - dn) / (2.0 * h);
    let curvature = (up - 2.0 * pv + dn) / (h * h);
    let tol = 1.5 * 0.5 * curvature.abs() * 1e-4 + 1e-6;
    assert!(
        (risk.correlation_01.unwrap() - slope * 0.01).abs() < tol,
        "{} vs {}",
        risk.correlation_01.unwrap(),
        slope * 0.01
    );
}

/// Jump to default against a brute-force repricing: one of n names of a
/// pool made by hand defaults now; the original tranche is valued directly
/// on the shifted pool loss l + (1 - 1/n) L_s and recovery r + (1 - 1/n)
/// Rec_s of the survivors (large pool, flat correlation), each expectation
/// over the factor by Gauss-Legendre split at its kinks, the legs summed on
/// the contract's schedule. No tranche legs, bounds algebra or surface of
/// the library are used, only its schedule, curves and normal functions.
#[test]
fn jump_to_default_matches_a_brute_force_repricing() {
    use gauss_quad::legendre::GaussLegendre;
    use skewbook::math::normal::{cdf, inv_cdf};
    let (_, market) = kcx(Interp::Linear);
    let rho = 0.27;
    let m = d(2031, 6, 20);
    let flat = Surface::from_knots(
        market.index.date,
        Interp::Linear,
        vec![(m, vec![Knot { detach: 0.05, rho }])],
    )
    .unwrap();
    let market = market.with_surface(flat);
    let pool = &market.index;
    let n = 125usize;
    let opts = BookOptions {
        names: n,
        ..BookOptions::default()
    };
    let gl = GaussLegendre::new(std::num::NonZeroUsize::new(40).unwrap());
    let (r, nn) = (pool.recovery, n as f64);
    let (l, rec, s) = ((1.0 - r) / nn, r / nn, 1.0 - 1.0 / nn);
    // E[min(a + b p(Z), K)] split where a + b p(Z) crosses K.
    let expect = |pd: f64, a: f64, b: f64, caps: &[f64], f: &dyn Fn(f64) -> f64| -> f64 {
        let c = inv_cdf(pd);
        let p = |z: f64| cdf((c - rho.sqrt() * z) / (1.0 - rho).sqrt());
        let mut cuts = vec![-12.0, 12.0];
        for &k in caps {
            let ps = (k - a) / b;
            if ps > 0.0 && ps < 1.0 {
                let z = (c - (1.0 - rho).sqrt() * inv_cdf(ps)) / rho.sqrt();
                if z.abs() < 12.0 {
                    cuts.push(z);
                }
            }
        }
        cuts.sort_by(f64::total_cmp);
        cuts.windows(2)
            .map(|w| {
                gl.integrate(w[0], w[1], |z| {
                    f(a + b * p(z)) * skewbook::math::normal::pdf(z)
                })
            })
            .sum()
    };
    for (a, dd, sign) in [
        (0.0, 0.03, 1.0),
        (0.03, 0.07, -1.0),
        (0.0035, 0.02, 1.0),
        (0.3, 1.0, 1.0),
    ] {
        let t = trade(INDEX_POOL, m, a, dd, 0.01, sign);
        let res = value_book(std::slice::from_ref(&t), &market, &opts).unwrap();
        let pv = res[0].priced.pv().unwrap();
        let jtd = res[0].risk.unwrap().jump_to_default.unwrap();
        let w = dd - a;
        let sched = skewbook::dates::Schedule::new(pool.date, m);
        let at = |time: f64| {
            let pd = pool.hazard.default_probability(time);
            let loss = expect(pd, l, s * (1.0 - r), &[a, dd], &|x| x.min(dd) - x.min(a)) / w;
            let amort = expect(pd, rec, s * r, &[1.0 - a, 1.0 - dd], &|x| {
                x.min(1.0 - a) - x.min(1.0 - dd)
            }) / w;
            (loss, 1.0 - loss - amort)
        };
        let x = l.min(dd) - l.min(a);
        let mut prev = at(sched.periods[0].t_start);
        let mut value = x / w;
        for p in &sched.periods {
            let cur = at(p.t_end);
            let df = pool.discount.df(p.t_pay);
            value += df * (cur.0 - prev.0) - 0.01 * p.accrual * df * (prev.1 + cur.1) / 2.0;
            prev = cur;
        }
        let brute = sign * t.notional * value - pv;
        assert!(
            (jtd - brute).abs() < 1e-6 * t.notional * 1e-2,
            "[{a}, {dd}]: {jtd} vs brute force {brute}"
        );
    }
}

/// Bucketed figures add up to the parallel ones to first order, and the
/// gap is the higher-order term Taylor's theorem gives. Along one bump of
/// size h, with forward differences D2 = f(2h) - 2f(h) + f(0),
/// D3 = f(3h) - 3f(2h) + 3f(h) - f(0) and D4 likewise, and f_k the k-th
/// derivative at 0, the one-sided difference the risk figure takes is
///
/// ```text
/// f(h) - f(0) = h f_1 + D2 / 2 - D3 / 3 + D4 / 4 + O(h^5)
/// ```
///
/// (match powers of h: D2 = h^2 f_2 + h^3 f_3 + 7/12 h^4 f_4,
/// D3 = h^3 f_3 + 3/2 h^4 f_4, D4 = h^4 f_4). The first-order parts of the
/// buckets add up to the parallel one, so
///
/// ```text
/// sum_i bucket_i - parallel = (sum_i D2_i - D2) / 2 - (sum_i D3_i - D3) / 3 + rest,
/// |rest| <= (|D4| + sum_i |D4_i|) / 4, doubled for the orders above
/// ```
///
/// and 1e-4 currency covers rounding in the valuations.
#[test]
fn buckets_add_up_to_the_parallel_figure_to_first_order() {
    let (_, market) = kcx(Interp::Pchip);
    let opts = BookOptions {
        buckets: true,
        ..BookOptions::default()
    };
    let pv_in =
        |t: &TradeTerms, m: &Market| value_trade(t, m, Mapping::None).unwrap().pv().unwrap();
    // Second, third and fourth forward differences of pv along one bump.
    let differences = |pv: f64, at: &dyn Fn(f64) -> f64, h: f64| {
        let (p1, p2, p3, p4) = (at(h), at(2.0 * h), at(3.0 * h), at(4.0 * h));
        [
            p2 - 2.0 * p1 + pv,
            p3 - 3.0 * p2 + 3.0 * p1 - pv,
            p4 - 4.0 * p3 + 6.0 * p2 - 4.0 * p1 + pv,
        ]
    };
    for t in [
        trade(INDEX_POOL, d(2032, 6, 20), 0.04, 0.08, 0.01, 1.0),
        trade(INDEX_POOL, d(2031, 6, 20), 0.0, 0.03, 0.05, -1.0),
    ] {
        let r = value_book(std::slice::from_ref(&t), &market, &opts).unwrap();
        let (risk, b) = (r[0].risk.unwrap(), r[0].buckets.clone().unwrap());
        let pv = r[0].priced.pv().unwrap();
        let sum_s: f64 = b.spread_01.iter().map(|x| x.1.unwrap()).sum();
        let sum_c: f64 = b.correlation_01.iter().map(|x| x.2.unwrap()).sum();
        let check = |what: &str, sum: f64, parallel: f64, d: [f64; 3], each: Vec<[f64; 3]>| {
            let total = |k: usize| each.iter().map(|e| e[k]).sum::<f64>() - d[k];
            let predicted = total(0) / 2.0 - total(1) / 3.0;
            let rest = (d[2].abs() + each.iter().map(|e| e[2].abs()).sum::<f64>()) / 2.0 + 1e-4;
            let gap = sum - parallel;
            eprintln!("{what}: d2 {:?} each {:?}", d, each);
            assert!(
                (gap - predicted).abs() <= rest,
                "{what}: buckets {sum} vs parallel {parallel}: gap {gap}, predicted {predicted}, rest allowed {rest}"
            );
        };
        let spread = |pillar: Option<usize>, by: f64| {
            let bump = match pillar {
                None => PoolBump::ParSpread(by),
                Some(pillar) => PoolBump::PillarParSpread { pillar, by },
            };
            pv_in(&t, &market.with_pool_bumped(INDEX_POOL, bump).unwrap())
        };
        check(
            "spread",
            sum_s,
            risk.spread_01.unwrap(),
            differences(pv, &|by| spread(None, by), 1e-4),
            (0..market.index.pillars.len())
                .map(|i| differences(pv, &|by| spread(Some(i), by), 1e-4))
                .collect(),
        );
        let corr = |s: Surface| pv_in(&t, &market.with_surface(s));
        let parallel = |by: f64| corr(market.surface.bumped(by).unwrap());
        check(
            "correlation",
            sum_c,
            risk.correlation_01.unwrap(),
            differences(pv, &parallel, 0.01),
            market
                .surface
                .knots()
                .into_iter()
                .map(|(i, j, _, _)| {
                    differences(
                        pv,
                        &|by| corr(market.surface.bumped_knot(i, j, by).unwrap()),
                        0.01,
                    )
                })
                .collect(),
        );
    }
}
