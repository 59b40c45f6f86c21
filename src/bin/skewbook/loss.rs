//! `skewbook loss`.

use crate::{Failure, Outcome};
use skewbook::output::write_report;
use skewbook::report::loss::build_loss;
use std::io::Write;

/// Runs the command.
pub fn run(args: crate::cli::LossArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    let report = build_loss(
        args.pd,
        args.rho,
        args.lgd,
        &args.levels,
        args.maturity,
        args.turnover,
    )?;
    write_report(out, &report, args.format.into())?;
    Ok(Outcome::Clean)
}
