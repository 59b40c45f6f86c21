//! `skewbook curve`: the bootstrapped pool hazard curve of every date.

use crate::cli::{CurveArgs, MarketArgs};
use crate::{Failure, Outcome};
use skewbook::curve::MarketOptions;
use skewbook::input::snapshot::read_snapshot;
use skewbook::market::Snapshot;
use skewbook::output::write_report;
use std::io::Write;

/// Reads the snapshot and the market options shared by every snapshot command,
/// keeps the dates of `--date`, `--from` and `--to`, and prints the
/// warnings of those dates to standard error.
pub fn load(m: &MarketArgs) -> Result<(Snapshot, MarketOptions), Failure> {
    let opts = m.curve.options()?;
    Ok((load_snapshot(m)?, opts))
}

/// The snapshot part of [`load`], once the market options are read.
pub fn load_snapshot(m: &MarketArgs) -> Result<Snapshot, Failure> {
    let snapshot = read_snapshot(&m.file)?;
    let snapshot = skewbook::report::filter_dates(&snapshot, &m.dates.filter())?;
    crate::print_problems("warning", &snapshot.warnings);
    Ok(snapshot)
}

/// Runs the command.
pub fn run(args: CurveArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    let (snapshot, opts) = load(&args.market)?;
    let report = skewbook::report::curve::build(&snapshot, &opts)?;
    write_report(out, &report, args.market.format.into())?;
    Ok(Outcome::Clean)
}
