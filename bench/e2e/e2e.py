"""End-to-end comparison for bench/e2e/run.sh (see README.md "Performance").

One geometry, three programs computing the same RMS phasor field:

- fluxbound: the release CLI, `evaluate --columns resultant_ut,maximum_ut
  --compact` on a document file, output to a file. Timed as the whole
  process (start, read, parse, check, compute, write).
- magpylib: `magpylib.current.Polyline` sources; the phasor field is
  B = B_re + j*B_im, B_re with every conductor carrying rms*cos(phase),
  B_im with rms*sin(phase): two real evaluations (`getB` on two
  Collections). Points are passed in chunks of MAGPY_CHUNK so magpylib's
  segment-by-point temporaries stay within memory. Timed: the two getB
  calls and the resultant/maximum.
- numpy: the vertex form of the straight filament (the formula of
  crates/fluxbound-core/src/field/kernel.rs), per segment over all points
  as arrays, the points split in two halves on a two-thread ThreadPool
  (numpy releases the GIL in its loops). Timed: the field and the
  resultant/maximum.

The Python timings leave out document building and interpreter start, which
favours them. Rounds alternate fluxbound, numpy, magpylib; the script prints
median and range of each and the ratios of the medians, after checking the
three agree (maximum relative difference of resultant and maximum).

magpylib takes mu0 from scipy (the 2019 SI value); fluxbound and the numpy
form use mu0/4pi = 1e-7 exactly, 5.5e-10 relative apart. magpylib's values
are rescaled by 4*pi*1e-7/mu0 before comparing, and the raw difference is
printed too.
"""

import json
import math
import os
import statistics
import subprocess
import sys
import tempfile
import time
from concurrent.futures import ThreadPoolExecutor

import numpy as np

CONDUCTORS = 10
SEGMENTS_PER_CONDUCTOR = 100  # 1,000 segments in all
GRID = 200  # 200 x 200 = 40,000 points
RMS_A = 400.0
MAGPY_CHUNK = 4000
MU0_OVER_4PI = 1e-7  # T m / A, as the kernel


def geometry():
    """Ten wavy conductors along x at z ~ 3 m; points on a plane at z = 1 m."""
    paths = []
    for k in range(CONDUCTORS):
        t = np.linspace(0.0, 1.0, SEGMENTS_PER_CONDUCTOR + 1)
        x = 50.0 * t
        y = 0.3 * k + 0.1 * np.sin(2 * math.pi * 5 * t + k)
        z = 3.0 + 0.2 * np.cos(2 * math.pi * 3 * t + 0.5 * k)
        paths.append(np.stack([x, y, z], axis=1))
    phases = [(0.0, -120.0, 120.0)[k % 3] for k in range(CONDUCTORS)]
    gx, gy = np.meshgrid(np.linspace(-5.0, 55.0, GRID), np.linspace(-10.0, 13.0, GRID), indexing="ij")
    points = np.stack([gx.ravel(), gy.ravel(), np.full(GRID * GRID, 1.0)], axis=1)
    return paths, phases, points


def document(paths, phases, points):
    return {
        "frequency_hz": 50,
        "conductors": [
            {
                "id": f"c{k}",
                "current": {"rms_a": RMS_A, "phase_deg": phases[k]},
                "radius_m": 0.01,
                "path": path.tolist(),
            }
            for k, path in enumerate(paths)
        ],
        "points": points.tolist(),
    }


def summary(b_re, b_im):
    """Resultant and ellipse major semi-axis (RMS), same units as B."""
    r2 = np.einsum("ij,ij->i", b_re, b_re)
    i2 = np.einsum("ij,ij->i", b_im, b_im)
    ri = np.einsum("ij,ij->i", b_re, b_im)
    resultant = np.sqrt(r2 + i2)
    maximum = np.sqrt(np.maximum(0.0, 0.5 * (r2 + i2 + np.hypot(r2 - i2, 2.0 * ri))))
    return resultant, np.minimum(maximum, resultant)


# ---- numpy closed form ---------------------------------------------------

def unit_field(path, pts):
    """Field of a unit current along `path` at `pts`, T (vertex form)."""
    out = np.zeros_like(pts)
    a = path[0] - pts
    na = np.sqrt(np.einsum("ij,ij->i", a, a))
    for v in path[1:]:
        b = v - pts
        nb = np.sqrt(np.einsum("ij,ij->i", b, b))
        c = np.cross(a, b)
        dot = np.einsum("ij,ij->i", a, b)
        ab = na * nb
        c2 = np.einsum("ij,ij->i", c, c)
        obtuse = dot < 0.0
        # (a x b)(|a|+|b|) / (|a||b| (|a||b| + a.b)); where a.b < 0 the
        # factor |a||b| + a.b is replaced by |a x b|^2 / (|a||b| - a.b).
        num = np.where(obtuse, (na + nb) * (ab - dot), na + nb)
        den = np.where(obtuse, ab * c2, ab * (ab + dot))
        out += c * (num / den)[:, None]
        a, na = b, nb
    return out * MU0_OVER_4PI


def numpy_field(paths, phases, pts):
    re = np.zeros_like(pts)
    im = np.zeros_like(pts)
    for path, ph in zip(paths, phases):
        g = unit_field(path, pts)
        re += RMS_A * math.cos(math.radians(ph)) * g
        im += RMS_A * math.sin(math.radians(ph)) * g
    return re, im


def run_numpy(paths, phases, points, pool):
    halves = np.array_split(points, 2)
    parts = list(pool.map(lambda h: numpy_field(paths, phases, h), halves))
    re = np.concatenate([p[0] for p in parts])
    im = np.concatenate([p[1] for p in parts])
    res, mx = summary(re * 1e6, im * 1e6)
    return res, mx


# ---- magpylib --------------------------------------------------------------

def run_magpylib(paths, phases, points):
    import magpylib

    def collection(part):
        return magpylib.Collection(
            *[
                magpylib.current.Polyline(current=RMS_A * part(math.radians(ph)), vertices=path)
                for path, ph in zip(paths, phases)
            ]
        )

    c_re, c_im = collection(math.cos), collection(math.sin)
    re = np.concatenate([c_re.getB(points[s:s + MAGPY_CHUNK]) for s in range(0, len(points), MAGPY_CHUNK)])
    im = np.concatenate([c_im.getB(points[s:s + MAGPY_CHUNK]) for s in range(0, len(points), MAGPY_CHUNK)])
    return summary(re * 1e6, im * 1e6)


# ---- fluxbound -------------------------------------------------------------

def run_fluxbound(binary, doc_path, out_path):
    with open(out_path, "wb") as out:
        subprocess.run(
            [binary, "evaluate", "--input", doc_path, "--columns", "resultant_ut,maximum_ut", "--compact"],
            stdout=out,
            check=True,
        )


def read_fluxbound(out_path):
    with open(out_path) as f:
        cols = json.load(f)["columns"]
    res, mx = cols["resultant_ut"], cols["maximum_ut"]
    if any(v is None for v in res) or any(v is None for v in mx):
        sys.exit("fluxbound reported a point inside a conductor: the geometry must keep points outside")
    return np.array(res), np.array(mx)


def rel_diff(x, y):
    return float(np.max(np.abs(x - y) / np.abs(y)))


def timed(f, *args):
    t0 = time.perf_counter()
    out = f(*args)
    return time.perf_counter() - t0, out


def describe(name, times):
    ms = [t * 1e3 for t in times]
    print(f"{name:>10}: median {statistics.median(ms):10.1f} ms  range {min(ms):.1f}-{max(ms):.1f} ms  (n={len(ms)})")


def main():
    binary = sys.argv[1]
    rounds = int(os.environ.get("ROUNDS", "3"))
    paths, phases, points = geometry()
    pairs = CONDUCTORS * SEGMENTS_PER_CONDUCTOR * len(points)
    work = tempfile.mkdtemp(prefix="fluxbound-e2e-")
    doc_path = os.path.join(work, "evaluate.json")
    out_path = os.path.join(work, "out.json")
    with open(doc_path, "w") as f:
        json.dump(document(paths, phases, points), f)
    print(f"{CONDUCTORS * SEGMENTS_PER_CONDUCTOR} segments x {len(points)} points = {pairs:.3g} pairs; "
          f"document {os.path.getsize(doc_path) / 1e6:.1f} MB in {doc_path}")

    pool = ThreadPoolExecutor(max_workers=2)
    times = {"fluxbound": [], "numpy": [], "magpylib": []}
    results = {}
    for r in range(rounds):
        t, _ = timed(run_fluxbound, binary, doc_path, out_path)
        times["fluxbound"].append(t)
        t, results["numpy"] = timed(run_numpy, paths, phases, points, pool)
        times["numpy"].append(t)
        t, results["magpylib"] = timed(run_magpylib, paths, phases, points)
        times["magpylib"].append(t)
        print(f"round {r + 1}/{rounds}: " + ", ".join(f"{k} {v[-1] * 1e3:.1f} ms" for k, v in times.items()))
    results["fluxbound"] = read_fluxbound(out_path)
    print(f"fluxbound output {os.path.getsize(out_path) / 1e6:.2f} MB")

    from scipy.constants import mu_0
    scale = 4 * math.pi * 1e-7 / mu_0
    fr, fm = results["fluxbound"]
    nr, nm = results["numpy"]
    mr, mm = results["magpylib"]
    print("agreement (max relative difference over all points):")
    print(f"  fluxbound vs numpy:    resultant {rel_diff(fr, nr):.2e}  maximum {rel_diff(fm, nm):.2e}")
    print(f"  fluxbound vs magpylib: resultant {rel_diff(fr, mr * scale):.2e}  maximum {rel_diff(fm, mm * scale):.2e}"
          f"  (unscaled mu0: {rel_diff(fr, mr):.2e})")
    worst = max(rel_diff(fr, nr), rel_diff(fm, nm), rel_diff(fr, mr * scale), rel_diff(fm, mm * scale))
    print("times:")
    for k, v in times.items():
        describe(k, v)
    med = {k: statistics.median(v) for k, v in times.items()}
    print(f"ratios of medians: magpylib / fluxbound = {med['magpylib'] / med['fluxbound']:.0f}x, "
          f"numpy(2 threads) / fluxbound = {med['numpy'] / med['fluxbound']:.1f}x")
    if worst > 1e-10:
        sys.exit(f"the three disagree by {worst:.2e} > 1e-10: the comparison is not fair")


if __name__ == "__main__":
    main()
