//! Learning curves and bar charts of tagger scores, drawn as SVG.
//!
//! [`learning_curve`] plots score against training size on a log axis,
//! one line per feature set with ±1 standard deviation error bars;
//! [`bars`] draws one bar per feature set with ±1 sd whiskers. Scores
//! arrive as fractions and are drawn as percentages. The first series
//! or bar is the baseline and is drawn in dark grey; the others take
//! colours in turn from a fixed colour-blind-safe palette, and curve
//! markers also change shape from series to series, so lines stay
//! apart in greyscale too.
//!
//! As in [`crate::dendrogram`], `plotters` makes the SVG without its
//! font support: text goes into the file as text and the viewer lays it
//! out, so text widths here are estimates from the number of
//! characters. Axes, ticks, labels and legends are drawn from plotters'
//! basic elements rather than by its chart builder, whose label layout
//! depends on measuring text and whose log-axis ticks are its own
//! choice; we want 1, 2 and 5 in each decade, with thousands
//! separators. Every coordinate is a whole pixel computed from the input
//! alone, so the same input gives the same bytes.

use std::path::Path;

use anyhow::{anyhow, bail, Context, Result};
use plotters::{
    coord::Shift,
    prelude::*,
    style::text_anchor::{HPos, Pos, VPos},
};

use crate::atomic::AtomicFile;

/// One line of a learning curve: a feature set's mean score and standard
/// deviation at each training size.
#[derive(Clone, Debug, PartialEq)]
pub struct Series {
    /// The feature set's name, shown in the legend.
    pub name: String,
    /// The scores, in any order; the line joins them by training size.
    pub points: Vec<Point>,
}

/// One training size of a [`Series`].
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Point {
    /// The training size, in sentences: positive, at most
    /// [`MAX_SIZE`].
    pub x: f64,
    /// The mean score over runs, as a fraction (0.85 is drawn as 85%).
    pub mean: f64,
    /// The standard deviation of the score over runs, as a fraction; 0
    /// for a single run.
    pub sd: f64,
}

/// The largest training size a learning curve accepts. Sizes count
/// sentences; the bound keeps tick labels short.
pub const MAX_SIZE: f64 = 1e15;
/// The smallest training size a learning curve accepts.
pub const MIN_SIZE: f64 = 1e-6;

/// Draws score against training size and writes the SVG to `out`; see
/// [`render_learning_curve`].
///
/// The file is written beside `out` under a temporary name and renamed
/// into place, replacing any file there; a failure leaves a previous
/// `out` as it was and no partial file behind.
pub fn learning_curve(
    series: &[Series],
    metric: &str,
    title: &str,
    out: &Path,
) -> Result<()> {
    let svg = render_learning_curve(series, metric, title)?;
    write(&svg, out)
}

/// The SVG document [`learning_curve`] writes, as a string.
///
/// Training size runs along a log axis, with ticks at 1, 2 and 5 in
/// each decade; powers of ten are always labelled, and the 2 and 5
/// ticks too when they have room. The y axis shows scores as
/// percentages and is titled `metric`, with " (%)" added unless it
/// already holds a `%`. Each series is a line through its points, each
/// point marked and given a ±1 sd error bar; where several series share
/// a size they are shifted a few pixels apart so their error bars do not
/// hide one another. The legend on the right names the series in order.
///
/// Fails on no series, a series without points, a size that is not a
/// number from [`MIN_SIZE`] to [`MAX_SIZE`], a score that is not a finite
/// number, or a negative standard deviation.
pub fn render_learning_curve(
    series: &[Series],
    metric: &str,
    title: &str,
) -> Result<String> {
    let (xmin, xmax, ymin, ymax) = curve_extent(series)?;
    let xaxis = LogAxis::new(xmin, xmax)?;
    let (lo, hi) = value_range(ymin, ymax, 0.05);
    let yaxis = LinearAxis::new(lo, hi);

    let left = y_axis_left(&yaxis);
    let frame = Frame {
        left,
        top: PLOT_TOP,
        right: left + CURVE_WIDTH,
        bottom: PLOT_TOP + CURVE_HEIGHT,
    };
    let mut legend: Vec<(Glyph, String)> = series
        .iter()
        .enumerate()
        .map(|(i, s)| (Glyph::Line(i), shorten(&s.name, MAX_NAME)))
        .collect();
    legend.push((Glyph::ErrorBar, "error bars: ±1 sd".to_string()));
    let legend_x = frame.right + LEGEND_GAP;
    let (legend_w, legend_h) = legend_size(&legend);
    let x_title_y = frame.bottom + TICK_LEN + 4 + LINE + 10;
    let width = (legend_x + legend_w + MARGIN).max(title_width(title));
    let height = (x_title_y + LINE + MARGIN).max(PLOT_TOP + legend_h + MARGIN);

    let inner_left = frame.left + X_PAD;
    let inner_width = f64::from(CURVE_WIDTH - 2 * X_PAD);
    let span = xaxis.hi - xaxis.lo;
    let x_at = |log: f64| {
        px(f64::from(inner_left) + (log - xaxis.lo) / span * inner_width)
    };
    // Series side by side at a shared size, at most `SPREAD` pixels
    // from first to last.
    let n = series.len();
    let step = if n > 1 { (SPREAD / (n - 1) as f64).min(DODGE) } else { 0.0 };
    let dodge = |i: usize| px((i as f64 - (n - 1) as f64 / 2.0) * step);

    let mut svg = String::new();
    {
        let area = canvas(&mut svg, width, height)?;
        draw_y_axis(&area, &frame, &yaxis, &percent_title(metric))?;

        // The x axis: grid, then ticks and labels.
        let plan = xaxis.plan(inner_width);
        for tick in &xaxis.ticks {
            let x = x_at(tick.log);
            if tick.power.is_some() {
                let grid = vec![(x, frame.top), (x, frame.bottom)];
                line(&area, grid, GRID, 1)?;
            } else if plan.minor {
                let grid = vec![(x, frame.top), (x, frame.bottom)];
                line(&area, grid, MINOR_GRID, 1)?;
            }
        }
        axes(&area, &frame)?;
        for tick in &xaxis.ticks {
            let major = tick.power.is_some();
            if !major && !plan.minor {
                continue;
            }
            let x = x_at(tick.log);
            let len = if major { TICK_LEN } else { TICK_LEN - 2 };
            let mark = vec![(x, frame.bottom), (x, frame.bottom + len)];
            line(&area, mark, INK, 1)?;
            if plan.labels(tick) {
                let at = (x, frame.bottom + TICK_LEN + 4);
                text(&area, &tick.label, at, TICK, TOP_CENTER, &INK)?;
            }
        }
        let x_title = "training size (sentences, log scale)";
        let at = ((frame.left + frame.right) / 2, x_title_y);
        text(&area, x_title, at, AXIS, TOP_CENTER, &INK)?;

        // The data: all lines, then all error bars, then all markers, so
        // that no line hides a marker.
        let placed: Vec<Vec<(i32, i32, i32, i32)>> = series
            .iter()
            .enumerate()
            .map(|(i, s)| {
                let mut points = s.points.clone();
                points.sort_by(|a, b| a.x.total_cmp(&b.x));
                points
                    .iter()
                    .map(|p| {
                        let x = x_at(p.x.log10()) + dodge(i);
                        let (mean, sd) = (100.0 * p.mean, 100.0 * p.sd);
                        let top = yaxis.at(&frame, mean + sd);
                        let bottom = yaxis.at(&frame, mean - sd);
                        (x, yaxis.at(&frame, mean), top, bottom)
                    })
                    .collect()
            })
            .collect();
        for (i, points) in placed.iter().enumerate() {
            let path = points.iter().map(|&(x, y, _, _)| (x, y)).collect();
            line(&area, path, colour(i), 2)?;
        }
        for (i, points) in placed.iter().enumerate() {
            for &(x, _, top, bottom) in points {
                error_bar(&area, x, top, bottom, CAP, colour(i), 1)?;
            }
        }
        for (i, points) in placed.iter().enumerate() {
            for &(x, y, _, _) in points {
                marker(&area, shape(i), (x, y), colour(i))?;
            }
        }

        draw_legend(&area, (legend_x, frame.top), &legend)?;
        draw_title(&area, title, width)?;
        area.present().map_err(fail)?;
    }
    Ok(svg)
}

/// Draws one bar per feature set and writes the SVG to `out`; see
/// [`render_bars`].
///
/// The file is written beside `out` under a temporary name and renamed
/// into place, replacing any file there; a failure leaves a previous
/// `out` as it was and no partial file behind.
pub fn bars(
    bars: &[(String, f64, f64)],
    metric: &str,
    title: &str,
    out: &Path,
) -> Result<()> {
    let svg = render_bars(bars, metric, title)?;
    write(&svg, out)
}

/// The SVG document [`bars`] writes, as a string.
///
/// Each entry of `bars` is a feature set's name, mean score and standard
/// deviation, as fractions, drawn in the order given: a bar from zero to
/// the mean in percent, a black ±1 sd whisker, and the mean and sd
/// written above it. Names go under the bars, wrapped at spaces and
/// punctuation onto up to three lines (a longer name is cut with an
/// ellipsis there, and shown in full in the legend up to 60
/// characters). The y axis is titled `metric`, with " (%)" added unless
/// it already holds a `%`.
///
/// Fails on no bars, a score that is not a finite number, or a negative
/// standard deviation.
pub fn render_bars(
    bars: &[(String, f64, f64)],
    metric: &str,
    title: &str,
) -> Result<String> {
    if bars.is_empty() {
        bail!("no bars to plot");
    }
    let mut ymin = 0.0_f64;
    let mut ymax = 0.0_f64;
    for (name, mean, sd) in bars {
        let (mean, sd) = check_score(*mean, *sd)
            .with_context(|| format!("the bar {name:?}"))?;
        ymin = ymin.min(mean - sd);
        ymax = ymax.max(mean + sd);
    }
    // Room above the tallest whisker for its value label, but no more
    // than 100% unless the data itself goes beyond.
    let (mut lo, mut hi) = value_range(ymin, ymax, 0.1);
    if ymin >= 0.0 {
        lo = 0.0;
    }
    if ymax <= 100.0 {
        hi = hi.min(100.0);
    }
    let yaxis = LinearAxis::new(lo, hi);

    let n = bars.len();
    let n32 = i32::try_from(n).ok().filter(|&n| n < 1 << 16);
    let n32 = n32.context("too many bars to draw")?;
    let slot = SLOT.max(BARS_MIN_WIDTH / n32);
    let per_line =
        ((f64::from(slot - 10) / char_px(TICK.size)) as usize).max(1);
    let labels: Vec<Vec<String>> = bars
        .iter()
        .map(|(name, _, _)| wrap(name, per_line, LABEL_LINES))
        .collect();
    let lines = labels.iter().map(Vec::len).max().unwrap_or(0).max(1) as i32;

    let left = y_axis_left(&yaxis);
    let frame = Frame {
        left,
        top: PLOT_TOP,
        right: left + slot * n32,
        bottom: PLOT_TOP + BARS_HEIGHT,
    };
    let mut legend: Vec<(Glyph, String)> = bars
        .iter()
        .enumerate()
        .map(|(i, (name, _, _))| (Glyph::Bar(i), shorten(name, MAX_NAME)))
        .collect();
    legend.push((Glyph::Whisker, "whiskers: ±1 sd".to_string()));
    let legend_x = frame.right + LEGEND_GAP;
    let (legend_w, legend_h) = legend_size(&legend);
    let x_title_y = frame.bottom + TICK_LEN + 4 + lines * LINE + 8;
    let width = (legend_x + legend_w + MARGIN).max(title_width(title));
    let height = (x_title_y + LINE + MARGIN).max(PLOT_TOP + legend_h + MARGIN);

    let mut svg = String::new();
    {
        let area = canvas(&mut svg, width, height)?;
        draw_y_axis(&area, &frame, &yaxis, &percent_title(metric))?;
        let zero = yaxis.at(&frame, 0.0);
        for (i, ((_, mean, sd), label)) in bars.iter().zip(&labels).enumerate()
        {
            let (mean, sd) = (100.0 * mean, 100.0 * sd);
            let centre = frame.left + slot * i as i32 + slot / 2;
            let y = yaxis.at(&frame, mean);
            let corners = [
                (centre - BAR_WIDTH / 2, y.min(zero)),
                (centre + BAR_WIDTH / 2, y.max(zero)),
            ];
            area.draw(&Rectangle::new(corners, fill_of(colour(i)).filled()))
                .map_err(fail)?;
            area.draw(&Rectangle::new(corners, colour(i).stroke_width(1)))
                .map_err(fail)?;
            let top = yaxis.at(&frame, mean + sd);
            let bottom = yaxis.at(&frame, mean - sd);
            error_bar(&area, centre, top, bottom, WHISKER_CAP, INK, 1)?;
            let value = format!("{mean:.1} ± {sd:.1}");
            let at = (centre, top.min(y) - 4);
            text(&area, &value, at, VALUE, BOTTOM_CENTER, &INK)?;

            let tick = vec![
                (centre, frame.bottom),
                (centre, frame.bottom + TICK_LEN),
            ];
            line(&area, tick, INK, 1)?;
            for (row, part) in label.iter().enumerate() {
                let y = frame.bottom + TICK_LEN + 4 + row as i32 * LINE;
                text(&area, part, (centre, y), TICK, TOP_CENTER, &INK)?;
            }
        }
        axes(&area, &frame)?;
        let at = ((frame.left + frame.right) / 2, x_title_y);
        text(&area, "feature set", at, AXIS, TOP_CENTER, &INK)?;
        draw_legend(&area, (legend_x, frame.top), &legend)?;
        draw_title(&area, title, width)?;
        area.present().map_err(fail)?;
    }
    Ok(svg)
}

/// Writes `svg` to `out` through a temporary file beside it.
fn write(svg: &str, out: &Path) -> Result<()> {
    let mut file = AtomicFile::create(out, true)?;
    file.writer()
        .write_all(svg.as_bytes())
        .with_context(|| format!("{}: cannot write", out.display()))?;
    file.commit()
}

// Layout, in pixels unless said otherwise.

/// Space around the whole image.
const MARGIN: i32 = 16;
/// The top of the plot area, below the title.
const PLOT_TOP: i32 = 64;
/// The height of one line of tick-label text.
const LINE: i32 = 15;
/// The length of a major tick mark.
const TICK_LEN: i32 = 6;
/// The learning curve's plot area.
const CURVE_WIDTH: i32 = 560;
/// The learning curve's plot area.
const CURVE_HEIGHT: i32 = 340;
/// Space at either end of the log axis, so that markers at the ends do
/// not sit on the frame.
const X_PAD: i32 = 16;
/// How far apart series are shifted at a shared size, and the most the
/// first and last may be apart.
const DODGE: f64 = 3.0;
const SPREAD: f64 = 18.0;
/// Half the width of an error bar's caps.
const CAP: i32 = 4;
/// The size of a curve marker: a circle's radius, half a square's side.
const MARKER: i32 = 4;
/// The bar chart's plot area: the width of one bar's slot, the least
/// width in all, the height.
const SLOT: i32 = 112;
const BARS_MIN_WIDTH: i32 = 336;
const BARS_HEIGHT: i32 = 320;
/// The width of a bar and half that of its whisker's caps.
const BAR_WIDTH: i32 = 60;
const WHISKER_CAP: i32 = 8;
/// The most lines a bar's label is wrapped onto.
const LABEL_LINES: usize = 3;
/// Space between the plot area and the legend, and the legend's rows.
const LEGEND_GAP: i32 = 24;
const LEGEND_ROW: i32 = 22;
/// The longest name shown in a legend, in characters.
const MAX_NAME: usize = 60;
/// The narrowest score axis, in percentage points, so that equal scores
/// still get a readable range.
const MIN_SPAN: f64 = 2.0;
/// The estimated advance of one character, as a fraction of the SVG font
/// size (plotters writes its size over 1.24), as in the dendrogram.
const CHAR_WIDTH: f64 = 0.62;

/// Text styles: sizes in plotters units.
#[derive(Clone, Copy)]
struct Font {
    size: f64,
    bold: bool,
    rotated: bool,
}

const TITLE: Font = Font { size: 21.0, bold: true, rotated: false };
const AXIS: Font = Font { size: 17.0, bold: false, rotated: false };
const AXIS_ROTATED: Font = Font { size: 17.0, bold: false, rotated: true };
const TICK: Font = Font { size: 15.0, bold: false, rotated: false };
const LEGEND: Font = Font { size: 15.0, bold: false, rotated: false };
const VALUE: Font = Font { size: 13.0, bold: false, rotated: false };

const TOP_CENTER: (HPos, VPos) = (HPos::Center, VPos::Top);
const BOTTOM_CENTER: (HPos, VPos) = (HPos::Center, VPos::Bottom);
const CENTER: (HPos, VPos) = (HPos::Center, VPos::Center);
const LEFT_CENTER: (HPos, VPos) = (HPos::Left, VPos::Center);
const RIGHT_CENTER: (HPos, VPos) = (HPos::Right, VPos::Center);

/// Text, axes and whiskers.
const INK: RGBColor = RGBColor(0, 0, 0);
/// Grid lines at major ticks, and at minor ones.
const GRID: RGBColor = RGBColor(222, 222, 222);
const MINOR_GRID: RGBColor = RGBColor(240, 240, 240);
/// The legend's frame.
const LEGEND_FRAME: RGBColor = RGBColor(190, 190, 190);
/// The baseline: the first series or bar.
const BASELINE: RGBColor = RGBColor(64, 64, 64);
/// The others, in turn: Okabe and Ito's colour-blind-safe palette
/// without its black (the baseline is dark grey) and its yellow (too
/// pale on white).
const PALETTE: [RGBColor; 6] = [
    RGBColor(0, 114, 178),
    RGBColor(213, 94, 0),
    RGBColor(0, 158, 115),
    RGBColor(204, 121, 167),
    RGBColor(230, 159, 0),
    RGBColor(86, 180, 233),
];

/// The colour of series or bar `i`.
fn colour(i: usize) -> RGBColor {
    match i {
        0 => BASELINE,
        _ => PALETTE[(i - 1) % PALETTE.len()],
    }
}

/// A bar's fill: its colour lightened a third of the way to white, so
/// that the black whisker shows against it.
fn fill_of(c: RGBColor) -> RGBColor {
    let mix = |v: u8| ((u16::from(v) * 2 + 255) / 3) as u8;
    RGBColor(mix(c.0), mix(c.1), mix(c.2))
}

/// Marker shapes, taken in turn by the series.
#[derive(Clone, Copy)]
enum Shape {
    Circle,
    Square,
    TriangleUp,
    Diamond,
    TriangleDown,
}

/// The marker shape of series `i`.
fn shape(i: usize) -> Shape {
    const SHAPES: [Shape; 5] = [
        Shape::Circle,
        Shape::Square,
        Shape::TriangleUp,
        Shape::Diamond,
        Shape::TriangleDown,
    ];
    SHAPES[i % SHAPES.len()]
}

/// Checks the series and returns the range of sizes and of the error
/// bars' ends in percent.
fn curve_extent(series: &[Series]) -> Result<(f64, f64, f64, f64)> {
    if series.is_empty() {
        bail!("no series to plot");
    }
    let (mut xmin, mut xmax) = (f64::INFINITY, f64::NEG_INFINITY);
    let (mut ymin, mut ymax) = (f64::INFINITY, f64::NEG_INFINITY);
    for s in series {
        if s.points.is_empty() {
            bail!("the series {:?} has no points", s.name);
        }
        for p in &s.points {
            let at = || format!("the series {:?} at size {}", s.name, p.x);
            // Written so that NaN fails too.
            if !(MIN_SIZE..=MAX_SIZE).contains(&p.x) {
                return Err(anyhow!(
                    "training sizes must be from {MIN_SIZE} to {MAX_SIZE} \
                     on a log axis"
                ))
                .with_context(at);
            }
            let (mean, sd) = check_score(p.mean, p.sd).with_context(at)?;
            xmin = xmin.min(p.x);
            xmax = xmax.max(p.x);
            ymin = ymin.min(mean - sd);
            ymax = ymax.max(mean + sd);
        }
    }
    Ok((xmin, xmax, ymin, ymax))
}

/// A score and its standard deviation in percent, checked to be finite
/// with the deviation not negative.
fn check_score(mean: f64, sd: f64) -> Result<(f64, f64)> {
    let (mean, sd) = (100.0 * mean, 100.0 * sd);
    if !mean.is_finite() || !sd.is_finite() || !(mean + sd).is_finite() {
        bail!("scores must be finite numbers, not {mean}% ± {sd}%");
    }
    if sd < 0.0 {
        bail!("a standard deviation cannot be negative ({sd}%)");
    }
    // Clear the sign of a negative zero, which would print as "-0.0".
    Ok((mean + 0.0, sd + 0.0))
}

/// The score axis for data from `lo` to `hi`: `pad` of the data's span
/// added at each end, kept within 0 to 100 where the data is, and at
/// least [`MIN_SPAN`] wide.
fn value_range(lo: f64, hi: f64, pad: f64) -> (f64, f64) {
    let span = hi - lo;
    let (mut a, mut b) = if span < MIN_SPAN {
        let mid = (lo + hi) / 2.0;
        (mid - MIN_SPAN / 2.0, mid + MIN_SPAN / 2.0)
    } else {
        (lo - pad * span, hi + pad * span)
    };
    // Slide a range that pokes out of 0..100 back in where the data
    // allows, keeping its width, then cut what still pokes out.
    if a < 0.0 && lo >= 0.0 {
        b -= a;
        a = 0.0;
    }
    if b > 100.0 && hi <= 100.0 {
        a -= b - 100.0;
        if lo >= 0.0 {
            a = a.max(0.0);
        }
        b = 100.0;
    }
    (a.min(lo), b.max(hi))
}

/// The plot area.
struct Frame {
    left: i32,
    top: i32,
    right: i32,
    bottom: i32,
}

/// A linear axis with "nice" ticks (1, 2 or 5 times a power of ten)
/// and ends on ticks.
struct LinearAxis {
    lo: f64,
    hi: f64,
    ticks: Vec<(f64, String)>,
}

impl LinearAxis {
    /// An axis covering `lo` to `hi`, `lo < hi`, with five to ten ticks.
    fn new(lo: f64, hi: f64) -> LinearAxis {
        let raw = (hi - lo) / 5.0;
        let exp = raw.log10().floor() as i32;
        let base = 10f64.powi(exp);
        let (m, exp) = match raw / base {
            r if r <= 1.0 + 1e-9 => (1.0, exp),
            r if r <= 2.0 + 1e-9 => (2.0, exp),
            r if r <= 5.0 + 1e-9 => (5.0, exp),
            _ => (1.0, exp + 1),
        };
        let step = m * 10f64.powi(exp);
        let decimals = usize::try_from(-exp).unwrap_or(0);
        let first = (lo / step + 1e-9).floor() as i64;
        let last = (hi / step - 1e-9).ceil() as i64;
        let ticks = (first..=last)
            .map(|k| {
                let v = k as f64 * step;
                (v, format!("{:.*}", decimals, v + 0.0))
            })
            .collect();
        LinearAxis { lo: first as f64 * step, hi: last as f64 * step, ticks }
    }

    /// The pixel row of value `v`.
    fn at(&self, frame: &Frame, v: f64) -> i32 {
        let height = f64::from(frame.bottom - frame.top);
        px(f64::from(frame.bottom)
            - (v - self.lo) / (self.hi - self.lo) * height)
    }
}

/// A log axis with ticks at 1, 2 and 5 in each decade, from such a
/// tick at or below the smallest value to one at or above the largest.
struct LogAxis {
    /// The ends, as base-10 logarithms.
    lo: f64,
    hi: f64,
    ticks: Vec<LogTick>,
}

/// A tick of a [`LogAxis`].
struct LogTick {
    /// The base-10 logarithm of its value.
    log: f64,
    /// Its exponent, if it is a power of ten.
    power: Option<i32>,
    /// Its value with thousands separators.
    label: String,
}

/// Which ticks of a [`LogAxis`] are drawn and labelled at some width.
struct LogPlan {
    /// Whether every tick is labelled, not only powers of ten.
    all: bool,
    /// Otherwise the powers of ten labelled are those whose exponent is
    /// a multiple of this.
    every: i32,
    /// Whether the 2 and 5 ticks are drawn at all.
    minor: bool,
}

impl LogPlan {
    fn labels(&self, tick: &LogTick) -> bool {
        self.all || tick.power.is_some_and(|e| e.rem_euclid(self.every) == 0)
    }
}

impl LogAxis {
    /// The axis for values from `min` to `max`, both from
    /// [`MIN_SIZE`] to [`MAX_SIZE`]. A single value gets the ticks on
    /// either side of it.
    fn new(min: f64, max: f64) -> Result<LogAxis> {
        let first = min.log10().floor() as i32 - 1;
        let last = max.log10().floor() as i32 + 1;
        let mut candidates = Vec::new();
        for e in first..=last {
            for m in [1u8, 2, 5] {
                // Parsing the decimal gives the value exactly rounded,
                // which 10^e by multiplication would not be below 1.
                let value: f64 = format!("{m}e{e}")
                    .parse()
                    .context("cannot place the size axis ticks")?;
                let log = f64::from(m).log10() + f64::from(e);
                candidates.push((value, log, m, e));
            }
        }
        let tolerance = 1e-12;
        let below = candidates
            .iter()
            .rposition(|c| c.0 <= min * (1.0 + tolerance))
            .context("cannot place the size axis ticks")?;
        let above = candidates
            .iter()
            .position(|c| c.0 >= max * (1.0 - tolerance))
            .context("cannot place the size axis ticks")?;
        let (below, above) = if below >= above {
            (below.saturating_sub(1), (above + 1).min(candidates.len() - 1))
        } else {
            (below, above)
        };
        let ticks = candidates[below..=above]
            .iter()
            .map(|&(_, log, m, e)| LogTick {
                log,
                power: (m == 1).then_some(e),
                label: decimal(m, e),
            })
            .collect();
        Ok(LogAxis { lo: candidates[below].1, hi: candidates[above].1, ticks })
    }

    /// Which ticks to draw and label over `width` pixels: labels must
    /// not run into each other, and minor ticks need some room.
    fn plan(&self, width: f64) -> LogPlan {
        let per_decade = width / (self.hi - self.lo);
        let widest = self.ticks.iter().map(|t| t.label.chars().count()).max();
        let needed = text_width(widest.unwrap_or(0), TICK.size) as f64 + 10.0;
        // The closest 1-2-5 ticks are log10(2) of a decade apart.
        let closest = per_decade * 2f64.log10();
        LogPlan {
            all: closest >= needed,
            every: ((needed / per_decade).ceil() as i32).max(1),
            minor: closest >= 6.0,
        }
    }
}

/// `m` times ten to the `e`, written out in full with thousands
/// separators: `decimal(2, 3)` is "2,000", `decimal(5, -2)` is "0.05".
fn decimal(m: u8, e: i32) -> String {
    let zeros = |n: i32| "0".repeat(usize::try_from(n).unwrap_or(0));
    if e >= 0 {
        thousands(&format!("{m}{}", zeros(e)))
    } else {
        format!("0.{}{m}", zeros(-e - 1))
    }
}

/// A string of digits with a comma every three from the right.
fn thousands(digits: &str) -> String {
    let mut out = String::with_capacity(digits.len() * 4 / 3);
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i) % 3 == 0 {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// The y axis title: the metric with its unit.
fn percent_title(metric: &str) -> String {
    let metric = metric.trim();
    if metric.is_empty() {
        "score (%)".to_string()
    } else if metric.contains('%') {
        metric.to_string()
    } else {
        format!("{metric} (%)")
    }
}

/// Where the plot area starts so that the y axis title and tick labels
/// fit on its left.
fn y_axis_left(axis: &LinearAxis) -> i32 {
    let widest = axis.ticks.iter().map(|(_, l)| l.chars().count()).max();
    let labels = text_width(widest.unwrap_or(0), TICK.size);
    MARGIN + LINE + 14 + labels + TICK_LEN + 4
}

/// The least image width that fits `title`.
fn title_width(title: &str) -> i32 {
    2 * MARGIN + text_width(title.chars().count(), TITLE.size)
}

/// The size of a legend box holding `entries`.
fn legend_size(entries: &[(Glyph, String)]) -> (i32, i32) {
    let widest = entries.iter().map(|(_, t)| t.chars().count()).max();
    let width =
        LEGEND_TEXT + text_width(widest.unwrap_or(0), LEGEND.size) + 10;
    let rows = i32::try_from(entries.len()).unwrap_or(i32::MAX / LEGEND_ROW);
    (width, rows * LEGEND_ROW + 12)
}

/// Where legend text starts, from the legend's left edge.
const LEGEND_TEXT: i32 = 48;

/// What a legend row shows before its text.
enum Glyph {
    /// Series `i`'s line and marker.
    Line(usize),
    /// Bar `i`'s swatch.
    Bar(usize),
    /// An error bar in the first series' colour.
    ErrorBar,
    /// A black whisker.
    Whisker,
}

/// The drawing surface.
type Area<'a> = DrawingArea<SVGBackend<'a>, Shift>;

/// A white canvas of `width` by `height` pixels drawing into `svg`.
fn canvas(svg: &mut String, width: i32, height: i32) -> Result<Area<'_>> {
    let size = |v: i32| u32::try_from(v).context("the plot is too large");
    let size = (size(width)?, size(height)?);
    let area = SVGBackend::with_string(svg, size).into_drawing_area();
    area.fill(&WHITE).map_err(fail)?;
    Ok(area)
}

fn fail(e: impl std::fmt::Display) -> anyhow::Error {
    anyhow!("cannot draw the plot: {e}")
}

/// Rounds to the nearest pixel.
fn px(v: f64) -> i32 {
    v.round() as i32
}

/// The estimated advance of one character at font size `size`.
fn char_px(size: f64) -> f64 {
    size / 1.24 * CHAR_WIDTH
}

/// The estimated width of `chars` characters at font size `size`.
fn text_width(chars: usize, size: f64) -> i32 {
    (chars as f64 * char_px(size)).ceil() as i32
}

/// A polyline.
fn line(
    area: &Area,
    points: Vec<(i32, i32)>,
    colour: RGBColor,
    width: u32,
) -> Result<()> {
    let style = ShapeStyle {
        color: colour.to_rgba(),
        filled: false,
        stroke_width: width,
    };
    area.draw(&PathElement::new(points, style)).map_err(fail)
}

/// An error bar at column `x` from row `top` to row `bottom`, drawn as
/// one polyline (top cap, stem, bottom cap) so that each bar is a single
/// element of the SVG.
fn error_bar(
    area: &Area,
    x: i32,
    top: i32,
    bottom: i32,
    half: i32,
    colour: RGBColor,
    width: u32,
) -> Result<()> {
    let points = vec![
        (x - half, top),
        (x + half, top),
        (x, top),
        (x, bottom),
        (x - half, bottom),
        (x + half, bottom),
    ];
    line(area, points, colour, width)
}

/// A filled marker centred on `at`.
fn marker(
    area: &Area,
    shape: Shape,
    (x, y): (i32, i32),
    colour: RGBColor,
) -> Result<()> {
    let style = colour.filled();
    let r = MARKER;
    // The pointed shapes are a pixel larger, to look as big as the
    // circle and the square.
    let s = MARKER + 1;
    let polygon = |points: Vec<(i32, i32)>| {
        area.draw(&Polygon::new(points, style)).map_err(fail)
    };
    match shape {
        Shape::Circle => {
            area.draw(&Circle::new((x, y), r, style)).map_err(fail)
        }
        Shape::Square => polygon(vec![
            (x - r, y - r),
            (x + r, y - r),
            (x + r, y + r),
            (x - r, y + r),
        ]),
        Shape::TriangleUp => {
            polygon(vec![(x, y - s), (x + s, y + s - 1), (x - s, y + s - 1)])
        }
        Shape::Diamond => {
            polygon(vec![(x, y - s), (x + s, y), (x, y + s), (x - s, y)])
        }
        Shape::TriangleDown => {
            polygon(vec![(x, y + s), (x + s, y - s + 1), (x - s, y - s + 1)])
        }
    }
}

/// Text anchored at `at`.
fn text(
    area: &Area,
    s: &str,
    at: (i32, i32),
    font: Font,
    (h, v): (HPos, VPos),
    colour: &RGBColor,
) -> Result<()> {
    let mut desc = ("sans-serif", font.size).into_font();
    if font.bold {
        desc = desc.style(FontStyle::Bold);
    }
    let mut style =
        desc.into_text_style(area).pos(Pos::new(h, v)).color(colour);
    if font.rotated {
        style = style.transform(FontTransform::Rotate270);
    }
    area.draw(&Text::new(s, at, style)).map_err(fail)
}

/// The left and bottom axis lines.
fn axes(area: &Area, frame: &Frame) -> Result<()> {
    let points = vec![
        (frame.left, frame.top),
        (frame.left, frame.bottom),
        (frame.right, frame.bottom),
    ];
    line(area, points, INK, 1)
}

/// The score axis: grid lines, ticks, labels and the rotated title.
fn draw_y_axis(
    area: &Area,
    frame: &Frame,
    axis: &LinearAxis,
    title: &str,
) -> Result<()> {
    for (v, label) in &axis.ticks {
        let y = axis.at(frame, *v);
        if y != frame.bottom {
            line(area, vec![(frame.left, y), (frame.right, y)], GRID, 1)?;
        }
        line(area, vec![(frame.left - TICK_LEN, y), (frame.left, y)], INK, 1)?;
        let at = (frame.left - TICK_LEN - 4, y);
        text(area, label, at, TICK, RIGHT_CENTER, &INK)?;
    }
    let at = (MARGIN + LINE / 2 + 2, (frame.top + frame.bottom) / 2);
    text(area, title, at, AXIS_ROTATED, CENTER, &INK)
}

/// A legend box with its top left corner at `at`.
fn draw_legend(
    area: &Area,
    (x, y): (i32, i32),
    entries: &[(Glyph, String)],
) -> Result<()> {
    let (width, height) = legend_size(entries);
    let frame = [(x, y), (x + width, y + height)];
    area.draw(&Rectangle::new(frame, LEGEND_FRAME.stroke_width(1)))
        .map_err(fail)?;
    let glyph_x = x + LEGEND_TEXT / 2;
    for (row, (glyph, label)) in entries.iter().enumerate() {
        let cy = y + 6 + row as i32 * LEGEND_ROW + LEGEND_ROW / 2;
        match *glyph {
            Glyph::Line(i) => {
                let points = vec![(glyph_x - 15, cy), (glyph_x + 15, cy)];
                line(area, points, colour(i), 2)?;
                marker(area, shape(i), (glyph_x, cy), colour(i))?;
            }
            Glyph::Bar(i) => {
                let corners = [(glyph_x - 9, cy - 6), (glyph_x + 9, cy + 6)];
                area.draw(&Rectangle::new(
                    corners,
                    fill_of(colour(i)).filled(),
                ))
                .map_err(fail)?;
                area.draw(&Rectangle::new(corners, colour(i).stroke_width(1)))
                    .map_err(fail)?;
            }
            Glyph::ErrorBar => {
                error_bar(area, glyph_x, cy - 7, cy + 7, CAP, colour(0), 1)?
            }
            Glyph::Whisker => {
                error_bar(area, glyph_x, cy - 7, cy + 7, WHISKER_CAP, INK, 1)?
            }
        }
        let at = (x + LEGEND_TEXT, cy);
        text(area, label, at, LEGEND, LEFT_CENTER, &INK)?;
    }
    Ok(())
}

/// The title, centred on top.
fn draw_title(area: &Area, title: &str, width: i32) -> Result<()> {
    text(area, title, (width / 2, MARGIN + 4), TITLE, TOP_CENTER, &INK)
}

/// `name`, cut to `max` characters with an ellipsis.
fn shorten(name: &str, max: usize) -> String {
    match name.char_indices().nth(max.saturating_sub(1)) {
        Some((end, _)) if name.chars().count() > max => {
            format!("{}…", &name[..end])
        }
        _ => name.to_string(),
    }
}

/// `name` broken into lines of at most `width` characters, after
/// spaces and punctuation where it can be and anywhere where it must;
/// lines beyond `max_lines` are dropped and the last one kept ends in
/// an ellipsis.
fn wrap(name: &str, width: usize, max_lines: usize) -> Vec<String> {
    let width = width.max(1);
    // Pieces that end just after a break character.
    let mut pieces: Vec<String> = Vec::new();
    let mut piece = String::new();
    for c in name.chars() {
        piece.push(c);
        if matches!(c, ' ' | '+' | ',' | '/' | '_' | '-' | ';' | ':' | '|') {
            pieces.push(std::mem::take(&mut piece));
        }
    }
    if !piece.is_empty() {
        pieces.push(piece);
    }
    let mut lines: Vec<String> = Vec::new();
    let mut current = String::new();
    for piece in pieces {
        let len = current.chars().count();
        if len + piece.trim_end().chars().count() <= width {
            current.push_str(&piece);
            continue;
        }
        if !current.trim().is_empty() {
            lines.push(std::mem::take(&mut current));
        }
        current.clear();
        // A piece too long for a line of its own is cut.
        let chars: Vec<char> = piece.chars().collect();
        let mut chunks = chars.chunks(width).peekable();
        while let Some(chunk) = chunks.next() {
            let chunk: String = chunk.iter().collect();
            if chunks.peek().is_some() {
                lines.push(chunk);
            } else {
                current = chunk;
            }
        }
    }
    if !current.trim().is_empty() {
        lines.push(current);
    }
    let mut lines: Vec<String> =
        lines.into_iter().map(|l| l.trim().to_string()).collect();
    if lines.len() > max_lines {
        lines.truncate(max_lines);
        if let Some(last) = lines.last_mut() {
            let kept: String =
                last.chars().take(width.saturating_sub(1)).collect();
            *last = format!("{kept}…");
        }
    }
    lines
}

#[cfg(test)]
mod tests {
    use super::*;

    fn point(x: f64, mean: f64, sd: f64) -> Point {
        Point { x, mean, sd }
    }

    /// Two feature sets at three sizes.
    fn two_series() -> Vec<Series> {
        vec![
            Series {
                name: "baseline".to_string(),
                points: vec![
                    point(100.0, 0.50, 0.02),
                    point(1000.0, 0.70, 0.01),
                    point(10000.0, 0.80, 0.0),
                ],
            },
            Series {
                name: "clusters & words".to_string(),
                // Out of order: the line still runs by size.
                points: vec![
                    point(10000.0, 0.85, 0.005),
                    point(100.0, 0.60, 0.03),
                    point(1000.0, 0.75, 0.01),
                ],
            },
        ]
    }

    use crate::svg_test::texts;

    /// The points of every `<polyline>`, in document order.
    fn polylines(svg: &str) -> Vec<Vec<(i32, i32)>> {
        svg.split("<polyline")
            .skip(1)
            .map(|rest| {
                let at = rest.find("points=\"").unwrap() + 8;
                let end = at + rest[at..].find('"').unwrap();
                rest[at..end]
                    .split_whitespace()
                    .map(|xy| {
                        let (x, y) = xy.split_once(',').unwrap();
                        (x.parse().unwrap(), y.parse().unwrap())
                    })
                    .collect()
            })
            .collect()
    }

    /// The polylines shaped like an error bar: a cap, a stem from the
    /// cap's middle, and a second cap of the same width. Returns each
    /// one's column and height in pixels.
    fn error_bars(svg: &str) -> Vec<(i32, i32)> {
        polylines(svg)
            .into_iter()
            .filter_map(|p| match p[..] {
                [(a, t1), (b, t2), (x, t3), (x2, b1), (c, b2), (d, b3)]
                    if t1 == t2
                        && t2 == t3
                        && b1 == b2
                        && b2 == b3
                        && x == x2
                        && a == c
                        && b == d
                        && x - a == b - x
                        && a < b =>
                {
                    Some((x, b1 - t1))
                }
                _ => None,
            })
            .collect()
    }

    #[test]
    fn curve_has_names_titles_ticks_and_a_legend() {
        let svg = render_learning_curve(
            &two_series(),
            "entity F1 (%)",
            "Entity F1 by training size",
        )
        .unwrap();
        assert!(svg.starts_with("<svg"), "{svg}");
        assert!(svg.trim_end().ends_with("</svg>"));
        assert!(!svg.contains("NaN"));
        let shown = texts(&svg);
        for want in [
            "Entity F1 by training size",
            "entity F1 (%)",
            "training size (sentences, log scale)",
            "baseline",
            "clusters &amp; words",
            "error bars: ±1 sd",
            "100",
            "1,000",
            "10,000",
        ] {
            assert!(shown.iter().any(|t| t == want), "{want:?} in {shown:?}");
        }
        // Two decades leave room to label the 2 and 5 ticks.
        for want in ["200", "500", "2,000", "5,000"] {
            assert!(shown.iter().any(|t| t == want), "{want:?} in {shown:?}");
        }
        // The baseline is dark grey; the second series is blue.
        assert!(svg.contains("stroke=\"#404040\" stroke-width=\"2\""));
        assert!(svg.contains("stroke=\"#0072B2\" stroke-width=\"2\""));
    }

    #[test]
    fn one_error_bar_per_point_as_tall_as_two_sd() {
        let series = two_series();
        let svg = render_learning_curve(&series, "F1", "t").unwrap();
        let bars = error_bars(&svg);
        // Six points and the legend's sample.
        assert_eq!(bars.len(), 7, "{bars:?}");
        let heights: Vec<i32> = bars[..6].iter().map(|b| b.1).collect();
        // Each bar spans twice its sd; both ends are rounded to whole
        // pixels, so allow a pixel and a half. The sds in points, in
        // order: the baseline sorted by size, then the second series.
        let sds = [2.0, 1.0, 0.0, 3.0, 1.0, 0.5];
        let per_point = f64::from(heights[3]) / 3.0;
        for (h, sd) in heights.iter().zip(sds) {
            let want = sd * per_point;
            assert!((f64::from(*h) - want).abs() <= 1.5, "{heights:?}");
        }
        assert_eq!(heights[2], 0);
        // Series sharing a size are set a little apart.
        assert_ne!(bars[0].0, bars[3].0);
        assert!((bars[0].0 - bars[3].0).abs() <= 6);
        // The "metric" got its unit.
        assert!(texts(&svg).iter().any(|t| t == "F1 (%)"));
    }

    #[test]
    fn wide_size_range_labels_powers_of_ten() {
        let points = [1.0, 10.0, 100.0, 1e3, 1e4, 1e5]
            .map(|x| point(x, 0.5, 0.01))
            .to_vec();
        let series = [Series { name: "b".to_string(), points }];
        let svg = render_learning_curve(&series, "F1", "t").unwrap();
        let shown = texts(&svg);
        for want in ["1", "10", "100", "1,000", "10,000", "100,000"] {
            assert!(shown.iter().any(|t| t == want), "{want:?} in {shown:?}");
        }
        // No room for "20,000" between 10,000 and 100,000.
        assert!(!shown.iter().any(|t| t == "20,000"), "{shown:?}");
        assert_eq!(error_bars(&svg).len(), 7);
    }

    #[test]
    fn log_axis_ends_on_ticks() {
        let axis = LogAxis::new(1.0, 1e5).unwrap();
        assert_eq!((axis.lo, axis.hi), (0.0, 5.0));
        let labels: Vec<&str> =
            axis.ticks.iter().map(|t| t.label.as_str()).collect();
        assert_eq!(labels[..4], ["1", "2", "5", "10"]);
        assert_eq!(labels.last(), Some(&"100,000"));
        assert_eq!(labels.len(), 16);

        let axis = LogAxis::new(250.0, 5000.0).unwrap();
        let labels: Vec<&str> =
            axis.ticks.iter().map(|t| t.label.as_str()).collect();
        assert_eq!(labels, ["200", "500", "1,000", "2,000", "5,000"]);
        assert!(axis.plan(500.0).all);

        // One size: the ticks either side of it.
        let axis = LogAxis::new(1000.0, 1000.0).unwrap();
        let labels: Vec<&str> =
            axis.ticks.iter().map(|t| t.label.as_str()).collect();
        assert_eq!(labels, ["500", "1,000", "2,000"]);
        let axis = LogAxis::new(300.0, 300.0).unwrap();
        let labels: Vec<&str> =
            axis.ticks.iter().map(|t| t.label.as_str()).collect();
        assert_eq!(labels, ["200", "500"]);

        let axis = LogAxis::new(0.03, 0.03).unwrap();
        let labels: Vec<&str> =
            axis.ticks.iter().map(|t| t.label.as_str()).collect();
        assert_eq!(labels, ["0.02", "0.05"]);
    }

    #[test]
    fn numbers_get_thousands_separators() {
        assert_eq!(thousands("1"), "1");
        assert_eq!(thousands("250"), "250");
        assert_eq!(thousands("1000"), "1,000");
        assert_eq!(thousands("100000"), "100,000");
        assert_eq!(thousands("1000000"), "1,000,000");
        assert_eq!(decimal(5, 3), "5,000");
        assert_eq!(decimal(1, 0), "1");
        assert_eq!(decimal(2, -1), "0.2");
    }

    #[test]
    fn single_point_and_equal_scores_get_a_padded_axis() {
        let series = [Series {
            name: "only".to_string(),
            points: vec![point(500.0, 0.9, 0.0)],
        }];
        let svg = render_learning_curve(&series, "F1", "one point").unwrap();
        assert!(!svg.contains("NaN") && !svg.contains("inf"));
        assert_eq!(error_bars(&svg).len(), 2);
        let shown = texts(&svg);
        // A 2-point range around 90 with ticks every half point.
        for want in ["89.0", "90.0", "91.0", "200", "500", "1,000"] {
            assert!(shown.iter().any(|t| t == want), "{want:?} in {shown:?}");
        }

        // Equal scores at 100%: the axis stays at or below 100.
        let series = [Series {
            name: "perfect".to_string(),
            points: vec![point(10.0, 1.0, 0.0), point(20.0, 1.0, 0.0)],
        }];
        let svg = render_learning_curve(&series, "F1", "t").unwrap();
        let shown = texts(&svg);
        assert!(shown.iter().any(|t| t == "100.0"), "{shown:?}");
        assert!(shown.iter().any(|t| t == "98.0"), "{shown:?}");
        assert!(!shown.iter().any(|t| t == "100.5"), "{shown:?}");

        // All zero: the axis starts at 0.
        let (lo, hi) = value_range(0.0, 0.0, 0.05);
        assert_eq!((lo, hi), (0.0, 2.0));
    }

    #[test]
    fn bad_input_is_refused_with_its_series() {
        let mut series = two_series();
        series[1].points[0].mean = f64::NAN;
        let err = render_learning_curve(&series, "F1", "t").unwrap_err();
        let err = format!("{err:#}");
        assert!(err.contains("clusters & words"), "{err}");
        assert!(err.contains("finite"), "{err}");

        let mut series = two_series();
        series[0].points[1].sd = -0.1;
        let err = format!(
            "{:#}",
            render_learning_curve(&series, "F1", "t").unwrap_err()
        );
        assert!(err.contains("baseline") && err.contains("negative"), "{err}");

        let mut series = two_series();
        series[0].points[0].x = 0.0;
        let err = format!(
            "{:#}",
            render_learning_curve(&series, "F1", "t").unwrap_err()
        );
        assert!(err.contains("log axis"), "{err}");

        let mut series = two_series();
        series[1].points.clear();
        assert!(render_learning_curve(&series, "F1", "t").is_err());
        assert!(render_learning_curve(&[], "F1", "t").is_err());
        assert!(render_bars(&[], "F1", "t").is_err());
        let nan = [("x".to_string(), 0.5, f64::NAN)];
        assert!(render_bars(&nan, "F1", "t").is_err());
    }

    fn some_bars() -> Vec<(String, f64, f64)> {
        vec![
            ("baseline".to_string(), 0.801, 0.012),
            ("+clusters".to_string(), 0.834, 0.0),
            ("+clusters+prefixes 4,6,10,20".to_string(), 0.842, 0.009),
        ]
    }

    #[test]
    fn bars_have_names_values_whiskers_and_a_legend() {
        let svg = render_bars(&some_bars(), "entity F1", "At 10,000").unwrap();
        assert!(!svg.contains("NaN"));
        let shown = texts(&svg);
        for want in [
            "At 10,000",
            "entity F1 (%)",
            "feature set",
            "baseline",
            "+clusters",
            "+clusters+prefixes 4,6,10,20",
            "whiskers: ±1 sd",
            "80.1 ± 1.2",
            "83.4 ± 0.0",
            "84.2 ± 0.9",
            "0",
            "100",
        ] {
            assert!(shown.iter().any(|t| t == want), "{want:?} in {shown:?}");
        }
        // The long name is wrapped under its bar: the lines put together
        // give it back.
        let first = shown
            .iter()
            .position(|t| t == "+clusters+")
            .expect("a wrapped first line");
        let joined: String = shown[first..first + 3].join(" ");
        assert_eq!(joined, "+clusters+ prefixes 4,6, 10,20");
        // One whisker per bar and the legend's sample.
        let bars = error_bars(&svg);
        assert_eq!(bars.len(), 4, "{bars:?}");
        assert_eq!(bars[1].1, 0);
        assert!(bars[0].1 > 0 && bars[2].1 > 0);
    }

    #[test]
    fn same_input_same_bytes() {
        let a = render_learning_curve(&two_series(), "F1", "t").unwrap();
        let b = render_learning_curve(&two_series(), "F1", "t").unwrap();
        assert_eq!(a, b);
        let a = render_bars(&some_bars(), "F1", "t").unwrap();
        let b = render_bars(&some_bars(), "F1", "t").unwrap();
        assert_eq!(a, b);
    }

    #[test]
    fn files_are_written_whole() {
        let dir = tempfile::tempdir().unwrap();
        let curve = dir.path().join("curve.svg");
        let chart = dir.path().join("bars.svg");
        learning_curve(&two_series(), "F1", "t", &curve).unwrap();
        bars(&some_bars(), "F1", "t", &chart).unwrap();
        // A second write replaces the first.
        bars(&some_bars(), "F1", "t", &chart).unwrap();
        assert_eq!(
            std::fs::read_to_string(&curve).unwrap(),
            render_learning_curve(&two_series(), "F1", "t").unwrap()
        );
        assert_eq!(
            std::fs::read_to_string(&chart).unwrap(),
            render_bars(&some_bars(), "F1", "t").unwrap()
        );
        let mut names: Vec<_> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name())
            .collect();
        names.sort();
        assert_eq!(names, ["bars.svg", "curve.svg"]);
    }

    #[test]
    fn names_wrap_at_punctuation() {
        assert_eq!(wrap("baseline", 14, 3), ["baseline"]);
        assert_eq!(wrap("a+b c", 14, 3), ["a+b c"]);
        assert_eq!(
            wrap("word shape+clusters", 10, 3),
            ["word", "shape+", "clusters"]
        );
        assert_eq!(wrap("abcdefghij", 4, 3), ["abcd", "efgh", "ij"]);
        assert_eq!(wrap("abcdefghijklmn", 4, 3), ["abcd", "efgh", "ijk…"]);
        assert_eq!(wrap("", 4, 3), Vec::<String>::new());
        assert_eq!(shorten("short", 60), "short");
        assert_eq!(shorten("abcdef", 4), "abc…");
        assert_eq!(shorten("abcd", 4), "abcd");
    }

    #[test]
    fn colours_cycle_after_the_baseline() {
        assert_eq!(colour(0), BASELINE);
        assert_eq!(colour(1), PALETTE[0]);
        assert_eq!(colour(PALETTE.len() + 1), PALETTE[0]);
    }
}
