# Sourced by the bench scripts: builds the release binary and starts it on
# 127.0.0.1 with a throw-away SQLite data directory.
#   start_bench_server ORG ROLE [serve flags…]
# sets BIN, WORK, KEY (a key of ROLE in ORG), SERVER (the pid) and ADDR
# (http://127.0.0.1:PORT); the server and WORK go when the script exits.
start_bench_server() {
  local org="$1" role="$2"
  shift 2
  cargo build --release --locked --bin fluxbound >/dev/null
  BIN=target/release/fluxbound
  WORK="$(mktemp -d)"
  trap 'kill "$SERVER" 2>/dev/null || true; rm -rf "$WORK"' EXIT
  export FLUXBOUND_RATE_PER_KEY=0
  KEY="$("$BIN" keys create --org "$org" --role "$role" --data-dir "$WORK/data")"
  "$BIN" serve --listen 127.0.0.1:0 --data-dir "$WORK/data" "$@" >"$WORK/server.log" 2>&1 &
  SERVER=$!
  for _ in $(seq 1 50); do grep -q "listening on" "$WORK/server.log" && break; sleep 0.1; done
  ADDR="$(grep -o 'listening on http://[0-9.:]*' "$WORK/server.log" | sed 's/listening on //')"
}
