//! `skewbook value`: a book of trades priced off one date's skew, with risk.

use crate::cli::ValueArgs;
use crate::{Failure, Outcome};
use skewbook::book::BookOptions;
use skewbook::error::{Error, ErrorKind};
use skewbook::input::pools::{self, read_pools};
use skewbook::input::snapshot::read_snapshot;
use skewbook::input::trades::{self, read_trades};
use skewbook::output::write_report;
use skewbook::report::value::{build_with, BookInputs, BookTrade};
use std::io::Write;

/// Runs the command: exit status 1 when some trade is not priced.
pub fn run(args: ValueArgs, out: &mut dyn Write) -> Result<Outcome, Failure> {
    let usage = |m: String| Failure::Lib(Error::msg(ErrorKind::Usage, m));
    if args.names < 2 {
        return Err(usage(format!(
            "--names: expected a count of names of at least 2, found {}",
            args.names
        )));
    }
    let stdin_twice = [Some(&args.trades), Some(&args.skew), args.pools.as_ref()]
        .iter()
        .filter(|p| p.is_some_and(|p| p == "-"))
        .count()
        > 1;
    if stdin_twice {
        return Err(usage(
            "only one of the trades, --skew and --pools files can be standard input (-)"
                .to_string(),
        ));
    }
    let opts = args.curve.options()?;
    let snapshot = read_snapshot(&args.skew)?;
    crate::print_problems("warning", &snapshot.warnings);
    let book = read_trades(&args.trades)?;
    let pools = match &args.pools {
        Some(p) => Some(read_pools(p)?),
        None => None,
    };
    if let Some(p) = &pools {
        crate::print_problems("warning", &p.warnings);
    }
    let date = match args.date.or(snapshot.dates.last().map(|d| d.date)) {
        Some(d) => d,
        None => return Err(usage(format!("{}: no trade date", snapshot.path))),
    };
    let names: Vec<&str> = pools.as_ref().map_or(Vec::new(), |p| p.names());
    trades::check_against(&book, date, &names)?;
    if let Some(p) = &pools {
        pools::check_against(p, date)?;
    }
    let inputs = BookInputs {
        trades: book
            .trades
            .iter()
            .map(BookTrade::from_trade)
            .collect::<Result<_, _>>()?,
        pools: pools.as_ref().map_or(Vec::new(), |p| p.pools.clone()),
        pools_path: pools.as_ref().map_or(String::new(), |p| p.path.clone()),
    };
    let options = BookOptions {
        mapping: args.mapping.into(),
        names: args.names,
        risk: true,
        buckets: args.buckets,
    };
    let model = match args.pool_model {
        crate::cli::PoolModelArg::Large => skewbook::loss::PoolModel::LargePool,
        crate::cli::PoolModelArg::Names => skewbook::loss::PoolModel::Names(args.names),
    };
    let report = build_with(
        &snapshot,
        &opts,
        &inputs,
        args.interp.into(),
        Some(date),
        &options,
        model,
    )?;
    write_report(out, &report, args.format.into())?;
    Ok(if report.any_unpriced() {
        Outcome::Unsolved
    } else {
        Outcome::Clean
    })
}
