//! Fuzz target `readings`: see `juncture_fuzz::readings` for what it checks.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| juncture_fuzz::readings(data));
