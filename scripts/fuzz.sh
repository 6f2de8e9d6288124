#!/usr/bin/env bash
# Runs every cargo-fuzz target for SECONDS_PER_TARGET seconds (default 60)
# and fails on the first crash. Installs cargo-fuzz from crates.io when it is
# missing. Uses the nightly toolchain when rustup has one; otherwise the
# stable toolchain with RUSTC_BOOTSTRAP=1 (cargo-fuzz needs -Z flags).
#
#   scripts/fuzz.sh            # 60 s per target
#   scripts/fuzz.sh 20         # a short run, as CI does
#
# New corpus entries go to fuzz/corpus/<target> (not committed); the
# committed seeds in fuzz/seeds/<target> are read as well. A crash leaves
# its input in fuzz/artifacts/<target>/: copy it to
# fuzz/regressions/<target>/ once the bug is fixed, and `cargo test` replays
# it (tests/app/fuzz_regressions.rs). See fuzz/README.md.
set -euo pipefail
cd "$(dirname "$0")/.."

seconds="${1:-60}"
if ! [[ "$seconds" =~ ^[0-9]+$ ]] || [ "$seconds" -lt 1 ]; then
    echo "usage: $0 [SECONDS_PER_TARGET]" >&2
    exit 2
fi

export SQLX_OFFLINE=true
toolchain=()
if rustup toolchain list 2>/dev/null | grep -q '^nightly'; then
    toolchain=(+nightly)
else
    export RUSTC_BOOTSTRAP=1
fi

if ! cargo fuzz --version >/dev/null 2>&1; then
    echo "== installing cargo-fuzz"
    cargo install cargo-fuzz --locked || cargo install cargo-fuzz
fi

targets=(readings compute_fit compute_uncertainty thermo)
# The code under test is safe Rust: AddressSanitizer would only slow the
# search down. Debug assertions and overflow checks stay on (cargo-fuzz's
# default build).
flags=(--sanitizer none)

echo "== building the fuzz targets"
cargo "${toolchain[@]}" fuzz build "${flags[@]}"

status=0
for target in "${targets[@]}"; do
    echo "== fuzzing $target for ${seconds}s"
    mkdir -p "fuzz/corpus/$target"
    dict=()
    if [ -f "fuzz/dicts/$target.dict" ]; then
        dict=("-dict=fuzz/dicts/$target.dict")
    fi
    if ! cargo "${toolchain[@]}" fuzz run "${flags[@]}" "$target" \
        "fuzz/corpus/$target" "fuzz/seeds/$target" -- \
        -max_total_time="$seconds" -timeout=10 -rss_limit_mb=4096 \
        -print_final_stats=1 "${dict[@]}"; then
        echo "fuzz target $target failed: its input is in fuzz/artifacts/$target/" >&2
        status=1
    fi
done
exit "$status"
