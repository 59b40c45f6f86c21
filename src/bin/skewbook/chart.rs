//! `skewbook chart`: one trade date's pictures as SVG files in a directory.
//!
//! The files are named after what they show: `skew-MATURITY.svg`,
//! `quote-MATURITY-ATTACH-DETACH.svg` (bounds in percent),
//! `exceedance-MATURITY.svg` and, with `--history`, `history-MATURITY.svg`.
//! Their paths are printed, one a line. Exit status 1 when some quote of
//! the date (or of the history) has no solution; the pictures are written.

use crate::cli::{ChartArgs, PictureArgs};
use crate::units::{self, Percent};
use crate::{Failure, Outcome};
use skewbook::chart::{Charts, Inputs};
use skewbook::input::history::read_history;
use skewbook::input::snapshot::read_snapshot;
use skewbook::{Error, ErrorKind};
use std::io::Write;
use std::path::Path;

/// `--at`: a detachment in percent.
pub const AT: Percent = Percent {
    option: "--at",
    low: 0.0,
    low_open: true,
    high: 100.0,
    high_open: true,
    looks_like_fraction: |x| x < 1.0,
};

/// Reads every file the pictures need (standard input at most once) and
/// computes them.
pub fn charts(args: &PictureArgs) -> Result<Charts, Failure> {
    let stdin = [
        Some(&args.file),
        args.history.as_ref(),
        args.defaults.as_ref(),
    ]
    .into_iter()
    .flatten()
    .filter(|p| p.as_str() == "-")
    .count();
    if stdin > 1 {
        return Err(Failure::Lib(Error::msg(
            ErrorKind::Usage,
            "standard input can be read once: expected file names, found `-` for more than one of the snapshot, --history and --defaults",
        )));
    }
    let options = args.curve.options()?;
    let model = args.pool.model()?;
    let mut at = Vec::with_capacity(args.at.len());
    for &x in &args.at {
        let k = AT.read(x)?;
        if !at.contains(&k) {
            at.push(k);
        }
    }
    let step = units::to_fraction(args.step_pct);
    let warn = |s: &skewbook::market::Snapshot| {
        for w in &s.warnings {
            eprintln!("warning: {w}");
        }
    };
    let snapshot = read_snapshot(&args.file)?;
    warn(&snapshot);
    let history = args.history.as_deref().map(read_snapshot).transpose()?;
    if let Some(h) = &history {
        warn(h);
    }
    let defaults = args.defaults.as_deref().map(read_history).transpose()?;
    Ok(Charts::build(&Inputs {
        snapshot: &snapshot,
        options: &options,
        date: args.date,
        history: history.as_ref(),
        defaults: defaults.as_ref(),
        estimator: args.estimator.map(Into::into),
        at: &at,
        step,
        history_interp: args.interp.into(),
        model,
    })?)
}

/// A file that could not be written, as a library error naming it.
pub fn write_error(path: &Path, what: &str, e: std::io::Error) -> Failure {
    Failure::Lib(Error::msg(
        ErrorKind::Io,
        format!("{}: cannot {what}: {e}", path.display()),
    ))
}

/// Runs the command.
pub fn run(args: ChartArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    let charts = charts(&args.picture)?;
    let svgs = charts.svgs()?;
    let dir = Path::new(&args.out);
    std::fs::create_dir_all(dir).map_err(|e| write_error(dir, "create the directory", e))?;
    for s in &svgs {
        let path = dir.join(&s.file_name);
        std::fs::write(&path, &s.svg).map_err(|e| write_error(&path, "write", e))?;
        writeln!(out, "{}", path.display())?;
    }
    Ok(if charts.any_unsolved() {
        Outcome::Unsolved
    } else {
        Outcome::Clean
    })
}
