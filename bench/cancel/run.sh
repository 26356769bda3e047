#!/usr/bin/env bash
# How soon the CPU goes idle after a request times out (issue 12).
#   bash bench/cancel/run.sh
# Starts the release binary on 127.0.0.1 with a throw-away SQLite data
# directory, a 2 s request timeout and a pair budget far above the default
# (so a request can run long enough to time out), then runs
# bench/cancel/measure.py. Bounded: a few requests, about 20 s in all.
set -euo pipefail
cd "$(dirname "$0")/../.."
cargo build --release --locked --bin fluxbound >/dev/null
BIN=target/release/fluxbound
WORK="$(mktemp -d)"
trap 'kill "$SERVER" 2>/dev/null || true; rm -rf "$WORK"' EXIT
export FLUXBOUND_RATE_PER_KEY=0
KEY="$("$BIN" keys create --org bench --role viewer --data-dir "$WORK/data")"
"$BIN" serve --listen 127.0.0.1:0 --data-dir "$WORK/data" --request-timeout-s 2 \
  --max-pairs 100000000000 --max-body-bytes 16777216 "$@" >"$WORK/server.log" 2>&1 &
SERVER=$!
for _ in $(seq 1 50); do grep -q "listening on" "$WORK/server.log" && break; sleep 0.1; done
ADDR="$(grep -o 'listening on http://[0-9.:]*' "$WORK/server.log" | sed 's/listening on //')"
python3 bench/cancel/measure.py "$ADDR" "$KEY" "$SERVER"
