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
//! - `period` is a non-empty label, unique in the file;
//! - `default_rate_pct` is a number in [0, 100];
//! - `defaults` and `obligors` are whole numbers, `obligors` >= 1 and
//!   `defaults` <= `obligors`;
//! - every row has as many cells as the header;
//! - at least 3 periods.

use crate::error::{Error, ErrorKind, Location, Problem, Result};

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

enum Layout {
    Rates { rate: usize },
    Counts { defaults: usize, obligors: usize },
}

/// Parses and checks the text of a default history; `path` names it in errors.
///
/// # Errors
/// [`ErrorKind::InvalidInput`] listing every broken rule with its file,
/// line and column.
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
    let loc = |line: u64, col: Option<usize>, header: Option<&str>| Location {
        path: path.to_string(),
        line,
        column: col,
        header: header.map(str::to_string),
    };
    let mut rdr = csv::ReaderBuilder::new()
        .has_headers(false)
        .flexible(true)
        .from_reader(text.as_bytes());
    let mut records = rdr.records();
    let header = match records.next() {
        None => {
            return Err(Error::new(
                ErrorKind::InvalidInput,
                Problem::at(
                    loc(1, None, None),
                    "expected a header row (period and default_rate_pct, or period, defaults \
                     and obligors), found an empty file",
                ),
            ))
        }
        Some(Err(e)) => {
            return Err(Error::new(
                ErrorKind::InvalidInput,
                Problem::at(loc(1, None, None), format!("cannot read the header: {e}")),
            ))
        }
        Some(Ok(h)) => h,
    };
    let header_line = header.position().map_or(1, |p| p.line());
    let names: Vec<String> = header.iter().map(|s| s.trim().to_string()).collect();
    let find = |name: &str| names.iter().position(|n| n == name);
    for (j, n) in names.iter().enumerate() {
        let known = ["period", "default_rate_pct", "defaults", "obligors"];
        if !known.contains(&n.as_str()) {
            problems.push(Problem::at(
                loc(header_line, Some(j + 1), None),
                format!(
                    "expected one of the columns period, default_rate_pct, defaults, obligors, \
                     found \"{n}\""
                ),
            ));
        } else if names[..j].contains(n) {
            problems.push(Problem::at(
                loc(header_line, Some(j + 1), None),
                format!("expected each column once, found \"{n}\" again"),
            ));
        }
    }
    let period_col = find("period");
    if period_col.is_none() {
        problems.push(Problem::at(
            loc(header_line, None, None),
            "expected a column \"period\" in the header, found none",
        ));
    }
    let layout = match (find("default_rate_pct"), find("defaults"), find("obligors")) {
        (Some(rate), None, None) => Some(Layout::Rates { rate }),
        (None, Some(defaults), Some(obligors)) => Some(Layout::Counts { defaults, obligors }),
        (Some(_), Some(_), _) | (Some(_), _, Some(_)) => {
            problems.push(Problem::at(
                loc(header_line, None, None),
                "expected either default_rate_pct or defaults and obligors, found both layouts",
            ));
            None
        }
        (None, Some(_), None) => {
            problems.push(Problem::at(
                loc(header_line, None, None),
                "expected a column \"obligors\" beside \"defaults\", found none",
            ));
            None
        }
        (None, None, Some(_)) => {
            problems.push(Problem::at(
                loc(header_line, None, None),
                "expected a column \"defaults\" beside \"obligors\", found none",
            ));
            None
        }
        (None, None, None) => {
            problems.push(Problem::at(
                loc(header_line, None, None),
                "expected a column \"default_rate_pct\", or \"defaults\" and \"obligors\", found neither",
            ));
            None
        }
    };
    if !problems.is_empty() {
        return Err(Error {
            kind: ErrorKind::InvalidInput,
            problems,
        });
    }
    let (Some(period_col), Some(layout)) = (period_col, layout) else {
        return Err(Error::msg(
            ErrorKind::InvalidInput,
            "unreachable header state",
        ));
    };
    let mut periods = Vec::new();
    let mut last_line = header_line;
    for rec in records {
        let rec = match rec {
            Ok(r) => r,
            Err(e) => {
                let line = e.position().map_or(last_line + 1, |p| p.line());
                problems.push(Problem::at(
                    loc(line, None, None),
                    format!("cannot read the row: {e}"),
                ));
                continue;
            }
        };
        let line = rec.position().map_or(last_line + 1, |p| p.line());
        last_line = line;
        if rec.len() != names.len() {
            problems.push(Problem::at(
                loc(line, None, None),
                format!(
                    "expected {} cells as in the header, found {}",
                    names.len(),
                    rec.len()
                ),
            ));
            continue;
        }
        let cell = |j: usize| rec.get(j).unwrap_or("").trim();
        let at = |j: usize| loc(line, Some(j + 1), Some(&names[j]));
        let label = cell(period_col).to_string();
        let mut ok = true;
        if label.is_empty() {
            problems.push(Problem::at(
                at(period_col),
                "expected a period label, found an empty cell",
            ));
            ok = false;
        } else if let Some(prev) = periods.iter().find(|p: &&Period| p.label == label) {
            problems.push(Problem::at(
                at(period_col),
                format!(
                    "expected each period once, found \"{label}\" again (first on line {})",
                    prev.line
                ),
            ));
            ok = false;
        }
        let parsed = match layout {
            Layout::Rates { rate } => match parse_number(cell(rate)) {
                Err(m) => {
                    problems.push(Problem::at(at(rate), m));
                    None
                }
                Ok(x) if !(0.0..=100.0).contains(&x) => {
                    problems.push(Problem::at(
                        at(rate),
                        format!(
                            "expected a default rate in percent in [0, 100], found {}",
                            cell(rate)
                        ),
                    ));
                    None
                }
                Ok(x) => Some((x / 100.0, None)),
            },
            Layout::Counts { defaults, obligors } => {
                let d = parse_count(cell(defaults));
                let n = parse_count(cell(obligors));
                if let Err(m) = &d {
                    problems.push(Problem::at(at(defaults), m.clone()));
                }
                match &n {
                    Err(m) => problems.push(Problem::at(at(obligors), m.clone())),
                    Ok(0) => problems.push(Problem::at(
                        at(obligors),
                        "expected at least 1 obligor, found 0",
                    )),
                    Ok(_) => {}
                }
                match (d, n) {
                    (Ok(d), Ok(n)) if n > 0 && d > n => {
                        problems.push(Problem::at(
                            at(defaults),
                            format!("expected defaults at most the obligors ({n}), found {d}"),
                        ));
                        None
                    }
                    (Ok(d), Ok(n)) if n > 0 => Some((
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
        if let (true, Some((rate, counts))) = (ok, parsed) {
            periods.push(Period {
                label,
                rate,
                counts,
                line,
            });
        } else if ok {
            // keep the label for duplicate detection even when the numbers are bad
            periods.push(Period {
                label,
                rate: f64::NAN,
                counts: None,
                line,
            });
        }
    }
    if !problems.is_empty() {
        return Err(Error {
            kind: ErrorKind::InvalidInput,
            problems,
        });
    }
    let kind = match layout {
        Layout::Rates { .. } => HistoryKind::Rates,
        Layout::Counts { .. } => HistoryKind::Counts,
    };
    if periods.len() < MIN_PERIODS {
        return Err(Error::new(
            ErrorKind::InvalidInput,
            Problem::at(
                loc(last_line, None, None),
                format!(
                    "expected at least {MIN_PERIODS} periods, found {}",
                    periods.len()
                ),
            ),
        ));
    }
    History::checked(path.to_string(), kind, periods)
}

fn parse_number(s: &str) -> std::result::Result<f64, String> {
    if s.is_empty() {
        return Err("expected a number, found an empty cell".into());
    }
    match s.parse::<f64>() {
        Ok(x) if x.is_finite() => Ok(x),
        _ => Err(format!("expected a number, found \"{s}\"")),
    }
}

fn parse_count(s: &str) -> std::result::Result<u64, String> {
    if s.is_empty() {
        return Err("expected a whole number, found an empty cell".into());
    }
    s.parse::<u64>()
        .map_err(|_| format!("expected a whole number (0, 1, 2, ...), found \"{s}\""))
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
                "h.csv:6: expected 3 cells as in the header, found 2",
                "h.csv:7:3: column \"obligors\": expected at least 1 obligor, found 0",
            ]
        );
    }

    #[test]
    fn rates_outside_0_100_and_non_numbers() {
        let m = messages("period,default_rate_pct\n1,-0.1\n2,100.5\n3,1,5\n4,abc\n5,\n");
        assert_eq!(m.len(), 5, "{m:?}");
        assert!(m[0].starts_with("h.csv:2:2: column \"default_rate_pct\": expected a default rate in percent in [0, 100], found -0.1"));
        assert!(m[1].contains("found 100.5"));
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
        let m = messages("year,rate\n1,1\n");
        assert_eq!(m.len(), 4, "{m:?}");
        assert!(m[0].starts_with("h.csv:1:1: expected one of the columns"));
        assert!(messages("")[0].contains("found an empty file"));
    }

    #[test]
    fn too_few_periods() {
        assert_eq!(
            messages("period,default_rate_pct\n1,1\n2,2\n"),
            vec!["h.csv:3: expected at least 3 periods, found 2"]
        );
    }
}
