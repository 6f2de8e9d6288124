//! Temperature switches (bimetal or electronic thermostats, alarm contacts): state changes
//! located on rising and falling ramps, switch point, reset point and differential with their
//! GUM budgets, and conformity of the switch point with its tolerance.
//!
//! # Test and conventions
//! The switch sits in a comparison medium beside the reference probe. The medium is ramped
//! through the switching region, up and down, several cycles. Every ramp gives exactly one
//! state change:
//! * from readings (reference temperature and switch state, in time order): the change is
//!   placed at the midpoint of the last reading before it and the first reading after it, and
//!   half the step between those two readings is the half-width of the state-detection
//!   resolution of that change (the true change lies anywhere between the two readings);
//! * observed directly (the technician notes the reference temperature when the contact
//!   changes): the half-width is half the stated [`SwitchTest::observed_resolution_c`].
//!
//! The ramps in the actuating direction ([`Actuation::direction`]) give the **switch point**
//! (the mean of their changes), the ramps in the other direction the **reset point**; the
//! **differential** (hysteresis) is |switch point − reset point|. One cycle is one actuating
//! ramp (usually followed by a reset ramp); the number of cycles is the number of actuating
//! ramps.
//!
//! # Measurement model
//! t_sw = t̄_obs + δ_ref + δ_medium + δ_lag + δ_det + δ_custom, every correction with
//! expectation 0 and sensitivity +1 (°C/°C). t̄_obs is the mean observed change temperature;
//! its scatter is the Type A row. The reset point has the same model.
//!
//! | row | distribution | half-width or u |
//! |---|---|---|
//! | budget items ([`BudgetItem`]: reference calibration, drift, °C readout, medium uniformity and stability, custom) | as entered | as entered |
//! | thermal lag of the switch ([`THERMAL_LAG_ROW`]) | rectangular | a = r·τ (r in °C/s) or the entered half-width |
//! | state detection ([`STATE_DETECTION_ROW`]) | rectangular | the largest half-width among the changes of that direction |
//! | repeatability ([`REPEATABILITY_ROW`]) | Type A | s/√n, ν = n − 1 (or a pooled s_p/√n, ν = ν_p) |
//!
//! **Thermal lag.** On a linear ramp of rate r a first-order sensor with time constant τ
//! (relative to the reference) lags by r·τ: rising ramps read high, falling ramps low. The lag
//! is not corrected (τ is rarely known well); its whole value r·τ is taken as the half-width of
//! a rectangular distribution centred on zero (common practice; a laboratory that wants a
//! smaller term ramps slower).
//!
//! **State detection.** One rectangular row per point, with the largest half-width of the
//! changes averaged, not divided by √n: the sampling scheme is the same on every ramp, so its
//! error is treated as systematic, and its random part already shows in the Type A scatter
//! (own choice, conservative).
//!
//! **One cycle.** With a single change in a direction no experimental standard deviation
//! exists. The point is still evaluated: the repeatability row is shown with u = 0 and the
//! label "not evaluated", and a [`SwitchWarningKind::RepeatabilityNotEvaluated`] warning says
//! that U does not cover repeatability, unless a pooled standard deviation from earlier tests
//! of the same kind of switch is given ([`PooledRepeatability`], JCGM 100:2008 4.2.4).
//!
//! **Differential and correlation.** d = |t_sw − t_rs|. Switch and reset points are measured
//! in one session with the same reference in the same position of the same medium, a few
//! kelvin apart, so the reference calibration, reference drift, reference readout accuracy and
//! medium uniformity errors are the same in both and cancel in the difference (correlation
//! r = +1; the change of the reference's error over the differential is neglected). The lag
//! has opposite signs on rising and falling ramps, so it adds: one rectangular row of
//! half-width 2·r·τ (r = −1). Everything else is taken as independent and enters twice (once
//! per point): medium stability, readout resolution, state detection, custom items (their
//! nature is unknown, so independence is the conservative choice) and repeatability (Type A of
//! each direction; a pooled s_p gives one row s_p·√(1/n_sw + 1/n_rs) with ν = ν_p).
//!
//! **Direction of a ramp.** A rising ramp must end higher than it starts, and no reading may
//! lie more than [`SwitchTest::noise_allowance_c`] below the highest earlier reading (for a
//! falling ramp: end lower, no reading more than the allowance above the lowest earlier one).
//! The default allowance is [`DEFAULT_NOISE_ALLOWANCE_C`].
//!
//! **Reaching the nominal switch point.** A ramp without a state change is refused; when it
//! also never reached the nominal switch point (a rising ramp whose highest reading stays below
//! it, a falling ramp whose lowest reading stays above it) the error says so, since that
//! explains the missing change. A ramp that shows its change before the nominal switch point
//! is a valid observation of a switch that actuates early and is not refused: refusing it would
//! hide exactly the switches that fail.
//!
//! # Reference
//! JCGM 100:2008 4.2 (Type A, s(q̄) = s/√n), 4.2.4 (pooled standard deviation), 4.3.7
//! (rectangular), 5.1.2 (combination), 5.2.2 (correlated inputs, r = ±1), G.4.1 (ν_eff), 6.2-6.3
//! (U = k u_c); first-order lag r·τ on a linear ramp: common practice (step and ramp response of a
//! first-order system); ILAC-G8:09/2019 4.2 (decision rules).

use std::fmt;

use crate::metrology::stats::{
    BudgetOptions, BudgetResult, Component, DecisionRule, Distribution, Dof, P_K2, Tolerance,
    decide, evaluate_budget,
};

use super::budget::{BudgetItem, ItemKind, Spread};
use super::conformity::ConformityResult;
use super::error::{CalibError, Location, finite, non_negative};
use super::run::REPEATABILITY_ROW;

/// Default largest turn-back of a ramp against its direction, °C, accepted as noise
/// (common practice; own choice: well above the noise of a stirred bath or a block read to
/// 0.01 °C, well below a real reversal of the ramp).
pub const DEFAULT_NOISE_ALLOWANCE_C: f64 = 0.1;
/// Label of the thermal-lag row of a switch budget.
pub const THERMAL_LAG_ROW: &str = "thermal lag of the switch";
/// Label of the state-detection row of a switch budget.
pub const STATE_DETECTION_ROW: &str = "state detection";
/// Label of the repeatability row when it could not be evaluated (one change, no pooled s).
pub const REPEATABILITY_NOT_EVALUATED_ROW: &str = "repeatability (not evaluated: one change)";
/// Label of the pooled repeatability row.
pub const POOLED_REPEATABILITY_ROW: &str = "repeatability (pooled standard deviation)";

/// Direction of a temperature ramp.
///
/// # Reference
/// Rising and falling ramps through the switching region: common practice.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Direction {
    /// Temperature increasing with time.
    Rising,
    /// Temperature decreasing with time.
    Falling,
}

impl Direction {
    /// "rising" or "falling".
    ///
    /// # Reference
    /// Wording: common practice.
    pub fn label(self) -> &'static str {
        match self {
            Direction::Rising => "rising",
            Direction::Falling => "falling",
        }
    }

    /// The other direction.
    ///
    /// # Reference
    /// Wording: common practice.
    pub fn opposite(self) -> Direction {
        match self {
            Direction::Rising => Direction::Falling,
            Direction::Falling => Direction::Rising,
        }
    }
}

impl fmt::Display for Direction {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.label())
    }
}

/// State of the switch contact.
///
/// # Reference
/// Wording: common practice.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SwitchState {
    /// Contact open (no continuity).
    Open,
    /// Contact closed (continuity).
    Closed,
}

impl SwitchState {
    /// "open" or "closed".
    ///
    /// # Reference
    /// Wording: common practice.
    pub fn label(self) -> &'static str {
        match self {
            SwitchState::Open => "open",
            SwitchState::Closed => "closed",
        }
    }

    fn other(self) -> SwitchState {
        match self {
            SwitchState::Open => SwitchState::Closed,
            SwitchState::Closed => SwitchState::Open,
        }
    }
}

/// What the contact does when the switch actuates.
///
/// # Reference
/// Wording: common practice.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum ContactAction {
    /// The contact opens at the switch point (and closes again at the reset point).
    Opens,
    /// The contact closes at the switch point (and opens again at the reset point).
    Closes,
}

impl ContactAction {
    /// State of the contact after actuation.
    fn actuated_state(self) -> SwitchState {
        match self {
            ContactAction::Opens => SwitchState::Open,
            ContactAction::Closes => SwitchState::Closed,
        }
    }

    fn verb(self) -> &'static str {
        match self {
            ContactAction::Opens => "open",
            ContactAction::Closes => "close",
        }
    }
}

/// How the switch actuates: e.g. a thermostat that opens on rising temperature
/// (`Rising`, `Opens`) or a low-temperature alarm that closes on falling temperature
/// (`Falling`, `Closes`).
///
/// # Reference
/// Wording: common practice.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Actuation {
    /// Direction of the ramp on which the switch actuates.
    pub direction: Direction,
    /// What the contact does at actuation.
    pub action: ContactAction,
}

/// One reading of a ramp: reference temperature and switch state at the same instant.
///
/// # Reference
/// Comparison with a reference probe in the same medium: common practice.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct StateReading {
    /// Reference temperature, °C (ITS-90, already converted from the reference signal).
    pub t_ref_c: f64,
    /// State of the contact.
    pub state: SwitchState,
}

impl StateReading {
    /// A reading at `t_ref_c` (°C) with the contact in `state`.
    pub fn new(t_ref_c: f64, state: SwitchState) -> Self {
        StateReading { t_ref_c, state }
    }
}

/// What was recorded on one ramp.
///
/// # Reference
/// Recording forms: common practice.
#[derive(Debug, Clone, PartialEq)]
pub enum RampData {
    /// Readings in time order (at least 2).
    Readings(Vec<StateReading>),
    /// Reference temperatures (°C) noted at each observed state change, in time order; a
    /// sound ramp has exactly one.
    ObservedChanges(Vec<f64>),
}

/// One ramp through the switching region.
///
/// # Reference
/// Common practice.
#[derive(Debug, Clone, PartialEq)]
pub struct Ramp {
    /// Stated direction of the ramp.
    pub direction: Direction,
    /// Readings or observed changes.
    pub data: RampData,
}

impl Ramp {
    /// A ramp recorded as readings in time order.
    pub fn readings(direction: Direction, readings: Vec<StateReading>) -> Self {
        Ramp {
            direction,
            data: RampData::Readings(readings),
        }
    }

    /// A ramp with one directly observed change at `t_change_c` (°C).
    pub fn observed(direction: Direction, t_change_c: f64) -> Self {
        Ramp {
            direction,
            data: RampData::ObservedChanges(vec![t_change_c]),
        }
    }
}

/// Lag of the switch behind the reference probe during a ramp.
///
/// # Reference
/// Lag r·τ of a first-order sensor on a linear ramp: common practice.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ThermalLag {
    /// From the ramp rate and the time constant of the switch relative to the reference:
    /// half-width a = (ramp_rate_c_per_min / 60) · time_constant_s.
    TimeConstant {
        /// Ramp rate through the switching region (magnitude), °C/min.
        ramp_rate_c_per_min: f64,
        /// Time constant of the switch relative to the reference probe, s.
        time_constant_s: f64,
    },
    /// A half-width entered by the laboratory, °C.
    HalfWidth {
        /// Half-width, °C.
        half_width_c: f64,
    },
}

/// Tolerance on the switch point, relative to the nominal switch point.
///
/// # Reference
/// ILAC-G8:09/2019 3 (specification limits).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum SwitchTolerance {
    /// nominal ± half_width_c.
    Symmetric {
        /// Half-width, °C, > 0.
        half_width_c: f64,
    },
    /// nominal + lower_c ≤ switch point ≤ nominal + upper_c (e.g. −3 °C and +1 °C).
    Asymmetric {
        /// Lower limit relative to nominal, °C.
        lower_c: f64,
        /// Upper limit relative to nominal, °C (> lower_c).
        upper_c: f64,
    },
}

/// Tolerance and decision rule for the switch point.
///
/// # Reference
/// ILAC-G8:09/2019 4.2; ISO/IEC 17025:2017 7.8.6.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct SwitchConformitySpec {
    /// Tolerance on the switch point.
    pub tolerance: SwitchTolerance,
    /// Decision rule.
    pub rule: DecisionRule,
}

/// A pooled experimental standard deviation of single change temperatures from earlier tests
/// of the same kind of switch under the same procedure.
///
/// # Reference
/// JCGM 100:2008 4.2.4 (pooled estimate s_p with its degrees of freedom).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct PooledRepeatability {
    /// s_p of a single change temperature, °C.
    pub std_dev_c: f64,
    /// Degrees of freedom of s_p (> 0).
    pub dof: f64,
}

/// A switch test: everything the evaluation needs, no I/O.
///
/// # Reference
/// JCGM 100:2008; ILAC-G8:09/2019.
#[derive(Debug, Clone, PartialEq)]
pub struct SwitchTest {
    /// Nominal switch point, °C.
    pub nominal_c: f64,
    /// Direction and contact action at the switch point.
    pub actuation: Actuation,
    /// Ramps in the order they were run.
    pub ramps: Vec<Ramp>,
    /// Lag of the switch behind the reference.
    pub lag: ThermalLag,
    /// Resolution (step, °C) with which a directly observed change is located; a = step/2.
    /// Used for [`RampData::ObservedChanges`] only.
    pub observed_resolution_c: f64,
    /// Largest turn-back of a ramp against its direction accepted as noise, °C.
    pub noise_allowance_c: f64,
    /// Budget items in °C: reference calibration, reference drift, reference readout (its
    /// signal unit must be °C), medium uniformity and stability, custom. Applied to both the
    /// switch and the reset point.
    pub budget_items: Vec<BudgetItem>,
    /// Pooled repeatability from earlier tests; when given it replaces the observed s in the
    /// budgets (JCGM 100:2008 4.2.4).
    pub pooled_repeatability: Option<PooledRepeatability>,
    /// Coverage probability of U (default [`P_K2`]).
    pub coverage_probability: f64,
    /// Conformity statement on the switch point, if asked for.
    pub conformity: Option<SwitchConformitySpec>,
}

impl SwitchTest {
    /// A test with no lag, no observed-change resolution (set
    /// [`SwitchTest::observed_resolution_c`] when changes are observed directly), the default
    /// noise allowance, no budget items, no pooled repeatability, coverage probability [`P_K2`]
    /// and no conformity statement.
    pub fn new(nominal_c: f64, actuation: Actuation, ramps: Vec<Ramp>) -> Self {
        SwitchTest {
            nominal_c,
            actuation,
            ramps,
            lag: ThermalLag::HalfWidth { half_width_c: 0.0 },
            observed_resolution_c: 0.0,
            noise_allowance_c: DEFAULT_NOISE_ALLOWANCE_C,
            budget_items: Vec::new(),
            pooled_repeatability: None,
            coverage_probability: P_K2,
            conformity: None,
        }
    }
}

/// One located state change.
///
/// # Reference
/// Midpoint of the bracketing readings, half-width half their step: JCGM 100:2008 4.3.7 and
/// F.2.2.1 (a quantity known only to lie between two values; clause from memory).
#[derive(Debug, Clone, PartialEq)]
pub struct StateChange {
    /// Index of the ramp in [`SwitchTest::ramps`] (0-based).
    pub ramp: usize,
    /// Direction of that ramp.
    pub direction: Direction,
    /// Whether the ramp is in the actuating direction (switch point) or not (reset point).
    pub actuating: bool,
    /// Temperature of the change, °C.
    pub t_c: f64,
    /// Last reading before and first reading after the change, °C (readings only).
    pub bracket_c: Option<(f64, f64)>,
    /// State after the change (readings only).
    pub new_state: Option<SwitchState>,
    /// Half-width of the state-detection resolution of this change, °C.
    pub detection_half_width_c: f64,
}

/// Where the repeatability row of a point budget comes from.
///
/// # Reference
/// JCGM 100:2008 4.2.3, 4.2.4.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RepeatabilitySource {
    /// Observed: s/√n with ν = n − 1.
    Observed,
    /// Pooled from earlier tests: s_p/√n with ν = ν_p.
    Pooled,
    /// One change and no pooled s: not evaluated (u = 0 in the budget, with a warning).
    NotEvaluated,
}

/// Switch point or reset point.
///
/// # Reference
/// JCGM 100:2008 4.2.1 (mean), 4.2.2 (s), 4.2.3 (s/√n), 5.1.2, G.4.1, 6.2-6.3.
#[derive(Debug, Clone, PartialEq)]
pub struct SwitchPointResult {
    /// Direction of the ramps averaged.
    pub direction: Direction,
    /// Number of changes averaged.
    pub n: usize,
    /// Mean change temperature, °C.
    pub mean_c: f64,
    /// Experimental standard deviation of the changes, °C (n ≥ 2).
    pub std_dev_c: Option<f64>,
    /// Experimental standard deviation of the mean s/√n, °C (n ≥ 2).
    pub std_dev_of_mean_c: Option<f64>,
    /// Source of the repeatability row.
    pub repeatability: RepeatabilitySource,
    /// Half-width of the state-detection row (largest of the changes), °C.
    pub detection_half_width_c: f64,
    /// GUM budget of the point: u_c, ν_eff, k, U (°C).
    pub budget: BudgetResult,
}

/// Differential (hysteresis) |switch point − reset point|.
///
/// # Reference
/// JCGM 100:2008 5.2.2 (r = ±1 terms cancel or add), G.4.1.
#[derive(Debug, Clone, PartialEq)]
pub struct DifferentialResult {
    /// |t_sw − t_rs|, °C.
    pub value_c: f64,
    /// GUM budget of the differential (°C), see the module docs for the correlations.
    pub budget: BudgetResult,
}

/// What a switch warning is about.
///
/// # Reference
/// ISO/IEC 17025:2017 7.8 (information needed to interpret results).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum SwitchWarningKind {
    /// One change in a direction and no pooled s: U does not cover repeatability.
    RepeatabilityNotEvaluated,
    /// No ramp in the reset direction: no reset point and no differential.
    NoResetRamps,
}

/// A warning about a switch test.
///
/// # Reference
/// ISO/IEC 17025:2017 7.8.
#[derive(Debug, Clone, PartialEq)]
pub struct SwitchWarning {
    /// What kind.
    pub kind: SwitchWarningKind,
    /// The sentence.
    pub message: String,
}

/// Results of a switch test.
///
/// # Reference
/// JCGM 100:2008; ILAC-G8:09/2019.
#[derive(Debug, Clone, PartialEq)]
pub struct SwitchResult {
    /// One change per ramp, in ramp order.
    pub changes: Vec<StateChange>,
    /// Switch point (actuating direction).
    pub switch_point: SwitchPointResult,
    /// Reset point (other direction), when such ramps were run.
    pub reset_point: Option<SwitchPointResult>,
    /// Differential, when the reset point exists.
    pub differential: Option<DifferentialResult>,
    /// Half-width of the thermal-lag row, °C.
    pub lag_half_width_c: f64,
    /// Conformity of the switch point, when a specification was given.
    pub conformity: Option<ConformityResult>,
    /// Warnings.
    pub warnings: Vec<SwitchWarning>,
}

/// Temperature for messages: at most 4 decimals, trailing zeros dropped ("61.2", "-20").
pub(crate) fn fmt_c(v: f64) -> String {
    if !v.is_finite() {
        return format!("{v}");
    }
    let s = format!("{v:.4}");
    let s = if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    };
    if s == "-0" { "0".to_string() } else { s }
}

/// "a", "a and b", "a, b and c".
fn join_and(items: &[String]) -> String {
    match items {
        [] => String::new(),
        [one] => one.clone(),
        [init @ .., last] => format!("{} and {last}", init.join(", ")),
    }
}

/// Mean and experimental standard deviation (two-pass; s only for n ≥ 2).
fn mean_and_std_dev(values: &[f64]) -> (f64, Option<f64>) {
    let n = values.len() as f64;
    let mean = values.iter().sum::<f64>() / n;
    if values.len() < 2 {
        return (mean, None);
    }
    let ss: f64 = values.iter().map(|v| (v - mean) * (v - mean)).sum();
    (mean, Some((ss / (n - 1.0)).sqrt()))
}

fn ramp_location(index: usize, direction: Direction) -> Location {
    Location::run().field(format!("ramp {} ({direction})", index + 1))
}

fn ramp_field(index: usize, direction: Direction, what: impl fmt::Display) -> Location {
    Location::run().field(format!("ramp {} ({direction}), {what}", index + 1))
}

/// Checks the direction rule of the module docs on the reference temperatures of one ramp.
fn check_direction(
    temps: &[f64],
    index: usize,
    direction: Direction,
    allowance_c: f64,
) -> Result<(), CalibError> {
    let at = ramp_location(index, direction);
    let (first, last) = match (temps.first(), temps.last()) {
        (Some(f), Some(l)) => (*f, *l),
        _ => return Ok(()),
    };
    let net_ok = match direction {
        Direction::Rising => last > first,
        Direction::Falling => last < first,
    };
    if !net_ok {
        return Err(CalibError::invalid(
            &at,
            format!(
                "the temperatures go the wrong way for a {direction} ramp: from {} °C at the \
                 first reading to {} °C at the last",
                fmt_c(first),
                fmt_c(last)
            ),
        ));
    }
    let mut extreme = first;
    for (r, &t) in temps.iter().enumerate().skip(1) {
        let back = match direction {
            Direction::Rising => extreme - t,
            Direction::Falling => t - extreme,
        };
        if back > allowance_c {
            let (side, which) = match direction {
                Direction::Rising => ("below", "highest"),
                Direction::Falling => ("above", "lowest"),
            };
            return Err(CalibError::invalid(
                &at,
                format!(
                    "reading {} ({} °C) lies {} °C {side} the {which} earlier reading ({} °C); \
                     a {direction} ramp may turn back by at most {} °C (noise allowance)",
                    r + 1,
                    fmt_c(t),
                    fmt_c(back),
                    fmt_c(extreme),
                    fmt_c(allowance_c)
                ),
            ));
        }
        extreme = match direction {
            Direction::Rising => extreme.max(t),
            Direction::Falling => extreme.min(t),
        };
    }
    Ok(())
}

/// Locates the single state change of ramp `index`.
fn locate_change(test: &SwitchTest, index: usize, ramp: &Ramp) -> Result<StateChange, CalibError> {
    let direction = ramp.direction;
    let at = ramp_location(index, direction);
    let actuating = direction == test.actuation.direction;
    match &ramp.data {
        RampData::ObservedChanges(changes) => {
            for (c, &t) in changes.iter().enumerate() {
                finite(
                    &ramp_field(index, direction, format!("observed change {}", c + 1)),
                    t,
                )?;
            }
            match changes.as_slice() {
                [] => Err(CalibError::invalid(
                    &at,
                    "no state change was recorded; a ramp must show exactly one",
                )),
                [t] => Ok(StateChange {
                    ramp: index,
                    direction,
                    actuating,
                    t_c: *t,
                    bracket_c: None,
                    new_state: None,
                    detection_half_width_c: test.observed_resolution_c / 2.0,
                }),
                many => Err(bounce_error(&at, many)),
            }
        }
        RampData::Readings(readings) => {
            if readings.len() < 2 {
                return Err(CalibError::invalid(
                    &at,
                    format!(
                        "{} reading(s); at least 2 are needed to locate a state change",
                        readings.len()
                    ),
                ));
            }
            let mut temps = Vec::with_capacity(readings.len());
            for (r, reading) in readings.iter().enumerate() {
                temps.push(finite(
                    &ramp_field(
                        index,
                        direction,
                        format!("reading {}, reference temperature", r + 1),
                    ),
                    reading.t_ref_c,
                )?);
            }
            check_direction(&temps, index, direction, test.noise_allowance_c)?;
            let changes: Vec<usize> = (1..readings.len())
                .filter(|&r| readings[r].state != readings[r - 1].state)
                .collect();
            let lo = temps.iter().copied().fold(f64::INFINITY, f64::min);
            let hi = temps.iter().copied().fold(f64::NEG_INFINITY, f64::max);
            match changes.as_slice() {
                [] => {
                    let stayed = readings[0].state.label();
                    let short = match direction {
                        Direction::Rising if hi < test.nominal_c => {
                            Some(format!("its highest reading is {} °C", fmt_c(hi)))
                        }
                        Direction::Falling if lo > test.nominal_c => {
                            Some(format!("its lowest reading is {} °C", fmt_c(lo)))
                        }
                        _ => None,
                    };
                    Err(CalibError::invalid(
                        &at,
                        match short {
                            Some(extreme) => format!(
                                "the ramp never reaches the nominal switch point {} °C: \
                                 {extreme}, and the switch stayed {stayed}",
                                fmt_c(test.nominal_c)
                            ),
                            None => format!(
                                "the switch never changed state between {} °C and {} °C \
                                 (it stayed {stayed})",
                                fmt_c(lo),
                                fmt_c(hi)
                            ),
                        },
                    ))
                }
                [r] => {
                    let r = *r;
                    let before = temps[r - 1];
                    let after = temps[r];
                    let t = 0.5 * (before + after);
                    let new_state = readings[r].state;
                    let actuated = test.actuation.action.actuated_state();
                    let expected = if actuating {
                        actuated
                    } else {
                        actuated.other()
                    };
                    if new_state != expected {
                        let verb = match new_state {
                            SwitchState::Open => "opened",
                            SwitchState::Closed => "closed",
                        };
                        let spec = test.actuation.action.verb();
                        let rule = if actuating {
                            format!(
                                "it is specified to {spec} on {} temperature",
                                test.actuation.direction
                            )
                        } else {
                            format!(
                                "it is specified to {spec} on {} temperature, so on a \
                                 {direction} ramp it should reset ({})",
                                test.actuation.direction,
                                expected.label()
                            )
                        };
                        return Err(CalibError::invalid(
                            &at,
                            format!("the switch {verb} at {} °C; {rule}", fmt_c(t)),
                        ));
                    }
                    Ok(StateChange {
                        ramp: index,
                        direction,
                        actuating,
                        t_c: t,
                        bracket_c: Some((before, after)),
                        new_state: Some(new_state),
                        detection_half_width_c: 0.5 * (after - before).abs(),
                    })
                }
                many => {
                    let temps_at: Vec<f64> = many
                        .iter()
                        .map(|&r| 0.5 * (temps[r - 1] + temps[r]))
                        .collect();
                    Err(bounce_error(&at, &temps_at))
                }
            }
        }
    }
}

fn bounce_error(at: &Location, temps: &[f64]) -> CalibError {
    let list: Vec<String> = temps.iter().map(|t| format!("{} °C", fmt_c(*t))).collect();
    CalibError::invalid(
        at,
        format!(
            "the contacts bounced: {} state changes at {}; a ramp must show exactly one \
             (repeat the ramp or check the contacts)",
            temps.len(),
            join_and(&list)
        ),
    )
}

/// One GUM component from a budget item, with whether it cancels in the differential.
struct ItemComponent {
    component: Component,
    common: bool,
}

fn spread_checked(at: &Location, spread: Spread) -> Result<Spread, CalibError> {
    if let Spread::Normal { k } = spread {
        let k = finite(&at.clone().field("coverage factor"), k)?;
        if k <= 0.0 {
            return Err(CalibError::invalid(
                at,
                format!("coverage factor must be positive; got {k}"),
            ));
        }
    }
    Ok(spread)
}

/// Maps the test's budget items to components of a switch or reset point at `t_c` (°C):
/// sensitivity +1, estimate 0.
fn item_components(items: &[BudgetItem], t_c: f64) -> Result<Vec<ItemComponent>, CalibError> {
    let mut out = Vec::with_capacity(items.len() + 1);
    for item in items {
        let here = Location::run().field(format!("budget item {}", item.name));
        let one = |name: String, dist: Distribution, common: bool| ItemComponent {
            component: Component::new(name, 0.0, dist).with_dof(item.dof),
            common,
        };
        match item.kind {
            ItemKind::ReferenceCalibration { expanded_c, k } => {
                let u = non_negative(&here, expanded_c)?;
                spread_checked(&here, Spread::Normal { k })?;
                out.push(one(
                    item.name.clone(),
                    Distribution::NormalExpanded { expanded: u, k },
                    true,
                ));
            }
            ItemKind::ReferenceDrift { half_width_c } => {
                let a = non_negative(&here, half_width_c)?;
                out.push(one(
                    item.name.clone(),
                    Distribution::Rectangular { half_width: a },
                    true,
                ));
            }
            ItemKind::MediumUniformity { half_width_c } => {
                let a = non_negative(&here, half_width_c)?;
                out.push(one(
                    item.name.clone(),
                    Distribution::Rectangular { half_width: a },
                    true,
                ));
            }
            ItemKind::MediumStability { half_width_c } => {
                let a = non_negative(&here, half_width_c)?;
                out.push(one(
                    item.name.clone(),
                    Distribution::Rectangular { half_width: a },
                    false,
                ));
            }
            ItemKind::ReferenceReadout(spec) => {
                let offset = non_negative(&here.clone().field("offset"), spec.offset_signal_unit)?;
                let relative = non_negative(&here.clone().field("relative"), spec.relative)?;
                let step = non_negative(
                    &here.clone().field("resolution"),
                    spec.resolution_signal_unit,
                )?;
                let spread = spread_checked(&here, spec.spread)?;
                out.push(one(
                    format!("{}: accuracy", item.name),
                    spread.distribution(offset + relative * t_c.abs()),
                    true,
                ));
                out.push(one(
                    format!("{}: resolution", item.name),
                    Distribution::Rectangular {
                        half_width: step / 2.0,
                    },
                    false,
                ));
            }
            ItemKind::Custom { spread, value_c } => {
                let v = non_negative(&here, value_c)?;
                let spread = spread_checked(&here, spread)?;
                out.push(one(item.name.clone(), spread.distribution(v), false));
            }
            ItemKind::UutReadout(_) | ItemKind::UutResolution { .. } => {
                return Err(CalibError::invalid(
                    &here,
                    "a switch has no readout of its own; the resolution with which its state \
                     change is located is the state-detection row (from the ramp readings or \
                     the observed-change resolution)",
                ));
            }
            ItemKind::ReferenceJunction { .. } => {
                return Err(CalibError::invalid(
                    &here,
                    "the reference temperatures of a switch test are already converted to °C; \
                     a reference-junction error belongs to the reference readout or a custom \
                     item",
                ));
            }
        }
    }
    Ok(out)
}

/// Half-width of the thermal-lag row, °C.
fn lag_half_width(lag: &ThermalLag) -> Result<f64, CalibError> {
    let at = Location::run().field("thermal lag");
    match *lag {
        ThermalLag::TimeConstant {
            ramp_rate_c_per_min,
            time_constant_s,
        } => {
            let r = non_negative(&at.clone().field("ramp rate"), ramp_rate_c_per_min)?;
            let tau = non_negative(&at.clone().field("time constant"), time_constant_s)?;
            Ok(r / 60.0 * tau)
        }
        ThermalLag::HalfWidth { half_width_c } => {
            non_negative(&at.clone().field("half-width"), half_width_c)
        }
    }
}

fn validate(test: &SwitchTest) -> Result<(), CalibError> {
    let at = Location::run();
    finite(&at.clone().field("nominal switch point"), test.nominal_c)?;
    non_negative(
        &at.clone().field("observed-change resolution"),
        test.observed_resolution_c,
    )?;
    non_negative(&at.clone().field("noise allowance"), test.noise_allowance_c)?;
    finite(
        &at.clone().field("coverage probability"),
        test.coverage_probability,
    )?;
    if let Some(p) = &test.pooled_repeatability {
        let here = at.clone().field("pooled repeatability");
        non_negative(&here.clone().field("standard deviation"), p.std_dev_c)?;
        let nu = finite(&here.clone().field("degrees of freedom"), p.dof)?;
        if nu <= 0.0 {
            return Err(CalibError::invalid(
                &here,
                format!("the degrees of freedom must be positive; got {nu}"),
            ));
        }
    }
    if let Some(spec) = &test.conformity {
        let here = at.clone().field("switch-point tolerance");
        match spec.tolerance {
            SwitchTolerance::Symmetric { half_width_c } => {
                let t = finite(&here.clone().field("half-width"), half_width_c)?;
                if t <= 0.0 {
                    return Err(CalibError::invalid(
                        &here,
                        format!("the half-width must be positive; got {} °C", fmt_c(t)),
                    ));
                }
            }
            SwitchTolerance::Asymmetric { lower_c, upper_c } => {
                let lo = finite(&here.clone().field("lower limit"), lower_c)?;
                let hi = finite(&here.clone().field("upper limit"), upper_c)?;
                if lo >= hi {
                    return Err(CalibError::invalid(
                        &here,
                        format!(
                            "the lower limit must be below the upper; got {} °C and {} °C",
                            fmt_c(lo),
                            fmt_c(hi)
                        ),
                    ));
                }
            }
        }
    }
    if test.ramps.is_empty() {
        return Err(CalibError::invalid(
            &at.field("ramps"),
            "the test has no ramps; at least one ramp in the actuating direction is needed",
        ));
    }
    Ok(())
}

/// Repeatability row of one point and its source.
fn repeatability_row(
    mean: f64,
    s: Option<f64>,
    n: usize,
    pooled: Option<&PooledRepeatability>,
) -> Result<(Component, RepeatabilitySource), CalibError> {
    let nf = n as f64;
    if let Some(p) = pooled {
        return Ok((
            Component::new(
                POOLED_REPEATABILITY_ROW,
                mean,
                Distribution::Standard {
                    u: p.std_dev_c / nf.sqrt(),
                },
            )
            .with_dof(Dof::Value(p.dof)),
            RepeatabilitySource::Pooled,
        ));
    }
    match s {
        Some(s) => {
            let n_u32 = u32::try_from(n).map_err(|_| {
                CalibError::invalid(
                    &Location::run().field("ramps"),
                    format!("{n} ramps are more than can be evaluated"),
                )
            })?;
            Ok((
                Component::new(
                    REPEATABILITY_ROW,
                    mean,
                    Distribution::TypeA {
                        std_dev_of_mean: s / nf.sqrt(),
                        n: n_u32,
                    },
                ),
                RepeatabilitySource::Observed,
            ))
        }
        None => Ok((
            Component::new(
                REPEATABILITY_NOT_EVALUATED_ROW,
                mean,
                Distribution::Standard { u: 0.0 },
            )
            .with_dof(Dof::Infinite),
            RepeatabilitySource::NotEvaluated,
        )),
    }
}

fn budget_options(test: &SwitchTest) -> BudgetOptions {
    BudgetOptions {
        coverage_probability: test.coverage_probability,
        ..BudgetOptions::default()
    }
}

/// Intermediate statistics of one direction.
struct PointStats {
    direction: Direction,
    n: usize,
    mean: f64,
    s: Option<f64>,
    detection: f64,
}

fn point_stats(changes: &[StateChange], direction: Direction) -> Option<PointStats> {
    let temps: Vec<f64> = changes
        .iter()
        .filter(|c| c.direction == direction)
        .map(|c| c.t_c)
        .collect();
    if temps.is_empty() {
        return None;
    }
    let detection = changes
        .iter()
        .filter(|c| c.direction == direction)
        .map(|c| c.detection_half_width_c)
        .fold(0.0, f64::max);
    let (mean, s) = mean_and_std_dev(&temps);
    Some(PointStats {
        direction,
        n: temps.len(),
        mean,
        s,
        detection,
    })
}

fn evaluate_point(
    test: &SwitchTest,
    stats: &PointStats,
    lag_c: f64,
    what: &'static str,
) -> Result<SwitchPointResult, CalibError> {
    let at = Location::run().field(what);
    let mut components: Vec<Component> = item_components(&test.budget_items, stats.mean)?
        .into_iter()
        .map(|c| c.component)
        .collect();
    components.push(Component::new(
        THERMAL_LAG_ROW,
        0.0,
        Distribution::Rectangular { half_width: lag_c },
    ));
    components.push(Component::new(
        STATE_DETECTION_ROW,
        0.0,
        Distribution::Rectangular {
            half_width: stats.detection,
        },
    ));
    let (row, source) = repeatability_row(
        stats.mean,
        stats.s,
        stats.n,
        test.pooled_repeatability.as_ref(),
    )?;
    components.push(row);
    let budget = evaluate_budget(&components, &[], &budget_options(test))
        .map_err(|e| CalibError::stats(&at, "uncertainty budget", e))?;
    Ok(SwitchPointResult {
        direction: stats.direction,
        n: stats.n,
        mean_c: stats.mean,
        std_dev_c: stats.s,
        std_dev_of_mean_c: stats.s.map(|s| s / (stats.n as f64).sqrt()),
        repeatability: source,
        detection_half_width_c: stats.detection,
        budget,
    })
}

fn evaluate_differential(
    test: &SwitchTest,
    sw: &PointStats,
    rs: &PointStats,
    lag_c: f64,
) -> Result<DifferentialResult, CalibError> {
    let at = Location::run().field("differential");
    let sign = if sw.mean >= rs.mean { 1.0 } else { -1.0 };
    let value = (sw.mean - rs.mean).abs();
    let mut components = Vec::new();
    for (stats, c, label) in [(sw, sign, "switch point"), (rs, -sign, "reset point")] {
        for item in item_components(&test.budget_items, stats.mean)? {
            if !item.common {
                let mut comp = item.component;
                comp.name = format!("{} ({label})", comp.name);
                components.push(comp.with_sensitivity(c));
            }
        }
        components.push(
            Component::new(
                format!("{STATE_DETECTION_ROW} ({label})"),
                0.0,
                Distribution::Rectangular {
                    half_width: stats.detection,
                },
            )
            .with_sensitivity(c),
        );
    }
    components.push(Component::new(
        format!("{THERMAL_LAG_ROW} (both directions)"),
        0.0,
        Distribution::Rectangular {
            half_width: 2.0 * lag_c,
        },
    ));
    match &test.pooled_repeatability {
        Some(p) => {
            let u = p.std_dev_c * (1.0 / sw.n as f64 + 1.0 / rs.n as f64).sqrt();
            components.push(
                Component::new(
                    POOLED_REPEATABILITY_ROW,
                    value,
                    Distribution::Standard { u },
                )
                .with_dof(Dof::Value(p.dof)),
            );
        }
        None => {
            for (stats, c, label) in [(sw, sign, "switch point"), (rs, -sign, "reset point")] {
                let (mut row, _) = repeatability_row(stats.mean, stats.s, stats.n, None)?;
                row.name = format!("{} ({label})", row.name);
                components.push(row.with_sensitivity(c));
            }
        }
    }
    let budget = evaluate_budget(&components, &[], &budget_options(test))
        .map_err(|e| CalibError::stats(&at, "uncertainty budget", e))?;
    Ok(DifferentialResult {
        value_c: value,
        budget,
    })
}

/// Conformity of a switch point `switch_point_c` (°C) with expanded uncertainty `expanded_c`
/// (°C) against `nominal_c` (°C) and `spec`. Public so that a caller that reports a rounded
/// U can decide again with the reported value.
///
/// The returned [`ConformityResult::tolerance`] holds absolute limits in °C of the switch
/// point (not limits on a deviation).
///
/// # Reference
/// ILAC-G8:09/2019 4.2.1-4.2.3; JCGM 106:2012.
pub fn switch_point_conformity(
    nominal_c: f64,
    spec: &SwitchConformitySpec,
    switch_point_c: f64,
    expanded_c: f64,
) -> Result<ConformityResult, CalibError> {
    let at = Location::run().field("switch-point conformity");
    let tolerance = match spec.tolerance {
        SwitchTolerance::Symmetric { half_width_c } => Tolerance::Symmetric {
            nominal: nominal_c,
            half_width: half_width_c,
        },
        SwitchTolerance::Asymmetric { lower_c, upper_c } => Tolerance::Interval {
            lower: nominal_c + lower_c,
            upper: nominal_c + upper_c,
        },
    };
    let decision = decide(switch_point_c, expanded_c, &tolerance, spec.rule)
        .map_err(|e| CalibError::stats(&at, "conformity decision", e))?;
    Ok(ConformityResult {
        tolerance,
        decision,
    })
}

/// Evaluates a switch test: one state change per ramp, switch point, reset point and
/// differential with their GUM budgets, and the conformity of the switch point (decided with
/// the calculated U, before any rounding for a certificate). Pure and deterministic.
///
/// Errors (each sentence names the ramp and the temperatures): no ramps, no ramp in the
/// actuating direction, a ramp with fewer than 2 readings, a ramp going the wrong way, a ramp
/// without state change (or that never reaches the nominal switch point), bouncing contacts,
/// a change in the wrong sense (opened instead of closed), non-finite or negative inputs, and
/// budget items that do not belong to a switch test. One change in a direction is not an error
/// but a [`SwitchWarningKind::RepeatabilityNotEvaluated`] warning (see the module docs).
///
/// # Reference
/// JCGM 100:2008 4.2, 4.2.4, 4.3.7, 5.1.2, 5.2.2, G.4.1, 6.2-6.3; ILAC-G8:09/2019 4.2.
pub fn evaluate_switch_test(test: &SwitchTest) -> Result<SwitchResult, CalibError> {
    validate(test)?;
    let lag_c = lag_half_width(&test.lag)?;
    let mut changes = Vec::with_capacity(test.ramps.len());
    for (i, ramp) in test.ramps.iter().enumerate() {
        changes.push(locate_change(test, i, ramp)?);
    }
    let act = test.actuation.direction;
    let Some(sw) = point_stats(&changes, act) else {
        return Err(CalibError::invalid(
            &Location::run().field("ramps"),
            format!(
                "no {act} ramp: the switch is specified to {} on {act} temperature, so at \
                 least one {act} ramp is needed for the switch point",
                test.actuation.action.verb()
            ),
        ));
    };
    let rs = point_stats(&changes, act.opposite());

    let mut warnings = Vec::new();
    let no_pooled = test.pooled_repeatability.is_none();
    for (stats, what) in [(Some(&sw), "switch point"), (rs.as_ref(), "reset point")] {
        if let Some(st) = stats
            && st.n < 2
            && no_pooled
        {
            warnings.push(SwitchWarning {
                kind: SwitchWarningKind::RepeatabilityNotEvaluated,
                message: format!(
                    "Only one {} ramp: the repeatability of the {what} is not evaluated and \
                     its expanded uncertainty does not cover it; run at least 2 cycles or \
                     give a pooled standard deviation from earlier tests.",
                    st.direction
                ),
            });
        }
    }
    if rs.is_none() {
        warnings.push(SwitchWarning {
            kind: SwitchWarningKind::NoResetRamps,
            message: format!(
                "No {} ramp: the reset point and the differential are not evaluated.",
                act.opposite()
            ),
        });
    }

    let switch_point = evaluate_point(test, &sw, lag_c, "switch point")?;
    let reset_point = match &rs {
        Some(r) => Some(evaluate_point(test, r, lag_c, "reset point")?),
        None => None,
    };
    let differential = match &rs {
        Some(r) => Some(evaluate_differential(test, &sw, r, lag_c)?),
        None => None,
    };
    let conformity = match &test.conformity {
        Some(spec) => Some(switch_point_conformity(
            test.nominal_c,
            spec,
            switch_point.mean_c,
            switch_point.budget.expanded_uncertainty,
        )?),
        None => None,
    };
    Ok(SwitchResult {
        changes,
        switch_point,
        reset_point,
        differential,
        lag_half_width_c: lag_c,
        conformity,
        warnings,
    })
}

#[cfg(test)]
mod tests {
    //! Invented data of the invented laboratory "Larchmere Thermal Metrology" (LTM): a
    //! thermostat tested in the stirred oil bath LTM-BATH-07 and a low-temperature alarm in the
    //! Peltier dry-block LTM-DRY-09. Expected values: hand calculations shown beside the checks,
    //! and the output of `python3 tests/data/switch_media_expected.py` (numpy 2.4.6,
    //! scipy 1.17.1), pasted unchanged.

    use super::*;
    use crate::metrology::stats::{DecisionRule, Outcome};

    /// Absolute tolerance for arithmetic on °C values (means, midpoints, quadrature sums).
    const TOL_C: f64 = 1e-12;
    /// Relative tolerance for ν_eff, k and U (Student t quantile of statrs against scipy).
    const REL_TOL: f64 = 1e-9;

    const C: SwitchState = SwitchState::Closed;
    const O: SwitchState = SwitchState::Open;

    fn close(a: f64, b: f64, tol: f64) -> bool {
        (a - b).abs() <= tol
    }

    fn rel(a: f64, b: f64) -> bool {
        ((a - b) / b).abs() <= REL_TOL
    }

    fn ramp(direction: Direction, pts: &[(f64, SwitchState)]) -> Ramp {
        Ramp::readings(
            direction,
            pts.iter().map(|&(t, s)| StateReading::new(t, s)).collect(),
        )
    }

    const OPENS_RISING: Actuation = Actuation {
        direction: Direction::Rising,
        action: ContactAction::Opens,
    };
    const CLOSES_FALLING: Actuation = Actuation {
        direction: Direction::Falling,
        action: ContactAction::Closes,
    };

    /// Scenario A: LTM thermostat, opens on rising at 70 °C, three cycles in LTM-BATH-07.
    fn scenario_a() -> SwitchTest {
        let ramps = vec![
            ramp(
                Direction::Rising,
                &[(69.6, C), (69.8, C), (70.0, C), (70.2, O), (70.4, O)],
            ),
            ramp(
                Direction::Falling,
                &[(66.4, O), (66.2, O), (66.0, C), (65.8, C)],
            ),
            ramp(
                Direction::Rising,
                &[(69.9, C), (70.05, C), (70.25, O), (70.4, O)],
            ),
            ramp(Direction::Falling, &[(66.3, O), (66.15, O), (65.95, C)]),
            ramp(
                Direction::Rising,
                &[(69.8, C), (69.95, C), (70.1, C), (70.4, O)],
            ),
            ramp(
                Direction::Falling,
                &[(66.5, O), (66.35, O), (66.15, C), (66.0, C)],
            ),
        ];
        let mut test = SwitchTest::new(70.0, OPENS_RISING, ramps);
        test.lag = ThermalLag::TimeConstant {
            ramp_rate_c_per_min: 0.5,
            time_constant_s: 12.0,
        };
        test.budget_items = vec![
            BudgetItem::new(
                "reference PRT calibration",
                ItemKind::ReferenceCalibration {
                    expanded_c: 0.05,
                    k: 2.0,
                },
            ),
            BudgetItem::new(
                "LTM-BATH-07 uniformity",
                ItemKind::MediumUniformity { half_width_c: 0.04 },
            ),
            BudgetItem::new(
                "LTM-BATH-07 stability",
                ItemKind::MediumStability { half_width_c: 0.02 },
            ),
            BudgetItem::new(
                "immersion of the switch body",
                ItemKind::Custom {
                    spread: Spread::Rectangular,
                    value_c: 0.05,
                },
            ),
        ];
        test.conformity = Some(SwitchConformitySpec {
            tolerance: SwitchTolerance::Symmetric { half_width_c: 2.0 },
            rule: DecisionRule::SimpleAcceptance,
        });
        test
    }

    fn err_text(test: &SwitchTest) -> String {
        match evaluate_switch_test(test) {
            Ok(_) => String::from("(no error)"),
            Err(e) => e.to_string(),
        }
    }

    fn row<'a>(
        b: &'a BudgetResult,
        name: &str,
    ) -> &'a crate::metrology::stats::ComponentContribution {
        match b.components.iter().find(|c| c.name == name) {
            Some(c) => c,
            None => panic!("no budget row {name:?} in {:?}", b.components),
        }
    }

    #[test]
    fn changes_are_midpoints_with_half_step_resolution() {
        let r = evaluate_switch_test(&scenario_a()).unwrap();
        // Hand: ramp 1 changes between 70.0 and 70.2: (70.0 + 70.2)/2 = 70.1, a = 0.2/2 = 0.1;
        // ramp 5 between 70.1 and 70.4: 70.25, a = 0.15; ramp 4 between 66.15 and 65.95: 66.05.
        assert_eq!(r.changes.len(), 6);
        assert!(close(r.changes[0].t_c, 70.1, TOL_C));
        assert!(close(r.changes[0].detection_half_width_c, 0.1, TOL_C));
        assert_eq!(r.changes[0].bracket_c, Some((70.0, 70.2)));
        assert_eq!(r.changes[0].new_state, Some(SwitchState::Open));
        assert!(r.changes[0].actuating);
        assert!(close(r.changes[4].t_c, 70.25, TOL_C));
        assert!(close(r.changes[4].detection_half_width_c, 0.15, TOL_C));
        assert!(close(r.changes[3].t_c, 66.05, TOL_C));
        assert_eq!(r.changes[3].new_state, Some(SwitchState::Closed));
        assert!(!r.changes[3].actuating);
    }

    #[test]
    fn switch_point_mean_repeatability_and_budget() {
        let r = evaluate_switch_test(&scenario_a()).unwrap();
        let sp = &r.switch_point;
        // Hand: (70.1 + 70.15 + 70.25)/3 = 210.5/3 = 70.1667; deviations -1/15, -1/60, +1/12,
        // squares sum 0.011667, s = √(0.011667/2) = 0.076376, s/√3 = 0.044096.
        // Script: A_SW_MEAN, A_SW_S, A_SW_SM.
        assert_eq!(sp.n, 3);
        assert_eq!(sp.direction, Direction::Rising);
        assert!(close(sp.mean_c, 70.16666666666667, TOL_C));
        assert!(close(sp.std_dev_c.unwrap(), 0.07637626158259919, TOL_C));
        assert!(close(
            sp.std_dev_of_mean_c.unwrap(),
            0.04409585518441092,
            TOL_C
        ));
        assert_eq!(sp.repeatability, RepeatabilitySource::Observed);
        // Lag: 0.5 °C/min = 0.5/60 °C/s, × 12 s = 0.1 °C (hand).
        assert!(close(r.lag_half_width_c, 0.1, TOL_C));
        assert!(close(
            row(&sp.budget, THERMAL_LAG_ROW).standard_uncertainty,
            0.1 / 3f64.sqrt(),
            TOL_C
        ));
        // Detection: largest half-width of the rising changes, 0.15 (ramp 5).
        assert!(close(sp.detection_half_width_c, 0.15, TOL_C));
        // Reference: U/k = 0.05/2 = 0.025 (JCGM 100:2008 4.3.3).
        assert!(close(
            row(&sp.budget, "reference PRT calibration").standard_uncertainty,
            0.025,
            TOL_C
        ));
        // Script: A_SW_UC = √(0.025² + (0.04² + 0.02² + 0.05² + 0.1² + 0.15²)/3 + 0.044096²),
        // A_SW_NU = u_c⁴/(0.044096⁴/2), A_SW_K = t.ppf((1 + p)/2, ν), A_SW_U.
        assert!(close(
            sp.budget.combined_standard_uncertainty,
            0.12207693384820265,
            TOL_C
        ));
        assert!(rel(sp.budget.effective_dof, 117.4825510204072));
        assert!(rel(sp.budget.coverage_factor, 2.0215034146740813));
        assert!(rel(sp.budget.expanded_uncertainty, 0.24677893862708358));
        assert!(close(sp.budget.estimate, 70.16666666666667, TOL_C));
    }

    #[test]
    fn reset_point_budget() {
        let r = evaluate_switch_test(&scenario_a()).unwrap();
        let rp = r.reset_point.as_ref().unwrap();
        // Hand: (66.1 + 66.05 + 66.25)/3 = 198.4/3 = 66.1333. Script: A_RS_*.
        assert_eq!(rp.direction, Direction::Falling);
        assert!(close(rp.mean_c, 66.13333333333334, TOL_C));
        assert!(close(rp.std_dev_c.unwrap(), 0.10408329997330298, TOL_C));
        assert!(close(
            rp.std_dev_of_mean_c.unwrap(),
            0.06009252125773105,
            TOL_C
        ));
        assert!(close(rp.detection_half_width_c, 0.1, TOL_C));
        assert!(close(
            rp.budget.combined_standard_uncertainty,
            0.11136775914858672,
            TOL_C
        ));
        assert!(rel(rp.budget.effective_dof, 23.59316568047609));
        assert!(rel(rp.budget.coverage_factor, 2.1116884766265507));
        assert!(rel(rp.budget.expanded_uncertainty, 0.2351740136617917));
    }

    #[test]
    fn differential_drops_common_terms_and_doubles_the_lag() {
        let r = evaluate_switch_test(&scenario_a()).unwrap();
        let d = r.differential.as_ref().unwrap();
        // Hand: 70.1667 − 66.1333 = 4.0333. Script: A_D_* (reference and uniformity left out,
        // stability, custom and detection twice, lag 2 × 0.1 = 0.2, both Type A rows).
        assert!(close(d.value_c, 4.033333333333331, 1e-11));
        assert!(close(d.budget.estimate, d.value_c, 1e-11));
        assert!(close(
            d.budget.combined_standard_uncertainty,
            0.177920081934435,
            TOL_C
        ));
        assert!(rel(d.budget.effective_dof, 119.14570275230777));
        assert!(rel(d.budget.coverage_factor, 2.0212001464113647));
        assert!(rel(d.budget.expanded_uncertainty, 0.35961209565540203));
        let names: Vec<&str> = d
            .budget
            .components
            .iter()
            .map(|c| c.name.as_str())
            .collect();
        assert!(
            !names
                .iter()
                .any(|n| n.contains("reference PRT calibration"))
        );
        assert!(!names.iter().any(|n| n.contains("uniformity")));
        assert!(names.contains(&"LTM-BATH-07 stability (reset point)"));
        assert!(close(
            row(&d.budget, "thermal lag of the switch (both directions)").standard_uncertainty,
            0.2 / 3f64.sqrt(),
            TOL_C
        ));
    }

    #[test]
    fn simple_acceptance_pass_within_symmetric_tolerance() {
        let r = evaluate_switch_test(&scenario_a()).unwrap();
        let c = r.conformity.unwrap();
        // Hand: 70 ± 2 → [68, 72]; 70.1667 lies inside: pass (ILAC-G8 4.2.1).
        assert_eq!(c.decision.outcome, Outcome::Pass);
        assert_eq!(c.decision.tolerance_limits.lower, Some(68.0));
        assert_eq!(c.decision.tolerance_limits.upper, Some(72.0));
    }

    #[test]
    fn guarded_non_binary_gives_conditional_pass_on_asymmetric_tolerance() {
        let mut t = scenario_a();
        t.conformity = Some(SwitchConformitySpec {
            tolerance: SwitchTolerance::Asymmetric {
                lower_c: -1.0,
                upper_c: 0.2,
            },
            rule: DecisionRule::GuardedNonBinary { r: 1.0 },
        });
        let r = evaluate_switch_test(&t).unwrap();
        let c = r.conformity.unwrap();
        // Hand: limits 70 − 1 = 69 and 70 + 0.2 = 70.2; U = 0.2468 (A_SW_U), acceptance upper
        // 70.2 − 0.2468 = 69.953 < 70.1667 ≤ 70.2: conditional pass (ILAC-G8 4.2.3).
        assert_eq!(c.decision.outcome, Outcome::ConditionalPass);
        assert!(close(
            c.decision.tolerance_limits.upper.unwrap(),
            70.2,
            TOL_C
        ));
        assert!(close(
            c.decision.tolerance_limits.lower.unwrap(),
            69.0,
            TOL_C
        ));
        assert!(rel(c.decision.guard_band, 0.24677893862708358));
        // Hand: the same measured value against 70 ± 0.1 → upper 70.1 < 70.1667 < 70.1 + U:
        // conditional fail; with simple acceptance: fail.
        let spec = SwitchConformitySpec {
            tolerance: SwitchTolerance::Symmetric { half_width_c: 0.1 },
            rule: DecisionRule::GuardedNonBinary { r: 1.0 },
        };
        let c = switch_point_conformity(70.0, &spec, 70.16666666666667, 0.2468).unwrap();
        assert_eq!(c.decision.outcome, Outcome::ConditionalFail);
        let spec = SwitchConformitySpec {
            rule: DecisionRule::SimpleAcceptance,
            ..spec
        };
        let c = switch_point_conformity(70.0, &spec, 70.16666666666667, 0.2468).unwrap();
        assert_eq!(c.decision.outcome, Outcome::Fail);
    }

    /// Scenario B: LTM low-temperature alarm in LTM-DRY-09, closes on falling at 5 °C; changes
    /// noted by the technician with a resolution of 0.1 °C; lag half-width 0.05 °C.
    fn scenario_b() -> SwitchTest {
        let ramps = vec![
            Ramp::observed(Direction::Falling, 4.8),
            Ramp::observed(Direction::Rising, 6.3),
            Ramp::observed(Direction::Falling, 4.9),
            Ramp::observed(Direction::Rising, 6.2),
            Ramp::observed(Direction::Falling, 4.85),
        ];
        let mut t = SwitchTest::new(5.0, CLOSES_FALLING, ramps);
        t.observed_resolution_c = 0.1;
        t.lag = ThermalLag::HalfWidth { half_width_c: 0.05 };
        t
    }

    #[test]
    fn falling_actuation_with_observed_changes() {
        let r = evaluate_switch_test(&scenario_b()).unwrap();
        // Hand: switch point = falling mean (4.8 + 4.9 + 4.85)/3 = 4.85, reset (6.3 + 6.2)/2 =
        // 6.25, differential |4.85 − 6.25| = 1.4; detection a = 0.1/2 = 0.05.
        // Script: B_SW_*, B_RS_*, B_D_*.
        assert_eq!(r.switch_point.direction, Direction::Falling);
        assert!(close(r.switch_point.mean_c, 4.85, TOL_C));
        assert!(close(r.switch_point.detection_half_width_c, 0.05, TOL_C));
        assert!(close(
            r.switch_point.std_dev_of_mean_c.unwrap(),
            0.028867513459481443,
            TOL_C
        ));
        assert!(close(
            r.switch_point.budget.combined_standard_uncertainty,
            0.05000000000000009,
            TOL_C
        ));
        assert!(rel(r.switch_point.budget.effective_dof, 17.999999999999748));
        assert!(rel(
            r.switch_point.budget.expanded_uncertainty,
            0.10744246941164728
        ));
        let rp = r.reset_point.as_ref().unwrap();
        assert!(close(rp.mean_c, 6.25, TOL_C));
        assert!(rel(rp.budget.effective_dof, 2.7777777777777946));
        assert!(rel(rp.budget.expanded_uncertainty, 0.22386268773336176));
        let d = r.differential.as_ref().unwrap();
        assert!(close(d.value_c, 1.4, 1e-12));
        assert!(close(d.budget.estimate, 1.4, 1e-12));
        assert!(close(
            d.budget.combined_standard_uncertainty,
            0.09128709291752764,
            TOL_C
        ));
        assert!(rel(d.budget.effective_dof, 10.526315789473792));
        assert!(rel(d.budget.expanded_uncertainty, 0.20701612982745884));
        assert!(r.changes.iter().all(|c| c.bracket_c.is_none()));
        assert!(r.warnings.is_empty());
        assert!(r.conformity.is_none());
    }

    fn one_cycle() -> SwitchTest {
        let mut t = SwitchTest::new(
            70.0,
            OPENS_RISING,
            vec![
                Ramp::observed(Direction::Rising, 70.1),
                Ramp::observed(Direction::Falling, 66.1),
            ],
        );
        t.observed_resolution_c = 0.1;
        t
    }

    #[test]
    fn one_cycle_without_pooled_s_warns_and_leaves_repeatability_out() {
        let r = evaluate_switch_test(&one_cycle()).unwrap();
        assert_eq!(
            r.switch_point.repeatability,
            RepeatabilitySource::NotEvaluated
        );
        assert_eq!(r.switch_point.std_dev_c, None);
        let kinds: Vec<SwitchWarningKind> = r.warnings.iter().map(|w| w.kind).collect();
        assert_eq!(
            kinds,
            vec![
                SwitchWarningKind::RepeatabilityNotEvaluated,
                SwitchWarningKind::RepeatabilityNotEvaluated
            ]
        );
        assert!(
            r.warnings[0]
                .message
                .contains("Only one rising ramp: the repeatability of the switch point")
        );
        assert_eq!(
            row(&r.switch_point.budget, REPEATABILITY_NOT_EVALUATED_ROW).standard_uncertainty,
            0.0
        );
        // Script: C_NOPOOL_K = 2.0000000000000004 (ν_eff infinite, normal quantile at
        // erf(2/√2)); C_NOPOOL_U = 2 × 0.05/√3 = 0.057735.
        assert!(r.switch_point.budget.effective_dof.is_infinite());
        assert!(rel(
            r.switch_point.budget.coverage_factor,
            2.0000000000000004
        ));
        assert!(rel(
            r.switch_point.budget.expanded_uncertainty,
            0.057735026918962595
        ));
    }

    #[test]
    fn pooled_standard_deviation_replaces_type_a() {
        let mut t = one_cycle();
        t.pooled_repeatability = Some(PooledRepeatability {
            std_dev_c: 0.08,
            dof: 9.0,
        });
        let r = evaluate_switch_test(&t).unwrap();
        assert!(r.warnings.is_empty());
        assert_eq!(r.switch_point.repeatability, RepeatabilitySource::Pooled);
        // Hand: u = 0.08/√1; u_c = √(0.05²/3 + 0.08²) = 0.085049. Script: C_SW_*.
        assert!(close(
            row(&r.switch_point.budget, POOLED_REPEATABILITY_ROW).standard_uncertainty,
            0.08,
            TOL_C
        ));
        assert!(close(
            r.switch_point.budget.combined_standard_uncertainty,
            0.08504900548115382,
            TOL_C
        ));
        assert!(rel(r.switch_point.budget.effective_dof, 11.496337890625));
        assert!(rel(
            r.switch_point.budget.expanded_uncertainty,
            0.19073296686939561
        ));
        // Differential: one pooled row 0.08 √(1/1 + 1/1) with ν = 9. Script: C_D_*.
        let d = r.differential.unwrap();
        assert!(close(
            row(&d.budget, POOLED_REPEATABILITY_ROW).standard_uncertainty,
            0.08 * 2f64.sqrt(),
            TOL_C
        ));
        assert!(close(
            d.budget.combined_standard_uncertainty,
            0.12027745701779145,
            TOL_C
        ));
        assert!(rel(d.budget.effective_dof, 11.496337890625));
        assert!(rel(d.budget.expanded_uncertainty, 0.2697371485383575));
    }

    #[test]
    fn manual_reset_switch_has_no_reset_point() {
        let mut t = scenario_a();
        t.ramps.retain(|r| r.direction == Direction::Rising);
        let r = evaluate_switch_test(&t).unwrap();
        assert!(r.reset_point.is_none());
        assert!(r.differential.is_none());
        assert_eq!(r.warnings.len(), 1);
        assert_eq!(r.warnings[0].kind, SwitchWarningKind::NoResetRamps);
        assert!(r.warnings[0].message.contains("No falling ramp"));
        // Same switch-point budget as scenario A (script A_SW_UC).
        assert!(close(
            r.switch_point.budget.combined_standard_uncertainty,
            0.12207693384820265,
            TOL_C
        ));
    }

    #[test]
    fn small_turn_back_within_the_noise_allowance_is_accepted() {
        // 70.0 → 69.95 falls back 0.05 °C ≤ 0.1 °C allowance; the change lies between the
        // last closed reading 69.95 and the first open 70.1: (69.95 + 70.1)/2 = 70.025, a = 0.075.
        let t = SwitchTest::new(
            70.0,
            OPENS_RISING,
            vec![ramp(
                Direction::Rising,
                &[(69.8, C), (70.0, C), (69.95, C), (70.1, O), (70.3, O)],
            )],
        );
        let r = evaluate_switch_test(&t).unwrap();
        assert!(close(r.changes[0].t_c, 70.025, TOL_C));
        assert!(close(r.changes[0].detection_half_width_c, 0.075, TOL_C));
    }

    #[test]
    fn error_ramp_without_state_change() {
        let mut t = scenario_a();
        t.ramps.insert(
            2,
            ramp(
                Direction::Rising,
                &[(61.2, C), (66.0, C), (72.5, C), (78.9, C)],
            ),
        );
        assert_eq!(
            err_text(&t),
            "ramp 3 (rising): the switch never changed state between 61.2 °C and 78.9 °C \
             (it stayed closed)"
        );
        let mut t = scenario_a();
        t.ramps[1] = Ramp {
            direction: Direction::Falling,
            data: RampData::ObservedChanges(vec![]),
        };
        assert_eq!(
            err_text(&t),
            "ramp 2 (falling): no state change was recorded; a ramp must show exactly one"
        );
    }

    #[test]
    fn error_ramp_never_reaches_nominal() {
        let mut t = scenario_a();
        t.ramps[2] = ramp(Direction::Rising, &[(65.0, C), (66.7, C), (68.4, C)]);
        assert_eq!(
            err_text(&t),
            "ramp 3 (rising): the ramp never reaches the nominal switch point 70 °C: its highest \
             reading is 68.4 °C, and the switch stayed closed"
        );
        let t = SwitchTest::new(
            5.0,
            CLOSES_FALLING,
            vec![ramp(Direction::Falling, &[(9.0, O), (7.5, O), (6.5, O)])],
        );
        assert_eq!(
            err_text(&t),
            "ramp 1 (falling): the ramp never reaches the nominal switch point 5 °C: its lowest \
             reading is 6.5 °C, and the switch stayed open"
        );
    }

    #[test]
    fn error_bouncing_contacts_lists_every_change() {
        let mut t = scenario_a();
        t.ramps[4] = ramp(
            Direction::Rising,
            &[
                (69.9, C),
                (70.0, C),
                (70.1, O),
                (70.2, C),
                (70.3, O),
                (70.4, O),
            ],
        );
        // Hand: changes between 70.0/70.1, 70.1/70.2, 70.2/70.3 → 70.05, 70.15, 70.25.
        assert_eq!(
            err_text(&t),
            "ramp 5 (rising): the contacts bounced: 3 state changes at 70.05 °C, 70.15 °C and \
             70.25 °C; a ramp must show exactly one (repeat the ramp or check the contacts)"
        );
        let mut t = scenario_b();
        t.ramps[3] = Ramp {
            direction: Direction::Rising,
            data: RampData::ObservedChanges(vec![6.2, 6.4]),
        };
        assert!(err_text(&t).starts_with(
            "ramp 4 (rising): the contacts bounced: 2 state changes at 6.2 °C and 6.4 °C;"
        ));
    }

    #[test]
    fn error_ramp_going_the_wrong_way() {
        let mut t = scenario_a();
        t.ramps[2] = ramp(Direction::Rising, &[(72.0, O), (70.0, O), (68.0, C)]);
        assert_eq!(
            err_text(&t),
            "ramp 3 (rising): the temperatures go the wrong way for a rising ramp: from 72 °C at \
             the first reading to 68 °C at the last"
        );
        // 70.0 → 69.6 turns back by 0.4 °C > 0.1 °C allowance (hand: 70.0 − 69.6 = 0.4).
        t.ramps[2] = ramp(
            Direction::Rising,
            &[(69.0, C), (69.5, C), (70.0, C), (69.6, C), (70.5, O)],
        );
        assert_eq!(
            err_text(&t),
            "ramp 3 (rising): reading 4 (69.6 °C) lies 0.4 °C below the highest earlier reading \
             (70 °C); a rising ramp may turn back by at most 0.1 °C (noise allowance)"
        );
        // Falling ramp turning up by 0.3 °C: 65.9 − 65.6 = 0.3.
        t.ramps[1] = ramp(
            Direction::Falling,
            &[(66.4, O), (65.6, C), (65.9, C), (65.2, C)],
        );
        assert_eq!(
            err_text(&t),
            "ramp 2 (falling): reading 3 (65.9 °C) lies 0.3 °C above the lowest earlier reading \
             (65.6 °C); a falling ramp may turn back by at most 0.1 °C (noise allowance)"
        );
    }

    #[test]
    fn error_no_ramp_in_the_actuating_direction() {
        let mut t = scenario_a();
        t.ramps.retain(|r| r.direction == Direction::Falling);
        assert_eq!(
            err_text(&t),
            "ramps: no rising ramp: the switch is specified to open on rising temperature, so at \
             least one rising ramp is needed for the switch point"
        );
        t.ramps.clear();
        assert!(err_text(&t).starts_with("ramps: the test has no ramps"));
    }

    #[test]
    fn error_change_in_the_wrong_sense() {
        let mut t = scenario_a();
        t.ramps[0] = ramp(Direction::Rising, &[(69.9, O), (70.0, O), (70.2, C)]);
        assert_eq!(
            err_text(&t),
            "ramp 1 (rising): the switch closed at 70.1 °C; it is specified to open on rising \
             temperature"
        );
        let mut t = scenario_a();
        t.ramps[1] = ramp(Direction::Falling, &[(66.4, C), (66.2, C), (66.0, O)]);
        assert_eq!(
            err_text(&t),
            "ramp 2 (falling): the switch opened at 66.1 °C; it is specified to open on rising \
             temperature, so on a falling ramp it should reset (closed)"
        );
    }

    #[test]
    fn error_too_few_readings_and_non_finite_values() {
        let mut t = scenario_a();
        t.ramps[0] = ramp(Direction::Rising, &[(70.1, O)]);
        assert_eq!(
            err_text(&t),
            "ramp 1 (rising): 1 reading(s); at least 2 are needed to locate a state change"
        );
        let mut t = scenario_a();
        t.ramps[1] = ramp(
            Direction::Falling,
            &[(66.4, O), (66.2, O), (f64::NAN, C), (65.8, C)],
        );
        assert_eq!(
            err_text(&t),
            "ramp 2 (falling), reading 3, reference temperature: must be a finite number; got NaN"
        );
        let mut t = scenario_b();
        t.ramps[0] = Ramp::observed(Direction::Falling, f64::INFINITY);
        assert_eq!(
            err_text(&t),
            "ramp 1 (falling), observed change 1: must be a finite number; got inf"
        );
        let mut t = scenario_a();
        t.nominal_c = f64::NAN;
        assert_eq!(
            err_text(&t),
            "nominal switch point: must be a finite number; got NaN"
        );
    }

    #[test]
    fn error_negative_half_widths_and_bad_settings() {
        let mut t = scenario_a();
        t.budget_items[1] = BudgetItem::new(
            "LTM-BATH-07 uniformity",
            ItemKind::MediumUniformity {
                half_width_c: -0.04,
            },
        );
        assert_eq!(
            err_text(&t),
            "budget item LTM-BATH-07 uniformity: must not be negative; got -0.04"
        );
        let mut t = scenario_a();
        t.lag = ThermalLag::HalfWidth { half_width_c: -0.1 };
        assert_eq!(err_text(&t), "half-width: must not be negative; got -0.1");
        t.lag = ThermalLag::TimeConstant {
            ramp_rate_c_per_min: 0.5,
            time_constant_s: -3.0,
        };
        assert_eq!(err_text(&t), "time constant: must not be negative; got -3");
        let mut t = scenario_b();
        t.observed_resolution_c = -0.1;
        assert_eq!(
            err_text(&t),
            "observed-change resolution: must not be negative; got -0.1"
        );
        let mut t = scenario_a();
        t.noise_allowance_c = -0.01;
        assert_eq!(
            err_text(&t),
            "noise allowance: must not be negative; got -0.01"
        );
        let mut t = one_cycle();
        t.pooled_repeatability = Some(PooledRepeatability {
            std_dev_c: 0.08,
            dof: 0.0,
        });
        assert_eq!(
            err_text(&t),
            "pooled repeatability: the degrees of freedom must be positive; got 0"
        );
    }

    #[test]
    fn error_bad_tolerance_and_foreign_budget_items() {
        let mut t = scenario_a();
        t.conformity = Some(SwitchConformitySpec {
            tolerance: SwitchTolerance::Symmetric { half_width_c: 0.0 },
            rule: DecisionRule::SimpleAcceptance,
        });
        assert_eq!(
            err_text(&t),
            "switch-point tolerance: the half-width must be positive; got 0 °C"
        );
        t.conformity = Some(SwitchConformitySpec {
            tolerance: SwitchTolerance::Asymmetric {
                lower_c: 1.0,
                upper_c: -1.0,
            },
            rule: DecisionRule::SimpleAcceptance,
        });
        assert_eq!(
            err_text(&t),
            "switch-point tolerance: the lower limit must be below the upper; got 1 °C and -1 °C"
        );
        let mut t = scenario_a();
        t.budget_items.push(BudgetItem::new(
            "switch display",
            ItemKind::UutResolution { resolution_c: 0.1 },
        ));
        assert!(err_text(&t).starts_with("budget item switch display: a switch has no readout"));
    }

    #[test]
    fn reference_readout_in_celsius_splits_accuracy_and_resolution() {
        // Readout in °C: accuracy 0.01 + 1e-4 × |70.1667| = 0.0170167 (normal k = 2 → u =
        // 0.0085083), resolution step 0.01 → a = 0.005 (hand). Accuracy cancels in the
        // differential, resolution does not.
        let mut t = scenario_a();
        t.budget_items = vec![BudgetItem::new(
            "reference readout",
            ItemKind::ReferenceReadout(crate::metrology::calib::ReadoutSpec {
                offset_signal_unit: 0.01,
                relative: 1e-4,
                spread: Spread::Normal { k: 2.0 },
                resolution_signal_unit: 0.01,
            }),
        )];
        let r = evaluate_switch_test(&t).unwrap();
        let acc = row(&r.switch_point.budget, "reference readout: accuracy");
        assert!(close(
            acc.standard_uncertainty,
            (0.01 + 1e-4 * 70.16666666666667) / 2.0,
            TOL_C
        ));
        let res = row(&r.switch_point.budget, "reference readout: resolution");
        assert!(close(res.standard_uncertainty, 0.005 / 3f64.sqrt(), TOL_C));
        let d = r.differential.unwrap();
        let names: Vec<&str> = d
            .budget
            .components
            .iter()
            .map(|c| c.name.as_str())
            .collect();
        assert!(!names.contains(&"reference readout: accuracy (switch point)"));
        assert!(names.contains(&"reference readout: resolution (switch point)"));
        assert!(names.contains(&"reference readout: resolution (reset point)"));
    }

    #[test]
    fn message_helpers() {
        assert_eq!(fmt_c(61.2), "61.2");
        assert_eq!(fmt_c(-20.0), "-20");
        assert_eq!(fmt_c(70.05000000000001), "70.05");
        assert_eq!(fmt_c(-0.00001), "0");
        assert_eq!(join_and(&["a".into()]), "a");
        assert_eq!(
            join_and(&["a".into(), "b".into(), "c".into()]),
            "a, b and c"
        );
    }
}
