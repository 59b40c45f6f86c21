//! `skewbook implied`: compound and base correlation from the quotes.
//!
//! A history in a regular file, dates in ascending blocks, is read in two
//! passes and printed a chunk of dates at a time
//! (`skewbook::report::stream`); any other input is read whole. Both print
//! the same bytes.

use crate::cli::ImpliedArgs;
use crate::{Failure, Outcome};
use indicatif::{ProgressBar, ProgressStyle};
use skewbook::curve::MarketOptions;
use skewbook::output::{write_report, PartWriter};
use skewbook::report::implied::{ImpliedOptions, RunSummary};
use skewbook::report::stream::HistoryPlan;
use std::io::{IsTerminal, Write};

/// Dates above which a run shows a progress bar.
const PROGRESS_FROM: usize = 20;

/// Runs the command: exit status 1 when some quote has no solution. A run
/// of more than one date ends with its summary on standard error, after
/// the output.
pub fn run(args: ImpliedArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    let opts = args.market.curve.options()?;
    match crate::curve::plan(&args.market, &opts)? {
        Some(plan) => run_streamed(&args, &plan, &opts, out),
        None => run_whole(&args, &opts, out),
    }
}

/// The file read whole, the report built whole, then printed.
fn run_whole(
    args: &ImpliedArgs,
    opts: &MarketOptions,
    out: &mut dyn Write,
) -> Result<Outcome, Failure> {
    let snapshot = crate::curve::load_snapshot(&args.market)?;
    let implied = options(args)?;
    let bar = bar(snapshot.dates.len(), args.quiet);
    let report =
        skewbook::report::implied::build_with_progress(&snapshot, opts, &implied, &|| bar.inc(1));
    bar.finish_and_clear();
    let report = report?;
    write_report(out, &report, args.market.format.into())?;
    end(out, &report.summary())
}

/// The file read in two passes, printed a chunk of dates at a time.
fn run_streamed(
    args: &ImpliedArgs,
    plan: &HistoryPlan,
    opts: &MarketOptions,
    out: &mut dyn Write,
) -> Result<Outcome, Failure> {
    let implied = options(args)?;
    let bar = bar(plan.dates(), args.quiet);
    let mut parts = PartWriter::new(out, args.market.format.into());
    let summary = skewbook::report::implied::build_streamed(
        plan,
        opts,
        &implied,
        &|| bar.inc(1),
        // The bar steps aside while the chunk is written.
        &mut |part| bar.suspend(|| parts.write(part)).map_err(Failure::from),
    );
    bar.finish_and_clear();
    let summary = summary?;
    parts.finish()?;
    end(out, &summary)
}

/// The command's options past the market's.
fn options(args: &ImpliedArgs) -> Result<ImpliedOptions, Failure> {
    Ok(ImpliedOptions {
        index_tolerance_bp: args.index_tolerance,
        model: args.pool.model()?,
        compare_pool: args.compare_pool,
    })
}

/// The summary of a run of more than one date on standard error, after the
/// output; the outcome.
fn end(out: &mut dyn Write, summary: &RunSummary) -> Result<Outcome, Failure> {
    if summary.dates > 1 {
        out.flush()?;
        for line in summary.lines() {
            eprintln!("summary: {line}");
        }
    }
    Ok(if summary.unsolved > 0 {
        Outcome::Unsolved
    } else {
        Outcome::Clean
    })
}

/// The progress bar of a run of `dates` dates (hidden unless wanted).
fn bar(dates: usize, quiet: bool) -> ProgressBar {
    if wants_progress(
        dates,
        quiet,
        std::io::stderr().is_terminal(),
        std::env::var_os("CI").is_some(),
    ) {
        progress_bar(dates)
    } else {
        ProgressBar::hidden()
    }
}

/// Whether to draw a progress bar: more than [`PROGRESS_FROM`] dates, not
/// `--quiet`, standard error a terminal, and not under CI (`CI` set).
fn wants_progress(dates: usize, quiet: bool, stderr_is_terminal: bool, ci: bool) -> bool {
    dates > PROGRESS_FROM && !quiet && stderr_is_terminal && !ci
}

/// A bar on standard error counting dates.
fn progress_bar(dates: usize) -> ProgressBar {
    let bar = ProgressBar::new(dates as u64);
    if let Ok(style) = ProgressStyle::with_template(
        "{bar:40} {pos}/{len} dates, {elapsed} elapsed, about {eta} left",
    ) {
        bar.set_style(style);
    }
    bar
}

#[cfg(test)]
mod tests {
    use super::wants_progress;

    /// The bar shows only on a terminal, outside CI, without --quiet, for
    /// more than 20 dates (the option's documented rule).
    #[test]
    fn progress_only_when_asked_for() {
        assert!(wants_progress(21, false, true, false));
        assert!(!wants_progress(20, false, true, false));
        assert!(!wants_progress(2500, true, true, false));
        assert!(!wants_progress(2500, false, false, false));
        assert!(!wants_progress(2500, false, true, true));
    }
}
