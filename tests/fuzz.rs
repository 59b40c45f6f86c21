//! Mutation fuzzing of every reader and every command, in process.
//!
//! Each case takes one file of `market-samples/`, mutates it (lines and
//! cells deleted or duplicated, characters flipped, cells replaced by
//! extreme numbers such as `1e308`, `4.9e-324`, `-0`, `NaN` or `inf`, odd
//! encodings: a byte-order mark, CRLF line ends, Latin-1 bytes, a `;` or
//! tab delimiter, a lost header) and runs it through the reader of its kind
//! and every command that reads such a file, calling the library functions
//! the commands call (`input::decode`, the `parse_*` readers, the report
//! builders and `output::render` in every format):
//!
//! - snapshots: `curve`, `price` (at an ordinary or an extreme
//!   correlation), `implied`, `surface`, `realworld --against`, and `value`
//!   for the sample with trades (`kcx`);
//! - default histories: `realworld`, alone and `--against` a snapshot;
//! - trades and pools: `value` with the other two `kcx` files;
//! - besides, `loss` and `realworld` options at extreme values.
//!
//! Every case must end in one of the outcomes a user may see: a report
//! whose every number is finite (the output guard's check,
//! [`skewbook::output::check_report`], in every format), or an error of
//! bad input whose every problem is located (`path:line`, the path of one
//! of the case's files); never a panic (caught with `catch_unwind`: a
//! panic, the output guard's debug assertion included, is a failure).
//!
//! `SKEWBOOK_FUZZ_CASES` sets the number of cases (default
//! [`DEFAULT_CASES`]) and `SKEWBOOK_FUZZ_SEED` the seed (default
//! [`SEED`]): `SKEWBOOK_FUZZ_CASES=200000 cargo test fuzz` is a long local
//! run (the test profile is optimised and keeps the debug assertions and
//! overflow checks that the release profile drops). Failures are collected (up to [`MAX_FAILURES`]) and
//! printed with the case number and the mutated file, so each can be
//! replayed.

use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use skewbook::curve::MarketOptions;
use skewbook::input::{self, history, pools, snapshot, trades};
use skewbook::math::interp::Interp;
use skewbook::output::{check_report, render, Format, Report};
use skewbook::realworld::estimators::Options;
use skewbook::report;
use skewbook::{Error, ErrorKind};
use std::panic::{catch_unwind, AssertUnwindSafe};

/// Cases in a plain `cargo test`.
const DEFAULT_CASES: usize = 3000;
/// Seed of a plain `cargo test`.
const SEED: u64 = 0x5eed_b00c;
/// Failures collected before the run stops.
const MAX_FAILURES: usize = 10;

#[derive(Clone, Copy, PartialEq, Eq, Debug)]
enum Kind {
    Snapshot,
    History,
    Trades,
    Pools,
}

/// The sample files, their kinds, and how often a case picks each (the
/// 22-date history costs about twenty snapshots, so it is picked less).
const SAMPLES: [(&str, Kind, u32); 8] = [
    ("hgx-2026-06-18.csv", Kind::Snapshot, 4),
    ("lhy-2026-06-18.csv", Kind::Snapshot, 4),
    ("kcx-2026-06-18.csv", Kind::Snapshot, 4),
    ("hgx-history-2026-06.csv", Kind::Snapshot, 1),
    ("hgx-default-rates.csv", Kind::History, 4),
    ("lhy-default-counts.csv", Kind::History, 4),
    ("kcx-trades.csv", Kind::Trades, 4),
    ("kcx-pools.csv", Kind::Pools, 4),
];

/// Numbers that break naive code: the ends of the double range,
/// subnormals, signed zero, non-finite spellings, the edges of every
/// reader's domains, integers past 2^53 and 2^64, and near misses.
const EXTREMES: &[&str] = &[
    "1e308",
    "-1e308",
    "1.7976931348623157e308",
    "5e298",
    "1e100",
    "1e15",
    "999999999999999",
    "4.9e-324",
    "-4.9e-324",
    "1e-320",
    "2.2250738585072014e-308",
    "1e-300",
    "1e-20",
    "1e-9",
    "1e-7",
    "-0",
    "0",
    "-0.0",
    "+0",
    "NaN",
    "nan",
    "inf",
    "-inf",
    "infinity",
    "100000",
    "99999.99",
    "-1",
    "100",
    "99.99",
    "99.9999999",
    "-99.99",
    "-100",
    "49.99",
    "-50",
    "50",
    "0.01",
    "0.009",
    "0.0099999",
    "1",
    "0.5",
    "1e-5",
    "18446744073709551616",
    "18446744073709551615",
    "9007199254740993",
    "1e0000000000000001",
    "0x10",
    "1,5",
    "12.5%",
    "",
    " ",
    "\"\"",
    "\"1\"",
    "2026-02-30",
    "06/18/2026",
    "9999-12-31",
    "0000-01-01",
    "2026-06-19",
    "2031-06-20",
];

/// Characters a flip writes.
const FLIPS: &[u8] = b"0123456789.-+eE,;\"\t \r\nxN/:";

fn cases() -> usize {
    std::env::var("SKEWBOOK_FUZZ_CASES")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(DEFAULT_CASES)
}

fn seed() -> u64 {
    std::env::var("SKEWBOOK_FUZZ_SEED")
        .ok()
        .and_then(|s| s.parse().ok())
        .unwrap_or(SEED)
}

fn sample(name: &str) -> Vec<u8> {
    let path = format!("{}/market-samples/{name}", env!("CARGO_MANIFEST_DIR"));
    std::fs::read(&path).unwrap_or_else(|e| panic!("{path}: {e}"))
}

/// The name of a case's file in messages (a path a located message must name).
fn fuzz_path(name: &str) -> String {
    format!("fuzz/{name}")
}

fn lines_of(bytes: &[u8]) -> Vec<Vec<u8>> {
    bytes.split(|&b| b == b'\n').map(<[u8]>::to_vec).collect()
}

fn join_lines(lines: &[Vec<u8>]) -> Vec<u8> {
    lines.join(&b'\n')
}

fn cells_of(line: &[u8]) -> Vec<Vec<u8>> {
    line.split(|&b| b == b',').map(<[u8]>::to_vec).collect()
}

fn join_cells(cells: &[Vec<u8>]) -> Vec<u8> {
    cells.join(&b',')
}

/// A random line index (`None` for an empty file).
fn pick_line(rng: &mut ChaCha8Rng, lines: &[Vec<u8>]) -> Option<usize> {
    (!lines.is_empty()).then(|| rng.random_range(0..lines.len()))
}

/// One mutation of the file; some are whole-file (encodings), most touch
/// one line or one cell.
fn mutate_once(rng: &mut ChaCha8Rng, bytes: Vec<u8>) -> Vec<u8> {
    let mut lines = lines_of(&bytes);
    match rng.random_range(0..20) {
        // A line deleted.
        0 => {
            if let Some(i) = pick_line(rng, &lines) {
                lines.remove(i);
            }
        }
        // A line duplicated (a repeated quote, period or trade).
        1 => {
            if let Some(i) = pick_line(rng, &lines) {
                let l = lines[i].clone();
                let j = rng.random_range(0..=lines.len());
                lines.insert(j, l);
            }
        }
        // A cell deleted.
        2 => {
            if let Some(i) = pick_line(rng, &lines) {
                let mut c = cells_of(&lines[i]);
                let j = rng.random_range(0..c.len());
                c.remove(j);
                lines[i] = join_cells(&c);
            }
        }
        // A cell duplicated.
        3 => {
            if let Some(i) = pick_line(rng, &lines) {
                let mut c = cells_of(&lines[i]);
                let j = rng.random_range(0..c.len());
                let cell = c[j].clone();
                c.insert(j, cell);
                lines[i] = join_cells(&c);
            }
        }
        // A cell replaced by an extreme number (three times as likely).
        4..=6 => {
            if let Some(i) = pick_line(rng, &lines) {
                let mut c = cells_of(&lines[i]);
                let j = rng.random_range(0..c.len());
                c[j] = EXTREMES[rng.random_range(0..EXTREMES.len())]
                    .as_bytes()
                    .to_vec();
                lines[i] = join_cells(&c);
            }
        }
        // A cell replaced by another cell of the file.
        7 => {
            if let (Some(i), Some(k)) = (pick_line(rng, &lines), pick_line(rng, &lines)) {
                let donor = cells_of(&lines[k]);
                let cell = donor[rng.random_range(0..donor.len())].clone();
                let mut c = cells_of(&lines[i]);
                let j = rng.random_range(0..c.len());
                c[j] = cell;
                lines[i] = join_cells(&c);
            }
        }
        // Characters flipped.
        8 | 9 => {
            let mut b = join_lines(&lines);
            for _ in 0..rng.random_range(1..=3) {
                if !b.is_empty() {
                    let i = rng.random_range(0..b.len());
                    b[i] = FLIPS[rng.random_range(0..FLIPS.len())];
                }
            }
            return b;
        }
        // A character deleted or inserted.
        10 => {
            let mut b = join_lines(&lines);
            if !b.is_empty() {
                let i = rng.random_range(0..b.len());
                if rng.random_bool(0.5) {
                    b.remove(i);
                } else {
                    b.insert(i, FLIPS[rng.random_range(0..FLIPS.len())]);
                }
            }
            return b;
        }
        // A byte-order mark.
        11 => {
            let mut b = vec![0xef, 0xbb, 0xbf];
            b.extend(join_lines(&lines));
            return b;
        }
        // CRLF line ends, or lone CRs.
        12 => {
            let end: &[u8] = if rng.random_bool(0.7) { b"\r\n" } else { b"\r" };
            return lines.join(end);
        }
        // Latin-1 bytes (a spreadsheet's export), or other bytes that are not UTF-8.
        13 => {
            let mut b = join_lines(&lines);
            let byte = [0xe9u8, 0xb0, 0xa0, 0xff, 0xc3, 0x80][rng.random_range(0..6)];
            let i = rng.random_range(0..=b.len());
            b.insert(i, byte);
            return b;
        }
        // Another delimiter: `;` (a European spreadsheet) or a tab.
        14 => {
            let d = if rng.random_bool(0.6) { b';' } else { b'\t' };
            let mut b = join_lines(&lines);
            for x in b.iter_mut().filter(|x| **x == b',') {
                *x = d;
            }
            // ... with decimal commas, sometimes.
            if d == b';' && rng.random_bool(0.5) {
                let s = String::from_utf8_lossy(&b).replace('.', ",");
                return s.into_bytes();
            }
            return b;
        }
        // The header lost.
        15 => {
            if !lines.is_empty() {
                lines.remove(0);
            }
        }
        // Blank lines or whitespace.
        16 => {
            if let Some(i) = pick_line(rng, &lines) {
                if rng.random_bool(0.5) {
                    lines.insert(i, b"   ".to_vec());
                } else {
                    let mut c = cells_of(&lines[i]);
                    let j = rng.random_range(0..c.len());
                    let mut cell = b"  ".to_vec();
                    cell.extend(&c[j]);
                    cell.extend(b" ");
                    c[j] = cell;
                    lines[i] = join_cells(&c);
                }
            }
        }
        // Cut short anywhere.
        17 => {
            let b = join_lines(&lines);
            let n = rng.random_range(0..=b.len());
            return b[..n].to_vec();
        }
        // A quote character: a cell that runs over lines.
        18 => {
            let mut b = join_lines(&lines);
            let i = rng.random_range(0..=b.len());
            b.insert(i, b'"');
            return b;
        }
        // Two lines swapped.
        _ => {
            if let (Some(i), Some(j)) = (pick_line(rng, &lines), pick_line(rng, &lines)) {
                lines.swap(i, j);
            }
        }
    }
    join_lines(&lines)
}

/// One to five random mutations of a file (also used by `streaming`).
pub(crate) fn mutate(rng: &mut ChaCha8Rng, bytes: &[u8]) -> Vec<u8> {
    let mut b = bytes.to_vec();
    // Mostly one mutation, sometimes a few (a file with several problems).
    let n = [1, 1, 1, 2, 2, 3, 5][rng.random_range(0..7)];
    for _ in 0..n {
        b = mutate_once(rng, b);
    }
    b
}

/// What went wrong in one case.
type Failure = String;

/// Every problem of an input error names one of `paths` and a line.
fn check_error(e: &Error, paths: &[String], what: &str) -> Result<(), Failure> {
    if e.problems.is_empty() {
        return Err(format!("{what}: an error with no problem ({:?})", e.kind));
    }
    if e.kind == ErrorKind::Usage {
        return Err(format!("{what}: a usage error from fixed options: {e}"));
    }
    for p in &e.problems {
        let text = p.to_string();
        let located = paths.iter().any(|path| {
            text.match_indices(&format!("{path}:"))
                .any(|(i, m)| text[i + m.len()..].starts_with(|c: char| c.is_ascii_digit()))
        });
        if !located {
            return Err(format!(
                "{what}: a problem not located at path:line: {text}"
            ));
        }
    }
    Ok(())
}

/// A report must pass the output guard in every format and render.
fn check_output<R: Report>(r: &R, what: &str) -> Result<(), Failure> {
    for format in [Format::Table, Format::Csv, Format::Json] {
        if let Err(n) = check_report(r, format) {
            return Err(format!("{what} ({format:?}): {n}"));
        }
        if let Err(e) = render(r, format) {
            return Err(format!("{what} ({format:?}): {e}"));
        }
    }
    Ok(())
}

/// A command's outcome: a report that prints only finite numbers, or a
/// located error.
fn outcome<R: Report>(
    r: skewbook::Result<R>,
    paths: &[String],
    what: &str,
) -> Result<Option<R>, Failure> {
    match r {
        Ok(r) => check_output(&r, what).map(|_| Some(r)),
        Err(e) => check_error(&e, paths, what).map(|_| None),
    }
}

/// Reads a file of `kind` from its bytes as the command line does.
fn read<T>(
    bytes: Vec<u8>,
    path: &str,
    parse: impl FnOnce(&str) -> skewbook::Result<T>,
) -> skewbook::Result<T> {
    let text = input::decode(bytes, path)?;
    parse(&text)
}

fn read_snapshot(bytes: Vec<u8>, path: &str) -> skewbook::Result<skewbook::market::Snapshot> {
    read(bytes, path, |t| snapshot::parse_snapshot(t, path))
}

fn read_history(bytes: Vec<u8>, path: &str) -> skewbook::Result<history::History> {
    read(bytes, path, |t| history::parse_history(path, t))
}

/// Market options: mostly the defaults, sometimes an extreme recovery or
/// rate as `--recovery` and `--rate` would pass them (checked there).
fn market_options(rng: &mut ChaCha8Rng) -> MarketOptions {
    let mut o = MarketOptions::default();
    if rng.random_bool(0.1) {
        let r = [0.0, 1e-300, 0.4, 0.9999999999, 0.99][rng.random_range(0..5)];
        o.recovery = Some(r);
    }
    if rng.random_bool(0.1) {
        o.flat_rate = [-0.49, -0.2, 0.0, 1e-300, 0.3, 0.49][rng.random_range(0..6)];
    }
    o
}

/// `value` on the three `kcx` files (any of them mutated).
fn value(
    snap: &skewbook::market::Snapshot,
    opts: &MarketOptions,
    trades_file: (Vec<u8>, &str),
    pools_file: (Vec<u8>, &str),
    rng: &mut ChaCha8Rng,
    paths: &[String],
) -> Result<(), Failure> {
    use report::value::{build, BookInputs, BookTrade};
    let (tb, tp) = trades_file;
    let (pb, pp) = pools_file;
    let book = match read(tb, tp, |t| trades::parse_trades(t, tp)) {
        Ok(b) => b,
        Err(e) => return check_error(&e, paths, "value: trades"),
    };
    let pools = match read(pb, pp, |t| pools::parse_pools(t, pp)) {
        Ok(p) => p,
        Err(e) => return check_error(&e, paths, "value: pools"),
    };
    let Some(date) = snap.dates.last().map(|d| d.date) else {
        return Err("value: a snapshot with no date was read".into());
    };
    if let Err(e) = trades::check_against(&book, date, &pools.names()) {
        return check_error(&e, paths, "value: trades against the snapshot");
    }
    if let Err(e) = pools::check_against(&pools, date) {
        return check_error(&e, paths, "value: pools against the snapshot");
    }
    let trades: skewbook::Result<Vec<BookTrade>> =
        book.trades.iter().map(BookTrade::from_trade).collect();
    let trades = match trades {
        Ok(t) => t,
        Err(e) => return check_error(&e, paths, "value: trade terms"),
    };
    let inputs = BookInputs {
        trades,
        pools: pools.pools.clone(),
        pools_path: pools.path.clone(),
    };
    let mapping = [
        skewbook::book::Mapping::None,
        skewbook::book::Mapping::Moneyness,
        skewbook::book::Mapping::Tlp,
        skewbook::book::Mapping::Probability,
    ][rng.random_range(0..4)];
    let interp = [Interp::Linear, Interp::Pchip][rng.random_range(0..2)];
    let options = skewbook::book::BookOptions {
        mapping,
        names: [2, 125][rng.random_range(0..2)],
        risk: true,
        buckets: rng.random_bool(0.2),
    };
    outcome(
        build(snap, opts, &inputs, interp, Some(date), &options),
        paths,
        "value",
    )
    .map(|_| ())
}

/// Every snapshot command on one snapshot.
fn snapshot_commands(
    snap: &skewbook::market::Snapshot,
    rng: &mut ChaCha8Rng,
    paths: &[String],
) -> Result<(), Failure> {
    let opts = market_options(rng);
    outcome(report::curve::build(snap, &opts), paths, "curve")?;
    let rho = [
        0.3,
        0.3,
        0.05,
        0.95,
        1e-4,
        0.9999,
        1e-300,
        4.9e-324,
        1.0 - 1e-16,
    ][rng.random_range(0..9)];
    outcome(report::price::build(snap, &opts, rho), paths, "price")?;
    outcome(report::implied::build(snap, &opts), paths, "implied")?;
    let interp = [Interp::Linear, Interp::Pchip][rng.random_range(0..2)];
    let step = [0.005, 0.01, 0.05][rng.random_range(0..3)];
    outcome(
        report::surface::build(snap, &opts, interp, step, None),
        paths,
        "surface",
    )?;
    let rates = sample("hgx-default-rates.csv");
    let h = read_history(rates, "market-samples/hgx-default-rates.csv")
        .map_err(|e| format!("the sample history does not read: {e}"))?;
    let mut rw = report::realworld::build_realworld(&h, &Options::default(), &[0.99, 0.999], 1.0)
        .map_err(|e| format!("realworld on the sample: {e}"))?;
    match report::realworld::add_risk_neutral(&mut rw, snap, &opts) {
        Ok(()) => check_output(&rw, "realworld --against")?,
        Err(e) => check_error(&e, paths, "realworld --against")?,
    }
    Ok(())
}

/// `realworld` on one history, alone and against a sample snapshot.
fn history_commands(
    h: &history::History,
    rng: &mut ChaCha8Rng,
    paths: &[String],
) -> Result<(), Failure> {
    let quantiles = rng
        .random_bool(0.3)
        .then_some([(0.5, 0.0066), (0.999, 0.09)]);
    let opts = Options {
        quantiles,
        ..Options::default()
    };
    let lgd = [1.0, 0.45, 1e-300][rng.random_range(0..3)];
    let Some(mut rw) = outcome(
        report::realworld::build_realworld(h, &opts, &[0.99, 0.999], lgd),
        paths,
        "realworld",
    )?
    else {
        return Ok(());
    };
    let name = ["hgx-2026-06-18.csv", "lhy-2026-06-18.csv"][rng.random_range(0..2)];
    let snap = read_snapshot(sample(name), &format!("market-samples/{name}"))
        .map_err(|e| format!("the sample snapshot does not read: {e}"))?;
    match report::realworld::add_risk_neutral(&mut rw, &snap, &MarketOptions::default()) {
        Ok(()) => check_output(&rw, "realworld --against"),
        Err(e) => check_error(&e, paths, "realworld --against"),
    }
}

/// `loss` and `realworld` options at extreme values (fractions, as the
/// command line passes them on).
fn option_commands(rng: &mut ChaCha8Rng) -> Result<(), Failure> {
    let mut x = || {
        let s = EXTREMES[rng.random_range(0..EXTREMES.len())];
        s.parse::<f64>()
            .ok()
            .filter(|v| v.is_finite())
            .unwrap_or(0.5)
            / 100.0
    };
    let (pd, rho, lgd, level) = (x(), x(), x(), x());
    let maturity = [1.0, 2.5, 5.0][rng.random_range(0..3)];
    let r = report::loss::build_loss(pd, rho, lgd, &[level, 0.999], maturity, None);
    match r {
        Ok(r) => check_output(&r, &format!("loss --pd {pd} --rho {rho} --lgd {lgd}")),
        Err(e) if e.kind == ErrorKind::Usage => Ok(()),
        Err(e) => Err(format!("loss: not a usage error: {e}")),
    }
}

/// One case: a file mutated and run through its reader and commands.
fn run_case(rng: &mut ChaCha8Rng) -> (String, Vec<u8>, Result<(), Failure>) {
    if rng.random_bool(0.05) {
        return ("options".into(), Vec::new(), option_commands(rng));
    }
    let total: u32 = SAMPLES.iter().map(|s| s.2).sum();
    let mut pick = rng.random_range(0..total);
    let &(name, kind, _) = SAMPLES
        .iter()
        .find(|s| {
            if pick < s.2 {
                true
            } else {
                pick -= s.2;
                false
            }
        })
        .expect("a sample");
    let bytes = mutate(rng, &sample(name));
    let path = fuzz_path(name);
    // The files a located message may name: the mutated one and the plain
    // samples the commands read beside it.
    let mut paths = vec![path.clone()];
    paths.extend(SAMPLES.iter().map(|s| format!("market-samples/{}", s.0)));
    let result = match kind {
        Kind::Snapshot => match read_snapshot(bytes.clone(), &path) {
            Err(e) => check_error(&e, &paths, "snapshot reader"),
            Ok(snap) => snapshot_commands(&snap, rng, &paths).and_then(|_| {
                if name.starts_with("kcx") {
                    let opts = MarketOptions::default();
                    value(
                        &snap,
                        &opts,
                        (sample("kcx-trades.csv"), "market-samples/kcx-trades.csv"),
                        (sample("kcx-pools.csv"), "market-samples/kcx-pools.csv"),
                        rng,
                        &paths,
                    )
                } else {
                    Ok(())
                }
            }),
        },
        Kind::History => match read_history(bytes.clone(), &path) {
            Err(e) => check_error(&e, &paths, "history reader"),
            Ok(h) => history_commands(&h, rng, &paths),
        },
        Kind::Trades | Kind::Pools => {
            let snap = read_snapshot(
                sample("kcx-2026-06-18.csv"),
                "market-samples/kcx-2026-06-18.csv",
            )
            .expect("the kcx sample reads");
            let other = if kind == Kind::Trades {
                "kcx-pools.csv"
            } else {
                "kcx-trades.csv"
            };
            let other_path = format!("market-samples/{other}");
            let mutated = (bytes.clone(), path.as_str());
            let plain = (sample(other), other_path.as_str());
            let (t, p) = if kind == Kind::Trades {
                (mutated, plain)
            } else {
                (plain, mutated)
            };
            value(&snap, &MarketOptions::default(), t, p, rng, &paths)
        }
    };
    (name.to_string(), bytes, result)
}

#[test]
fn mutated_samples_through_every_reader_and_command() {
    let n = cases();
    let seed = seed();
    let mut failures: Vec<String> = Vec::new();
    for case in 0..n {
        // One generator per case, so a failing case replays on its own.
        let mut rng =
            ChaCha8Rng::seed_from_u64(seed ^ (case as u64).wrapping_mul(0x9e37_79b9_7f4a_7c15));
        let ran = catch_unwind(AssertUnwindSafe(|| run_case(&mut rng)));
        let failure = match ran {
            Ok((_, _, Ok(()))) => continue,
            Ok((name, bytes, Err(f))) => format!(
                "case {case} ({name}): {f}\n--- mutated file ---\n{}",
                String::from_utf8_lossy(&bytes)
            ),
            Err(p) => {
                let msg = p
                    .downcast_ref::<String>()
                    .cloned()
                    .or_else(|| p.downcast_ref::<&str>().map(|s| s.to_string()))
                    .unwrap_or_default();
                format!("case {case}: panicked: {msg}")
            }
        };
        failures.push(failure);
        if failures.len() >= MAX_FAILURES {
            break;
        }
    }
    assert!(
        failures.is_empty(),
        "{} failing case(s) of {n} (seed {seed}):\n\n{}",
        failures.len(),
        failures.join("\n\n")
    );
}

/// The mutations themselves: each kind of damage shows up in a few hundred
/// cases, so the run above is not fuzzing one corner only.
#[test]
fn mutations_reach_every_kind_of_damage() {
    let base = sample("hgx-2026-06-18.csv");
    let mut rng = ChaCha8Rng::seed_from_u64(SEED);
    let (mut bom, mut crlf, mut latin1, mut semicolon, mut shorter, mut extreme) =
        (0, 0, 0, 0, 0, 0);
    for _ in 0..400 {
        let m = mutate(&mut rng, &base);
        bom += usize::from(m.starts_with(&[0xef, 0xbb, 0xbf]));
        crlf += usize::from(m.windows(2).any(|w| w == b"\r\n"));
        latin1 += usize::from(std::str::from_utf8(&m).is_err());
        semicolon += usize::from(m.contains(&b';'));
        shorter += usize::from(m.len() < base.len());
        let text = String::from_utf8_lossy(&m);
        extreme +=
            usize::from(text.contains("e308") || text.contains("e-324") || text.contains("NaN"));
    }
    for (what, n) in [
        ("byte-order mark", bom),
        ("CRLF", crlf),
        ("bytes that are not UTF-8", latin1),
        ("semicolons", semicolon),
        ("deletions", shorter),
        ("extreme numbers", extreme),
    ] {
        assert!(n >= 5, "{what}: {n} of 400");
    }
}
