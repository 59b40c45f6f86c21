//! Index consistency: do a maturity's tranche quotes agree with the index?
//!
//! # What is compared, and why the protection legs
//!
//! When the tranches of one maturity tile the capital structure from 0% to
//! 100%, their notional-weighted protection legs add up to the protection
//! leg of the whole pool, whatever the correlations: base tranche [0, D]
//! minus [0, A], summed over a tiling, telescopes to [0, 100%], which does
//! not depend on correlation. So the quotes of a tiling and the index curve
//! must agree on one number, the pool's protection.
//!
//! Each tranche's quote fixes its own protection leg, at its correlations:
//! a running spread (or coupon) `c` and an upfront `u` are worth
//! `c · annuity + u · DF(settlement)`, which the protection leg must equal
//! for the tranche to be fairly priced. Below the top the base correlation
//! is solved so that it does; the top tranche [A, 100%] has no correlation
//! of its own (it is valued at the base correlation of A on both bases), so
//! a top quote that implies another pool loss than the index's shows here
//! and nowhere else:
//!
//! ```text
//! gap     = Σ_i W_i (c_i · annuity_i + u_i · DF(ts))  -  protection[0, 100%]
//! gap_bp  = 10⁴ · gap / annuity[0, 100%]
//! ```
//!
//! with W_i the widths, each tranche's legs at its base correlations, and
//! the whole pool's protection and annuity on the tranches' own schedule
//! (the index contract of that maturity, discretised as the tranche legs
//! are, so a consistent set of quotes gives a gap of 0 to rounding). The
//! index contract's own legs, integrated exactly with accrued-on-default,
//! give a par spread 0.1 to 0.4 bp above the whole pool's on the tranche
//! schedule for three- to ten-year maturities of the bundled samples: a
//! comparison against them would spend a third of the default tolerance
//! on discretisation. `gap_bp` is the running spread,
//! in bp, that the gap in protection amounts to on the index's annuity:
//! positive when the tranche quotes imply more pool loss than the index.
//!
//! The comparison against the pool's expected loss (1 - R) PD at the
//! protection end alone would be empty: the tranches' expected losses at
//! their base correlations telescope to exactly that number by
//! construction. Comparing protection legs brings in the quotes.
//!
//! A maturity whose tranches do not reach 100%, do not tile, or whose base
//! chain broke has no gap.

use crate::solve::chain::{BaseOutcome, MaturityImplied};
use chrono::NaiveDate;

/// Default tolerance on the gap: 1 bp of running spread.
pub const DEFAULT_TOLERANCE_BP: f64 = 1.0;

/// How far a maturity's tranche quotes are from the index curve.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct IndexGap {
    /// Tranche maturity.
    pub maturity: NaiveDate,
    /// Protection implied by the tranche quotes minus the whole pool's, per
    /// unit of pool notional.
    pub protection_gap: f64,
    /// That gap as running spread on the whole pool's annuity, bp.
    pub gap_bp: f64,
}

impl IndexGap {
    /// Whether the gap exceeds `tolerance_bp` in size.
    pub fn exceeds(&self, tolerance_bp: f64) -> bool {
        self.gap_bp.abs() > tolerance_bp
    }
}

/// The gap between a maturity's tranche quotes and the index curve of
/// `pool`, or `None` when the tranches do not tile 0-100% with a base
/// correlation below the top (or, which the chain that solved them rules
/// out, a tranche cannot be priced).
///
/// # Formula
/// ```text
/// gap_bp = 10⁴ · (Σ_i W_i (c_i ann_i + u_i DF(ts)) - prot[0, 1]) / ann[0, 1]
/// ```
///
/// The chain already valued each tranche at its base correlations and the
/// whole pool on the maturity's schedule ([`MaturityImplied`] keeps both,
/// in whichever pool model solved them), so this only adds them up.
pub fn index_gap(m: &MaturityImplied) -> Option<IndexGap> {
    let reaches_top = m
        .tranches
        .last()
        .is_some_and(|t| t.quote.detach >= 1.0 - 1e-12);
    if !m.base_curve.tiles || !reaches_top {
        return None;
    }
    let mut implied = 0.0;
    for t in &m.tranches {
        let priced = matches!(
            t.base,
            BaseOutcome::Solved { .. } | BaseOutcome::Top { .. } | BaseOutcome::WholePool
        );
        let premium = t.repriced.filter(|_| priced)?.premium;
        implied += (t.quote.detach - t.quote.attach) * premium;
    }
    let whole = m.whole_pool;
    if whole.annuity.is_nan() || whole.annuity <= 1e-14 {
        return None;
    }
    let gap = implied - whole.protection;
    Some(IndexGap {
        maturity: m.base_curve.maturity,
        protection_gap: gap,
        gap_bp: 1e4 * gap / whole.annuity,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::curve::{MarketOptions, Pool};
    use crate::input::snapshot::parse_snapshot;
    use crate::solve::chain::implied_date;
    use crate::tranche::{Tranche, TrancheSchedule, TrancheValuer};

    fn gaps(rows: &str) -> Vec<Option<IndexGap>> {
        let text = format!(
            "date,instrument,maturity,attach_pct,detach_pct,quote_kind,quote,coupon_bp\n\
             2026-06-18,index,2031-06-20,,,spread_bp,60,\n{rows}"
        );
        let snap = parse_snapshot(&text, "t.csv").expect("snapshot");
        let md = &snap.dates[0];
        let pool = Pool::build(md, &MarketOptions::default(), "t.csv").expect("pool");
        let d = implied_date(md, pool).expect("implied");
        d.maturities.iter().map(index_gap).collect()
    }

    /// The whole pool alone tiles 0-100%: its gap is its quote minus its
    /// own par spread (protection / annuity on the schedule), which is the
    /// model quote the chain reports for it.
    #[test]
    fn the_whole_pool_alone_gives_its_quote_minus_its_par_spread() {
        let text = "date,instrument,maturity,attach_pct,detach_pct,quote_kind,quote,coupon_bp\n\
                    2026-06-18,index,2031-06-20,,,spread_bp,60,\n\
                    2026-06-18,tranche,2031-06-20,0,100,spread_bp,70,\n";
        let snap = parse_snapshot(text, "t.csv").expect("snapshot");
        let md = &snap.dates[0];
        let pool = Pool::build(md, &MarketOptions::default(), "t.csv").expect("pool");
        let d = implied_date(md, pool).expect("implied");
        let par = d.maturities[0].tranches[0]
            .whole_pool_quote
            .expect("a par spread");
        let g = index_gap(&d.maturities[0]).expect("a gap");
        assert!((g.gap_bp - (70.0 - par)).abs() < 1e-9, "{} {par}", g.gap_bp);
        assert!(g.exceeds(1.0) && !g.exceeds(20.0));
    }

    /// No gap without a tiling that reaches 100%, or with a broken chain.
    #[test]
    fn no_gap_without_a_complete_tiling() {
        let below_top = "2026-06-18,tranche,2031-06-20,0,3,upfront_pct,40,500\n\
                         2026-06-18,tranche,2031-06-20,3,7,spread_bp,240,\n";
        assert_eq!(gaps(below_top), [None]);
        let gap_in_bounds = "2026-06-18,tranche,2031-06-20,0,3,upfront_pct,40,500\n\
                             2026-06-18,tranche,2031-06-20,7,100,spread_bp,10,\n";
        assert_eq!(gaps(gap_in_bounds), [None]);
        // An equity upfront of 99.9% no correlation reaches: the chain
        // breaks at the bottom.
        let broken = "2026-06-18,tranche,2031-06-20,0,3,upfront_pct,99.9,500\n\
                      2026-06-18,tranche,2031-06-20,3,100,spread_bp,10,\n";
        assert_eq!(gaps(broken), [None]);
        let whole = "2026-06-18,tranche,2031-06-20,0,3,upfront_pct,40,500\n\
                     2026-06-18,tranche,2031-06-20,3,100,spread_bp,10,\n";
        assert!(gaps(whole)[0].is_some());
    }

    /// The gap from the chain's own valuations equals the gap from every
    /// tranche valued afresh at its base correlations and the whole pool
    /// valued on a schedule built again (the index check as first written).
    #[test]
    fn the_gap_from_the_chain_equals_a_fresh_valuation() {
        let text = std::fs::read_to_string(concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/market-samples/kcx-2026-06-18.csv"
        ))
        .expect("sample");
        let snap = parse_snapshot(&text, "kcx.csv").expect("snapshot");
        let md = &snap.dates[0];
        let pool = Pool::build(md, &MarketOptions::default(), "kcx.csv").expect("pool");
        let d = implied_date(md, pool).expect("implied");
        let mut checked = 0;
        for m in &d.maturities {
            let Some(g) = index_gap(m) else { continue };
            let schedule =
                TrancheSchedule::for_pool(&d.pool, m.base_curve.maturity).expect("schedule");
            let mut implied = 0.0;
            for t in &m.tranches {
                let tranche = Tranche::new(t.quote.attach, t.quote.detach).expect("bounds");
                let v = TrancheValuer::new(&schedule, tranche, t.quote.quote).expect("valuer");
                let legs = match t.base {
                    BaseOutcome::Solved {
                        rho_attach,
                        rho_detach,
                    } => v.legs(rho_attach, rho_detach),
                    BaseOutcome::Top { rho_attach } => v.legs(rho_attach, rho_attach),
                    _ => v.legs_flat(0.5),
                };
                implied += tranche.width()
                    * (v.running() * legs.annuity + v.upfront() * schedule.df_settlement());
            }
            let whole = schedule.base_legs(&schedule.base(1.0).expect("base"), 0.5);
            let gap_bp = 1e4 * (implied - whole.protection) / whole.annuity;
            assert!((g.gap_bp - gap_bp).abs() < 1e-9, "{} {gap_bp}", g.gap_bp);
            checked += 1;
        }
        assert!(
            checked >= 3,
            "the KCX sample tiles at every maturity: {checked}"
        );
    }
}
