//! `implied` and `curve` on a history read date by date (two passes, a
//! chunk of dates at a time: `report::stream`) against the same file read
//! whole: the same bytes on standard output and standard error, the same
//! exit status.
//!
//! The command line reads a regular file in date blocks in two passes and
//! standard input whole, so the same file given both ways compares the two
//! paths; messages name the file, so standard error is compared with the
//! file's name written `-`. In process, the library's two paths run on the
//! same file name.

use crate::common::{skewbook_with_env, write_temp};
use chrono::{Days, NaiveDate};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use skewbook::curve::MarketOptions;
use skewbook::error::{capped, MAX_LINES_PER_FILE};
use skewbook::input::snapshot::{parse_snapshot, read_snapshot, DateReader, ReadEnd};
use skewbook::output::{write_report, Format, PartWriter};
use skewbook::report::implied::{build_streamed, build_with_progress, ImpliedOptions};
use skewbook::report::stream::{plan, CHUNK_DATES};
use skewbook::report::{filter_dates, DateFilter};
use std::io::Write;
use std::process::{Command, Stdio};
use std::sync::atomic::{AtomicUsize, Ordering};

const HISTORY: &str = "market-samples/hgx-history-2026-06.csv";
const FORMATS: [&str; 3] = ["table", "csv", "json"];

fn history_text() -> String {
    std::fs::read_to_string(HISTORY).expect("bundled history")
}

/// `skewbook ARGS` with every history file read in two passes, however
/// small (`SKEWBOOK_STREAM_FROM_BYTES=0`): (exit code, stdout, stderr).
fn skewbook(args: &[&str]) -> (i32, String, String) {
    skewbook_with_env(args, &[("SKEWBOOK_STREAM_FROM_BYTES", "0")])
}

/// `skewbook ARGS` with `input` on standard input: (exit code, stdout, stderr).
fn skewbook_stdin(args: &[&str], input: &str) -> (i32, String, String) {
    let mut child = Command::new(env!("CARGO_BIN_EXE_skewbook"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("run skewbook");
    let mut stdin = child.stdin.take().expect("stdin");
    let text = input.to_string();
    let feeder = std::thread::spawn(move || stdin.write_all(text.as_bytes()));
    let out = child.wait_with_output().expect("skewbook output");
    feeder.join().expect("feeder").expect("write stdin");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into_owned(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// Runs `implied FILE ARGS` on the file `path` (read in two passes) and on
/// its text on standard input (read whole): the same exit status, output
/// and standard error (where the file is named `-`). Returns the file's run.
fn same_both_ways(path: &str, args: &[&str]) -> (i32, String, String) {
    same_both_ways_of("implied", path, args)
}

/// [`same_both_ways`] for `command`.
fn same_both_ways_of(command: &str, path: &str, args: &[&str]) -> (i32, String, String) {
    let text = std::fs::read_to_string(path).expect("input");
    let mut file_args = vec![command, path];
    file_args.extend(args);
    let mut stdin_args = vec![command, "-"];
    stdin_args.extend(args);
    let (code, out, err) = skewbook(&file_args);
    let (code_whole, out_whole, err_whole) = skewbook_stdin(&stdin_args, &text);
    assert_eq!(code, code_whole, "{args:?}: exit status\n{err}");
    assert!(out == out_whole, "{args:?}: output differs");
    assert_eq!(
        err.replace(path, "-"),
        err_whole,
        "{args:?}: standard error"
    );
    (code, out, err)
}

/// A history of `copies` x 22 dates: the bundled history again and again,
/// each copy 35 days after the one before (five weeks, so weekdays stay
/// weekdays), trade dates, maturities and pillar dates shifted alike. When
/// `every` is not 0, one date in `every` loses its equity tranche: its
/// tranches do not tile (a warning) and have no base correlation
/// (unsolved).
fn long_history(copies: u64, every: usize) -> String {
    let text = history_text();
    let mut lines = text.lines();
    let mut out = format!("{}\n", lines.next().expect("header"));
    let rows: Vec<Vec<&str>> = lines.map(|l| l.split(',').collect()).collect();
    let mut date_index = 0;
    for copy in 0..copies {
        let shift = |s: &str| {
            let d = NaiveDate::parse_from_str(s, "%Y-%m-%d").expect("date");
            (d + Days::new(35 * copy)).to_string()
        };
        for (i, cells) in rows.iter().enumerate() {
            if i > 0 && cells[0] != rows[i - 1][0] {
                date_index += 1;
            }
            let equity = cells[1] == "tranche" && cells[3] == "0";
            if every > 0 && date_index % every == every / 2 && equity {
                continue;
            }
            let mut row: Vec<String> = cells.iter().map(|c| c.to_string()).collect();
            row[0] = shift(cells[0]);
            row[2] = shift(cells[2]);
            out.push_str(&row.join(","));
            out.push('\n');
        }
        date_index += 1;
    }
    out
}

/// The bundled history is in date blocks: the first pass plans it, with its
/// 22 dates and 88 tranche quotes; standard input is read whole.
#[test]
fn a_history_in_date_blocks_is_planned_and_stdin_is_not() {
    let opts = MarketOptions::default();
    let p = plan(HISTORY, &DateFilter::default(), &opts)
        .expect("plan")
        .expect("in date blocks");
    assert_eq!((p.dates(), p.tranches()), (22, 88));
    assert_eq!(p.warnings().count(), 0);
    assert!(p.curves().is_ok());
    assert!(plan("-", &DateFilter::default(), &opts)
        .expect("stdin")
        .is_none());
}

/// The bundled history in every format, all dates, a span of dates, and
/// in a pool of 25 names beside the large pool: the same bytes read in two
/// passes as read whole.
#[test]
fn the_bundled_history_gives_the_same_bytes_both_ways() {
    for format in FORMATS {
        for extra in [
            &[][..],
            &["--from", "2026-06-08", "--to", "2026-06-19"][..],
            &["--date", "2026-06-10"][..],
            &["--names", "25", "--compare-pool"][..],
        ] {
            let mut args = vec!["--format", format];
            args.extend(extra);
            let (code, out, err) = same_both_ways(HISTORY, &args);
            // In 25 names some quotes have no solution (exit status 1).
            assert!(code == 0 || extra.contains(&"--names"), "{args:?}: {err}");
            assert!(!out.is_empty(), "{args:?}");
        }
    }
}

/// 308 dates, more than a chunk: the same bytes both ways in every format,
/// the first 20 warnings and a count of the rest, the summary with 31
/// unsolved dates (ten named), exit status 1.
#[test]
fn a_history_longer_than_a_chunk_gives_the_same_bytes_both_ways() {
    let path = write_temp("streaming-long", long_history(14, 10));
    for format in FORMATS {
        let (code, out, err) = same_both_ways(&path, &["--format", format]);
        assert_eq!(code, 1, "{err}");
        assert!(!out.is_empty());
        let warnings: Vec<&str> = err.lines().filter(|l| l.starts_with("warning")).collect();
        assert_eq!(warnings.len(), MAX_LINES_PER_FILE + 1, "{err}");
        assert_eq!(
            warnings[MAX_LINES_PER_FILE],
            format!("warning: {path}: and 11 more like this")
        );
        assert!(
            err.contains("summary: 308 dates run, 2026-06-01 to 2027-09-28\n"),
            "{err}"
        );
        assert!(
            err.contains("31 dates with a quote that has no solution (exit status 1): ")
                && err.contains(" and 21 more\n"),
            "{err}"
        );
    }
}

/// In process, on the same file name: the library's two paths give the
/// same bytes in every format, the same warnings and summary; the dates
/// come in two chunks, each date counted once by the progress callback.
#[test]
fn the_library_streams_what_it_builds_whole() {
    let path = write_temp("streaming-library", long_history(14, 10));
    let opts = MarketOptions::default();
    let implied = ImpliedOptions::default();
    let filter = DateFilter::default();
    let snapshot = filter_dates(&read_snapshot(&path).expect("read"), &filter).expect("filter");
    let whole = build_with_progress(&snapshot, &opts, &implied, &|| {}).expect("whole");
    let p = plan(&path, &filter, &opts)
        .expect("plan")
        .expect("date blocks");
    assert_eq!(p.dates(), 308);
    assert!(p.dates() > CHUNK_DATES);
    assert_eq!(
        p.warnings().lines(),
        capped(&snapshot.warnings, MAX_LINES_PER_FILE)
    );
    for format in [Format::Table, Format::Csv, Format::Json] {
        let mut want = Vec::new();
        write_report(&mut want, &whole, format).expect("print whole");
        let mut got = Vec::new();
        let mut parts = PartWriter::new(&mut got, format);
        let mut chunks = Vec::new();
        let count = AtomicUsize::new(0);
        let summary = build_streamed::<Box<dyn std::error::Error>>(
            &p,
            &opts,
            &implied,
            &|| {
                count.fetch_add(1, Ordering::Relaxed);
            },
            &mut |part| {
                chunks.push(part.dates().len());
                parts.write(part)?;
                Ok(())
            },
        )
        .expect("streamed");
        parts.finish().expect("finish");
        assert!(got == want, "{format:?}: bytes differ");
        assert_eq!(chunks, [CHUNK_DATES, 308 - CHUNK_DATES]);
        assert_eq!(count.load(Ordering::Relaxed), 308);
        assert_eq!(summary, whole.summary());
        assert_eq!(summary.lines(), whole.summary().lines());
    }
}

/// A bad cell and a duplicate quote near the end of a 308-date file: exit
/// status 2 and nothing printed; every problem, sorted by line, as the file
/// read whole reports them, the first at its line and column.
#[test]
fn an_error_far_down_a_long_file_is_reported_before_any_output() {
    let text = long_history(14, 0);
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    let n = lines.len();
    // Each date has 4 index rows, 4 zero rows, 4 tranche rows. The last
    // date's first tranche quote: a comma for a decimal point.
    let bad = n - 4;
    let mut cells: Vec<String> = lines[bad].split(',').map(str::to_string).collect();
    assert_eq!(cells[1], "tranche");
    cells[6] = "\"12,5\"".to_string();
    lines[bad] = cells.join(",");
    // The date before: a second quote of its first index maturity.
    let first_index = n - 24;
    assert!(lines[first_index].contains(",index,"));
    lines.insert(first_index + 1, lines[first_index].clone());
    // Line numbers are 1-based, and the bad row moved down by one.
    let bad_line = bad + 2;
    let text = lines.join("\n") + "\n";
    let path = write_temp("streaming-error-far-down", &text);

    let whole = parse_snapshot(&text, &path).expect_err("two problems");
    let want: Vec<String> = capped(&whole.problems, MAX_LINES_PER_FILE)
        .iter()
        .map(|l| format!("error: {l}\n"))
        .collect();
    assert_eq!(want.len(), 2, "{want:?}");
    assert!(want[0].starts_with(&format!("error: {path}:{}:3: ", first_index + 2)));
    assert!(want[1].starts_with(&format!("error: {path}:{bad_line}:7: column \"quote\"")));
    for format in FORMATS {
        let (code, out, err) = same_both_ways(&path, &["--format", format]);
        assert_eq!((code, out.as_str()), (2, ""));
        assert_eq!(err, want.concat());
    }
}

/// An index quote no hazard rate fits on the last date of a 308-date file
/// (a 5-year spread of 1 bp under a 3-year one of 40): exit status 2 and
/// nothing printed, as when the file is read whole; the first pass
/// bootstraps every date.
#[test]
fn an_unfittable_date_far_down_stops_the_run_before_any_output() {
    let text = long_history(14, 0);
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    let n = lines.len();
    let last_index_rows: Vec<usize> = (n - 12..n)
        .filter(|&i| lines[i].contains(",index,"))
        .collect();
    let mut cells: Vec<String> = lines[last_index_rows[0]]
        .split(',')
        .map(str::to_string)
        .collect();
    cells[6] = "40".to_string();
    lines[last_index_rows[0]] = cells.join(",");
    let mut cells: Vec<String> = lines[last_index_rows[1]]
        .split(',')
        .map(str::to_string)
        .collect();
    cells[6] = "1".to_string();
    lines[last_index_rows[1]] = cells.join(",");
    let path = write_temp("streaming-unfittable", lines.join("\n") + "\n");
    let p = plan(&path, &DateFilter::default(), &MarketOptions::default())
        .expect("plan")
        .expect("date blocks");
    assert!(p.curves().is_err());
    for format in FORMATS {
        let (code, out, err) = same_both_ways(&path, &["--format", format]);
        assert_eq!((code, out.as_str()), (2, ""));
        assert!(err.contains("cannot be fitted"), "{err}");
    }
}

/// Dates out of order (two blocks swapped) or interleaved (a row moved
/// into a later date's block) are not read in two passes: the file is read
/// whole, and the output is that of the history in order.
#[test]
fn dates_out_of_order_are_read_whole() {
    let text = history_text();
    let lines: Vec<&str> = text.lines().collect();
    // Rows 1-12 are the first date, 13-24 the second.
    let mut swapped = vec![lines[0]];
    swapped.extend(&lines[13..25]);
    swapped.extend(&lines[1..13]);
    swapped.extend(&lines[25..]);
    let mut interleaved = lines.clone();
    let moved = interleaved.remove(5);
    interleaved.insert(30, moved);
    for (name, rows) in [("swapped", swapped), ("interleaved", interleaved)] {
        let path = write_temp(&format!("streaming-{name}"), rows.join("\n") + "\n");
        let p = plan(&path, &DateFilter::default(), &MarketOptions::default()).expect("plan");
        assert!(p.is_none(), "{name}");
        for format in FORMATS {
            let (code, out, _) = same_both_ways(&path, &["--format", format]);
            let (code_in_order, out_in_order, _) =
                skewbook(&["implied", HISTORY, "--format", format]);
            assert_eq!(code, code_in_order);
            assert!(out == out_in_order, "{name} {format}");
        }
    }
}

/// A byte-order mark and CRLF line ends: still read in two passes, with
/// the output of the plain file.
#[test]
fn a_byte_order_mark_and_crlf_are_read_in_two_passes() {
    let text = format!("\u{feff}{}", history_text().replace('\n', "\r\n"));
    let path = write_temp("streaming-bom-crlf", &text);
    let p = plan(&path, &DateFilter::default(), &MarketOptions::default()).expect("plan");
    assert_eq!(p.map(|p| p.dates()), Some(22));
    for format in FORMATS {
        let (_, out, _) = same_both_ways(&path, &["--format", format]);
        let (_, plain, _) = skewbook(&["implied", HISTORY, "--format", format]);
        assert!(out == plain, "{format}");
    }
}

/// The date filter's usage errors, read in two passes as read whole: no
/// date kept (the message lists the file's dates) and --from after --to.
#[test]
fn date_filter_errors_are_the_same_both_ways() {
    for args in [
        &["--date", "2026-06-13"][..],
        &["--from", "2026-07-01"][..],
        &["--from", "2026-06-19", "--to", "2026-06-08"][..],
    ] {
        let (code, out, err) = same_both_ways(HISTORY, args);
        assert_eq!((code, out.as_str()), (2, ""), "{err}");
        assert!(err.starts_with("error: --"), "{err}");
    }
}

/// The date reader against the whole-file reader on mutated files (the
/// `fuzz` module's mutations of the bundled history and a one-date
/// snapshot: lines deleted, duplicated or swapped, cells damaged, odd
/// encodings; and two rows of the history swapped): a file it reads to the
/// end without a problem, the whole-file reader accepts, with the same
/// dates and warnings; a file it finds problems in, the whole-file reader
/// refuses with the same error (every problem, sorted by line). Files out
/// of date order or with a record the CSV reader cannot read are left to
/// the whole-file reader.
#[test]
fn the_date_reader_agrees_with_the_whole_file_reader_on_mutated_files() {
    let mut rng = ChaCha8Rng::seed_from_u64(0x0b10c5);
    let samples = [
        std::fs::read(HISTORY).expect("history"),
        std::fs::read("market-samples/hgx-2026-06-18.csv").expect("snapshot"),
    ];
    let (mut complete, mut invalid, mut read_whole) = (0, 0, 0);
    for case in 0..1000 {
        let bytes = if case % 4 == 3 {
            // Two rows of the history swapped: still a good file, often
            // out of date order.
            let text = String::from_utf8_lossy(&samples[0]).into_owned();
            let mut lines: Vec<&str> = text.lines().collect();
            let (i, j) = (
                rng.random_range(1..lines.len()),
                rng.random_range(1..lines.len()),
            );
            lines.swap(i, j);
            (lines.join("\n") + "\n").into_bytes()
        } else {
            crate::fuzz::mutate(&mut rng, &samples[case % 2])
        };
        let path = write_temp("streaming-mutated", &bytes);
        let mut reader = DateReader::open(&path).expect("a regular file");
        let blocks: Vec<_> = (&mut reader).collect();
        let end = reader.end();
        let whole = skewbook::input::decode(bytes.clone(), &path)
            .and_then(|text| parse_snapshot(&text, &path));
        let shown = String::from_utf8_lossy(&bytes);
        match (end, &whole) {
            (Some(ReadEnd::Complete), Ok(snap)) => {
                complete += 1;
                let dates: Vec<_> = blocks.iter().map(|b| b.date.clone()).collect();
                let warnings: Vec<_> = blocks.iter().flat_map(|b| b.warnings.clone()).collect();
                assert_eq!(dates, snap.dates, "case {case}:\n{shown}");
                assert_eq!(warnings, snap.warnings, "case {case}:\n{shown}");
            }
            (Some(ReadEnd::Invalid), Err(e)) => {
                invalid += 1;
                assert_eq!(reader.into_error().as_ref(), Some(e), "case {case}:\n{shown}");
            }
            (Some(ReadEnd::NotInDateOrder | ReadEnd::Unreadable), _) => read_whole += 1,
            _ => panic!(
                "case {case}: the date reader ended {end:?}, the whole-file reader {whole:?}:\n{shown}"
            ),
        }
    }
    // The mutations reach every outcome.
    assert!(
        complete > 20 && invalid > 100 && read_whole > 20,
        "{complete} {invalid} {read_whole}"
    );
}

/// A history without tranche quotes, in a pool of names beside the large
/// pool: no tranche, so neither path's CSV has the large pool's columns;
/// the same bytes both ways in every format.
#[test]
fn a_history_without_tranches_has_the_same_columns_both_ways() {
    let text: String = history_text()
        .lines()
        .filter(|l| !l.contains(",tranche,"))
        .map(|l| format!("{l}\n"))
        .collect();
    let path = write_temp("streaming-no-tranches", &text);
    for format in FORMATS {
        let (code, out, err) = same_both_ways(
            &path,
            &["--format", format, "--names", "10", "--compare-pool"],
        );
        assert_eq!(code, 0, "{err}");
        if format == "csv" {
            let header = out.lines().next().unwrap_or_default();
            assert!(header.ends_with(",model"), "{header}");
            assert_eq!(out.lines().count(), 1);
        }
    }
}

/// `curve` on the bundled history and on 308 dates (more than a chunk),
/// with a date filter, and on a date no curve fits: the same bytes both
/// ways in every format.
#[test]
fn curve_gives_the_same_bytes_both_ways() {
    let long = write_temp("streaming-curve", long_history(14, 10));
    for format in FORMATS {
        for (path, extra) in [
            (HISTORY, &[][..]),
            (long.as_str(), &[][..]),
            (
                long.as_str(),
                &["--from", "2026-07-01", "--to", "2027-07-01"][..],
            ),
        ] {
            let mut args = vec!["--format", format];
            args.extend(extra);
            let (code, out, err) = same_both_ways_of("curve", path, &args);
            assert_eq!(code, 0, "{err}");
            assert!(!out.is_empty());
        }
    }
    let text = history_text().replacen(
        "index,2031-06-20,,,spread_bp,58,",
        "index,2031-06-20,,,spread_bp,1,",
        1,
    );
    let path = write_temp("streaming-curve-unfittable", text);
    for format in FORMATS {
        let (code, out, err) = same_both_ways_of("curve", &path, &["--format", format]);
        assert_eq!((code, out.as_str()), (2, ""), "{err}");
    }
}
