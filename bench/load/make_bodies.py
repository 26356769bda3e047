"""Writes the request bodies of the load test (invented geometry).

evaluate.json: 10 three-phase-like conductors of 10 segments each, 100 points.
evaluate-columns.json: the same, answered as two columns (resultant and
maximum per point) instead of one object per point.
"""
import json, math, sys

out = sys.argv[1]
conductors = []
for k in range(10):
    path = [[2.0 * j, 0.15 * k, 2.5 + 0.05 * math.sin(j)] for j in range(11)]
    conductors.append({"id": f"c{k}", "radius_m": 0.01, "path": path,
                       "current": {"rms_a": 400.0, "phase_deg": -120.0 * (k % 3)}})
points = [[0.2 * i, -1.0 - 0.01 * i, 1.0] for i in range(100)]
doc = {"frequency_hz": 50, "conductors": conductors, "points": points}
with open(f"{out}/evaluate.json", "w") as f:
    json.dump(doc, f)
with open(f"{out}/evaluate-columns.json", "w") as f:
    json.dump({**doc, "output": {"columns": ["resultant_ut", "maximum_ut"]}}, f)
