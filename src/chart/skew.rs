//! The skew of one trade date: base correlation against detachment per
//! maturity, the solved knots marked, and the curve of each interpolation
//! drawn through them.
//!
//! The curves are read off [`Surface::rho`] at the maturity itself, on the
//! grid K = h, 2h, ... up to [`SkewChart::k_max`] (h = [`SKEW_STEP`]) with
//! every knot added, so a linear curve bends exactly at its knots. Outside
//! the knots the surface is flat, and so are the curves.

use super::frame::{padded_range, plain_y, render, tick, Frame, Item, LegendEntry, Sample};
use super::style::{series_style, Marker};
use crate::error::Result;
use crate::loss::PoolModel;
use crate::math::interp::Interp;
use crate::solve::chain::{DateImplied, Knot};
use crate::surface::Surface;
use crate::tranche::Tranche;
use chrono::NaiveDate;

/// Detachment step of the drawn curves (fraction): 0.1%.
pub const SKEW_STEP: f64 = 0.001;

/// One interpolation's curve through a maturity's knots.
#[derive(Debug, Clone, PartialEq)]
pub struct SkewCurve {
    /// The interpolation.
    pub interp: Interp,
    /// (detachment, base correlation), fractions, increasing detachment.
    pub points: Vec<(f64, f64)>,
}

/// The skew of one maturity of one date.
#[derive(Debug, Clone, PartialEq)]
pub struct SkewChart {
    /// Trade date.
    pub date: NaiveDate,
    /// Tranche maturity.
    pub maturity: NaiveDate,
    /// The solved knots (detachment, base correlation).
    pub knots: Vec<Knot>,
    /// One curve per interpolation, in the order asked for.
    pub curves: Vec<SkewCurve>,
    /// The tranche where the maturity's chain broke, if it did.
    pub broken_at: Option<Tranche>,
    /// Right end of the detachment axis (fraction): a quarter beyond the
    /// last knot, rounded up to 5%, at most 100%.
    pub k_max: f64,
    /// The pool the knots were solved in.
    pub model: PoolModel,
}

/// Right end of the detachment axis for knots ending at `last`.
fn axis_end(last: f64) -> f64 {
    ((last * 1.25 / 0.05).ceil() * 0.05).clamp(0.05, 1.0)
}

/// The grid h, 2h, ... below `k_max` (and `k_max` itself when below 100%),
/// with the knots' detachments merged in.
fn grid(k_max: f64, knots: &[Knot]) -> Vec<f64> {
    let n = (k_max / SKEW_STEP).round() as usize;
    let mut ks: Vec<f64> = (1..=n)
        .map(|j| j as f64 * SKEW_STEP)
        .filter(|&k| k < 1.0)
        .chain(knots.iter().map(|k| k.detach))
        .collect();
    ks.sort_by(f64::total_cmp);
    ks.dedup_by(|a, b| (*a - *b).abs() < 1e-12);
    ks
}

/// The skew chart of every maturity of `d` (solved in `model`) with at
/// least one knot, with a curve for each of `interps`.
///
/// # Errors
/// As [`Surface::from_implied`] (not expected from solved knots).
pub fn skew_charts(
    d: &DateImplied,
    interps: &[Interp],
    model: PoolModel,
) -> Result<Vec<SkewChart>> {
    let surfaces = interps
        .iter()
        .map(|&i| Surface::from_implied(d, i))
        .collect::<Result<Vec<_>>>()?;
    let mut out = Vec::new();
    for m in &d.maturities {
        let c = &m.base_curve;
        let Some(last) = c.knots.last() else {
            continue;
        };
        let k_max = axis_end(last.detach);
        let ks = grid(k_max, &c.knots);
        let curves = surfaces
            .iter()
            .map(|s| SkewCurve {
                interp: s.interp,
                points: ks
                    .iter()
                    .filter_map(|&k| s.rho(k, c.maturity).map(|l| (k, l.rho)))
                    .collect(),
            })
            .collect();
        out.push(SkewChart {
            date: d.pool.date,
            maturity: c.maturity,
            knots: c.knots.clone(),
            curves,
            broken_at: c.broken.as_ref().map(|b| b.at),
            k_max,
            model,
        });
    }
    Ok(out)
}

impl SkewChart {
    /// The chart's file name.
    pub fn file_name(&self) -> String {
        format!("skew-{}.svg", self.maturity)
    }

    /// The chart's title.
    pub fn title(&self) -> String {
        format!(
            "Base correlation skew, maturity {}{}",
            self.maturity,
            super::model_suffix(self.model)
        )
    }

    /// The chart as an SVG document.
    ///
    /// # Errors
    /// A value that is not finite (not expected).
    pub fn svg(&self) -> Result<String> {
        let mut items = Vec::new();
        let mut legend = Vec::new();
        for (i, c) in self.curves.iter().enumerate() {
            let style = series_style(i);
            items.push(Item::Line {
                points: c
                    .points
                    .iter()
                    .map(|&(k, r)| Some((k * 100.0, r * 100.0)))
                    .collect(),
                style,
                marker_every: 0,
            });
            legend.push(LegendEntry {
                label: format!("{} interpolation", c.interp.name()),
                sample: Sample::Line(style, false),
            });
        }
        items.push(Item::Markers {
            points: self
                .knots
                .iter()
                .map(|k| (k.detach * 100.0, k.rho * 100.0))
                .collect(),
            marker: Marker::Disc,
            size: 5,
        });
        legend.push(LegendEntry {
            label: "knot: solved base correlation".to_string(),
            sample: Sample::Marker(Marker::Disc),
        });
        let values = self
            .curves
            .iter()
            .flat_map(|c| c.points.iter().map(|p| p.1 * 100.0))
            .chain(self.knots.iter().map(|k| k.rho * 100.0));
        let (lo, hi) = padded_range(values, 10.0);
        let mut subtitle = format!(
            "trade date {}; linear and pchip flat outside the knots ({}% to {}%)",
            self.date,
            tick(self.knots.first().map_or(0.0, |k| k.detach) * 100.0, 4),
            tick(self.knots.last().map_or(0.0, |k| k.detach) * 100.0, 4)
        );
        if let Some(t) = self.broken_at {
            subtitle.push_str(&format!(
                "; chain broken at {}-{}%",
                tick(t.attach() * 100.0, 4),
                tick(t.detach() * 100.0, 4)
            ));
        }
        let frame = Frame {
            title: self.title(),
            subtitle: vec![subtitle],
            x_desc: "detachment (% of pool notional)".to_string(),
            y_desc: "base correlation (%)".to_string(),
            x: (0.0, self.k_max * 100.0),
            y: (lo.max(0.0), hi.min(100.0)),
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
    fn axis_ends_a_quarter_past_the_last_knot() {
        assert!((axis_end(0.15) - 0.2).abs() < 1e-12);
        assert!((axis_end(0.30) - 0.4).abs() < 1e-12);
        assert!((axis_end(0.9) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn grid_holds_every_knot_once() {
        let knots = [
            Knot {
                detach: 0.03,
                rho: 0.2,
            },
            Knot {
                detach: 0.0725,
                rho: 0.3,
            },
        ];
        let g = grid(0.1, &knots);
        assert_eq!(g.iter().filter(|&&k| (k - 0.03).abs() < 1e-12).count(), 1);
        assert!(g.contains(&0.0725));
        assert!(g.windows(2).all(|w| w[0] < w[1]));
        assert_eq!(g.len(), 101);
    }
}
