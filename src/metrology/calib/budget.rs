//! Budget items of a comparison calibration and their mapping to components of the GUM
//! budget of the deviation dt (°C) at one set point.
//!
//! # Measurement model
//! dt = t_uut − t_ref, where t_ref is the reference standard's temperature and t_uut the
//! temperature the unit under test indicates (through its reference function or nominal
//! curve). Every correction δ_i has expectation 0, so the estimate of dt is the mean of the
//! per-reading deviations (the automatic Type A row) and
//! u_c²(dt) = Σ (c_i u(x_i))² with the sensitivities below.
//!
//! | item | input unit | sensitivity c_i to dt |
//! |---|---|---|
//! | reference calibration, drift | °C | −1 |
//! | reference readout (accuracy, resolution) | reference signal (Ω, mV, °C) | −∂t_ref/∂x |
//! | UUT readout (accuracy, resolution) | UUT signal (mV, Ω, °C) | +∂t_uut/∂x |
//! | medium uniformity, stability; UUT resolution; custom | °C | +1 |
//! | reference junction of the UUT | °C | +S(t_rj)/S(t_uut) |
//! | reference junction of a reference thermocouple | °C | −S(t_rj)/(S(t_ref) + ΔE′(t_ref)) |
//! | repeatability (Type A) | °C | +1 |
//!
//! # Reference
//! JCGM 100:2008 4.2, 4.3, 5.1.2, 5.1.3; EA-4/02 M:2013 S5 (comparison calibration of a type N
//! thermocouple: model with reference-junction terms weighted by C/C0, i.e. S(t_rj)/S(t)).

use crate::metrology::stats::{Component, Distribution, Dof};

use super::error::{CalibError, Location, finite, non_negative};

/// Shape of a quoted uncertainty and how its value turns into a standard uncertainty.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum Spread {
    /// Normal, the value is an expanded uncertainty U with coverage factor k: u = U/k.
    Normal {
        /// Coverage factor k > 0.
        k: f64,
    },
    /// Rectangular, the value is the half-width a: u = a/√3.
    Rectangular,
    /// Symmetric triangular, the value is the half-width a: u = a/√6.
    Triangular,
    /// U-shaped (arcsine), the value is the half-width a: u = a/√2.
    UShaped,
    /// The value is a standard uncertainty u.
    Standard,
}

impl Spread {
    /// The [`Distribution`] of stats for `value` (unit of the input).
    ///
    /// # Reference
    /// JCGM 100:2008 4.3.3, 4.3.7, 4.3.9; U-shaped: JCGM 101:2008 6.4.6.
    pub fn distribution(self, value: f64) -> Distribution {
        match self {
            Spread::Normal { k } => Distribution::NormalExpanded { expanded: value, k },
            Spread::Rectangular => Distribution::Rectangular { half_width: value },
            Spread::Triangular => Distribution::Triangular { half_width: value },
            Spread::UShaped => Distribution::UShaped { half_width: value },
            Spread::Standard => Distribution::Standard { u: value },
        }
    }
}

/// Specification of a readout channel, in the signal unit of the probe it reads (Ω for
/// resistance thermometers, mV for thermocouples read as emf, °C for readouts that report a
/// temperature).
///
/// # Reference
/// JCGM 100:2008 4.3.7 (rectangular), F.2.2.1 (resolution of a digital indication, a = step/2;
/// clause from memory).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct ReadoutSpec {
    /// Fixed part of the accuracy, signal unit.
    pub offset_signal_unit: f64,
    /// Part proportional to the reading (dimensionless, e.g. 20e-6 for 20 ppm of reading).
    pub relative: f64,
    /// Shape of the accuracy statement; its value is offset + relative × |mean reading|.
    pub spread: Spread,
    /// Display step (last digit), signal unit; entered as rectangular with a = step/2.
    pub resolution_signal_unit: f64,
}

/// Which probe a reference-junction item belongs to.
///
/// # Reference
/// EA-4/02 M:2013 S5 (reference-junction terms of both thermocouples).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Side {
    /// The reference thermocouple.
    Reference,
    /// The thermocouple under test.
    Uut,
}

/// Where a budget item's value comes from and how it maps to °C of dt (see the module table).
///
/// # Reference
/// JCGM 100:2008 4.3, 5.1.3; EA-4/02 M:2013 S5; REQUIREMENTS 3.2 component list (common practice).
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum ItemKind {
    /// Calibration of the reference standard: U (°C) and k of its certificate at this
    /// temperature, looked up by the caller. Normal.
    ReferenceCalibration {
        /// Expanded uncertainty, °C.
        expanded_c: f64,
        /// Coverage factor.
        k: f64,
    },
    /// Drift of the reference since its calibration, rectangular half-width, °C.
    ReferenceDrift {
        /// Half-width, °C.
        half_width_c: f64,
    },
    /// Readout of the reference signal (accuracy and resolution), converted to °C by the
    /// reference's sensitivity dt_ref/dx.
    ReferenceReadout(ReadoutSpec),
    /// Readout of the UUT signal (accuracy and resolution), converted to °C by the UUT's
    /// sensitivity dt_uut/dx.
    UutReadout(ReadoutSpec),
    /// Spatial non-uniformity of the bath, block or furnace, rectangular half-width, °C.
    MediumUniformity {
        /// Half-width, °C.
        half_width_c: f64,
    },
    /// Temporal instability of the medium, rectangular half-width, °C.
    MediumStability {
        /// Half-width, °C.
        half_width_c: f64,
    },
    /// Reference-junction temperature of a thermocouple read as emf (ice point or measured),
    /// rectangular half-width, °C; sensitivity S(t_rj)/S(t).
    ReferenceJunction {
        /// Half-width, °C.
        half_width_c: f64,
        /// The thermocouple it belongs to.
        side: Side,
    },
    /// Display resolution of the unit under test (step, °C), rectangular a = step/2.
    UutResolution {
        /// Display step, °C.
        resolution_c: f64,
    },
    /// Any other effect (immersion, self-heating, inhomogeneity, hysteresis, ...), value in
    /// °C interpreted by `spread`, sensitivity 1.
    Custom {
        /// Shape of the value.
        spread: Spread,
        /// U, half-width or u according to `spread`, °C.
        value_c: f64,
    },
}

/// One named line of the budget template.
///
/// # Reference
/// JCGM 100:2008 4.3 (Type B evaluation), G.4.2 (degrees of freedom).
#[derive(Debug, Clone, PartialEq)]
pub struct BudgetItem {
    /// Label shown in the budget (readout items get ": accuracy" / ": resolution" appended).
    pub name: String,
    /// Kind and value.
    pub kind: ItemKind,
    /// Degrees of freedom (default: infinite for Type B).
    pub dof: Dof,
}

impl BudgetItem {
    /// An item with default (infinite) degrees of freedom.
    pub fn new(name: impl Into<String>, kind: ItemKind) -> Self {
        BudgetItem {
            name: name.into(),
            kind,
            dof: Dof::Default,
        }
    }

    /// The same item with stated degrees of freedom.
    ///
    /// # Reference
    /// JCGM 100:2008 G.4.2 (ν of a Type B evaluation).
    pub fn with_dof(mut self, dof: Dof) -> Self {
        self.dof = dof;
        self
    }
}

/// Sensitivities and mean signals of one set point, from which budget items are mapped.
///
/// # Reference
/// JCGM 100:2008 5.1.3 (sensitivity coefficients).
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Sensitivities {
    /// ∂t_ref/∂x_ref, °C per reference-signal unit (°C/Ω, °C/mV, °C/°C).
    pub reference_c_per_signal: f64,
    /// ∂t_uut/∂x_uut, °C per UUT-signal unit (°C/mV, °C/Ω, °C/°C).
    pub uut_c_per_signal: f64,
    /// Mean reference signal (its unit).
    pub mean_reference_signal: f64,
    /// Mean UUT signal (its unit).
    pub mean_uut_signal: f64,
    /// ∂t_ref/∂t_rj for a reference thermocouple read as emf, else `None`.
    pub reference_junction: Option<f64>,
    /// ∂t_uut/∂t_rj for a UUT thermocouple read as emf, else `None`.
    pub uut_junction: Option<f64>,
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

fn readout_components(
    item: &BudgetItem,
    spec: &ReadoutSpec,
    mean_signal: f64,
    sensitivity: f64,
    at: &Location,
) -> Result<[Component; 2], CalibError> {
    let here = at.clone().field(item.name.clone());
    let offset = non_negative(&here.clone().field("offset"), spec.offset_signal_unit)?;
    let relative = non_negative(&here.clone().field("relative"), spec.relative)?;
    let step = non_negative(
        &here.clone().field("resolution"),
        spec.resolution_signal_unit,
    )?;
    let spread = spread_checked(&here, spec.spread)?;
    let accuracy = offset + relative * mean_signal.abs();
    Ok([
        Component::new(
            format!("{}: accuracy", item.name),
            0.0,
            spread.distribution(accuracy),
        )
        .with_sensitivity(sensitivity)
        .with_dof(item.dof),
        Component::new(
            format!("{}: resolution", item.name),
            0.0,
            Distribution::Rectangular {
                half_width: step / 2.0,
            },
        )
        .with_sensitivity(sensitivity)
        .with_dof(item.dof),
    ])
}

/// Maps budget items to GUM components (estimate 0, sensitivity to dt in °C per input unit)
/// at one set point. Refuses negative or non-finite values and reference-junction items for
/// probes without a reference junction read as emf.
///
/// # Reference
/// JCGM 100:2008 5.1.2, 5.1.3 (sensitivity coefficients); EA-4/02 M:2013 S5.
pub fn components_for(
    items: &[BudgetItem],
    s: &Sensitivities,
    at: &Location,
) -> Result<Vec<Component>, CalibError> {
    let mut out = Vec::with_capacity(items.len() + 2);
    for item in items {
        let here = at.clone().field(item.name.clone());
        let single = |dist: Distribution, c: f64| {
            Component::new(item.name.clone(), 0.0, dist)
                .with_sensitivity(c)
                .with_dof(item.dof)
        };
        match item.kind {
            ItemKind::ReferenceCalibration { expanded_c, k } => {
                let u = non_negative(&here, expanded_c)?;
                spread_checked(&here, Spread::Normal { k })?;
                out.push(single(
                    Distribution::NormalExpanded { expanded: u, k },
                    -1.0,
                ));
            }
            ItemKind::ReferenceDrift { half_width_c } => {
                let a = non_negative(&here, half_width_c)?;
                out.push(single(Distribution::Rectangular { half_width: a }, -1.0));
            }
            ItemKind::ReferenceReadout(spec) => {
                out.extend(readout_components(
                    item,
                    &spec,
                    s.mean_reference_signal,
                    -s.reference_c_per_signal,
                    at,
                )?);
            }
            ItemKind::UutReadout(spec) => {
                out.extend(readout_components(
                    item,
                    &spec,
                    s.mean_uut_signal,
                    s.uut_c_per_signal,
                    at,
                )?);
            }
            ItemKind::MediumUniformity { half_width_c }
            | ItemKind::MediumStability { half_width_c } => {
                let a = non_negative(&here, half_width_c)?;
                out.push(single(Distribution::Rectangular { half_width: a }, 1.0));
            }
            ItemKind::ReferenceJunction { half_width_c, side } => {
                let a = non_negative(&here, half_width_c)?;
                let c = match side {
                    Side::Reference => s.reference_junction.map(|c| -c),
                    Side::Uut => s.uut_junction,
                };
                let c = c.ok_or_else(|| {
                    let who = match side {
                        Side::Reference => "the reference standard",
                        Side::Uut => "the unit under test",
                    };
                    CalibError::invalid(
                        &here,
                        format!(
                            "{who} is not a thermocouple read as emf with an ice-point or \
                             measured reference junction, so it has no reference-junction item \
                             (a compensated readout's junction error belongs to its accuracy)"
                        ),
                    )
                })?;
                out.push(single(Distribution::Rectangular { half_width: a }, c));
            }
            ItemKind::UutResolution { resolution_c } => {
                let step = non_negative(&here, resolution_c)?;
                out.push(single(
                    Distribution::Rectangular {
                        half_width: step / 2.0,
                    },
                    1.0,
                ));
            }
            ItemKind::Custom { spread, value_c } => {
                let v = non_negative(&here, value_c)?;
                let spread = spread_checked(&here, spread)?;
                out.push(single(spread.distribution(v), 1.0));
            }
        }
    }
    Ok(out)
}

#[cfg(test)]
mod tests {
    use super::*;

    const SENS: Sensitivities = Sensitivities {
        reference_c_per_signal: 2.5,
        uut_c_per_signal: 0.5,
        mean_reference_signal: 100.0,
        mean_uut_signal: 10.0,
        reference_junction: None,
        uut_junction: Some(0.8),
    };

    #[test]
    fn readout_maps_accuracy_and_half_digit() {
        // Worked by hand: accuracy 0.001 + 1e-5 × 100 = 0.002 (normal, k = 2);
        // resolution step 0.001 -> a = 0.0005 rectangular; sensitivity -2.5 (reference side).
        let items = [BudgetItem::new(
            "bridge",
            ItemKind::ReferenceReadout(ReadoutSpec {
                offset_signal_unit: 0.001,
                relative: 1e-5,
                spread: Spread::Normal { k: 2.0 },
                resolution_signal_unit: 0.001,
            }),
        )];
        let c = components_for(&items, &SENS, &Location::run()).unwrap();
        assert_eq!(c.len(), 2);
        assert_eq!(c[0].name, "bridge: accuracy");
        assert_eq!(
            c[0].distribution,
            Distribution::NormalExpanded {
                expanded: 0.001 + 1e-5 * 100.0,
                k: 2.0
            }
        );
        assert_eq!(c[0].sensitivity, -2.5);
        assert_eq!(
            c[1].distribution,
            Distribution::Rectangular { half_width: 0.0005 }
        );
    }

    #[test]
    fn junction_item_needs_a_thermocouple_read_as_emf() {
        let items = [BudgetItem::new(
            "ref junction",
            ItemKind::ReferenceJunction {
                half_width_c: 0.1,
                side: Side::Reference,
            },
        )];
        let e = components_for(&items, &SENS, &Location::run()).unwrap_err();
        assert!(matches!(e, CalibError::InvalidInput { .. }));
        let items = [BudgetItem::new(
            "uut junction",
            ItemKind::ReferenceJunction {
                half_width_c: 0.1,
                side: Side::Uut,
            },
        )];
        let c = components_for(&items, &SENS, &Location::run()).unwrap();
        assert_eq!(c[0].sensitivity, 0.8);
    }

    #[test]
    fn negative_and_nan_values_are_refused() {
        let neg = [BudgetItem::new(
            "drift",
            ItemKind::ReferenceDrift { half_width_c: -0.1 },
        )];
        assert!(components_for(&neg, &SENS, &Location::run()).is_err());
        let nan = [BudgetItem::new(
            "x",
            ItemKind::Custom {
                spread: Spread::Rectangular,
                value_c: f64::NAN,
            },
        )];
        assert!(matches!(
            components_for(&nan, &SENS, &Location::run()),
            Err(CalibError::NotFinite { .. })
        ));
        let bad_k = [BudgetItem::new(
            "cal",
            ItemKind::ReferenceCalibration {
                expanded_c: 0.1,
                k: 0.0,
            },
        )];
        assert!(components_for(&bad_k, &SENS, &Location::run()).is_err());
    }
}
