//! `juncture convert`: the reference conversions of the API, for people at
//! a shell and for scripts (`--json`). Both use the same code as
//! `/api/v1/reference/...`, so they give the same numbers.

use clap::{Args, Subcommand};
use juncture::web::AppError;
use juncture::web::api::reference::{
    self, Its90Query, PrtQuery, ThermocoupleQuery, ToleranceQuery,
};

/// Options shared by every conversion.
#[derive(Debug, Args)]
pub struct ConvertArgs {
    /// Print the answer as JSON (the same object the API returns).
    #[arg(long, global = true)]
    json: bool,
    #[command(subcommand)]
    what: Conversion,
}

#[derive(Debug, Subcommand)]
#[command(allow_negative_numbers = true)]
enum Conversion {
    /// Thermocouple: temperature -> emf and Seebeck coefficient, or emf -> temperature.
    Thermocouple {
        /// Letter type: B, E, J, K, N, R, S or T.
        #[arg(long = "type")]
        kind: String,
        /// Measuring-junction temperature, °C.
        #[arg(long, allow_negative_numbers = true)]
        t_c: Option<f64>,
        /// Emf at the terminals, mV.
        #[arg(long, allow_negative_numbers = true)]
        emf_mv: Option<f64>,
        /// Reference-junction temperature, °C (default 0 °C, the ice point).
        #[arg(long, allow_negative_numbers = true)]
        rj_t_c: Option<f64>,
    },
    /// Platinum resistance thermometer (Callendar-Van Dusen, IEC 60751).
    Prt {
        /// Temperature, °C.
        #[arg(long, allow_negative_numbers = true)]
        t_c: Option<f64>,
        /// Resistance, Ω.
        #[arg(long)]
        r_ohm: Option<f64>,
        /// R0, Ω (default 100).
        #[arg(long)]
        r0_ohm: Option<f64>,
        /// Coefficient A, 1/°C (default IEC 60751).
        #[arg(long, allow_negative_numbers = true)]
        a: Option<f64>,
        /// Coefficient B, 1/°C² (default IEC 60751).
        #[arg(long, allow_negative_numbers = true)]
        b: Option<f64>,
        /// Coefficient C, 1/°C⁴ (default IEC 60751).
        #[arg(long, allow_negative_numbers = true)]
        c: Option<f64>,
    },
    /// ITS-90 reference function, or an SPRT with its deviation coefficients.
    Its90 {
        /// t90, °C.
        #[arg(long, allow_negative_numbers = true)]
        t_c: Option<f64>,
        /// T90, K.
        #[arg(long)]
        t_k: Option<f64>,
        /// Reference ratio W_r.
        #[arg(long)]
        w_r: Option<f64>,
        /// SPRT resistance, Ω.
        #[arg(long)]
        r_ohm: Option<f64>,
        /// SPRT resistance at the triple point of water, Ω.
        #[arg(long)]
        r_tpw_ohm: Option<f64>,
        /// Deviation-function sub-range, e.g. water-to-zinc.
        #[arg(long)]
        sub_range: Option<String>,
        /// Deviation coefficient a.
        #[arg(long, allow_negative_numbers = true)]
        a: Option<f64>,
        /// Deviation coefficient b.
        #[arg(long, allow_negative_numbers = true)]
        b: Option<f64>,
        /// Deviation coefficient c.
        #[arg(long, allow_negative_numbers = true)]
        c: Option<f64>,
    },
    /// Tolerance class look-up (IEC 60584-1, ASTM E230, IEC 60751).
    Tolerance {
        /// thermocouple or prt.
        #[arg(long)]
        sensor: String,
        /// Thermocouple letter type.
        #[arg(long = "type")]
        kind: Option<String>,
        /// Class: 1, 2, 3, standard, special; or AA, A, B, C.
        #[arg(long)]
        class: String,
        /// PRT element: wire-wound or film.
        #[arg(long)]
        element: Option<String>,
        /// Temperature, °C.
        #[arg(long, allow_negative_numbers = true)]
        t_c: f64,
    },
}

fn describe(error: &AppError) -> String {
    let fields = error.field_errors();
    if fields.is_empty() {
        error.to_string()
    } else {
        fields
            .iter()
            .map(|f| format!("--{}: {}", f.field.replace('_', "-"), f.message))
            .collect::<Vec<_>>()
            .join("; ")
    }
}

fn emit<T: serde::Serialize>(
    json: bool,
    value: &T,
    human: impl FnOnce(&T) -> String,
) -> Result<(), String> {
    if json {
        let text = serde_json::to_string_pretty(value).map_err(|e| e.to_string())?;
        println!("{text}");
    } else {
        print!("{}", human(value));
    }
    Ok(())
}

/// Runs one conversion and prints it.
///
/// # Errors
/// A sentence naming the option that was wrong and what is allowed.
pub fn run(args: ConvertArgs) -> Result<(), String> {
    let json = args.json;
    match args.what {
        Conversion::Thermocouple {
            kind,
            t_c,
            emf_mv,
            rj_t_c,
        } => {
            let q = ThermocoupleQuery {
                kind,
                t_c,
                emf_mv,
                rj_t_c,
            };
            let a = reference::thermocouple(&q).map_err(|e| describe(&e))?;
            emit(json, &a, |a| {
                let mut s = format!(
                    "type {} thermocouple\n  temperature            {:.6} °C\n  emf                    {:.6} mV (reference junction at {} °C)\n  Seebeck coefficient    {:.4} µV/K\n",
                    a.kind, a.t_c, a.emf_mv, a.rj_t_c, a.seebeck_uv_per_k
                );
                if a.rj_t_c != 0.0 {
                    s.push_str(&format!(
                        "  emf referred to 0 °C   {:.6} mV (E(t_rj) = {:.6} mV)\n",
                        a.emf_at_0c_rj_mv, a.emf_rj_mv
                    ));
                }
                if let (Some(t), Some(band)) =
                    (a.published_inverse_t_c, a.published_inverse_error_band_c)
                {
                    s.push_str(&format!(
                        "  published inverse      {t:.4} °C (its printed error band {} °C to {} °C)\n",
                        band[0], band[1]
                    ));
                }
                s
            })
        }
        Conversion::Prt {
            t_c,
            r_ohm,
            r0_ohm,
            a,
            b,
            c,
        } => {
            let q = PrtQuery {
                t_c,
                r_ohm,
                r0_ohm,
                a,
                b,
                c,
            };
            let ans = reference::prt(&q).map_err(|e| describe(&e))?;
            emit(json, &ans, |p| {
                format!(
                    "platinum resistance thermometer, R0 = {} Ω ({})\n  temperature   {:.6} °C\n  resistance    {:.6} Ω\n  dR/dt         {:.6} Ω/K\n  A = {:e} /°C, B = {:e} /°C², C = {:e} /°C⁴\n",
                    p.r0_ohm,
                    if p.coefficients == "iec_60751" {
                        "IEC 60751 nominal coefficients"
                    } else {
                        "custom coefficients"
                    },
                    p.t_c,
                    p.r_ohm,
                    p.dr_dt_ohm_per_k,
                    p.a,
                    p.b,
                    p.c
                )
            })
        }
        Conversion::Its90 {
            t_c,
            t_k,
            w_r,
            r_ohm,
            r_tpw_ohm,
            sub_range,
            a,
            b,
            c,
        } => {
            let q = Its90Query {
                t_c,
                t_k,
                w_r,
                r_ohm,
                r_tpw_ohm,
                sub_range,
                a,
                b,
                c,
            };
            let ans = reference::its90_convert(&q).map_err(|e| describe(&e))?;
            emit(json, &ans, |x| {
                let mut s = format!(
                    "ITS-90\n  t90     {:.6} °C\n  T90     {:.6} K\n  W_r     {:.9}\n",
                    x.t_c, x.t90_k, x.w_r
                );
                if let (Some(w), Some(dw), Some(sr)) = (x.w, x.delta_w, x.sub_range) {
                    s.push_str(&format!(
                        "  W       {w:.9} (measured)\n  W - W_r {dw:.3e} ({sr} deviation function)\n"
                    ));
                }
                s
            })
        }
        Conversion::Tolerance {
            sensor,
            kind,
            class,
            element,
            t_c,
        } => {
            let q = ToleranceQuery {
                sensor,
                kind,
                class,
                element,
                t_c,
            };
            let ans = reference::tolerance(&q).map_err(|e| describe(&e))?;
            emit(json, &ans, |t| {
                format!(
                    "{} {} at {} °C: ± {} °C ({})\n",
                    t.sensor, t.class, t.t_c, t.tolerance_c, t.standard
                )
            })
        }
    }
}
