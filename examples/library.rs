//! skewbook as a library: read a snapshot, back out the skew, check it.
//!
//! ```text
//! cargo run --example library
//! ```

use skewbook::curve::MarketOptions;
use skewbook::input::snapshot::parse_snapshot;
use skewbook::report::implied;

fn main() -> Result<(), skewbook::Error> {
    // An invented five-year pool: index at 60 bp, equity upfront with a
    // 500 bp running coupon, a mezzanine par spread.
    let text = "\
date,instrument,maturity,attach_pct,detach_pct,quote_kind,quote,coupon_bp
2026-06-18,index,2031-06-20,,,spread_bp,60,
2026-06-18,tranche,2031-06-20,0,3,upfront_pct,40.5,500
2026-06-18,tranche,2031-06-20,3,7,spread_bp,240,
";
    let snapshot = parse_snapshot(text, "inline")?;
    let report = implied::build(&snapshot, &MarketOptions::default())?;
    for t in &report.dates[0].tranches {
        println!(
            "{}-{}%: compound {:?}, base {:?}, repricing error {:?}",
            t.tranche.attach_pct,
            t.tranche.detach_pct,
            t.compound_correlation,
            t.base_correlation,
            t.base_reprice_error
        );
        // Every quote solved, and the base curve gives each quote back.
        let base = t.base_correlation.ok_or_else(|| {
            skewbook::Error::msg(skewbook::ErrorKind::Unfittable, "no base correlation")
        })?;
        assert!(base > 0.0 && base < 1.0);
        assert!(t.base_reprice_error.is_some_and(|e| e.abs() < 1e-8));
    }
    // For the equity tranche compound and base correlation are one number.
    let eq = &report.dates[0].tranches[0];
    assert!((eq.compound_correlation[0] - eq.base_correlation.unwrap_or(f64::NAN)).abs() < 1e-10);
    Ok(())
}
