#!/usr/bin/env bash
# Shared by bench/http.sh and bench/scale.sh (sourced, not run).

need() {
    local cmd="$1" pkg="$2"
    if ! command -v "$cmd" >/dev/null 2>&1; then
        if [ "$(id -u)" = 0 ]; then
            echo "installing $pkg (Debian package) ..." >&2
            apt-get update -qq
            DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "$pkg" >/dev/null
        else
            echo "$cmd is missing: install the Debian package $pkg" >&2
            exit 1
        fi
    fi
}
# Makes the scratch folder $work and stops every process in $pids (and
# removes $work) when the script exits.
start_work() {
    work="$(mktemp -d /tmp/juncture-bench.XXXXXX)"
    pids=()
    cleanup() {
        for pid in "${pids[@]}"; do
            kill "$pid" 2>/dev/null || true
        done
        for pid in "${pids[@]}"; do
            wait "$pid" 2>/dev/null || true
        done
        rm -rf "$work"
    }

    # Waits (at most 30 s) for the "juncture listening on" line; prints the URL.
    listening_url() {
        local out="$1"
        for _ in $(seq 1 300); do
            if grep -q "juncture listening on" "$out" 2>/dev/null; then
                sed -n 's/^juncture listening on \(http[^ ]*\).*/\1/p' "$out" | head -n1
                return 0
            fi
            sleep 0.1
        done
        echo "the server did not start; its output:" >&2
        cat "$out" >&2
        exit 1
    }

    rss_kib() { awk '/^VmRSS/ {print $2}' "/proc/$1/status"; }
    hwm_kib() { awk '/^VmHWM/ {print $2}' "/proc/$1/status"; }

    trap cleanup EXIT INT TERM
}

# ---- wrk ---------------------------------------------------------------------
# Prints "req_per_s p50_ms p99_ms" for one measurement.
measure() {
    local connections="$1" url="$2"
    shift 2
    local threads=2
    [ "$connections" -lt 2 ] && threads=1
    local args=()
    for h in "$@"; do args+=(-H "$h"); done
    wrk -t"$threads" -c"$connections" -d"${DURATION}s" --timeout 5s --latency "${args[@]}" "$url" >"$work/wrk.out"
    if grep -q "Non-2xx" "$work/wrk.out" || ! grep -q "Requests/sec" "$work/wrk.out"; then
        echo "non-2xx answers from $url:" >&2
        cat "$work/wrk.out" >&2
        exit 1
    fi
    python3 - "$work/wrk.out" <<'PY'
import re, sys
text = open(sys.argv[1]).read()
def ms(v):
    m = re.match(r"([\d.]+)(us|ms|s)", v)
    x = float(m.group(1))
    return {"us": x / 1000, "ms": x, "s": x * 1000}[m.group(2)]
rps = float(re.search(r"Requests/sec:\s+([\d.]+)", text).group(1))
p50 = ms(re.search(r"^\s+50%\s+(\S+)", text, re.M).group(1))
p99 = ms(re.search(r"^\s+99%\s+(\S+)", text, re.M).group(1))
print(f"{rps:.0f} {p50:.3f} {p99:.3f}")
PY
}

