#!/usr/bin/env bash
# Ingest of a large data-logger file: time to accept it, time to compute the
# run's results with it, and the server's peak resident memory.
#
#   bash bench/ingest.sh                    # 1 000 000 readings
#   READINGS=200000 bash bench/ingest.sh
#   BIN=/path/to/juncture bash bench/ingest.sh   # another build, no cargo
#
# What it does: builds the release binary, writes an invented logger file
# (CSV with a time stamp, the reference and the UUT indication per line,
# about 40 bytes a line), creates a database with the demo lab, starts
# `juncture serve` on 127.0.0.1, and uploads the file with curl (streamed
# from disk, `-T`) to a set point of the demo's open run 3 (an indicating
# thermometer against the reference thermometer LTM-DIG-04, 0 °C). Then it
# asks for the run's results. It prints the times curl measured and the
# server's VmRSS/VmHWM before the upload, after it and after the results.
# Needs curl and python3. Every process it starts is stopped on exit.
set -euo pipefail
cd "$(dirname "$0")/.."
# shellcheck source=bench/common.sh
source bench/common.sh

READINGS="${READINGS:-1000000}"
export SQLX_OFFLINE=true
need curl curl

if [ -n "${BIN:-}" ]; then
    bin="$BIN"
else
    echo "building the release binary ..." >&2
    cargo build --release --quiet
    bin="${CARGO_TARGET_DIR:-target}/release/juncture"
fi

start_work

file="$work/logger.csv"
python3 - "$file" "$READINGS" <<'PY'
import random, sys
path, n = sys.argv[1], int(sys.argv[2])
rng = random.Random(7)
with open(path, "w") as f:
    f.write("time,reference,uut\n")
    for i in range(n):
        s = i // 10
        f.write("2026-11-28T%02d:%02d:%02d.%dZ,%.4f,%.3f\n" % (
            (s // 3600) % 24, (s // 60) % 60, s % 60, i % 10,
            -0.0118 + rng.gauss(0, 0.0006), -0.040 + rng.gauss(0, 0.004)))
PY

db="$work/ingest.db"
"$bin" demo --database "$db" >/dev/null
token="$("$bin" token create --database "$db" --username demo-tech --name ingest --scope write | tail -n1)"
out="$work/serve.out"
JUNCTURE_LOG=warn "$bin" serve --database "$db" --bind 127.0.0.1:0 >"$out" 2>&1 &
server=$!
pids+=("$server")
base="$(listening_url "$out")"
sleep 1
rss0=$(rss_kib "$server")
hwm0=$(hwm_kib "$server")

upload_s=$(curl -sS -o "$work/upload.json" -w '%{time_total}' -X POST -T "$file" \
    -H "Authorization: Bearer $token" -H "Content-Type: text/csv" \
    "$base/api/v1/runs/3/set-points/10/readings/file?version=1")
if ! grep -q '"added"' "$work/upload.json"; then
    echo "the upload was refused:" >&2
    cat "$work/upload.json" >&2
    exit 1
fi
rss1=$(rss_kib "$server")
hwm1=$(hwm_kib "$server")

results_s=$(curl -sS -o "$work/results.json" -w '%{time_total}' \
    -H "Authorization: Bearer $token" "$base/api/v1/runs/3/results")
n=$(python3 -c 'import json,sys; r=json.load(open(sys.argv[1])); print([s["n"] for s in r["set_points"]])' "$work/results.json")
rss2=$(rss_kib "$server")
hwm2=$(hwm_kib "$server")

echo
echo "Juncture $("$bin" --version | awk '{print $2}'), $(nproc) cores, $(date -u +%Y-%m-%dT%H:%MZ)"
echo "logger file: $READINGS readings, $(stat -c %s "$file") bytes"
echo "upload answer: $(cat "$work/upload.json")"
echo "accept (upload, parse, check, store; curl time_total): ${upload_s} s"
echo "compute (GET /api/v1/runs/3/results; readings per set point $n): ${results_s} s"
echo "server memory, KiB      VmRSS   VmHWM (peak so far)"
echo "  before the upload     $rss0   $hwm0"
echo "  after the upload      $rss1   $hwm1"
echo "  after the results     $rss2   $hwm2"
