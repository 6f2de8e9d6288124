//! Evaluation of one run: per-reading conversion, per-set-point statistics and budget,
//! reporting with the CMC floor, conformity, and the deviation function across set points.

use crate::metrology::stats::{
    BudgetOptions, BudgetResult, Component, Distribution, ReportOptions, ReportedResult,
    evaluate_budget, round_for_report,
};

use super::budget::{Sensitivities, components_for};
use super::conformity::{self, Assessment, ConformityResult};
use super::error::{CalibError, Location, finite};
use super::fit::{DeviationFunction, FitQuantity, fit_deviation, resolve_degree};
use super::model::{Reading, Run, SetPoint, UnitUnderTest};
use super::reference::emf_and_slope;

/// Fewest readings for which the Type A evaluation is considered reliable (common practice;
/// below it the set point is evaluated with a warning).
pub const MIN_READINGS_RELIABLE: usize = 5;
/// Fewest readings for any Type A evaluation (s needs n − 1 ≥ 1).
pub const MIN_READINGS: usize = 2;
/// Significance level below which the χ² check of the deviation function raises a warning
/// (common practice).
pub const CHI_SQUARE_ALPHA: f64 = 0.05;
/// Label of the automatic Type A row of every budget.
pub const REPEATABILITY_ROW: &str = "repeatability (Type A)";

/// What a warning is about.
///
/// # Reference
/// ISO/IEC 17025:2017 7.8 (information needed to interpret results); thresholds: common practice.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum WarningKind {
    /// Fewer than [`MIN_READINGS_RELIABLE`] readings: Type A unreliable.
    FewReadings,
    /// Readings carry a reference-junction temperature that no probe uses.
    JunctionTemperatureIgnored,
    /// The CMC table has no range at this temperature.
    NoCmcAtTemperature,
    /// The reported U was raised to the CMC.
    CmcFloorApplied,
    /// No conformity decision (class not defined at this temperature).
    DecisionNotPossible,
    /// A residual of a deviation function exceeds the point's U.
    ResidualExceedsU,
    /// The deviation function has a lower degree than the default.
    DegreeLowered,
    /// The χ² check of a deviation function fails at [`CHI_SQUARE_ALPHA`].
    FitInconsistent,
}

/// A warning: a plain sentence attached to the set point (or run) it concerns.
///
/// # Reference
/// ISO/IEC 17025:2017 7.8 (information needed to interpret results).
#[derive(Debug, Clone, PartialEq)]
pub struct Warning {
    /// Where.
    pub at: Location,
    /// What kind.
    pub kind: WarningKind,
    /// The sentence.
    pub message: String,
}

/// One converted reading.
///
/// # Reference
/// JCGM 100:2008 4.2 (individual observations).
#[derive(Debug, Clone, PartialEq)]
pub struct ReadingResult {
    /// Time stamp as given.
    pub timestamp: Option<String>,
    /// Reference temperature t_ref, °C.
    pub t_ref_c: f64,
    /// Temperature indicated by the UUT, °C.
    pub t_uut_c: f64,
    /// dt = t_uut − t_ref, °C.
    pub deviation_c: f64,
    /// dE, mV (thermocouple UUT).
    pub deviation_emf_mv: Option<f64>,
    /// dR, Ω (PRT UUT).
    pub deviation_ohm: Option<f64>,
    /// Reference-junction temperature used, °C (measured junctions only).
    pub t_rj_c: Option<f64>,
}

/// Results of one set point.
///
/// # Reference
/// JCGM 100:2008 4.2.3 (s(q̄) = s/√n), 5.1.2, G.4.1, 6.2-6.3; ILAC-P14:09/2020.
#[derive(Debug, Clone, PartialEq)]
pub struct SetPointResult {
    /// Index in the run (0-based).
    pub index: usize,
    /// Nominal temperature, °C.
    pub nominal_c: f64,
    /// Number of readings n.
    pub n: usize,
    /// Converted readings, in input order.
    pub readings: Vec<ReadingResult>,
    /// Mean reference temperature, °C.
    pub mean_t_ref_c: f64,
    /// Mean UUT temperature, °C.
    pub mean_t_uut_c: f64,
    /// Mean deviation dt, °C.
    pub mean_deviation_c: f64,
    /// Experimental standard deviation s(dt) of the readings, °C.
    pub std_dev_c: f64,
    /// Experimental standard deviation of the mean s(dt)/√n, °C (Type A, ν = n − 1).
    pub std_dev_of_mean_c: f64,
    /// Mean dE, mV (thermocouple UUT).
    pub mean_deviation_emf_mv: Option<f64>,
    /// s(dE)/√n, mV (thermocouple UUT).
    pub std_dev_of_mean_emf_mv: Option<f64>,
    /// Mean dR, Ω (PRT UUT).
    pub mean_deviation_ohm: Option<f64>,
    /// Mean reference-junction temperature, °C (measured junctions only).
    pub mean_t_rj_c: Option<f64>,
    /// Sensitivities and mean signals used by the budget.
    pub sensitivities: Sensitivities,
    /// Seebeck coefficient S(t_uut) of a thermocouple UUT's type at the mean UUT temperature,
    /// mV/°C; converts °C uncertainties of dt to mV of dE.
    pub uut_seebeck_mv_per_c: Option<f64>,
    /// GUM budget of dt (°C): u_c, ν_eff, k, U, contributions and variance shares.
    pub budget: BudgetResult,
    /// U expressed as emf, U·S(t_uut), mV (thermocouple UUT).
    pub expanded_uncertainty_emf_mv: Option<f64>,
    /// CMC at the mean reference temperature, °C.
    pub cmc_c: Option<f64>,
    /// Mean dt and U rounded for the certificate (ILAC-P14, CMC floor).
    pub reported: ReportedResult,
    /// Conformity result, when a specification was given and a decision was possible.
    pub conformity: Option<ConformityResult>,
    /// Warnings about this set point.
    pub warnings: Vec<Warning>,
}

/// Results of a run.
///
/// # Reference
/// JCGM 100:2008; ILAC-P14:09/2020; ILAC-G8:09/2019.
#[derive(Debug, Clone, PartialEq)]
pub struct RunResult {
    /// Per set point, in input order.
    pub set_points: Vec<SetPointResult>,
    /// dt(t) deviation function (°C), unless [`super::FitDegree::None`].
    pub deviation_function: Option<DeviationFunction>,
    /// dE(t) deviation function (mV) for a thermocouple UUT.
    pub emf_deviation_function: Option<DeviationFunction>,
    /// Warnings about the run as a whole (deviation function).
    pub warnings: Vec<Warning>,
}

/// Sum with Neumaier compensation, so that the result hardly depends on the order of terms.
#[cfg(test)]
fn compensated_sum(values: impl Iterator<Item = f64>) -> f64 {
    let mut sum = CompensatedSum::default();
    values.for_each(|v| sum.add(v));
    sum.value()
}

/// Running sum with Neumaier compensation (see [`compensated_sum`]).
#[derive(Debug, Clone, Copy, Default)]
struct CompensatedSum {
    sum: f64,
    c: f64,
}

impl CompensatedSum {
    fn add(&mut self, v: f64) {
        let t = self.sum + v;
        if self.sum.abs() >= v.abs() {
            self.c += (self.sum - t) + v;
        } else {
            self.c += (v - t) + self.sum;
        }
        self.sum = t;
    }

    fn value(self) -> f64 {
        self.sum + self.c
    }
}

/// Adds `v` to a sum that exists only while every value so far was given.
fn add_some(sum: &mut Option<CompensatedSum>, v: Option<f64>) {
    match v {
        Some(v) => {
            if let Some(s) = sum {
                s.add(v);
            }
        }
        None => *sum = None,
    }
}

/// Mean and experimental standard deviation (two-pass) of collected values: what
/// `evaluate_set_point` computes while streaming; kept for the tests that compare the two.
#[cfg(test)]
pub(super) fn mean_and_std_dev(values: &[f64]) -> (f64, f64) {
    let n = values.len() as f64;
    let mean = compensated_sum(values.iter().copied()) / n;
    let ss = compensated_sum(values.iter().map(|v| (v - mean) * (v - mean)));
    let s = if values.len() > 1 {
        (ss / (n - 1.0)).sqrt()
    } else {
        0.0
    };
    (mean, s)
}

/// `v` with `digits` significant digits, for warning sentences.
fn sig(v: f64, digits: i32) -> String {
    if v == 0.0 || !v.is_finite() {
        return format!("{v}");
    }
    let mag = v.abs().log10().floor() as i32;
    let decimals = (digits - 1 - mag).max(0) as usize;
    format!("{v:.decimals$}")
}

/// Checks the run as a whole before any set point is evaluated.
fn validate(run: &Run) -> Result<(), CalibError> {
    if run.set_points.is_empty() {
        return Err(CalibError::EmptyRun);
    }
    for (i, sp) in run.set_points.iter().enumerate() {
        finite(
            &Location::run().field(format!("nominal temperature of set point {}", i + 1)),
            sp.nominal_c,
        )?;
        if let Some(first) = run.set_points[..i]
            .iter()
            .position(|o| o.nominal_c == sp.nominal_c)
        {
            return Err(CalibError::DuplicateSetPoint {
                first,
                second: i,
                nominal_c: sp.nominal_c,
            });
        }
    }
    let at = Location::run();
    finite(
        &at.clone().field("coverage probability"),
        run.coverage_probability,
    )?;
    run.reference
        .validate(&at.clone().field("reference standard"))?;
    run.uut.validate(&at.clone().field("unit under test"))?;
    run.cmc.validate()?;
    if let Some(spec) = &run.conformity {
        conformity::validate(spec, &run.uut)?;
    }
    Ok(())
}

/// Evaluates one run: per reading t_ref and the UUT deviation; per set point the means, Type A,
/// GUM budget, reported result with CMC floor and conformity; across set points the deviation
/// function(s). Pure and deterministic: the same input gives bit-identical output.
///
/// Errors (with set point, reading and field): empty run, duplicate nominal temperatures,
/// non-finite inputs, fewer than [`MIN_READINGS`] readings, readings outside the range of a
/// reference function or certificate, invalid budget values, unsupported fit degree.
/// Conditions that still allow a result are returned as [`Warning`]s.
///
/// # Reference
/// JCGM 100:2008 4.2 (Type A), 5.1.2 (combination), G.4.1 (ν_eff), 6.2-6.3 (U = k u_c);
/// EA-4/02 M:2013 S5 (comparison calibration of thermocouples); ILAC-P14:09/2020 (reporting,
/// CMC floor); ILAC-G8:09/2019 (decision rules); JCGM 100:2008 H.3 (deviation function).
pub fn evaluate_run(run: &Run) -> Result<RunResult, CalibError> {
    validate(run)?;
    let mut set_points = Vec::with_capacity(run.set_points.len());
    for (i, sp) in run.set_points.iter().enumerate() {
        set_points.push(evaluate_set_point(run, i, sp)?);
    }
    let mut warnings = Vec::new();
    let (deviation_function, emf_deviation_function) =
        fit_functions(run, &mut set_points, &mut warnings)?;
    Ok(RunResult {
        set_points,
        deviation_function,
        emf_deviation_function,
        warnings,
    })
}

fn evaluate_set_point(
    run: &Run,
    index: usize,
    sp: &SetPoint,
) -> Result<SetPointResult, CalibError> {
    let at = Location::set_point(index, sp.nominal_c);
    let n = sp.readings.len();
    if n < MIN_READINGS {
        return Err(CalibError::TooFewReadings {
            at,
            got: n,
            need: MIN_READINGS,
        });
    }
    let mut warnings = Vec::new();
    if n < MIN_READINGS_RELIABLE {
        warnings.push(Warning {
            at: at.clone(),
            kind: WarningKind::FewReadings,
            message: format!(
                "Only {n} readings: the Type A evaluation (ν = {}) is unreliable; \
                 {MIN_READINGS_RELIABLE} or more are recommended.",
                n - 1
            ),
        });
    }
    let measured_junction =
        run.reference.uses_measured_junction() || run.uut.uses_measured_junction();
    // One reading converted: t_ref and the UUT's deviation.
    let convert = |r: usize, reading: &Reading| -> Result<ReadingResult, CalibError> {
        let rat = at.clone().reading(r);
        if let Some(v) = reading.t_rj_c {
            finite(&rat.clone().field("t_rj_c"), v)?;
        }
        let t_rj = if measured_junction {
            reading.t_rj_c
        } else {
            None
        };
        let t_ref = run
            .reference
            .temperature(reading.reference_signal, t_rj, &rat)?;
        let dev = run.uut.deviation(reading.uut_signal, t_ref, t_rj, &rat)?;
        Ok(ReadingResult {
            timestamp: None,
            t_ref_c: t_ref,
            t_uut_c: dev.t_uut_c,
            deviation_c: dev.deviation_c,
            deviation_emf_mv: dev.deviation_emf_mv,
            deviation_ohm: dev.deviation_ohm,
            t_rj_c: t_rj,
        })
    };
    // First pass: the sums of the means (the same compensated sums, in the
    // same order, as over collected columns), and the readings' results
    // when they are kept.
    let mut ignored_rj = 0usize;
    let mut readings = Vec::with_capacity(if run.keep_reading_results { n } else { 0 });
    let mut sum_t_ref = CompensatedSum::default();
    let mut sum_t_uut = CompensatedSum::default();
    let mut sum_dev = CompensatedSum::default();
    let mut sum_emf = Some(CompensatedSum::default());
    let mut sum_ohm = Some(CompensatedSum::default());
    let mut sum_rj = Some(CompensatedSum::default());
    let mut sum_ref_signal = CompensatedSum::default();
    let mut sum_uut_signal = CompensatedSum::default();
    for (r, reading) in sp.readings.iter().enumerate() {
        if reading.t_rj_c.is_some() && !measured_junction {
            ignored_rj += 1;
        }
        let mut rr = convert(r, reading)?;
        sum_t_ref.add(rr.t_ref_c);
        sum_t_uut.add(rr.t_uut_c);
        sum_dev.add(rr.deviation_c);
        add_some(&mut sum_emf, rr.deviation_emf_mv);
        add_some(&mut sum_ohm, rr.deviation_ohm);
        add_some(&mut sum_rj, rr.t_rj_c);
        sum_ref_signal.add(reading.reference_signal);
        sum_uut_signal.add(reading.uut_signal);
        if run.keep_reading_results {
            rr.timestamp.clone_from(&reading.timestamp);
            readings.push(rr);
        }
    }
    if ignored_rj > 0 {
        warnings.push(Warning {
            at: at.clone(),
            kind: WarningKind::JunctionTemperatureIgnored,
            message: format!(
                "{ignored_rj} reading(s) carry a reference-junction temperature, but no \
                 thermocouple of this run has a measured reference junction; it was ignored."
            ),
        });
    }

    let count = n as f64;
    let mean_t_ref = sum_t_ref.value() / count;
    let mean_t_uut = sum_t_uut.value() / count;
    let mean_dev = sum_dev.value() / count;
    let mean_emf = sum_emf.map(|s| s.value() / count);
    let mean_ohm = sum_ohm.map(|s| s.value() / count);
    let mean_t_rj = sum_rj.map(|s| s.value() / count);
    let mean_ref_signal = sum_ref_signal.value() / count;
    let mean_uut_signal = sum_uut_signal.value() / count;
    // Second pass: the squared deviations from the means (two-pass
    // standard deviations), from the kept results or converted again.
    let mut ss_dev = CompensatedSum::default();
    let mut ss_emf = CompensatedSum::default();
    let mut second = |rr: &ReadingResult| {
        ss_dev.add((rr.deviation_c - mean_dev) * (rr.deviation_c - mean_dev));
        if let (Some(m), Some(e)) = (mean_emf, rr.deviation_emf_mv) {
            ss_emf.add((e - m) * (e - m));
        }
    };
    if run.keep_reading_results {
        readings.iter().for_each(&mut second);
    } else {
        for (r, reading) in sp.readings.iter().enumerate() {
            second(&convert(r, reading)?);
        }
    }
    let std_dev = |ss: CompensatedSum| {
        if n > 1 {
            (ss.value() / (count - 1.0)).sqrt()
        } else {
            0.0
        }
    };
    let s_dev = std_dev(ss_dev);
    let sqrt_n = count.sqrt();
    let s_mean = s_dev / sqrt_n;
    let s_mean_emf = mean_emf.map(|_| std_dev(ss_emf) / sqrt_n);

    let t_rj_for_sensitivity = mean_t_rj.unwrap_or(0.0);
    let sensitivities = Sensitivities {
        reference_c_per_signal: run.reference.sensitivity_c_per_signal(
            mean_ref_signal,
            mean_t_ref,
            &at,
        )?,
        uut_c_per_signal: run.uut.sensitivity_c_per_signal(mean_t_uut, &at)?,
        mean_reference_signal: mean_ref_signal,
        mean_uut_signal,
        reference_junction: run.reference.junction_sensitivity(
            mean_t_ref,
            t_rj_for_sensitivity,
            &at,
        )?,
        uut_junction: run
            .uut
            .junction_sensitivity(mean_t_uut, t_rj_for_sensitivity, &at)?,
    };
    let uut_seebeck = match run.uut {
        UnitUnderTest::Thermocouple { kind, .. } => Some(
            emf_and_slope(kind, mean_t_uut)
                .map_err(|e| CalibError::thermo(&at.clone().field("UUT sensitivity"), e))?
                .1,
        ),
        _ => None,
    };

    let mut components = components_for(&run.budget_template, &sensitivities, &at)?;
    components.extend(components_for(&sp.budget_items, &sensitivities, &at)?);
    let n_u32 = u32::try_from(n).map_err(|_| {
        CalibError::invalid(&at, format!("{n} readings are more than can be evaluated"))
    })?;
    components.push(Component::new(
        REPEATABILITY_ROW,
        mean_dev,
        Distribution::TypeA {
            std_dev_of_mean: s_mean,
            n: n_u32,
        },
    ));
    let budget = evaluate_budget(
        &components,
        &[],
        &BudgetOptions {
            coverage_probability: run.coverage_probability,
            ..BudgetOptions::default()
        },
    )
    .map_err(|e| CalibError::stats(&at, "uncertainty budget", e))?;

    let cmc = run.cmc.at(mean_t_ref);
    if cmc.is_none() && !run.cmc.ranges.is_empty() {
        warnings.push(Warning {
            at: at.clone(),
            kind: WarningKind::NoCmcAtTemperature,
            message: format!(
                "The CMC table has no range containing {} °C; the reported uncertainty is not \
                 checked against a CMC.",
                sig(mean_t_ref, 6)
            ),
        });
    }
    let reported = round_for_report(
        mean_dev,
        budget.expanded_uncertainty,
        &ReportOptions {
            cmc,
            ..ReportOptions::default()
        },
    )
    .map_err(|e| CalibError::stats(&at, "reporting", e))?;
    if reported.cmc_floor_applied {
        warnings.push(Warning {
            at: at.clone(),
            kind: WarningKind::CmcFloorApplied,
            message: format!(
                "The calculated expanded uncertainty {} °C is below (or rounds below) the CMC \
                 {} °C; {} °C is reported.",
                sig(budget.expanded_uncertainty, 3),
                cmc.map_or_else(String::new, |c| sig(c, 3)),
                reported.uncertainty_text
            ),
        });
    }

    let conformity = match &run.conformity {
        None => None,
        Some(spec) => match conformity::assess(
            spec,
            &run.uut,
            mean_t_ref,
            mean_dev,
            reported.expanded_uncertainty.to_f64(),
            &at,
        )? {
            Assessment::Decided(result) => Some(result),
            Assessment::NotPossible(message) => {
                warnings.push(Warning {
                    at: at.clone(),
                    kind: WarningKind::DecisionNotPossible,
                    message,
                });
                None
            }
        },
    };

    Ok(SetPointResult {
        index,
        nominal_c: sp.nominal_c,
        n,
        readings,
        mean_t_ref_c: mean_t_ref,
        mean_t_uut_c: mean_t_uut,
        mean_deviation_c: mean_dev,
        std_dev_c: s_dev,
        std_dev_of_mean_c: s_mean,
        mean_deviation_emf_mv: mean_emf,
        std_dev_of_mean_emf_mv: s_mean_emf,
        mean_deviation_ohm: mean_ohm,
        mean_t_rj_c: mean_t_rj,
        sensitivities,
        uut_seebeck_mv_per_c: uut_seebeck,
        expanded_uncertainty_emf_mv: uut_seebeck.map(|s| s * budget.expanded_uncertainty),
        budget,
        cmc_c: cmc,
        reported,
        conformity,
        warnings,
    })
}

type Functions = (Option<DeviationFunction>, Option<DeviationFunction>);

fn fit_functions(
    run: &Run,
    set_points: &mut [SetPointResult],
    warnings: &mut Vec<Warning>,
) -> Result<Functions, CalibError> {
    let Some((degree, note)) = resolve_degree(run.fit_degree, set_points.len())? else {
        return Ok((None, None));
    };
    if let Some(text) = &note {
        warnings.push(Warning {
            at: Location::run(),
            kind: WarningKind::DegreeLowered,
            message: text.clone(),
        });
    }
    let t: Vec<f64> = set_points.iter().map(|s| s.mean_t_ref_c).collect();
    let y: Vec<f64> = set_points.iter().map(|s| s.mean_deviation_c).collect();
    let u: Vec<f64> = set_points
        .iter()
        .map(|s| s.budget.combined_standard_uncertainty)
        .collect();
    let big_u: Vec<f64> = set_points
        .iter()
        .map(|s| s.budget.expanded_uncertainty)
        .collect();
    let temperature = fit_deviation(
        FitQuantity::TemperatureDeviation,
        degree,
        note.clone(),
        &t,
        &y,
        &u,
        &big_u,
    )?;
    report_fit(&temperature, set_points, warnings);

    let emf = if let UnitUnderTest::Thermocouple { .. } = run.uut {
        let seebeck: Option<Vec<f64>> = set_points.iter().map(|s| s.uut_seebeck_mv_per_c).collect();
        let y_e: Option<Vec<f64>> = set_points.iter().map(|s| s.mean_deviation_emf_mv).collect();
        match (seebeck, y_e) {
            (Some(s), Some(y_e)) => {
                let u_e: Vec<f64> = u.iter().zip(&s).map(|(u, s)| u * s).collect();
                let big_u_e: Vec<f64> = big_u.iter().zip(&s).map(|(u, s)| u * s).collect();
                let f = fit_deviation(
                    FitQuantity::EmfDeviation,
                    degree,
                    note,
                    &t,
                    &y_e,
                    &u_e,
                    &big_u_e,
                )?;
                report_fit(&f, set_points, warnings);
                Some(f)
            }
            _ => None,
        }
    } else {
        None
    };
    Ok((Some(temperature), emf))
}

fn report_fit(
    f: &DeviationFunction,
    set_points: &mut [SetPointResult],
    warnings: &mut Vec<Warning>,
) {
    let unit = f.quantity.unit();
    let what = match f.quantity {
        FitQuantity::TemperatureDeviation => "temperature deviation function",
        FitQuantity::EmfDeviation => "emf deviation function",
    };
    for flag in &f.flagged {
        if let Some(sp) = set_points.get_mut(flag.set_point) {
            sp.warnings.push(Warning {
                at: Location::set_point(sp.index, sp.nominal_c),
                kind: WarningKind::ResidualExceedsU,
                message: format!(
                    "The residual of the {what} here, {} {unit}, is larger than the expanded \
                     uncertainty of the point, {} {unit}.",
                    sig(flag.residual, 3),
                    sig(flag.limit, 3)
                ),
            });
        }
    }
    if let Some(chi) = f.chi_square
        && let Some(p) = chi.p_value
        && p < CHI_SQUARE_ALPHA
    {
        warnings.push(Warning {
            at: Location::run(),
            kind: WarningKind::FitInconsistent,
            message: format!(
                "The residuals of the {what} are larger than the point uncertainties explain \
                 (χ² = {}, ν = {}, p = {}): the degree may be too low or an uncertainty too \
                 small.",
                sig(chi.chi_square, 3),
                chi.dof,
                sig(p, 2)
            ),
        });
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn mean_and_std_dev_by_hand() {
        // 1, 2, 3, 4: mean 2.5, s² = 5/3 (by hand).
        let (m, s) = mean_and_std_dev(&[1.0, 2.0, 3.0, 4.0]);
        assert_eq!(m, 2.5);
        assert!((s - (5.0f64 / 3.0).sqrt()).abs() < 1e-15);
    }

    #[test]
    fn significant_digit_text() {
        assert_eq!(sig(0.012345, 3), "0.0123");
        assert_eq!(sig(1234.5, 3), "1234");
        assert_eq!(sig(-0.5, 2), "-0.50");
    }
}
