#!/usr/bin/env bash
# Where the time of one `fluxbound evaluate --columns resultant_ut,maximum_ut`
# goes, by phase: samples of perf (DWARF call graphs, 4 kHz) attributed to
# the first phase function on each sample's stack.
#   bash bench/e2e/profile.sh DOCUMENT.json   # e.g. the one e2e.py prints
# Needs `perf` and the release binary (bash bench/e2e/run.sh builds it).
set -euo pipefail
cd "$(dirname "$0")/../.."
DOC=${1:?usage: profile.sh DOCUMENT.json}
DATA=$(mktemp /tmp/fluxbound-e2e-perf.XXXXXX)
/usr/bin/time -f "wall %e s, user %U s, sys %S s, peak RSS %M KiB" \
  target/release/fluxbound evaluate --input "$DOC" --columns resultant_ut,maximum_ut --compact >/dev/null
perf record -q -F 4000 --call-graph dwarf,16384 -o "$DATA" \
  target/release/fluxbound evaluate --input "$DOC" --columns resultant_ut,maximum_ut --compact >/dev/null
perf script -i "$DATA" 2>/dev/null | python3 -c '
import sys, collections
# Innermost-first stacks; a sample belongs to the first phase found walking out.
phases = [
    ("kernel (field::try_evaluate)", ("field::try_evaluate", "field::evaluate_with", "unit_field")),
    ("warnings (model_warnings)", ("model_warnings",)),
    ("validate (validate_request)", ("validate_request",)),
    ("parse (parse_json)", ("parse_json",)),
    ("read input", ("read_input",)),
    ("write (write_evaluated)", ("write_evaluated",)),
]
count = collections.Counter()
total = 0
stack = []
def flush():
    global total
    if not stack:
        return
    total += 1
    for name, keys in phases:
        if any(k in f for f in stack for k in keys):
            count[name] += 1
            return
    count["other (start-up, exit, rayon idle, kernel page faults)"] += 1
for line in sys.stdin:
    if not line.strip():
        flush(); stack = []
    elif line.startswith(("\t", " ")):
        stack.append(line.strip())
flush()
for name, n in count.most_common():
    print(f"{100.0 * n / total:5.1f} %  {name}")
print(f"({total} samples)")
'
rm -f "$DATA"
