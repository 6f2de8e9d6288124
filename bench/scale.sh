#!/usr/bin/env bash
# Juncture at scale: a database of generated certificates (100 000 over
# 10 000 instruments by default), the register search with and without its
# filters (first and deep pages), an instrument's history, and the size of
# the database per certificate; with SQLite's query plan of every register
# filter.
#
#   bash bench/scale.sh
#   CERTIFICATES=20000 INSTRUMENTS=2000 DURATION=3 bash bench/scale.sh
#   DB=/tmp/keep.db bash bench/scale.sh     # reuse (or keep) the database
#   BIN=/path/to/juncture bash bench/scale.sh   # another build, no cargo
#
# Latencies come from wrk over one connection on loopback (DURATION s per
# line; p50 and p99 of the answers). Every process it starts is stopped on
# exit. Needs wrk and python3 (wrk is installed with apt-get when missing
# and this runs as root).
set -euo pipefail
cd "$(dirname "$0")/.."
# shellcheck source=bench/common.sh
source bench/common.sh

DURATION="${DURATION:-5}"
CERTIFICATES="${CERTIFICATES:-100000}"
INSTRUMENTS="${INSTRUMENTS:-10000}"
export SQLX_OFFLINE=true

need wrk wrk
need curl curl
need /usr/bin/time time

if [ -n "${BIN:-}" ]; then
    bin="$BIN"
else
    echo "building the release binary ..." >&2
    cargo build --release --quiet
    bin="${CARGO_TARGET_DIR:-target}/release/juncture"
fi
start_work

db="${DB:-$work/scale.db}"
if [ ! -s "$db" ]; then
    "$bin" demo --database "$db" >/dev/null
    gen_out=$(/usr/bin/time -f "%e s elapsed, peak RSS %M KiB" -o "$work/gen.time" \
        "$bin" generate --database "$db" --certificates "$CERTIFICATES" --instruments "$INSTRUMENTS" --seed 1)
    echo "$gen_out ($(cat "$work/gen.time"))" >&2
else
    gen_out="existing database $db"
fi

# Size per certificate, with the write-ahead log folded in.
sizes=$(python3 - "$db" <<'PY'
import sqlite3, sys, os
con = sqlite3.connect(sys.argv[1])
con.execute("PRAGMA wal_checkpoint(TRUNCATE)")
n, snap = con.execute("SELECT COUNT(*), AVG(LENGTH(snapshot)) FROM certificate").fetchone()
readings = con.execute("SELECT COUNT(*) FROM reading").fetchone()[0]
size = os.path.getsize(sys.argv[1])
print(f"{size / 1e6:.1f} MB for {n} certificates: {size / n / 1024:.1f} KiB per certificate "
      f"(its snapshot {snap / 1024:.1f} KiB on average; {readings} raw readings in all)")
PY
)

out="$work/serve.out"
JUNCTURE_LOG=warn "$bin" serve --database "$db" --bind 127.0.0.1:0 >"$out" 2>&1 &
server=$!
pids+=("$server")
base="$(listening_url "$out")"
token="$("$bin" token create --database "$db" --username demo-reviewer --name "scale-$$" | tail -n1)"
auth="Authorization: Bearer $token"

# A customer name fragment and an instrument near the middle.
fragment="$(curl -sf -H "$auth" "$base/api/v1/certificates?limit=1&before=50000" \
    | python3 -c 'import json,sys; print(json.load(sys.stdin)["certificates"][0]["customer"].split()[0][:6])')"
serial="GEN-PT-$(printf '%06d' $(( INSTRUMENTS / 2 + 1 - (INSTRUMENTS / 2) % 3 )))"
deep=$(( CERTIFICATES / 50 ))

results="$work/results"
: >"$results"
while IFS='|' read -r name path; do
    [ -z "$name" ] && continue
    read -r rps p50 p99 < <(measure 1 "$base$path" "$auth")
    bytes=$(curl -sf -H "$auth" "$base$path" | wc -c)
    echo "$name|$path|$rps|$p50|$p99|$bytes" >>"$results"
done <<EOF
register, first page (50 lines)|/api/v1/certificates
register, deep page (before=$deep)|/api/v1/certificates?before=$deep
register, text in customer names|/api/v1/certificates?q=$fragment
register, text matching one serial|/api/v1/certificates?q=GEN-TC-000002
register, kind=prt|/api/v1/certificates?kind=prt
register, kind=prt deep page|/api/v1/certificates?kind=prt&before=$deep
register, outcome=fail|/api/v1/certificates?outcome=fail
register, outcome=conditional_fail|/api/v1/certificates?outcome=conditional_fail
register, equipment=LTM-DIG-04|/api/v1/certificates?equipment=LTM-DIG-04
register, equipment=LTM-DMM-06 deep page|/api/v1/certificates?equipment=LTM-DMM-06&before=$deep
register, issued in March 2019|/api/v1/certificates?from=2019-03-01&to=2019-03-31
register, kind=indicating + outcome=pass + 2021|/api/v1/certificates?kind=indicating&outcome=pass&from=2021-01-01&to=2021-12-31
instrument history ($serial)|/api/v1/instruments/$serial/history
EOF

echo
echo "Juncture $("$bin" --version | awk '{print $2}'), $(nproc) cores, $(date -u +%Y-%m-%dT%H:%MZ); one connection, $DURATION s per line"
echo "database: $gen_out"
echo "size: $sizes"
printf '%-44s %8s %9s %9s %9s\n' "query" "req/s" "p50 ms" "p99 ms" "bytes"
while IFS='|' read -r name path rps p50 p99 bytes; do
    printf '%-44s %8s %9s %9s %9s\n' "$name" "$rps" "$p50" "$p99" "$bytes"
done <"$results"

# The register statements' plans for each filter, with the SQLite that
# Juncture is built with (examples/query_plan.rs reads the statements from
# the committed sqlx query data: exactly what the binary runs).
echo
echo "query plans of the register (EXPLAIN QUERY PLAN):"
if [ -n "${PLAN_BIN:-}" ]; then
    "$PLAN_BIN" "$db" .sqlx
else
    cargo run --release --quiet --example query_plan -- "$db" .sqlx
fi
