#!/usr/bin/env python3
"""Independent check values for rfmath/amp's tests (standard library only).

Each figure is found here without the closed forms that amp uses:

- stability circles: points where |Γin(ΓL)| = 1 (or |Γout(Γs)| = 1) are
  found by bisection along rays from a stable point, and the circle through
  three of them is solved for;
- the simultaneous conjugate match: the fixed point of Γs = Γin(ΓL)*,
  ΓL = Γout(Γs)* found by iteration from 0;
- gain circles: points where G_A(Γs) (or G_P(ΓL)) equals the target, found
  by bisection along rays from the maximum, and the circle through three;
- the noise-figure circle: points where F(Γs) equals the target, found by
  bisection along rays from Γopt.

The input S-parameters are those of the worked examples in Pozar's
Microwave Engineering amplifier chapter, from memory. Run: python3 pozar_check.py
"""
import cmath
import math


def polar(m, deg):
    return cmath.rect(m, math.radians(deg))


def gin(s, gl):
    s11, s12, s21, s22 = s
    return s11 + s12 * s21 * gl / (1 - s22 * gl)


def gout(s, gs):
    s11, s12, s21, s22 = s
    return s22 + s12 * s21 * gs / (1 - s11 * gs)


def bisect(f, a, b, n=200):
    """Root of f on [a, b] with f(a), f(b) of opposite signs."""
    fa = f(a)
    for _ in range(n):
        m = 0.5 * (a + b)
        fm = f(m)
        if (fm > 0) == (fa > 0):
            a, fa = m, fm
        else:
            b = m
    return 0.5 * (a + b)


def circle3(p1, p2, p3):
    """Centre and radius of the circle through three points."""
    ax, ay = p1.real, p1.imag
    bx, by = p2.real, p2.imag
    cx, cy = p3.real, p3.imag
    d = 2 * (ax * (by - cy) + bx * (cy - ay) + cx * (ay - by))
    ux = ((ax * ax + ay * ay) * (by - cy) + (bx * bx + by * by) * (cy - ay) + (cx * cx + cy * cy) * (ay - by)) / d
    uy = ((ax * ax + ay * ay) * (cx - bx) + (bx * bx + by * by) * (ax - cx) + (cx * cx + cy * cy) * (bx - ax)) / d
    c = complex(ux, uy)
    return c, abs(p1 - c)


def locus(f, start, angles, rmax):
    """Circle through the points start + r·e^{jθ} where f changes sign."""
    pts = []
    for th in angles:
        u = cmath.rect(1, th)
        r = bisect(lambda r: f(start + r * u), 1e-9, rmax)
        pts.append(start + r * u)
    return circle3(*pts)


def show(name, c, r=None):
    if r is None:
        print(f"{name}: {abs(c):.6f} ∠ {math.degrees(cmath.phase(c)):.4f}°  ({c.real:.9f}{c.imag:+.9f}j)")
    else:
        print(f"{name}: centre {abs(c):.6f} ∠ {math.degrees(cmath.phase(c)):.4f}°  ({c.real:.9f}{c.imag:+.9f}j), radius {r:.9f}")


def ga(s, gs):
    s11, s12, s21, s22 = s
    return abs(s21) ** 2 * (1 - abs(gs) ** 2) / (abs(1 - s11 * gs) ** 2 * (1 - abs(gout(s, gs)) ** 2))


def gp(s, gl):
    s11, s12, s21, s22 = s
    return abs(s21) ** 2 * (1 - abs(gl) ** 2) / (abs(1 - s22 * gl) ** 2 * (1 - abs(gin(s, gl)) ** 2))


def gt(s, gs, gl):
    s11, s12, s21, s22 = s
    return abs(s21) ** 2 * (1 - abs(gs) ** 2) * (1 - abs(gl) ** 2) / abs((1 - s11 * gs) * (1 - s22 * gl) - s12 * s21 * gs * gl) ** 2


def db(x):
    return 10 * math.log10(x)


def main():
    angles = [0.3, 2.2, 4.1]
    # Stability example (Pozar, from memory): 1.9 GHz.
    s = (polar(0.894, -60.6), polar(0.020, 62.4), polar(3.122, 123.6), polar(0.781, -27.6))
    d = s[0] * s[3] - s[1] * s[2]
    k = (1 - abs(s[0]) ** 2 - abs(s[3]) ** 2 + abs(d) ** 2) / (2 * abs(s[1] * s[2]))
    print("stability example: |Δ| = %.6f, K = %.6f" % (abs(d), k))
    # The origin is stable (|S11|, |S22| < 1); the circles lie off it, so
    # rays from the origin towards them cross |Γ| = 1 of the other port.
    # Aim the rays at the circle through the direction of the nearest
    # unstable point, found by a coarse scan.
    for name, f in (("output (load) stability circle", lambda g: abs(gin(s, g)) - 1),
                    ("input (source) stability circle", lambda g: abs(gout(s, g)) - 1)):
        best = min((cmath.rect(r / 200, th / 360 * 2 * math.pi) for r in range(1, 600) for th in range(0, 360, 2)),
                   key=lambda g: abs(g) if f(g) > 0 else 1e9)
        th0 = cmath.phase(best)
        pts = []
        for dth in (-0.05, 0.0, 0.05):
            u = cmath.rect(1, th0 + dth)
            r = bisect(lambda r: f(r * u), 1e-9, abs(best) * 1.02)
            pts.append(r * u)
        c, r = circle3(*pts)
        show(name, c, r)

    # Conjugate-match example (Pozar, from memory): 4 GHz.
    s = (polar(0.72, -116), polar(0.03, 57), polar(2.60, 76), polar(0.73, -54))
    d = s[0] * s[3] - s[1] * s[2]
    k = (1 - abs(s[0]) ** 2 - abs(s[3]) ** 2 + abs(d) ** 2) / (2 * abs(s[1] * s[2]))
    show("conjugate example Δ", d)
    print("conjugate example K = %.6f" % k)
    g_s, g_l = 0j, 0j
    for _ in range(20000):
        g_s = gin(s, g_l).conjugate()
        g_l = gout(s, g_s).conjugate()
    show("Γs (fixed point)", g_s)
    show("ΓL (fixed point)", g_l)
    print("G_T at the match = %.6f dB" % db(gt(s, g_s, g_l)))
    # A brute-force maximum of G_T over a grid in both planes around the
    # fixed point confirms it is the maximum.
    best = max(((gt(s, g_s + a, g_l + b), a, b) for a in (0, 0.002, -0.002, 0.002j, -0.002j)
                for b in (0, 0.002, -0.002, 0.002j, -0.002j)), key=lambda t: t[0])
    print("neighbourhood maximum at offsets", best[1], best[2])

    # Unilateral constant-gain circles (Pozar, from memory): 4 GHz.
    s = (polar(0.75, -120), 0j, polar(2.5, 80), polar(0.6, -70))
    g0 = abs(s[2]) ** 2
    gsmax = 1 / (1 - abs(s[0]) ** 2)
    glmax = 1 / (1 - abs(s[3]) ** 2)
    print("unilateral: G0 %.6f dB, Gs,max %.6f dB, GL,max %.6f dB" % (db(g0), db(gsmax), db(glmax)))
    for gsdb in (3, 2):
        target = 10 ** (gsdb / 10)
        f = lambda g: (1 - abs(g) ** 2) / abs(1 - s[0] * g) ** 2 - target
        c, r = locus(lambda g: -f(g), s[0].conjugate(), angles, 1.0)
        show(f"G_S = {gsdb} dB circle", c, r)
    for gldb in (0, 1):
        target = 10 ** (gldb / 10)
        f = lambda g: (1 - abs(g) ** 2) / abs(1 - s[3] * g) ** 2 - target
        c, r = locus(lambda g: -f(g), s[3].conjugate(), angles, 1.0)
        show(f"G_L = {gldb} dB circle", c, r)

    # Low-noise example (Pozar, from memory): 4 GHz GaAs FET.
    s = (polar(0.6, -60), polar(0.05, 26), polar(1.9, 81), polar(0.5, -60))
    fmin, gopt, rn, z0 = 10 ** 0.16, polar(0.62, 100), 20.0, 50.0
    def nf(g):
        return fmin + 4 * rn / z0 * abs(g - gopt) ** 2 / ((1 - abs(g) ** 2) * abs(1 + gopt) ** 2)
    c, r = locus(lambda g: 10 ** 0.2 - nf(g), gopt, angles, 0.37)  # |Γopt| + 0.37 < 1
    show("NF = 2 dB circle", c, r)
    d = s[0] * s[3] - s[1] * s[2]
    k = (1 - abs(s[0]) ** 2 - abs(s[3]) ** 2 + abs(d) ** 2) / (2 * abs(s[1] * s[2]))
    print("low-noise example: K = %.6f, |Δ| = %.6f" % (k, abs(d)))
    # Available gain at Γopt, and the circles of 8 dB available and
    # operating gain by bisection from the conjugate-match terminations.
    print("G_A(Γopt) = %.6f dB" % db(ga(s, gopt)))
    g_s, g_l = 0j, 0j
    for _ in range(20000):
        g_s = gin(s, g_l).conjugate()
        g_l = gout(s, g_s).conjugate()
    print("MAG = %.6f dB" % db(gt(s, g_s, g_l)))
    show("Γs (fixed point)", g_s)
    show("ΓL (fixed point)", g_l)
    for name, f, start in (("G_A = 8 dB circle", lambda g: ga(s, g) - 10 ** 0.8, g_s),
                           ("G_P = 8 dB circle", lambda g: gp(s, g) - 10 ** 0.8, g_l)):
        # Along each ray the gain falls from MAG; stop the ray inside the
        # unit circle, where the gain is still defined.
        pts = []
        for th in angles:
            u = cmath.rect(1, th)
            rmax = bisect(lambda r: abs(start + r * u) - 0.999, 0, 2)
            r = bisect(lambda r: f(start + r * u), 1e-9, rmax)
            pts.append(start + r * u)
        c, r = circle3(*pts)
        show(name, c, r)


main()
