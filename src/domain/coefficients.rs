//! Coefficients stored with a reference standard's calibration
//! certificate, in a tagged JSON form.

use serde::{Deserialize, Serialize};

use crate::metrology::thermo::{CvdCoefficients, Sprt, SprtSubRange};

/// The deviation-function or correction coefficients of a certificate.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
#[serde(tag = "form", rename_all = "snake_case", deny_unknown_fields)]
pub enum CertificateCoefficients {
    /// Callendar-Van Dusen coefficients of a PRT (IEC 60751 form).
    Cvd {
        /// R0, Ω.
        r0_ohm: f64,
        /// A, 1/°C.
        a: f64,
        /// B, 1/°C².
        b: f64,
        /// C, 1/°C⁴ (below 0 °C).
        #[serde(default)]
        c: f64,
    },
    /// ITS-90 deviation function of an SPRT.
    Its90 {
        /// R at the triple point of water, Ω.
        r_tpw_ohm: f64,
        /// Sub-range name, e.g. `water-to-zinc`.
        sub_range: String,
        /// Coefficient a.
        #[serde(default)]
        a: f64,
        /// Coefficient b.
        #[serde(default)]
        b: f64,
        /// Coefficient c.
        #[serde(default)]
        c: f64,
    },
    /// Emf deviation of a reference thermocouple from its reference
    /// function: ΔE(t) = Σ coefficients_mv[i] t^i, mV (t in °C).
    EmfDeviation {
        /// Coefficients, mV/°C^i.
        coefficients_mv: Vec<f64>,
    },
    /// Correction of a digital thermometer's indication:
    /// t = indication + Σ coefficients_c[i] indication^i, °C.
    Correction {
        /// Coefficients, °C/°C^i.
        coefficients_c: Vec<f64>,
    },
    /// No coefficients (readouts, media, or a reference used as is).
    None,
}

/// The form each kind of equipment may carry.
#[must_use]
pub fn forms_for(kind: &str) -> &'static [&'static str] {
    match kind {
        "reference_prt" => &["cvd"],
        "reference_sprt" => &["its90"],
        "reference_thermocouple" => &["emf_deviation", "none"],
        "reference_indicating" => &["correction", "none"],
        _ => &["none"],
    }
}

impl CertificateCoefficients {
    /// The form's name.
    #[must_use]
    pub fn form(&self) -> &'static str {
        match self {
            Self::Cvd { .. } => "cvd",
            Self::Its90 { .. } => "its90",
            Self::EmfDeviation { .. } => "emf_deviation",
            Self::Correction { .. } => "correction",
            Self::None => "none",
        }
    }

    /// Checks the coefficients with the thermometry core.
    ///
    /// # Errors
    /// A sentence saying what is wrong.
    pub fn check(&self) -> Result<(), String> {
        match self {
            Self::Cvd { r0_ohm, a, b, c } => {
                CvdCoefficients::from_certificate(*r0_ohm, *a, *b, *c, -200.0, 850.0)
                    .map(|_| ())
                    .map_err(|e| e.to_string())
            }
            Self::Its90 {
                r_tpw_ohm,
                sub_range,
                a,
                b,
                c,
            } => {
                let sr = sub_range_of(sub_range, *a, *b, *c)?;
                Sprt::new(*r_tpw_ohm, sr)
                    .map(|_| ())
                    .map_err(|e| e.to_string())
            }
            Self::EmfDeviation { coefficients_mv } => {
                finite_poly(coefficients_mv, "coefficients_mv")
            }
            Self::Correction { coefficients_c } => finite_poly(coefficients_c, "coefficients_c"),
            Self::None => Ok(()),
        }
    }
}

fn finite_poly(c: &[f64], name: &str) -> Result<(), String> {
    if c.len() > 6 {
        return Err(format!(
            "{name} has {} terms; at most 6 (degree 5) are accepted",
            c.len()
        ));
    }
    match c.iter().position(|v| !v.is_finite()) {
        Some(i) => Err(format!("{name}[{i}] is not a finite number")),
        None => Ok(()),
    }
}

/// The ITS-90 sub-range of a name, with coefficients.
///
/// # Errors
/// An unknown name.
pub fn sub_range_of(name: &str, a: f64, b: f64, c: f64) -> Result<SprtSubRange, String> {
    Ok(match name.trim().to_ascii_lowercase().as_str() {
        "argon-to-water" => SprtSubRange::ArgonToWater { a, b },
        "mercury-to-gallium" => SprtSubRange::MercuryToGallium { a, b },
        "water-to-gallium" => SprtSubRange::WaterToGallium { a },
        "water-to-indium" => SprtSubRange::WaterToIndium { a },
        "water-to-tin" => SprtSubRange::WaterToTin { a, b },
        "water-to-zinc" => SprtSubRange::WaterToZinc { a, b },
        "water-to-aluminium" => SprtSubRange::WaterToAluminium { a, b, c },
        other => {
            return Err(format!(
                "unknown sub-range {other:?}; expected argon-to-water, mercury-to-gallium, water-to-gallium, water-to-indium, water-to-tin, water-to-zinc or water-to-aluminium"
            ));
        }
    })
}

/// Evaluates Σ c_i x^i by Horner's rule (0 for an empty list).
#[must_use]
pub fn poly(c: &[f64], x: f64) -> f64 {
    c.iter().rev().fold(0.0, |acc, &ci| acc * x + ci)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn forms_round_trip_through_json() {
        let c: CertificateCoefficients = serde_json::from_str(
            r#"{"form":"its90","r_tpw_ohm":25.5,"sub_range":"water-to-zinc","a":-1.2e-4,"b":1.5e-5}"#,
        )
        .expect("parses");
        assert_eq!(c.form(), "its90");
        assert!(c.check().is_ok());
        let bad: CertificateCoefficients =
            serde_json::from_str(r#"{"form":"cvd","r0_ohm":-1,"a":3.9083e-3,"b":-5.775e-7}"#)
                .expect("parses");
        assert!(bad.check().expect_err("negative R0").contains("R0"));
        assert!(serde_json::from_str::<CertificateCoefficients>(r#"{"form":"magic"}"#).is_err());
    }

    #[test]
    fn polynomials_evaluate_by_horner() {
        // 1 + 2x + 3x² at x = 2 is 17 (arithmetic).
        assert_eq!(poly(&[1.0, 2.0, 3.0], 2.0), 17.0);
        assert_eq!(poly(&[], 5.0), 0.0);
    }
}
