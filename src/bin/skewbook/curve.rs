//! `skewbook curve`: the bootstrapped pool hazard curve of every date.

use crate::cli::{CurveArgs, MarketArgs};
use crate::{Failure, Outcome};
use skewbook::curve::MarketOptions;
use skewbook::input::snapshot::read_snapshot;
use skewbook::market::Snapshot;
use skewbook::output::write_report;
use std::io::Write;

/// Reads the snapshot and the market options shared by every snapshot command,
/// printing the snapshot's warnings to standard error.
pub fn load(m: &MarketArgs) -> Result<(Snapshot, MarketOptions), Failure> {
    let opts = m.curve.options()?;
    let snapshot = read_snapshot(&m.file)?;
    for w in &snapshot.warnings {
        eprintln!("warning: {w}");
    }
    Ok((snapshot, opts))
}

/// Runs the command.
pub fn run(args: CurveArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    let (snapshot, opts) = load(&args.market)?;
    let report = skewbook::report::curve::build(&snapshot, &opts)?;
    write_report(out, &report, args.market.format.into())?;
    Ok(Outcome::Clean)
}
