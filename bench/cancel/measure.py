#!/usr/bin/env python3
"""How soon the CPU goes idle after the service gives up on a request.

    python3 bench/cancel/measure.py ADDR KEY PID

ADDR is http://host:port of a `fluxbound serve` started with
--request-timeout-s 2 --max-pairs 100000000000 --max-body-bytes 16777216
(bench/cancel/run.sh does this), KEY a viewer key, PID the server process.
Each scenario sends /v1/evaluate requests far over a second of work, waits
for their answers and samples the server's CPU time (utime + stime from
/proc/PID/stat, in clock ticks of 10 ms) every 5 ms: "idle after" is the
time from the last answer to the last sample in which the CPU time grew.
"""
import json
import os
import sys
import threading
import time
import urllib.error
import urllib.request

TICK_S = 1.0 / os.sysconf("SC_CLK_TCK")
SAMPLE_S = 0.005
WATCH_S = 3.0


def cpu_ticks(pid):
    with open(f"/proc/{pid}/stat") as f:
        fields = f.read().rsplit(")", 1)[1].split()
    return int(fields[11]) + int(fields[12])  # utime, stime


def body(conductors, segments_each, points):
    """Straight conductors of one-metre segments and a grid of points."""
    cs = []
    for k in range(conductors):
        path = [[i - segments_each // 2, 2 * k, 3] for i in range(segments_each + 1)]
        cs.append({"id": f"c{k}", "current": {"rms_a": 100, "phase_deg": 0}, "radius_m": 0.01, "path": path})
    pts = [[i % 1000 - 500, 20 + i // 1000, 1] for i in range(points)]
    return json.dumps({"frequency_hz": 50, "circuits": [], "conductors": cs, "points": pts}).encode()


def post(addr, key, data, out, i):
    req = urllib.request.Request(f"{addr}/v1/evaluate", data=data, method="POST")
    req.add_header("Authorization", f"Bearer {key}")
    req.add_header("Content-Type", "application/json")
    start = time.monotonic()
    try:
        with urllib.request.urlopen(req) as r:
            status, kind = r.status, "ok"
    except urllib.error.HTTPError as e:
        status, kind = e.code, json.loads(e.read()).get("type", "").rsplit(":", 1)[-1]
    out[i] = (status, kind, time.monotonic() - start, time.monotonic())


def scenario(name, addr, key, pid, data, count):
    out = [None] * count
    threads = [threading.Thread(target=post, args=(addr, key, data, out, i)) for i in range(count)]
    t0 = time.monotonic()
    for t in threads:
        t.start()
    samples = []
    while any(t.is_alive() for t in threads):
        samples.append((time.monotonic(), cpu_ticks(pid)))
        time.sleep(SAMPLE_S)
    last_answer = max(o[3] for o in out)
    while time.monotonic() < last_answer + WATCH_S:
        samples.append((time.monotonic(), cpu_ticks(pid)))
        time.sleep(SAMPLE_S)
    grew = [t for (t, c), (_, p) in zip(samples[1:], samples) if c > p]
    idle_after = (grew[-1] - last_answer) if grew and grew[-1] > last_answer else 0.0
    answers = {}
    for status, kind, took, _ in out:
        answers.setdefault(f"{status} {kind}", []).append(took)
    summary = ", ".join(f"{n}× {k} at {min(v):.2f}–{max(v):.2f} s" for k, v in sorted(answers.items()) for n in [len(v)])
    print(f"{name}: {summary}; CPU idle {idle_after * 1000:.0f} ms (±{TICK_S * 1000:.0f}) after the last answer")


def main():
    addr, key, pid = sys.argv[1], sys.argv[2], int(sys.argv[3])
    four = body(4, 25_000, 200_000)  # 1e5 segments × 2e5 points = 2e10 pairs
    one = body(1, 99_999, 200_000)  # the longest path (1e5 vertices): 6.4e6 pairs per chunk
    scenario("A: 1 request, 4 conductors x 25,000 segments x 200,000 points", addr, key, pid, four, 1)
    scenario("B: 1 request, 1 conductor x 100,000 segments x 200,000 points", addr, key, pid, one, 1)
    scenario("C: 8 requests at once, each as A", addr, key, pid, four, 8)


if __name__ == "__main__":
    main()
