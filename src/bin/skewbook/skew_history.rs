//! `skewbook skew-history`: the skew through time.

use crate::cli::SkewHistoryArgs;
use crate::{Failure, Outcome};
use skewbook::error::{Error, ErrorKind};
use skewbook::output::write_report;
use std::io::Write;

/// Runs the command.
pub fn run(args: SkewHistoryArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    if let Some(k) = args.at.iter().find(|k| !(**k > 0.0 && **k < 100.0)) {
        return Err(Failure::Lib(Error::msg(
            ErrorKind::Usage,
            format!("--at: expected detachments in percent in (0, 100), found {k}"),
        )));
    }
    let at: Vec<f64> = args
        .at
        .iter()
        .map(|&k| crate::units::to_fraction(k))
        .collect();
    let model = args.pool.model()?;
    let (snapshot, opts) = crate::curve::load(&args.market)?;
    let report = skewbook::report::skew_history::build_with(
        &snapshot,
        &opts,
        &at,
        args.interp.into(),
        model,
    )?;
    write_report(out, &report, args.market.format.into())?;
    Ok(Outcome::Clean)
}
