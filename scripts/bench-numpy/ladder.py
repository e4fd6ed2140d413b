#!/usr/bin/env python3
"""The evaluation benchmark of rfmath (BenchmarkLadder4Models, 10,001
frequencies) written with numpy complex arrays: the same network, the same
load and the same maths, line for line, so that scripts/bench can compare
the two in one run.

    usage: ladder.py COUNT [GO_GAMMA_FILE...]

It prints COUNT lines in the format of go test -bench under "pkg: numpy".
Given GO_GAMMA_FILEs (Γin at every 1000th frequency, written by the Go
benchmarks when MATCHBENCH_LADDER_GAMMA (rfmath.Ladder) and
MATCHBENCH_CIRCUIT_GAMMA (rfmath.Circuit, the search's evaluator) are set),
it first checks that numpy's Γin agrees with each to 1e-12 and exits with
status 1 if it does not.

Go (rfmath, rfmath/parts)                     numpy (this file)
--------------------------------------------  ------------------------------------
Inductor.ImpedanceAt                          inductor_z
  R(f) = 2π·fRef·L/Q · √(f/fRef)  (SqrtF)      r = 2π·q_ref·l/q · sqrt(f/q_ref)
  Cp = 1/((2π·SRF)²·L)                         cp = 1/((2π·srf)²·l)
  Z = (R + jωL)/(1 + jωCp·(R + jωL))           zs/(1 + 1j·w·cp·zs)
Capacitor.ImpedanceAt                         capacitor_z
  ESR = 1/(2π·fRef·C·Q), Ls = 1/((2π·SRF)²·C)  esr, ls
  Z = ESR + j(ωLs − 1/(ωC))                    esr + 1j·(w·ls − 1/(w·c))
Series{Part}.ABCD = [1, Z; 0, 1]              series(z)
Shunt{Part}.ABCD  = [1, 0; 1/Z, 1]            shunt(z)
ABCD.Mul (full 2×2 complex product)           mul(a, b)
Ladder.ABCD: m = l[3]; m = m·l[2]·l[1]·l[0]   ladder_abcd
ABCD.InputGamma                               input_gamma
  N = A(1+ΓL) + B/z0·(1−ΓL)
  M = C·z0·(1+ΓL) + D(1−ΓL)
  Γin = (N − M)/(N + M)
"""

import sys
import time

import numpy as np

TWO_PI = 2 * np.pi
N = 10001
PARTS = 4


def inductor_z(f, l, q, q_ref, srf):
    w = TWO_PI * f
    r = TWO_PI * q_ref * l / q * np.sqrt(f / q_ref)
    zs = r + 1j * (w * l)
    w0 = TWO_PI * srf
    cp = 1 / (w0 * w0 * l)
    return zs / (1 + 1j * (w * cp) * zs)


def capacitor_z(f, c, q, q_ref, srf):
    w = TWO_PI * f
    esr = 1 / (TWO_PI * q_ref * c * q)
    w0 = TWO_PI * srf
    ls = 1 / (w0 * w0 * c)
    return esr + 1j * (w * ls - 1 / (w * c))


def series(z):
    one = np.ones_like(z)
    return (one, z, np.zeros_like(z), one)


def shunt(z):
    one = np.ones_like(z)
    return (one, np.zeros_like(z), 1 / z, one)


def mul(a, b):
    return (a[0] * b[0] + a[1] * b[2], a[0] * b[1] + a[1] * b[3],
            a[2] * b[0] + a[3] * b[2], a[2] * b[1] + a[3] * b[3])


# The network of rfmath/scale_bench_test.go (ladder4), from the load toward
# the source: shunt C, series L, shunt L, series C.
def ladder_abcd(f):
    l0 = shunt(capacitor_z(f, 1.2e-12, 500, 1e9, 12e9))
    l1 = series(inductor_z(f, 3.3e-9, 30, 500e6, 6e9))
    l2 = shunt(inductor_z(f, 8.2e-9, 35, 500e6, 4.5e9))
    l3 = series(capacitor_z(f, 2.7e-12, 400, 1e9, 9e9))
    m = l3
    for e in (l2, l1, l0):
        m = mul(m, e)
    return m


def input_gamma(m, g_load, z0):
    p, q = 1 + g_load, 1 - g_load
    n = m[0] * p + m[1] / z0 * q
    d = m[2] * z0 * p + m[3] * q
    return (n - d) / (n + d)


def evaluate(f, g_load):
    return input_gamma(ladder_abcd(f), g_load, 50.0)


def sweep(n):
    """ladder4Sweep: 1.5–3.5 GHz, load 15 Ω + 2.2 nH + 1.8 pF in 50 Ω."""
    k = np.arange(n, dtype=np.float64)
    f = 1.5e9 + 2e9 * k / (n - 1)
    w = TWO_PI * f
    z = 15 + 1j * (w * 2.2e-9 - 1 / (w * 1.8e-12))
    return f, (z - 50) / (z + 50)


def check(path, g):
    worst = 0.0
    rows = 0
    with open(path) as fh:
        for line in fh:
            k, re, im = line.split()
            worst = max(worst, abs(g[int(k)] - complex(float(re), float(im))))
            rows += 1
    if rows == 0 or worst > 1e-12:
        print(f"ladder.py: numpy and Go ({path}) disagree: max |ΔΓ| = {worst:.3g} over {rows} frequencies", file=sys.stderr)
        sys.exit(1)
    print(f"ladder.py: numpy and Go ({path}) agree at {rows} frequencies, max |ΔΓ| = {worst:.2g}", file=sys.stderr)


def main():
    count = int(sys.argv[1]) if len(sys.argv) > 1 else 5
    f, g_load = sweep(N)
    g = evaluate(f, g_load)
    for path in sys.argv[2:]:
        check(path, g)
    print("pkg: numpy")
    for _ in range(count):
        # Like go test: grow the iteration count until one sample takes 1 s.
        iters = 1
        while True:
            t0 = time.perf_counter_ns()
            for _ in range(iters):
                evaluate(f, g_load)
            dt = time.perf_counter_ns() - t0
            if dt >= 1e9 or iters >= 1 << 20:
                break
            iters = max(iters + 1, min(100 * iters, int(iters * 1.2e9 / max(dt, 1))))
        ns = dt / iters
        print(f"BenchmarkNumpyLadder4Models \t{iters}\t{ns:.0f} ns/op\t{ns / (PARTS * N):.2f} ns/part-freq")


if __name__ == "__main__":
    main()
