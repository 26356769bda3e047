#!/usr/bin/env python3
"""Generate ``fixture.json``: a magpylib-computed conformance fixture.

Every conductor is a thin-filament polyline carrying a sinusoidal RMS phasor
current I = rms_a * exp(j * phase_deg). Current flows from the first vertex to
the last. By linearity the complex RMS field phasor is B = B_re + j B_im, where
B_re is magpylib's field with each conductor carrying rms_a * cos(phase) and
B_im the field with rms_a * sin(phase). Both are computed with
``magpylib.current.Polyline`` sources in two separate ``magpylib.Collection``s
(positions in m, current in A, B in T) and converted to microtesla.

Per evaluation point the fixture stores
  re_ut, im_ut   B_re and B_im in uT,
  resultant_ut   sqrt(|B_re|^2 + |B_im|^2),
  maximum_ut     sqrt((|B|^2 + |B.B|)/2), B.B the non-conjugated complex dot
                 product: the RMS major semi-axis of the polarisation ellipse.

Independent checks (nothing from magpylib is reused):
  * every candidate point is re-evaluated with mpmath (MP_DPS digits) from the
    closed-form straight-segment Biot-Savart field; candidate points where
    magpylib differs from it by more than KEEP_TOL (relative, on resultant,
    maximum and each vector component scaled by the resultant) are dropped;
  * candidate points whose field is a strong cancellation of segment
    contributions (condition number > KAPPA_MAX) are dropped, so that any sane
    float64 implementation can reach the 1e-9 test tolerance;
  * for QUAD_POINTS points of every case the Biot-Savart integrand is
    integrated numerically along each segment with scipy.integrate.quad_vec and
    must agree with magpylib to QUAD_TOL on the resultant (asserted).

Run from this folder:  python3 generate.py
The output is deterministic (fixed numpy seed).
"""

import json
import math
import platform
import re
import sys
import warnings

import magpylib
import mpmath
import numpy as np
import scipy
from scipy import integrate
from scipy.constants import mu_0 as MU0

SEED = 20240917
MIN_DIST = 0.02  # m, minimum point-to-segment distance
AXIS_REL = 1e-3  # minimum lateral/axial ratio for points on a segment's axis extension
KAPPA_MAX = 1e5  # maximum cancellation condition number accepted
KEEP_TOL = 1e-9  # magpylib vs mpmath: points beyond this are dropped
QUAD_TOL = 1e-8  # magpylib vs scipy quad: asserted
QUAD_POINTS = 3  # points per case checked with quad
MP_DPS = 40
T_TO_UT = 1e6

rng = np.random.default_rng(SEED)
mpmath.mp.dps = MP_DPS


# --------------------------------------------------------------------------
# geometry helpers
# --------------------------------------------------------------------------


def rotation():
    """Uniformly random rotation matrix from a random unit quaternion."""
    q = rng.normal(size=4)
    w, x, y, z = q / np.linalg.norm(q)
    return np.array(
        [
            [1 - 2 * (y * y + z * z), 2 * (x * y - z * w), 2 * (x * z + y * w)],
            [2 * (x * y + z * w), 1 - 2 * (x * x + z * z), 2 * (y * z - x * w)],
            [2 * (x * z - y * w), 2 * (y * z + x * w), 1 - 2 * (x * x + y * y)],
        ]
    )


def unit():
    v = rng.normal(size=3)
    return v / np.linalg.norm(v)


def place(path, R=None, t=(0.0, 0.0, 0.0)):
    p = np.asarray(path, dtype=float)
    if R is not None:
        p = p @ R.T
    return p + np.asarray(t, dtype=float)


def rnd(x, decimals=6):
    """Round coordinates (keeps fixture readable); -0.0 normalised to 0.0."""
    return np.round(np.asarray(x, dtype=float), decimals) + 0.0


def cond(path, rms_a, phase_deg, decimals=6):
    path = rnd(path, decimals)
    seg = np.linalg.norm(np.diff(path, axis=0), axis=1)
    assert len(path) >= 2 and np.all(seg > 0), "zero-length segment"
    return {
        "path": [[float(c) for c in v] for v in path],
        "current": {"rms_a": float(rms_a), "phase_deg": float(phase_deg)},
    }


def circle(radius, nvert, phase0=0.0):
    """Closed regular polygon with nvert vertices (last == first)."""
    ang = phase0 + 2 * math.pi * np.arange(nvert - 1) / (nvert - 1)
    pts = np.stack([radius * np.cos(ang), radius * np.sin(ang), np.zeros_like(ang)], 1)
    return np.vstack([pts, pts[:1]])


def rect(a, b):
    return np.array(
        [[-a / 2, -b / 2, 0], [a / 2, -b / 2, 0], [a / 2, b / 2, 0], [-a / 2, b / 2, 0], [-a / 2, -b / 2, 0]],
        dtype=float,
    )


def phasor_sum(currents):
    """Sum of (rms, phase_deg) phasors -> (rms, phase_deg)."""
    z = sum(r * complex(math.cos(math.radians(p)), math.sin(math.radians(p))) for r, p in currents)
    return abs(z), math.degrees(math.atan2(z.imag, z.real))


def catenary(x0, x1, y, z_attach, sag, n):
    x = np.linspace(x0, x1, n)
    xm, half = (x0 + x1) / 2, (x1 - x0) / 2
    z = z_attach - sag * (1 - ((x - xm) / half) ** 2)
    return np.stack([x, np.full_like(x, y), z], 1)


# --------------------------------------------------------------------------
# configurations
# --------------------------------------------------------------------------

CASES = []


def case(name, conductors, n, dmin, dmax, centroid_frac=0.25):
    CASES.append(dict(name=name, conductors=conductors, n=n, dmin=dmin, dmax=dmax, centroid_frac=centroid_frac))


def build_cases():
    # 1 single segment, arbitrary orientation
    a = rng.uniform(-2, 2, 3)
    case("single_segment_oblique_3_7m", [cond([a, a + 3.7 * unit()], 250.0, 30.0)], 20, 0.025, 30.0)

    # 2 short vertical segment, 1 A
    case("single_segment_short_vertical_1a", [cond([[0, 0, -0.25], [0, 0, 0.25]], 1.0, 0.0)], 12, 0.025, 5.0)

    # 3 long straight wire 2 km
    case("long_straight_wire_2km_along_x", [cond([[-1000, 0, 10], [1000, 0, 10]], 1000.0, 0.0)], 25, 0.025, 300.0)

    # 4 long oblique wire with a phase angle
    a = rng.uniform(-5, 5, 3)
    d = unit()
    case("long_oblique_wire_800m_phase_m75", [cond([a - 400 * d, a + 400 * d], 1500.0, -75.0)], 20, 0.03, 200.0)

    # 5 square loop 1 m
    case("square_loop_1m_xy_plane", [cond(rect(1.0, 1.0), 10.0, 0.0)], 24, 0.025, 20.0)

    # 6 tilted rectangle
    case(
        "rectangular_loop_4x1_5m_tilted",
        [cond(place(rect(4.0, 1.5), rotation(), rng.uniform(-3, 3, 3)), 75.0, 45.0)],
        22,
        0.025,
        60.0,
    )

    # 7 polygonal circle, 24 sides
    case(
        "circle_polygon_24_sides_r0_75m",
        [cond(place(circle(0.75, 25), t=(0, 0, 1.0)), 400.0, -30.0)],
        24,
        0.025,
        40.0,
    )

    # 8 polygonal circle, 59 sides (60 vertices), tilted
    case(
        "circle_polygon_59_sides_r2m_tilted",
        [cond(place(circle(2.0, 60, 0.3), rotation(), (1.0, -2.0, 0.5)), 120.0, 100.0)],
        24,
        0.025,
        80.0,
    )

    # 9 L-shaped run
    case("l_shaped_run_12m_by_7m", [cond([[0, 0, 0], [12, 0, 0], [12, 7, 0]], 630.0, 0.0)], 20, 0.025, 100.0)

    # 10 zig-zag
    x = np.arange(11.0)
    y = 0.5 * (-1.0) ** np.arange(11) + rng.uniform(-0.1, 0.1, 11)
    z = rng.uniform(-0.2, 0.2, 11)
    case("zigzag_11_vertices", [cond(np.stack([x, y, z], 1), 315.0, -10.0)], 22, 0.025, 50.0)

    # 11 helix, 5 turns, 60 vertices, tilted
    t = np.linspace(0, 5 * 2 * math.pi, 60)
    helix = np.stack([0.3 * np.cos(t), 0.3 * np.sin(t), 0.25 * t / (2 * math.pi)], 1)
    case("helix_5_turns_60_vertices_tilted", [cond(place(helix, rotation()), 50.0, 0.0)], 24, 0.025, 20.0)

    # 12 go-and-return pair, antiparallel paths, same phase
    case(
        "go_return_pair_antiparallel_100m",
        [
            cond([[-50, -0.15, 0.5], [50, -0.15, 0.5]], 600.0, 0.0),
            cond([[50, 0.15, 0.5], [-50, 0.15, 0.5]], 600.0, 0.0),
        ],
        22,
        0.025,
        200.0,
    )

    # 13 go-and-return as parallel paths with 180 deg phase on the return
    case(
        "go_return_pair_parallel_paths_phase_180",
        [
            cond([[0, -20, 0.2], [0, 20, 0.2]], 350.0, 15.0),
            cond([[0.25, -20, 0.2], [0.25, 20, 0.2]], 350.0, -165.0),
        ],
        20,
        0.025,
        100.0,
    )

    # 14 hairpin (go-and-return as one open polyline)
    case(
        "hairpin_single_polyline_40m",
        [cond([[-20, -0.05, 0], [20, -0.05, 0], [20, 0.05, 0], [-20, 0.05, 0]], 160.0, 0.0)],
        20,
        0.025,
        80.0,
    )

    # 15 balanced flat three-phase, buried cables
    case(
        "three_phase_flat_buried_0_4m_spacing",
        [cond([[-100, y, -1.0], [100, y, -1.0]], 1200.0, ph) for y, ph in ((-0.4, 0.0), (0.0, -120.0), (0.4, 120.0))],
        26,
        0.025,
        150.0,
    )

    # 16 balanced flat overhead line 500 m
    case(
        "three_phase_flat_overhead_500m_span",
        [cond([[-250, y, 15.0], [250, y, 15.0]], 800.0, ph) for y, ph in ((-6.0, 0.0), (0.0, -120.0), (6.0, 120.0))],
        28,
        0.03,
        400.0,
    )

    # 17 trefoil
    s = 0.1
    tre = [(0.0, s / math.sqrt(3)), (-s / 2, -s / (2 * math.sqrt(3))), (s / 2, -s / (2 * math.sqrt(3)))]
    case(
        "trefoil_cable_50m_0_1m_side",
        [cond([[-25, y, z - 0.8], [25, y, z - 0.8]], 300.0, ph) for (y, z), ph in zip(tre, (0.0, -120.0, 120.0))],
        24,
        0.025,
        80.0,
    )

    # 18 unbalanced three-phase with neutral
    ph_i = [(100.0, 0.0), (80.0, -115.0), (130.0, 118.0)]
    n_rms, n_ph = phasor_sum(ph_i)
    n_ph = n_ph + 180.0 if n_ph <= 0 else n_ph - 180.0  # neutral returns the residual
    conds = [cond([[1.0, -15, z], [1.0, 15, z]], r, p) for (r, p), z in zip(ph_i, (2.3, 2.2, 2.1))]
    conds.append(cond([[1.0, -15, 2.0], [1.0, 15, 2.0]], round(n_rms, 6), round(n_ph, 6)))
    case("unbalanced_three_phase_with_neutral_vertical_stack", conds, 24, 0.025, 60.0)

    # 19 double-circuit tower, low-reactance phasing
    conds = []
    for y, phases, amps in ((-5.0, (0.0, -120.0, 120.0), 900.0), (5.0, (120.0, -120.0, 0.0), 700.0)):
        for z, ph in zip((32.0, 26.0, 20.0), phases):
            conds.append(cond([[-200, y, z], [200, y, z]], amps, ph))
    case("double_circuit_three_phase_tower_400m", conds, 28, 0.05, 400.0)

    # 20 double circuit with sagging conductors and earth wires (21 vertices each)
    conds = []
    for y, phases, amps in ((-6.0, (0.0, -120.0, 120.0), 1100.0), (6.0, (0.0, -120.0, 120.0), 1050.0)):
        for z, ph in zip((34.0, 28.0, 22.0), phases):
            conds.append(cond(catenary(-150, 150, y, z, 8.0, 21), amps, ph))
    conds.append(cond(catenary(-150, 150, -3.0, 40.0, 6.5, 21), 32.0, 151.0))
    conds.append(cond(catenary(-150, 150, 3.0, 40.0, 6.5, 21), 29.0, 147.0))
    case("double_circuit_catenary_with_earth_wires", conds, 30, 0.05, 300.0)

    # 21 two three-phase circuits crossing at right angles
    conds = [cond([[-60, y, 0.0], [60, y, 0.0]], 500.0, ph) for y, ph in ((-0.3, 0.0), (0.0, -120.0), (0.3, 120.0))]
    conds += [cond([[x, -60, 2.0], [x, 60, 2.0]], 420.0, ph) for x, ph in ((-0.3, 30.0), (0.0, -90.0), (0.3, 150.0))]
    case("two_three_phase_circuits_crossing", conds, 28, 0.025, 100.0)

    # 22 busbar run with bends, 5000 A
    conds = []
    for y, ph in ((-0.25, 0.0), (0.0, -120.0), (0.25, 120.0)):
        conds.append(
            cond([[0, y, 0], [6, y, 0], [6, y, 2.5], [10, y, 2.5], [13, y + 3, 2.5], [13, y + 8, 2.5]], 5000.0, ph)
        )
    case("busbar_run_with_bends_5000a", conds, 28, 0.025, 50.0)

    # 23 tiny square loop, 1 cm
    case(
        "tiny_square_loop_1cm",
        [cond(place(rect(0.01, 0.01), rotation(), (0.1, 0.2, -0.05)), 1.0, 0.0, decimals=7)],
        20,
        0.025,
        0.5,
    )

    # 24 tiny zig-zag, 1 cm
    zz = np.array([[0, 0, 0], [0.0025, 0.003, 0], [0.005, 0, 0.001], [0.0075, 0.003, 0], [0.01, 0, 0]])
    case("tiny_zigzag_1cm", [cond(place(zz, rotation()), 2.5, 60.0, decimals=7)], 16, 0.025, 1.0)

    # 25 tiny three-phase traces, 1 cm long, 3 mm spacing
    case(
        "tiny_three_phase_traces_1cm",
        [cond([[0, y, 0], [0.01, y, 0]], 5.0, ph, decimals=7) for y, ph in ((-0.003, 0.0), (0.0, -120.0), (0.003, 120.0))],
        16,
        0.025,
        0.8,
    )

    # 26 large rectangular loop 500 m x 200 m
    case("large_rectangular_loop_500m_by_200m", [cond(rect(500.0, 200.0), 2000.0, -45.0)], 28, 0.05, 600.0)

    # 27 large three-phase line with an angle tower
    conds = []
    u1 = np.array([1.0, 0.0, 0.0])
    u2 = np.array([math.cos(math.radians(25)), math.sin(math.radians(25)), 0.0])
    for off, ph in ((-8.0, 0.0), (0.0, -120.0), (8.0, 120.0)):
        n1 = np.array([0.0, 1.0, 0.0]) * off
        n2 = np.array([-u2[1], u2[0], 0.0]) * off
        corner = (n1 + n2) / 2 + np.array([0, 0, 18.0])
        conds.append(cond([n1 - 500 * u1 + [0, 0, 18.0], corner, n2 + 500 * u2 + [0, 0, 18.0]], 1000.0, ph))
    case("large_three_phase_line_500m_with_angle_tower", conds, 28, 0.05, 500.0)

    # 28 twelve random-walk conductors, random currents 1..5000 A
    conds = []
    for _ in range(12):
        nv = int(rng.integers(3, 9))
        start = rng.uniform(-10, 10, 3)
        steps = rng.normal(size=(nv - 1, 3)) * rng.uniform(0.5, 4.0)
        path = np.vstack([start, start + np.cumsum(steps, axis=0)])
        amps = round(float(10 ** rng.uniform(0, math.log10(5000))), 3)
        conds.append(cond(path, amps, round(float(rng.uniform(-180, 180)), 1)))
    case("random_walk_12_conductors", conds, 36, 0.025, 100.0)

    # 29 quadrature crossed wires -> elliptical polarisation
    case(
        "quadrature_crossed_wires_phase_90",
        [cond([[-30, 0, 0.5], [30, 0, 0.5]], 100.0, 0.0), cond([[0, -30, -0.5], [0, 30, -0.5]], 100.0, 90.0)],
        24,
        0.025,
        30.0,
    )

    # 30 planar rectangular spiral
    pts = []
    w = 2.0
    for k in range(8):
        a = w - 0.2 * k
        pts += [[-a, -a + (0.2 if k else 0.0), 0], [a, -a, 0], [a, a, 0], [-a + 0.2, a, 0]]
    pts.append([-2.0 + 0.2 * 8, -2.0 + 0.2 * 8, 0])
    spiral = np.array(pts, dtype=float)
    spiral[:, 0] *= 1.5
    case("planar_rectangular_spiral_33_vertices", [cond(place(spiral, rotation()), 20.0, -60.0)], 24, 0.025, 10.0)

    # 31 vertical riser with horizontal feeder, single-phase with a separate return route
    go = [[0, 0, 0], [0, 0, 10], [20, 0, 10], [20, 5, 10], [20, 5, 1]]
    ret = [[20.4, 5, 1], [20.4, 5.4, 10.4], [0.4, 0.4, 10.4], [0.4, 0.4, 0]]
    case(
        "riser_and_feeder_with_separate_return",
        [cond(go, 250.0, -20.0), cond(ret, 250.0, 160.0)],
        24,
        0.025,
        60.0,
    )

    # 32 cable tray with three trefoil circuits
    conds = []
    for cx, amps, phases in (
        (-0.3, 400.0, (0.0, -120.0, 120.0)),
        (0.0, 250.0, (-30.0, -150.0, 90.0)),
        (0.3, 600.0, (5.0, -115.0, 125.0)),
    ):
        s = 0.06
        tri = [(0.0, s / math.sqrt(3)), (-s / 2, -s / (2 * math.sqrt(3))), (s / 2, -s / (2 * math.sqrt(3)))]
        for (dy, dz), ph in zip(tri, phases):
            conds.append(cond([[-15, cx + dy, 3.0 + dz], [15, cx + dy, 3.0 + dz], [15, cx + dy, 0.0 + dz]], amps, ph))
    case("cable_tray_three_trefoil_circuits", conds, 30, 0.025, 60.0)


# --------------------------------------------------------------------------
# field evaluation
# --------------------------------------------------------------------------


def segments(conductors):
    """List of (conductor index, a, b) for all segments."""
    out = []
    for ci, c in enumerate(conductors):
        p = np.array(c["path"])
        for k in range(len(p) - 1):
            out.append((ci, p[k], p[k + 1]))
    return out


def currents(conductors):
    re_, im_ = [], []
    for c in conductors:
        r, ph = c["current"]["rms_a"], math.radians(c["current"]["phase_deg"])
        re_.append(r * math.cos(ph))
        im_.append(r * math.sin(ph))
    return re_, im_


def geometry_ok(p, segs):
    for _, a, b in segs:
        d = b - a
        t = float(np.dot(p - a, d) / np.dot(d, d))
        tc = min(max(t, 0.0), 1.0)
        dist = np.linalg.norm(p - (a + tc * d))
        if dist < MIN_DIST:
            return False
        if t < 0.0 or t > 1.0:
            lateral = np.linalg.norm(p - (a + t * d))
            if lateral < AXIS_REL * dist:
                return False
    return True


def candidate_points(spec, segs, count):
    verts = np.vstack([np.array(c["path"]) for c in spec["conductors"]])
    centroid = verts.mean(axis=0)
    out = []
    while len(out) < count:
        if rng.uniform() < spec["centroid_frac"]:
            anchor = centroid
        else:
            _, a, b = segs[int(rng.integers(len(segs)))]
            anchor = a + rng.uniform() * (b - a)
        dist = math.exp(rng.uniform(math.log(spec["dmin"]), math.log(spec["dmax"])))
        p = rnd(anchor + dist * unit())
        if geometry_ok(p, segs):
            out.append(p)
    return out


def magpylib_field(conductors, pts):
    """B_re, B_im (T) at pts from two separate magpylib collections."""
    re_, im_ = currents(conductors)
    out = []
    for cur in (re_, im_):
        col = magpylib.Collection(
            *[magpylib.current.Polyline(current=i, vertices=c["path"]) for c, i in zip(conductors, cur)]
        )
        out.append(np.asarray(col.getB(np.asarray(pts)), dtype=float).reshape(len(pts), 3))
    return out


def derived(bre, bim):
    """(resultant, maximum) in the same unit as the inputs (float64)."""
    s_re, s_im = float(np.dot(bre, bre)), float(np.dot(bim, bim))
    s = s_re + s_im
    bb = abs(complex(s_re - s_im, 2.0 * float(np.dot(bre, bim))))
    return math.sqrt(s), math.sqrt((s + bb) / 2.0)


def seg_unit_field_f64(p, a, b):
    """Closed-form field of a unit-current segment / (mu0/4pi), float64."""
    r1, r2 = p - a, p - b
    n1, n2 = np.linalg.norm(r1), np.linalg.norm(r2)
    return np.cross(r1, b - a) * -1.0 * (n1 + n2) / (n1 * n2 * (n1 * n2 + np.dot(r1, r2)))


def kappa(p, segs, re_, im_, res_t):
    """Cancellation condition number: sum of |segment contributions| / |total|."""
    acc_re = acc_im = 0.0
    for ci, a, b in segs:
        m = np.linalg.norm(seg_unit_field_f64(p, a, b)) * MU0 / (4 * math.pi)
        acc_re += abs(re_[ci]) * m
        acc_im += abs(im_[ci]) * m
    return math.hypot(acc_re, acc_im) / res_t


def mp_field(p, segs, re_, im_):
    """B_re, B_im (uT) as mpf triples, closed-form segment law in mpmath."""
    mp = mpmath.mpf
    P = [mp(float(v)) for v in p]
    k = mp(MU0) / (4 * mpmath.pi) * mp(T_TO_UT)
    bre = [mp(0)] * 3
    bim = [mp(0)] * 3
    for ci, a, b in segs:
        r1 = [P[i] - mp(float(a[i])) for i in range(3)]
        r2 = [P[i] - mp(float(b[i])) for i in range(3)]
        n1 = mpmath.sqrt(r1[0] ** 2 + r1[1] ** 2 + r1[2] ** 2)
        n2 = mpmath.sqrt(r2[0] ** 2 + r2[1] ** 2 + r2[2] ** 2)
        dot = r1[0] * r2[0] + r1[1] * r2[1] + r1[2] * r2[2]
        f = (n1 + n2) / (n1 * n2 * (n1 * n2 + dot))
        cr = [r1[1] * r2[2] - r1[2] * r2[1], r1[2] * r2[0] - r1[0] * r2[2], r1[0] * r2[1] - r1[1] * r2[0]]
        ire, iim = mp(re_[ci]), mp(im_[ci])
        for i in range(3):
            g = cr[i] * f * k
            bre[i] += ire * g
            bim[i] += iim * g
    return bre, bim


def mp_derived(bre, bim):
    s_re = sum(x * x for x in bre)
    s_im = sum(x * x for x in bim)
    dot = sum(x * y for x, y in zip(bre, bim))
    s = s_re + s_im
    bb = mpmath.sqrt((s_re - s_im) ** 2 + 4 * dot**2)
    return mpmath.sqrt(s), mpmath.sqrt((s + bb) / 2)


def quad_field(p, segs, re_, im_):
    """B_re, B_im (uT) by adaptive quadrature of the Biot-Savart integrand."""
    k = MU0 / (4 * math.pi) * T_TO_UT
    bre = np.zeros(3)
    bim = np.zeros(3)
    for ci, a, b in segs:
        d = b - a

        def integrand(s, a=a, d=d):
            r = p - (a + s * d)
            return np.cross(d, r) / np.linalg.norm(r) ** 3

        t0 = float(np.dot(p - a, d) / np.dot(d, d))
        brk = [t0] if 0.0 < t0 < 1.0 else None
        scale = np.linalg.norm(seg_unit_field_f64(p, a, b))
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            val, _ = integrate.quad_vec(
                integrand, 0.0, 1.0, epsabs=1e-15 * scale, epsrel=1e-14, norm="max", points=brk, limit=2000
            )
        bre += re_[ci] * k * val
        bim += im_[ci] * k * val
    return bre, bim


def rel(x, ref):
    return abs(float(x) - float(ref)) / abs(float(ref))


# --------------------------------------------------------------------------
# main
# --------------------------------------------------------------------------


def main():
    build_cases()
    assert len(CASES) >= 24
    names = [c["name"] for c in CASES]
    assert len(set(names)) == len(names)

    worst_mp = 0.0  # over kept points: resultant / maximum / components
    worst_quad = 0.0
    worst_mp_all = 0.0  # over all candidates that passed the geometry filter
    dropped_mp = dropped_kappa = 0
    kappa_max_kept = 0.0
    out_cases = []
    for spec in CASES:
        conds = spec["conductors"]
        assert 1 <= len(conds) <= 12
        assert all(2 <= len(c["path"]) <= 60 for c in conds)
        segs = segments(conds)
        re_, im_ = currents(conds)
        cands = candidate_points(spec, segs, 3 * spec["n"])
        bre_t, bim_t = magpylib_field(conds, cands)
        kept_pts, kept_exp = [], []
        case_worst = 0.0
        for p, br, bi in zip(cands, bre_t, bim_t):
            if len(kept_pts) == spec["n"]:
                break
            br_ut, bi_ut = br * T_TO_UT, bi * T_TO_UT
            res, mx = derived(br_ut, bi_ut)
            kap = kappa(p, segs, re_, im_, res / T_TO_UT)
            if kap > KAPPA_MAX:
                dropped_kappa += 1
                continue
            mre, mim = mp_field(p, segs, re_, im_)
            mres, mmx = mp_derived(mre, mim)
            comp = max(abs(float(mpmath.mpf(float(x)) - y)) for x, y in zip(list(br_ut) + list(bi_ut), mre + mim))
            err = max(rel(res, mres), rel(mx, mmx), comp / float(mres))
            worst_mp_all = max(worst_mp_all, err)
            if err > KEEP_TOL:
                dropped_mp += 1
                continue
            case_worst = max(case_worst, err)
            kappa_max_kept = max(kappa_max_kept, kap)
            kept_pts.append([float(v) for v in p])
            kept_exp.append(
                {
                    "re_ut": [float(v) for v in br_ut],
                    "im_ut": [float(v) for v in bi_ut],
                    "resultant_ut": float(res),
                    "maximum_ut": float(mx),
                }
            )
        assert len(kept_pts) == spec["n"], f"{spec['name']}: only {len(kept_pts)} points kept"
        assert 10 <= len(kept_pts) <= 40

        # second independent check: numerical quadrature on a few points
        q_worst = 0.0
        for p, e in list(zip(kept_pts, kept_exp))[:QUAD_POINTS]:
            qre, qim = quad_field(np.array(p), segs, re_, im_)
            qres, _ = derived(qre, qim)
            q_worst = max(q_worst, rel(e["resultant_ut"], qres))
        assert q_worst <= QUAD_TOL, f"{spec['name']}: quad disagrees {q_worst:.3e}"
        worst_quad = max(worst_quad, q_worst)
        worst_mp = max(worst_mp, case_worst)
        print(
            f"{spec['name']:55s} cond={len(conds):2d} seg={len(segs):3d} pts={len(kept_pts):2d} "
            f"mp={case_worst:.2e} quad={q_worst:.2e}"
        )
        out_cases.append({"name": spec["name"], "conductors": conds, "points": kept_pts, "expected": kept_exp})

    fixture = {
        "source": (
            f"magpylib {magpylib.__version__} (numpy {np.__version__}, "
            f"python {platform.python_version()}), generated by generate.py"
        ),
        "units": {"length": "m", "current": "A RMS", "field": "uT RMS"},
        "cases": out_cases,
    }
    text = json.dumps(fixture, indent=1)
    # put numeric vectors on one line: [1.0, 2.0, 3.0]
    text = re.sub(r"\[\s+([-+0-9.eE,\s]+?)\s+\]", lambda m: "[" + ", ".join(x.strip() for x in m.group(1).split(",")) + "]", text)
    assert json.loads(text) == fixture
    with open("fixture.json", "w", encoding="utf-8") as f:
        f.write(text + "\n")

    npts = sum(len(c["points"]) for c in out_cases)
    print(f"\nmagpylib {magpylib.__version__}, numpy {np.__version__}, scipy {scipy.__version__}, "
          f"mpmath {mpmath.__version__}, python {platform.python_version()}")
    print(f"mu_0 used by magpylib (scipy.constants): {MU0!r} (rel. to 4*pi*1e-7: {MU0 / (4e-7 * math.pi) - 1:+.3e})")
    print(f"cases: {len(out_cases)}, points: {npts}, fixture bytes: {len(text) + 1}")
    print(f"dropped candidates: {dropped_kappa} (cancellation > {KAPPA_MAX:g}), {dropped_mp} (magpylib vs mpmath > {KEEP_TOL:g})")
    print(f"largest cancellation condition number among kept points: {kappa_max_kept:.3e}")
    print(f"worst magpylib vs mpmath over all screened candidates: {worst_mp_all:.3e}")
    print(f"worst magpylib vs mpmath, kept points (resultant, maximum, components/resultant): {worst_mp:.3e}")
    print(f"worst magpylib vs scipy quad_vec, resultant: {worst_quad:.3e}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
