//! Rendering of results for people: the deviation plot (SVG) now;
//! certificates (HTML, PDF, JSON) join here.

pub mod drift;
pub mod pdf;
pub mod plot;
pub mod snapshot;

use crate::metrology::calib::RunResult;

/// The deviation plot of a run's results: set points with U error bars,
/// the fitted function with its band (± U from the fit, k = 2), as SVG.
#[must_use]
pub fn deviation_plot(result: &RunResult, title: &str) -> String {
    let points = result
        .set_points
        .iter()
        .enumerate()
        .map(|(i, sp)| plot::PlotPoint {
            t_c: sp.mean_t_ref_c,
            deviation_c: sp.mean_deviation_c,
            expanded_uncertainty_c: sp.budget.expanded_uncertainty,
            flagged: result
                .deviation_function
                .as_ref()
                .is_some_and(|f| f.flagged.iter().any(|r| r.set_point == i)),
        })
        .collect();
    let curve = result
        .deviation_function
        .as_ref()
        .map(|f| {
            let (lo, hi) = f.validity_c;
            (0..=60)
                .filter_map(|i| {
                    let t = lo + (hi - lo) * f64::from(i) / 60.0;
                    f.evaluate(t).ok().map(|(v, u)| plot::CurveSample {
                        t_c: t,
                        value_c: v,
                        expanded_uncertainty_c: 2.0 * u,
                    })
                })
                .collect()
        })
        .unwrap_or_default();
    let mut upper = Vec::new();
    let mut lower = Vec::new();
    for sp in &result.set_points {
        if let Some(c) = &sp.conformity {
            if let Some(u) = c.decision.tolerance_limits.upper {
                upper.push((sp.mean_t_ref_c, u));
            }
            if let Some(l) = c.decision.tolerance_limits.lower {
                lower.push((sp.mean_t_ref_c, l));
            }
        }
    }
    let mut tolerances = Vec::new();
    if !upper.is_empty() {
        tolerances.push(plot::ToleranceLine {
            label: "upper tolerance".to_owned(),
            points: upper,
        });
    }
    if !lower.is_empty() {
        tolerances.push(plot::ToleranceLine {
            label: "lower tolerance".to_owned(),
            points: lower,
        });
    }
    plot::render_svg(&plot::DeviationPlot {
        title: title.to_owned(),
        points,
        curve,
        tolerances,
        width_px: 720,
        height_px: 400,
    })
}
