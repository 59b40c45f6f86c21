//! `skewbook implied`: compound and base correlation from the quotes.

use crate::cli::ImpliedArgs;
use crate::{Failure, Outcome};
use skewbook::output::write_report;
use std::io::Write;

/// Runs the command: exit status 1 when some quote has no solution.
pub fn run(args: ImpliedArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    let (snapshot, opts) = crate::curve::load(&args.market)?;
    let model = args.pool.model()?;
    let report = skewbook::report::implied::build_with(&snapshot, &opts, model, args.compare_pool)?;
    write_report(out, &report, args.market.format.into())?;
    Ok(if report.any_unsolved() {
        Outcome::Unsolved
    } else {
        Outcome::Clean
    })
}
