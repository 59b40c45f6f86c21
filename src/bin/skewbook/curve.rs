//! `skewbook curve`: the bootstrapped pool hazard curve of every date.
//!
//! Also where every snapshot command reads its file and options.

use crate::cli::{CurveArgs, MarketArgs};
use crate::{Failure, Outcome};
use skewbook::curve::MarketOptions;
use skewbook::input::snapshot::read_snapshot;
use skewbook::market::Snapshot;
use skewbook::output::{write_report, PartWriter};
use skewbook::report::stream::HistoryPlan;
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

/// Files smaller than this (bytes) are read whole: one read and one
/// bootstrap a date, and memory bounded by what a file of this size takes
/// (about 80 MB). `SKEWBOOK_STREAM_FROM_BYTES` sets another size (0
/// streams every history in date blocks).
pub const STREAM_FROM_BYTES: u64 = 4 << 20;

/// Whether `path` is large enough to read in two passes.
fn large_enough(path: &str) -> bool {
    let from = std::env::var("SKEWBOOK_STREAM_FROM_BYTES")
        .ok()
        .and_then(|v| v.parse().ok())
        .unwrap_or(STREAM_FROM_BYTES);
    std::fs::metadata(path).is_ok_and(|m| m.len() >= from)
}

/// The first pass over a history in a regular file of at least
/// [`STREAM_FROM_BYTES`], dates in ascending blocks
/// (`skewbook::report::stream`), with its warnings printed; `None` for a
/// file to read whole with [`load_snapshot`].
pub fn plan(m: &MarketArgs, opts: &MarketOptions) -> Result<Option<HistoryPlan>, Failure> {
    if !large_enough(&m.file) {
        return Ok(None);
    }
    let plan = skewbook::report::stream::plan(&m.file, &m.dates.filter(), opts)?;
    if let Some(p) = &plan {
        for line in p.warnings().lines() {
            eprintln!("warning: {line}");
        }
    }
    Ok(plan)
}

/// Runs the command: a history in date blocks is printed a chunk of dates
/// at a time, any other file read whole; the same bytes either way.
pub fn run(args: CurveArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    let m = &args.market;
    let opts = m.curve.options()?;
    if let Some(plan) = plan(m, &opts)? {
        let mut parts = PartWriter::new(out, m.format.into());
        skewbook::report::curve::build_streamed(&plan, &opts, &mut |report| {
            parts.write(report).map_err(Failure::from)
        })?;
        parts.finish()?;
        return Ok(Outcome::Clean);
    }
    let snapshot = load_snapshot(m)?;
    let report = skewbook::report::curve::build(&snapshot, &opts)?;
    write_report(out, &report, m.format.into())?;
    Ok(Outcome::Clean)
}
