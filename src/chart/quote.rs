//! Each tranche's model quote against one flat correlation, with its market
//! quote as a horizontal line and its compound roots marked: the picture
//! that shows why a mezzanine tranche can have no compound correlation (the
//! curve never reaches the line) or two (it crosses the line twice).
//!
//! # Formula
//! With the tranche's legs at one flat correlation rho on both bases
//! ([`TrancheValuer::legs_flat`]), the model quote in the quote's file unit
//! ([`TrancheValuer::model_quote`]): the par spread in bp for a spread
//! quote, the upfront in percent at the quote's coupon for an upfront quote,
//! at rho = 1e-4 + (0.9999 - 1e-4) j / (n - 1), j = 0 .. n - 1 (n =
//! [`QUOTE_POINTS`]), with the roots themselves added.

use super::frame::{padded_range, plain_y, render, tick, Frame, Item, LegendEntry, Sample};
use super::style::{series_style, Dash, Marker, SeriesStyle};
use crate::error::Result;
use crate::flags::Flag;
use crate::loss::PoolModel;
use crate::solve::chain::DateImplied;
use crate::solve::compound::{RHO_MAX, RHO_MIN};
use crate::tranche::{Tranche, TrancheSchedule, TrancheValuer};
use chrono::NaiveDate;

/// Correlations drawn per tranche (the roots are added to them).
pub const QUOTE_POINTS: usize = 241;

/// One tranche's model quote against flat correlation.
#[derive(Debug, Clone, PartialEq)]
pub struct QuoteCurve {
    /// Trade date.
    pub date: NaiveDate,
    /// Tranche maturity.
    pub maturity: NaiveDate,
    /// Attachment, fraction.
    pub attach: f64,
    /// Detachment, fraction.
    pub detach: f64,
    /// `spread_bp` or `upfront_pct`.
    pub quote_kind: &'static str,
    /// The market quote, file unit.
    pub quote: f64,
    /// Coupon of an upfront quote, bp.
    pub coupon_bp: Option<f64>,
    /// (flat correlation, model quote in the file unit); `None` where the
    /// model has no quote (a spread quote with no annuity left).
    pub points: Vec<(f64, Option<f64>)>,
    /// The compound roots, ascending, as `implied` found them.
    pub roots: Vec<f64>,
    /// Lowest and highest model quote over the search range, as `implied`
    /// found them (file unit).
    pub range: Option<(f64, f64)>,
    /// The tranche's flags.
    pub flags: Vec<Flag>,
    /// The pool the tranche is priced in.
    pub model: PoolModel,
}

/// The flat correlations drawn, with `roots` merged in.
fn correlations(roots: &[f64]) -> Vec<f64> {
    let n = QUOTE_POINTS;
    let mut r: Vec<f64> = (0..n)
        .map(|j| RHO_MIN + (RHO_MAX - RHO_MIN) * j as f64 / (n - 1) as f64)
        .chain(roots.iter().copied())
        .collect();
    r.sort_by(f64::total_cmp);
    r.dedup_by(|a, b| (*a - *b).abs() < 1e-12);
    r
}

/// The curve of every tranche of `d` that depends on correlation (all but
/// the whole pool, [0, 100%]), by maturity then attachment, priced in
/// `model` (the pool `d` was solved in).
///
/// # Errors
/// As [`TrancheSchedule::for_pool_with`] and [`Tranche::new`]; not
/// expected for tranches `implied` has solved.
pub fn quote_curves(d: &DateImplied, model: PoolModel) -> Result<Vec<QuoteCurve>> {
    let mut out = Vec::new();
    for m in &d.maturities {
        let Some(first) = m.tranches.first() else {
            continue;
        };
        let schedule = TrancheSchedule::for_pool_with(&d.pool, first.quote.maturity, model)?;
        for t in &m.tranches {
            let Some(compound) = &t.compound else {
                continue;
            };
            let tranche = Tranche::new(t.quote.attach, t.quote.detach)?;
            let v = TrancheValuer::new(&schedule, tranche, t.quote.quote)?;
            let roots: Vec<f64> = compound.roots.iter().map(|r| r.value).collect();
            let points = correlations(&roots)
                .into_iter()
                .map(|rho| (rho, v.model_quote(&v.legs_flat(rho))))
                .collect();
            out.push(QuoteCurve {
                date: d.pool.date,
                maturity: t.quote.maturity,
                attach: t.quote.attach,
                detach: t.quote.detach,
                quote_kind: t.quote.quote.kind_name(),
                quote: t.quote.quote.in_file_unit(),
                coupon_bp: t.quote.quote.coupon_bp(),
                points,
                roots,
                range: compound.attainable,
                flags: t.flags.clone(),
                model,
            });
        }
    }
    Ok(out)
}

/// A quote with its unit, as the charts write it.
fn quote_text(kind: &str, q: f64, coupon_bp: Option<f64>) -> String {
    match (kind, coupon_bp) {
        ("upfront_pct", Some(c)) => format!("{}% upfront + {} bp", tick(q, 4), tick(c, 2)),
        ("upfront_pct", None) => format!("{}% upfront", tick(q, 4)),
        _ => format!("{} bp", tick(q, 4)),
    }
}

impl QuoteCurve {
    /// The chart's file name.
    pub fn file_name(&self) -> String {
        format!(
            "quote-{}-{}-{}.svg",
            self.maturity,
            tick(self.attach * 100.0, 4),
            tick(self.detach * 100.0, 4)
        )
    }

    /// The tranche as `3-7%`.
    pub fn label(&self) -> String {
        format!(
            "{}-{}%",
            tick(self.attach * 100.0, 4),
            tick(self.detach * 100.0, 4)
        )
    }

    /// The chart's title.
    pub fn title(&self) -> String {
        format!(
            "Tranche {} maturing {}: model quote against flat correlation{}",
            self.label(),
            self.maturity,
            super::model_suffix(self.model)
        )
    }

    /// One line on what the picture shows: no root, one or two.
    pub fn reading(&self) -> String {
        let roots: Vec<String> = self
            .roots
            .iter()
            .map(|r| format!("{}%", tick(r * 100.0, 2)))
            .collect();
        if self.flags.contains(&Flag::FlatInCorrelation) {
            return "the value at the quote is zero at every correlation: no correlation is implied"
                .to_string();
        }
        match roots.len() {
            0 => match self.range {
                Some((lo, hi)) => format!(
                    "no root: the curve runs from {} to {} and never meets the quote",
                    tick(lo, 4),
                    tick(hi, 4)
                ),
                None => "no root: the model has no quote in the range".to_string(),
            },
            1 => format!("one root, at {}", roots[0]),
            _ => format!(
                "{} roots: the curve meets the quote at {}",
                roots.len(),
                roots.join(" and ")
            ),
        }
    }

    /// The chart as an SVG document.
    ///
    /// # Errors
    /// A value that is not finite (not expected).
    pub fn svg(&self) -> Result<String> {
        let model = series_style(0);
        let quote = series_style(1);
        let drop = SeriesStyle {
            dash: Dash::Dashed { on: 2, off: 4 },
            width: 1,
            marker: Marker::Circle,
        };
        let mut items: Vec<Item> = self
            .roots
            .iter()
            .map(|&r| Item::VLine {
                x: r * 100.0,
                style: drop,
            })
            .collect();
        items.push(Item::HLine {
            y: self.quote,
            style: quote,
        });
        items.push(Item::Line {
            points: self
                .points
                .iter()
                .map(|&(r, q)| q.map(|q| (r * 100.0, q)))
                .collect(),
            style: model,
            marker_every: 0,
        });
        items.push(Item::Markers {
            points: self
                .roots
                .iter()
                .map(|&r| (r * 100.0, self.quote))
                .collect(),
            marker: Marker::Circle,
            size: 6,
        });
        let mut legend = vec![
            LegendEntry {
                label: "model quote at one flat correlation".to_string(),
                sample: Sample::Line(model, false),
            },
            LegendEntry {
                label: format!(
                    "market quote {}",
                    quote_text(self.quote_kind, self.quote, self.coupon_bp)
                ),
                sample: Sample::Line(quote, false),
            },
        ];
        if !self.roots.is_empty() {
            legend.push(LegendEntry {
                label: "compound root".to_string(),
                sample: Sample::Marker(Marker::Circle),
            });
        }
        let values = self
            .points
            .iter()
            .filter_map(|p| p.1)
            .chain(std::iter::once(self.quote));
        let y = padded_range(
            values,
            if self.quote_kind == "spread_bp" {
                10.0
            } else {
                1.0
            },
        );
        let y_desc = match (self.quote_kind, self.coupon_bp) {
            ("upfront_pct", Some(c)) => {
                format!("upfront, {} bp running (%)", tick(c, 2))
            }
            ("upfront_pct", None) => "upfront (%)".to_string(),
            _ => "par spread (bp a year)".to_string(),
        };
        let frame = Frame {
            title: self.title(),
            subtitle: vec![format!("trade date {}", self.date), self.reading()],
            x_desc: "flat (compound) correlation (%)".to_string(),
            y_desc,
            x: (0.0, 100.0),
            y,
            x_label: Box::new(|v| tick(v, 2)),
            x_ticks: 10,
            y_label: plain_y(),
            y_ticks: 8,
        };
        render(&frame, &items, &legend)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn correlations_span_the_search_range_with_the_roots() {
        let r = correlations(&[0.123456]);
        assert_eq!(r.first().copied(), Some(RHO_MIN));
        assert_eq!(r.last().copied(), Some(RHO_MAX));
        assert!(r.contains(&0.123456));
        assert_eq!(r.len(), QUOTE_POINTS + 1);
    }
}
