//! Input of the calibration model: the reference standard, the unit under test, the set points
//! with their readings, the uncertainty-budget template, the CMC table, the conformity
//! specification and the deviation-function options.

use crate::metrology::stats::{DecisionRule, P_K2};
use crate::metrology::thermo::{
    CvdCoefficients, ElementKind, PrtClass, SprtSubRange, ThermocoupleClass, ThermocoupleType,
};

use super::budget::BudgetItem;
use super::cmc::CmcTable;

/// How the reference junction of a thermocouple is held.
///
/// # Reference
/// NIST Monograph 175 / IEC 60584-1:2013 (reference junction at 0 °C); law of intermediate
/// temperatures.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum JunctionMethod {
    /// Reference junction in an ice point: t_rj = 0 °C; the signal is an emf in mV.
    IcePoint,
    /// Reference junction at a measured temperature: every reading carries
    /// [`Reading::t_rj_c`] (°C); the signal is an emf in mV.
    Measured,
    /// The readout compensates the reference junction and reports a temperature: the signal
    /// is a temperature in °C. Allowed for the unit under test only.
    Compensated,
}

/// The reference standard, with the coefficients of its own certificate valid on the run date.
///
/// The reference signal of a [`Reading`] is a resistance in Ω (SPRT, PRT), an emf in mV
/// (thermocouple) or an indication in °C (digital thermometer).
///
/// # Reference
/// ITS-90 (Metrologia 27 (1990) 3-10) 3.3; IEC 60751:2008; NIST Monograph 175 / IEC 60584-1:2013;
/// EA-4/02 M:2013 S5.
#[derive(Debug, Clone, PartialEq)]
pub enum ReferenceProbe {
    /// Standard platinum resistance thermometer on ITS-90.
    Sprt {
        /// Resistance at the triple point of water (0.01 °C), Ω.
        r_tpw_ohm: f64,
        /// Sub-range with the deviation coefficients of the certificate.
        sub_range: SprtSubRange,
    },
    /// Platinum resistance thermometer with its certificate's Callendar-Van Dusen coefficients
    /// (and their range of validity).
    Prt {
        /// The certificate curve.
        curve: CvdCoefficients,
    },
    /// Reference thermocouple of a letter type with its certificate's emf deviation
    /// ΔE(t) = Σ e_i t^i (mV, t in °C): the thermocouple gives E(t) + ΔE(t) with the reference
    /// junction at 0 °C.
    Thermocouple {
        /// Letter type (usually R or S).
        kind: ThermocoupleType,
        /// Reference junction: [`JunctionMethod::IcePoint`] or [`JunctionMethod::Measured`].
        junction: JunctionMethod,
        /// e_0, e_1, ... of ΔE(t): mV, mV/°C, mV/°C², ... (may be empty: no deviation).
        emf_deviation_mv: Vec<f64>,
    },
    /// Digital (indicating) reference thermometer with its certificate's correction
    /// c(t_ind) = Σ c_i t_ind^i (°C): t_ref = t_ind + c(t_ind).
    Digital {
        /// c_0, c_1, ... of the correction: °C, °C/°C, °C/°C², ... (may be empty).
        correction_c: Vec<f64>,
        /// Range of indication (°C) on which the certificate's correction applies, (low, high).
        range_c: (f64, f64),
    },
}

/// The unit under test (UUT).
///
/// The UUT signal of a [`Reading`] is an emf in mV (thermocouple with ice-point or measured
/// reference junction), a temperature in °C (thermocouple with compensated readout, indicating
/// thermometer) or a resistance in Ω (PRT).
///
/// # Reference
/// NIST Monograph 175 / IEC 60584-1:2013; IEC 60751:2008; EA-4/02 M:2013 S5.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum UnitUnderTest {
    /// Thermocouple of a letter type: deviation as emf dE = (E_m + E(t_rj)) − E(t_ref) in mV
    /// and as temperature dt = t(E_m + E(t_rj)) − t_ref in °C.
    Thermocouple {
        /// Letter type.
        kind: ThermocoupleType,
        /// Reference-junction method.
        junction: JunctionMethod,
    },
    /// Platinum resistance thermometer judged against the IEC 60751 nominal curve for its R0:
    /// dt = t_nominal(R) − t_ref (°C) and dR = R − R_nominal(t_ref) (Ω).
    Prt {
        /// Nominal resistance at 0 °C, Ω (100 for a Pt100).
        r0_ohm: f64,
    },
    /// Indicating thermometer: dt = indication − t_ref (°C). Its display resolution is the
    /// budget item [`super::ItemKind::UutResolution`].
    Indicating,
}

/// One paired reading at a set point.
///
/// # Reference
/// JCGM 100:2008 4.2 (repeated observations); pairing of reference and UUT readings: common
/// practice.
#[derive(Debug, Clone, PartialEq)]
pub struct Reading {
    /// Time stamp as recorded; carried through untouched.
    pub timestamp: Option<String>,
    /// Reference signal: Ω, mV or °C according to [`ReferenceProbe`].
    pub reference_signal: f64,
    /// UUT signal: mV, °C or Ω according to [`UnitUnderTest`].
    pub uut_signal: f64,
    /// Temperature of the reference junction(s), °C, for thermocouples with
    /// [`JunctionMethod::Measured`] (reference and UUT junctions are taken to share this
    /// temperature, e.g. in one isothermal block). Ignored otherwise (with a warning).
    pub t_rj_c: Option<f64>,
}

impl Reading {
    /// A reading without time stamp and reference-junction temperature.
    pub fn new(reference_signal: f64, uut_signal: f64) -> Self {
        Reading {
            timestamp: None,
            reference_signal,
            uut_signal,
            t_rj_c: None,
        }
    }

    /// The same reading with the reference-junction temperature `t_rj_c` (°C).
    pub fn with_t_rj(mut self, t_rj_c: f64) -> Self {
        self.t_rj_c = Some(t_rj_c);
        self
    }

    /// The same reading with a time stamp.
    pub fn with_timestamp(mut self, timestamp: impl Into<String>) -> Self {
        self.timestamp = Some(timestamp.into());
        self
    }
}

/// A set point: its nominal temperature, the readings, and the budget items whose values
/// belong to this temperature (e.g. the reference certificate's U here).
///
/// # Reference
/// JCGM 100:2008 4.2, 4.3; comparison calibration at set points: common practice.
#[derive(Debug, Clone, PartialEq)]
pub struct SetPoint {
    /// Nominal temperature, °C (a label: the results use the measured t_ref).
    pub nominal_c: f64,
    /// Readings, at least 2.
    pub readings: Vec<Reading>,
    /// Budget items for this set point only, evaluated after the run's template.
    pub budget_items: Vec<BudgetItem>,
}

impl SetPoint {
    /// A set point at `nominal_c` (°C) with `readings` and no set-point-specific items.
    pub fn new(nominal_c: f64, readings: Vec<Reading>) -> Self {
        SetPoint {
            nominal_c,
            readings,
            budget_items: Vec::new(),
        }
    }

    /// The same set point with `items` added to its specific budget items.
    pub fn with_items(mut self, items: Vec<BudgetItem>) -> Self {
        self.budget_items.extend(items);
        self
    }
}

/// Tolerance the deviation dt is judged against.
///
/// # Reference
/// IEC 60584-1:2013 and IEC 60751:2008 tolerance classes; ILAC-G8:09/2019 3 (specification limits).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ToleranceSpec {
    /// IEC 60584-1 (or ASTM E230) class of the UUT thermocouple's type, at t_ref.
    ThermocoupleClass(ThermocoupleClass),
    /// IEC 60751 class of the UUT PRT, at t_ref.
    PrtClass {
        /// Class.
        class: PrtClass,
        /// Element construction (sets the validity range of the class).
        element: ElementKind,
    },
    /// Customer limit ±half_width_c (°C) on dt.
    Symmetric {
        /// Half-width T > 0, °C.
        half_width_c: f64,
    },
    /// Customer limits lower_c ≤ dt ≤ upper_c (°C).
    Asymmetric {
        /// Lower limit, °C.
        lower_c: f64,
        /// Upper limit, °C.
        upper_c: f64,
    },
}

/// Conformity specification of a run: tolerance and decision rule.
///
/// # Reference
/// ILAC-G8:09/2019 4.2; ISO/IEC 17025:2017 7.8.6.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ConformitySpec {
    /// Tolerance on dt.
    pub tolerance: ToleranceSpec,
    /// Decision rule (ILAC-G8).
    pub rule: DecisionRule,
}

/// Degree of the deviation function.
///
/// # Reference
/// JCGM 100:2008 H.3; low degree with redundant points: common practice.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum FitDegree {
    /// min(2, set points − 1).
    #[default]
    Auto,
    /// This degree; refused when the set points cannot support it.
    Fixed(usize),
    /// No deviation function.
    None,
}

/// One calibration run: everything the model needs, no I/O.
///
/// # Reference
/// JCGM 100:2008; EA-4/02 M:2013 S5; ILAC-P14:09/2020; ILAC-G8:09/2019.
#[derive(Debug, Clone, PartialEq)]
pub struct Run {
    /// Reference standard.
    pub reference: ReferenceProbe,
    /// Unit under test.
    pub uut: UnitUnderTest,
    /// Set points (distinct nominal temperatures).
    pub set_points: Vec<SetPoint>,
    /// Budget items evaluated at every set point (before the set point's own items); the Type
    /// A repeatability row is added automatically.
    pub budget_template: Vec<BudgetItem>,
    /// Coverage probability of U (default [`P_K2`], erf(2/√2) ≈ 95.45 %).
    pub coverage_probability: f64,
    /// The laboratory's CMC (an empty table: no CMC floor).
    pub cmc: CmcTable,
    /// Conformity statement, if asked for.
    pub conformity: Option<ConformitySpec>,
    /// Degree of the deviation function.
    pub fit_degree: FitDegree,
    /// Keep each reading's converted result in `SetPointResult::readings`
    /// (the default). `false` leaves those lists empty so that memory stays
    /// at the inputs (a logger file of a million readings); every statistic
    /// is the same bit for bit either way.
    pub keep_reading_results: bool,
}

impl Run {
    /// A run with an empty budget template, coverage probability [`P_K2`], no CMC, no
    /// conformity statement and the automatic degree of the deviation function.
    pub fn new(reference: ReferenceProbe, uut: UnitUnderTest, set_points: Vec<SetPoint>) -> Self {
        Run {
            reference,
            uut,
            set_points,
            budget_template: Vec::new(),
            coverage_probability: P_K2,
            cmc: CmcTable::default(),
            conformity: None,
            fit_degree: FitDegree::Auto,
            keep_reading_results: true,
        }
    }
}
