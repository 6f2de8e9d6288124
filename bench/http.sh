#!/usr/bin/env bash
# HTTP load test of Juncture on loopback, with a plain static web server
# (nginx) serving a file of the same size as the practical ceiling.
#
#   bash bench/http.sh                 # 10 s per measurement
#   DURATION=5 bash bench/http.sh      # shorter
#   CERTIFICATES=100000 INSTRUMENTS=10000 bash bench/http.sh
#   BIN=/path/to/juncture bash bench/http.sh     # another build, no cargo
#
# What it does: builds the release binary, creates a temporary database
# with the demo lab and generated certificates, measures start-up (fresh
# file, migrations) and resident memory, starts `juncture serve` on
# 127.0.0.1 only, creates a read token and a browser session, and runs wrk
# (2 threads; 1 and 64 connections) against five endpoints and against
# nginx on another loopback port. Prints one table. Every process it starts
# is stopped on exit. Needs root or the packages wrk and nginx-light (it
# installs them with apt-get when missing and it runs as root).
set -euo pipefail
cd "$(dirname "$0")/.."
# shellcheck source=bench/common.sh
source bench/common.sh

DURATION="${DURATION:-10}"
CERTIFICATES="${CERTIFICATES:-2000}"
INSTRUMENTS="${INSTRUMENTS:-400}"
export SQLX_OFFLINE=true

need wrk wrk
need nginx nginx-light
need curl curl

if [ -n "${BIN:-}" ]; then
    bin="$BIN"
else
    echo "building the release binary ..." >&2
    cargo build --release --quiet
    bin="${CARGO_TARGET_DIR:-target}/release/juncture"
fi

start_work

# ---- start-up on a fresh file (migrations) ---------------------------------
startup_runs=()
for i in 1 2 3 4 5; do
    fresh="$work/fresh-$i.db"
    out="$work/fresh-$i.out"
    start=$(date +%s%N)
    JUNCTURE_LOG=warn "$bin" serve --database "$fresh" --bind 127.0.0.1:0 >"$out" 2>&1 &
    pid=$!
    pids+=("$pid")
    until grep -q "juncture listening on" "$out" 2>/dev/null; do
        if ! kill -0 "$pid" 2>/dev/null; then
            cat "$out" >&2
            exit 1
        fi
        sleep 0.001
    done
    end=$(date +%s%N)
    startup_runs+=("$(( (end - start) / 1000 ))")
    kill "$pid"
    wait "$pid" 2>/dev/null || true
done
startup_sorted=$(printf '%s\n' "${startup_runs[@]}" | sort -n | tr '\n' ' ')

# ---- the database under test -----------------------------------------------
db="$work/bench.db"
"$bin" demo --database "$db" >/dev/null
gen_out=$("$bin" generate --database "$db" --certificates "$CERTIFICATES" --instruments "$INSTRUMENTS" --seed 1)
echo "$gen_out" >&2

out="$work/serve.out"
JUNCTURE_LOG=warn "$bin" serve --database "$db" --bind 127.0.0.1:0 >"$out" 2>&1 &
server=$!
pids+=("$server")
base="$(listening_url "$out")"
sleep 1
idle_rss=$(rss_kib "$server")

token="$("$bin" token create --database "$db" --username demo-reviewer --name bench | tail -n1)"
auth="Authorization: Bearer $token"

serial="GEN-PT-000001"
curl -sf -H "$auth" "$base/api/v1/instruments/$serial/deviation" >"$work/deviation.json"
number="$(python3 -c 'import json,sys; print(json.load(open(sys.argv[1]))["certificate_number"])' "$work/deviation.json")"

# A browser session for the certificate page (sign-in form with its CSRF
# field and cookie).
jar="$work/cookies"
csrf="$(curl -sf -c "$jar" -b "$jar" "$base/sign-in" | sed -n 's/.*name="csrf" value="\([^"]*\)".*/\1/p' | head -n1)"
curl -sf -o /dev/null -c "$jar" -b "$jar" \
    --data-urlencode "csrf=$csrf" --data-urlencode "username=demo-reviewer" \
    --data-urlencode "password=juncture-demo" --data-urlencode "next=/work" "$base/sign-in"
# (curl marks HttpOnly cookies with a "#HttpOnly_" prefix in its jar.)
cookie="Cookie: $(sed 's/^#HttpOnly_//' "$jar" | awk '!/^#/ && NF >= 7 {printf "%s%s=%s", sep, $6, $7; sep="; "}')"
curl -sf -H "$cookie" "$base/certificates/$number" -o "$work/page.html"
if ! grep -q "$number" "$work/page.html"; then
    echo "the certificate page did not answer with the certificate (sign-in failed?)" >&2
    exit 1
fi

# ---- nginx with a static file of the deviation answer's size ---------------
www="$work/www"
mkdir -p "$www"
cp "$work/deviation.json" "$www/deviation.json"
nginx_port=$(python3 -c 'import socket; s=socket.socket(); s.bind(("127.0.0.1", 0)); print(s.getsockname()[1])')
cat >"$work/nginx.conf" <<EOF
daemon off;
master_process on;
worker_processes auto;
user root;
pid $work/nginx.pid;
error_log $work/nginx-error.log warn;
events { worker_connections 1024; }
http {
    access_log off;
    client_body_temp_path $work/nginx-body;
    proxy_temp_path $work/nginx-proxy;
    fastcgi_temp_path $work/nginx-fastcgi;
    uwsgi_temp_path $work/nginx-uwsgi;
    scgi_temp_path $work/nginx-scgi;
    default_type application/json;
    server {
        listen 127.0.0.1:$nginx_port;
        root $www;
    }
}
EOF
nginx -c "$work/nginx.conf" -p "$work" &
pids+=("$!")
for _ in $(seq 1 100); do
    curl -sf -o /dev/null "http://127.0.0.1:$nginx_port/deviation.json" && break
    sleep 0.1
done

declare -A ceiling
results="$work/results"
: >"$results"
for c in 1 64; do
    read -r rps p50 p99 < <(measure "$c" "http://127.0.0.1:$nginx_port/deviation.json")
    ceiling[$c]=$rps
    echo "nginx static file ($(stat -c %s "$www/deviation.json") B)|$c|$rps|$p50|$p99|1.00" >>"$results"
    for spec in \
        "deviation JSON|/api/v1/instruments/$serial/deviation|$auth" \
        "evaluate ?t_c=|/api/v1/instruments/$serial/deviation/evaluate?t_c=95.5|$auth" \
        "certificate JSON|/api/v1/certificates/$number|$auth" \
        "certificate HTML page|/certificates/$number|$cookie" \
        "certificate PDF|/api/v1/certificates/$number/pdf|$auth"; do
        IFS='|' read -r name path header <<<"$spec"
        read -r rps p50 p99 < <(measure "$c" "$base$path" "$header")
        frac=$(python3 -c "print(f'{$rps / ${ceiling[$c]}:.2f}')")
        echo "$name|$c|$rps|$p50|$p99|$frac" >>"$results"
    done
done
load_rss=$(rss_kib "$server")
load_hwm=$(hwm_kib "$server")

echo
echo "Juncture $("$bin" --version | awk '{print $2}'), $(nproc) cores, $(date -u +%Y-%m-%dT%H:%MZ); $DURATION s per line, wrk 2 threads (1 at 1 connection)"
echo "database: $gen_out"
printf '%-34s %5s %10s %9s %9s %9s\n' "endpoint" "conns" "req/s" "p50 ms" "p99 ms" "of nginx"
while IFS='|' read -r name c rps p50 p99 frac; do
    printf '%-34s %5s %10s %9s %9s %9s\n' "$name" "$c" "$rps" "$p50" "$p99" "$frac"
done <"$results"
echo
echo "sizes: deviation JSON $(stat -c %s "$work/deviation.json") B, certificate page $(stat -c %s "$work/page.html") B"
echo "start-up to \"juncture listening on\" with migrations on a fresh file, 5 runs (µs): $startup_sorted"
echo "resident memory: idle ${idle_rss} KiB; after the load ${load_rss} KiB; peak (VmHWM) ${load_hwm} KiB"
