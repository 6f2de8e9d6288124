//! Fuzz target `thermo`: see `juncture_fuzz::thermo` for what it checks.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| juncture_fuzz::thermo(data));
