//! `juncture validate`: runs the known-answer checks of the numerical core
//! inside this binary and prints a dated report (ISO/IEC 17025:2017 7.11.2:
//! software is validated before use and after every change). Exit status
//! is non-zero when any check fails.

use juncture::metrology::validation::{self, AREAS};

#[derive(serde::Serialize)]
struct CheckJson<'a> {
    area: &'a str,
    name: &'a str,
    source: &'a str,
    expected: Option<f64>,
    obtained: Option<f64>,
    tolerance: f64,
    unit: &'a str,
    passed: bool,
    note: Option<&'a str>,
}

/// Runs the checks; prints text or JSON; returns whether all passed.
///
/// # Errors
/// When the JSON cannot be written.
pub fn run(json: bool, verbose: bool) -> Result<bool, String> {
    let started = std::time::Instant::now();
    let report = validation::run();
    let elapsed = started.elapsed();
    let date = juncture::store::now_timestamp();
    let passed = report.passed();
    if json {
        let checks: Vec<CheckJson<'_>> = report
            .checks
            .iter()
            .map(|c| CheckJson {
                area: c.area,
                name: &c.name,
                source: c.source,
                expected: c.expected.is_finite().then_some(c.expected),
                obtained: c.obtained.filter(|v| v.is_finite()),
                tolerance: c.tolerance,
                unit: c.unit,
                passed: c.passed,
                note: c.note.as_deref(),
            })
            .collect();
        let doc = serde_json::json!({
            "software": "juncture",
            "version": juncture::VERSION,
            "run_at": date,
            "checks_total": report.checks.len(),
            "checks_failed": report.failed_count(),
            "verdict": if passed { "pass" } else { "fail" },
            "checks": checks,
        });
        println!(
            "{}",
            serde_json::to_string_pretty(&doc).map_err(|e| e.to_string())?
        );
        return Ok(passed);
    }
    println!("Juncture {} software validation report", juncture::VERSION);
    println!("run at {date} on {}", std::env::consts::ARCH);
    println!();
    println!("{:<20} {:>7} {:>7}", "area", "checks", "passed");
    for area in AREAS {
        let (total, ok) = report.area_counts(area);
        println!("{area:<20} {total:>7} {ok:>7}");
    }
    println!();
    for check in &report.checks {
        if verbose || !check.passed {
            println!("{check}");
        }
    }
    if !verbose && passed {
        println!(
            "(every check passed; --verbose lists each with its expected and obtained value and source)"
        );
    }
    println!();
    println!(
        "verdict: {} ({} of {} checks passed, {:.2} s)",
        if passed { "PASS" } else { "FAIL" },
        report.checks.len() - report.failed_count(),
        report.checks.len(),
        elapsed.as_secs_f64()
    );
    Ok(passed)
}
