//! Fuzz target `compute_uncertainty`: see `juncture_fuzz::compute_uncertainty` for what it checks.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| juncture_fuzz::compute_uncertainty(data));
