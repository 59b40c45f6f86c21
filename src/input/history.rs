//! Default history reader (real-world calibration input).
//!
//! CSV with a header row: `period` and either `default_rate_pct` (the
//! observed default rate of the pool in the period, in percent) or both
//! `defaults` and `obligors` (counts). One period a row, in any order; the
//! order of the file is kept.
//!
//! Rules (each break is an error naming file, line, column and header, and
//! the reader lists every problem of the file at once):
//! - the header has `period` and exactly one of the two layouts; no other
//!   column, no column twice;
//! - `period` is a non-empty label, unique in the file, without the word
//!   `inf` or `NaN` (the output would refuse to print it);
//! - `default_rate_pct` is a number in [0, 100];
//! - `defaults` and `obligors` are whole numbers, `obligors` from 1 to
//!   [`MAX_OBLIGORS`] and `defaults` <= `obligors`;
//! - every row has as many cells as the header;
//! - at least 3 periods.
//!
//! Two things are read but draw a warning ([`History::warnings`]), as they
//! are more likely mistakes than data:
//! - every rate of `default_rate_pct` below 0.1 (and one above 0): the
//!   column is in percent, and fractions typed there (0.012 for 1.2%)
//!   would read a hundred times too small;
//! - a gap in the periods, when the labels are years (`2011`), months
//!   (`2011-06`), quarters (`2011-Q2`), half years (`2011-H1`) or ISO dates
//!   (a step more than one and a half times the usual one): the estimators
//!   take the periods as they are.
//!
//! The file is read as every reader reads CSV: a UTF-8 byte-order mark is
//! accepted, cells are trimmed, blank lines are skipped but counted, so a
//! problem's line is the line of the file (`\n`, `\r\n` or `\r` endings).
//! Problems come sorted by line, each as
//! `path:line:col: column "name": expected X, found Y` (or `path:line:`
//! for a problem of the whole header or file).

use super::cells::{self, invalid, quoted, Header, Row};
use super::domain::MAX_OBLIGORS;
use crate::error::{Error, ErrorKind, Problem, Result};
use std::collections::HashMap;

/// The fewest periods a history may have.
pub const MIN_PERIODS: usize = 3;

/// Which layout the file used.
#[derive(Debug, Clone, Copy, PartialEq, Eq, serde::Serialize)]
#[serde(rename_all = "snake_case")]
pub enum HistoryKind {
    /// `default_rate_pct` per period.
    Rates,
    /// `defaults` and `obligors` per period.
    Counts,
}

/// Defaults among the obligors of one period's cohort.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Counts {
    /// Obligors that defaulted in the period.
    pub defaults: u64,
    /// Obligors at the start of the period (>= 1).
    pub obligors: u64,
}

/// One period of a default history.
#[derive(Debug, Clone, PartialEq)]
pub struct Period {
    /// The period's label as written (`2011`, `2011-H1`, ...).
    pub label: String,
    /// Observed default rate, a fraction in [0, 1] (defaults / obligors for counts).
    pub rate: f64,
    /// The counts, when the file gave them.
    pub counts: Option<Counts>,
    /// 1-based line of the row in its file (0 for histories built in code).
    pub line: u64,
}

/// A checked default history.
#[derive(Debug, Clone, PartialEq)]
pub struct History {
    /// Path the history was read from (`-` for standard input, empty when built in code).
    pub path: String,
    /// Layout of the file.
    pub kind: HistoryKind,
    /// The periods, in file order.
    pub periods: Vec<Period>,
    /// Likely mistakes that do not stop the estimators: rates that look
    /// like fractions, gaps in the periods (see the module docs).
    pub warnings: Vec<Problem>,
}

impl History {
    /// A rate history built in code, periods labelled `1`, `2`, ...
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] when a rate is outside [0, 1] or there
    /// are fewer than [`MIN_PERIODS`] rates.
    pub fn from_rates(rates: &[f64]) -> Result<History> {
        if let Some((i, r)) = rates
            .iter()
            .enumerate()
            .find(|(_, r)| !(r.is_finite() && (0.0..=1.0).contains(*r)))
        {
            return Err(Error::msg(
                ErrorKind::InvalidInput,
                format!(
                    "period {}: expected a default rate in [0, 1], found {r}",
                    i + 1
                ),
            ));
        }
        let periods = rates
            .iter()
            .enumerate()
            .map(|(i, &rate)| Period {
                label: (i + 1).to_string(),
                rate,
                counts: None,
                line: 0,
            })
            .collect();
        History::checked(String::new(), HistoryKind::Rates, periods)
    }

    /// A count history built in code from (defaults, obligors) pairs,
    /// periods labelled `1`, `2`, ...
    ///
    /// # Errors
    /// [`ErrorKind::InvalidInput`] when obligors is 0, defaults exceed
    /// obligors, or there are fewer than [`MIN_PERIODS`] periods.
    pub fn from_counts(counts: &[(u64, u64)]) -> Result<History> {
        if let Some((i, (d, n))) = counts
            .iter()
            .enumerate()
            .find(|(_, (d, n))| *n == 0 || d > n)
        {
            return Err(Error::msg(
                ErrorKind::InvalidInput,
                format!(
                    "period {}: expected 0 <= defaults <= obligors and obligors >= 1, found {d} of {n}",
                    i + 1
                ),
            ));
        }
        let periods = counts
            .iter()
            .enumerate()
            .map(|(i, &(d, n))| Period {
                label: (i + 1).to_string(),
                rate: d as f64 / n as f64,
                counts: Some(Counts {
                    defaults: d,
                    obligors: n,
                }),
                line: 0,
            })
            .collect();
        History::checked(String::new(), HistoryKind::Counts, periods)
    }

    fn checked(path: String, kind: HistoryKind, periods: Vec<Period>) -> Result<History> {
        if periods.len() < MIN_PERIODS {
            let name = if path.is_empty() { "history" } else { &path };
            return Err(Error::msg(
                ErrorKind::InvalidInput,
                format!(
                    "{name}: expected at least {MIN_PERIODS} periods, found {}",
                    periods.len()
                ),
            ));
        }
        Ok(History {
            path,
            kind,
            periods,
            warnings: Vec::new(),
        })
    }

    /// The observed default rates, fractions.
    pub fn rates(&self) -> Vec<f64> {
        self.periods.iter().map(|p| p.rate).collect()
    }

    /// The (defaults, obligors) pairs, when every period has counts.
    pub fn counts(&self) -> Option<Vec<(u64, u64)>> {
        self.periods
            .iter()
            .map(|p| p.counts.map(|c| (c.defaults, c.obligors)))
            .collect()
    }

    /// Labels of the periods whose default rate is exactly 0.
    pub fn zero_default_periods(&self) -> Vec<&str> {
        self.periods
            .iter()
            .filter(|p| p.rate == 0.0)
            .map(|p| p.label.as_str())
            .collect()
    }
}

/// Reads and checks a default history file (`-` is standard input).
///
/// # Errors
/// [`ErrorKind::Io`] when the file cannot be read;
/// [`ErrorKind::InvalidInput`] listing every broken rule with its file,
/// line and column.
pub fn read_history(path: &str) -> Result<History> {
    let text = super::read_source(path)?;
    parse_history(path, &text)
}

/// Column names, referred to by index below.
const COLUMNS: [&str; 4] = ["period", "default_rate_pct", "defaults", "obligors"];
const PERIOD: usize = 0;
const RATE: usize = 1;
const DEFAULTS: usize = 2;
const OBLIGORS: usize = 3;

#[derive(Clone, Copy)]
enum Layout {
    Rates,
    Counts,
}

/// Parses and checks the text of a default history; `path` names it in errors.
///
/// # Errors
/// [`ErrorKind::InvalidInput`] listing every broken rule with its file,
/// line and column, sorted by line.
///
/// ```
/// use skewbook::input::history::{parse_history, HistoryKind};
/// let h = parse_history("h.csv", "period,defaults,obligors\n2020,0,50\n2021,2,52\n2022,1,51\n")?;
/// assert_eq!(h.kind, HistoryKind::Counts);
/// assert_eq!(h.zero_default_periods(), vec!["2020"]);
/// assert!(parse_history("h.csv", "period,default_rate_pct\n2020,101\n2021,1\n2022,1\n").is_err());
/// # Ok::<(), skewbook::Error>(())
/// ```
pub fn parse_history(path: &str, text: &str) -> Result<History> {
    let mut problems: Vec<Problem> = Vec::new();
    let records = cells::records(text, path, &mut problems);
    let Some(header) = records.first() else {
        problems.push(Problem::at(
            cells::plain_location(path, 1),
            "expected a header row (period and default_rate_pct, or period, defaults \
             and obligors), found an empty file",
        ));
        return Err(invalid(problems));
    };
    let Some(sheet) = cells::header(path, header, &COLUMNS, &mut problems) else {
        return Err(invalid(problems));
    };
    let has_period = sheet.require([PERIOD], &mut problems);
    let whole = |message: &str| Problem::at(sheet.plain(sheet.line), message);
    let layout = match (sheet.has(RATE), sheet.has(DEFAULTS), sheet.has(OBLIGORS)) {
        (true, false, false) => Some(Layout::Rates),
        (false, true, true) => Some(Layout::Counts),
        (true, _, _) => {
            problems.push(whole(
                "expected either default_rate_pct or defaults and obligors, found both layouts",
            ));
            None
        }
        (false, true, false) => {
            problems.push(whole(
                "expected a column \"obligors\" beside \"defaults\", found none",
            ));
            None
        }
        (false, false, true) => {
            problems.push(whole(
                "expected a column \"defaults\" beside \"obligors\", found none",
            ));
            None
        }
        (false, false, false) => {
            problems.push(whole(
                "expected a column \"default_rate_pct\", or \"defaults\" and \"obligors\", found neither",
            ));
            None
        }
    };
    // Rows cannot be read without the period and one whole layout; unknown
    // and repeated names are reported but rows are still checked.
    let (true, Some(layout)) = (has_period, layout) else {
        return Err(invalid(problems));
    };

    let mut periods: Vec<Period> = Vec::new();
    // Line of each label's first row: a repeat is found in constant time.
    let mut first_line: HashMap<String, u64> = HashMap::with_capacity(records.len());
    for rec in &records[1..] {
        let mut row = Row::new(&sheet, rec, &mut problems);
        if !row.width() {
            continue;
        }
        let line = row.line();
        let label = row.cell(PERIOD).to_string();
        let mut labelled = true;
        if row.name(PERIOD, "a period label").is_none() {
            labelled = false;
        } else if let Some(first) = first_line.get(&label) {
            let msg = format!(
                "expected each period once, found {} again (first on line {first})",
                quoted(&label),
            );
            row.bad(PERIOD, msg);
            labelled = false;
        }
        let parsed = match layout {
            Layout::Rates => row
                .checked(
                    RATE,
                    "a number",
                    "a default rate in percent in [0, 100]",
                    |x| (0.0..=100.0).contains(&x),
                )
                .map(|x| (x / 100.0, None)),
            Layout::Counts => {
                let d = count(&mut row, DEFAULTS);
                let n = count(&mut row, OBLIGORS);
                if n == Some(0) {
                    row.bad(OBLIGORS, "expected at least 1 obligor, found 0".into());
                }
                match (d, n) {
                    (Some(d), Some(n)) if n > 0 && d > n => {
                        let msg =
                            format!("expected defaults at most the obligors ({n}), found {d}");
                        row.bad(DEFAULTS, msg);
                        None
                    }
                    (Some(d), Some(n)) if n > 0 => Some((
                        d as f64 / n as f64,
                        Some(Counts {
                            defaults: d,
                            obligors: n,
                        }),
                    )),
                    _ => None,
                }
            }
        };
        // A label is kept for the check of repeats even when the numbers
        // of its row are bad (the row is not a period then: the file fails).
        if labelled {
            first_line.insert(label.clone(), line);
            periods.push(Period {
                label,
                rate: parsed.as_ref().map_or(f64::NAN, |p| p.0),
                counts: parsed.and_then(|p| p.1),
                line,
            });
        }
    }
    if !problems.is_empty() {
        return Err(invalid(problems));
    }
    let kind = match layout {
        Layout::Rates => HistoryKind::Rates,
        Layout::Counts => HistoryKind::Counts,
    };
    if periods.len() < MIN_PERIODS {
        let last_line = records.last().map_or(sheet.line, |r| r.line);
        return Err(Error::new(
            ErrorKind::InvalidInput,
            Problem::at(
                cells::plain_location(path, last_line),
                format!(
                    "expected at least {MIN_PERIODS} periods, found {}",
                    periods.len()
                ),
            ),
        ));
    }
    let mut history = History::checked(path.to_string(), kind, periods)?;
    history.warnings = fraction_warning(&sheet, &history)
        .into_iter()
        .chain(gap_warnings(&sheet, &history.periods))
        .collect();
    Ok(history)
}

/// Below this, in percent, every rate of a file looks like a fraction.
const FRACTION_LOOKALIKE_PCT: f64 = 0.1;

/// The warning when every rate of `default_rate_pct` is below 0.1 and one
/// is above 0.
fn fraction_warning(sheet: &Header, h: &History) -> Option<Problem> {
    if h.kind != HistoryKind::Rates {
        return None;
    }
    let largest = h.periods.iter().map(|p| p.rate * 100.0).fold(0.0, f64::max);
    if !(largest > 0.0 && largest < FRACTION_LOOKALIKE_PCT) {
        return None;
    }
    let big = crate::output::significant(largest, 6);
    let as_pct = crate::output::significant(largest * 100.0, 6);
    Some(Problem::at(
        sheet.at(sheet.line, RATE),
        format!(
            "every default rate is below 0.1 (the largest is {big}): the column is in percent, \
             so they read as below 0.1%; if they are fractions ({big} meaning {as_pct}%), \
             multiply them by 100"
        ),
    ))
}

/// A period label as a position on a regular calendar: years, months,
/// quarters or half years count in their own steps; ISO dates in days.
#[derive(Clone, Copy, PartialEq, Eq)]
enum Scale {
    Years,
    Months,
    Quarters,
    Halves,
    Days,
}

fn position(label: &str) -> Option<(Scale, i64)> {
    let digits = |s: &str, n: usize| s.len() == n && s.bytes().all(|b| b.is_ascii_digit());
    if digits(label, 4) {
        return Some((Scale::Years, label.parse().ok()?));
    }
    if let Ok(d) = cells::parse_iso_date(label) {
        use chrono::Datelike;
        return Some((Scale::Days, i64::from(d.num_days_from_ce())));
    }
    let (y, rest) = label.split_once('-')?;
    if !digits(y, 4) {
        return None;
    }
    let y: i64 = y.parse().ok()?;
    let sub = |prefix: &str, max: i64| -> Option<i64> {
        let n = rest.strip_prefix(prefix)?;
        let n: i64 = if digits(n, 1) || digits(n, 2) {
            n.parse().ok()?
        } else {
            return None;
        };
        (1..=max).contains(&n).then_some(n)
    };
    if let Some(m) = sub("", 12).filter(|_| rest.len() == 2) {
        return Some((Scale::Months, y * 12 + m - 1));
    }
    if let Some(q) = sub("Q", 4) {
        return Some((Scale::Quarters, y * 4 + q - 1));
    }
    sub("H", 2).map(|h| (Scale::Halves, y * 2 + h - 1))
}

/// One warning per gap in the periods, when every label is on one scale.
fn gap_warnings(sheet: &Header, periods: &[Period]) -> Vec<Problem> {
    let Some(mut at) = periods
        .iter()
        .map(|p| position(&p.label).map(|(s, x)| (s, x, p)))
        .collect::<Option<Vec<_>>>()
    else {
        return Vec::new();
    };
    let scale = at[0].0;
    if at.iter().any(|a| a.0 != scale) {
        return Vec::new();
    }
    at.sort_by_key(|a| a.1);
    let steps: Vec<i64> = at.windows(2).map(|w| w[1].1 - w[0].1).collect();
    // The usual step: 1 on a calendar scale; the median step between dates.
    let usual = if scale == Scale::Days {
        let mut s = steps.clone();
        s.sort_unstable();
        s[s.len() / 2]
    } else {
        1
    };
    let mut out = Vec::new();
    for (w, step) in at.windows(2).zip(&steps) {
        let gap = if scale == Scale::Days {
            2 * step > 3 * usual
        } else {
            *step > 1
        };
        if !gap {
            continue;
        }
        let (a, b) = (w[0].2, w[1].2);
        let missing = match scale {
            Scale::Days => format!(
                "{step} days later where periods are usually {usual} days apart: a period \
                 seems to be missing"
            ),
            Scale::Years if *step == 2 => format!("and {} is missing", w[0].1 + 1),
            Scale::Years => format!("and {} to {} are missing", w[0].1 + 1, w[1].1 - 1),
            _ if *step == 2 => "and one period is missing".to_string(),
            _ => format!("and {} periods are missing", step - 1),
        };
        out.push(Problem::at(
            sheet.at(b.line, PERIOD),
            format!(
                "a gap in the periods: {} (line {}) is followed by {} (line {}), {missing}; \
                 the estimators take the periods as given, so check the file for a lost row",
                quoted(&a.label),
                a.line,
                quoted(&b.label),
                b.line
            ),
        ));
    }
    out
}

/// A whole number of obligors or defaults, at most [`MAX_OBLIGORS`].
fn count(row: &mut Row, id: usize) -> Option<u64> {
    let s = row.cell(id);
    if s.is_empty() {
        row.bad(id, "expected a whole number, found an empty cell".into());
        return None;
    }
    match s.parse::<u64>() {
        Ok(n) if n > MAX_OBLIGORS => {
            let msg = format!(
                "expected a whole number up to {MAX_OBLIGORS} (a billion), found {}",
                quoted(s)
            );
            row.bad(id, msg);
            None
        }
        Ok(n) => Some(n),
        Err(_) => {
            let msg = format!(
                "expected a whole number (0, 1, 2, ...), found {}",
                quoted(s)
            );
            row.bad(id, msg);
            None
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn messages(text: &str) -> Vec<String> {
        match parse_history("h.csv", text) {
            Ok(_) => vec![],
            Err(e) => e.problems.iter().map(|p| p.to_string()).collect(),
        }
    }

    #[test]
    fn reads_rates_in_percent_as_fractions() {
        let h = parse_history(
            "h.csv",
            "period,default_rate_pct\n2019,1.5\n2020, 0\n2021,2.25\n",
        )
        .unwrap();
        assert_eq!(h.kind, HistoryKind::Rates);
        assert_eq!(h.rates(), vec![0.015, 0.0, 0.0225]);
        assert_eq!(h.periods[1].line, 3);
        assert_eq!(h.zero_default_periods(), vec!["2020"]);
        assert!(h.counts().is_none());
    }

    #[test]
    fn reads_counts() {
        let h = parse_history(
            "h.csv",
            "obligors,defaults,period\n200,3,a\n210,0,b\n190,1,c\n",
        )
        .unwrap();
        assert_eq!(h.counts().unwrap(), vec![(3, 200), (0, 210), (1, 190)]);
        assert_eq!(h.periods[0].rate, 0.015);
    }

    #[test]
    fn every_problem_is_located() {
        let m = messages(
            "period,defaults,obligors\n2019,3,200\n2020,x,100\n2021,5,4\n2019,1,10\n2022,1\n2023,1,0\n",
        );
        assert_eq!(
            m,
            vec![
                "h.csv:3:2: column \"defaults\": expected a whole number (0, 1, 2, ...), found \"x\"",
                "h.csv:4:2: column \"defaults\": expected defaults at most the obligors (4), found 5",
                "h.csv:5:1: column \"period\": expected each period once, found \"2019\" again (first on line 2)",
                "h.csv:6:3: column \"obligors\": expected 3 cells as in the header (line 1), found 2: the row ends before this column",
                "h.csv:7:3: column \"obligors\": expected at least 1 obligor, found 0",
            ]
        );
    }

    #[test]
    fn every_repeat_names_the_first_row_of_its_label() {
        // A label on a row with a bad number is still the first of its kind.
        let m = messages("period,default_rate_pct\na,1\nb,x\nc,1\nb,1\na,2\nd,1\nb,3\n");
        assert_eq!(
            m,
            vec![
                "h.csv:3:2: column \"default_rate_pct\": expected a number, found \"x\"",
                "h.csv:5:1: column \"period\": expected each period once, found \"b\" again (first on line 3)",
                "h.csv:6:1: column \"period\": expected each period once, found \"a\" again (first on line 2)",
                "h.csv:8:1: column \"period\": expected each period once, found \"b\" again (first on line 3)",
            ]
        );
        // Labels are compared as written after trimming: "2020" and "2020.0" differ.
        assert!(messages("period,default_rate_pct\n2020,1\n 2020.0 ,1\n2021,1\n").is_empty());
    }

    #[test]
    fn rates_outside_0_100_and_non_numbers() {
        let m = messages("period,default_rate_pct\n1,-0.1\n2,100.5\n3,1,5\n4,abc\n5,\n");
        assert_eq!(m.len(), 5, "{m:?}");
        assert!(m[0].starts_with("h.csv:2:2: column \"default_rate_pct\": expected a default rate in percent in [0, 100], found \"-0.1\""));
        assert!(m[1].contains("found \"100.5\""));
        assert!(m[2].starts_with("h.csv:4:"));
        assert_eq!(
            m[3],
            "h.csv:5:2: column \"default_rate_pct\": expected a number, found \"abc\""
        );
        assert_eq!(
            m[4],
            "h.csv:6:2: column \"default_rate_pct\": expected a number, found an empty cell"
        );
    }

    #[test]
    fn header_rules() {
        assert_eq!(
            messages("period,default_rate_pct,defaults,obligors\n1,1,1,1\n"),
            vec!["h.csv:1: expected either default_rate_pct or defaults and obligors, found both layouts"]
        );
        assert_eq!(
            messages("period,defaults\n1,1\n"),
            vec!["h.csv:1: expected a column \"obligors\" beside \"defaults\", found none"]
        );
        assert_eq!(
            messages("year,rate\n1,1\n"),
            vec![
                "h.csv:1: column \"period\": expected a column named \"period\" in the header, found none",
                "h.csv:1: expected a column \"default_rate_pct\", or \"defaults\" and \"obligors\", found neither",
                "h.csv:1:1: column \"year\": expected a column name, one of period, default_rate_pct, defaults, obligors, found \"year\"",
                "h.csv:1:2: column \"rate\": expected a column name, one of period, default_rate_pct, defaults, obligors, found \"rate\"",
            ]
        );
        // An unknown column does not stop the rows from being checked.
        assert_eq!(
            messages("\u{feff}period,default_rate_pct,note\n1,1,a\n2,x,b\n"),
            vec![
                "h.csv:1:3: column \"note\": expected a column name, one of period, default_rate_pct, defaults, obligors, found \"note\"",
                "h.csv:3:2: column \"default_rate_pct\": expected a number, found \"x\"",
            ]
        );
        assert!(messages("")[0].contains("found an empty file"));
    }

    /// Regression: lines were taken from the csv crate's record position,
    /// which stands before the blank lines in front of a record and before
    /// the `\n` of a `\r\n`, so a bad cell was reported lines too early.
    #[test]
    fn bad_cell_line_counts_blank_lines_and_crlf() {
        let text =
            "period,default_rate_pct\r\n\r\n2019,1\r\n2020,2\r\n\r\n\r\n2021,x\r\n2022,1\r\n";
        assert_eq!(
            messages(text),
            vec!["h.csv:7:2: column \"default_rate_pct\": expected a number, found \"x\""]
        );
        let text = "\nperiod,default_rate_pct\n2019,1\n\n2020,101\r\n2021,1\n";
        let m = messages(text);
        assert_eq!(m.len(), 1, "{m:?}");
        assert!(
            m[0].starts_with("h.csv:5:2: column \"default_rate_pct\": "),
            "{m:?}"
        );
    }

    fn warnings(text: &str) -> Vec<String> {
        let h = parse_history("h.csv", text).expect("history");
        h.warnings.iter().map(|p| p.to_string()).collect()
    }

    #[test]
    fn gaps_are_found_on_every_calendar_scale_and_in_any_order() {
        // Consecutive labels, in any order: no warning.
        for text in [
            "period,default_rate_pct\n2012,1\n2010,1\n2011,1\n",
            "period,default_rate_pct\n2011-11,1\n2011-12,1\n2012-01,1\n",
            "period,default_rate_pct\n2011-Q3,1\n2011-Q4,1\n2012-Q1,1\n",
            "period,default_rate_pct\n2011-H2,1\n2012-H1,1\n2012-H2,1\n",
            "period,default_rate_pct\n2020-01-31,1\n2020-02-29,1\n2020-03-31,1\n2020-04-30,1\n",
            // Labels that are not on one calendar: nothing to say.
            "period,default_rate_pct\na,1\nb,1\nd,1\n",
            "period,default_rate_pct\n2010,1\n2011-Q1,1\n2014,1\n",
        ] {
            assert_eq!(warnings(text), Vec::<String>::new(), "{text}");
        }
        for (text, says) in [
            (
                "period,default_rate_pct\n2012,1\n2010,1\n2013,1\n",
                "and 2011 is missing",
            ),
            (
                "period,default_rate_pct\n2011-11,1\n2012-02,1\n2012-03,1\n",
                "and 2 periods are missing",
            ),
            (
                "period,default_rate_pct\n2011-Q3,1\n2012-Q1,1\n2012-Q2,1\n",
                "and one period is missing",
            ),
            (
                "period,default_rate_pct\n2011-H1,1\n2012-H1,1\n2012-H2,1\n",
                "and one period is missing",
            ),
            (
                "period,default_rate_pct\n2020-01-31,1\n2020-02-29,1\n2020-04-30,1\n2020-05-31,1\n",
                "61 days later where periods are usually 31 days apart",
            ),
        ] {
            let w = warnings(text);
            assert_eq!(w.len(), 1, "{text}: {w:?}");
            assert!(w[0].contains(says), "{text}: {w:?}");
        }
        // The warning sits at the later period's line, naming both.
        assert_eq!(
            warnings("period,default_rate_pct\n2012,1\n2010,1\n2013,1\n"),
            ["h.csv:2:1: column \"period\": a gap in the periods: \"2010\" (line 3) is followed \
              by \"2012\" (line 2), and 2011 is missing; the estimators take the periods as given, \
              so check the file for a lost row"]
        );
    }

    #[test]
    fn rates_that_look_like_fractions_draw_one_warning() {
        let w = warnings("period,default_rate_pct\n1,0.012\n2,0.05\n3,0\n");
        assert_eq!(w.len(), 1, "{w:?}");
        assert!(w[0].starts_with("h.csv:1:2: column \"default_rate_pct\": every default rate is below 0.1 (the largest is 0.05)"));
        // One rate of 0.1% or more, all zeros, or counts: no warning.
        assert!(warnings("period,default_rate_pct\n1,0.012\n2,0.1\n3,0\n").is_empty());
        assert!(warnings("period,default_rate_pct\n1,0\n2,0\n3,0\n").is_empty());
        assert!(warnings("period,defaults,obligors\n1,0,1000\n2,1,1000\n3,0,1000\n").is_empty());
    }

    #[test]
    fn counts_stop_at_a_billion_obligors() {
        let m = messages(
            "period,defaults,obligors\n1,0,1000000001\n2,0,18446744073709551615\n3,0,10\n",
        );
        assert_eq!(m.len(), 2, "{m:?}");
        assert!(m[0].starts_with(
            "h.csv:2:3: column \"obligors\": expected a whole number up to 1000000000"
        ));
        assert!(messages("period,defaults,obligors\n1,0,1000000000\n2,0,10\n3,0,10\n").is_empty());
    }

    #[test]
    fn too_few_periods() {
        assert_eq!(
            messages("period,default_rate_pct\n1,1\n2,2\n"),
            vec!["h.csv:3: expected at least 3 periods, found 2"]
        );
    }
}
