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

fn body_responses(ok_schema: &str, ok_description: &str) -> Value {
    json!({
        "200": {"description": ok_description,
                "content": {"application/json": {"schema": {"$ref": format!("#/components/schemas/{ok_schema}")}}}},
        "400": {"description": "The body is not JSON of the expected shape (the detail quotes the parser).",
                "content": {"application/problem+json": {"schema": {"$ref": "#/components/schemas/Problem"}}}},
        "413": {"description": "The body is larger than the configured limit (stated in the detail).",
                "content": {"application/problem+json": {"schema": {"$ref": "#/components/schemas/Problem"}}}},
        "422": {"description": "A value is not acceptable; `errors` names the field, e.g. components[2].half_width.",
                "content": {"application/problem+json": {"schema": {"$ref": "#/components/schemas/Problem"}}}}
    })
}

fn numbers(description: &str) -> Value {
    json!({"type": "array", "items": {"type": "number"}, "description": description})
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
            "/api/v1/compute/fit": {"post": {
                "summary": "Weighted polynomial least squares (Householder QR on a centred, scaled variable, with iterative refinement)",
                "description": "coefficients[i] multiplies x^powers[i] (x^i with intercept; without intercept coefficients[0] multiplies x). Unweighted fits and fits with weights scale the covariance by s²; fits with uncertainties use the unscaled covariance and report a chi-square check.",
                "operationId": "fit",
                "requestBody": {"required": true, "content": {"application/json": {"schema": {"$ref": "#/components/schemas/FitRequest"}}}},
                "responses": body_responses("FitResponse", "The fit.")
            }},
            "/api/v1/compute/uncertainty": {"post": {
                "summary": "GUM uncertainty budget (JCGM 100:2008) with optional Monte Carlo check (JCGM 101:2008) and conformity decision (ILAC-G8:09/2019)",
                "description": "Additive model: the estimate is the sum of sensitivity × estimate. U is reported unrounded and, in `reported`, to two significant digits rounded up and never below the CMC (ILAC-P14).",
                "operationId": "uncertainty",
                "requestBody": {"required": true, "content": {"application/json": {"schema": {"$ref": "#/components/schemas/UncertaintyRequest"}}}},
                "responses": body_responses("UncertaintyResponse", "The budget.")
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
            "FitRequest": {"type": "object", "required": ["x", "y", "degree"], "properties": {
                "x": numbers("Independent variable, e.g. reference temperature in °C."),
                "y": numbers("Dependent variable, e.g. deviation in °C."),
                "degree": {"type": "integer", "minimum": 0, "maximum": 10},
                "intercept": {"type": "boolean", "default": true},
                "weights": {"type": ["array", "null"], "items": {"type": "number"}, "description": "Weights w_i > 0 (covariance scaled by s²)."},
                "uncertainties": {"type": ["array", "null"], "items": {"type": "number"}, "description": "Standard uncertainties of y (w = 1/u², covariance unscaled)."},
                "expanded_uncertainties": {"type": ["array", "null"], "items": {"type": "number"}, "description": "Residuals larger than these are flagged."},
                "evaluate_at": {"type": ["array", "null"], "items": {"type": "number"}, "description": "x values at which to evaluate the fitted function and its standard uncertainty."}
            }},
            "FitResponse": {"type": "object", "properties": {
                "coefficients": numbers("coefficients[i] multiplies x^powers[i]."),
                "powers": {"type": "array", "items": {"type": "integer"}},
                "standard_uncertainties": numbers("Standard uncertainties of the coefficients."),
                "covariance": {"type": "array", "items": {"type": "array", "items": {"type": "number"}}},
                "correlation": {"type": "array", "items": {"type": "array", "items": {"type": "number"}}},
                "fitted": numbers("Fitted values."),
                "residuals": numbers("y - fitted."),
                "residual_std_dev": {"type": ["number", "null"]},
                "dof": {"type": "integer"},
                "r_squared": {"type": "number"},
                "condition_number": {"type": "number"},
                "covariance_scaled": {"type": "boolean"},
                "chi_square": {"type": ["object", "null"]},
                "flagged_residuals": {"type": "array", "items": {"type": "object"}},
                "evaluations": {"type": "array", "items": {"type": "object", "properties": {
                    "x": {"type": "number"}, "y": {"type": "number"},
                    "standard_uncertainty": {"type": "number"}, "extrapolated": {"type": "boolean"}}}},
                "warnings": {"type": "array", "items": {"type": "string"}}
            }},
            "UncertaintyRequest": {"type": "object", "required": ["components"], "properties": {
                "components": {"type": "array", "items": {"type": "object", "required": ["name", "distribution"], "properties": {
                    "name": {"type": "string"},
                    "distribution": {"type": "string", "enum": ["normal", "rectangular", "triangular", "u_shaped", "type_a"]},
                    "estimate": {"type": "number", "default": 0},
                    "standard_uncertainty": {"type": "number"},
                    "half_width": {"type": "number"},
                    "expanded": {"type": "number"},
                    "k": {"type": "number", "default": 2},
                    "n": {"type": "integer", "description": "Readings of a type_a evaluation (ν = n - 1)."},
                    "sensitivity": {"type": "number", "default": 1},
                    "dof": {"type": ["number", "null"]}
                }}},
                "correlations": {"type": "array", "items": {"type": "object", "properties": {
                    "i": {"type": "integer"}, "j": {"type": "integer"}, "r": {"type": "number"}}}},
                "coverage_probability": {"type": "number", "default": 0.9545},
                "cmc": {"type": ["number", "null"], "description": "The lab's CMC (expanded) at this point."},
                "monte_carlo": {"type": ["object", "null"], "properties": {
                    "trials": {"type": ["integer", "null"], "description": "null: adaptive procedure (JCGM 101 7.9)."},
                    "seed": {"type": "integer", "default": 1},
                    "significant_digits": {"type": "integer", "enum": [1, 2], "default": 2}}},
                "decision": {"type": ["object", "null"], "properties": {
                    "lower": {"type": "number"}, "upper": {"type": "number"},
                    "rule": {"type": "string", "enum": ["simple", "guarded", "guarded_non_binary"]},
                    "guard_band_factor": {"type": "number", "default": 1},
                    "measured": {"type": "number"}}}
            }},
            "UncertaintyResponse": {"type": "object", "properties": {
                "estimate": {"type": "number"},
                "combined_standard_uncertainty": {"type": "number"},
                "effective_dof": {"type": ["number", "null"], "description": "null when infinite."},
                "coverage_probability": {"type": "number"},
                "coverage_factor": {"type": "number"},
                "expanded_uncertainty": {"type": "number"},
                "components": {"type": "array", "items": {"type": "object", "properties": {
                    "name": {"type": "string"}, "standard_uncertainty": {"type": "number"},
                    "sensitivity": {"type": "number"}, "contribution": {"type": "number"},
                    "variance_share": {"type": "number"}, "dof": {"type": ["number", "null"]}}}},
                "correlation_share": {"type": "number"},
                "reported": {"type": "object", "properties": {
                    "estimate": {"type": "string"}, "expanded_uncertainty": {"type": "string"},
                    "cmc_floor_applied": {"type": "boolean"}}},
                "monte_carlo": {"type": ["object", "null"], "properties": {
                    "estimate": {"type": "number"}, "standard_uncertainty": {"type": "number"},
                    "shortest_interval": numbers("[low, high]"), "symmetric_interval": numbers("[low, high]"),
                    "trials": {"type": "integer"}, "stabilized": {"type": ["boolean", "null"]},
                    "gum_validated": {"type": "boolean"}, "d_low": {"type": "number"}, "d_high": {"type": "number"},
                    "numerical_tolerance": {"type": "number"}, "seed": {"type": "integer"}}},
                "decision": {"type": ["object", "null"], "properties": {
                    "outcome": {"type": "string", "enum": ["pass", "conditional pass", "conditional fail", "fail"]},
                    "statement": {"type": "string"}, "guard_band": {"type": "number"}, "measured": {"type": "number"},
                    "acceptance_limits": {"type": "array", "items": {"type": ["number", "null"]}}}}
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

/// Records routes: (path, method, summary, has JSON body, success status).
const RECORD_ROUTES: &[(&str, &str, &str, bool, &str)] = &[
    ("/api/v1/customers", "get", "List customers", false, "200"),
    (
        "/api/v1/customers",
        "post",
        "Register a customer (technician, reviewer, administrator; write scope)",
        true,
        "201",
    ),
    (
        "/api/v1/customers/{id}",
        "get",
        "One customer",
        false,
        "200",
    ),
    (
        "/api/v1/customers/{id}",
        "put",
        "Change a customer",
        true,
        "200",
    ),
    (
        "/api/v1/instruments",
        "get",
        "List instruments (units under test)",
        false,
        "200",
    ),
    (
        "/api/v1/instruments",
        "post",
        "Register an instrument: serial, kind (thermocouple with tc_type, prt with r0_ohm, sprt, indicating, switch), customer_id",
        true,
        "201",
    ),
    (
        "/api/v1/instruments/{serial}",
        "get",
        "One instrument by serial number",
        false,
        "200",
    ),
    (
        "/api/v1/equipment",
        "get",
        "The equipment register",
        false,
        "200",
    ),
    (
        "/api/v1/equipment",
        "post",
        "Register a reference standard, readout or medium (reviewer, administrator)",
        true,
        "201",
    ),
    (
        "/api/v1/equipment/{asset_id}",
        "get",
        "One item with its certificates and uncertainty tables",
        false,
        "200",
    ),
    (
        "/api/v1/equipment/{asset_id}/status",
        "put",
        "Put an item in or out of service (a reason is required to take it out)",
        true,
        "200",
    ),
    (
        "/api/v1/equipment/{asset_id}/certificates",
        "post",
        "Record a calibration certificate: number, issuer, dates, coefficients (cvd, its90, emf_deviation, correction, none) and expanded uncertainty by range",
        true,
        "201",
    ),
    (
        "/api/v1/equipment/{asset_id}/characterisations",
        "post",
        "Record a medium's uniformity and stability by temperature range",
        true,
        "201",
    ),
    ("/api/v1/cmc", "get", "The lab's CMC table", false, "200"),
    (
        "/api/v1/cmc",
        "post",
        "Add a CMC row (administrator)",
        true,
        "201",
    ),
    (
        "/api/v1/runs",
        "get",
        "List runs, newest first",
        false,
        "200",
    ),
    (
        "/api/v1/runs",
        "post",
        "Start a run: the unit under test, reference, readouts, medium, date, procedure, conditions, reference-junction method, tolerance and decision rule (technician, administrator). Equipment out of service or past its due date on the run date is refused.",
        true,
        "201",
    ),
    (
        "/api/v1/runs/{id}",
        "get",
        "A run with its set points, each with reading_count and its raw readings; ?readings=false leaves the readings out",
        false,
        "200",
    ),
    (
        "/api/v1/runs/{id}/set-points/{set_point_id}/readings",
        "get",
        "A set point's raw readings page by page: ?after=position (default 0) and ?limit= (1 to 10 000, default 10 000); answers {set_point_id, total, readings, next_after}",
        false,
        "200",
    ),
    (
        "/api/v1/runs/{id}/set-points",
        "post",
        "Add a set point: {nominal_t_c, version}",
        true,
        "201",
    ),
    (
        "/api/v1/runs/{id}/set-points/{set_point_id}/readings",
        "post",
        "Add readings as JSON {version, readings:[{taken_at, reference_signal, uut_signal, rj_t_c}]} or as text/csv, text/tab-separated-values or text/plain with a header row (reference, uut, optional rj_t_c and time; decimal comma accepted with tab or semicolon separators) and ?version=N",
        true,
        "201",
    ),
    (
        "/api/v1/runs/{id}/set-points/{set_point_id}/readings/file",
        "post",
        "Stream a data logger's file (text/csv, text/tab-separated-values or text/plain with a header row, as for pasted readings) with ?version=N: parsed and checked as it arrives, up to the upload limit (256 MiB by default, --upload-limit-bytes) and 2 000 000 readings, stored all or none; answers {added, total, version, bytes, sha256} and records the file's SHA-256 in the audit trail",
        true,
        "201",
    ),
    (
        "/api/v1/runs/{id}/submit",
        "post",
        "Submit the run for review: {version}; it becomes read-only for its technician",
        true,
        "200",
    ),
    (
        "/api/v1/certificates/{number}/amend",
        "post",
        "Issue the next revision of a certificate from its run's current records: {reason}; the new revision names the one it replaces and why, and the old one stays retrievable, marked as replaced",
        true,
        "201",
    ),
    (
        "/api/v1/review",
        "get",
        "Runs waiting for review, oldest first",
        false,
        "200",
    ),
    (
        "/api/v1/runs/{id}/approve",
        "post",
        "Approve a submitted run and issue its certificate: {version} (reviewer or administrator; never the person who performed the run)",
        true,
        "201",
    ),
    (
        "/api/v1/runs/{id}/return",
        "post",
        "Return a submitted run to its technician: {version, reason}",
        true,
        "200",
    ),
    (
        "/api/v1/certificates/{number}",
        "get",
        "The certificate's frozen snapshot (canonical JSON), with its SHA-256 in X-Certificate-SHA256 and the ETag; ?revision=N for an earlier revision",
        false,
        "200",
    ),
    (
        "/api/v1/certificates/{number}/pdf",
        "get",
        "The certificate as PDF, rendered from the snapshot",
        false,
        "200",
    ),
    (
        "/api/v1/instruments/{serial}/deviation",
        "get",
        "The deviation function of the instrument's current certificate (latest issued, not replaced): serial, certificate_number, revision, issued_on, form, variable, coefficients (coefficients[i] multiplies t_c^i; deviation = indication - reference, °C), covariance, valid_from_t_c, valid_to_t_c, expanded_uncertainty_c, coverage_factor; ETag for cheap polling",
        false,
        "200",
    ),
    (
        "/api/v1/instruments/{serial}/deviation/evaluate",
        "get",
        "Exactly one of ?t_c= (°C) or ?emf_mv= (thermocouples: measured emf, mV, reference junction at 0 °C; t_c is then the temperature solving E_ref(t) + dE(t) = emf, with indicated_t_c and emf_deviation_mv). Answers t_c, deviation_c, correction_c (= -deviation), expanded_uncertainty_c, coverage_factor, certificate_number; 422 outside the validity range, never an extrapolated number",
        false,
        "200",
    ),
    (
        "/api/v1/equipment/{asset_id}/characterisation-runs",
        "post",
        "Record a characterisation run of a bath, furnace or dry block (reviewer or administrator): {characterised_on, temperatures: [{temperature_c, axial: [{height_mm, t_c}], radial_bores_c | radial_differences_c, stability: [{time_s, t_c}], loading_difference_c}]}; answers the uniformity, stability and loading half-widths at each temperature with how they were derived. Budgets using the medium interpolate them between characterised temperatures and refuse set points outside",
        true,
        "201",
    ),
    (
        "/api/v1/equipment/{asset_id}/characterisation-runs",
        "get",
        "The medium's characterisation runs, newest first, with their half-widths",
        false,
        "200",
    ),
    (
        "/api/v1/runs/{id}/switch",
        "put",
        "Settings of a temperature-switch test: {version, nominal_t_c, actuation_direction (rising|falling), contact_action (opens|closes), ramp_rate_c_per_min and time_constant_s, or lag_half_width_c, observed_resolution_c}",
        true,
        "200",
    ),
    (
        "/api/v1/runs/{id}/ramps",
        "post",
        "A ramp through the switching region: {version, direction, readings: [{t_ref_c, state: open|closed}]} or {version, direction, observed_t_c}",
        true,
        "201",
    ),
    (
        "/api/v1/runs/{id}/ramps/{ramp_id}",
        "delete",
        "Remove a ramp from an open switch run: ?version=N",
        false,
        "204",
    ),
    (
        "/api/v1/certificates",
        "get",
        "The certificate register, newest first: ?q= (text in number, serial or customer), from, to (issue dates YYYY-MM-DD), kind (thermocouple, prt, sprt, indicating, switch), outcome (pass, conditional_pass, conditional_fail, fail, no_statement: the least favourable over the set points), equipment (asset id used in any role), limit (1-500, default 50), before (keyset cursor: pass next_before from the previous page)",
        false,
        "200",
    ),
    (
        "/api/v1/equipment/{asset_id}/impact",
        "get",
        "Every certificate (all revisions) whose calibration used the item in any role with a calibration date in ?from=&to= (YYYY-MM-DD), oldest first, with the customer's contact; &format=csv for a CSV download",
        false,
        "200",
    ),
    (
        "/api/v1/instruments/{serial}/history",
        "get",
        "The instrument's certificates (all revisions), the deviation at each set point by calibration date (current revisions) and, between consecutive calibrations, the change and its normalized error E_n = (d2 - d1) / sqrt(U1^2 + U2^2)",
        false,
        "200",
    ),
    (
        "/api/v1/impact",
        "get",
        "Every run that used an equipment item between two dates: ?asset_id=&from=YYYY-MM-DD&to=YYYY-MM-DD",
        false,
        "200",
    ),
];

fn with_records(mut doc: Value) -> Value {
    let problem =
        json!({"application/problem+json": {"schema": {"$ref": "#/components/schemas/Problem"}}});
    for (path, method, summary, has_body, ok) in RECORD_ROUTES {
        let mut operation = json!({
            "summary": summary,
            "security": [{"bearer": []}],
            "responses": {
                *ok: {"description": "Done.", "content": {"application/json": {}}},
                "401": {"description": "No token, or an unknown or revoked one.", "content": problem.clone()},
                "403": {"description": "The token is read-only or the user's role may not do this.", "content": problem.clone()},
                "404": {"description": "No such record.", "content": problem.clone()},
                "409": {"description": "The record changed since it was loaded, is read-only, or the key is taken.", "content": problem.clone()},
                "422": {"description": "Invalid input; `errors` names each field.", "content": problem.clone()}
            }
        });
        if *has_body {
            operation["requestBody"] = json!({"required": true, "content": {"application/json": {"schema": {"type": "object"}}}});
        }
        doc["paths"][*path][*method] = operation;
    }
    doc["components"]["securitySchemes"] = json!({
        "bearer": {"type": "http", "scheme": "bearer",
                   "description": "An API token from `juncture token create`; read scope for GET, write scope for changes."}
    });
    doc
}

/// The document, built once.
pub fn spec() -> &'static Value {
    static SPEC: OnceLock<Value> = OnceLock::new();
    SPEC.get_or_init(|| with_records(build()))
}

/// `GET /api/v1/openapi.json`.
pub async fn document() -> Json<&'static Value> {
    Json(spec())
}
