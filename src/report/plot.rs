//! Deviation plot of a calibration run, rendered server-side as an SVG string.
//!
//! The plot shows, against the reference temperature `t` (°C, x axis), the
//! deviation of the unit under test (UUT reading minus reference temperature,
//! °C, y axis):
//!
//! - measured points as markers with vertical error bars ±U (expanded
//!   uncertainty); flagged points (residual larger than U) are drawn as a
//!   hollow diamond with a "!" mark, so they differ by shape and text, not
//!   only by colour;
//! - the fitted function as a polyline with its uncertainty band (curve ± U)
//!   as a translucent filled polygon;
//! - tolerance lines, dashed, each labelled at its right end;
//! - a zero line, axes with 1-2-5 tick steps, axis titles, a title and a
//!   legend.
//!
//! # Output
//!
//! A single `<svg>` element (no XML declaration) that can be inlined in an
//! HTML page or served as `image/svg+xml`. All styling uses presentation
//! attributes (`fill`, `stroke`, `font-size`, ...): there is no `style`
//! attribute and no `<style>` element, so the markup is accepted under a
//! Content-Security-Policy of `style-src 'self'`. The element carries
//! `role="img"`, `<title>` and `<desc>` children and `aria-labelledby`
//! pointing at both. Element ids are derived from a hash of the input, so the
//! output is deterministic and two different plots on one page do not share
//! ids. Pixel coordinates are printed with at most two decimals.
//!
//! # Scale rules
//!
//! - **x**: the range of the reference temperatures of the points and of the
//!   curve samples, widened by [`X_MARGIN_FRACTION`] of its span on each
//!   side. Tolerance lines do not widen x; they are cut at the x range.
//! - **y**: the "data range" covers zero, every point's deviation ± U and
//!   every curve sample's value ± U. Tolerance lines (the parts inside the x
//!   range) are included only if the data range would still fill at least
//!   [`TOLERANCE_MIN_DATA_FRACTION`] (20 %) of the combined range; otherwise
//!   the y axis keeps the data range, the tolerance lines are clipped at the
//!   plot edge and a note under the title says so. The chosen range is then
//!   widened by [`Y_MARGIN_FRACTION`] of its span on each side.
//! - A range of (practically) zero span, such as a single point or equal
//!   values, is replaced by its midpoint ± [`X_FLAT_HALF_WIDTH_C`] (x) or
//!   ± [`Y_FLAT_HALF_WIDTH_C`] (y) before the margins are applied, so no
//!   scale ever divides by zero.
//!
//! # Invalid values
//!
//! A value is usable if it is finite and its magnitude is at most
//! [`VALUE_LIMIT`] (larger magnitudes cannot be temperatures and would
//! overflow the scale arithmetic). Points and curve samples with an unusable
//! `t` or deviation/value are skipped; an unusable uncertainty is drawn as
//! zero (no error bar; the band narrows to the curve there) and a negative
//! one is taken by magnitude. Tolerance vertices with an unusable coordinate
//! are skipped. If no point and no curve sample remains, the output is a
//! valid SVG that says "No data to plot". Rendering never panics.

use std::fmt::Write as _;

/// Width used by [`DeviationPlot::default`], in pixels.
pub const DEFAULT_WIDTH_PX: u32 = 800;
/// Height used by [`DeviationPlot::default`], in pixels.
pub const DEFAULT_HEIGHT_PX: u32 = 480;
/// Smallest width rendered; smaller requests are raised to it.
pub const MIN_WIDTH_PX: u32 = 320;
/// Largest width rendered; larger requests are lowered to it.
pub const MAX_WIDTH_PX: u32 = 8000;
/// Smallest height rendered; smaller requests are raised to it. The height is
/// also raised when a wrapped legend would leave the plot area too small.
pub const MIN_HEIGHT_PX: u32 = 240;
/// Largest requested height honoured; larger requests are lowered to it.
pub const MAX_HEIGHT_PX: u32 = 8000;
/// Largest magnitude (°C) accepted for any input value; see the module docs.
pub const VALUE_LIMIT: f64 = 1e9;
/// Tolerance lines are included in the y range only if the data range keeps
/// at least this fraction of the combined range.
pub const TOLERANCE_MIN_DATA_FRACTION: f64 = 0.2;
/// Fraction of the x span added on each side of the x range.
pub const X_MARGIN_FRACTION: f64 = 0.05;
/// Fraction of the y span added on each side of the y range.
pub const Y_MARGIN_FRACTION: f64 = 0.08;
/// Half-width (°C) of the x range when all temperatures are equal.
pub const X_FLAT_HALF_WIDTH_C: f64 = 1.0;
/// Half-width (°C) of the y range when all deviations are equal.
pub const Y_FLAT_HALF_WIDTH_C: f64 = 0.1;

/// One measured calibration point.
#[derive(Debug, Clone, PartialEq)]
pub struct PlotPoint {
    /// Reference temperature in °C (x value).
    pub t_c: f64,
    /// Deviation in °C: UUT reading minus reference temperature (y value).
    pub deviation_c: f64,
    /// Expanded uncertainty U of the deviation in °C; drawn as an error bar
    /// from `deviation_c - U` to `deviation_c + U`.
    pub expanded_uncertainty_c: f64,
    /// `true` if the residual of this point against the fitted function is
    /// larger than U; such points get a distinct marker and a "!" mark.
    pub flagged: bool,
}

/// One sample of the fitted deviation function.
#[derive(Debug, Clone, PartialEq)]
pub struct CurveSample {
    /// Reference temperature in °C.
    pub t_c: f64,
    /// Value of the fitted deviation function at `t_c`, in °C.
    pub value_c: f64,
    /// Expanded uncertainty of the fitted value in °C: the half-width of the
    /// drawn band at `t_c`.
    pub expanded_uncertainty_c: f64,
}

/// A tolerance limit drawn as a dashed, labelled line.
///
/// Give the upper and the lower limit as two separate lines.
#[derive(Debug, Clone, PartialEq)]
pub struct ToleranceLine {
    /// Text drawn at the right end of the line (user text; escaped).
    pub label: String,
    /// Vertices `(t_c, limit_c)` in °C, joined piecewise linearly after
    /// sorting by `t_c`, e.g. `0.15 + 0.002 |t|` sampled over the range. A
    /// single vertex is drawn as a constant limit across the plot.
    pub points: Vec<(f64, f64)>,
}

/// Everything needed to draw one deviation plot.
#[derive(Debug, Clone, PartialEq)]
pub struct DeviationPlot {
    /// Title drawn above the plot and used as the SVG `<title>` (user text;
    /// escaped). An empty title is replaced by "Deviation plot".
    pub title: String,
    /// Measured points.
    pub points: Vec<PlotPoint>,
    /// Samples of the fitted function, in any order (sorted by `t_c` when
    /// drawn). May be empty.
    pub curve: Vec<CurveSample>,
    /// Tolerance lines. May be empty.
    pub tolerances: Vec<ToleranceLine>,
    /// Requested width in pixels, clamped to
    /// [`MIN_WIDTH_PX`]..=[`MAX_WIDTH_PX`].
    pub width_px: u32,
    /// Requested height in pixels, clamped to
    /// [`MIN_HEIGHT_PX`]..=[`MAX_HEIGHT_PX`].
    pub height_px: u32,
}

impl Default for DeviationPlot {
    fn default() -> Self {
        Self {
            title: String::new(),
            points: Vec::new(),
            curve: Vec::new(),
            tolerances: Vec::new(),
            width_px: DEFAULT_WIDTH_PX,
            height_px: DEFAULT_HEIGHT_PX,
        }
    }
}

/// Renders `plot` as a self-contained SVG document fragment.
///
/// The result starts with `<svg` and ends with `</svg>`; see the module
/// documentation for the scale rules and for how invalid values are handled.
/// The same input always yields the same string.
#[must_use]
pub fn render_svg(plot: &DeviationPlot) -> String {
    let clean = Clean::from_plot(plot);
    let id = id_prefix(plot);
    let title = if plot.title.trim().is_empty() {
        "Deviation plot"
    } else {
        plot.title.as_str()
    };
    match compute_layout(&clean, plot.width_px, plot.height_px) {
        None => render_no_data(plot, &id, title),
        Some(layout) => render_plot(&clean, &layout, &id, title),
    }
}

// ---------------------------------------------------------------------------
// Colours and fonts. Chosen for this module; blue and orange stay apart for
// the common forms of colour-vision deficiency, and flagged points differ by
// shape and a text mark as well.

const FONT_FAMILY: &str = "sans-serif";
const COLOUR_TEXT: &str = "#222222";
const COLOUR_AXIS: &str = "#333333";
const COLOUR_GRID: &str = "#e4e4e4";
const COLOUR_ZERO: &str = "#555555";
const COLOUR_POINT: &str = "#1d4f80";
const COLOUR_FLAGGED: &str = "#b54a00";
const COLOUR_CURVE: &str = "#2a7a5e";
const COLOUR_TOLERANCE: &str = "#74368f";
const BAND_OPACITY: &str = "0.2";
const TOLERANCE_DASH: &str = "6 4";

const FONT_TITLE: f64 = 16.0;
const FONT_AXIS_TITLE: f64 = 12.0;
const FONT_TICK: f64 = 11.0;
const FONT_SMALL: f64 = 11.0;
/// Average glyph advance as a fraction of the font size, used to estimate
/// text widths for layout (sans-serif digits and lower case are ~0.55).
const GLYPH_ADVANCE: f64 = 0.6;

const TOP_MARGIN: f64 = 52.0;
/// Shown under the title when tolerance lines leave the y range; short
/// enough (~40 glyphs) to fit the minimum width.
const CLIPPED_NOTE: &str = "Tolerance lines clipped at the plot edge";
const RIGHT_MARGIN: f64 = 24.0;
const LEGEND_ROW_HEIGHT: f64 = 20.0;
const LEGEND_SIDE_PADDING: f64 = 12.0;
const MIN_PLOT_HEIGHT: f64 = 80.0;

// ---------------------------------------------------------------------------
// Input cleaning

#[derive(Debug, Clone, Copy, PartialEq)]
struct CleanPoint {
    t: f64,
    dev: f64,
    u: f64,
    flagged: bool,
}

#[derive(Debug, Clone, Copy, PartialEq)]
struct CleanSample {
    t: f64,
    value: f64,
    u: f64,
}

#[derive(Debug, Clone, PartialEq)]
struct CleanTolerance {
    label: String,
    points: Vec<(f64, f64)>,
}

/// Input with unusable values removed and curve/tolerances sorted by t.
#[derive(Debug, Clone, PartialEq)]
struct Clean {
    points: Vec<CleanPoint>,
    curve: Vec<CleanSample>,
    tolerances: Vec<CleanTolerance>,
}

fn is_usable(v: f64) -> bool {
    v.is_finite() && v.abs() <= VALUE_LIMIT
}

fn usable_uncertainty(u: f64) -> f64 {
    if is_usable(u) { u.abs() } else { 0.0 }
}

impl Clean {
    fn from_plot(plot: &DeviationPlot) -> Self {
        let points = plot
            .points
            .iter()
            .filter(|p| is_usable(p.t_c) && is_usable(p.deviation_c))
            .map(|p| CleanPoint {
                t: p.t_c,
                dev: p.deviation_c,
                u: usable_uncertainty(p.expanded_uncertainty_c),
                flagged: p.flagged,
            })
            .collect();
        let mut curve: Vec<CleanSample> = plot
            .curve
            .iter()
            .filter(|s| is_usable(s.t_c) && is_usable(s.value_c))
            .map(|s| CleanSample {
                t: s.t_c,
                value: s.value_c,
                u: usable_uncertainty(s.expanded_uncertainty_c),
            })
            .collect();
        curve.sort_by(|a, b| a.t.total_cmp(&b.t));
        let tolerances = plot
            .tolerances
            .iter()
            .map(|line| {
                let mut pts: Vec<(f64, f64)> = line
                    .points
                    .iter()
                    .copied()
                    .filter(|&(t, v)| is_usable(t) && is_usable(v))
                    .collect();
                pts.sort_by(|a, b| a.0.total_cmp(&b.0));
                CleanTolerance {
                    label: line.label.clone(),
                    points: pts,
                }
            })
            .filter(|line| !line.points.is_empty())
            .collect();
        Self {
            points,
            curve,
            tolerances,
        }
    }

    fn flagged_count(&self) -> usize {
        self.points.iter().filter(|p| p.flagged).count()
    }
}

// ---------------------------------------------------------------------------
// Ranges, scales and ticks

/// A closed interval `lo..=hi` of data values (°C).
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct Range {
    pub(crate) lo: f64,
    pub(crate) hi: f64,
}

impl Range {
    fn of(values: impl IntoIterator<Item = f64>) -> Option<Self> {
        values.into_iter().fold(None, |acc, v| match acc {
            None => Some(Self { lo: v, hi: v }),
            Some(r) => Some(Self {
                lo: r.lo.min(v),
                hi: r.hi.max(v),
            }),
        })
    }

    fn union(self, other: Self) -> Self {
        Self {
            lo: self.lo.min(other.lo),
            hi: self.hi.max(other.hi),
        }
    }

    pub(crate) fn span(self) -> f64 {
        self.hi - self.lo
    }

    fn contains(self, v: f64) -> bool {
        v >= self.lo && v <= self.hi
    }

    /// Replaces a range of (practically) zero span by `mid ± half_width`.
    ///
    /// "Practically zero" is relative to the magnitude of the values, so the
    /// tick arithmetic never works below the resolution of `f64`.
    fn widen_if_flat(self, half_width: f64) -> Self {
        let magnitude = 1.0_f64.max(self.lo.abs()).max(self.hi.abs());
        let span = self.span();
        if span <= 1e-9 * magnitude {
            let mid = 0.5 * (self.lo + self.hi);
            let half = half_width.max(span);
            Self {
                lo: mid - half,
                hi: mid + half,
            }
        } else {
            self
        }
    }

    fn with_margin(self, fraction: f64) -> Self {
        let m = self.span() * fraction;
        Self {
            lo: self.lo - m,
            hi: self.hi + m,
        }
    }
}

/// Linear map from the data interval `d0..d1` to the pixel interval `r0..r1`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub(crate) struct LinearScale {
    pub(crate) d0: f64,
    pub(crate) d1: f64,
    pub(crate) r0: f64,
    pub(crate) r1: f64,
}

impl LinearScale {
    /// Maps a data value to pixels; a degenerate domain maps everything to
    /// the middle of the pixel interval instead of dividing by zero.
    pub(crate) fn map(&self, v: f64) -> f64 {
        let span = self.d1 - self.d0;
        if !span.is_finite() || span == 0.0 || !v.is_finite() {
            return 0.5 * (self.r0 + self.r1);
        }
        self.r0 + (v - self.d0) / span * (self.r1 - self.r0)
    }
}

/// Tick positions on one axis, with the decimals implied by the step.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Ticks {
    pub(crate) step: f64,
    pub(crate) decimals: usize,
    pub(crate) values: Vec<f64>,
}

impl Ticks {
    pub(crate) fn labels(&self) -> Vec<String> {
        self.values
            .iter()
            .map(|&v| format_tick(v, self.decimals))
            .collect()
    }
}

/// Most ticks [`nice_ticks`] returns; a guard, never reached for sane targets.
const MAX_TICKS: i64 = 200;

/// Ticks with a 1-2-5 step giving about `target` intervals over `lo..=hi`.
///
/// The step is the smallest of 1, 2, 5 × 10^k not below `(hi - lo) /
/// target`; ticks are the multiples of the step inside the range. Labels use
/// as many decimals as the step needs (step 0.2 → 1 decimal, 0.02 → 2).
pub(crate) fn nice_ticks(lo: f64, hi: f64, target: usize) -> Ticks {
    if !lo.is_finite() || !hi.is_finite() {
        return Ticks {
            step: 0.0,
            decimals: 2,
            values: Vec::new(),
        };
    }
    let (lo, hi) = if lo <= hi { (lo, hi) } else { (hi, lo) };
    let span = hi - lo;
    if !span.is_finite() || span <= 0.0 {
        let values = if span.is_finite() {
            vec![lo]
        } else {
            Vec::new()
        };
        return Ticks {
            step: 0.0,
            decimals: 2,
            values,
        };
    }
    let target = target.clamp(1, 50);
    let raw = span / target as f64;
    let mut exponent = raw.log10().floor() as i32;
    let normalised = raw / pow10(exponent);
    // The tolerance keeps e.g. 0.2 / 0.1 = 2.0000000000000004 on step 2.
    let eps = 1e-9;
    let mut mantissa: i64 = if normalised <= 1.0 + eps {
        1
    } else if normalised <= 2.0 + eps {
        2
    } else if normalised <= 5.0 + eps {
        5
    } else {
        10
    };
    if mantissa == 10 {
        mantissa = 1;
        exponent += 1;
    }
    // Multiples of mantissa / 10^-exponent are formed as integer / power so
    // that 3 × 0.1 comes out as 0.3, not 0.30000000000000004.
    let value_of = |k: i64| scaled(k * mantissa, exponent);
    let step = scaled(mantissa, exponent);
    let decimals = usize::try_from(-exponent).unwrap_or(0).min(15);
    let first = (lo / step - eps).ceil();
    let last = (hi / step + eps).floor();
    let mut values = Vec::new();
    // Tick indices stay far below i64::MAX, so `k * mantissa` cannot overflow.
    let index_limit = 1e15;
    if first.abs() <= index_limit && last.abs() <= index_limit && last - first < MAX_TICKS as f64 {
        let (first, last) = (first as i64, last as i64);
        values.extend((first..=last).map(value_of));
    }
    Ticks {
        step,
        decimals,
        values,
    }
}

fn pow10(exponent: i32) -> f64 {
    10.0_f64.powi(exponent)
}

/// `n × 10^exponent`, dividing for negative exponents because 10^-k is not
/// exact in binary while 10^k is (for the k used here).
fn scaled(n: i64, exponent: i32) -> f64 {
    if exponent >= 0 {
        n as f64 * pow10(exponent)
    } else {
        n as f64 / pow10(-exponent)
    }
}

/// Formats a tick value with fixed decimals; never prints "-0".
pub(crate) fn format_tick(v: f64, decimals: usize) -> String {
    if !v.is_finite() {
        return String::new();
    }
    strip_negative_zero(format!("{v:.decimals$}"))
}

fn strip_negative_zero(s: String) -> String {
    match s.strip_prefix('-') {
        Some(rest) if rest.chars().all(|c| c == '0' || c == '.') => rest.to_owned(),
        _ => s,
    }
}

/// Formats a pixel coordinate with at most two decimals, trailing zeros
/// removed; non-finite values (which the layout never produces) become "0".
pub(crate) fn fmt_px(v: f64) -> String {
    if !v.is_finite() {
        return "0".to_owned();
    }
    let s = format!("{v:.2}");
    let s = s.trim_end_matches('0').trim_end_matches('.');
    strip_negative_zero(s.to_owned())
}

/// Formats a data value for text (4 significant digits, trailing zeros
/// removed), e.g. 0.0234 → "0.0234", 150 → "150".
pub(crate) fn fmt_value(v: f64) -> String {
    if !v.is_finite() {
        return String::new();
    }
    let decimals = if v == 0.0 {
        0
    } else {
        let magnitude = v.abs().log10().floor() as i32;
        usize::try_from(3 - magnitude).unwrap_or(0).min(12)
    };
    let s = format!("{v:.decimals$}");
    let s = if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_owned()
    } else {
        s
    };
    strip_negative_zero(s)
}

/// Escapes text for XML content and attribute values, and drops control
/// characters that XML 1.0 does not allow.
pub(crate) fn escape_xml(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            '\t' | '\n' | '\r' => out.push(' '),
            c if c.is_control() => {}
            c => out.push(c),
        }
    }
    out
}

fn estimate_text_width(text: &str, font_size: f64) -> f64 {
    text.chars().count() as f64 * font_size * GLYPH_ADVANCE
}

// ---------------------------------------------------------------------------
// Tolerance geometry

/// The parts of a tolerance line inside `x`, as a polyline of vertices.
///
/// A single vertex stands for a constant limit across `x`.
fn visible_tolerance(points: &[(f64, f64)], x: Range) -> Vec<(f64, f64)> {
    match points {
        [] => Vec::new(),
        [(_, v)] => vec![(x.lo, *v), (x.hi, *v)],
        _ => {
            let mut out: Vec<(f64, f64)> = Vec::new();
            for pair in points.windows(2) {
                let (a, b) = (pair[0], pair[1]);
                if b.0 < x.lo || a.0 > x.hi {
                    continue;
                }
                let t0 = a.0.max(x.lo);
                let t1 = b.0.min(x.hi);
                // At the vertices themselves the vertex values are used, so
                // a vertical step (equal t) keeps both of its values.
                let start = (
                    t0,
                    if t0 <= a.0 {
                        a.1
                    } else {
                        interpolate(a, b, t0)
                    },
                );
                let end = (
                    t1,
                    if t1 >= b.0 {
                        b.1
                    } else {
                        interpolate(a, b, t1)
                    },
                );
                if out.last() != Some(&start) {
                    out.push(start);
                }
                out.push(end);
            }
            out
        }
    }
}

/// Value of the segment `a`–`b` at `t`, for `a.0 < t < b.0` (so the
/// division is never by zero).
fn interpolate(a: (f64, f64), b: (f64, f64), t: f64) -> f64 {
    a.1 + (b.1 - a.1) * (t - a.0) / (b.0 - a.0)
}

// ---------------------------------------------------------------------------
// Legend

#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum LegendKind {
    Measured,
    Flagged,
    Curve,
    Tolerance,
}

impl LegendKind {
    fn label(self) -> &'static str {
        match self {
            Self::Measured => "Measured deviation ± U",
            Self::Flagged => "Flagged: residual larger than U",
            Self::Curve => "Fitted function ± U",
            Self::Tolerance => "Tolerance",
        }
    }
}

#[derive(Debug, Clone, Copy, PartialEq)]
struct LegendEntry {
    kind: LegendKind,
    x: f64,
    row: usize,
}

const LEGEND_GLYPH_WIDTH: f64 = 28.0;
const LEGEND_GAP: f64 = 18.0;

fn legend_entries(clean: &Clean, width: f64) -> Vec<LegendEntry> {
    let mut kinds = Vec::new();
    if !clean.points.is_empty() {
        kinds.push(LegendKind::Measured);
    }
    if clean.flagged_count() > 0 {
        kinds.push(LegendKind::Flagged);
    }
    if !clean.curve.is_empty() {
        kinds.push(LegendKind::Curve);
    }
    if !clean.tolerances.is_empty() {
        kinds.push(LegendKind::Tolerance);
    }
    let mut entries = Vec::new();
    let (mut x, mut row) = (LEGEND_SIDE_PADDING, 0);
    for kind in kinds {
        let w = LEGEND_GLYPH_WIDTH + estimate_text_width(kind.label(), FONT_SMALL);
        if x > LEGEND_SIDE_PADDING && x + w > width - LEGEND_SIDE_PADDING {
            x = LEGEND_SIDE_PADDING;
            row += 1;
        }
        entries.push(LegendEntry { kind, x, row });
        x += w + LEGEND_GAP;
    }
    entries
}

// ---------------------------------------------------------------------------
// Layout

/// Pixel geometry and scales of one plot.
#[derive(Debug, Clone, PartialEq)]
pub(crate) struct Layout {
    pub(crate) width: f64,
    pub(crate) height: f64,
    /// Plot area edges in pixels.
    pub(crate) left: f64,
    pub(crate) right: f64,
    pub(crate) top: f64,
    pub(crate) bottom: f64,
    pub(crate) x: LinearScale,
    pub(crate) y: LinearScale,
    pub(crate) x_range: Range,
    pub(crate) y_range: Range,
    pub(crate) x_ticks: Ticks,
    pub(crate) y_ticks: Ticks,
    /// Some tolerance line leaves the y range and is cut at the plot edge.
    pub(crate) tolerance_clipped: bool,
    legend: Vec<LegendEntry>,
}

/// The y range before margins: data range, plus tolerances per the 20 % rule.
fn core_y_range(clean: &Clean, x_range: Range) -> Range {
    let point_values = clean.points.iter().flat_map(|p| [p.dev - p.u, p.dev + p.u]);
    let curve_values = clean
        .curve
        .iter()
        .flat_map(|s| [s.value - s.u, s.value + s.u]);
    let data = Range::of(std::iter::once(0.0).chain(point_values).chain(curve_values))
        .unwrap_or(Range { lo: 0.0, hi: 0.0 })
        .widen_if_flat(Y_FLAT_HALF_WIDTH_C);
    let tolerance = Range::of(
        clean
            .tolerances
            .iter()
            .flat_map(|line| visible_tolerance(&line.points, x_range))
            .map(|(_, v)| v),
    );
    match tolerance {
        Some(tol) => {
            let combined = data.union(tol);
            if data.span() >= TOLERANCE_MIN_DATA_FRACTION * combined.span() {
                combined
            } else {
                data
            }
        }
        None => data,
    }
}

/// Ticks for an axis of `length_px` pixels, about one per `px_per_tick`,
/// raising the target on short axes until there are at least three ticks.
fn axis_ticks(range: Range, length_px: f64, px_per_tick: f64) -> Ticks {
    let mut target = (length_px / px_per_tick).round().clamp(2.0, 10.0) as usize;
    let mut ticks = nice_ticks(range.lo, range.hi, target);
    while ticks.values.len() < 3 && target < 10 {
        target += 1;
        ticks = nice_ticks(range.lo, range.hi, target);
    }
    ticks
}

/// Computes the layout, or `None` if there is nothing to plot.
fn compute_layout(clean: &Clean, width_px: u32, height_px: u32) -> Option<Layout> {
    let x_data = Range::of(
        clean
            .points
            .iter()
            .map(|p| p.t)
            .chain(clean.curve.iter().map(|s| s.t)),
    )?;
    let x_range = x_data
        .widen_if_flat(X_FLAT_HALF_WIDTH_C)
        .with_margin(X_MARGIN_FRACTION);
    let y_range = core_y_range(clean, x_range).with_margin(Y_MARGIN_FRACTION);
    let tolerance_clipped = clean.tolerances.iter().any(|line| {
        visible_tolerance(&line.points, x_range)
            .iter()
            .any(|&(_, v)| !y_range.contains(v))
    });

    let width = f64::from(width_px.clamp(MIN_WIDTH_PX, MAX_WIDTH_PX));
    let legend = legend_entries(clean, width);
    let legend_rows = legend.iter().map(|e| e.row + 1).max().unwrap_or(0);
    // Tick labels, axis title, then the legend rows below the plot area.
    let bottom_margin = 54.0 + legend_rows as f64 * LEGEND_ROW_HEIGHT + 8.0;
    let height = f64::from(height_px.clamp(MIN_HEIGHT_PX, MAX_HEIGHT_PX))
        .max(TOP_MARGIN + bottom_margin + MIN_PLOT_HEIGHT);
    let top = TOP_MARGIN;
    let bottom = height - bottom_margin;

    let y_ticks = axis_ticks(y_range, bottom - top, 45.0);
    let widest_label = y_ticks
        .labels()
        .iter()
        .map(|l| estimate_text_width(l, FONT_TICK))
        .fold(0.0, f64::max);
    // Room for the rotated axis title, the tick labels and the tick marks.
    let left = 30.0 + widest_label + 10.0;
    let right = width - RIGHT_MARGIN;
    let x_ticks = axis_ticks(x_range, right - left, 90.0);

    Some(Layout {
        width,
        height,
        left,
        right,
        top,
        bottom,
        x: LinearScale {
            d0: x_range.lo,
            d1: x_range.hi,
            r0: left,
            r1: right,
        },
        y: LinearScale {
            d0: y_range.lo,
            d1: y_range.hi,
            r0: bottom,
            r1: top,
        },
        x_range,
        y_range,
        x_ticks,
        y_ticks,
        tolerance_clipped,
        legend,
    })
}

// ---------------------------------------------------------------------------
// Ids

/// FNV-1a over the whole input: a stable id prefix, so equal input gives equal
/// output and different plots on one page get different element ids.
fn id_prefix(plot: &DeviationPlot) -> String {
    struct Fnv(u64);
    impl Fnv {
        fn bytes(&mut self, bytes: &[u8]) {
            for &b in bytes {
                self.0 ^= u64::from(b);
                self.0 = self.0.wrapping_mul(0x0100_0000_01b3);
            }
        }
        fn num(&mut self, v: f64) {
            self.bytes(&v.to_bits().to_le_bytes());
        }
        fn len(&mut self, n: usize) {
            self.bytes(&(n as u64).to_le_bytes());
        }
    }
    let mut h = Fnv(0xcbf2_9ce4_8422_2325);
    h.len(plot.title.len());
    h.bytes(plot.title.as_bytes());
    h.bytes(&plot.width_px.to_le_bytes());
    h.bytes(&plot.height_px.to_le_bytes());
    h.len(plot.points.len());
    for p in &plot.points {
        h.num(p.t_c);
        h.num(p.deviation_c);
        h.num(p.expanded_uncertainty_c);
        h.bytes(&[u8::from(p.flagged)]);
    }
    h.len(plot.curve.len());
    for s in &plot.curve {
        h.num(s.t_c);
        h.num(s.value_c);
        h.num(s.expanded_uncertainty_c);
    }
    h.len(plot.tolerances.len());
    for line in &plot.tolerances {
        h.len(line.label.len());
        h.bytes(line.label.as_bytes());
        h.len(line.points.len());
        for &(t, v) in &line.points {
            h.num(t);
            h.num(v);
        }
    }
    format!("jdp-{:016x}", h.0)
}

// ---------------------------------------------------------------------------
// Rendering

fn open_svg(out: &mut String, id: &str, width: f64, height: f64, title: &str, desc: &str) {
    let (w, h) = (fmt_px(width), fmt_px(height));
    let _ = write!(
        out,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w}\" height=\"{h}\" \
         viewBox=\"0 0 {w} {h}\" role=\"img\" aria-labelledby=\"{id}-title {id}-desc\" \
         font-family=\"{FONT_FAMILY}\">\n\
         <title id=\"{id}-title\">{}</title>\n\
         <desc id=\"{id}-desc\">{}</desc>\n\
         <rect x=\"0\" y=\"0\" width=\"{w}\" height=\"{h}\" fill=\"#ffffff\"/>\n",
        escape_xml(title),
        escape_xml(desc),
    );
}

fn text(out: &mut String, x: f64, y: f64, attrs: &str, content: &str) {
    let _ = writeln!(
        out,
        "<text x=\"{}\" y=\"{}\" {attrs}>{}</text>",
        fmt_px(x),
        fmt_px(y),
        escape_xml(content)
    );
}

fn line(out: &mut String, (x1, y1): (f64, f64), (x2, y2): (f64, f64), attrs: &str) {
    let _ = writeln!(
        out,
        "<line x1=\"{}\" y1=\"{}\" x2=\"{}\" y2=\"{}\" {attrs}/>",
        fmt_px(x1),
        fmt_px(y1),
        fmt_px(x2),
        fmt_px(y2)
    );
}

fn points_attr(pixels: impl IntoIterator<Item = (f64, f64)>) -> String {
    let mut s = String::new();
    for (i, (x, y)) in pixels.into_iter().enumerate() {
        if i > 0 {
            s.push(' ');
        }
        let _ = write!(s, "{},{}", fmt_px(x), fmt_px(y));
    }
    s
}

fn diamond(cx: f64, cy: f64, r: f64) -> String {
    points_attr([(cx, cy - r), (cx + r, cy), (cx, cy + r), (cx - r, cy)])
}

fn render_no_data(plot: &DeviationPlot, id: &str, title: &str) -> String {
    let width = f64::from(plot.width_px.clamp(MIN_WIDTH_PX, MAX_WIDTH_PX));
    let height = f64::from(plot.height_px.clamp(MIN_HEIGHT_PX, MAX_HEIGHT_PX));
    let mut out = String::new();
    open_svg(
        &mut out,
        id,
        width,
        height,
        title,
        "Deviation plot. No data to plot.",
    );
    text(
        &mut out,
        width / 2.0,
        24.0,
        &format!(
            "text-anchor=\"middle\" font-size=\"{FONT_TITLE}\" font-weight=\"bold\" fill=\"{COLOUR_TEXT}\""
        ),
        title,
    );
    text(
        &mut out,
        width / 2.0,
        height / 2.0,
        &format!("text-anchor=\"middle\" font-size=\"14\" fill=\"{COLOUR_TEXT}\""),
        "No data to plot",
    );
    out.push_str("</svg>");
    out
}

fn describe(clean: &Clean, layout: &Layout) -> String {
    let mut d = String::from("Deviation plot. ");
    let n = clean.points.len();
    match Range::of(clean.points.iter().map(|p| p.t)) {
        Some(t) => {
            let max_dev = clean.points.iter().map(|p| p.dev.abs()).fold(0.0, f64::max);
            let _ = write!(
                d,
                "{n} measured point{} ({} flagged), reference temperature from {} °C to {} °C, \
                 maximum |deviation| {} °C. ",
                if n == 1 { "" } else { "s" },
                clean.flagged_count(),
                fmt_value(t.lo),
                fmt_value(t.hi),
                fmt_value(max_dev),
            );
        }
        None => d.push_str("No measured points. "),
    }
    if let Some(t) = Range::of(clean.curve.iter().map(|s| s.t)) {
        let _ = write!(
            d,
            "Fitted function from {} °C to {} °C. ",
            fmt_value(t.lo),
            fmt_value(t.hi)
        );
    }
    let k = clean.tolerances.len();
    if k > 0 {
        let _ = write!(d, "{k} tolerance line{}", if k == 1 { "" } else { "s" });
        d.push_str(if layout.tolerance_clipped {
            ", clipped to the plotted deviation range. "
        } else {
            ". "
        });
    }
    d.trim_end().to_owned()
}

fn render_plot(clean: &Clean, layout: &Layout, id: &str, title: &str) -> String {
    let mut out = String::with_capacity(8192 + 600 * clean.points.len());
    open_svg(
        &mut out,
        id,
        layout.width,
        layout.height,
        title,
        &describe(clean, layout),
    );
    let (l, r, t, b) = (layout.left, layout.right, layout.top, layout.bottom);
    let _ = writeln!(
        out,
        "<defs><clipPath id=\"{id}-clip\"><rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\"/></clipPath></defs>",
        fmt_px(l),
        fmt_px(t),
        fmt_px(r - l),
        fmt_px(b - t)
    );

    render_grid_and_axes(&mut out, layout);

    let _ = writeln!(out, "<g clip-path=\"url(#{id}-clip)\">");
    render_curve(&mut out, clean, layout);
    render_tolerances(&mut out, clean, layout);
    render_points(&mut out, clean, layout);
    out.push_str("</g>\n");

    render_tolerance_labels(&mut out, clean, layout);
    let _ = writeln!(
        out,
        "<rect x=\"{}\" y=\"{}\" width=\"{}\" height=\"{}\" fill=\"none\" stroke=\"{COLOUR_AXIS}\" stroke-width=\"1\"/>",
        fmt_px(l),
        fmt_px(t),
        fmt_px(r - l),
        fmt_px(b - t)
    );
    render_titles(&mut out, layout, title);
    render_legend(&mut out, layout);
    out.push_str("</svg>");
    out
}

fn render_grid_and_axes(out: &mut String, layout: &Layout) {
    let (l, r, t, b) = (layout.left, layout.right, layout.top, layout.bottom);
    out.push_str("<g class=\"grid\">\n");
    for &v in &layout.x_ticks.values {
        let x = layout.x.map(v);
        line(
            out,
            (x, t),
            (x, b),
            &format!("stroke=\"{COLOUR_GRID}\" stroke-width=\"1\""),
        );
    }
    for &v in &layout.y_ticks.values {
        let y = layout.y.map(v);
        line(
            out,
            (l, y),
            (r, y),
            &format!("stroke=\"{COLOUR_GRID}\" stroke-width=\"1\""),
        );
    }
    out.push_str("</g>\n");

    if layout.y_range.contains(0.0) {
        let y0 = layout.y.map(0.0);
        line(
            out,
            (l, y0),
            (r, y0),
            &format!("class=\"zero-line\" stroke=\"{COLOUR_ZERO}\" stroke-width=\"1.2\""),
        );
    }

    out.push_str("<g class=\"axes\">\n");
    let tick_attrs = format!("stroke=\"{COLOUR_AXIS}\" stroke-width=\"1\"");
    let label_attrs = |anchor: &str| {
        format!("text-anchor=\"{anchor}\" font-size=\"{FONT_TICK}\" fill=\"{COLOUR_TEXT}\"")
    };
    let x_labels = layout.x_ticks.labels();
    for (&v, label) in layout.x_ticks.values.iter().zip(&x_labels) {
        let x = layout.x.map(v);
        line(out, (x, b), (x, b + 5.0), &tick_attrs);
        text(out, x, b + 18.0, &label_attrs("middle"), label);
    }
    let y_labels = layout.y_ticks.labels();
    for (&v, label) in layout.y_ticks.values.iter().zip(&y_labels) {
        let y = layout.y.map(v);
        line(out, (l - 5.0, y), (l, y), &tick_attrs);
        text(out, l - 8.0, y + 4.0, &label_attrs("end"), label);
    }
    out.push_str("</g>\n");
}

fn render_curve(out: &mut String, clean: &Clean, layout: &Layout) {
    let curve = &clean.curve;
    if curve.is_empty() {
        return;
    }
    let (x, y) = (&layout.x, &layout.y);
    out.push_str("<g class=\"curve\">\n");
    if curve.len() >= 2 {
        if curve.iter().any(|s| s.u > 0.0) {
            let upper = curve.iter().map(|s| (x.map(s.t), y.map(s.value + s.u)));
            let lower = curve
                .iter()
                .rev()
                .map(|s| (x.map(s.t), y.map(s.value - s.u)));
            let _ = writeln!(
                out,
                "<polygon points=\"{}\" fill=\"{COLOUR_CURVE}\" fill-opacity=\"{BAND_OPACITY}\" stroke=\"none\"/>",
                points_attr(upper.chain(lower))
            );
        }
        let _ = writeln!(
            out,
            "<polyline points=\"{}\" fill=\"none\" stroke=\"{COLOUR_CURVE}\" stroke-width=\"2\" stroke-linejoin=\"round\"/>",
            points_attr(curve.iter().map(|s| (x.map(s.t), y.map(s.value))))
        );
    } else {
        // One sample has no extent in t: show it as a short level mark.
        let s = curve[0];
        let (cx, cy) = (x.map(s.t), y.map(s.value));
        if s.u > 0.0 {
            let _ = writeln!(
                out,
                "<rect x=\"{}\" y=\"{}\" width=\"12\" height=\"{}\" fill=\"{COLOUR_CURVE}\" fill-opacity=\"{BAND_OPACITY}\" stroke=\"none\"/>",
                fmt_px(cx - 6.0),
                fmt_px(y.map(s.value + s.u)),
                fmt_px(y.map(s.value - s.u) - y.map(s.value + s.u))
            );
        }
        line(
            out,
            (cx - 6.0, cy),
            (cx + 6.0, cy),
            &format!("stroke=\"{COLOUR_CURVE}\" stroke-width=\"2\""),
        );
    }
    out.push_str("</g>\n");
}

fn render_tolerances(out: &mut String, clean: &Clean, layout: &Layout) {
    if clean.tolerances.is_empty() {
        return;
    }
    out.push_str("<g class=\"tolerance\">\n");
    for tol in &clean.tolerances {
        let visible = visible_tolerance(&tol.points, layout.x_range);
        if visible.len() < 2 {
            continue;
        }
        let _ = writeln!(
            out,
            "<polyline points=\"{}\" fill=\"none\" stroke=\"{COLOUR_TOLERANCE}\" stroke-width=\"1.5\" stroke-dasharray=\"{TOLERANCE_DASH}\"/>",
            points_attr(
                visible
                    .iter()
                    .map(|&(t, v)| (layout.x.map(t), layout.y.map(v)))
            )
        );
    }
    out.push_str("</g>\n");
}

fn render_tolerance_labels(out: &mut String, clean: &Clean, layout: &Layout) {
    for tol in &clean.tolerances {
        if tol.label.trim().is_empty() {
            continue;
        }
        let Some(&(t, v)) = visible_tolerance(&tol.points, layout.x_range).last() else {
            continue;
        };
        let x = layout.x.map(t).min(layout.right) - 4.0;
        // Upper limits are labelled above the line, lower ones below it, so
        // the text stays off the line; clipped lines keep the label inside.
        let offset = if v >= 0.5 * (layout.y_range.lo + layout.y_range.hi) {
            -5.0
        } else {
            13.0
        };
        let y = (layout.y.map(v) + offset).clamp(layout.top + 12.0, layout.bottom - 4.0);
        text(
            out,
            x,
            y,
            &format!(
                "class=\"tolerance-label\" text-anchor=\"end\" font-size=\"{FONT_SMALL}\" fill=\"{COLOUR_TOLERANCE}\""
            ),
            &tol.label,
        );
    }
}

fn render_points(out: &mut String, clean: &Clean, layout: &Layout) {
    let (x, y) = (&layout.x, &layout.y);
    for p in &clean.points {
        let (cx, cy) = (x.map(p.t), y.map(p.dev));
        let colour = if p.flagged {
            COLOUR_FLAGGED
        } else {
            COLOUR_POINT
        };
        let _ = writeln!(
            out,
            "<g class=\"{}\">",
            if p.flagged { "point-flagged" } else { "point" }
        );
        let _ = writeln!(
            out,
            "<title>t = {} °C, deviation = {} °C, U = {} °C{}</title>",
            fmt_value(p.t),
            fmt_value(p.dev),
            fmt_value(p.u),
            if p.flagged {
                ", flagged: residual larger than U"
            } else {
                ""
            }
        );
        if p.u > 0.0 {
            let (y_hi, y_lo) = (y.map(p.dev + p.u), y.map(p.dev - p.u));
            let bar = format!("stroke=\"{colour}\" stroke-width=\"1.2\"");
            line(out, (cx, y_hi), (cx, y_lo), &bar);
            line(out, (cx - 3.0, y_hi), (cx + 3.0, y_hi), &bar);
            line(out, (cx - 3.0, y_lo), (cx + 3.0, y_lo), &bar);
        }
        if p.flagged {
            let _ = writeln!(
                out,
                "<polygon points=\"{}\" fill=\"#ffffff\" stroke=\"{COLOUR_FLAGGED}\" stroke-width=\"1.6\"/>",
                diamond(cx, cy, 5.0)
            );
            text(
                out,
                cx + 7.0,
                cy - 6.0,
                &format!("font-size=\"12\" font-weight=\"bold\" fill=\"{COLOUR_FLAGGED}\""),
                "!",
            );
        } else {
            let _ = writeln!(
                out,
                "<circle cx=\"{}\" cy=\"{}\" r=\"3.5\" fill=\"{COLOUR_POINT}\" stroke=\"{COLOUR_POINT}\" stroke-width=\"1\"/>",
                fmt_px(cx),
                fmt_px(cy)
            );
        }
        out.push_str("</g>\n");
    }
}

fn render_titles(out: &mut String, layout: &Layout, title: &str) {
    let mid_x = 0.5 * (layout.left + layout.right);
    text(
        out,
        0.5 * layout.width,
        24.0,
        &format!(
            "text-anchor=\"middle\" font-size=\"{FONT_TITLE}\" font-weight=\"bold\" fill=\"{COLOUR_TEXT}\""
        ),
        title,
    );
    if layout.tolerance_clipped {
        text(
            out,
            0.5 * layout.width,
            layout.top - 9.0,
            &format!(
                "class=\"note\" text-anchor=\"middle\" font-size=\"{FONT_SMALL}\" fill=\"{COLOUR_TEXT}\""
            ),
            CLIPPED_NOTE,
        );
    }
    text(
        out,
        mid_x,
        layout.bottom + 38.0,
        &format!("text-anchor=\"middle\" font-size=\"{FONT_AXIS_TITLE}\" fill=\"{COLOUR_TEXT}\""),
        "Reference temperature (°C)",
    );
    let (ax, ay) = (16.0, 0.5 * (layout.top + layout.bottom));
    let _ = writeln!(
        out,
        "<text x=\"{x}\" y=\"{y}\" transform=\"rotate(-90 {x} {y})\" text-anchor=\"middle\" \
         font-size=\"{FONT_AXIS_TITLE}\" fill=\"{COLOUR_TEXT}\">Deviation (°C)</text>",
        x = fmt_px(ax),
        y = fmt_px(ay)
    );
}

fn render_legend(out: &mut String, layout: &Layout) {
    if layout.legend.is_empty() {
        return;
    }
    out.push_str("<g class=\"legend\">\n");
    let first_row_y = layout.bottom + 60.0;
    for entry in &layout.legend {
        let x = entry.x;
        let y = first_row_y + entry.row as f64 * LEGEND_ROW_HEIGHT;
        let gx = x + 11.0;
        match entry.kind {
            LegendKind::Measured => {
                line(
                    out,
                    (gx, y - 7.0),
                    (gx, y + 7.0),
                    &format!("stroke=\"{COLOUR_POINT}\" stroke-width=\"1.2\""),
                );
                let _ = writeln!(
                    out,
                    "<circle cx=\"{}\" cy=\"{}\" r=\"3.5\" fill=\"{COLOUR_POINT}\"/>",
                    fmt_px(gx),
                    fmt_px(y)
                );
            }
            LegendKind::Flagged => {
                let _ = writeln!(
                    out,
                    "<polygon points=\"{}\" fill=\"#ffffff\" stroke=\"{COLOUR_FLAGGED}\" stroke-width=\"1.6\"/>",
                    diamond(gx - 3.0, y, 5.0)
                );
                text(
                    out,
                    gx + 4.0,
                    y + 4.0,
                    &format!("font-size=\"12\" font-weight=\"bold\" fill=\"{COLOUR_FLAGGED}\""),
                    "!",
                );
            }
            LegendKind::Curve => {
                let _ = writeln!(
                    out,
                    "<rect x=\"{}\" y=\"{}\" width=\"22\" height=\"10\" fill=\"{COLOUR_CURVE}\" fill-opacity=\"{BAND_OPACITY}\"/>",
                    fmt_px(x),
                    fmt_px(y - 5.0)
                );
                line(
                    out,
                    (x, y),
                    (x + 22.0, y),
                    &format!("stroke=\"{COLOUR_CURVE}\" stroke-width=\"2\""),
                );
            }
            LegendKind::Tolerance => line(
                out,
                (x, y),
                (x + 22.0, y),
                &format!(
                    "stroke=\"{COLOUR_TOLERANCE}\" stroke-width=\"1.5\" stroke-dasharray=\"{TOLERANCE_DASH}\""
                ),
            ),
        }
        text(
            out,
            x + LEGEND_GLYPH_WIDTH,
            y + 4.0,
            &format!("font-size=\"{FONT_SMALL}\" fill=\"{COLOUR_TEXT}\""),
            entry.kind.label(),
        );
    }
    out.push_str("</g>\n");
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Pixel comparisons: the brief asks for 0.01 px.
    const PX_TOL: f64 = 0.01;
    /// Data-value comparisons, well below any printed precision.
    const VALUE_TOL: f64 = 1e-12;

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    fn point(t_c: f64, deviation_c: f64, u: f64, flagged: bool) -> PlotPoint {
        PlotPoint {
            t_c,
            deviation_c,
            expanded_uncertainty_c: u,
            flagged,
        }
    }

    fn tolerance(label: &str, sign: f64) -> ToleranceLine {
        ToleranceLine {
            label: label.to_owned(),
            points: (0..=10)
                .map(|i| {
                    let t = f64::from(i) * 10.0;
                    (t, sign * (0.15 + 0.002 * t))
                })
                .collect(),
        }
    }

    /// Three points over 0..100 °C, deviations within ±0.065 °C, one flagged;
    /// a linear fitted function; class-style tolerances ±(0.15 + 0.002 t).
    fn sample_plot() -> DeviationPlot {
        DeviationPlot {
            title: "PRT 1234 against reference".to_owned(),
            points: vec![
                point(0.0, 0.012, 0.01, false),
                point(50.0, -0.02, 0.012, false),
                point(100.0, 0.05, 0.015, true),
            ],
            curve: (0..=20)
                .map(|i| {
                    let t = f64::from(i) * 5.0;
                    CurveSample {
                        t_c: t,
                        value_c: 0.01 + 0.0002 * t,
                        expanded_uncertainty_c: 0.008,
                    }
                })
                .collect(),
            tolerances: vec![
                tolerance("upper limit", 1.0),
                tolerance("lower limit", -1.0),
            ],
            width_px: 800,
            height_px: 480,
        }
    }

    fn layout_of(plot: &DeviationPlot) -> Layout {
        compute_layout(&Clean::from_plot(plot), plot.width_px, plot.height_px)
            .expect("plot has data")
    }

    /// Tag-balance check: every opened element is closed in order, there is
    /// one root `<svg>`, no `<` inside a tag, and every `&` starts one of the
    /// five XML entities.
    fn assert_well_formed(svg: &str) {
        assert!(
            svg.starts_with("<svg "),
            "starts with: {}",
            &svg[..20.min(svg.len())]
        );
        assert!(svg.ends_with("</svg>"));
        let mut stack: Vec<&str> = Vec::new();
        let mut rest = svg;
        while let Some(start) = rest.find('<') {
            let after = &rest[start + 1..];
            let end = after.find('>').expect("unterminated tag");
            let tag = &after[..end];
            assert!(!tag.contains('<'), "'<' inside tag {tag}");
            if let Some(name) = tag.strip_prefix('/') {
                assert_eq!(stack.pop(), Some(name), "mismatched </{name}>");
                if stack.is_empty() {
                    assert_eq!(after[end + 1..].trim(), "", "content after root");
                }
            } else if !tag.ends_with('/') {
                stack.push(tag.split_whitespace().next().expect("tag name"));
            }
            rest = &after[end + 1..];
        }
        assert!(stack.is_empty(), "unclosed: {stack:?}");
        for (i, _) in svg.match_indices('&') {
            let tail = &svg[i..];
            assert!(
                ["&amp;", "&lt;", "&gt;", "&quot;", "&apos;"]
                    .iter()
                    .any(|e| tail.starts_with(e)),
                "bare '&' at {i}"
            );
        }
        assert_eq!(svg.matches("<g").count(), svg.matches("</g>").count());
        assert_eq!(svg.matches("<text").count(), svg.matches("</text>").count());
    }

    fn assert_no_non_finite(svg: &str) {
        let lower = svg.to_lowercase();
        assert!(!lower.contains("nan"), "NaN in output");
        assert!(!lower.contains("inf"), "inf in output");
    }

    /// Inside tags (attributes), no number has more than two decimals.
    fn assert_attribute_precision(svg: &str) {
        for tag in svg
            .split('<')
            .skip(1)
            .map(|t| t.split('>').next().unwrap_or(""))
        {
            let bytes = tag.as_bytes();
            for (i, &b) in bytes.iter().enumerate() {
                if b == b'.' && i > 0 && bytes[i - 1].is_ascii_digit() {
                    let digits = bytes[i + 1..]
                        .iter()
                        .take_while(|c| c.is_ascii_digit())
                        .count();
                    assert!(digits <= 2, "more than 2 decimals in <{tag}>");
                }
            }
        }
    }

    fn element_with_class<'a>(svg: &'a str, class: &str) -> &'a str {
        let marker = format!("<g class=\"{class}\">");
        let start = svg.find(&marker).expect("group present");
        let end = svg[start..].find("</g>").expect("group closed");
        &svg[start..start + end]
    }

    #[test]
    fn ticks_for_unit_range_step_by_two_tenths() {
        let ticks = nice_ticks(0.0, 1.0, 5);
        assert!(close(ticks.step, 0.2, VALUE_TOL));
        assert_eq!(ticks.decimals, 1);
        let expected = [0.0, 0.2, 0.4, 0.6, 0.8, 1.0];
        assert_eq!(ticks.values.len(), expected.len());
        for (v, e) in ticks.values.iter().zip(expected) {
            assert!(close(*v, e, VALUE_TOL), "{v} vs {e}");
        }
        assert_eq!(ticks.labels(), ["0.0", "0.2", "0.4", "0.6", "0.8", "1.0"]);
    }

    #[test]
    fn ticks_for_small_asymmetric_range_step_by_two_hundredths() {
        let ticks = nice_ticks(-0.037, 0.052, 5);
        assert!(close(ticks.step, 0.02, VALUE_TOL));
        assert_eq!(ticks.decimals, 2);
        assert_eq!(ticks.labels(), ["-0.02", "0.00", "0.02", "0.04"]);
    }

    #[test]
    fn ticks_use_one_two_five_steps() {
        // raw step 4.6 -> 5
        let a = nice_ticks(0.0, 23.0, 5);
        assert_eq!(a.labels(), ["0", "5", "10", "15", "20"]);
        // raw step 140 -> 200
        let b = nice_ticks(0.0, 700.0, 5);
        assert_eq!(b.labels(), ["0", "200", "400", "600"]);
        // raw step 7 -> 10 (next decade)
        let c = nice_ticks(0.0, 35.0, 5);
        assert!(close(c.step, 10.0, VALUE_TOL));
        assert_eq!(c.labels(), ["0", "10", "20", "30"]);
        // raw step 0.3 -> 0.5
        let d = nice_ticks(0.0, 0.9, 3);
        assert_eq!(d.labels(), ["0.0", "0.5"]);
        // reversed bounds are accepted; raw step 2.5 -> 5
        let e = nice_ticks(5.0, -5.0, 4);
        assert_eq!(e.labels(), ["-5", "0", "5"]);
    }

    #[test]
    fn tick_labels_have_no_floating_point_noise() {
        assert_eq!(format_tick(0.1 + 0.2, 1), "0.3");
        assert_eq!(format_tick(-1e-17, 2), "0.00");
        let ticks = nice_ticks(0.0, 0.3, 3);
        assert_eq!(ticks.labels(), ["0.0", "0.1", "0.2", "0.3"]);
        // Values are formed as integer / power of ten, so 3 × 0.1 is 0.3.
        assert_eq!(ticks.values[3], 0.3);
    }

    #[test]
    fn degenerate_tick_ranges_do_not_panic() {
        assert_eq!(nice_ticks(1.0, 1.0, 5).values, [1.0]);
        assert!(nice_ticks(f64::NAN, 1.0, 5).values.is_empty());
        assert!(nice_ticks(0.0, f64::INFINITY, 5).values.is_empty());
        // Finite ends whose difference overflows give no ticks either.
        assert!(nice_ticks(-f64::MAX, f64::MAX, 5).values.is_empty());
        // Tick indices beyond i64 range are refused instead of overflowing.
        assert!(nice_ticks(9e18, 9e18 + 4096.0, 5).values.is_empty());
        assert_eq!(nice_ticks(0.0, 1.0, 0).labels(), ["0", "1"]);
    }

    #[test]
    fn numbers_are_printed_with_limited_precision() {
        assert_eq!(fmt_px(12.5), "12.5");
        assert_eq!(fmt_px(12.3456), "12.35");
        assert_eq!(fmt_px(100.0), "100");
        assert_eq!(fmt_px(-0.001), "0");
        assert_eq!(fmt_px(f64::NAN), "0");
        assert_eq!(fmt_value(0.0234), "0.0234");
        assert_eq!(fmt_value(150.0), "150");
        assert_eq!(fmt_value(-0.000125), "-0.000125");
        assert_eq!(fmt_value(0.0), "0");
    }

    #[test]
    fn xml_special_characters_are_escaped() {
        assert_eq!(escape_xml("<b>&\"'"), "&lt;b&gt;&amp;&quot;&apos;");
        assert_eq!(escape_xml("a\u{1}b\nc"), "ab c");
        assert_eq!(escape_xml("0 °C ± U"), "0 °C ± U");
    }

    #[test]
    fn user_text_is_escaped_in_the_svg() {
        let mut plot = sample_plot();
        plot.title = "<b>&".to_owned();
        plot.tolerances[0].label = "x\"y'z<".to_owned();
        let svg = render_svg(&plot);
        assert_well_formed(&svg);
        assert!(svg.contains("&lt;b&gt;&amp;"));
        assert!(!svg.contains("<b>"));
        assert!(svg.contains(">x&quot;y&apos;z&lt;</text>"));
        let id = id_prefix(&plot);
        assert!(svg.contains(&format!("<title id=\"{id}-title\">&lt;b&gt;&amp;</title>")));
    }

    #[test]
    fn scale_maps_domain_ends_to_plot_edges() {
        let x = LinearScale {
            d0: -5.0,
            d1: 105.0,
            r0: 70.0,
            r1: 776.0,
        };
        assert!(close(x.map(-5.0), 70.0, PX_TOL));
        assert!(close(x.map(105.0), 776.0, PX_TOL));
        assert!(close(x.map(50.0), 423.0, PX_TOL));
        let y = LinearScale {
            d0: -0.1,
            d1: 0.1,
            r0: 400.0,
            r1: 52.0,
        };
        assert!(close(y.map(-0.1), 400.0, PX_TOL));
        assert!(close(y.map(0.1), 52.0, PX_TOL));
        assert!(close(y.map(0.0), 226.0, PX_TOL));
        let flat = LinearScale {
            d0: 1.0,
            d1: 1.0,
            r0: 0.0,
            r1: 10.0,
        };
        assert!(close(flat.map(1.0), 5.0, PX_TOL));
    }

    #[test]
    fn layout_maps_range_ends_to_edges_and_data_min_inside_margin() {
        let layout = layout_of(&sample_plot());
        // x: data 0..100 plus 5 % of 100 on each side.
        assert!(close(layout.x_range.lo, -5.0, VALUE_TOL));
        assert!(close(layout.x_range.hi, 105.0, VALUE_TOL));
        assert!(close(layout.x.map(layout.x_range.lo), layout.left, PX_TOL));
        assert!(close(layout.x.map(layout.x_range.hi), layout.right, PX_TOL));
        let margin_px = (layout.right - layout.left) * 0.05 / 1.1;
        assert!(close(layout.x.map(0.0), layout.left + margin_px, PX_TOL));
        assert!(close(layout.x.map(100.0), layout.right - margin_px, PX_TOL));
        // y: bottom edge is the low end, top edge the high end.
        assert!(close(
            layout.y.map(layout.y_range.lo),
            layout.bottom,
            PX_TOL
        ));
        assert!(close(layout.y.map(layout.y_range.hi), layout.top, PX_TOL));
        // A scale built on the data range puts the data minimum on the edge.
        let on_data = LinearScale {
            d0: 0.0,
            d1: 100.0,
            ..layout.x
        };
        assert!(close(on_data.map(0.0), layout.left, PX_TOL));
        assert_eq!(layout.width, 800.0);
        assert_eq!(layout.height, 480.0);
    }

    #[test]
    fn far_tolerances_are_clipped_and_noted() {
        let plot = sample_plot();
        let layout = layout_of(&plot);
        // Data range -0.032..0.065 (span 0.097) against ±0.35 tolerances:
        // 0.097 / 0.70 < 20 %, so y keeps the data range plus 8 % margins.
        assert!(layout.tolerance_clipped);
        assert!(close(layout.y_range.lo, -0.032 - 0.08 * 0.097, 1e-9));
        assert!(close(layout.y_range.hi, 0.065 + 0.08 * 0.097, 1e-9));
        let svg = render_svg(&plot);
        assert!(svg.contains(CLIPPED_NOTE));
        assert!(svg.contains("2 tolerance lines, clipped to the plotted deviation range."));
        // Labels are kept inside the plot area even though the lines are not.
        assert!(svg.contains(">upper limit</text>"));
        assert!(svg.contains(">lower limit</text>"));
    }

    #[test]
    fn near_tolerances_are_included_without_note() {
        let mut plot = sample_plot();
        plot.tolerances = vec![
            ToleranceLine {
                label: "+0.05".to_owned(),
                points: vec![(0.0, 0.05), (100.0, 0.05)],
            },
            ToleranceLine {
                label: "-0.05".to_owned(),
                points: vec![(0.0, -0.05), (100.0, -0.05)],
            },
        ];
        let layout = layout_of(&plot);
        assert!(!layout.tolerance_clipped);
        // Combined -0.05..0.065, span 0.115, plus 8 % on each side.
        assert!(close(layout.y_range.lo, -0.05 - 0.08 * 0.115, 1e-9));
        assert!(close(layout.y_range.hi, 0.065 + 0.08 * 0.115, 1e-9));
        let svg = render_svg(&plot);
        assert!(!svg.contains(CLIPPED_NOTE));
        assert!(svg.contains("2 tolerance lines."));
        // The label sits left of the line's right end (t = 100), above it.
        let x_end = fmt_px(layout.x.map(100.0) - 4.0);
        let y_end = fmt_px(layout.y.map(0.05) - 5.0);
        assert!(svg.contains(&format!(
            "<text x=\"{x_end}\" y=\"{y_end}\" class=\"tolerance-label\""
        )));
        // The lower limit is labelled below its line.
        let y_low = fmt_px(layout.y.map(-0.05) + 13.0);
        assert!(svg.contains(&format!(
            "<text x=\"{x_end}\" y=\"{y_low}\" class=\"tolerance-label\""
        )));
    }

    #[test]
    fn tolerance_lines_are_cut_at_the_x_range() {
        let x = Range { lo: 5.0, hi: 20.0 };
        assert_eq!(
            visible_tolerance(&[(0.0, 1.0), (10.0, 2.0)], x),
            [(5.0, 1.5), (10.0, 2.0)]
        );
        assert_eq!(
            visible_tolerance(&[(0.0, 1.0), (10.0, 2.0), (30.0, 4.0)], x),
            [(5.0, 1.5), (10.0, 2.0), (20.0, 3.0)]
        );
        assert_eq!(
            visible_tolerance(&[(7.0, 0.3)], x),
            [(5.0, 0.3), (20.0, 0.3)]
        );
        assert!(visible_tolerance(&[(30.0, 1.0), (40.0, 2.0)], x).is_empty());
        // A vertical step keeps both values.
        assert_eq!(
            visible_tolerance(&[(0.0, 1.0), (10.0, 1.0), (10.0, 2.0), (30.0, 2.0)], x),
            [(5.0, 1.0), (10.0, 1.0), (10.0, 2.0), (20.0, 2.0)]
        );
    }

    #[test]
    fn flagged_points_use_a_hollow_diamond_and_a_text_mark() {
        let svg = render_svg(&sample_plot());
        assert_eq!(svg.matches("<g class=\"point\">").count(), 2);
        assert_eq!(svg.matches("<g class=\"point-flagged\">").count(), 1);
        let normal = element_with_class(&svg, "point");
        assert!(normal.contains("<circle "));
        assert!(!normal.contains("<polygon"));
        let flagged = element_with_class(&svg, "point-flagged");
        assert!(!flagged.contains("<circle"));
        assert!(flagged.contains(&format!(
            "fill=\"#ffffff\" stroke=\"{COLOUR_FLAGGED}\" stroke-width=\"1.6\""
        )));
        assert!(flagged.contains(">!</text>"));
        assert!(flagged.contains("flagged: residual larger than U</title>"));
        // Error bar: three lines (bar and two caps).
        assert_eq!(flagged.matches("<line ").count(), 3);
        assert!(svg.contains(">Flagged: residual larger than U</text>"));
    }

    #[test]
    fn plot_has_axes_titles_legend_band_and_zero_line() {
        let plot = sample_plot();
        let layout = layout_of(&plot);
        let svg = render_svg(&plot);
        assert_well_formed(&svg);
        assert_attribute_precision(&svg);
        for needle in [
            ">Reference temperature (°C)</text>",
            ">Deviation (°C)</text>",
            ">PRT 1234 against reference</text>",
            ">Measured deviation ± U</text>",
            ">Fitted function ± U</text>",
            ">Tolerance</text>",
            &format!("fill=\"{COLOUR_CURVE}\" fill-opacity=\"0.2\""),
            &format!("stroke-dasharray=\"{TOLERANCE_DASH}\""),
        ] {
            assert!(svg.contains(needle), "missing {needle}");
        }
        let y0 = fmt_px(layout.y.map(0.0));
        assert!(svg.contains(&format!(
            "<line x1=\"{}\" y1=\"{y0}\" x2=\"{}\" y2=\"{y0}\" class=\"zero-line\"",
            fmt_px(layout.left),
            fmt_px(layout.right)
        )));
        // Band polygon: 21 upper + 21 lower vertices.
        let marker = "<polygon points=\"";
        let band_start = svg.find(marker).expect("band") + marker.len();
        let band_end = svg[band_start..].find('"').expect("end") + band_start;
        assert_eq!(svg[band_start..band_end].split(' ').count(), 42);
        for label in layout.x_ticks.labels() {
            assert!(svg.contains(&format!(">{label}</text>")), "x tick {label}");
        }
        assert_eq!(
            layout.x_ticks.labels(),
            ["0", "20", "40", "60", "80", "100"]
        );
    }

    #[test]
    fn svg_is_accessible_and_describes_the_data() {
        let plot = sample_plot();
        let svg = render_svg(&plot);
        let id = id_prefix(&plot);
        assert!(svg.starts_with("<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"800\" height=\"480\" viewBox=\"0 0 800 480\" role=\"img\""));
        assert!(svg.contains(&format!("aria-labelledby=\"{id}-title {id}-desc\"")));
        assert!(svg.contains(&format!("<desc id=\"{id}-desc\">Deviation plot. 3 measured points (1 flagged), reference temperature from 0 °C to 100 °C, maximum |deviation| 0.05 °C. Fitted function from 0 °C to 100 °C. 2 tolerance lines, clipped to the plotted deviation range.</desc>")));
        assert!(svg.contains(&format!("clip-path=\"url(#{id}-clip)\"")));
    }

    #[test]
    fn empty_input_renders_a_no_data_svg() {
        let svg = render_svg(&DeviationPlot::default());
        assert_well_formed(&svg);
        assert!(svg.contains(">No data to plot</text>"));
        assert!(svg.contains("viewBox=\"0 0 800 480\""));
        assert!(svg.contains("role=\"img\""));
        assert!(svg.contains(">Deviation plot. No data to plot.</desc>"));
        assert!(svg.contains(">Deviation plot</title>"));
        // Only unusable values, and only tolerances, count as no data too.
        let only_bad = DeviationPlot {
            points: vec![point(f64::NAN, 0.0, 0.0, false)],
            tolerances: vec![tolerance("t", 1.0)],
            width_px: 0,
            height_px: 0,
            ..DeviationPlot::default()
        };
        let svg = render_svg(&only_bad);
        assert_well_formed(&svg);
        assert!(svg.contains(">No data to plot</text>"));
        assert!(svg.contains("viewBox=\"0 0 320 240\""));
    }

    #[test]
    fn non_finite_and_huge_values_are_skipped() {
        let plot = DeviationPlot {
            title: "bad values".to_owned(),
            points: vec![
                point(f64::NAN, 0.01, 0.01, false),
                point(10.0, f64::INFINITY, 0.01, false),
                point(1e300, 0.01, 0.01, true),
                point(10.0, 0.01, f64::NAN, false),
                point(20.0, 0.02, -0.01, false),
            ],
            curve: vec![
                CurveSample {
                    t_c: f64::NEG_INFINITY,
                    value_c: 0.0,
                    expanded_uncertainty_c: 0.0,
                },
                CurveSample {
                    t_c: 15.0,
                    value_c: 0.015,
                    expanded_uncertainty_c: f64::INFINITY,
                },
            ],
            tolerances: vec![ToleranceLine {
                label: "limit".to_owned(),
                points: vec![(f64::NAN, 1.0), (0.0, f64::INFINITY)],
            }],
            ..DeviationPlot::default()
        };
        let svg = render_svg(&plot);
        assert_well_formed(&svg);
        assert_no_non_finite(&svg);
        assert_attribute_precision(&svg);
        assert!(svg.contains("2 measured points (0 flagged), reference temperature from 10 °C to 20 °C, maximum |deviation| 0.02 °C."));
        assert!(!svg.contains(">limit</text>"));
        let layout = layout_of(&plot);
        // Negative U is taken by magnitude: 0.02 + 0.01 is the top of the data.
        assert!(close(layout.y_range.hi, 0.03 + 0.08 * 0.03, 1e-9));
        // NaN U draws no error bar: one point group has 0 lines, the other 3.
        let lines: Vec<usize> = svg
            .split("<g class=\"point\">")
            .skip(1)
            .map(|g| {
                g.split("</g>")
                    .next()
                    .unwrap_or("")
                    .matches("<line ")
                    .count()
            })
            .collect();
        assert_eq!(lines, [0, 3]);
    }

    #[test]
    fn zero_range_inputs_render_without_panicking() {
        let single = DeviationPlot {
            points: vec![point(20.0, 0.0, 0.0, false)],
            ..DeviationPlot::default()
        };
        let layout = layout_of(&single);
        // 20 ± 1 °C, then 5 % of 2 °C margin.
        assert!(close(layout.x_range.lo, 18.9, 1e-9));
        assert!(close(layout.x_range.hi, 21.1, 1e-9));
        // 0 ± 0.1 °C, then 8 % of 0.2 °C margin.
        assert!(close(layout.y_range.lo, -0.116, 1e-9));
        assert!(close(layout.y_range.hi, 0.116, 1e-9));
        assert!(close(
            layout.x.map(20.0),
            0.5 * (layout.left + layout.right),
            PX_TOL
        ));

        let cases = [
            single.clone(),
            DeviationPlot {
                points: vec![
                    point(5.0, 0.01, 0.0, false),
                    point(5.0, 0.02, 0.0, true),
                    point(5.0, 0.03, 0.0, false),
                ],
                ..DeviationPlot::default()
            },
            DeviationPlot {
                points: vec![point(0.0, 0.5, 0.0, false), point(50.0, 0.5, 0.0, false)],
                curve: vec![CurveSample {
                    t_c: 25.0,
                    value_c: 0.5,
                    expanded_uncertainty_c: 0.0,
                }],
                ..DeviationPlot::default()
            },
            DeviationPlot {
                curve: vec![CurveSample {
                    t_c: 1e9,
                    value_c: -1e9,
                    expanded_uncertainty_c: 1e9,
                }],
                tolerances: vec![ToleranceLine {
                    label: "flat".to_owned(),
                    points: vec![(3.0, 0.2)],
                }],
                width_px: 0,
                height_px: u32::MAX,
                ..DeviationPlot::default()
            },
        ];
        for plot in &cases {
            let svg = render_svg(plot);
            assert_well_formed(&svg);
            assert_no_non_finite(&svg);
            assert_attribute_precision(&svg);
            assert!(svg.contains("Reference temperature (°C)"));
        }
    }

    #[test]
    fn no_style_attribute_or_element_is_emitted() {
        for svg in [
            render_svg(&sample_plot()),
            render_svg(&DeviationPlot::default()),
        ] {
            assert!(!svg.contains("style="));
            assert!(!svg.contains("<style"));
            assert!(!svg.contains("<script"));
        }
    }

    #[test]
    fn output_is_deterministic() {
        let plot = sample_plot();
        let first = render_svg(&plot);
        assert_eq!(first, render_svg(&plot.clone()));
        let mut other = plot;
        other.points[0].deviation_c = 0.013;
        let second = render_svg(&other);
        assert_ne!(id_prefix(&other), id_prefix(&sample_plot()));
        assert!(second.contains(&format!("id=\"{}-title\"", id_prefix(&other))));
        assert_eq!(second, render_svg(&other));
    }

    #[test]
    fn narrow_plots_wrap_the_legend_and_grow_if_needed() {
        let mut plot = sample_plot();
        plot.width_px = 320;
        plot.height_px = 240;
        let layout = layout_of(&plot);
        let rows = layout.legend.iter().map(|e| e.row).max().unwrap_or(0) + 1;
        assert_eq!(rows, 3);
        assert!(layout.bottom - layout.top >= MIN_PLOT_HEIGHT - PX_TOL);
        assert!(layout.height >= 240.0);
        // Short axes still get at least three ticks.
        assert!(layout.y_ticks.values.len() >= 3, "{:?}", layout.y_ticks);
        assert!(layout.x_ticks.values.len() >= 3, "{:?}", layout.x_ticks);
        assert_well_formed(&render_svg(&plot));
    }
}
