//! `skewbook implied`: compound and base correlation from the quotes.

use crate::cli::ImpliedArgs;
use crate::{Failure, Outcome};
use skewbook::output::write_report;
use skewbook::report::implied::ImpliedOptions;
use std::io::Write;

/// Runs the command: exit status 1 when some quote has no solution. A run
/// of more than one date ends with its summary on standard error, after
/// the output.
pub fn run(args: ImpliedArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    let (snapshot, opts) = crate::curve::load(&args.market)?;
    let implied = ImpliedOptions {
        index_tolerance_bp: args.index_tolerance,
    };
    let report = skewbook::report::implied::build_with(&snapshot, &opts, &implied)?;
    write_report(out, &report, args.market.format.into())?;
    if report.dates.len() > 1 {
        out.flush()?;
        for line in report.summary().lines() {
            eprintln!("summary: {line}");
        }
    }
    Ok(if report.any_unsolved() {
        Outcome::Unsolved
    } else {
        Outcome::Clean
    })
}
