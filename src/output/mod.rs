//! Printers: one report value feeds the table, CSV and JSON writers.
//!
//! Every command builds a report (a serde type) that implements [`Report`];
//! [`write_report`] prints it in the chosen [`Format`] to any `impl Write`,
//! so tests print into a `Vec<u8>`.
//!
//! - **table**: aligned columns for a terminal, numbers right-aligned, one
//!   section per trade date (and maturity) with a title line;
//! - **csv**: one flat table with a header row, plain numbers in file units,
//!   empty cells where a value does not exist, so a spreadsheet opens it as is;
//! - **json**: the report's serde form, pretty-printed; fractions for rates,
//!   probabilities and correlations, `null` where a value does not exist.
//!
//! No printer ever writes `NaN`: values that may not exist are `Option`s.

use serde::Serialize;
use std::io::{self, Write};

/// Output format chosen on the command line.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum Format {
    /// Aligned text for a terminal (default).
    #[default]
    Table,
    /// Comma-separated values with a header row.
    Csv,
    /// Pretty-printed JSON.
    Json,
}

/// A rectangular block of text cells with a header row.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Table {
    /// Title line printed above the table (table format only).
    pub title: Option<String>,
    /// Column headers.
    pub headers: Vec<String>,
    /// Rows of cells, each as long as `headers`.
    pub rows: Vec<Vec<String>>,
    /// Lines printed under the table (table format only): notes, flags.
    pub notes: Vec<String>,
}

impl Table {
    /// An empty table with these headers.
    pub fn new<S: AsRef<str>>(headers: &[S]) -> Self {
        Table {
            title: None,
            headers: headers.iter().map(|h| h.as_ref().to_string()).collect(),
            rows: Vec::new(),
            notes: Vec::new(),
        }
    }

    /// Sets the title.
    pub fn with_title(mut self, title: impl Into<String>) -> Self {
        self.title = Some(title.into());
        self
    }

    /// Appends a row.
    pub fn push(&mut self, row: Vec<String>) {
        debug_assert_eq!(row.len(), self.headers.len());
        self.rows.push(row);
    }
}

/// A command's result, printable in every format.
pub trait Report: Serialize {
    /// The sections printed in table format, in order.
    fn sections(&self) -> Vec<Table>;
    /// The single flat table printed in CSV format.
    fn csv(&self) -> Table;
}

/// Prints `report` in `format`.
///
/// # Errors
/// Any error of the writer (a broken pipe included; the binary treats that
/// one as success).
pub fn write_report<R: Report>(w: &mut dyn Write, report: &R, format: Format) -> io::Result<()> {
    match format {
        Format::Table => {
            for (i, t) in report.sections().iter().enumerate() {
                if i > 0 {
                    writeln!(w)?;
                }
                write_table(w, t)?;
            }
            Ok(())
        }
        Format::Csv => write_csv(w, &report.csv()),
        Format::Json => {
            serde_json::to_writer_pretty(&mut *w, report).map_err(io::Error::other)?;
            writeln!(w)
        }
    }
}

fn looks_numeric(s: &str) -> bool {
    let t = s.trim_start_matches(['-', '+']);
    t.starts_with(|c: char| c.is_ascii_digit() || c == '.')
}

/// Writes an aligned text table: text left-aligned, numbers right-aligned.
pub fn write_table(w: &mut dyn Write, t: &Table) -> io::Result<()> {
    if let Some(title) = &t.title {
        writeln!(w, "{title}")?;
    }
    let n = t.headers.len();
    let mut width: Vec<usize> = t.headers.iter().map(|h| h.chars().count()).collect();
    for r in &t.rows {
        for (j, c) in r.iter().enumerate().take(n) {
            width[j] = width[j].max(c.chars().count());
        }
    }
    let numeric: Vec<bool> = (0..n)
        .map(|j| {
            t.rows
                .iter()
                .filter(|r| r[j] != "-" && !r[j].is_empty())
                .all(|r| looks_numeric(&r[j]))
        })
        .collect();
    let line = |cells: &[String]| -> String {
        let mut s = String::new();
        for (j, c) in cells.iter().enumerate().take(n) {
            if j > 0 {
                s.push_str("  ");
            }
            let pad = width[j] - c.chars().count();
            if numeric[j] {
                s.push_str(&" ".repeat(pad));
                s.push_str(c);
            } else {
                s.push_str(c);
                if j + 1 < n {
                    s.push_str(&" ".repeat(pad));
                }
            }
        }
        s.trim_end().to_string()
    };
    writeln!(w, "{}", line(&t.headers))?;
    for r in &t.rows {
        writeln!(w, "{}", line(r))?;
    }
    for note in &t.notes {
        writeln!(w, "{note}")?;
    }
    Ok(())
}

/// Writes a CSV table with a header row (RFC 4180 quoting).
pub fn write_csv(w: &mut dyn Write, t: &Table) -> io::Result<()> {
    let mut wr = csv::Writer::from_writer(w);
    wr.write_record(&t.headers).map_err(io::Error::other)?;
    for r in &t.rows {
        wr.write_record(r).map_err(io::Error::other)?;
    }
    wr.flush()
}

/// `x` with `decimals` digits after the point; `-0.000` printed as `0.000`.
pub fn fixed(x: f64, decimals: usize) -> String {
    let s = format!("{x:.decimals$}");
    if s.starts_with('-') && s[1..].chars().all(|c| c == '0' || c == '.') {
        s[1..].to_string()
    } else {
        s
    }
}

/// Like [`fixed`], or `missing` when the value does not exist.
pub fn fixed_or(x: Option<f64>, decimals: usize, missing: &str) -> String {
    x.map_or_else(|| missing.to_string(), |v| fixed(v, decimals))
}

/// A number for CSV: shortest round-trip representation (exponent form
/// below 1e-4 in magnitude, so tiny errors stay short), empty when missing.
pub fn csv_num(x: Option<f64>) -> String {
    match x {
        None => String::new(),
        Some(v) if v != 0.0 && v.abs() < 1e-4 => format!("{v:e}"),
        Some(v) => format!("{v}"),
    }
}

/// A fraction as a percentage for display, rounded to 1e-9 percent so a
/// bound read as 7 and stored as 0.07 prints as 7 again.
pub fn pct(x: f64) -> f64 {
    (x * 100.0 * 1e9).round() / 1e9
}

/// A number in scientific notation with `digits` significant digits after the point.
pub fn sci(x: f64, digits: usize) -> String {
    format!("{x:.digits$e}")
}

/// Wraps `text` at `width` columns, continuation lines indented by `indent`.
pub fn wrap(text: &str, width: usize, indent: usize) -> Vec<String> {
    let mut lines = Vec::new();
    let mut cur = String::new();
    for word in text.split_whitespace() {
        if !cur.is_empty() && cur.chars().count() + 1 + word.chars().count() > width {
            lines.push(std::mem::take(&mut cur));
            cur = " ".repeat(indent);
        } else if !cur.is_empty() && !cur.ends_with(' ') {
            cur.push(' ');
        }
        cur.push_str(word);
    }
    if !cur.trim().is_empty() {
        lines.push(cur);
    }
    lines
}
