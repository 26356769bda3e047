#!/usr/bin/env bash
# End to end: `fluxbound evaluate --columns resultant_ut,maximum_ut` on
# 1,000 segments x 40,000 points against magpylib and a two-thread numpy
# closed form, alternating, with an agreement check.
#   bash bench/e2e/run.sh            # ROUNDS=3 by default
# Builds the release binary, makes a venv under /tmp from the pinned
# requirements.txt beside this script, then runs e2e.py (2-4 minutes a
# round on 2 cores, nearly all of it magpylib).
set -euo pipefail
cd "$(dirname "$0")/../.."
VENV=${VENV:-/tmp/fluxbound-e2e-venv}
if [ ! -x "$VENV/bin/python" ]; then
  python3 -m venv "$VENV"
  "$VENV/bin/pip" install -q -r bench/e2e/requirements.txt
fi
cargo build --release --locked --bin fluxbound
uptime
# Keep numpy's own BLAS threads out of the way: the script gives numpy its
# two threads explicitly.
OMP_NUM_THREADS=1 OPENBLAS_NUM_THREADS=1 "$VENV/bin/python" bench/e2e/e2e.py target/release/fluxbound
