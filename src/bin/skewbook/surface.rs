//! `skewbook surface`: the correlation surface and its arbitrage diagnostics.

use crate::cli::SurfaceArgs;
use crate::{Failure, Outcome};
use skewbook::output::write_report;
use std::io::Write;

/// Runs the command: violations are results (exit 0), not errors.
pub fn run(args: SurfaceArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    // `--date`, `--from` and `--to` are applied by `load`.
    let (snapshot, opts) = crate::curve::load(&args.market)?;
    let model = args.pool.model()?;
    let report = skewbook::report::surface::build_with(
        &snapshot,
        &opts,
        args.interp.into(),
        crate::units::to_fraction(args.step_pct),
        None,
        model,
    )?;
    write_report(out, &report, args.market.format.into())?;
    Ok(Outcome::Clean)
}
