//! The OpenAPI 3.1 document of the JSON API, served at
//! `/api/v1/openapi.json`. Written out by hand so that every description is
//! ours; a test checks that each API route is documented.

use std::sync::OnceLock;

use axum::Json;
use serde_json::{Value, json};

fn number(description: &str) -> Value {
    json!({"type": "number", "description": description})
}

fn query(name: &str, description: &str, required: bool, schema: Value) -> Value {
    json!({"name": name, "in": "query", "required": required,
           "description": description, "schema": schema})
}

fn num_query(name: &str, description: &str) -> Value {
    query(name, description, false, json!({"type": "number"}))
}

fn problem_responses(ok_schema: &str, ok_description: &str) -> Value {
    json!({
        "200": {"description": ok_description,
                "content": {"application/json": {"schema": {"$ref": format!("#/components/schemas/{ok_schema}")}}}},
        "400": {"description": "The query string could not be read (missing or malformed parameter, or an unknown one).",
                "content": {"application/problem+json": {"schema": {"$ref": "#/components/schemas/Problem"}}}},
        "422": {"description": "A value is outside what the reference function or class accepts; `errors` names the field.",
                "content": {"application/problem+json": {"schema": {"$ref": "#/components/schemas/Problem"}}}}
    })
}

fn build() -> Value {
    json!({
        "openapi": "3.1.0",
        "info": {
            "title": "Juncture API",
            "version": crate::VERSION,
            "description": "JSON API of a temperature-calibration laboratory. Units are in the field names (t_c in °C, t90_k in K, emf_mv in mV, r_ohm in Ω, seebeck_uv_per_k in µV/K). Numbers are returned unrounded. Errors are RFC 9457 problem documents."
        },
        "paths": {
            "/healthz": {"get": {
                "summary": "Service and database status",
                "operationId": "health",
                "responses": {
                    "200": {"description": "The service and its database answer.",
                            "content": {"application/json": {"schema": {"$ref": "#/components/schemas/Health"}}}},
                    "503": {"description": "The database does not answer.",
                            "content": {"application/problem+json": {"schema": {"$ref": "#/components/schemas/Problem"}}}}
                }
            }},
            "/api/v1/openapi.json": {"get": {
                "summary": "This document",
                "operationId": "openapi",
                "responses": {"200": {"description": "The OpenAPI document.", "content": {"application/json": {}}}}
            }},
            "/api/v1/reference/thermocouple": {"get": {
                "summary": "Thermocouple reference function (IEC 60584-1:2013 / NIST Monograph 175)",
                "description": "Give t_c to get the emf and the Seebeck coefficient, or emf_mv to solve for the temperature (published inverse refined by Newton iteration until the reference function reproduces the emf within 1e-9 mV). rj_t_c sets the reference-junction temperature (default 0 °C).",
                "operationId": "thermocouple",
                "parameters": [
                    query("type", "Letter type: B, E, J, K, N, R, S or T.", true, json!({"type": "string", "enum": ["B","E","J","K","N","R","S","T"]})),
                    num_query("t_c", "Measuring-junction temperature, °C (ITS-90)."),
                    num_query("emf_mv", "Emf at the terminals, mV, with the reference junction at rj_t_c."),
                    num_query("rj_t_c", "Reference-junction temperature, °C; default 0.")
                ],
                "responses": problem_responses("ThermocoupleAnswer", "The conversion.")
            }},
            "/api/v1/reference/prt": {"get": {
                "summary": "Platinum resistance thermometer, Callendar-Van Dusen (IEC 60751:2008)",
                "description": "Give t_c for the resistance or r_ohm for the temperature. Without a, b, c the IEC 60751 nominal coefficients apply; r0_ohm defaults to 100 Ω.",
                "operationId": "prt",
                "parameters": [
                    num_query("t_c", "Temperature, °C."),
                    num_query("r_ohm", "Resistance, Ω."),
                    num_query("r0_ohm", "R0, Ω (default 100)."),
                    num_query("a", "Coefficient A, 1/°C (default 3.9083e-3)."),
                    num_query("b", "Coefficient B, 1/°C² (default -5.775e-7)."),
                    num_query("c", "Coefficient C, 1/°C⁴, used below 0 °C (default -4.183e-12).")
                ],
                "responses": problem_responses("PrtAnswer", "The conversion.")
            }},
            "/api/v1/reference/its90": {"get": {
                "summary": "ITS-90 reference functions and SPRT deviation functions",
                "description": "Give one of t_c, t_k or w_r for the reference function W_r(T90) or its inverse. For an SPRT give r_ohm, r_tpw_ohm, sub_range and the certificate's deviation coefficients a, b, c.",
                "operationId": "its90",
                "parameters": [
                    num_query("t_c", "t90, °C."),
                    num_query("t_k", "T90, K."),
                    num_query("w_r", "Reference-function ratio W_r."),
                    num_query("r_ohm", "SPRT resistance, Ω."),
                    num_query("r_tpw_ohm", "SPRT resistance at the triple point of water, Ω."),
                    query("sub_range", "Deviation-function sub-range.", false, json!({"type": "string", "enum": ["argon-to-water","mercury-to-gallium","water-to-gallium","water-to-indium","water-to-tin","water-to-zinc","water-to-aluminium"]})),
                    num_query("a", "Deviation coefficient a."),
                    num_query("b", "Deviation coefficient b."),
                    num_query("c", "Deviation coefficient c (water-to-aluminium only).")
                ],
                "responses": problem_responses("Its90Answer", "The conversion.")
            }},
            "/api/v1/reference/tolerance": {"get": {
                "summary": "Tolerance classes: IEC 60584-1, ASTM E230, IEC 60751",
                "operationId": "tolerance",
                "parameters": [
                    query("sensor", "thermocouple or prt.", true, json!({"type": "string", "enum": ["thermocouple", "prt"]})),
                    query("type", "Thermocouple letter type (thermocouples only).", false, json!({"type": "string"})),
                    query("class", "1, 2, 3, standard, special (thermocouples); AA, A, B, C (PRTs).", true, json!({"type": "string"})),
                    query("element", "PRT element: wire-wound (default) or film.", false, json!({"type": "string"})),
                    query("t_c", "Temperature, °C.", true, json!({"type": "number"}))
                ],
                "responses": problem_responses("ToleranceAnswer", "The permitted deviation.")
            }}
        },
        "components": {"schemas": {
            "Problem": {"type": "object", "required": ["type", "title", "status", "detail"], "properties": {
                "type": {"type": "string", "description": "URI reference of the problem type, /problems/{slug}."},
                "title": {"type": "string"},
                "status": {"type": "integer"},
                "detail": {"type": "string", "description": "What went wrong, where, and what is allowed."},
                "errors": {"type": "array", "items": {"type": "object", "properties": {
                    "field": {"type": "string"}, "message": {"type": "string"}}}}
            }},
            "Health": {"type": "object", "properties": {
                "status": {"type": "string"}, "version": {"type": "string"},
                "schema_version": {"type": ["integer", "null"]}, "database": {"type": "string"}}},
            "ThermocoupleAnswer": {"type": "object", "required": ["type", "t_c", "emf_mv", "seebeck_uv_per_k"], "properties": {
                "type": {"type": "string"},
                "t_c": number("Measuring-junction temperature, °C."),
                "emf_mv": number("Emf with the reference junction at rj_t_c, mV."),
                "seebeck_uv_per_k": number("dE/dt at t_c, µV/K."),
                "rj_t_c": number("Reference-junction temperature, °C."),
                "emf_rj_mv": number("E(rj_t_c), mV."),
                "emf_at_0c_rj_mv": number("Emf referred to 0 °C, mV."),
                "published_inverse_t_c": number("When solving: the published inverse polynomial's own value, °C."),
                "published_inverse_error_band_c": {"type": "array", "items": {"type": "number"}, "description": "Its printed error band, °C."}
            }},
            "PrtAnswer": {"type": "object", "required": ["t_c", "r_ohm", "dr_dt_ohm_per_k"], "properties": {
                "t_c": number("Temperature, °C."),
                "r_ohm": number("Resistance, Ω."),
                "dr_dt_ohm_per_k": number("dR/dt at t_c, Ω/K."),
                "r0_ohm": number("R0 used, Ω."),
                "a": number("A used."), "b": number("B used."), "c": number("C used."),
                "coefficients": {"type": "string", "enum": ["iec_60751", "custom"]}
            }},
            "Its90Answer": {"type": "object", "required": ["t_c", "t90_k", "w_r"], "properties": {
                "t_c": number("t90, °C."), "t90_k": number("T90, K."),
                "w_r": number("W_r(T90)."),
                "w": number("SPRT: measured W = R/R(273.16 K)."),
                "delta_w": number("SPRT: W - W_r from the deviation function."),
                "r_ohm": number("SPRT: resistance, Ω."),
                "sub_range": {"type": "string"}
            }},
            "ToleranceAnswer": {"type": "object", "properties": {
                "sensor": {"type": "string"}, "class": {"type": "string"},
                "t_c": number("Temperature, °C."),
                "tolerance_c": number("Permitted deviation (±), °C."),
                "standard": {"type": "string"}
            }}
        }}
    })
}

/// The document, built once.
pub fn spec() -> &'static Value {
    static SPEC: OnceLock<Value> = OnceLock::new();
    SPEC.get_or_init(build)
}

/// `GET /api/v1/openapi.json`.
pub async fn document() -> Json<&'static Value> {
    Json(spec())
}
