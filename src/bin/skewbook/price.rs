//! `skewbook price`: every tranche at one flat correlation.

use crate::cli::PriceArgs;
use crate::{Failure, Outcome};
use skewbook::output::write_report;
use std::io::Write;

/// Runs the command.
pub fn run(args: PriceArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    let rho = crate::units::CORRELATION.read(args.correlation)?;
    let (snapshot, opts) = crate::curve::load(&args.market)?;
    let model = args.pool.model()?;
    let report = skewbook::report::price::build_with(&snapshot, &opts, rho, model)?;
    write_report(out, &report, args.market.format.into())?;
    Ok(Outcome::Clean)
}
