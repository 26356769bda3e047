#!/usr/bin/env python3
"""Error of the busbar subdivision rule of site/bar.rs against the 2-D
closed form of a rectangular conductor (the log/atan form derived in
bars.rs), worst over points around the bar. Pure Python 3, no packages:
Gauss-Legendre nodes by Newton's iteration on the Legendre recurrence.

Run: python3 bar_rule_errors.py   (prints the table quoted in bar.rs)
"""
import math


def gauss_legendre(n):
    xs, ws = [], []
    for i in range(1, n + 1):
        x = math.cos(math.pi * (i - 0.25) / (n + 0.5))
        for _ in range(100):
            p0, p1 = 1.0, x
            for k in range(2, n + 1):
                p0, p1 = p1, ((2 * k - 1) * x * p1 - (k - 1) * p0) / k
            dp = n * (x * p1 - p0) / (x * x - 1)
            dx = p1 / dp
            x -= dx
            if abs(dx) < 1e-16:
                break
        xs.append(x)
        ws.append(2 / ((1 - x * x) * dp * dp))
    return xs, ws


def g(x, y):
    a = x * math.atan(y / x) if x != 0 else 0.0
    r2 = x * x + y * y
    return a + (0.5 * y * math.log(r2) if r2 > 0 else 0.0)


def closed_form(u, v, w, h):
    """(B_x, B_y) per unit mu0 I / (2 pi) of a w x h bar centred at 0."""
    j = 1 / (w * h)
    x1, x2, y1, y2 = u - w / 2, u + w / 2, v - h / 2, v + h / 2
    by = j * (g(x2, y2) - g(x1, y2) - g(x2, y1) + g(x1, y1))
    bx = -j * (g(y2, x2) - g(y1, x2) - g(y2, x1) + g(y1, x1))
    return bx, by


def rule(u, v, w, h, panels):
    """The bar.rs rule for w >= h: panels along w, 3 x 3 nodes each."""
    xs, ws = gauss_legendre(3)
    bx = by = 0.0
    pw = w / panels
    for p in range(panels):
        c = -w / 2 + (p + 0.5) * pw
        for a, wa in zip(xs, ws):
            for b, wb in zip(xs, ws):
                x, y = u - (c + a * pw / 2), v - b * h / 2
                r2 = x * x + y * y
                s = wa * wb / 4 / panels
                bx -= s * y / r2
                by += s * x / r2
    return bx, by


def rel_err(u, v, w, h, panels):
    e, q = closed_form(u, v, w, h), rule(u, v, w, h, panels)
    return math.hypot(q[0] - e[0], q[1] - e[1]) / math.hypot(*e)


def around(w, h, dist, n=200):
    """Points at `dist` from the rectangle, all around it."""
    out = []
    for k in range(n):
        t = 2 * math.pi * k / n
        c, s = math.cos(t), math.sin(t)
        bx = max(-w / 2, min(w / 2, 10 * (w / 2 + h) * c))
        by = max(-h / 2, min(h / 2, 10 * (w / 2 + h) * s))
        out.append((bx + dist * c, by + dist * s))
    return out


if __name__ == "__main__":
    print("aspect panels  one-short-side-off  2x-longer-side-from-axis")
    for aspect in (1, 2, 4, 8, 10, 16, 20, 40):
        w, h = 1.0, 1.0 / aspect
        panels = min(16, math.ceil(aspect))
        near = max(rel_err(u, v, w, h, panels) for u, v in around(w, h, h))
        far = max(rel_err(u, v, w, h, panels) for u, v in around(w, h, 1.5 * w))
        print(f"{aspect:6} {panels:6}  {near:18.1e}  {far:24.1e}")
