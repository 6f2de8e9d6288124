//! Replays the inputs kept in `fuzz/regressions/<target>/` (inputs that once
//! broke a fuzz target, and the seed inputs of `fuzz/seeds/<target>/`)
//! through the checks the fuzz targets run, without libFuzzer, so that
//! `cargo test` keeps every fixed bug fixed. The checks are the fuzz crate's
//! own file, included here.

#[path = "../../fuzz/src/checks.rs"]
mod checks;

use std::path::Path;

/// Runs `check` on every file in `fuzz/<kind>/<target>/`; returns how many.
fn replay(kind: &str, target: &str, check: fn(&[u8])) -> usize {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("fuzz")
        .join(kind)
        .join(target);
    let Ok(entries) = std::fs::read_dir(&dir) else {
        return 0;
    };
    let mut files: Vec<_> = entries
        .map(|e| e.expect("directory entry").path())
        .collect();
    files.sort();
    for file in &files {
        let data = std::fs::read(file).expect("readable input");
        let outcome = std::panic::catch_unwind(|| check(&data));
        assert!(outcome.is_ok(), "{} fails its fuzz check", file.display());
    }
    files.len()
}

fn replay_all(target: &str, check: fn(&[u8])) -> usize {
    replay("seeds", target, check) + replay("regressions", target, check)
}

#[test]
fn readings_inputs_pass() {
    // Three seed tables (fuzz/seeds/readings).
    assert!(replay_all("readings", checks::readings) >= 3);
}

#[test]
fn compute_fit_inputs_pass() {
    assert!(replay_all("compute_fit", checks::compute_fit) >= 3);
}

#[test]
fn compute_uncertainty_inputs_pass() {
    assert!(replay_all("compute_uncertainty", checks::compute_uncertainty) >= 3);
}

#[test]
fn thermo_inputs_pass() {
    assert!(replay_all("thermo", checks::thermo) >= 7);
}
