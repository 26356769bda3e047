#!/usr/bin/env bash
# Field kernel beside a C reference of the same closed form and beside the
# sqrt + division ceiling of this CPU, measured in alternation.
#
#   bench/kernel/run.sh [rounds] [runs-per-round]
#
# Builds bench/kernel/ref.c and probe.c with gcc -O3 -march=native -fopenmp
# (plus -fno-math-errno -fno-trapping-math: the floating-point model rustc
# already assumes; neither changes a computed value, but without them gcc
# neither vectorises sqrt nor if-converts the loop), builds the Rust example
# `kernel_pairs` in release, then runs Rust, C and the probe one after the
# other `rounds` times (default 7), each `runs-per-round` timed runs (default
# 3) after a warm-up, all on 2 threads. The case: 10 conductors × 100
# segments × 100,000 points, one frequency (1e8 pairs per run). Prints the
# median and range of pairs/s (wall clock, 2 threads) for each and the ratios
# of the medians; then the same per CPU-second (user + system time of each
# whole process, warm-up included), which a loaded machine disturbs less.
set -euo pipefail
cd "$(dirname "$0")/../.."
rounds=${1:-7}
runs=${2:-3}
threads=2
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT

cflags=(-O3 -march=native -fno-math-errno -fno-trapping-math -fopenmp)
gcc "${cflags[@]}" bench/kernel/ref.c -o "$work/ref" -lm
gcc "${cflags[@]}" bench/kernel/probe.c -o "$work/probe" -lm
cargo build --release --locked -q -p fluxbound-core --example kernel_pairs
rust=target/release/examples/kernel_pairs

echo "# $(date -u +%FT%TZ) $(uname -m), $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2 | xargs)," \
    "$(nproc) cores; gcc $(gcc -dumpfullversion); $(rustc --version)"
echo "# load before: $(cut -d' ' -f1-3 /proc/loadavg)"
export RAYON_NUM_THREADS=$threads OMP_NUM_THREADS=$threads
TIMEFORMAT='%U %S'
# timed NAME PAIRS-PER-PROCESS COMMAND...: wall-clock pairs/s per run into
# NAME.txt, pairs per CPU-second of the whole process into NAME-cpu.txt.
timed() {
    local name=$1 pairs=$2
    shift 2
    { time "$@" 2>/dev/null | awk '{print $2}' >>"$work/$name.txt"; } 2>"$work/time"
    awk -v p="$pairs" '{print p / ($1 + $2)}' "$work/time" >>"$work/$name-cpu.txt"
}
for ((r = 0; r < rounds; r++)); do
    timed rust "$(((runs + 1) * 100000000))" "$rust" "$runs"
    timed c "$(((runs + 1) * 100000000))" "$work/ref" "$runs"
    timed probe "$(((runs + 1) * 800000 * 64 * threads))" "$work/probe" "$runs"
done
echo "# load after: $(cut -d' ' -f1-3 /proc/loadavg)"

median() { sort -g "$1" | awk '{v[NR] = $1} END {print (NR % 2) ? v[(NR + 1) / 2] : (v[NR / 2] + v[NR / 2 + 1]) / 2}'; }
summary() {
    printf '%-28s median %.3e pairs/s  range %.3e – %.3e  (n = %d)\n' "$1" "$(median "$2")" \
        "$(sort -g "$2" | head -1)" "$(sort -g "$2" | tail -1)" "$(wc -l <"$2")"
}
summary "rust kernel ($("$rust" 0 2>&1 >/dev/null | head -1 | sed 's/kernel variant: //; s/,.*//'))" "$work/rust.txt"
summary "C reference" "$work/c.txt"
summary "sqrt+div ceiling (probe)" "$work/probe.txt"
ratios() {
    awk -v r="$(median "$work/rust$1.txt")" -v c="$(median "$work/c$1.txt")" -v p="$(median "$work/probe$1.txt")" \
        'BEGIN {printf "rust / C = %.2f   rust / ceiling = %.2f   C / ceiling = %.2f\n", r / c, r / p, c / p}'
}
ratios ""
echo "# per CPU-second (pairs per core-second), one value per process"
summary "rust kernel" "$work/rust-cpu.txt"
summary "C reference" "$work/c-cpu.txt"
summary "sqrt+div ceiling (probe)" "$work/probe-cpu.txt"
ratios -cpu
