#!/usr/bin/python3
"""bench_scipy.py PENCILS REPEATS — the scripted tridiagonal baseline of `make bench`.

A reference for the benchmark only, not a dependency of epiwell: what a user would script
with Debian's python3-scipy for one single-well solve.  PENCILS (written by tests/bench.c)
holds, per band, the finite-difference pencil (H, B) of the fine grid and of the coarse grid
of every second node, the energy window and the node positions.  One solve is, for the three
bands: the eigenpairs of the fine pencil in the window (scipy.linalg.eigh_tridiagonal on the
standard form B^-1/2 H B^-1/2, LAPACK stebz + stein), the eigenvalues of the coarse pencil in
the same window (values only, for the error estimate), and the main lines: the e1-e2 dipole
<e1|z|e2> and the e1-hh1, e1-lh1 overlaps.  Prints the seconds per solve (best of three runs
of REPEATS solves) and, for the check in bench.c, the fine eigenvalues of the first solve.
"""
import sys
import time

import numpy as np
from scipy.linalg import eigh_tridiagonal


def read(path):
    bands = []
    with open(path) as f:
        nb = int(f.readline())
        for _ in range(nb):
            lo, top = (float(v) for v in f.readline().split())
            grids = []
            for _ in range(2):
                n = int(f.readline())
                a = np.array(f.readline().split(), dtype=float)
                diag, off, b, z = a[:n], a[n:2 * n - 1], a[2 * n - 1:3 * n - 1], a[3 * n - 1:]
                grids.append((diag, off, b, z))
            bands.append((lo, top, grids))
    return bands


def standard(diag, off, b):
    s = 1.0 / np.sqrt(b)
    return diag * s * s, off * s[:-1] * s[1:], s


def solve(bands):
    vecs, vals = [], []
    for lo, top, ((diag, off, b, z), (cd, co, cb, _)) in bands:
        d, e, s = standard(diag, off, b)
        w, y = eigh_tridiagonal(d, e, select="v", select_range=(lo, top))
        psi = y * s[:, None]  # back to the pencil's vectors, psi^T B psi = 1
        d2, e2, _ = standard(cd, co, cb)
        eigh_tridiagonal(d2, e2, eigvals_only=True, select="v", select_range=(lo, top))
        vecs.append((psi, b, z))
        vals.append(w)
    (pe, be, ze), (ph, _, _), (pl, _, _) = vecs
    lines = []
    if pe.shape[1] > 1:
        lines.append(np.sum(pe[:, 0] * be * ze * pe[:, 1]))
    if pe.shape[1] and ph.shape[1]:
        lines.append(np.sum(pe[:, 0] * be * ph[:, 0]))
    if pe.shape[1] and pl.shape[1]:
        lines.append(np.sum(pe[:, 0] * be * pl[:, 0]))
    return vals, lines


def main():
    bands = read(sys.argv[1])
    reps = int(sys.argv[2])
    vals, _ = solve(bands)
    best = float("inf")
    for _ in range(3):
        t0 = time.perf_counter()
        for _ in range(reps):
            solve(bands)
        best = min(best, (time.perf_counter() - t0) / reps)
    print("seconds_per_solve %.9g" % best)
    for w in vals:
        print("values " + " ".join("%.12g" % v for v in w))


main()
