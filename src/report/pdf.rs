//! The calibration certificate as PDF, rendered from the frozen
//! [`CertificateSnapshot`] alone.
//!
//! Layout is done by hand in points on A4 portrait: the content is first laid
//! out into pages (so the total page count is known), then every page gets
//! its footer "Certificate <number> rev <r> — page x of y". Text is real text
//! in embedded DejaVu Sans (regular and bold), so it can be searched and
//! extracted; the deviation plot is drawn with vector paths.
//!
//! The output is byte-for-byte deterministic: the document dates come from
//! the issue date, font resource names are fixed, and the file identifier is
//! derived from the snapshot's fingerprint.

use std::collections::BTreeSet;
use std::fmt;

use printpdf::{
    Color, Date, Line, LineDashPattern, LinePoint, Mm, Offset, OffsetDateTime, Op, PaintMode,
    ParsedFont, PdfDocument, PdfFontHandle, PdfPage, PdfSaveOptions, Point, Polygon, PolygonRing,
    Pt, Rgb, TextItem, Time, WindingOrder,
};
use printpdf::{FontId, PdfDocumentInfo};

use super::snapshot::{CertificateSnapshot, PlotBlock, ResultRow, SwitchBlock, SwitchPointBlock};

static FONT_REGULAR: &[u8] = include_bytes!("../../static/fonts/DejaVuSans.ttf");
static FONT_BOLD: &[u8] = include_bytes!("../../static/fonts/DejaVuSans-Bold.ttf");

/// Why a certificate could not be rendered.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum PdfError {
    /// An embedded font could not be parsed.
    Font(&'static str),
    /// The issue date is not a valid YYYY-MM-DD date.
    IssueDate(String),
    /// An embedded font could not be reduced to the glyphs used.
    Subset(String),
    /// The snapshot could not be serialised for its fingerprint.
    Fingerprint(String),
    /// The PDF could not be written.
    Write(String),
}

impl fmt::Display for PdfError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Self::Font(name) => write!(f, "the embedded font {name} could not be parsed"),
            Self::IssueDate(d) => write!(f, "the issue date {d:?} is not a YYYY-MM-DD date"),
            Self::Subset(e) => write!(f, "the embedded font could not be subset: {e}"),
            Self::Fingerprint(e) => write!(f, "the snapshot fingerprint failed: {e}"),
            Self::Write(e) => write!(f, "the PDF could not be written: {e}"),
        }
    }
}

impl std::error::Error for PdfError {}

// ---------------------------------------------------------------------------
// Page geometry (points; y is measured from the top of the page while laying
// out and converted when drawing).

const PAGE_W: f32 = 595.276;
const PAGE_H: f32 = 841.89;
const MARGIN_X: f32 = 59.5; // 21 mm
const MARGIN_TOP: f32 = 56.7; // 20 mm
const CONTENT_BOTTOM: f32 = PAGE_H - 70.9; // 25 mm kept free for the footer
const CONTENT_W: f32 = PAGE_W - 2.0 * MARGIN_X;
const RIGHT: f32 = PAGE_W - MARGIN_X;

/// Width of the label column of label/value rows.
const KV_LABEL_W: f32 = 150.0;

/// Indent of the text of a bulleted paragraph.
const BULLET_INDENT: f32 = 14.0;

// Type sizes.
const BODY: f32 = 9.0;
const SMALL: f32 = 7.6;
const TABLE: f32 = 8.3;
const TABLE_HEAD: f32 = 7.4;
const HEADING: f32 = 10.5;
const LEADING: f32 = 1.38;

// A restrained palette of our own: ink, muted grey, a deep green-blue accent.
const INK: (f32, f32, f32) = (0.11, 0.13, 0.16);
const MUTED: (f32, f32, f32) = (0.38, 0.41, 0.45);
const ACCENT: (f32, f32, f32) = (0.09, 0.32, 0.36);
const RULE: (f32, f32, f32) = (0.78, 0.80, 0.82);
const TINT: (f32, f32, f32) = (0.925, 0.950, 0.950);
const ZEBRA: (f32, f32, f32) = (0.972, 0.978, 0.980);
const BAND: (f32, f32, f32) = (0.80, 0.89, 0.90);
const LIMIT: (f32, f32, f32) = (0.66, 0.20, 0.16);

fn rgb(c: (f32, f32, f32)) -> Color {
    Color::Rgb(Rgb::new(c.0, c.1, c.2, None))
}

// ---------------------------------------------------------------------------
// Fonts and measuring.

#[derive(Clone, Copy, PartialEq, Eq)]
enum Face {
    Regular,
    Bold,
}

struct Fonts {
    regular: ParsedFont,
    bold: ParsedFont,
}

const REGULAR_ID: &str = "JCTREG";
const BOLD_ID: &str = "JCTBLD";

impl Fonts {
    fn load() -> Result<Self, PdfError> {
        let mut warnings = Vec::new();
        let regular = ParsedFont::from_bytes(FONT_REGULAR, 0, &mut warnings)
            .ok_or(PdfError::Font("DejaVu Sans"))?;
        let bold = ParsedFont::from_bytes(FONT_BOLD, 0, &mut warnings)
            .ok_or(PdfError::Font("DejaVu Sans Bold"))?;
        Ok(Self { regular, bold })
    }

    /// The font reduced to the glyphs of `chars` (plus .notdef), so the
    /// PDF embeds kilobytes instead of the whole face.
    fn subset(
        bytes: &[u8],
        full: &ParsedFont,
        chars: &BTreeSet<char>,
    ) -> Result<ParsedFont, PdfError> {
        use allsorts::binary::read::ReadScope;
        use allsorts::font_data::FontData;
        use allsorts::subset::{CmapTarget, SubsetProfile, subset};
        let fail = |e: String| PdfError::Subset(e);
        let gids: BTreeSet<u16> = chars
            .iter()
            .filter_map(|c| full.lookup_glyph_index(u32::from(*c)))
            .filter(|g| *g != 0)
            .collect();
        let ids: Vec<u16> = std::iter::once(0).chain(gids).collect();
        let data = ReadScope::new(bytes)
            .read::<FontData<'_>>()
            .map_err(|e| fail(e.to_string()))?;
        let provider = data.table_provider(0).map_err(|e| fail(e.to_string()))?;
        let reduced = subset(&provider, &ids, &SubsetProfile::Pdf, CmapTarget::Unicode)
            .map_err(|e| fail(e.to_string()))?;
        let mut warnings = Vec::new();
        ParsedFont::from_bytes(&reduced, 0, &mut warnings)
            .ok_or_else(|| fail("the reduced font could not be parsed".to_string()))
    }

    fn font(&self, face: Face) -> &ParsedFont {
        match face {
            Face::Regular => &self.regular,
            Face::Bold => &self.bold,
        }
    }

    /// Advance width of `text` at `size` points, from the font's own metrics.
    fn width(&self, face: Face, size: f32, text: &str) -> f32 {
        let font = self.font(face);
        let upem = f32::from(font.units_per_em.max(1));
        let units: f32 = text
            .chars()
            .map(|c| {
                font.lookup_glyph_index(u32::from(c))
                    .and_then(|g| font.get_glyph_width(g))
                    .map_or(0.6 * upem, f32::from)
            })
            .sum();
        units / upem * size
    }

    /// Breaks `text` into lines no wider than `max_w`; explicit newlines are
    /// kept, words longer than a line are split by characters.
    fn wrap(&self, face: Face, size: f32, text: &str, max_w: f32) -> Vec<String> {
        let mut lines = Vec::new();
        for para in text.split('\n') {
            let mut line = String::new();
            for word in para.split_whitespace() {
                let candidate = if line.is_empty() {
                    word.to_string()
                } else {
                    format!("{line} {word}")
                };
                if self.width(face, size, &candidate) <= max_w {
                    line = candidate;
                    continue;
                }
                if !line.is_empty() {
                    lines.push(std::mem::take(&mut line));
                }
                if self.width(face, size, word) <= max_w {
                    line = word.to_string();
                } else {
                    for c in word.chars() {
                        let mut next = line.clone();
                        next.push(c);
                        if !line.is_empty() && self.width(face, size, &next) > max_w {
                            lines.push(std::mem::take(&mut line));
                            line.push(c);
                        } else {
                            line = next;
                        }
                    }
                }
            }
            lines.push(line);
        }
        if lines.is_empty() {
            lines.push(String::new());
        }
        lines
    }
}

// ---------------------------------------------------------------------------
// Drawing primitives on one page (y from the top).

fn pt(x: f32, y_top: f32) -> LinePoint {
    LinePoint {
        p: Point {
            x: Pt(x),
            y: Pt(PAGE_H - y_top),
        },
        bezier: false,
    }
}

#[derive(Default)]
struct Page {
    ops: Vec<Op>,
    /// Characters shown in each face, for subsetting the embedded fonts.
    used_regular: BTreeSet<char>,
    used_bold: BTreeSet<char>,
}

#[derive(Clone, Copy, PartialEq, Eq)]
enum Align {
    Left,
    Right,
    Center,
}

impl Page {
    #[expect(
        clippy::too_many_arguments,
        reason = "a text run needs position, face, size, colour and alignment"
    )]
    fn text(
        &mut self,
        fonts: &Fonts,
        x: f32,
        baseline: f32,
        face: Face,
        size: f32,
        color: (f32, f32, f32),
        align: Align,
        text: &str,
    ) {
        if text.is_empty() {
            return;
        }
        let w = fonts.width(face, size, text);
        let x = match align {
            Align::Left => x,
            Align::Right => x - w,
            Align::Center => x - w / 2.0,
        };
        let id = match face {
            Face::Regular => {
                self.used_regular.extend(text.chars());
                REGULAR_ID
            }
            Face::Bold => {
                self.used_bold.extend(text.chars());
                BOLD_ID
            }
        };
        self.ops.extend([
            Op::StartTextSection,
            Op::SetFont {
                font: PdfFontHandle::External(FontId(id.to_string())),
                size: Pt(size),
            },
            Op::SetFillColor { col: rgb(color) },
            Op::SetTextCursor {
                pos: Point {
                    x: Pt(x),
                    y: Pt(PAGE_H - baseline),
                },
            },
            Op::ShowText {
                items: vec![TextItem::Text(text.to_string())],
            },
            Op::EndTextSection,
        ]);
    }

    fn stroke_style(&mut self, width: f32, color: (f32, f32, f32), dash: Option<&[f32]>) {
        self.ops.push(Op::SetOutlineThickness { pt: Pt(width) });
        self.ops.push(Op::SetOutlineColor { col: rgb(color) });
        self.ops.push(Op::SetLineDashPattern {
            dash: dash.map_or_else(LineDashPattern::solid, |d| LineDashPattern::new(0.0, d)),
        });
    }

    fn polyline(&mut self, points: &[(f32, f32)], width: f32, color: (f32, f32, f32)) {
        self.polyline_dashed(points, width, color, None);
    }

    fn polyline_dashed(
        &mut self,
        points: &[(f32, f32)],
        width: f32,
        color: (f32, f32, f32),
        dash: Option<&[f32]>,
    ) {
        if points.len() < 2 {
            return;
        }
        self.stroke_style(width, color, dash);
        self.ops.push(Op::DrawLine {
            line: Line {
                points: points.iter().map(|&(x, y)| pt(x, y)).collect(),
                is_closed: false,
            },
        });
    }

    fn hline(&mut self, x1: f32, x2: f32, y: f32, width: f32, color: (f32, f32, f32)) {
        self.polyline(&[(x1, y), (x2, y)], width, color);
    }

    fn fill_polygon(&mut self, points: &[(f32, f32)], color: (f32, f32, f32)) {
        if points.len() < 3 {
            return;
        }
        self.ops.push(Op::SetFillColor { col: rgb(color) });
        self.ops.push(Op::DrawPolygon {
            polygon: Polygon {
                rings: vec![PolygonRing {
                    points: points.iter().map(|&(x, y)| pt(x, y)).collect(),
                }],
                mode: PaintMode::Fill,
                winding_order: WindingOrder::NonZero,
            },
        });
    }

    fn fill_rect(&mut self, x: f32, y: f32, w: f32, h: f32, color: (f32, f32, f32)) {
        self.fill_polygon(&[(x, y), (x + w, y), (x + w, y + h), (x, y + h)], color);
    }

    fn stroke_rect(&mut self, x: f32, y: f32, w: f32, h: f32, width: f32, c: (f32, f32, f32)) {
        self.stroke_style(width, c, None);
        self.ops.push(Op::DrawLine {
            line: Line {
                points: vec![pt(x, y), pt(x + w, y), pt(x + w, y + h), pt(x, y + h)],
                is_closed: true,
            },
        });
    }
}

// ---------------------------------------------------------------------------
// Number formatting for values the snapshot does not carry as printed text.

/// Fixed decimals, trailing zeros removed, no negative zero.
fn fmt_trim(v: f64, decimals: usize) -> String {
    let mut s = format!("{v:.decimals$}");
    if s.contains('.') {
        while s.ends_with('0') {
            s.pop();
        }
        if s.ends_with('.') {
            s.pop();
        }
    }
    if s == "-0" { "0".to_string() } else { s }
}

/// Fixed decimals, keeping trailing zeros; no negative zero.
fn fmt_fixed(v: f64, decimals: usize) -> String {
    let s = format!("{v:.decimals$}");
    if s.starts_with('-') && s.chars().all(|c| matches!(c, '-' | '0' | '.')) {
        s[1..].to_string()
    } else {
        s
    }
}

/// Rounded to `sig` significant digits, keeping the trailing zeros that
/// carry the resolution (0.030, not 0.03).
fn fmt_sig(v: f64, sig: i32) -> String {
    if v == 0.0 || !v.is_finite() {
        return fmt_trim(v, 0);
    }
    let exp = v.abs().log10().floor() as i32;
    let decimals = usize::try_from((sig - 1 - exp).max(0)).unwrap_or(0);
    format!("{v:.decimals$}")
}

fn superscript(n: i64) -> String {
    n.to_string()
        .chars()
        .map(|c| match c {
            '-' => '⁻',
            '0' => '⁰',
            '1' => '¹',
            '2' => '²',
            '3' => '³',
            '4' => '⁴',
            '5' => '⁵',
            '6' => '⁶',
            '7' => '⁷',
            '8' => '⁸',
            _ => '⁹',
        })
        .collect()
}

fn subscript(n: usize) -> String {
    n.to_string()
        .chars()
        .map(|c| char::from_u32(0x2080 + c.to_digit(10).unwrap_or(0)).unwrap_or('?'))
        .collect()
}

/// Scientific notation with seven significant digits: "1.234567 × 10⁻⁴".
fn fmt_coefficient(v: f64) -> String {
    if v == 0.0 {
        return "0".to_string();
    }
    let s = format!("{v:.6e}");
    match s.split_once('e') {
        Some((mantissa, exp)) => match exp.parse::<i64>() {
            Ok(0) => mantissa.to_string(),
            Ok(e) => format!("{mantissa} × 10{}", superscript(e)),
            Err(_) => s.clone(),
        },
        None => s,
    }
}

fn fmt_percent(p: f64) -> String {
    let p = if p <= 1.0 { p * 100.0 } else { p };
    fmt_trim(p, 2)
}

fn or_dash(v: &str) -> String {
    if v.trim().is_empty() {
        "—".to_string()
    } else {
        v.to_string()
    }
}

/// The fewest decimals (at most `max`) that show every value of a column
/// exactly, so that a column of observations lines up on its decimal point.
fn column_decimals(values: &[f64], max: usize) -> usize {
    (0..max)
        .find(|&d| {
            let scale = 10f64.powi(i32::try_from(d).unwrap_or(0));
            values
                .iter()
                .all(|v| ((v * scale).round() - v * scale).abs() < 1e-6)
        })
        .unwrap_or(max)
}

/// One row of the switch results as printed: what, direction, n, value, U,
/// k, s (°C).
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct SwitchRowText {
    pub quantity: &'static str,
    pub direction: String,
    pub n: String,
    pub value: String,
    pub uncertainty: String,
    pub k: String,
    pub std_dev: String,
}

/// One observed state change as printed.
#[derive(Debug, Clone, PartialEq, Eq)]
pub(crate) struct SwitchChangeText {
    pub ramp: String,
    pub direction: String,
    pub t_c: String,
    pub new_state: String,
}

/// The printed rows of switch point, reset point and differential (the
/// PDF and the HTML page print the same strings).
pub(crate) fn switch_rows(sw: &SwitchBlock) -> Vec<SwitchRowText> {
    let point = |quantity: &'static str, p: &SwitchPointBlock| SwitchRowText {
        quantity,
        direction: or_dash(&p.direction),
        n: p.n.to_string(),
        value: or_dash(&p.value.printed_value_c),
        uncertainty: or_dash(&p.value.printed_uncertainty_c),
        k: format!("{:.2}", p.value.coverage_factor),
        std_dev: p
            .std_dev_c
            .map_or_else(|| "—".to_string(), |s| fmt_sig(s, 2)),
    };
    let mut rows = vec![point("Switch point", &sw.switch_point)];
    if let Some(r) = &sw.reset_point {
        rows.push(point("Reset point", r));
    }
    if let Some(d) = &sw.differential {
        rows.push(SwitchRowText {
            quantity: "Differential",
            direction: "—".to_string(),
            n: "—".to_string(),
            value: or_dash(&d.printed_value_c),
            uncertainty: or_dash(&d.printed_uncertainty_c),
            k: format!("{:.2}", d.coverage_factor),
            std_dev: "—".to_string(),
        });
    }
    rows
}

/// The observed state changes as printed, temperatures with one number of
/// decimals for the whole column.
pub(crate) fn switch_changes(sw: &SwitchBlock) -> Vec<SwitchChangeText> {
    let temps: Vec<f64> = sw.changes.iter().map(|c| c.t_c).collect();
    let d = column_decimals(&temps, 3);
    sw.changes
        .iter()
        .map(|c| SwitchChangeText {
            ramp: c.ramp.to_string(),
            direction: or_dash(&c.direction),
            t_c: fmt_fixed(c.t_c, d),
            new_state: c
                .new_state
                .as_deref()
                .map_or_else(|| "—".to_string(), or_dash),
        })
        .collect()
}

/// The nominal switch point as printed, e.g. "85 °C".
pub(crate) fn switch_nominal(sw: &SwitchBlock) -> String {
    format!("{} °C", fmt_trim(sw.nominal_t_c, 3))
}

// ---------------------------------------------------------------------------
// The flowing layout.

struct Column {
    title: String,
    weight: f32,
    align: Align,
}

fn col(title: &str, weight: f32, align: Align) -> Column {
    Column {
        title: title.to_string(),
        weight,
        align,
    }
}

const CELL_PAD_X: f32 = 4.0;
const CELL_PAD_Y: f32 = 3.6;
const HEAD_LH: f32 = TABLE_HEAD * 1.3;
const ROW_LH: f32 = TABLE * 1.32;

/// A table's cells broken into lines, with the heights of its rows.
struct TableLayout {
    table_w: f32,
    widths: Vec<f32>,
    head_lines: Vec<Vec<String>>,
    head_n: usize,
    head_h: f32,
    body: Vec<(Vec<Vec<String>>, f32)>,
}

impl TableLayout {
    fn keep(&self) -> f32 {
        keep_height(self.head_h, &self.body)
    }
}

/// What must fit before a table starts: all of a short table, or the
/// header with its first rows.
fn keep_height(head_h: f32, body: &[(Vec<Vec<String>>, f32)]) -> f32 {
    let all_h: f32 = head_h + body.iter().map(|b| b.1).sum::<f32>();
    if all_h <= (CONTENT_BOTTOM - MARGIN_TOP) * 0.4 {
        all_h
    } else {
        head_h + body.iter().take(3).map(|b| b.1).sum::<f32>()
    }
}

struct Layout<'a> {
    fonts: &'a Fonts,
    s: &'a CertificateSnapshot,
    pages: Vec<Page>,
    /// Cursor: top of the next free space on the current page.
    y: f32,
    section: usize,
}

impl<'a> Layout<'a> {
    fn new(fonts: &'a Fonts, s: &'a CertificateSnapshot) -> Self {
        Self {
            fonts,
            s,
            pages: vec![Page::default()],
            y: MARGIN_TOP,
            section: 0,
        }
    }

    fn page(&mut self) -> &mut Page {
        if self.pages.is_empty() {
            self.pages.push(Page::default());
        }
        let last = self.pages.len() - 1;
        &mut self.pages[last]
    }

    /// Starts a new page with the running header.
    fn new_page(&mut self) {
        self.pages.push(Page::default());
        let fonts = self.fonts;
        let left = format!("{} {}", self.s.title, self.s.number);
        let right = self.s.lab.name.clone();
        let p = self.page();
        p.text(
            fonts,
            MARGIN_X,
            MARGIN_TOP - 14.0,
            Face::Bold,
            SMALL,
            ACCENT,
            Align::Left,
            &left,
        );
        p.text(
            fonts,
            RIGHT,
            MARGIN_TOP - 14.0,
            Face::Regular,
            SMALL,
            MUTED,
            Align::Right,
            &right,
        );
        p.hline(MARGIN_X, RIGHT, MARGIN_TOP - 8.0, 0.5, RULE);
        self.y = MARGIN_TOP + 4.0;
    }

    /// Makes sure `h` points fit below the cursor, breaking the page if not.
    fn ensure(&mut self, h: f32) {
        if self.y + h > CONTENT_BOTTOM && self.y > MARGIN_TOP + 10.0 {
            self.new_page();
        }
    }

    fn gap(&mut self, h: f32) {
        self.y += h;
    }

    /// A numbered section heading, kept together with `keep` points of what
    /// follows it.
    fn heading(&mut self, title: &str, keep: f32) {
        self.gap(12.0);
        self.ensure(HEADING * 2.2 + keep);
        self.section += 1;
        let fonts = self.fonts;
        let number = self.section.to_string();
        let y = self.y;
        let p = self.page();
        let base = y + HEADING;
        p.text(
            fonts,
            MARGIN_X,
            base,
            Face::Bold,
            HEADING,
            ACCENT,
            Align::Left,
            &number,
        );
        p.text(
            fonts,
            MARGIN_X + 22.0,
            base,
            Face::Bold,
            HEADING,
            ACCENT,
            Align::Left,
            title,
        );
        p.hline(MARGIN_X, RIGHT, base + 5.0, 0.6, ACCENT);
        self.y = base + 12.0;
    }

    /// A paragraph of wrapped text, split across pages line by line.
    fn paragraph(&mut self, text: &str, face: Face, size: f32, color: (f32, f32, f32)) {
        self.paragraph_at(MARGIN_X, CONTENT_W, text, face, size, color);
    }

    fn paragraph_at(
        &mut self,
        x: f32,
        w: f32,
        text: &str,
        face: Face,
        size: f32,
        color: (f32, f32, f32),
    ) {
        let lh = size * LEADING;
        for line in self.fonts.wrap(face, size, text, w) {
            self.ensure(lh);
            let fonts = self.fonts;
            let base = self.y + size;
            self.page()
                .text(fonts, x, base, face, size, color, Align::Left, &line);
            self.y += lh;
        }
    }

    /// An unnumbered heading inside a section, kept together with `keep`
    /// points of what follows it.
    fn subheading(&mut self, title: &str, keep: f32) {
        self.gap(9.0);
        self.ensure(BODY * 1.7 + keep);
        let fonts = self.fonts;
        let base = self.y + BODY;
        self.page().text(
            fonts,
            MARGIN_X,
            base,
            Face::Bold,
            BODY,
            ACCENT,
            Align::Left,
            title,
        );
        self.y += BODY * 1.7;
    }

    /// Height of a [`Self::bullets`] list.
    fn bullets_height(&self, items: &[String]) -> f32 {
        let lh = BODY * LEADING;
        items
            .iter()
            .map(|t| {
                self.fonts
                    .wrap(Face::Regular, BODY, t, CONTENT_W - BULLET_INDENT)
                    .len() as f32
                    * lh
                    + 3.0
            })
            .sum()
    }

    /// A list of paragraphs, each with a bullet and a hanging indent.
    fn bullets(&mut self, items: &[String]) {
        let lh = BODY * LEADING;
        for (i, t) in items.iter().enumerate() {
            if i > 0 {
                self.gap(3.0);
            }
            self.ensure(lh);
            let fonts = self.fonts;
            let base = self.y + BODY;
            self.page().text(
                fonts,
                MARGIN_X + 3.0,
                base,
                Face::Bold,
                BODY,
                ACCENT,
                Align::Left,
                "•",
            );
            self.paragraph_at(
                MARGIN_X + BULLET_INDENT,
                CONTENT_W - BULLET_INDENT,
                t,
                Face::Regular,
                BODY,
                INK,
            );
        }
    }

    /// Height of a [`Self::key_values`] block.
    fn key_values_height(&self, rows: &[(&str, String)]) -> f32 {
        let lh = BODY * LEADING;
        rows.iter()
            .map(|(label, value)| {
                let a = self
                    .fonts
                    .wrap(Face::Regular, BODY, label, KV_LABEL_W - 10.0)
                    .len();
                let b = self
                    .fonts
                    .wrap(Face::Regular, BODY, value, CONTENT_W - KV_LABEL_W)
                    .len();
                a.max(b) as f32 * lh + 2.5
            })
            .sum()
    }

    /// A headed section of label/value rows, kept on one page when short.
    fn kv_section(&mut self, title: &str, rows: &[(&str, String)]) {
        let h = self.key_values_height(rows);
        self.heading(title, h.min((CONTENT_BOTTOM - MARGIN_TOP) * 0.35));
        self.key_values(rows);
    }

    /// Label/value rows; values wrap, multi-line values keep their lines.
    fn key_values(&mut self, rows: &[(&str, String)]) {
        self.key_values_emphasised(rows, None);
    }

    /// [`Self::key_values`] with the value of row `bold` set in bold.
    fn key_values_emphasised(&mut self, rows: &[(&str, String)], bold: Option<usize>) {
        const LABEL_W: f32 = KV_LABEL_W;
        let lh = BODY * LEADING;
        for (row, (label, value)) in rows.iter().enumerate() {
            let face = if bold == Some(row) {
                Face::Bold
            } else {
                Face::Regular
            };
            let label_lines = self.fonts.wrap(Face::Regular, BODY, label, LABEL_W - 10.0);
            let value_lines = self.fonts.wrap(face, BODY, value, CONTENT_W - LABEL_W);
            let n = label_lines.len().max(value_lines.len());
            // Short rows stay together; long ones may break between lines.
            self.ensure(lh * n.min(4) as f32 + 3.0);
            for i in 0..n {
                self.ensure(lh);
                let fonts = self.fonts;
                let base = self.y + BODY;
                let p = self.page();
                if let Some(l) = label_lines.get(i) {
                    p.text(
                        fonts,
                        MARGIN_X,
                        base,
                        Face::Regular,
                        BODY,
                        MUTED,
                        Align::Left,
                        l,
                    );
                }
                if let Some(v) = value_lines.get(i) {
                    p.text(
                        fonts,
                        MARGIN_X + LABEL_W,
                        base,
                        face,
                        BODY,
                        INK,
                        Align::Left,
                        v,
                    );
                }
                self.y += lh;
            }
            self.y += 2.5;
        }
    }

    /// Lays out a table's cells without drawing them.
    fn measure_table(&self, cols: &[Column], rows: &[Vec<String>], table_w: f32) -> TableLayout {
        let table_w = table_w.clamp(40.0, CONTENT_W);
        let total: f32 = cols.iter().map(|c| c.weight).sum::<f32>().max(f32::EPSILON);
        let widths: Vec<f32> = cols.iter().map(|c| c.weight / total * table_w).collect();
        let fonts = self.fonts;
        let head_lines: Vec<Vec<String>> = cols
            .iter()
            .zip(&widths)
            .map(|(c, w)| fonts.wrap(Face::Bold, TABLE_HEAD, &c.title, w - 2.0 * CELL_PAD_X))
            .collect();
        let head_n = head_lines.iter().map(Vec::len).max().unwrap_or(1);
        let head_h = head_n as f32 * HEAD_LH + 2.0 * CELL_PAD_Y;
        let body = rows
            .iter()
            .map(|r| {
                let cells: Vec<Vec<String>> = widths
                    .iter()
                    .enumerate()
                    .map(|(i, w)| {
                        let text = r.get(i).map_or("", String::as_str);
                        fonts.wrap(Face::Regular, TABLE, text, w - 2.0 * CELL_PAD_X)
                    })
                    .collect();
                let n = cells.iter().map(Vec::len).max().unwrap_or(1);
                (cells, n as f32 * ROW_LH + 2.0 * CELL_PAD_Y)
            })
            .collect();
        TableLayout {
            table_w,
            widths,
            head_lines,
            head_n,
            head_h,
            body,
        }
    }

    /// A ruled table that breaks across pages, repeating its header row.
    fn table(&mut self, cols: &[Column], rows: &[Vec<String>], table_w: f32) {
        const PAD_X: f32 = CELL_PAD_X;
        const PAD_Y: f32 = CELL_PAD_Y;
        let TableLayout {
            table_w,
            widths,
            head_lines,
            head_n,
            head_h,
            body,
        } = self.measure_table(cols, rows, table_w);
        let right = MARGIN_X + table_w;
        let fonts = self.fonts;
        let head_lh = HEAD_LH;
        let row_lh = ROW_LH;

        let draw_header = |lay: &mut Self| {
            let y = lay.y;
            let p = lay.page();
            p.fill_rect(MARGIN_X, y, table_w, head_h, TINT);
            p.hline(MARGIN_X, right, y, 0.9, ACCENT);
            p.hline(MARGIN_X, right, y + head_h, 0.6, ACCENT);
            let mut x = MARGIN_X;
            for ((c, w), lines) in cols.iter().zip(&widths).zip(&head_lines) {
                // Header text sits at the bottom of the header cell.
                let first = y + PAD_Y + (head_n - lines.len()) as f32 * head_lh;
                for (i, l) in lines.iter().enumerate() {
                    let base = first + i as f32 * head_lh + TABLE_HEAD;
                    let tx = match c.align {
                        Align::Left => x + PAD_X,
                        Align::Right => x + w - PAD_X,
                        Align::Center => x + w / 2.0,
                    };
                    p.text(fonts, tx, base, Face::Bold, TABLE_HEAD, INK, c.align, l);
                }
                x += w;
            }
            lay.y += head_h;
        };

        self.ensure(keep_height(head_h, &body));
        draw_header(self);
        for (i, (cells, h)) in body.iter().enumerate() {
            if self.y + h > CONTENT_BOTTOM {
                self.new_page();
                draw_header(self);
            }
            let y = self.y;
            let p = self.page();
            if i % 2 == 1 {
                p.fill_rect(MARGIN_X, y, table_w, *h, ZEBRA);
            }
            let mut x = MARGIN_X;
            for ((c, w), lines) in cols.iter().zip(&widths).zip(cells) {
                for (j, l) in lines.iter().enumerate() {
                    let base = y + PAD_Y + j as f32 * row_lh + TABLE;
                    let tx = match c.align {
                        Align::Left => x + PAD_X,
                        Align::Right => x + w - PAD_X,
                        Align::Center => x + w / 2.0,
                    };
                    p.text(fonts, tx, base, Face::Regular, TABLE, INK, c.align, l);
                }
                x += w;
            }
            let last = i + 1 == body.len();
            p.hline(
                MARGIN_X,
                right,
                y + h,
                if last { 0.9 } else { 0.4 },
                if last { ACCENT } else { RULE },
            );
            self.y += h;
        }
    }
}

// ---------------------------------------------------------------------------
// The certificate's parts.

fn draw_title_block(lay: &mut Layout<'_>) {
    let s = lay.s;
    let fonts = lay.fonts;
    let top = lay.y;

    // Laboratory, left; accreditation and contact, right.
    let right_w = 190.0;
    let left_w = CONTENT_W - right_w - 16.0;
    let name_lines = fonts.wrap(Face::Bold, 14.0, &s.lab.name, left_w);
    let addr_lines = fonts.wrap(Face::Regular, SMALL + 0.4, &s.lab.address, left_w);
    let mut right_lines: Vec<(Face, String)> = Vec::new();
    for l in fonts.wrap(Face::Bold, SMALL, &s.lab.accreditation, right_w) {
        right_lines.push((Face::Bold, l));
    }
    let contact = if fonts.width(Face::Regular, SMALL, &s.lab.contact) > right_w {
        s.lab.contact.replace(" · ", "\n")
    } else {
        s.lab.contact.clone()
    };
    for l in fonts.wrap(Face::Regular, SMALL, &contact, right_w) {
        right_lines.push((Face::Regular, l));
    }

    let mut y = top;
    {
        let p = lay.page();
        for l in &name_lines {
            p.text(
                fonts,
                MARGIN_X,
                y + 14.0,
                Face::Bold,
                14.0,
                ACCENT,
                Align::Left,
                l,
            );
            y += 17.0;
        }
        y += 2.0;
        for l in &addr_lines {
            p.text(
                fonts,
                MARGIN_X,
                y + SMALL + 0.4,
                Face::Regular,
                SMALL + 0.4,
                MUTED,
                Align::Left,
                l,
            );
            y += (SMALL + 0.4) * LEADING;
        }
        let mut ry = top + 3.0;
        for (face, l) in &right_lines {
            p.text(
                fonts,
                RIGHT,
                ry + SMALL,
                *face,
                SMALL,
                if *face == Face::Bold { INK } else { MUTED },
                Align::Right,
                l,
            );
            ry += SMALL * LEADING;
        }
        y = y.max(ry) + 8.0;
        p.hline(MARGIN_X, RIGHT, y, 1.6, ACCENT);
    }
    y += 26.0;

    // Title and the identity panel.
    {
        let title_lines = fonts.wrap(Face::Bold, 21.0, &s.title, CONTENT_W);
        let p = lay.page();
        for l in &title_lines {
            p.text(fonts, MARGIN_X, y, Face::Bold, 21.0, INK, Align::Left, l);
            y += 25.0;
        }
    }
    y += 2.0;

    let panel_h = 40.0;
    let cells: [(&str, String, f32); 3] = [
        ("Certificate number", s.number.clone(), 0.5),
        ("Revision", s.revision.to_string(), 0.2),
        ("Date of issue", s.dates.issued_on.clone(), 0.3),
    ];
    {
        let p = lay.page();
        p.fill_rect(MARGIN_X, y, CONTENT_W, panel_h, TINT);
        p.polyline(&[(MARGIN_X, y), (MARGIN_X, y + panel_h)], 3.0, ACCENT);
        let mut x = MARGIN_X + 12.0;
        for (i, (label, value, frac)) in cells.iter().enumerate() {
            let w = CONTENT_W * frac;
            if i > 0 {
                p.polyline(
                    &[(x - 10.0, y + 8.0), (x - 10.0, y + panel_h - 8.0)],
                    0.5,
                    RULE,
                );
            }
            p.text(
                fonts,
                x,
                y + 14.0,
                Face::Regular,
                SMALL,
                MUTED,
                Align::Left,
                label,
            );
            let size = if i == 0 { 13.0 } else { 11.5 };
            let mut v = value.clone();
            while fonts.width(Face::Bold, size, &v) > w - 16.0 && v.chars().count() > 1 {
                v.pop();
            }
            p.text(fonts, x, y + 31.0, Face::Bold, size, INK, Align::Left, &v);
            x += w;
        }
    }
    lay.y = y + panel_h + 4.0;

    if let Some(r) = &s.replaces {
        lay.gap(6.0);
        let text = format!(
            "Amended certificate: this revision replaces revision {} of certificate {}. Reason: {}",
            r.revision, r.number, r.reason
        );
        let lines = fonts.wrap(Face::Regular, BODY, &text, CONTENT_W - 20.0);
        let h = lines.len() as f32 * BODY * LEADING + 10.0;
        let y = lay.y;
        lay.page()
            .stroke_rect(MARGIN_X, y, CONTENT_W, h, 0.8, LIMIT);
        lay.y += 5.0;
        lay.paragraph_at(
            MARGIN_X + 10.0,
            CONTENT_W - 20.0,
            &text,
            Face::Regular,
            BODY,
            INK,
        );
        lay.y = y + h;
    }
}

/// Columns and cells of the results table.
fn results_table(results: &[ResultRow]) -> (Vec<Column>, Vec<Vec<String>>) {
    let has_emf = results.iter().any(|r| r.deviation_emf_mv.is_some());
    let has_outcome = results.iter().any(|r| r.outcome.is_some());
    let mut cols = vec![
        col("Nominal (°C)", 1.0, Align::Right),
        col("Reference temperature (°C)", 1.35, Align::Right),
        col("Indication (°C)", 1.15, Align::Right),
        col("Deviation (°C)", 1.1, Align::Right),
        col("Correction (°C)", 1.15, Align::Right),
        col("U (°C)", 0.9, Align::Right),
        col("k", 0.6, Align::Right),
    ];
    if has_emf {
        cols.push(col("Emf deviation (mV)", 1.15, Align::Right));
    }
    if has_outcome {
        cols.push(col("Outcome", 1.4, Align::Left));
    }
    let rows: Vec<Vec<String>> = results
        .iter()
        .map(|r| {
            let mut row = vec![
                fmt_trim(r.nominal_t_c, 3),
                r.printed.t_ref_c.clone(),
                r.printed.t_uut_c.clone(),
                r.printed.deviation_c.clone(),
                r.printed.correction_c.clone(),
                r.printed.expanded_uncertainty_c.clone(),
                r.printed.coverage_factor.clone(),
            ];
            if has_emf {
                row.push(
                    r.deviation_emf_mv
                        .map_or_else(|| "—".to_string(), |v| format!("{v:.4}")),
                );
            }
            if has_outcome {
                row.push(
                    r.outcome
                        .clone()
                        .map_or_else(|| "—".to_string(), |o| or_dash(&o)),
                );
            }
            row
        })
        .collect();
    (cols, rows)
}

/// The uncertainty statement printed under the results: the snapshot's own
/// statement when it has one, otherwise one built from the rows.
fn coverage_statement(s: &CertificateSnapshot) -> (Option<usize>, String) {
    if let Some(i) = s
        .statements
        .iter()
        .position(|t| t.to_lowercase().contains("coverage"))
    {
        return (Some(i), s.statements[i].clone());
    }
    if let (true, Some(sw)) = (s.results.is_empty(), &s.switch) {
        let ks: BTreeSet<String> = switch_rows(sw).into_iter().map(|r| r.k).collect();
        let k = match ks.iter().next() {
            Some(k) if ks.len() == 1 => format!("k = {k}"),
            _ => "k given with it".to_string(),
        };
        return (
            None,
            format!(
                "The expanded uncertainty U is the standard uncertainty multiplied by the \
                 coverage factor {k}."
            ),
        );
    }
    let ks: Vec<String> = s
        .results
        .iter()
        .map(|r| r.printed.coverage_factor.clone())
        .collect();
    let ps: Vec<String> = s
        .results
        .iter()
        .map(|r| fmt_percent(r.coverage_probability))
        .collect();
    let same_k = ks.windows(2).all(|w| w[0] == w[1]);
    let same_p = ps.windows(2).all(|w| w[0] == w[1]);
    let k = match ks.first() {
        Some(k) if same_k => format!("k = {k}"),
        _ => "k given for each point".to_string(),
    };
    let p = match ps.first() {
        Some(p) if same_p => format!("about {p} %"),
        _ => "the probability given for each point".to_string(),
    };
    (
        None,
        format!(
            "The expanded uncertainty U is the standard uncertainty multiplied by the \
             coverage factor {k}, which for a normal distribution gives a coverage \
             probability of {p}."
        ),
    )
}

/// What n and s mean, printed under the switch results (PDF and HTML).
pub(crate) const SWITCH_LEGEND: &str = "Switch and reset points are the means of the n state \
                                        changes in their direction; s is the experimental \
                                        standard deviation of those changes.";

/// Switch point, reset point and differential, the observed state changes
/// and the notes of a temperature-switch test.
fn switch_section(lay: &mut Layout<'_>, coverage: Option<&str>) {
    let Some(sw) = &lay.s.switch else {
        return;
    };
    let mut facts: Vec<(&str, String)> = vec![
        ("Nominal switch point", switch_nominal(sw)),
        ("Actuation", or_dash(&sw.actuation)),
        ("Test method", or_dash(&sw.method)),
    ];
    let mut outcome_row = None;
    if let Some(o) = &sw.outcome {
        outcome_row = Some(facts.len());
        facts.push(("Switch point against tolerance", or_dash(o)));
    }
    let cols = [
        col("Quantity", 1.3, Align::Left),
        col("Direction", 0.95, Align::Left),
        col("n", 0.45, Align::Right),
        col("Value (°C)", 1.0, Align::Right),
        col("U (°C)", 0.85, Align::Right),
        col("k", 0.6, Align::Right),
        col("s (°C)", 0.85, Align::Right),
    ];
    let rows: Vec<Vec<String>> = switch_rows(sw)
        .into_iter()
        .map(|r| {
            vec![
                r.quantity.to_string(),
                r.direction,
                r.n,
                r.value,
                r.uncertainty,
                r.k,
                r.std_dev,
            ]
        })
        .collect();
    let keep =
        lay.key_values_height(&facts) + 6.0 + lay.measure_table(&cols, &rows, CONTENT_W).keep();
    lay.heading("Switch test results", keep);
    lay.key_values_emphasised(&facts, outcome_row);
    lay.gap(6.0);
    lay.table(&cols, &rows, CONTENT_W);
    lay.gap(6.0);
    let mut legend = SWITCH_LEGEND.to_string();
    if let Some(c) = coverage {
        legend = format!("{c} {legend}");
    }
    lay.paragraph(&legend, Face::Regular, SMALL + 0.4, MUTED);

    if !sw.changes.is_empty() {
        let cols = [
            col("Ramp", 0.7, Align::Right),
            col("Direction", 1.1, Align::Left),
            col("Temperature (°C)", 1.3, Align::Right),
            col("New state", 1.1, Align::Left),
        ];
        let rows: Vec<Vec<String>> = switch_changes(sw)
            .into_iter()
            .map(|c| vec![c.ramp, c.direction, c.t_c, c.new_state])
            .collect();
        let w = CONTENT_W * 0.62;
        let keep = lay.measure_table(&cols, &rows, w).keep();
        lay.subheading("Observed state changes, in test order", keep);
        lay.table(&cols, &rows, w);
    }

    if !sw.notes.is_empty() {
        let keep = lay
            .bullets_height(&sw.notes)
            .min((CONTENT_BOTTOM - MARGIN_TOP) * 0.2);
        lay.subheading("Notes", keep);
        lay.bullets(&sw.notes);
    }
}

fn function_section(lay: &mut Layout<'_>) {
    let Some(f) = &lay.s.deviation_function else {
        return;
    };
    lay.heading("Deviation function", 60.0);
    let var = if f.variable == "t_c" {
        "t".to_string()
    } else {
        f.variable.clone()
    };
    let terms = |sym: &str, n: usize| -> String {
        (0..n)
            .map(|i| match i {
                0 => format!("{sym}{}", subscript(0)),
                1 => format!("{sym}{}·{var}", subscript(1)),
                _ => format!("{sym}{}·{var}{}", subscript(i), superscript(i as i64)),
            })
            .collect::<Vec<_>>()
            .join(" + ")
    };
    let formula = format!("Δ{var} = {}", terms("a", f.coefficients.len()));
    lay.paragraph(&formula, Face::Bold, BODY + 0.5, INK);
    lay.gap(2.0);
    lay.paragraph(
        &format!(
            "Form: {}, where {var} is the temperature in °C and Δ{var} the deviation \
             (indication − reference) in °C.",
            f.form
        ),
        Face::Regular,
        BODY,
        INK,
    );
    if let Some(emf) = &f.emf_coefficients {
        lay.paragraph(
            &format!("Emf deviation: ΔE = {} (mV).", terms("b", emf.len())),
            Face::Regular,
            BODY,
            INK,
        );
    }
    lay.gap(6.0);
    let mut rows: Vec<Vec<String>> = f
        .coefficients
        .iter()
        .enumerate()
        .map(|(i, c)| {
            let unit = match i {
                0 => "°C".to_string(),
                1 => "°C/°C".to_string(),
                _ => format!("°C/°C{}", superscript(i as i64)),
            };
            vec![format!("a{}", subscript(i)), fmt_coefficient(*c), unit]
        })
        .collect();
    if let Some(emf) = &f.emf_coefficients {
        rows.extend(emf.iter().enumerate().map(|(i, c)| {
            let unit = match i {
                0 => "mV".to_string(),
                1 => "mV/°C".to_string(),
                _ => format!("mV/°C{}", superscript(i as i64)),
            };
            vec![format!("b{}", subscript(i)), fmt_coefficient(*c), unit]
        }));
    }
    lay.table(
        &[
            col("Coefficient", 1.0, Align::Left),
            col("Value", 2.0, Align::Right),
            col("Unit", 1.2, Align::Left),
        ],
        &rows,
        CONTENT_W * 0.6,
    );
    lay.gap(8.0);
    lay.key_values(&[
        (
            "Validity",
            format!(
                "Valid from {} °C to {} °C",
                fmt_trim(f.valid_from_t_c, 3),
                fmt_trim(f.valid_to_t_c, 3)
            ),
        ),
        (
            "Expanded uncertainty",
            format!(
                "U = {} °C (k = {}) for a reading corrected with this function",
                fmt_sig(f.expanded_uncertainty_c, 2),
                fmt_trim(f.coverage_factor, 2)
            ),
        ),
        ("How to use it", f.usage.clone()),
    ]);
}

// ---------------------------------------------------------------------------
// The deviation plot, in vectors.

fn nice_step(range: f64, target: f64) -> f64 {
    let raw = (range / target).max(1e-12);
    let mag = 10f64.powf(raw.log10().floor());
    let n = raw / mag;
    let m = if n <= 1.0 {
        1.0
    } else if n <= 2.0 {
        2.0
    } else if n <= 2.5 {
        2.5
    } else if n <= 5.0 {
        5.0
    } else {
        10.0
    };
    m * mag
}

struct Axis {
    lo: f64,
    hi: f64,
    step: f64,
    decimals: usize,
}

fn axis(min: f64, max: f64, target: f64, min_half: f64, pad: f64) -> Axis {
    let (mut lo, mut hi) = (min, max);
    if !(hi - lo).is_finite() || hi - lo < 1e-12 {
        let half = (lo.abs() * 0.1).max(min_half);
        lo -= half;
        hi += half;
    }
    // The frame runs a little past the data so that no point, error bar or
    // limit sits on it; ticks are the step's multiples inside the frame.
    let margin = (hi - lo) * pad;
    let (lo, hi) = (lo - margin, hi + margin);
    let step = nice_step(hi - lo, target);
    let mut decimals = (-step.log10().floor()).max(0.0) as usize;
    if (step / 10f64.powf(step.log10().floor()) - 2.5).abs() < 1e-9 {
        decimals += 1;
    }
    Axis {
        lo,
        hi,
        step,
        decimals,
    }
}

impl Axis {
    /// The tick values: multiples of the step inside [lo, hi].
    fn ticks(&self) -> Vec<f64> {
        let first = (self.lo / self.step - 1e-9).ceil() as i64;
        let last = (self.hi / self.step + 1e-9).floor() as i64;
        (first..=last).map(|i| i as f64 * self.step).collect()
    }
}

fn plot_section(lay: &mut Layout<'_>, plot: &PlotBlock) {
    let has_data = !plot.points.is_empty() || !plot.curve.is_empty();
    if !has_data {
        return;
    }
    const PLOT_H: f32 = 215.0;
    const LEFT_GUTTER: f32 = 46.0;
    const TOP_GUTTER: f32 = 16.0;
    const BOTTOM_GUTTER: f32 = 34.0;
    const LEGEND_H: f32 = 18.0;
    let mut xs: Vec<f64> = Vec::new();
    let mut ys: Vec<f64> = Vec::new();
    for p in &plot.points {
        xs.push(p[0]);
        ys.extend([p[1] - p[2].abs(), p[1] + p[2].abs()]);
    }
    for c in &plot.curve {
        xs.push(c[0]);
        ys.extend([c[1] - c[2].abs(), c[1] + c[2].abs()]);
    }
    for l in plot.tolerance_upper.iter().chain(&plot.tolerance_lower) {
        ys.push(l[1]);
    }
    let finite = |v: &Vec<f64>| -> (f64, f64) {
        v.iter()
            .filter(|x| x.is_finite())
            .fold((f64::INFINITY, f64::NEG_INFINITY), |(a, b), &x| {
                (a.min(x), b.max(x))
            })
    };
    let (x_min, x_max) = finite(&xs);
    let (y_min, y_max) = finite(&ys);
    // No finite point or curve sample: nothing to draw, so no heading.
    if !x_min.is_finite() || !y_min.is_finite() {
        return;
    }
    lay.heading(
        "Deviation plot",
        TOP_GUTTER + PLOT_H + BOTTOM_GUTTER + LEGEND_H,
    );
    let ax = axis(x_min, x_max, 7.0, 1.0, 0.03);
    let ay = axis(y_min.min(0.0), y_max.max(0.0), 6.0, 0.05, 0.06);

    let fonts = lay.fonts;
    let top = lay.y + TOP_GUTTER;
    let left = MARGIN_X + LEFT_GUTTER;
    let width = CONTENT_W - LEFT_GUTTER - 6.0;
    let bottom = top + PLOT_H;
    let px = |t: f64| left + ((t - ax.lo) / (ax.hi - ax.lo)) as f32 * width;
    let py = |v: f64| bottom - ((v - ay.lo) / (ay.hi - ay.lo)) as f32 * PLOT_H;
    let in_x = |t: f64| t >= ax.lo - 1e-9 && t <= ax.hi + 1e-9;

    let p = lay.page();
    // Grid, ticks and tick labels.
    for t in ax.ticks() {
        let x = px(t);
        p.polyline(&[(x, top), (x, bottom)], 0.3, RULE);
        p.polyline(&[(x, bottom), (x, bottom + 3.5)], 0.6, INK);
        p.text(
            fonts,
            x,
            bottom + 13.0,
            Face::Regular,
            SMALL,
            INK,
            Align::Center,
            &fmt_trim(t, ax.decimals),
        );
    }
    for v in ay.ticks() {
        let y = py(v);
        let zero = v.abs() < ay.step * 1e-6;
        p.polyline(
            &[(left, y), (left + width, y)],
            if zero { 0.7 } else { 0.3 },
            if zero { MUTED } else { RULE },
        );
        p.polyline(&[(left - 3.5, y), (left, y)], 0.6, INK);
        p.text(
            fonts,
            left - 6.0,
            y + 2.7,
            Face::Regular,
            SMALL,
            INK,
            Align::Right,
            &format!("{:.*}", ay.decimals, if zero { 0.0 } else { v }),
        );
    }

    // Band of the fitted function, then the function itself.
    let curve: Vec<&[f64; 3]> = plot
        .curve
        .iter()
        .filter(|c| c.iter().all(|v| v.is_finite()) && in_x(c[0]))
        .collect();
    let has_band = curve.iter().any(|c| c[2] > 0.0);
    if has_band {
        let mut band: Vec<(f32, f32)> = curve
            .iter()
            .map(|c| (px(c[0]), py(c[1] + c[2].abs())))
            .collect();
        band.extend(
            curve
                .iter()
                .rev()
                .map(|c| (px(c[0]), py(c[1] - c[2].abs()))),
        );
        p.fill_polygon(&band, BAND);
    }
    let line: Vec<(f32, f32)> = curve.iter().map(|c| (px(c[0]), py(c[1]))).collect();
    p.polyline(&line, 1.1, ACCENT);

    // Tolerance limits, dashed.
    for lim in [&plot.tolerance_upper, &plot.tolerance_lower] {
        let pts: Vec<(f32, f32)> = lim
            .iter()
            .filter(|l| l[0].is_finite() && l[1].is_finite())
            // A set point a few mK past the last tick still has its limit:
            // clamp to the axis instead of dropping it.
            .map(|l| (px(l[0].clamp(ax.lo, ax.hi)), py(l[1])))
            .collect();
        p.polyline_dashed(&pts, 0.9, LIMIT, Some(&[4.0, 2.5]));
    }

    // Points with their U as error bars.
    for pnt in plot
        .points
        .iter()
        .filter(|q| q.iter().all(|v| v.is_finite()))
    {
        let x = px(pnt[0]);
        let (y_lo, y, y_hi) = (
            py(pnt[1] - pnt[2].abs()),
            py(pnt[1]),
            py(pnt[1] + pnt[2].abs()),
        );
        p.polyline(&[(x, y_lo), (x, y_hi)], 0.7, INK);
        p.polyline(&[(x - 3.0, y_lo), (x + 3.0, y_lo)], 0.7, INK);
        p.polyline(&[(x - 3.0, y_hi), (x + 3.0, y_hi)], 0.7, INK);
        p.fill_polygon(
            &[(x, y - 3.2), (x + 3.2, y), (x, y + 3.2), (x - 3.2, y)],
            INK,
        );
    }

    // Frame and axis titles.
    p.stroke_rect(left, top, width, PLOT_H, 0.7, INK);
    p.text(
        fonts,
        left,
        top - 6.0,
        Face::Bold,
        SMALL,
        INK,
        Align::Left,
        "Deviation (°C)",
    );
    p.text(
        fonts,
        left + width / 2.0,
        bottom + 27.0,
        Face::Bold,
        SMALL,
        INK,
        Align::Center,
        "Reference temperature (°C)",
    );

    // Legend.
    let ly = bottom + BOTTOM_GUTTER + 8.0;
    let mut x = left;
    let mut entry = |p: &mut Page, label: &str, draw: &dyn Fn(&mut Page, f32)| {
        draw(p, x);
        p.text(
            fonts,
            x + 20.0,
            ly + 2.7,
            Face::Regular,
            SMALL,
            INK,
            Align::Left,
            label,
        );
        x += 28.0 + fonts.width(Face::Regular, SMALL, label);
    };
    if !plot.points.is_empty() {
        entry(p, "Measured deviation ± U", &|p, x| {
            let c = x + 8.0;
            p.polyline(&[(c, ly - 5.0), (c, ly + 5.0)], 0.7, INK);
            p.fill_polygon(
                &[(c, ly - 3.0), (c + 3.0, ly), (c, ly + 3.0), (c - 3.0, ly)],
                INK,
            );
        });
    }
    if !curve.is_empty() {
        entry(p, "Deviation function", &|p, x| {
            p.polyline(&[(x, ly), (x + 16.0, ly)], 1.1, ACCENT);
        });
    }
    if has_band {
        entry(p, "U of the function", &|p, x| {
            p.fill_rect(x, ly - 4.0, 16.0, 8.0, BAND);
        });
    }
    if !plot.tolerance_upper.is_empty() || !plot.tolerance_lower.is_empty() {
        entry(p, "Tolerance limits", &|p, x| {
            p.polyline_dashed(&[(x, ly), (x + 16.0, ly)], 0.9, LIMIT, Some(&[4.0, 2.5]));
        });
    }
    lay.y = ly + 10.0;
}

// ---------------------------------------------------------------------------
// Assembly.

fn issue_datetime(date: &str) -> Result<OffsetDateTime, PdfError> {
    let bad = || PdfError::IssueDate(date.to_string());
    let mut parts = date.split('-');
    let (Some(y), Some(m), Some(d), None) =
        (parts.next(), parts.next(), parts.next(), parts.next())
    else {
        return Err(bad());
    };
    let year: i32 = y.parse().map_err(|_| bad())?;
    let month: u8 = m.parse().map_err(|_| bad())?;
    let day: u8 = d.parse().map_err(|_| bad())?;
    if y.len() != 4 || !(1..=12).contains(&month) || !(1..=31).contains(&day) {
        return Err(bad());
    }
    Ok(OffsetDateTime::new_in_offset(
        Date { year, month, day },
        Time {
            hour: 0,
            minute: 0,
            second: 0,
            millisecond: 0,
        },
        Offset {
            hours: 0,
            minutes: 0,
            seconds: 0,
            milliseconds: 0,
        },
    ))
}

/// Renders the certificate as a PDF document (A4 portrait).
///
/// # Errors
/// If the issue date is not YYYY-MM-DD, the snapshot cannot be serialised
/// for its fingerprint, or the PDF cannot be written.
pub fn render_pdf(s: &CertificateSnapshot) -> Result<Vec<u8>, PdfError> {
    let fonts = Fonts::load()?;
    let issued = issue_datetime(&s.dates.issued_on)?;
    let fingerprint = s
        .fingerprint()
        .map_err(|e| PdfError::Fingerprint(e.to_string()))?;

    let mut lay = Layout::new(&fonts, s);
    draw_title_block(&mut lay);

    lay.kv_section(
        "Customer",
        &[
            ("Name", s.customer.name.clone()),
            ("Address", or_dash(&s.customer.address)),
        ],
    );

    lay.kv_section(
        "Item calibrated",
        &[
            ("Serial number", or_dash(&s.item.serial)),
            ("Kind", or_dash(&s.item.kind)),
            ("Description", or_dash(&s.item.description)),
            (
                "Manufacturer / model",
                format!(
                    "{} / {}",
                    or_dash(&s.item.manufacturer),
                    or_dash(&s.item.model)
                ),
            ),
        ],
    );

    lay.kv_section(
        "Method and location",
        &[
            ("Procedure", or_dash(&s.method)),
            ("Location", or_dash(&s.location)),
        ],
    );

    lay.kv_section(
        "Dates",
        &[
            (
                "Item received",
                s.dates
                    .received_on
                    .clone()
                    .unwrap_or_else(|| "not recorded".to_string()),
            ),
            ("Calibrated", s.dates.calibrated_on.clone()),
            ("Certificate issued", s.dates.issued_on.clone()),
        ],
    );

    let c = &s.conditions;
    let mut cond: Vec<(&str, String)> = Vec::new();
    if let Some(m) = &c.medium {
        cond.push(("Comparison medium", m.clone()));
    }
    if let Some(d) = c.immersion_mm {
        cond.push(("Immersion depth", format!("{} mm", fmt_trim(d, 1))));
    }
    if let Some(r) = &c.reference_junction {
        cond.push(("Reference junction", r.clone()));
    }
    match (c.ambient_t_c, c.ambient_rh_percent) {
        (Some(t), Some(rh)) => cond.push((
            "Ambient",
            format!(
                "{} °C, {} % relative humidity",
                fmt_trim(t, 1),
                fmt_trim(rh, 0)
            ),
        )),
        (Some(t), None) => cond.push(("Ambient", format!("{} °C", fmt_trim(t, 1)))),
        (None, Some(rh)) => cond.push((
            "Ambient",
            format!("{} % relative humidity", fmt_trim(rh, 0)),
        )),
        (None, None) => {}
    }
    cond.push(("Results given", or_dash(&c.condition)));
    lay.kv_section("Conditions", &cond);

    let (mut used_statement, coverage) = coverage_statement(s);
    // A switch test has no set points: its own section takes the place of
    // the results, and the set-point sections are left out.
    switch_section(&mut lay, s.results.is_empty().then_some(coverage.as_str()));
    if !s.results.is_empty() {
        let (cols, rows) = results_table(&s.results);
        let keep = lay.measure_table(&cols, &rows, CONTENT_W).keep();
        lay.heading("Results", keep);
        lay.table(&cols, &rows, CONTENT_W);
        lay.gap(6.0);
        lay.paragraph(&coverage, Face::Regular, SMALL + 0.4, MUTED);
        plot_section(&mut lay, &s.plot);
        function_section(&mut lay);
    } else if s.switch.is_none() {
        lay.heading("Results", 30.0);
        lay.paragraph("No set points were measured.", Face::Regular, BODY, INK);
        // The coverage statement was printed nowhere: keep it with the others.
        used_statement = None;
    }

    if let Some(conf) = &s.conformity {
        lay.kv_section(
            "Conformity",
            &[
                ("Specification", conf.specification.clone()),
                ("Decision rule", conf.decision_rule.clone()),
                ("Statement", conf.statement.clone()),
            ],
        );
    }

    if !s.traceability.is_empty() {
        let rows: Vec<Vec<String>> = s
            .traceability
            .iter()
            .map(|t| {
                vec![
                    or_dash(&t.role),
                    if t.description.trim().is_empty() {
                        or_dash(&t.asset_id)
                    } else {
                        format!("{} — {}", or_dash(&t.asset_id), t.description)
                    },
                    or_dash(&t.certificate_number),
                    or_dash(&t.issuer),
                    or_dash(&t.calibrated_on),
                    or_dash(&t.due_on),
                ]
            })
            .collect();
        let cols = [
            col("Role", 1.0, Align::Left),
            col("Asset", 1.95, Align::Left),
            col("Certificate", 1.2, Align::Left),
            col("Issued by", 1.7, Align::Left),
            col("Calibrated", 1.02, Align::Left),
            col("Due", 1.02, Align::Left),
        ];
        let keep = lay.measure_table(&cols, &rows, CONTENT_W).keep();
        lay.heading("Traceability", keep);
        lay.table(&cols, &rows, CONTENT_W);
    }

    let statements: Vec<&String> = s
        .statements
        .iter()
        .enumerate()
        .filter(|(i, _)| Some(*i) != used_statement)
        .map(|(_, t)| t)
        .collect();
    if !statements.is_empty() {
        lay.heading("Statements", 30.0);
        for (i, t) in statements.iter().enumerate() {
            if i > 0 {
                lay.gap(4.0);
            }
            lay.paragraph(t, Face::Regular, BODY, INK);
        }
    }

    lay.kv_section(
        "Authorisation",
        &[
            ("Calibration performed by", or_dash(&s.performed_by)),
            ("Certificate approved by", or_dash(&s.approved_by)),
            ("Date of issue", s.dates.issued_on.clone()),
        ],
    );

    // End marker.
    lay.gap(18.0);
    lay.ensure(20.0);
    {
        let y = lay.y + 8.0;
        let label = "End of certificate";
        let w = fonts.width(Face::Bold, BODY, label);
        let mid = MARGIN_X + CONTENT_W / 2.0;
        let p = lay.page();
        p.hline(MARGIN_X + 60.0, mid - w / 2.0 - 10.0, y - 3.0, 0.6, ACCENT);
        p.hline(mid + w / 2.0 + 10.0, RIGHT - 60.0, y - 3.0, 0.6, ACCENT);
        p.text(
            &fonts,
            mid,
            y,
            Face::Bold,
            BODY,
            ACCENT,
            Align::Center,
            label,
        );
    }

    // Footers, now that the page count is known.
    let total = lay.pages.len();
    let footer_y = PAGE_H - 34.0;
    for (i, page) in lay.pages.iter_mut().enumerate() {
        page.hline(MARGIN_X, RIGHT, footer_y - 11.0, 0.5, RULE);
        page.text(
            &fonts,
            MARGIN_X,
            footer_y,
            Face::Regular,
            SMALL,
            MUTED,
            Align::Left,
            &s.lab.name,
        );
        page.text(
            &fonts,
            RIGHT,
            footer_y,
            Face::Regular,
            SMALL,
            INK,
            Align::Right,
            &format!(
                "Certificate {} rev {} — page {} of {}",
                s.number,
                s.revision,
                i + 1,
                total
            ),
        );
    }

    // The document, with fixed metadata and font ids.
    let mut doc = PdfDocument::new(&format!("{} {}", s.title, s.number));
    doc.metadata.info = PdfDocumentInfo {
        creation_date: issued,
        modification_date: issued,
        metadata_date: issued,
        document_title: format!("{} {} rev {}", s.title, s.number, s.revision),
        author: s.lab.name.clone(),
        creator: "Juncture".to_string(),
        producer: "Juncture".to_string(),
        subject: format!("{} of {}", s.title, s.item.serial),
        identifier: s.number.clone(),
        ..PdfDocumentInfo::default()
    };
    let mut used_regular = BTreeSet::new();
    let mut used_bold = BTreeSet::new();
    for p in &lay.pages {
        used_regular.extend(p.used_regular.iter().copied());
        used_bold.extend(p.used_bold.iter().copied());
    }
    doc.resources.fonts.map.insert(
        FontId(REGULAR_ID.to_string()),
        printpdf::font::PdfFont::new(Fonts::subset(FONT_REGULAR, &fonts.regular, &used_regular)?),
    );
    doc.resources.fonts.map.insert(
        FontId(BOLD_ID.to_string()),
        printpdf::font::PdfFont::new(Fonts::subset(FONT_BOLD, &fonts.bold, &used_bold)?),
    );
    doc.pages = lay
        .pages
        .into_iter()
        .map(|p| PdfPage::new(Mm(210.0), Mm(297.0), p.ops))
        .collect();

    let opts = PdfSaveOptions {
        optimize: true,
        // Subset above: printpdf without its layout feature embeds whole faces.
        subset_fonts: false,
        secure: true,
        image_optimization: None,
    };
    let mut warnings = Vec::new();
    let mut lo = doc.to_lopdf_document(&opts, &mut warnings);
    // printpdf draws the file identifier from a process-wide counter; use
    // the snapshot's fingerprint instead so equal snapshots give equal bytes.
    let id = hex::decode(&fingerprint[..32]).map_err(|e| PdfError::Fingerprint(e.to_string()))?;
    lo.trailer.set(
        "ID",
        lopdf::Object::Array(vec![
            lopdf::Object::String(id.clone(), lopdf::StringFormat::Hexadecimal),
            lopdf::Object::String(id, lopdf::StringFormat::Hexadecimal),
        ]),
    );
    lo.compress();
    let mut out = Vec::new();
    lo.save_to(&mut out)
        .map_err(|e| PdfError::Write(e.to_string()))?;
    Ok(out)
}

#[cfg(test)]
pub(crate) mod tests {
    use super::*;
    use crate::report::snapshot::{
        ConditionsBlock, ConformityBlock, CustomerBlock, DatesBlock, FunctionBlock, ItemBlock,
        LabBlock, PrintedRow, SNAPSHOT_FORMAT, SwitchChange, SwitchValue, TraceRow,
    };
    #[cfg(feature = "system-tests")]
    use std::process::Command;

    const RELATE: &str = "The results relate only to the item calibrated, as received, and to the \
                          conditions stated on this certificate.";
    const COVERAGE: &str = "The expanded uncertainty U is the standard uncertainty multiplied by \
                            the coverage factor k = 2, which for a normal distribution gives a \
                            coverage probability of about 95 %.";

    fn row(nominal: f64, t_ref: f64, dev: f64, u: f64) -> ResultRow {
        ResultRow {
            nominal_t_c: nominal,
            t_ref_c: t_ref,
            t_uut_c: t_ref + dev,
            deviation_c: dev,
            correction_c: -dev,
            expanded_uncertainty_c: u,
            coverage_factor: 2.0,
            coverage_probability: 0.95,
            deviation_emf_mv: None,
            printed: PrintedRow {
                t_ref_c: format!("{t_ref:.3}"),
                t_uut_c: format!("{:.3}", t_ref + dev),
                deviation_c: format!("{dev:.3}"),
                correction_c: format!("{:.3}", -dev),
                expanded_uncertainty_c: format!("{u:.3}"),
                coverage_factor: "2.0".to_string(),
            },
            outcome: Some("conforms".to_string()),
        }
    }

    /// A realistic certificate. All data here are invented for the test: the
    /// laboratory, the customer, the serial numbers and the measurements.
    fn snapshot() -> CertificateSnapshot {
        let results = vec![
            row(0.0, 0.003, 0.021, 0.020),
            row(50.0, 50.012, 0.034, 0.022),
            row(100.0, 99.987, 0.052, 0.025),
            row(150.0, 150.021, 0.078, 0.030),
        ];
        let coefficients = vec![0.0205, 2.3e-4, 9.6e-7];
        let f = |t: f64| coefficients[0] + coefficients[1] * t + coefficients[2] * t * t;
        let curve = (0..=30)
            .map(|i| {
                let t = f64::from(i) * 5.0;
                [t, f(t), 0.030]
            })
            .collect();
        let tol = |sign: f64| -> Vec<[f64; 2]> {
            (0..=6)
                .map(|i| {
                    let t = f64::from(i) * 25.0;
                    [t, sign * (0.15 + 0.002 * t)]
                })
                .collect()
        };
        CertificateSnapshot {
            format: SNAPSHOT_FORMAT.to_string(),
            title: "Calibration Certificate".to_string(),
            number: "LTM-2025-0417".to_string(),
            revision: 0,
            replaces: None,
            lab: LabBlock {
                name: "Larchmere Thermal Metrology (demonstration)".to_string(),
                address: "Unit 4, Fenwick Yard\nLarchmere LM3 9QT\nUnited Kingdom".to_string(),
                accreditation: "Accredited calibration laboratory No. 9999 (demonstration)"
                    .to_string(),
                contact: "calibration@larchmere.example · +44 1632 960 417".to_string(),
            },
            customer: CustomerBlock {
                name: "Brackenfield Process Foods Ltd".to_string(),
                address: "Quality Department, Mill Lane\nBrackenfield BF2 7HX".to_string(),
            },
            item: ItemBlock {
                serial: "BPF-PT-20931".to_string(),
                kind: "Pt100 industrial platinum resistance thermometer".to_string(),
                description: "4-wire, 6 mm × 300 mm stainless sheath, with handheld readout \
                              as a system"
                    .to_string(),
                manufacturer: "Northgate Sensors".to_string(),
                model: "NG-PRT-300".to_string(),
            },
            method: "LTM-CP-03 rev 5, comparison in stirred liquid baths".to_string(),
            location: "Larchmere permanent laboratory, room 2".to_string(),
            dates: DatesBlock {
                received_on: Some("2025-03-03".to_string()),
                calibrated_on: "2025-03-05".to_string(),
                issued_on: "2025-03-07".to_string(),
            },
            conditions: ConditionsBlock {
                medium: Some("LTM-BATH-07 stirred silicone-oil bath".to_string()),
                immersion_mm: Some(200.0),
                reference_junction: None,
                ambient_t_c: Some(20.4),
                ambient_rh_percent: Some(45.0),
                condition: "as found".to_string(),
            },
            results,
            deviation_function: Some(FunctionBlock {
                form: "polynomial".to_string(),
                variable: "t_c".to_string(),
                coefficients: coefficients.clone(),
                covariance: vec![vec![0.0; 3]; 3],
                emf_coefficients: None,
                valid_from_t_c: 0.0,
                valid_to_t_c: 150.0,
                expanded_uncertainty_c: 0.030,
                coverage_factor: 2.0,
                usage: "Subtract the deviation computed for the indicated temperature from \
                        the indication to obtain the corrected temperature. Do not use the \
                        function outside its range of validity."
                    .to_string(),
            }),
            conformity: Some(ConformityBlock {
                specification: "IEC 60751:2022 class A tolerance".to_string(),
                decision_rule: "Simple acceptance: a point conforms when its deviation lies \
                                within the tolerance; the uncertainty is not subtracted."
                    .to_string(),
                statement: "The item conforms to the specification at every set point.".to_string(),
            }),
            traceability: vec![
                TraceRow {
                    role: "reference standard".to_string(),
                    asset_id: "LTM-SPRT-02".to_string(),
                    description: "25.5 Ω standard platinum resistance thermometer".to_string(),
                    certificate_number: "NMI-24-88121".to_string(),
                    issuer: "National measurement institute (demonstration)".to_string(),
                    calibrated_on: "2024-06-11".to_string(),
                    due_on: "2026-06-11".to_string(),
                },
                TraceRow {
                    role: "readout".to_string(),
                    asset_id: "LTM-BR-01".to_string(),
                    description: "resistance bridge".to_string(),
                    certificate_number: "ACL-24-3310".to_string(),
                    issuer: "Accredited electrical laboratory (demonstration)".to_string(),
                    calibrated_on: "2024-09-02".to_string(),
                    due_on: "2025-09-02".to_string(),
                },
                TraceRow {
                    role: "medium".to_string(),
                    asset_id: "LTM-BATH-07".to_string(),
                    description: "stirred silicone-oil bath".to_string(),
                    certificate_number: String::new(),
                    issuer: String::new(),
                    calibrated_on: "2025-01-15".to_string(),
                    due_on: "2026-01-15".to_string(),
                },
            ],
            statements: vec![
                RELATE.to_string(),
                COVERAGE.to_string(),
                "This certificate may not be reproduced other than in full without the \
                 written approval of the issuing laboratory."
                    .to_string(),
            ],
            performed_by: "R. Okonkwo".to_string(),
            approved_by: "H. Lindqvist, Quality Manager".to_string(),
            plot: PlotBlock {
                points: vec![
                    [0.003, 0.021, 0.020],
                    [50.012, 0.034, 0.022],
                    [99.987, 0.052, 0.025],
                    [150.021, 0.078, 0.030],
                ],
                curve,
                tolerance_upper: tol(1.0),
                tolerance_lower: tol(-1.0),
            },
            switch: None,
        }
    }

    const SWITCH_NOTES: [&str; 2] = [
        "The switch was cycled twice before the recorded ramps to settle the bimetal disc; \
         those cycles are not part of the results.",
        "Contact resistance < 50 mΩ when closed, checked at 20 °C before and after the test.",
    ];

    fn switch_value(value: f64, u: f64, printed: &str, printed_u: &str) -> SwitchValue {
        SwitchValue {
            value_c: value,
            expanded_uncertainty_c: u,
            coverage_factor: 2.0,
            printed_value_c: printed.to_string(),
            printed_uncertainty_c: printed_u.to_string(),
        }
    }

    /// A temperature-switch certificate: a bimetal thermostat, nominal 85 °C,
    /// opening on rising temperature, three rising and three falling ramps.
    /// All data here are invented for the test.
    pub(crate) fn switch_snapshot() -> CertificateSnapshot {
        let mut s = snapshot();
        s.number = "LTM-2025-0562".to_string();
        s.customer = CustomerBlock {
            name: "Oakhollow Dairy Cooperative".to_string(),
            address: "Engineering Stores, Creamery Road\nOakhollow OH4 2DN".to_string(),
        };
        s.item = ItemBlock {
            serial: "ODC-TS-4471".to_string(),
            kind: "bimetal thermostat, normally closed".to_string(),
            description: "Snap-disc thermostat in a brass housing with a G1/2 thread, \
                          silver contacts, tested as received"
                .to_string(),
            manufacturer: "Harrowgate Controls".to_string(),
            model: "HC-D85".to_string(),
        };
        s.method = "LTM-CP-11 rev 2, temperature switches in a stirred liquid bath".to_string();
        s.dates = DatesBlock {
            received_on: Some("2025-04-14".to_string()),
            calibrated_on: "2025-04-16".to_string(),
            issued_on: "2025-04-17".to_string(),
        };
        s.conditions = ConditionsBlock {
            medium: Some("LTM-BATH-04 stirred water-glycol bath".to_string()),
            immersion_mm: Some(60.0),
            reference_junction: None,
            ambient_t_c: Some(21.2),
            ambient_rh_percent: Some(41.0),
            condition: "as found".to_string(),
        };
        s.results = Vec::new();
        s.deviation_function = None;
        s.plot = PlotBlock::default();
        s.conformity = Some(ConformityBlock {
            specification: "Customer specification: switch point 85 °C ± 2 °C".to_string(),
            decision_rule: "Simple acceptance: the switch point conforms when it lies within \
                            the tolerance; the uncertainty is not subtracted."
                .to_string(),
            statement: "The switch point conforms to the specification.".to_string(),
        });
        s.traceability.truncate(1);
        s.traceability.push(TraceRow {
            role: "medium".to_string(),
            asset_id: "LTM-BATH-04".to_string(),
            description: "stirred water-glycol bath".to_string(),
            certificate_number: String::new(),
            issuer: String::new(),
            calibrated_on: "2025-02-20".to_string(),
            due_on: "2026-02-20".to_string(),
        });
        let change = |ramp: u32, t_c: f64| {
            let rising = ramp % 2 == 1;
            SwitchChange {
                ramp,
                direction: if rising { "rising" } else { "falling" }.to_string(),
                t_c,
                new_state: Some(if rising { "open" } else { "closed" }.to_string()),
            }
        };
        s.switch = Some(SwitchBlock {
            nominal_t_c: 85.0,
            actuation: "opens on rising temperature".to_string(),
            method: "3 rising and 3 falling ramps at 0.5 °C/min, contact state read at \
                     every reading"
                .to_string(),
            switch_point: SwitchPointBlock {
                direction: "rising".to_string(),
                n: 3,
                value: switch_value(85.42, 0.35, "85.42", "0.35"),
                std_dev_c: Some(0.045_83),
            },
            reset_point: Some(SwitchPointBlock {
                direction: "falling".to_string(),
                n: 3,
                value: switch_value(78.10, 0.36, "78.10", "0.36"),
                std_dev_c: Some(0.055_68),
            }),
            differential: Some(switch_value(7.32, 0.30, "7.32", "0.30")),
            changes: vec![
                change(1, 85.38),
                change(2, 78.05),
                change(3, 85.47),
                change(4, 78.16),
                change(5, 85.41),
                change(6, 78.09),
            ],
            outcome: Some("pass".to_string()),
            notes: SWITCH_NOTES.iter().map(ToString::to_string).collect(),
        });
        s
    }

    #[cfg(feature = "system-tests")]
    /// Extracted text per page (pdftotext ends each page with a form feed),
    /// with whitespace runs collapsed to single spaces.
    fn pdf_pages(bytes: &[u8], name: &str) -> Vec<String> {
        let available = Command::new("pdftotext").arg("-v").output().is_ok();
        assert!(
            available,
            "pdftotext was not found: install poppler-utils (apt-get install -y poppler-utils) \
             to run the PDF content tests"
        );
        let dir = std::env::temp_dir().join(format!("juncture-pdf-{}-{name}", std::process::id()));
        std::fs::create_dir_all(&dir).unwrap();
        let pdf = dir.join("certificate.pdf");
        let txt = dir.join("certificate.txt");
        std::fs::write(&pdf, bytes).unwrap();
        let status = Command::new("pdftotext")
            .args(["-enc", "UTF-8"])
            .arg(&pdf)
            .arg(&txt)
            .status()
            .unwrap();
        assert!(status.success(), "pdftotext failed on the rendered PDF");
        let text = std::fs::read_to_string(&txt).unwrap();
        std::fs::remove_dir_all(&dir).unwrap();
        let mut pages: Vec<String> = text
            .split('\u{c}')
            .map(|p| p.split_whitespace().collect::<Vec<_>>().join(" "))
            .collect();
        if pages.last().is_some_and(String::is_empty) {
            pages.pop();
        }
        pages
    }

    /// Keeps a copy for people to look at when JUNCTURE_PDF_OUT names a folder.
    fn save_sample(bytes: &[u8], name: &str) {
        if let Ok(dir) = std::env::var("JUNCTURE_PDF_OUT") {
            std::fs::write(format!("{dir}/{name}.pdf"), bytes).unwrap();
        }
    }

    #[cfg(feature = "system-tests")]
    fn normalise(s: &str) -> String {
        s.split_whitespace().collect::<Vec<_>>().join(" ")
    }

    #[cfg(feature = "system-tests")]
    fn assert_footers(pages: &[String], s: &CertificateSnapshot) {
        let n = pages.len();
        for (i, page) in pages.iter().enumerate() {
            let footer = format!(
                "Certificate {} rev {} — page {} of {n}",
                s.number,
                s.revision,
                i + 1
            );
            assert!(page.contains(&footer), "page {} lacks {footer:?}", i + 1);
        }
    }

    #[test]
    fn renders_a_pdf() {
        let bytes = render_pdf(&snapshot()).unwrap();
        assert!(bytes.starts_with(b"%PDF-"));
        assert!(bytes.len() > 10_000);
        save_sample(&bytes, "certificate");
    }

    #[test]
    fn rendering_is_deterministic() {
        let s = snapshot();
        let a = render_pdf(&s).unwrap();
        let b = render_pdf(&s).unwrap();
        assert!(a == b, "two renders of the same snapshot differ");
    }

    #[test]
    fn fingerprint_follows_printed_fields_and_so_does_the_pdf() {
        let s = snapshot();
        let mut t = s.clone();
        t.customer.name = "Brackenfield Process Foods plc".to_string();
        assert_ne!(s.fingerprint().unwrap(), t.fingerprint().unwrap());
        assert_ne!(render_pdf(&s).unwrap(), render_pdf(&t).unwrap());
    }

    #[test]
    fn bad_issue_date_is_an_error() {
        let mut s = snapshot();
        s.dates.issued_on = "7 March 2025".to_string();
        let e = render_pdf(&s).unwrap_err();
        assert!(matches!(e, PdfError::IssueDate(_)));
        assert!(e.to_string().contains("YYYY-MM-DD"));
    }

    #[cfg(feature = "system-tests")]
    #[test]
    fn text_has_every_required_item() {
        let s = snapshot();
        let pages = pdf_pages(&render_pdf(&s).unwrap(), "required");
        let all = pages.join(" ");
        assert_footers(&pages, &s);
        let f = s.deviation_function.as_ref().unwrap();
        let mut wanted: Vec<String> = vec![
            s.title.clone(),
            s.lab.name.clone(),
            s.number.clone(),
            s.customer.name.clone(),
            s.item.serial.clone(),
            s.method.clone(),
            s.dates.calibrated_on.clone(),
            s.dates.issued_on.clone(),
            s.dates.received_on.clone().unwrap(),
            "Valid from 0 °C to 150 °C".to_string(),
            normalise(&f.usage),
            normalise(RELATE),
            normalise(COVERAGE),
            s.approved_by.clone(),
            s.performed_by.clone(),
            s.conformity.as_ref().unwrap().statement.clone(),
            "Reference temperature (°C)".to_string(),
            "Deviation (°C)".to_string(),
            "End of certificate".to_string(),
        ];
        for r in &s.results {
            wanted.push(r.printed.deviation_c.clone());
            wanted.push(r.printed.expanded_uncertainty_c.clone());
            wanted.push(r.printed.t_ref_c.clone());
        }
        for t in &s.traceability {
            if !t.certificate_number.is_empty() {
                wanted.push(t.certificate_number.clone());
            }
        }
        for w in &wanted {
            assert!(all.contains(w.as_str()), "the PDF text lacks {w:?}");
        }
        // Nothing after the end marker but the footer.
        let last = pages.last().unwrap();
        let end = last.find("End of certificate").unwrap();
        assert!(!last[end..].contains("Authorisation"));
    }

    #[cfg(feature = "system-tests")]
    #[test]
    fn many_set_points_split_the_table_with_repeated_headers() {
        let mut s = snapshot();
        s.results = (0..40)
            .map(|i| {
                let t = -40.0 + f64::from(i) * 10.0;
                row(
                    t,
                    t + 0.004 * f64::from(i % 3),
                    0.01 + 0.0004 * t,
                    0.02 + 0.0001 * t.abs(),
                )
            })
            .collect();
        s.plot.points = s
            .results
            .iter()
            .map(|r| [r.t_ref_c, r.deviation_c, r.expanded_uncertainty_c])
            .collect();
        s.plot.curve.clear();
        s.plot.tolerance_upper.clear();
        s.plot.tolerance_lower.clear();
        s.deviation_function = None;
        let bytes = render_pdf(&s).unwrap();
        save_sample(&bytes, "many-set-points");
        let pages = pdf_pages(&bytes, "many");
        assert!(
            pages.len() >= 3,
            "expected at least 3 pages, got {}",
            pages.len()
        );
        assert_footers(&pages, &s);
        // Every page that shows result rows shows the column headings too.
        let mut table_pages = 0;
        for (i, page) in pages.iter().enumerate() {
            let has_rows = s
                .results
                .iter()
                .any(|r| page.contains(&format!(" {} ", r.printed.t_uut_c)));
            if has_rows {
                table_pages += 1;
                assert!(
                    page.contains("Indication") && page.contains("Correction"),
                    "page {} has result rows without the header row",
                    i + 1
                );
            }
        }
        assert!(table_pages >= 2, "the results table did not span pages");
        let all = pages.join(" ");
        for r in &s.results {
            assert!(
                all.contains(&r.printed.t_uut_c),
                "row {:?} missing",
                r.printed
            );
        }
        assert!(pages.last().unwrap().contains("End of certificate"));
    }

    #[cfg(feature = "system-tests")]
    #[test]
    fn amended_thermocouple_certificate_shows_emf_and_the_replaced_revision() {
        let mut s = snapshot();
        s.revision = 1;
        s.replaces = Some(crate::report::snapshot::Replaced {
            number: s.number.clone(),
            revision: 0,
            reason: "The customer's address was misspelt.".to_string(),
        });
        s.item.kind = "type N thermocouple".to_string();
        s.conditions.reference_junction = Some("ice point, 0 °C".to_string());
        for (i, r) in s.results.iter_mut().enumerate() {
            r.deviation_emf_mv = Some(0.0009 * (i as f64 + 1.0));
            r.outcome = None;
        }
        s.conformity = None;
        let bytes = render_pdf(&s).unwrap();
        save_sample(&bytes, "amended-thermocouple");
        let pages = pdf_pages(&bytes, "amended");
        assert_footers(&pages, &s);
        let all = pages.join(" ");
        for w in [
            "replaces revision 0 of certificate LTM-2025-0417",
            "The customer's address was misspelt.",
            "Emf deviation",
            "0.0018",
            "0.0036",
            "ice point, 0 °C",
            "rev 1",
        ] {
            assert!(all.contains(w), "the PDF text lacks {w:?}");
        }
        assert!(!all.contains("Outcome"));
    }
    #[test]
    fn switch_certificate_renders_the_same_bytes_twice() {
        let s = switch_snapshot();
        let a = render_pdf(&s).unwrap();
        let b = render_pdf(&s).unwrap();
        assert!(a.starts_with(b"%PDF-"));
        assert!(a == b, "two renders of the same switch snapshot differ");
        save_sample(&a, "switch");
        let mut t = s.clone();
        if let Some(sw) = &mut t.switch {
            sw.changes[3].t_c = 78.17;
        }
        assert_ne!(
            a,
            render_pdf(&t).unwrap(),
            "a changed state change left the PDF as it was"
        );
    }

    #[test]
    fn switch_rows_print_the_snapshot_strings() {
        let s = switch_snapshot();
        let sw = s.switch.as_ref().unwrap();
        let text = |q: &'static str, d: &str, n: &str, v: &str, u: &str, k: &str, sd: &str| {
            SwitchRowText {
                quantity: q,
                direction: d.to_string(),
                n: n.to_string(),
                value: v.to_string(),
                uncertainty: u.to_string(),
                k: k.to_string(),
                std_dev: sd.to_string(),
            }
        };
        assert_eq!(
            switch_rows(sw),
            vec![
                text(
                    "Switch point",
                    "rising",
                    "3",
                    "85.42",
                    "0.35",
                    "2.00",
                    "0.046"
                ),
                text(
                    "Reset point",
                    "falling",
                    "3",
                    "78.10",
                    "0.36",
                    "2.00",
                    "0.056"
                ),
                text("Differential", "—", "—", "7.32", "0.30", "2.00", "—"),
            ]
        );
        let temps: Vec<String> = switch_changes(sw).into_iter().map(|c| c.t_c).collect();
        assert_eq!(
            temps,
            ["85.38", "78.05", "85.47", "78.16", "85.41", "78.09"]
        );
        assert_eq!(switch_nominal(sw), "85 °C");

        // One cycle: no reset point, no differential, no s.
        let mut one = sw.clone();
        one.reset_point = None;
        one.differential = None;
        one.switch_point.n = 1;
        one.switch_point.std_dev_c = None;
        one.changes.truncate(1);
        one.changes[0].new_state = None;
        assert_eq!(
            switch_rows(&one),
            vec![text(
                "Switch point",
                "rising",
                "1",
                "85.42",
                "0.35",
                "2.00",
                "—"
            )]
        );
        let c = &switch_changes(&one)[0];
        assert_eq!((c.ramp.as_str(), c.new_state.as_str()), ("1", "—"));
    }

    #[test]
    fn a_column_of_changes_shares_its_decimals() {
        assert_eq!(column_decimals(&[85.38, 85.4, 78.1], 3), 2);
        assert_eq!(column_decimals(&[85.375, 85.4], 3), 3);
        assert_eq!(column_decimals(&[85.0, 78.0], 3), 0);
        assert_eq!(column_decimals(&[85.12345], 3), 3);
        let mut sw = switch_snapshot().switch.unwrap();
        sw.changes[0].t_c = 85.375;
        sw.changes[1].t_c = 78.0;
        let temps: Vec<String> = switch_changes(&sw).into_iter().map(|c| c.t_c).collect();
        assert_eq!(temps[..3], ["85.375", "78.000", "85.470"]);
        assert_eq!(fmt_fixed(-0.0004, 3), "0.000");
    }

    #[cfg(feature = "system-tests")]
    #[test]
    fn switch_text_has_every_switch_item() {
        let s = switch_snapshot();
        let sw = s.switch.as_ref().unwrap();
        let pages = pdf_pages(&render_pdf(&s).unwrap(), "switch");
        assert_footers(&pages, &s);
        assert!(pages[0].contains(&format!("Certificate {} rev 0 — page 1 of", s.number)));
        let all = pages.join(" ");
        let mut wanted: Vec<String> = vec![
            s.number.clone(),
            s.customer.name.clone(),
            s.item.serial.clone(),
            "Switch test results".to_string(),
            "Nominal switch point 85 °C".to_string(),
            "Actuation opens on rising temperature".to_string(),
            format!("Test method {}", normalise(&sw.method)),
            "Switch point against tolerance pass".to_string(),
            // The rows of the table, cell by cell in reading order.
            "Switch point rising 3 85.42 0.35 2.00 0.046".to_string(),
            "Reset point falling 3 78.10 0.36 2.00 0.056".to_string(),
            "Differential — — 7.32 0.30 2.00 —".to_string(),
            "Observed state changes, in test order".to_string(),
            normalise(COVERAGE),
            s.conformity.as_ref().unwrap().statement.clone(),
            "End of certificate".to_string(),
        ];
        for (i, c) in sw.changes.iter().enumerate() {
            let state = if i % 2 == 0 { "open" } else { "closed" };
            wanted.push(format!("{} {} {:.2} {state}", c.ramp, c.direction, c.t_c));
        }
        for n in &sw.notes {
            wanted.push(normalise(n));
        }
        for w in &wanted {
            assert!(all.contains(w.as_str()), "the PDF text lacks {w:?}");
        }
        // The coverage statement is printed with the switch results, not
        // a second time among the statements.
        assert_eq!(all.matches(&normalise(COVERAGE)).count(), 1);
    }

    #[cfg(feature = "system-tests")]
    #[test]
    fn switch_certificate_has_no_set_point_sections() {
        let s = switch_snapshot();
        let all = pdf_pages(&render_pdf(&s).unwrap(), "switch-empty").join(" ");
        for absent in [
            "Deviation plot",
            "Deviation function",
            "Reference temperature (°C)",
            "Indication (°C)",
            "Correction (°C)",
            "No set points were measured",
        ] {
            assert!(!all.contains(absent), "the PDF text has {absent:?}");
        }
        // Sections stay numbered without gaps: conformity follows the
        // switch results (6) as 7.
        assert!(all.contains("5 Conditions"));
        assert!(all.contains("7 Conformity"));
        assert!(all.contains("8 Traceability"));
    }

    #[cfg(feature = "system-tests")]
    #[test]
    fn plot_without_finite_data_leaves_no_heading() {
        let mut s = snapshot();
        s.plot.points = vec![[f64::NAN, 0.02, 0.02]];
        s.plot.curve.clear();
        let all = pdf_pages(&render_pdf(&s).unwrap(), "plot-nan").join(" ");
        assert!(all.contains("Results"));
        assert!(!all.contains("Deviation plot"));
        assert!(!all.contains("Measured deviation ± U"));
    }

    #[cfg(feature = "system-tests")]
    #[test]
    fn no_set_points_and_no_switch_says_so_and_keeps_the_coverage_statement() {
        let mut s = snapshot();
        s.results.clear();
        s.deviation_function = None;
        let all = pdf_pages(&render_pdf(&s).unwrap(), "no-points").join(" ");
        assert!(all.contains("Results No set points were measured."));
        assert!(all.contains(&normalise(COVERAGE)));
        assert!(!all.contains("Switch test results"));
        assert!(!all.contains("Indication (°C)"));
        assert!(!all.contains("Deviation plot"));
    }
    #[cfg(feature = "system-tests")]
    #[test]
    fn one_cycle_switch_test_prints_only_what_it_has() {
        let mut s = switch_snapshot();
        s.conformity = None;
        let note = "One cycle only: no experimental standard deviation exists, and U does \
                    not cover the repeatability of the switch.";
        if let Some(sw) = &mut s.switch {
            sw.method =
                "1 rising ramp at 0.5 °C/min, contact state read at every reading".to_string();
            sw.switch_point.n = 1;
            sw.switch_point.std_dev_c = None;
            sw.switch_point.value = switch_value(85.38, 0.31, "85.38", "0.31");
            sw.reset_point = None;
            sw.differential = None;
            sw.changes.truncate(1);
            sw.changes[0].new_state = None;
            sw.outcome = None;
            sw.notes = vec![note.to_string()];
        }
        let bytes = render_pdf(&s).unwrap();
        save_sample(&bytes, "switch-one-cycle");
        let pages = pdf_pages(&bytes, "switch-one");
        assert_footers(&pages, &s);
        let all = pages.join(" ");
        for w in [
            "Switch point rising 1 85.38 0.31 2.00 —",
            // pdftotext reads a one-row table's cells out of order; these
            // runs stay together.
            "Ramp Direction Temperature (°C) 1 rising",
            "New state 85.38 —",
            note,
            "End of certificate",
        ] {
            assert!(all.contains(&normalise(w)), "the PDF text lacks {w:?}");
        }
        for absent in [
            "Reset point",
            "Differential",
            "Switch point against tolerance",
            "Conformity",
            "Deviation plot",
        ] {
            assert!(!all.contains(absent), "the PDF text has {absent:?}");
        }
    }
}
