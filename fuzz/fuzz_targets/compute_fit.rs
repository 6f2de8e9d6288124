//! Fuzz target `compute_fit`: see `juncture_fuzz::compute_fit` for what it checks.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| juncture_fuzz::compute_fit(data));
