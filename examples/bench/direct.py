#!/usr/bin/env python3
"""Times a sparse direct solve of the system that `bench -system DIR` wrote.

The outside anchor for the adaptive loop's cost: SciPy's SuperLU
(scipy.sparse.linalg.splu, then one triangular solve pair) on the P1 system
of the loop's final mesh, with several column orderings. For each ordering
it prints the median, smallest and largest wall time of the factorisation
plus solve over the repetitions, the fill (nonzeros of L + U) and the
relative residual; the last line names the fastest ordering by median.

Usage:
    /usr/bin/python3 examples/bench/direct.py DIR [REPS]

Needs numpy and scipy (Debian: python3-scipy).
"""
import json
import os
import statistics
import sys
import time

import numpy as np
import scipy
import scipy.sparse as sp
import scipy.sparse.linalg as sla


def load(d):
    with open(os.path.join(d, "system.json")) as f:
        h = json.load(f)
    n, nnz = h["rows"], h["nnz"]
    rowptr = np.fromfile(os.path.join(d, "rowptr.i32"), dtype="<i4")
    col = np.fromfile(os.path.join(d, "col.i32"), dtype="<i4")
    val = np.fromfile(os.path.join(d, "val.f64"), dtype="<f8")
    rhs = np.fromfile(os.path.join(d, "rhs.f64"), dtype="<f8")
    if len(rowptr) != n + 1 or len(col) != nnz or len(val) != nnz or len(rhs) != n:
        sys.exit("direct.py: %s: array lengths do not match system.json" % d)
    return sp.csr_matrix((val, col, rowptr), shape=(n, n)), rhs


def main():
    if len(sys.argv) not in (2, 3):
        sys.exit(__doc__)
    reps = int(sys.argv[2]) if len(sys.argv) == 3 else 3
    a, b = load(sys.argv[1])
    a = a.tocsc()
    print("rows %d, nonzeros %d; scipy %s, numpy %s" % (a.shape[0], a.nnz, scipy.__version__, np.__version__))
    cases = [
        ("MMD_AT_PLUS_A, symmetric mode", dict(permc_spec="MMD_AT_PLUS_A", diag_pivot_thresh=0.0,
                                                options=dict(SymmetricMode=True))),
        ("MMD_AT_PLUS_A", dict(permc_spec="MMD_AT_PLUS_A")),
        ("COLAMD", dict(permc_spec="COLAMD")),
    ]
    best = None
    for name, kw in cases:
        times = []
        for _ in range(reps):
            t = time.perf_counter()
            lu = sla.splu(a, **kw)
            x = lu.solve(b)
            times.append(time.perf_counter() - t)
        res = np.linalg.norm(a @ x - b) / np.linalg.norm(b)
        med = statistics.median(times)
        print("%-32s median %7.2f s  (%.2f to %.2f over %d runs)  fill %d  residual %.1e"
              % (name, med, min(times), max(times), reps, lu.L.nnz + lu.U.nnz, res))
        if best is None or med < best[1]:
            best = (name, med)
    print("fastest: %s, median %.2f s" % best)


if __name__ == "__main__":
    main()
