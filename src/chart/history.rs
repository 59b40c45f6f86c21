//! The skew through time: per tranche maturity, the base correlation at
//! each quoted detachment, and at chosen detachments off the surface, on
//! every trade date of a history.
//!
//! A quoted detachment's value on a date is the base correlation `implied`
//! solves there (none where the tranche is not quoted that day or its chain
//! broke). A chosen detachment's value is [`Surface::rho`] at the maturity,
//! read off that date's skew with the chosen interpolation (none when the
//! maturity has no knot that day); outside the knots it is held flat, and
//! the point says so. Dates come in one at a time ([`HistoryCollector`]),
//! so a long history need not be held in memory as implied data.

use super::frame::{padded_range, plain_y, render, tick, Frame, Item, LegendEntry, Sample};
use super::style::series_style;
use crate::error::Result;
use crate::loss::PoolModel;
use crate::math::interp::Interp;
use crate::solve::chain::DateImplied;
use crate::surface::Surface;
use chrono::NaiveDate;
use std::collections::BTreeMap;

/// A base correlation on one date.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct HistoryPoint {
    /// Trade date.
    pub date: NaiveDate,
    /// Base correlation (fraction); `None` when there is none that day.
    pub rho: Option<f64>,
    /// Whether the detachment lay outside that day's knots (held flat).
    pub extrapolated: bool,
}

/// One detachment's base correlation over the dates.
#[derive(Debug, Clone, PartialEq)]
pub struct HistorySeries {
    /// The detachment, fraction.
    pub detach: f64,
    /// Whether it is a quoted detachment (else read off the surface).
    pub quoted: bool,
    /// One point per date of the history, in date order.
    pub points: Vec<HistoryPoint>,
}

impl HistorySeries {
    /// The series' name: `7% quoted` or `10% off the surface`.
    pub fn label(&self, interp: Interp) -> String {
        if self.quoted {
            format!("{}% quoted", tick(self.detach * 100.0, 4))
        } else {
            format!(
                "{}% off the skew ({})",
                tick(self.detach * 100.0, 4),
                interp.name()
            )
        }
    }
}

/// The skew history of one tranche maturity.
#[derive(Debug, Clone, PartialEq)]
pub struct HistoryChart {
    /// Tranche maturity.
    pub maturity: NaiveDate,
    /// Interpolation used off the knots.
    pub interp: Interp,
    /// Quoted detachments first, then the chosen ones, each increasing.
    pub series: Vec<HistorySeries>,
    /// The pool every date was solved in.
    pub model: PoolModel,
}

/// Detachment as a map key: 1e-9 of the pool (so 0.07 read as 7% is one key).
fn key(k: f64) -> i64 {
    (k * 1e9).round() as i64
}

type Values = BTreeMap<NaiveDate, (Option<f64>, bool)>;

/// Collects a history date by date into [`HistoryChart`]s.
#[derive(Debug, Clone)]
pub struct HistoryCollector {
    at: Vec<f64>,
    interp: Interp,
    model: PoolModel,
    dates: Vec<NaiveDate>,
    quoted: BTreeMap<NaiveDate, BTreeMap<i64, Values>>,
    chosen: BTreeMap<NaiveDate, BTreeMap<i64, Values>>,
}

impl HistoryCollector {
    /// A collector reading the skew at the detachments `at` (fractions in
    /// (0, 1)) with the interpolation `interp`, besides every quoted one,
    /// of dates solved in `model`.
    pub fn new(at: &[f64], interp: Interp, model: PoolModel) -> Self {
        HistoryCollector {
            at: at.to_vec(),
            interp,
            model,
            dates: Vec::new(),
            quoted: BTreeMap::new(),
            chosen: BTreeMap::new(),
        }
    }

    /// Adds one date (dates in increasing order).
    ///
    /// # Errors
    /// As [`Surface::from_implied`] (not expected from solved knots).
    pub fn add(&mut self, d: &DateImplied) -> Result<()> {
        let date = d.pool.date;
        self.dates.push(date);
        let surface = Surface::from_implied(d, self.interp)?;
        for m in &d.maturities {
            let Some(first) = m.tranches.first() else {
                continue;
            };
            let maturity = first.quote.maturity;
            let quoted = self.quoted.entry(maturity).or_default();
            for t in m.tranches.iter().filter(|t| t.quote.detach < 1.0) {
                quoted
                    .entry(key(t.quote.detach))
                    .or_default()
                    .insert(date, (t.base_correlation(), false));
            }
            let has_knots = !m.base_curve.knots.is_empty();
            let chosen = self.chosen.entry(maturity).or_default();
            for &k in &self.at {
                let value = if has_knots {
                    surface
                        .rho(k, maturity)
                        .map_or((None, false), |l| (Some(l.rho), l.extrapolated_detachment))
                } else {
                    (None, false)
                };
                chosen.entry(key(k)).or_default().insert(date, value);
            }
        }
        Ok(())
    }

    /// One chart per maturity seen, increasing maturity. A chosen
    /// detachment that is also quoted at that maturity is left out (the
    /// skew passes through its knots).
    pub fn finish(self) -> Vec<HistoryChart> {
        let dates = self.dates;
        let series_of = |k: i64, quoted: bool, values: &Values| HistorySeries {
            detach: k as f64 / 1e9,
            quoted,
            points: dates
                .iter()
                .map(|&date| {
                    let (rho, extrapolated) = values.get(&date).copied().unwrap_or((None, false));
                    HistoryPoint {
                        date,
                        rho,
                        extrapolated,
                    }
                })
                .collect(),
        };
        let mut out = Vec::new();
        for (maturity, quoted) in &self.quoted {
            let mut series: Vec<HistorySeries> =
                quoted.iter().map(|(&k, v)| series_of(k, true, v)).collect();
            if let Some(chosen) = self.chosen.get(maturity) {
                series.extend(
                    chosen
                        .iter()
                        .filter(|(k, _)| !quoted.contains_key(k))
                        .map(|(&k, v)| series_of(k, false, v)),
                );
            }
            out.push(HistoryChart {
                maturity: *maturity,
                interp: self.interp,
                series,
                model: self.model,
            });
        }
        out
    }
}

impl HistoryChart {
    /// The chart's file name.
    pub fn file_name(&self) -> String {
        format!("history-{}.svg", self.maturity)
    }

    /// The chart's title.
    pub fn title(&self) -> String {
        format!(
            "Base correlation through time, maturity {}{}",
            self.maturity,
            super::model_suffix(self.model)
        )
    }

    /// The dates of the history.
    pub fn dates(&self) -> Vec<NaiveDate> {
        self.series
            .first()
            .map_or(Vec::new(), |s| s.points.iter().map(|p| p.date).collect())
    }

    /// The chart as an SVG document.
    ///
    /// # Errors
    /// A value that is not finite (not expected).
    pub fn svg(&self) -> Result<String> {
        let dates = self.dates();
        let first = dates.first().copied().unwrap_or_default();
        let last = dates.last().copied().unwrap_or(first);
        let day = |d: NaiveDate| (d - first).num_days() as f64;
        let span = day(last);
        let every = (dates.len() / 25).max(1);
        let mut items = Vec::new();
        let mut legend = Vec::new();
        for (i, s) in self.series.iter().enumerate() {
            let style = series_style(i);
            items.push(Item::Line {
                points: s
                    .points
                    .iter()
                    .map(|p| p.rho.map(|r| (day(p.date), r * 100.0)))
                    .collect(),
                style,
                marker_every: every,
            });
            legend.push(LegendEntry {
                label: s.label(self.interp),
                sample: Sample::Line(style, true),
            });
        }
        let values = self
            .series
            .iter()
            .flat_map(|s| s.points.iter().filter_map(|p| p.rho.map(|r| r * 100.0)));
        let (lo, hi) = padded_range(values, 10.0);
        let (x0, x1) = if span > 0.0 {
            (-span * 0.02, span * 1.02)
        } else {
            (-1.0, 1.0)
        };
        let frame = Frame {
            title: self.title(),
            subtitle: vec![format!(
                "{} trade dates, {} to {}; a gap: no base correlation that day",
                dates.len(),
                first,
                last
            )],
            x_desc: "trade date".to_string(),
            y_desc: "base correlation (%)".to_string(),
            x: (x0, x1),
            y: (lo.max(0.0), hi.min(100.0)),
            x_label: Box::new(move |v| {
                (first + chrono::Days::new(v.round().max(0.0) as u64)).to_string()
            }),
            x_ticks: 5,
            y_label: plain_y(),
            y_ticks: 8,
        };
        render(&frame, &items, &legend)
    }
}
