//! `skewbook loss`: PD, rho, LGD and levels typed in percent.

use crate::{units, Failure, Outcome};
use skewbook::output::write_report;
use skewbook::report::loss::build_loss;
use std::io::Write;

/// Runs the command.
pub fn run(args: crate::cli::LossArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    let pd = units::PD.read(args.pd)?;
    let rho = units::RHO.read(args.rho)?;
    let lgd = units::LGD.read(args.lgd)?;
    let levels = units::levels(&args.levels)?;
    let report = build_loss(pd, rho, lgd, &levels, args.maturity, args.turnover)?;
    write_report(out, &report, args.format.into())?;
    Ok(Outcome::Clean)
}
