//! The drift chart of an instrument: the deviation found at each set point
//! (one series per nominal temperature) against the calibration date, with
//! the expanded uncertainty as error bars, as a self-contained SVG.
//!
//! Presentation attributes only (no `style` attributes), so the chart shows
//! under a Content-Security-Policy without inline styles. The same input
//! always gives the same string.

use std::fmt::Write as _;

use super::plot::{LinearScale, escape_xml, fmt_px, fmt_value, nice_ticks};
use crate::domain::history::DriftSeries;

const WIDTH: f64 = 800.0;
const HEIGHT: f64 = 400.0;
const LEFT: f64 = 72.0;
const RIGHT: f64 = 150.0;
const TOP: f64 = 44.0;
const BOTTOM: f64 = 56.0;
/// Colours of the series in turn (then repeated with other marker shapes).
const COLOURS: [&str; 6] = [
    "#1d4f80", "#b54a00", "#2a7a5e", "#74368f", "#8a6d00", "#a1264a",
];

/// Days since 1970-01-01 of a "YYYY-MM-DD" date; `None` if it is not one.
///
/// # Reference
/// Days-from-civil algorithm for the proleptic Gregorian calendar (H.
/// Hinnant, "chrono-compatible low-level date algorithms"; from memory).
#[must_use]
pub fn days_from_date(date: &str) -> Option<i64> {
    let mut parts = date.splitn(3, '-');
    let y: i64 = parts.next()?.parse().ok()?;
    let m: i64 = parts.next()?.parse().ok()?;
    let d: i64 = parts.next()?.get(..2)?.parse().ok()?;
    if !(1..=12).contains(&m) || !(1..=31).contains(&d) {
        return None;
    }
    let y = if m <= 2 { y - 1 } else { y };
    let era = y.div_euclid(400);
    let yoe = y - era * 400;
    let mp = (m + 9) % 12;
    let doy = (153 * mp + 2) / 5 + d - 1;
    let doe = yoe * 365 + yoe / 4 - yoe / 100 + doy;
    Some(era * 146_097 + doe - 719_468)
}

/// Renders the drift chart of `series` (points with unreadable dates are
/// left out; an empty chart says so).
#[must_use]
pub fn render_drift_svg(series: &[DriftSeries], title: &str) -> String {
    let mut svg = String::new();
    let _ = write!(
        svg,
        r##"<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {w} {h}" width="{w}" height="{h}" role="img" aria-labelledby="drift-title" font-family="sans-serif"><title id="drift-title">{t}</title><rect x="0" y="0" width="{w}" height="{h}" fill="#ffffff"/><text x="{cx}" y="24" text-anchor="middle" font-size="16" fill="#222222">{t}</text>"##,
        w = WIDTH,
        h = HEIGHT,
        cx = fmt_px(WIDTH / 2.0),
        t = escape_xml(title)
    );
    let points: Vec<(usize, i64, f64, f64)> = series
        .iter()
        .enumerate()
        .flat_map(|(i, s)| {
            s.points.iter().filter_map(move |p| {
                let day = days_from_date(&p.calibrated_on)?;
                (p.deviation_c.is_finite() && p.expanded_uncertainty_c.is_finite()).then_some((
                    i,
                    day,
                    p.deviation_c,
                    p.expanded_uncertainty_c.abs(),
                ))
            })
        })
        .collect();
    if points.is_empty() {
        let _ = write!(
            svg,
            r##"<text x="{}" y="{}" text-anchor="middle" font-size="14" fill="#555555">No calibration results to chart</text></svg>"##,
            fmt_px(WIDTH / 2.0),
            fmt_px(HEIGHT / 2.0)
        );
        return svg;
    }
    let (mut x_lo, mut x_hi) = points.iter().fold((i64::MAX, i64::MIN), |(lo, hi), p| {
        (lo.min(p.1), hi.max(p.1))
    });
    if x_hi - x_lo < 60 {
        x_lo -= 30;
        x_hi += 30;
    }
    let x_margin = ((x_hi - x_lo) as f64 * 0.06).max(10.0);
    let (mut y_lo, mut y_hi) = points.iter().fold((0.0_f64, 0.0_f64), |(lo, hi), p| {
        (lo.min(p.2 - p.3), hi.max(p.2 + p.3))
    });
    if y_hi - y_lo < 1e-6 {
        y_lo -= 0.1;
        y_hi += 0.1;
    }
    let y_margin = (y_hi - y_lo) * 0.08;
    let x = LinearScale {
        d0: x_lo as f64 - x_margin,
        d1: x_hi as f64 + x_margin,
        r0: LEFT,
        r1: WIDTH - RIGHT,
    };
    let y = LinearScale {
        d0: y_lo - y_margin,
        d1: y_hi + y_margin,
        r0: HEIGHT - BOTTOM,
        r1: TOP,
    };
    // Grid and y ticks.
    let ticks = nice_ticks(y.d0, y.d1, 6);
    for (v, label) in ticks.values.iter().zip(ticks.labels()) {
        let py = fmt_px(y.map(*v));
        let _ = write!(
            svg,
            r##"<line x1="{l}" y1="{py}" x2="{r}" y2="{py}" stroke="{c}" stroke-width="1"/><text x="{tx}" y="{py}" dy="4" text-anchor="end" font-size="11" fill="#222222">{label}</text>"##,
            l = fmt_px(LEFT),
            r = fmt_px(WIDTH - RIGHT),
            c = if *v == 0.0 { "#555555" } else { "#e4e4e4" },
            tx = fmt_px(LEFT - 6.0),
        );
    }
    // Date labels: the distinct calibration dates, at most eight, evenly picked.
    let mut dates: Vec<(i64, &str)> = series
        .iter()
        .flat_map(|s| s.points.iter())
        .filter_map(|p| Some((days_from_date(&p.calibrated_on)?, p.calibrated_on.as_str())))
        .collect();
    dates.sort_unstable();
    dates.dedup_by_key(|d| d.0);
    let step = dates.len().div_ceil(8).max(1);
    for (day, text) in dates.iter().step_by(step) {
        let px = fmt_px(x.map(*day as f64));
        let _ = write!(
            svg,
            r##"<line x1="{px}" y1="{b}" x2="{px}" y2="{b5}" stroke="#333333" stroke-width="1"/><text x="{px}" y="{ty}" text-anchor="middle" font-size="11" fill="#222222">{}</text>"##,
            escape_xml(text),
            b = fmt_px(HEIGHT - BOTTOM),
            b5 = fmt_px(HEIGHT - BOTTOM + 5.0),
            ty = fmt_px(HEIGHT - BOTTOM + 18.0),
        );
    }
    // Axes and titles.
    let _ = write!(
        svg,
        r##"<line x1="{l}" y1="{b}" x2="{r}" y2="{b}" stroke="#333333" stroke-width="1"/><line x1="{l}" y1="{t}" x2="{l}" y2="{b}" stroke="#333333" stroke-width="1"/><text x="{cx}" y="{bt}" text-anchor="middle" font-size="12" fill="#222222">Calibration date</text><text x="16" y="{cy}" text-anchor="middle" font-size="12" fill="#222222" transform="rotate(-90 16 {cy})">Deviation (indication − reference) / °C</text>"##,
        l = fmt_px(LEFT),
        r = fmt_px(WIDTH - RIGHT),
        t = fmt_px(TOP),
        b = fmt_px(HEIGHT - BOTTOM),
        cx = fmt_px((LEFT + WIDTH - RIGHT) / 2.0),
        bt = fmt_px(HEIGHT - 14.0),
        cy = fmt_px((TOP + HEIGHT - BOTTOM) / 2.0),
    );
    // Series: lines, U bars and markers; a small sideways offset per series
    // keeps bars at the same date apart.
    let n = series.len() as f64;
    for (i, s) in series.iter().enumerate() {
        let colour = COLOURS[i % COLOURS.len()];
        let dodge = (i as f64 - (n - 1.0) / 2.0) * 4.0;
        let mine: Vec<&(usize, i64, f64, f64)> = points.iter().filter(|p| p.0 == i).collect();
        if mine.len() > 1 {
            let path: Vec<String> = mine
                .iter()
                .map(|p| {
                    format!(
                        "{},{}",
                        fmt_px(x.map(p.1 as f64) + dodge),
                        fmt_px(y.map(p.2))
                    )
                })
                .collect();
            let _ = write!(
                svg,
                r##"<polyline points="{}" fill="none" stroke="{colour}" stroke-width="1.5"/>"##,
                path.join(" ")
            );
        }
        for p in &mine {
            let px = x.map(p.1 as f64) + dodge;
            let _ = write!(
                svg,
                r##"<line x1="{px}" y1="{a}" x2="{px}" y2="{b}" stroke="{colour}" stroke-width="1.2"/><line x1="{l}" y1="{a}" x2="{r}" y2="{a}" stroke="{colour}" stroke-width="1.2"/><line x1="{l}" y1="{b}" x2="{r}" y2="{b}" stroke="{colour}" stroke-width="1.2"/>"##,
                px = fmt_px(px),
                l = fmt_px(px - 3.0),
                r = fmt_px(px + 3.0),
                a = fmt_px(y.map(p.2 + p.3)),
                b = fmt_px(y.map(p.2 - p.3)),
            );
            svg.push_str(&marker(i, px, y.map(p.2), colour));
        }
        // Legend entry.
        let ly = TOP + 8.0 + 20.0 * i as f64;
        let lx = WIDTH - RIGHT + 18.0;
        svg.push_str(&marker(i, lx, ly, colour));
        let _ = write!(
            svg,
            r##"<text x="{}" y="{}" dy="4" font-size="11" fill="#222222">{} °C</text>"##,
            fmt_px(lx + 10.0),
            fmt_px(ly),
            escape_xml(&fmt_value(s.nominal_t_c))
        );
    }
    let _ = write!(
        svg,
        r##"<text x="{}" y="{}" font-size="10" fill="#555555">Bars: expanded uncertainty U</text></svg>"##,
        fmt_px(WIDTH - RIGHT + 8.0),
        fmt_px(HEIGHT - BOTTOM + 18.0)
    );
    svg
}

/// A marker of series `i`: circle, square, triangle, diamond in turn.
fn marker(i: usize, px: f64, py: f64, colour: &str) -> String {
    let (x, y) = (fmt_px(px), fmt_px(py));
    match (i / COLOURS.len()) % 4 {
        0 => format!(r#"<circle cx="{x}" cy="{y}" r="4" fill="{colour}"/>"#),
        1 => format!(
            r#"<rect x="{}" y="{}" width="8" height="8" fill="{colour}"/>"#,
            fmt_px(px - 4.0),
            fmt_px(py - 4.0)
        ),
        2 => format!(
            r#"<polygon points="{},{} {},{} {},{}" fill="{colour}"/>"#,
            fmt_px(px),
            fmt_px(py - 5.0),
            fmt_px(px - 5.0),
            fmt_px(py + 4.0),
            fmt_px(px + 5.0),
            fmt_px(py + 4.0)
        ),
        _ => format!(
            r#"<polygon points="{},{} {},{} {},{} {},{}" fill="{colour}"/>"#,
            fmt_px(px),
            fmt_px(py - 5.0),
            fmt_px(px + 5.0),
            fmt_px(py),
            fmt_px(px),
            fmt_px(py + 5.0),
            fmt_px(px - 5.0),
            fmt_px(py)
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::domain::history::DriftPoint;

    #[test]
    fn days_from_known_dates() {
        // Python's datetime as the reference: (date(2000, 3, 1) - date(1970, 1, 1)).days
        // = 11017 and (date(2026, 12, 2) - date(1970, 1, 1)).days = 20789.
        assert_eq!(days_from_date("1970-01-01"), Some(0));
        assert_eq!(days_from_date("2000-03-01"), Some(11_017));
        assert_eq!(days_from_date("2026-12-02"), Some(20_789));
        // 2024 is a leap year: 2024-03-01 follows 2024-02-29 by one day.
        assert_eq!(
            days_from_date("2024-03-01").unwrap() - days_from_date("2024-02-28").unwrap(),
            2
        );
        assert_eq!(days_from_date("2026-13-01"), None);
        assert_eq!(days_from_date("yesterday"), None);
    }

    fn series() -> Vec<DriftSeries> {
        let p = |date: &str, d: f64| DriftPoint {
            calibrated_on: date.to_owned(),
            number: format!("C-{date}"),
            t_ref_c: 100.0,
            deviation_c: d,
            expanded_uncertainty_c: 0.02,
        };
        vec![
            DriftSeries {
                nominal_t_c: 0.0,
                points: vec![p("2024-11-20", 0.01), p("2025-11-18", 0.02)],
            },
            DriftSeries {
                nominal_t_c: 100.0,
                points: vec![p("2024-11-20", 0.05), p("2025-11-18", 0.09)],
            },
        ]
    }

    #[test]
    fn chart_has_a_series_per_set_point_with_bars_and_escaped_title() {
        let svg = render_drift_svg(&series(), "PT <9>");
        assert!(svg.starts_with("<svg") && svg.ends_with("</svg>"));
        assert!(svg.contains("PT &lt;9&gt;"));
        assert_eq!(svg.matches("<polyline").count(), 2);
        // Two legend markers plus four data markers, all circles (first six series).
        assert_eq!(svg.matches("<circle").count(), 6);
        assert!(svg.contains(">0 °C<") && svg.contains(">100 °C<"));
        assert!(svg.contains(">2024-11-20<") && svg.contains(">2025-11-18<"));
        assert!(!svg.contains("style="));
        // Deterministic.
        assert_eq!(svg, render_drift_svg(&series(), "PT <9>"));
    }

    #[test]
    fn empty_chart_says_so() {
        let svg = render_drift_svg(&[], "none");
        assert!(svg.contains("No calibration results to chart"));
    }
}
