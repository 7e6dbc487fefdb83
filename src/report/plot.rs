//! SVG figures (plotters, SVG backend, rendered to a `String`).
//!
//! One generic [`Figure`] covers what the reports need: scatter and line [`Series`] with
//! optional vertical error bars and a legend, linear or logarithmic axes ([`Axis`]),
//! labelled horizontal reference lines ([`RefLine`], e.g. ⟨r̃⟩ of Poisson/GOE/GUE), and
//! histograms ([`Bin`]s drawn as bars, e.g. a spacing distribution) with overlaid curves
//! (e.g. the Wigner surmises, [`sample_curve`]).
//!
//! On a logarithmic axis, points with a non-positive coordinate cannot be placed and are
//! left out; the lower end of an error bar below the axis minimum is clipped to it.
//! Automatic ranges enclose every point, error bar, bar and reference line, padded by 5 %
//! of the span (of `log₁₀` on log axes).
//!
//! The legend goes in the first corner of the plot area whose box covers no marker, curve,
//! error bar or bar (the chosen [`Legend`] corner first, then upper right, upper left,
//! lower right, lower left); when every corner covers data it goes below the plot, on a
//! canvas made taller for it (`plot/layout.rs`).
//!
//! Text needs no system font: the SVG backend writes `<text>` elements with a generic
//! `sans-serif` family, and plotters (built without its `ttf` feature) only estimates text
//! extents for layout. Sizes are chosen for a paper column: 480×360 px by default, tick
//! labels 14.5 px and axis labels 16 px in the SVG (plotters writes `font-size` as the
//! requested size / 1.24).

use crate::error::{Error, Result};
use layout::{free_corner, text_width, Corner, Obstacles, Rect, INSET};
use plotters::coord::ranged1d::{AsRangedCoord, ValueFormatter};
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use serde::Serialize;

mod layout;

/// Default figure width in pixels.
pub const WIDTH: u32 = 480;
/// Default figure height in pixels.
pub const HEIGHT: u32 = 360;

/// Requested size of tick labels and legend text (SVG `font-size` = 18 / 1.24 ≈ 14.5 px).
const TICK_FONT: f64 = 18.0;
/// Requested size of axis labels and the title (SVG `font-size` = 20 / 1.24 ≈ 16.1 px).
const LABEL_FONT: f64 = 20.0;

/// Colour-blind-safe palette (Okabe & Ito, "Color Universal Design", 2008).
const PALETTE: [(u8, u8, u8); 8] = [
    (0, 114, 178),
    (213, 94, 0),
    (0, 158, 115),
    (204, 121, 167),
    (230, 159, 0),
    (86, 180, 233),
    (0, 0, 0),
    (240, 228, 66),
];

fn palette(i: usize) -> RGBColor {
    let (r, g, b) = PALETTE[i % PALETTE.len()];
    RGBColor(r, g, b)
}

/// Axis scale.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Axis {
    /// Linear.
    Linear,
    /// Logarithmic (base 10 ticks).
    Log,
}

/// How a series is drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Style {
    /// Markers only.
    Points,
    /// A solid line only.
    Line,
    /// A dashed line only.
    Dashed,
    /// Markers joined by a solid line.
    LinePoints,
}

/// One data series.
#[derive(Debug, Clone, Serialize)]
pub struct Series {
    /// Legend text (empty: not in the legend).
    pub label: String,
    /// `(x, y)` points, drawn in order.
    pub points: Vec<(f64, f64)>,
    /// Optional symmetric vertical error bars, one per point.
    pub y_errors: Option<Vec<f64>>,
    /// How the series is drawn.
    pub style: Style,
    /// Palette index (default: the series' position in the figure).
    pub color: Option<usize>,
}

impl Series {
    /// Markers only.
    pub fn points(label: impl Into<String>, points: Vec<(f64, f64)>) -> Self {
        Self {
            label: label.into(),
            points,
            y_errors: None,
            style: Style::Points,
            color: None,
        }
    }

    /// A solid line.
    pub fn line(label: impl Into<String>, points: Vec<(f64, f64)>) -> Self {
        Self {
            style: Style::Line,
            ..Self::points(label, points)
        }
    }

    /// Changes the drawing style.
    pub fn style(mut self, style: Style) -> Self {
        self.style = style;
        self
    }

    /// Adds symmetric vertical error bars.
    pub fn with_errors(mut self, errors: Vec<f64>) -> Self {
        self.y_errors = Some(errors);
        self
    }

    /// Chooses the palette colour.
    pub fn color(mut self, index: usize) -> Self {
        self.color = Some(index);
        self
    }
}

/// A labelled horizontal reference line at `y`, drawn dashed in grey with its label in the
/// margin right of the plot area, joined to the line's end by a leader line; labels of close
/// lines are stacked apart so that they do not overlap, in the order of the lines
/// ([`spread_labels`]). The canvas is widened by the longest label.
#[derive(Debug, Clone, Serialize)]
pub struct RefLine {
    /// Height.
    pub y: f64,
    /// Label, e.g. `GOE 0.5307`.
    pub label: String,
}

/// A labelled vertical reference line at `x` (e.g. a frequency scale), drawn dotted in grey
/// over the plot with its label above the plot area; labels that would overlap are spread
/// apart sideways, keeping their order.
#[derive(Debug, Clone, Serialize)]
pub struct VLine {
    /// Position on the x axis.
    pub x: f64,
    /// Label, e.g. `Δ̄`.
    pub label: String,
}

/// A light vertical band over `[lo, hi]` of the x axis (e.g. the energies of an analysis
/// window), drawn under everything else; with a label it has a legend entry.
#[derive(Debug, Clone, Serialize)]
pub struct Band {
    /// Lower edge.
    pub lo: f64,
    /// Upper edge.
    pub hi: f64,
    /// Legend text (empty: not in the legend).
    pub label: String,
}

/// Fill of a [`Band`]: a light grey-blue.
const BAND_FILL: RGBColor = RGBColor(222, 232, 242);

/// One histogram bar `[lo, hi)` of height `value`.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Bin {
    /// Lower edge.
    pub lo: f64,
    /// Upper edge.
    pub hi: f64,
    /// Height (a density, a count, ...).
    pub value: f64,
}

/// A histogram: bars with a legend label.
#[derive(Debug, Clone, Serialize)]
pub struct Histogram {
    /// Legend text.
    pub label: String,
    /// The bars.
    pub bins: Vec<Bin>,
}

/// The corner tried first for the legend (the others follow when it covers data; module docs).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
#[serde(rename_all = "snake_case")]
pub enum Legend {
    /// Upper right corner.
    UpperRight,
    /// Upper left corner.
    UpperLeft,
    /// Lower right corner.
    LowerRight,
    /// Lower left corner.
    LowerLeft,
    /// No legend.
    Hidden,
}

/// A figure: axes, series, reference lines and an optional histogram.
#[derive(Debug, Clone, Serialize)]
pub struct Figure {
    /// Title above the plot (optional; captions usually go in the report instead).
    pub title: Option<String>,
    /// x-axis label with symbol and unit, e.g. `D (Hilbert-space dimension)`.
    pub x_label: String,
    /// y-axis label, e.g. `⟨A⟩`.
    pub y_label: String,
    /// x scale.
    pub x_axis: Axis,
    /// y scale.
    pub y_axis: Axis,
    /// Fixed x range (default: automatic).
    pub x_range: Option<(f64, f64)>,
    /// Fixed y range (default: automatic).
    pub y_range: Option<(f64, f64)>,
    /// Bars drawn first (under the series).
    pub histogram: Option<Histogram>,
    /// The series.
    pub series: Vec<Series>,
    /// Reference lines.
    pub ref_lines: Vec<RefLine>,
    /// Vertical bands, drawn first.
    pub bands: Vec<Band>,
    /// Vertical reference lines.
    pub v_lines: Vec<VLine>,
    /// Legend position.
    pub legend: Legend,
    /// Width in pixels.
    pub width: u32,
    /// Height in pixels.
    pub height: u32,
}

impl Figure {
    /// An empty linear-linear figure of the default size with these axis labels.
    pub fn new(x_label: impl Into<String>, y_label: impl Into<String>) -> Self {
        Self {
            title: None,
            x_label: x_label.into(),
            y_label: y_label.into(),
            x_axis: Axis::Linear,
            y_axis: Axis::Linear,
            x_range: None,
            y_range: None,
            histogram: None,
            series: Vec::new(),
            ref_lines: Vec::new(),
            bands: Vec::new(),
            v_lines: Vec::new(),
            legend: Legend::UpperRight,
            width: WIDTH,
            height: HEIGHT,
        }
    }

    /// Sets the title.
    pub fn title(mut self, title: impl Into<String>) -> Self {
        self.title = Some(title.into());
        self
    }

    /// Sets both axis scales (`(Log, Log)` for log-log, `(Linear, Log)` for lin-log).
    pub fn axes(mut self, x: Axis, y: Axis) -> Self {
        self.x_axis = x;
        self.y_axis = y;
        self
    }

    /// Fixes the x range.
    pub fn x_range(mut self, lo: f64, hi: f64) -> Self {
        self.x_range = Some((lo, hi));
        self
    }

    /// Fixes the y range.
    pub fn y_range(mut self, lo: f64, hi: f64) -> Self {
        self.y_range = Some((lo, hi));
        self
    }

    /// Adds a series.
    pub fn series(mut self, series: Series) -> Self {
        self.series.push(series);
        self
    }

    /// Adds a labelled horizontal reference line.
    pub fn reference(mut self, y: f64, label: impl Into<String>) -> Self {
        self.ref_lines.push(RefLine {
            y,
            label: label.into(),
        });
        self
    }

    /// Adds a labelled vertical reference line.
    pub fn vertical(mut self, x: f64, label: impl Into<String>) -> Self {
        self.v_lines.push(VLine {
            x,
            label: label.into(),
        });
        self
    }

    /// Adds a light vertical band over `[lo, hi]` of the x axis.
    pub fn band(mut self, lo: f64, hi: f64, label: impl Into<String>) -> Self {
        self.bands.push(Band {
            lo,
            hi,
            label: label.into(),
        });
        self
    }

    /// Sets the histogram.
    pub fn histogram(mut self, label: impl Into<String>, bins: Vec<Bin>) -> Self {
        self.histogram = Some(Histogram {
            label: label.into(),
            bins,
        });
        self
    }

    /// Sets the legend position.
    pub fn legend(mut self, legend: Legend) -> Self {
        self.legend = legend;
        self
    }

    /// Renders the figure as a standalone SVG document (`<svg ...>...</svg>`).
    ///
    /// Fails (with the axis labels in the message) when nothing can be placed, e.g. every
    /// point is non-positive on a log axis, or a fixed range is empty.
    pub fn to_svg(&self) -> Result<String> {
        let (xr, yr) = self.ranges()?;
        // a legend that fits in no corner of the plot area goes below it, on a taller
        // canvas; the plot area keeps its pixels, so the first pass's search holds
        let (svg, below) = self.render(xr, yr, 0)?;
        match below {
            Some(extra) => Ok(self.render(xr, yr, extra)?.0),
            None => Ok(svg),
        }
    }

    /// One rendering with `bottom` extra pixels below the plot for the legend (0: the
    /// legend goes in a free corner); returns the SVG and, when no corner is free, the
    /// extra height a legend below needs.
    fn render(&self, xr: (f64, f64), yr: (f64, f64), bottom: u32) -> Result<(String, Option<u32>)> {
        let mut buf = String::new();
        let below;
        {
            let size = (self.width + self.ref_margin(), self.height + bottom);
            let root = SVGBackend::with_string(&mut buf, size).into_drawing_area();
            let res = match (self.x_axis, self.y_axis) {
                (Axis::Linear, Axis::Linear) => {
                    self.draw(&root, xr.0..xr.1, yr.0..yr.1, (false, false), bottom)
                }
                (Axis::Linear, Axis::Log) => self.draw(
                    &root,
                    xr.0..xr.1,
                    (yr.0..yr.1)
                        .log_scale()
                        .with_key_points(log_ticks(yr.0, yr.1)),
                    (false, true),
                    bottom,
                ),
                (Axis::Log, Axis::Linear) => self.draw(
                    &root,
                    (xr.0..xr.1)
                        .log_scale()
                        .with_key_points(log_ticks(xr.0, xr.1)),
                    yr.0..yr.1,
                    (true, false),
                    bottom,
                ),
                (Axis::Log, Axis::Log) => self.draw(
                    &root,
                    (xr.0..xr.1)
                        .log_scale()
                        .with_key_points(log_ticks(xr.0, xr.1)),
                    (yr.0..yr.1)
                        .log_scale()
                        .with_key_points(log_ticks(yr.0, yr.1)),
                    (true, true),
                    bottom,
                ),
            };
            below = res.map_err(|e| self.error(&e))?;
            root.present().map_err(|e| self.error(&e.to_string()))?;
        }
        Ok((buf, below))
    }

    /// Extra width at the right of the plot area for the reference-line labels and their
    /// leader lines (0 without reference lines).
    fn ref_margin(&self) -> u32 {
        let widest = self
            .ref_lines
            .iter()
            .map(|r| text_width(&r.label, TICK_PX))
            .fold(0.0, f64::max);
        if self.ref_lines.is_empty() {
            0
        } else {
            (LEADER + 4.0 + widest).ceil() as u32
        }
    }

    fn error(&self, problem: &str) -> Error {
        Error::other(format!(
            "figure '{}' against '{}': {problem}",
            self.y_label, self.x_label
        ))
    }

    /// Automatic or fixed ranges, valid for the axis scales.
    fn ranges(&self) -> Result<((f64, f64), (f64, f64))> {
        let xlog = self.x_axis == Axis::Log;
        let ylog = self.y_axis == Axis::Log;
        let ok = |v: f64, log: bool| v.is_finite() && (!log || v > 0.0);
        let mut xs = Vec::new();
        let mut ys = Vec::new();
        for s in &self.series {
            for (i, &(x, y)) in s.points.iter().enumerate() {
                if !(ok(x, xlog) && ok(y, ylog)) {
                    continue;
                }
                xs.push(x);
                ys.push(y);
                if let Some(e) = s.y_errors.as_ref().and_then(|e| e.get(i)) {
                    if e.is_finite() && *e > 0.0 {
                        ys.push(y + e);
                        if ok(y - e, ylog) {
                            ys.push(y - e);
                        }
                    }
                }
            }
        }
        if let Some(h) = &self.histogram {
            for b in &h.bins {
                for x in [b.lo, b.hi] {
                    if ok(x, xlog) {
                        xs.push(x);
                    }
                }
                if ok(b.value, ylog) {
                    ys.push(b.value);
                }
                if !ylog {
                    ys.push(0.0);
                }
            }
        }
        for r in &self.ref_lines {
            if ok(r.y, ylog) {
                ys.push(r.y);
            }
        }
        for v in &self.v_lines {
            if ok(v.x, xlog) {
                xs.push(v.x);
            }
        }
        let x = match self.x_range {
            Some(r) => check_range(r, xlog).ok_or_else(|| self.error("empty x range"))?,
            None => auto_range(&xs, xlog).ok_or_else(|| self.error("no point to plot"))?,
        };
        let y = match self.y_range {
            Some(r) => check_range(r, ylog).ok_or_else(|| self.error("empty y range"))?,
            None => {
                let r = auto_range(&ys, ylog).ok_or_else(|| self.error("no point to plot"))?;
                self.legend_room(r, ylog)
            }
        };
        Ok((x, y))
    }

    /// Extends an automatic y range so that the legend box sits beside the data rather
    /// than on it: by the fraction of the plot height that the box takes with its inset and
    /// a marker's clearance (at most 0.6) of the new span, at the top for an upper legend
    /// and at the bottom for a lower one.
    fn legend_room(&self, (lo, hi): (f64, f64), log: bool) -> (f64, f64) {
        let entries = self.legend_entries().len();
        if entries == 0 || self.legend == Legend::Hidden {
            return (lo, hi);
        }
        let strip = if self.v_lines.is_empty() {
            0
        } else {
            VLINE_STRIP
        };
        // the plot area: the canvas less the margins (12 + 12) and the x label area (52)
        let plot = f64::from(self.height.saturating_sub(76 + strip)).max(1.0);
        let need = legend_height(entries) + INSET + 2.0 * MARKER_RADIUS + 2.0;
        let frac = (need / plot).min(0.6);
        let upper = matches!(self.legend, Legend::UpperLeft | Legend::UpperRight);
        let (a, b) = if log {
            (lo.log10(), hi.log10())
        } else {
            (lo, hi)
        };
        let extra = (b - a) * frac / (1.0 - frac);
        let (a, b) = if upper {
            (a, b + extra)
        } else {
            (a - extra, b)
        };
        if log {
            (10f64.powf(a), 10f64.powf(b))
        } else {
            (a, b)
        }
    }

    fn draw<XS, YS>(
        &self,
        root: &DrawingArea<SVGBackend<'_>, plotters::coord::Shift>,
        x_spec: XS,
        y_spec: YS,
        (xlog, ylog): (bool, bool),
        bottom: u32,
    ) -> std::result::Result<Option<u32>, String>
    where
        XS: AsRangedCoord<Value = f64>,
        YS: AsRangedCoord<Value = f64>,
        XS::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
        YS::CoordDescType: Ranged<ValueType = f64> + ValueFormatter<f64>,
    {
        let e = |e: &dyn std::fmt::Display| e.to_string();
        root.fill(&WHITE).map_err(|x| e(&x))?;
        let mut builder = ChartBuilder::on(root);
        builder
            .margin(12)
            .margin_right(12 + self.ref_margin())
            .margin_bottom(12 + bottom)
            .margin_top(if self.v_lines.is_empty() {
                12
            } else {
                12 + VLINE_STRIP
            })
            .x_label_area_size(52)
            .y_label_area_size(78);
        if let Some(t) = &self.title {
            builder.caption(t, ("sans-serif", LABEL_FONT));
        }
        let mut chart = builder
            .build_cartesian_2d(x_spec, y_spec)
            .map_err(|x| e(&x))?;
        let span = |r: std::ops::Range<f64>, log: bool| if log { 0.0 } else { r.end - r.start };
        let (xs, ys) = (span(chart.x_range(), xlog), span(chart.y_range(), ylog));
        let fmt_x = |v: &f64| tick_label(*v, xs);
        let fmt_y = |v: &f64| tick_label(*v, ys);
        chart
            .configure_mesh()
            .x_desc(self.x_label.as_str())
            .y_desc(self.y_label.as_str())
            .x_labels(6)
            .y_labels(6)
            .x_label_formatter(&fmt_x)
            .y_label_formatter(&fmt_y)
            .label_style(("sans-serif", TICK_FONT))
            .axis_desc_style(("sans-serif", LABEL_FONT))
            .light_line_style(WHITE)
            .bold_line_style(RGBColor(225, 225, 225))
            .draw()
            .map_err(|x| e(&x))?;

        let (x0, x1) = {
            let r = chart.x_range();
            (r.start, r.end)
        };
        let (y0, _) = {
            let r = chart.y_range();
            (r.start, r.end)
        };
        self.draw_bands(&mut chart, xlog)?;
        self.draw_histogram(&mut chart, (xlog, ylog), y0)?;
        self.draw_references(&mut chart, root, ylog, (x0, x1))?;
        self.draw_verticals(&mut chart, root, xlog)?;
        self.draw_curves(&mut chart, (xlog, ylog), y0)?;
        let px = chart.plotting_area().get_pixel_range();
        let area = Rect {
            x0: f64::from(px.0.start),
            y0: f64::from(px.1.start),
            x1: f64::from(px.0.end),
            y1: f64::from(px.1.end),
        };
        let obstacles = self.obstacles(&chart, (xlog, ylog), y0);
        self.draw_legend(root, &area, &obstacles, bottom)
    }

    /// The bands, clipped to the x range, over the whole y range.
    fn draw_bands<'a, X, Y>(
        &self,
        chart: &mut ChartContext<'a, SVGBackend<'a>, Cartesian2d<X, Y>>,
        xlog: bool,
    ) -> std::result::Result<(), String>
    where
        X: Ranged<ValueType = f64>,
        Y: Ranged<ValueType = f64>,
    {
        let (xr, yr) = (chart.x_range(), chart.y_range());
        let ok = |v: f64| v.is_finite() && (!xlog || v > 0.0);
        let bands = self
            .bands
            .iter()
            .filter(|b| ok(b.lo) && ok(b.hi) && b.lo < b.hi)
            .map(|b| (b.lo.max(xr.start), b.hi.min(xr.end)))
            .filter(|(lo, hi)| lo < hi)
            .map(|(lo, hi)| Rectangle::new([(lo, yr.start), (hi, yr.end)], BAND_FILL.filled()));
        chart.draw_series(bands).map_err(|x| x.to_string())?;
        Ok(())
    }

    /// The histogram bars and their outline.
    fn draw_histogram<'a, X, Y>(
        &self,
        chart: &mut ChartContext<'a, SVGBackend<'a>, Cartesian2d<X, Y>>,
        (xlog, ylog): (bool, bool),
        y0: f64,
    ) -> std::result::Result<(), String>
    where
        X: Ranged<ValueType = f64>,
        Y: Ranged<ValueType = f64>,
    {
        let e = |e: &dyn std::fmt::Display| e.to_string();
        let ok = |v: f64, log: bool| v.is_finite() && (!log || v > 0.0);
        if let Some(h) = &self.histogram {
            let fill = RGBColor(200, 200, 200);
            let base = if ylog { y0 } else { 0.0 };
            let bars = h
                .bins
                .iter()
                .filter(|b| ok(b.lo, xlog) && ok(b.hi, xlog) && ok(b.value, ylog))
                .map(|b| {
                    Rectangle::new(
                        [(b.lo, base), (b.hi, b.value)],
                        ShapeStyle::from(&fill).filled(),
                    )
                });
            chart.draw_series(bars).map_err(|x| e(&x))?;
            let outline = h
                .bins
                .iter()
                .filter(|b| ok(b.lo, xlog) && ok(b.hi, xlog) && ok(b.value, ylog))
                .map(|b| {
                    Rectangle::new(
                        [(b.lo, base), (b.hi, b.value)],
                        ShapeStyle::from(&RGBColor(120, 120, 120)).stroke_width(1),
                    )
                });
            chart.draw_series(outline).map_err(|x| e(&x))?;
        }

        Ok(())
    }

    /// The reference lines inside the y range, then their labels stacked in the right
    /// margin: each wants to sit level with its line, labels that would overlap are spread
    /// apart by `spread_labels` (keeping the order of the lines), and a leader line joins
    /// each label to the right end of its line. The labels never cover the plot area.
    fn draw_references<'a, X, Y>(
        &self,
        chart: &mut ChartContext<'a, SVGBackend<'a>, Cartesian2d<X, Y>>,
        root: &DrawingArea<SVGBackend<'_>, plotters::coord::Shift>,
        ylog: bool,
        (x0, x1): (f64, f64),
    ) -> std::result::Result<(), String>
    where
        X: Ranged<ValueType = f64>,
        Y: Ranged<ValueType = f64>,
    {
        let e = |e: &dyn std::fmt::Display| e.to_string();
        let ok = |v: f64, log: bool| v.is_finite() && (!log || v > 0.0);
        let grey = RGBColor(90, 90, 90);
        let area = chart.plotting_area().get_pixel_range();
        let (top, bottom) = (f64::from(area.1.start), f64::from(area.1.end));
        let right = area.0.end;
        let half = 0.5 * REF_LABEL_HEIGHT;
        let yr = chart.y_range();
        let mut labels = Vec::new();
        for r in self
            .ref_lines
            .iter()
            .filter(|r| ok(r.y, ylog) && r.y >= yr.start && r.y <= yr.end)
        {
            chart
                .draw_series(DashedLineSeries::new(
                    vec![(x0, r.y), (x1, r.y)],
                    6,
                    4,
                    ShapeStyle::from(&grey).stroke_width(1),
                ))
                .map_err(|x| e(&x))?;
            let py = chart.backend_coord(&(x1, r.y)).1;
            labels.push((r.y, py, r.label.clone()));
        }
        // top to bottom: by value, highest first (ties keep the order they were added in)
        labels.sort_by(|a, b| b.0.total_cmp(&a.0));
        let wanted: Vec<f64> = labels.iter().map(|l| f64::from(l.1)).collect();
        let placed = spread_labels(&wanted, REF_LABEL_HEIGHT + 2.0, top + half, bottom - half);
        let style = TextStyle::from(("sans-serif", TICK_FONT).into_font())
            .color(&grey)
            .pos(Pos::new(HPos::Left, VPos::Center));
        let lx = right + LEADER as i32 + 4;
        for ((_, py, label), y) in labels.into_iter().zip(placed) {
            let y = y.round() as i32;
            let leader = vec![
                (right, py),
                (right + 5, py),
                (right + LEADER as i32 - 3, y),
                (lx - 2, y),
            ];
            root.draw(&PathElement::new(leader, grey.stroke_width(1)))
                .map_err(|x| e(&x))?;
            root.draw(&Text::new(label, (lx, y), style.clone()))
                .map_err(|x| e(&x))?;
        }

        Ok(())
    }

    /// The vertical lines inside the x range, dotted, with their labels above the plot
    /// area, spread sideways so that they do not overlap.
    fn draw_verticals<'a, X, Y>(
        &self,
        chart: &mut ChartContext<'a, SVGBackend<'a>, Cartesian2d<X, Y>>,
        root: &DrawingArea<SVGBackend<'_>, plotters::coord::Shift>,
        xlog: bool,
    ) -> std::result::Result<(), String>
    where
        X: Ranged<ValueType = f64>,
        Y: Ranged<ValueType = f64>,
    {
        let e = |e: &dyn std::fmt::Display| e.to_string();
        let grey = RGBColor(90, 90, 90);
        let (xr, yr) = (chart.x_range(), chart.y_range());
        let area = chart.plotting_area().get_pixel_range();
        let (left, top) = (area.0.start, area.1.start);
        let mut lines: Vec<&VLine> = self
            .v_lines
            .iter()
            .filter(|v| v.x.is_finite() && (!xlog || v.x > 0.0))
            .filter(|v| v.x >= xr.start && v.x <= xr.end)
            .collect();
        lines.sort_by(|a, b| a.x.total_cmp(&b.x));
        let mut wanted = Vec::new();
        for v in &lines {
            chart
                .draw_series(DashedLineSeries::new(
                    vec![(v.x, yr.start), (v.x, yr.end)],
                    2,
                    3,
                    ShapeStyle::from(&grey).stroke_width(1),
                ))
                .map_err(|x| e(&x))?;
            wanted.push(f64::from(chart.backend_coord(&(v.x, yr.end)).0));
        }
        let widest = lines
            .iter()
            .map(|v| text_width(&v.label, TICK_PX))
            .fold(0.0, f64::max);
        let half = 0.5 * widest;
        let lo = f64::from(left) + half;
        let hi = f64::from(self.width + self.ref_margin()) - 4.0 - half;
        let placed = spread_labels(&wanted, widest + 6.0, lo, hi.max(lo));
        let style = TextStyle::from(("sans-serif", TICK_FONT).into_font())
            .color(&grey)
            .pos(Pos::new(HPos::Center, VPos::Bottom));
        for (v, x) in lines.iter().zip(placed) {
            root.draw(&Text::new(
                v.label.clone(),
                (x.round() as i32, top - 3),
                style.clone(),
            ))
            .map_err(|x| e(&x))?;
        }
        Ok(())
    }

    /// The series: error bars, lines and markers, with their legend entries.
    fn draw_curves<'a, X, Y>(
        &self,
        chart: &mut ChartContext<'a, SVGBackend<'a>, Cartesian2d<X, Y>>,
        (xlog, ylog): (bool, bool),
        y0: f64,
    ) -> std::result::Result<(), String>
    where
        X: Ranged<ValueType = f64>,
        Y: Ranged<ValueType = f64>,
    {
        let e = |e: &dyn std::fmt::Display| e.to_string();
        let ok = |v: f64, log: bool| v.is_finite() && (!log || v > 0.0);
        for (k, s) in self.series.iter().enumerate() {
            let color = palette(s.color.unwrap_or(k));
            let pts: Vec<(f64, f64)> = s
                .points
                .iter()
                .copied()
                .filter(|&(x, y)| ok(x, xlog) && ok(y, ylog))
                .collect();
            if let Some(errs) = &s.y_errors {
                let bars = s
                    .points
                    .iter()
                    .zip(errs)
                    .filter(|((x, y), err)| {
                        ok(*x, xlog) && ok(*y, ylog) && err.is_finite() && **err > 0.0
                    })
                    .map(|(&(x, y), &err)| {
                        let lo = if ok(y - err, ylog) { y - err } else { y0 };
                        ErrorBar::new_vertical(x, lo, y, y + err, color.stroke_width(1), 6)
                    });
                chart.draw_series(bars).map_err(|x| e(&x))?;
            }
            let line_style = color.stroke_width(2);
            let triangle = k % 2 == 1;
            match s.style {
                Style::Line | Style::LinePoints => {
                    chart
                        .draw_series(LineSeries::new(pts.clone(), line_style))
                        .map_err(|x| e(&x))?;
                }
                Style::Dashed => {
                    chart
                        .draw_series(DashedLineSeries::new(pts.clone(), 8, 5, line_style))
                        .map_err(|x| e(&x))?;
                }
                Style::Points => {}
            }
            if matches!(s.style, Style::Points | Style::LinePoints) {
                if triangle {
                    chart
                        .draw_series(
                            pts.iter()
                                .map(|&p| TriangleMarker::new(p, 6, color.filled())),
                        )
                        .map_err(|x| e(&x))?;
                } else {
                    chart
                        .draw_series(pts.iter().map(|&p| Circle::new(p, 4, color.filled())))
                        .map_err(|x| e(&x))?;
                }
            }
        }

        Ok(())
    }

    /// What the legend must not cover: the markers, curves, error bars and bars, in pixels.
    fn obstacles<'a, X, Y>(
        &self,
        chart: &ChartContext<'a, SVGBackend<'a>, Cartesian2d<X, Y>>,
        (xlog, ylog): (bool, bool),
        y0: f64,
    ) -> Obstacles
    where
        X: Ranged<ValueType = f64>,
        Y: Ranged<ValueType = f64>,
    {
        let ok = |v: f64, log: bool| v.is_finite() && (!log || v > 0.0);
        let px = |x: f64, y: f64| {
            let (a, b) = chart.backend_coord(&(x, y));
            (f64::from(a), f64::from(b))
        };
        let mut o = Obstacles::default();
        for s in &self.series {
            let pts: Vec<(f64, f64)> = s
                .points
                .iter()
                .filter(|&&(x, y)| ok(x, xlog) && ok(y, ylog))
                .map(|&(x, y)| px(x, y))
                .collect();
            if matches!(s.style, Style::Points | Style::LinePoints) {
                o.markers
                    .extend(pts.iter().map(|&(x, y)| (x, y, MARKER_RADIUS)));
            }
            if s.style != Style::Points {
                o.segments.extend(pts.windows(2).map(|w| (w[0], w[1])));
            }
            for (&(x, y), &err) in s.points.iter().zip(s.y_errors.iter().flatten()) {
                if ok(x, xlog) && ok(y, ylog) && err.is_finite() && err > 0.0 {
                    let lo = if ok(y - err, ylog) { y - err } else { y0 };
                    o.segments.push((px(x, lo), px(x, y + err)));
                }
            }
        }
        if let Some(h) = &self.histogram {
            let base = if ylog { y0 } else { 0.0 };
            for b in h
                .bins
                .iter()
                .filter(|b| ok(b.lo, xlog) && ok(b.hi, xlog) && ok(b.value, ylog))
            {
                let (p, q) = (px(b.lo, base), px(b.hi, b.value));
                o.rects.push(Rect {
                    x0: p.0.min(q.0),
                    y0: p.1.min(q.1),
                    x1: p.0.max(q.0),
                    y1: p.1.max(q.1),
                });
            }
        }
        o
    }

    /// Legend entries in drawing order: the bands, the histogram, then the labelled series.
    fn legend_entries(&self) -> Vec<(String, Glyph)> {
        let mut out = Vec::new();
        for b in self.bands.iter().filter(|b| !b.label.is_empty()) {
            out.push((b.label.clone(), Glyph::Bar(BAND_FILL)));
        }
        if let Some(h) = self.histogram.as_ref().filter(|h| !h.label.is_empty()) {
            out.push((h.label.clone(), Glyph::Bar(RGBColor(200, 200, 200))));
        }
        for (k, s) in self.series.iter().enumerate() {
            if !s.label.is_empty() {
                let color = palette(s.color.unwrap_or(k));
                out.push((s.label.clone(), Glyph::Series(color, s.style, k % 2 == 1)));
            }
        }
        out
    }

    /// The legend box: in the first corner of the plot area that covers no data
    /// ([`layout::free_corner`], the chosen corner first), else below the plot when the
    /// canvas has `bottom` extra pixels for it. Returns the extra height needed when no
    /// corner is free and there is no room below yet (nothing drawn then).
    fn draw_legend(
        &self,
        root: &DrawingArea<SVGBackend<'_>, plotters::coord::Shift>,
        area: &Rect,
        obstacles: &Obstacles,
        bottom: u32,
    ) -> std::result::Result<Option<u32>, String> {
        let e = |e: &dyn std::fmt::Display| e.to_string();
        let entries = self.legend_entries();
        let corner = match self.legend {
            Legend::Hidden => return Ok(None),
            Legend::UpperLeft => Corner::UpperLeft,
            Legend::LowerLeft => Corner::LowerLeft,
            Legend::LowerRight => Corner::LowerRight,
            Legend::UpperRight => Corner::UpperRight,
        };
        if entries.is_empty() {
            return Ok(None);
        }
        let widest = entries
            .iter()
            .map(|(l, _)| text_width(l, TICK_PX))
            .fold(0.0, f64::max);
        let size = (
            2.0 * LEGEND_PAD + GLYPH_WIDTH + GLYPH_GAP + widest,
            legend_height(entries.len()),
        );
        let rect = if bottom > 0 {
            // under the x-axis label area, aligned with the plot area's left edge
            let canvas = f64::from(self.width + self.ref_margin());
            let x = area.x0.min(canvas - 6.0 - size.0).max(6.0);
            Rect::at(x, f64::from(self.height) - 6.0, size.0, size.1)
        } else {
            match free_corner(area, size, corner, obstacles) {
                Some(r) => r,
                None => return Ok(Some(size.1.ceil() as u32 + 10)),
            }
        };
        let corners = [
            (rect.x0.round() as i32, rect.y0.round() as i32),
            (rect.x1.round() as i32, rect.y1.round() as i32),
        ];
        root.draw(&Rectangle::new(corners, WHITE.mix(0.85).filled()))
            .map_err(|x| e(&x))?;
        root.draw(&Rectangle::new(corners, RGBColor(160, 160, 160)))
            .map_err(|x| e(&x))?;
        let style = TextStyle::from(("sans-serif", TICK_FONT).into_font())
            .pos(Pos::new(HPos::Left, VPos::Center));
        for (k, (label, glyph)) in entries.into_iter().enumerate() {
            let y = (rect.y0 + 3.0 + LEGEND_ROW * (k as f64 + 0.5)).round() as i32;
            let x = (rect.x0 + LEGEND_PAD).round() as i32;
            draw_glyph(root, (x, y), glyph)?;
            let tx = x + (GLYPH_WIDTH + GLYPH_GAP) as i32;
            root.draw(&Text::new(label, (tx, y), style.clone()))
                .map_err(|x| e(&x))?;
        }
        Ok(None)
    }
}

/// SVG `font-size` of tick labels, legend and reference-line text (plotters writes the
/// requested size / 1.24).
const TICK_PX: f64 = TICK_FONT / 1.24;
/// Height in pixels of the strip above the plot area for vertical-line labels.
const VLINE_STRIP: u32 = 20;
/// Horizontal run of a reference label's leader line, in pixels.
const LEADER: f64 = 18.0;
/// Radius in pixels within which a marker counts as covered (the triangle's size).
const MARKER_RADIUS: f64 = 6.0;
/// Legend layout in pixels: row height, padding, sample width and the gap before the text.
const LEGEND_ROW: f64 = 20.0;
const LEGEND_PAD: f64 = 8.0;
const GLYPH_WIDTH: f64 = 20.0;
const GLYPH_GAP: f64 = 8.0;

/// Height in pixels of a legend box of `entries` rows.
fn legend_height(entries: usize) -> f64 {
    6.0 + LEGEND_ROW * entries as f64
}

/// The sample drawn before a legend entry.
#[derive(Debug, Clone, Copy)]
enum Glyph {
    /// A filled bar of this colour (a histogram, a band).
    Bar(RGBColor),
    /// A series: colour, style, triangle (else circle) markers.
    Series(RGBColor, Style, bool),
}

/// Height in pixels taken by a reference-line label (its `font-size` is 18 / 1.24 ≈ 14.5 px).
const REF_LABEL_HEIGHT: f64 = 15.0;

/// Vertical centres yᵢ for labels that want to sit at `wanted` (pixels, y downwards), given
/// in the top-to-bottom order they must keep: y₀ ≤ y₁ ≤ … with yᵢ₊₁ − yᵢ ≥ `sep`, inside
/// [`lo`, `hi`] when they fit (packed from `lo` otherwise). Labels that would overlap are
/// grouped, and each group is stacked upwards from the wanted position of its lowest label
/// (so that labels wanting to sit above their lines stay above them), then shifted inside
/// the bounds (a one-dimensional label-placement sweep; common practice, no source). Labels
/// that do not overlap stay where they want to be (clamped to the bounds).
pub fn spread_labels(wanted: &[f64], sep: f64, lo: f64, hi: f64) -> Vec<f64> {
    // groups of consecutive labels: (first label, count, centre of the first label)
    let mut groups: Vec<(usize, usize, f64)> = Vec::new();
    let place = |first: usize, count: usize| -> f64 {
        let span = (count - 1) as f64 * sep;
        (wanted[first + count - 1] - span).min(hi - span).max(lo)
    };
    for k in 0..wanted.len() {
        groups.push((k, 1, place(k, 1)));
        while let [.., (f1, c1, t1), (_, c2, t2)] = groups[..] {
            if t1 + c1 as f64 * sep <= t2 {
                break;
            }
            groups.truncate(groups.len() - 2);
            groups.push((f1, c1 + c2, place(f1, c1 + c2)));
        }
    }
    let mut out = Vec::with_capacity(wanted.len());
    for (_, count, top) in groups {
        out.extend((0..count).map(|j| top + j as f64 * sep));
    }
    out
}

/// Draws a legend sample with its left end at `(x, y)`: a grey bar, or a series' line
/// (solid, dashed or none) and marker (circle, triangle or none).
fn draw_glyph(
    root: &DrawingArea<SVGBackend<'_>, plotters::coord::Shift>,
    (x, y): (i32, i32),
    glyph: Glyph,
) -> std::result::Result<(), String> {
    let e = |e: &dyn std::fmt::Display| e.to_string();
    let (color, style, triangle) = match glyph {
        Glyph::Bar(fill) => {
            return root
                .draw(&Rectangle::new(
                    [(x, y - 6), (x + 20, y + 6)],
                    fill.filled(),
                ))
                .map_err(|x| e(&x));
        }
        Glyph::Series(c, s, t) => (c, s, t),
    };
    let segments: &[(i32, i32)] = match style {
        Style::Line | Style::LinePoints => &[(0, 20)],
        Style::Dashed => &[(0, 8), (12, 20)],
        Style::Points => &[],
    };
    for &(a, b) in segments {
        root.draw(&PathElement::new(
            vec![(x + a, y), (x + b, y)],
            color.stroke_width(2),
        ))
        .map_err(|x| e(&x))?;
    }
    if matches!(style, Style::Points | Style::LinePoints) {
        if triangle {
            root.draw(&TriangleMarker::new((x + 10, y), 6, color.filled()))
                .map_err(|x| e(&x))?;
        } else {
            root.draw(&Circle::new((x + 10, y), 4, color.filled()))
                .map_err(|x| e(&x))?;
        }
    }
    Ok(())
}

/// Tick positions on a log axis `[lo, hi]`: the decades `10ᵏ` inside (every n-th when
/// there are more than 8); with fewer than three, also `2·10ᵏ` and `5·10ᵏ`; with still
/// fewer, every `m·10ᵏ`, `m = 1..9`.
fn log_ticks(lo: f64, hi: f64) -> Vec<f64> {
    let k0 = lo.log10().floor() as i32 - 1;
    let k1 = hi.log10().ceil() as i32 + 1;
    let inside = |mults: &[f64]| -> Vec<f64> {
        let mut v: Vec<f64> = (k0..=k1)
            .flat_map(|k| mults.iter().map(move |m| m * 10f64.powi(k)))
            .filter(|&t| t >= lo * (1.0 - 1e-12) && t <= hi * (1.0 + 1e-12))
            .collect();
        v.sort_by(f64::total_cmp);
        v
    };
    let decades = inside(&[1.0]);
    if decades.len() > 8 {
        let step = decades.len().div_ceil(6);
        return decades.into_iter().step_by(step).collect();
    }
    if decades.len() >= 3 {
        return decades;
    }
    let some = inside(&[1.0, 2.0, 5.0]);
    if some.len() >= 3 {
        return some;
    }
    inside(&[1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0])
}

fn check_range((lo, hi): (f64, f64), log: bool) -> Option<(f64, f64)> {
    (lo.is_finite() && hi.is_finite() && lo < hi && (!log || lo > 0.0)).then_some((lo, hi))
}

/// Data range padded by 5 % of the span (of `log₁₀` on a log axis); a single value gets
/// ±10 % (or ±1 when it is 0).
fn auto_range(v: &[f64], log: bool) -> Option<(f64, f64)> {
    let lo = v.iter().copied().fold(f64::INFINITY, f64::min);
    let hi = v.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    if !(lo.is_finite() && hi.is_finite()) {
        return None;
    }
    if log {
        let (a, b) = (lo.log10(), hi.log10());
        let pad = if b > a { 0.05 * (b - a) } else { 0.1 };
        Some((10f64.powf(a - pad), 10f64.powf(b + pad)))
    } else if hi > lo {
        let pad = 0.05 * (hi - lo);
        Some((lo - pad, hi + pad))
    } else if lo == 0.0 {
        Some((-1.0, 1.0))
    } else {
        let pad = 0.1 * lo.abs();
        Some((lo - pad, hi + pad))
    }
}

/// Relative size, against the span of a linear axis, below which a tick value is zero.
const TICK_ZERO: f64 = 1e-9;

/// Tick label: [`crate::report::table::format_value`] (4 significant digits, trailing zeros
/// removed, scientific outside `[10⁻³, 10⁵)`) of `v`, or `0` when `|v|` is below
/// [`TICK_ZERO`] times the span of a linear axis (`span`; 0 on a log axis). Ticks at
/// multiples of a step carry rounding noise: `-0.3 + 3 · 0.1` is `5.55e-17`, not 0, and
/// `0.30000000000000004` needs the rounding to 4 digits.
fn tick_label(v: f64, span: f64) -> String {
    if v.abs() < TICK_ZERO * span {
        return "0".to_string();
    }
    crate::report::table::format_value(v)
}

/// A density histogram of `samples` on `[lo, hi)` with `bins` equal bins: bar height =
/// count / (N · width), where N counts every finite sample (also those outside the range),
/// so that the bars integrate to the fraction of samples inside it.
pub fn density_histogram(samples: &[f64], lo: f64, hi: f64, bins: usize) -> Vec<Bin> {
    if bins == 0 || lo.partial_cmp(&hi) != Some(std::cmp::Ordering::Less) {
        return Vec::new();
    }
    let w = (hi - lo) / bins as f64;
    let mut counts = vec![0usize; bins];
    let mut n = 0usize;
    for &s in samples.iter().filter(|s| s.is_finite()) {
        n += 1;
        if s >= lo && s < hi {
            let k = (((s - lo) / w) as usize).min(bins - 1);
            counts[k] += 1;
        }
    }
    let norm = if n > 0 { 1.0 / (n as f64 * w) } else { 0.0 };
    counts
        .iter()
        .enumerate()
        .map(|(k, &c)| Bin {
            lo: lo + k as f64 * w,
            hi: lo + (k + 1) as f64 * w,
            value: c as f64 * norm,
        })
        .collect()
}

/// `n ≥ 2` points `(x, f(x))` equally spaced on `[lo, hi]`, for drawing a curve.
pub fn sample_curve(f: impl Fn(f64) -> f64, lo: f64, hi: f64, n: usize) -> Vec<(f64, f64)> {
    let n = n.max(2);
    (0..n)
        .map(|i| {
            let x = lo + (hi - lo) * i as f64 / (n - 1) as f64;
            (x, f(x))
        })
        .collect()
}

/// `n ≥ 2` points `(x, f(x))` equally spaced in `log₁₀ x` on `[lo, hi]` (`0 < lo < hi`).
pub fn sample_curve_log(f: impl Fn(f64) -> f64, lo: f64, hi: f64, n: usize) -> Vec<(f64, f64)> {
    sample_curve(|t| f(10f64.powf(t)), lo.log10(), hi.log10(), n)
        .into_iter()
        .map(|(t, y)| (10f64.powf(t), y))
        .collect()
}
