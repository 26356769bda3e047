#!/usr/bin/env python3
"""Generate ``inductance.json``: closed-form inductances for the passive-loop tests.

Nothing here uses Fluxbound's code. Every value is a textbook closed form,
evaluated with scipy (float64) or mpmath (50 digits), and each kind is
cross-checked by an independent numerical integration with scipy.integrate
(asserted). mu0 = 4*pi*1e-7 H/m exactly, the value the Rust code uses (not
scipy.constants.mu_0, which is the CODATA value).

1. Coaxial circular loops, radii R and r, axial distance d (Maxwell; Jackson,
   Classical Electrodynamics; Grover, Inductance Calculations):
     M = mu0 sqrt(R r) [(2/k - k) K(k) - (2/k) E(k)],  k^2 = 4 R r / ((R + r)^2 + d^2).
   scipy.special.ellipk/ellipe take the parameter m = k^2. Near k = 1 the
   complement 1 - m = ((R - r)^2 + d^2)/((R + r)^2 + d^2) is formed without
   cancellation and K comes from ellipkm1(1 - m).
   Cross-check: Neumann's formula for two circles reduces to one integral,
     M = (mu0 R r / 2) * int_0^{2 pi} cos(phi) / sqrt(R^2 + r^2 - 2 R r cos(phi) + d^2) dphi,
   integrated with scipy.integrate.quad (rtol 1e-12).
2. Self-inductance of a circle of radius R of round wire of radius a, uniform
   current: the textbook approximation mu0 R (ln(8R/a) - 7/4) (same sources),
   and, for the regularised Neumann integral the Rust code computes
   (distance sqrt(d^2 + g^2), g = a exp(-1/4)), its exact value for a circle,
   which is Maxwell's M for two coaxial circles of radius R at distance g.
3. A straight wire of length 2l along y (centred) and a coplanar rectangle
   x in [d, d + w], |y| <= h/2. Flux per ampere of the finite wire, derived
   from the finite-segment field (Griffiths, Introduction to
   Electrodynamics, Ex. 5.5): integrating over y gives
   (mu0/(4 pi x)) * 2 [sqrt(x^2 + c1^2) - sqrt(x^2 + c2^2)], c1 = l + h/2,
   c2 = l - h/2, and over x with the antiderivative
   F(x, c) = sqrt(x^2 + c^2) - c ln((c + sqrt(x^2 + c^2))/x):
     M = (mu0/(2 pi)) [F(x, c1) - F(x, c2)] from x = d to d + w  (mpmath, 50 digits).
   The infinite-wire value (mu0 h/(2 pi)) ln((d + w)/d) is stored beside it.
   Cross-check: scipy.integrate.dblquad of the Ex. 5.5 field over the rectangle.

Run from this folder:  python3 generate_inductance.py
Deterministic: no random numbers.
"""

import json
import math
import platform

import mpmath
import numpy as np
import scipy
from scipy import integrate, special

MU0 = 4.0e-7 * math.pi
mpmath.mp.dps = 50


def maxwell_coaxial(R, r, d):
    m1 = ((R - r) ** 2 + d * d) / ((R + r) ** 2 + d * d)
    m = 4.0 * R * r / ((R + r) ** 2 + d * d)
    k = math.sqrt(m)
    big_k = special.ellipkm1(m1)
    big_e = special.ellipe(m)
    return float(MU0 * math.sqrt(R * r) * ((2.0 / k - k) * big_k - (2.0 / k) * big_e))


def neumann_coaxial(R, r, d):
    f = lambda p: math.cos(p) / math.sqrt(R * R + r * r - 2.0 * R * r * math.cos(p) + d * d)
    # The integrand peaks at phi = 0 and 2 pi; integrate over [-pi, pi]
    # with a break at the peak.
    a, _ = integrate.quad(f, -math.pi, 0.0, epsabs=0, epsrel=1e-12, limit=500)
    b, _ = integrate.quad(f, 0.0, math.pi, epsabs=0, epsrel=1e-12, limit=500)
    return MU0 * R * r / 2.0 * (a + b)


def finite_wire_rectangle(l, d, w, h):
    l, d, w, h = (mpmath.mpf(repr(v)) for v in (l, d, w, h))
    c1, c2 = l + h / 2, l - h / 2
    F = lambda x, c: mpmath.sqrt(x * x + c * c) - c * mpmath.log((c + mpmath.sqrt(x * x + c * c)) / x)
    val = (F(d + w, c1) - F(d + w, c2)) - (F(d, c1) - F(d, c2))
    return float(4 * mpmath.pi * mpmath.mpf("1e-7") / (2 * mpmath.pi) * val)


def finite_wire_rectangle_quad(l, d, w, h):
    # Griffiths Ex. 5.5 at (x, y): B = mu0/(4 pi x) (sin t2 - sin t1).
    def field(y, x):
        return MU0 / (4 * math.pi * x) * ((l - y) / math.hypot(x, l - y) + (l + y) / math.hypot(x, l + y))

    v, _ = integrate.dblquad(field, d, d + w, -h / 2, h / 2, epsabs=0, epsrel=1e-12)
    return v


def coaxial_cases():
    cases = [
        ("near_equal_d_0.01R", 1.0, 1.0, 0.01),
        ("near_unequal", 1.0, 0.98, 0.01),
        ("mid", 1.0, 0.5, 0.5),
        ("far_d_5R", 1.0, 1.0, 5.0),
        ("harmonic_source_and_loop", 0.5, 0.4, 0.1),
    ]
    out = []
    for name, R, r, d in cases:
        m = maxwell_coaxial(R, r, d)
        q = neumann_coaxial(R, r, d)
        rel = abs(m - q) / abs(m)
        assert rel < 1e-10, (name, m, q, rel)
        print(f"coaxial {name}: M = {m!r} H, Neumann quad differs by {rel:.1e}")
        out.append({"name": name, "big_r_m": R, "small_r_m": r, "d_m": d, "m_h": m})
    return out


def self_cases():
    out = []
    for R, a in [(1.0, 0.01), (1.0, 0.001), (0.4, 0.0004)]:
        g = a * math.exp(-0.25)
        textbook = MU0 * R * (math.log(8.0 * R / a) - 1.75)
        exact = maxwell_coaxial(R, R, g)
        q = neumann_coaxial(R, R, g)
        assert abs(exact - q) / exact < 1e-10, (R, a, exact, q)
        print(f"self R/a = {R / a:g}: textbook {textbook!r}, regularised {exact!r} ({(textbook - exact) / exact:.2e})")
        out.append({"big_r_m": R, "wire_radius_m": a, "textbook_h": textbook, "regularised_h": exact})
    return out


def wire_cases():
    out = []
    for name, l, d, w, h in [("near_two_radii", 1000.0, 0.02, 1.0, 2.0), ("moderate", 1000.0, 0.5, 1.0, 2.0)]:
        finite = finite_wire_rectangle(l, d, w, h)
        q = finite_wire_rectangle_quad(l, d, w, h)
        assert abs(finite - q) / finite < 1e-10, (name, finite, q)
        infinite = MU0 * h / (2 * math.pi) * math.log((d + w) / d)
        print(f"wire {name}: finite {finite!r}, quad differs {abs(finite - q) / finite:.1e}, infinite {infinite!r}")
        out.append({"name": name, "half_length_m": l, "d_m": d, "w_m": w, "h_m": h, "finite_h": finite, "infinite_h": infinite})
    return out


def main():
    doc = {
        "source": (
            f"generate_inductance.py; python {platform.python_version()}, scipy {scipy.__version__}, "
            f"numpy {np.__version__}, mpmath {mpmath.__version__}; mu0 = 4 pi 1e-7 H/m"
        ),
        "coaxial": coaxial_cases(),
        "self": self_cases(),
        "wire_rectangle": wire_cases(),
    }
    text = json.dumps(doc, indent=1) + "\n"
    assert json.loads(text) == doc
    with open("inductance.json", "w") as f:
        f.write(text)


if __name__ == "__main__":
    main()
