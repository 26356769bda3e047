#!/usr/bin/env bash
# Bounded loopback load test of the HTTP API.
#   bash bench/load/run.sh [seconds]
# Needs wrk from Debian's packages (`apt-get install -y wrk`) and python3.
# Starts the release binary on 127.0.0.1 with a throw-away SQLite data
# directory, creates a key, and runs wrk, one after the other in the same
# run, against GET /healthz, POST /v1/evaluate (10 conductors × 10 segments
# × 100 points) and POST /v1/sites. It prints for each requests/s and the
# 99th-percentile latency, the ratio evaluate / healthz in requests/s, and
# the server's CPU time per evaluate request (user + system time of the
# server process from /proc/<pid>/stat before and after the evaluate run,
# divided by the requests wrk completed). On a 2-core machine wrk competes
# with the server for the cores: read throughput as a lower bound for a
# separate client; the CPU per request does not depend on that.
set -euo pipefail
cd "$(dirname "$0")/../.."
SECONDS_PER_RUN="${1:-10}"
command -v wrk >/dev/null || { echo "wrk is missing: apt-get install -y wrk" >&2; exit 1; }
source bench/server.sh
start_bench_server load assessor
python3 bench/load/make_bodies.py "$WORK"
export FLUXBOUND_KEY="$KEY"
TICKS_PER_S="$(getconf CLK_TCK)"

# User + system CPU time of the server so far, in clock ticks.
server_ticks() {
  # The command name (field 2) may hold spaces: count from after its ')'.
  sed 's/^.*) //' "/proc/$SERVER/stat" | awk '{ print $12 + $13 }'
}

# run_wrk NAME OUTFILE wrk-args…: runs wrk, keeps its output, echoes it.
run_wrk() {
  local name="$1" out="$2"
  shift 2
  echo "== $name, ${SECONDS_PER_RUN}s"
  wrk -t2 -c16 -d"${SECONDS_PER_RUN}s" --latency "$@" | tee "$out"
  if grep -q "Non-2xx" "$out"; then echo "!! $name had failed requests" >&2; exit 1; fi
}
rps() { awk '/^Requests\/sec:/ { print $2 }' "$1"; }
p99() { awk '$1 == "99%" { print $2 }' "$1"; }
requests() { awk '/requests in/ { print $1 }' "$1"; }

run_wrk "GET /healthz" "$WORK/healthz.txt" "$ADDR/healthz"
before="$(server_ticks)"
BODY_FILE="$WORK/evaluate.json" run_wrk "POST /v1/evaluate (10 conductors x 10 segments x 100 points)" \
  "$WORK/evaluate.txt" -s bench/load/post.lua "$ADDR/v1/evaluate"
after="$(server_ticks)"
BODY_FILE="$WORK/evaluate-columns.json" run_wrk "POST /v1/evaluate, output.columns resultant_ut,maximum_ut" \
  "$WORK/columns.txt" -s bench/load/post.lua "$ADDR/v1/evaluate"
after_columns="$(server_ticks)"
BODY_FILE="examples/site-switch-room.json" run_wrk "POST /v1/sites (examples/site-switch-room.json)" \
  "$WORK/sites.txt" -s bench/load/post.lua "$ADDR/v1/sites"

echo "== summary (load average: $(cut -d' ' -f1-3 /proc/loadavg))"
printf "%-16s %12s %10s\n" route "requests/s" p99
for r in healthz evaluate columns sites; do
  printf '%-16s %12s %10s\n' "$r" "$(rps "$WORK/$r.txt")" "$(p99 "$WORK/$r.txt")"
done
awk -v e="$(rps "$WORK/evaluate.txt")" -v h="$(rps "$WORK/healthz.txt")" \
  'BEGIN { printf "evaluate / healthz: %.1f %%\n", 100 * e / h }'
awk -v e="$(rps "$WORK/columns.txt")" -v h="$(rps "$WORK/healthz.txt")" \
  'BEGIN { printf "evaluate (columns) / healthz: %.1f %%\n", 100 * e / h }'
cpu_per_request() {
  awk -v t="$2" -v hz="$TICKS_PER_S" -v n="$(requests "$WORK/$1.txt")" -v what="$1" \
    'BEGIN { printf "server CPU per %s request: %.3f ms (%d requests, %.2f s CPU)\n", what, 1000 * t / hz / n, n, t / hz }'
}
cpu_per_request evaluate "$((after - before))"
cpu_per_request columns "$((after_columns - after))"
