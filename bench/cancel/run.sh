#!/usr/bin/env bash
# How soon the CPU goes idle after a request times out (issue 12).
#   bash bench/cancel/run.sh
# Starts the release binary on 127.0.0.1 with a throw-away SQLite data
# directory, a 2 s request timeout and a pair budget far above the default
# (so a request can run long enough to time out), then runs
# bench/cancel/measure.py. Bounded: a few requests, about 20 s in all.
set -euo pipefail
cd "$(dirname "$0")/../.."
source bench/server.sh
start_bench_server bench viewer --request-timeout-s 2 \
  --max-pairs 100000000000 --max-body-bytes 16777216 "$@"
python3 bench/cancel/measure.py "$ADDR" "$KEY" "$SERVER"
