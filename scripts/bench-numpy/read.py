#!/usr/bin/env python3
"""numpy's text loaders on the generated Touchstone file of the read
benchmarks (go run ./internal/benchreport gen FILE writes it; the Go side is
BenchmarkReadGeneratedFile in rfmath/touchstone, on the same file).

    usage: read.py FILE COUNT

Each loader turns the file into a (100001, 9) float64 array: the '!' comment
and the '#' option line are skipped, every other line is a frequency and
four RI pairs. That is less than the Go reader does (it also checks the
file against the Touchstone rules, scales the frequency unit and builds
complex S-parameters), so the comparison favours numpy.

It prints COUNT samples of each loader in the format of go test -bench
under "pkg: numpy".
"""

import os
import sys
import time

import numpy as np

POINTS = 100001


def loadtxt(path):
    return np.loadtxt(path, comments=("!", "#"), dtype=np.float64)


def genfromtxt(path):
    return np.genfromtxt(path, comments="!", skip_header=2, dtype=np.float64)


def main():
    if len(sys.argv) != 3:
        sys.exit("usage: read.py FILE COUNT")
    path, count = sys.argv[1], int(sys.argv[2])
    size = os.path.getsize(path)
    print("pkg: numpy")
    for name, fn in (("Loadtxt", loadtxt), ("Genfromtxt", genfromtxt)):
        a = fn(path)  # also warms the page cache
        if a.shape != (POINTS, 9):
            sys.exit(f"read.py: {name} gave shape {a.shape}, want ({POINTS}, 9)")
        for _ in range(count):
            t0 = time.perf_counter_ns()
            fn(path)
            ns = time.perf_counter_ns() - t0
            print(f"BenchmarkNumpy{name} \t1\t{ns} ns/op\t{size / ns * 1e3:.2f} MB/s\t{ns / POINTS:.1f} ns/point")


if __name__ == "__main__":
    main()
