//! How series are told apart on paper: by dash pattern and marker shape,
//! never by colour alone.
//!
//! Every series is drawn in black; a band is light grey. A chart gives its
//! series the styles [`series_style`]`(0)`, `(1)`, ... in order, so adding
//! a series (a third interpolation, another detachment) needs no new style.

/// The pattern of a line.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Dash {
    /// A continuous line.
    Solid,
    /// Dashes of `on` pixels separated by `off` pixels.
    Dashed {
        /// Dash length, pixels.
        on: u32,
        /// Gap length, pixels.
        off: u32,
    },
}

/// The shape drawn at a data point.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Marker {
    /// A filled disc.
    Disc,
    /// An open square.
    Square,
    /// An open triangle, point up.
    Triangle,
    /// A diagonal cross.
    Cross,
    /// An open circle.
    Circle,
    /// A filled square.
    Block,
    /// An open diamond.
    Diamond,
    /// An upright plus sign.
    Plus,
}

/// A series' look: line pattern, line width and marker.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct SeriesStyle {
    /// Line pattern.
    pub dash: Dash,
    /// Line width, pixels.
    pub width: u32,
    /// Marker at data points, where the chart draws markers.
    pub marker: Marker,
}

/// The styles in the order series receive them; the list repeats past its
/// end with the line width reduced, so series stay distinct up to 16.
const STYLES: [SeriesStyle; 8] = [
    SeriesStyle {
        dash: Dash::Solid,
        width: 2,
        marker: Marker::Disc,
    },
    SeriesStyle {
        dash: Dash::Dashed { on: 9, off: 5 },
        width: 2,
        marker: Marker::Square,
    },
    SeriesStyle {
        dash: Dash::Dashed { on: 2, off: 4 },
        width: 2,
        marker: Marker::Triangle,
    },
    SeriesStyle {
        dash: Dash::Dashed { on: 16, off: 5 },
        width: 1,
        marker: Marker::Cross,
    },
    SeriesStyle {
        dash: Dash::Solid,
        width: 1,
        marker: Marker::Circle,
    },
    SeriesStyle {
        dash: Dash::Dashed { on: 5, off: 3 },
        width: 1,
        marker: Marker::Block,
    },
    SeriesStyle {
        dash: Dash::Dashed { on: 1, off: 3 },
        width: 1,
        marker: Marker::Diamond,
    },
    SeriesStyle {
        dash: Dash::Dashed { on: 12, off: 3 },
        width: 2,
        marker: Marker::Plus,
    },
];

/// The style of the `i`-th series of a chart (0-based).
///
/// ```
/// use skewbook::chart::style::{series_style, Dash};
/// assert_eq!(series_style(0).dash, Dash::Solid);
/// assert_ne!(series_style(0), series_style(1));
/// ```
pub fn series_style(i: usize) -> SeriesStyle {
    let mut s = STYLES[i % STYLES.len()];
    if i >= STYLES.len() {
        s.width = 1;
        s.marker = STYLES[(i + 3) % STYLES.len()].marker;
    }
    s
}

/// Grey of a confidence band's fill (0 black, 255 white).
pub const BAND_GREY: u8 = 215;

/// Grey of the plot's grid lines.
pub const GRID_GREY: u8 = 225;
