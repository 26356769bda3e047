#!/usr/bin/env bash
# Bounded loopback load test of the HTTP API (wrk from Debian's packages).
#   bash bench/load/run.sh [seconds]
# Starts the release binary on 127.0.0.1 with a throw-away SQLite data
# directory, creates a key, and runs wrk against POST /v1/evaluate
# (10 conductors × 10 segments × 100 points) and POST /v1/sites. On a 2-core
# machine wrk competes with the server for the cores: read the figures as
# a lower bound for a separate client.
set -euo pipefail
cd "$(dirname "$0")/../.."
SECONDS_PER_RUN="${1:-10}"
source bench/server.sh
start_bench_server load assessor
python3 bench/load/make_bodies.py "$WORK"
export FLUXBOUND_KEY="$KEY"
echo "== POST /v1/evaluate (10 conductors x 100 points), ${SECONDS_PER_RUN}s"
BODY_FILE="$WORK/evaluate.json" wrk -t2 -c16 -d"${SECONDS_PER_RUN}s" --latency -s bench/load/post.lua "$ADDR/v1/evaluate"
echo "== POST /v1/sites (examples/site-switch-room.json), ${SECONDS_PER_RUN}s"
BODY_FILE="examples/site-switch-room.json" wrk -t2 -c16 -d"${SECONDS_PER_RUN}s" --latency -s bench/load/post.lua "$ADDR/v1/sites"
