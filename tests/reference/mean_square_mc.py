#!/usr/bin/python3
"""Monte-Carlo second moment of mini-batch SGD on least squares, in numpy: the outside reference
for stepgate's mean-square map T (harness/analysis/mean_square_limit.hpp), driven by
tests/reference/test_mean_square_limit.cpp.

  mean_square_mc.py make OUT.csv
      writes a small interpolated least-squares data set: 40 rows, features x1..x3 drawn
      N(0, 1) with column scales 1, 2, 0.5 from a fixed seed, and y = X w + b exactly
      (w = (1, -2, 0.5), b = 0.3), every number written as repr (round-trips exactly); prints OUT.csv.
  mean_square_mc.py simulate CSV ETA BATCH STEPS SAMPLING L2 TARGET RUNS SEED
      runs RUNS independent SGD runs of STEPS steps, each from w = 0 (intercept last, not
      penalised), at rate ETA with batches of BATCH rows drawn every step independently:
      SAMPLING "independent" (BATCH distinct rows, a uniform subset) or "replacement".
      TARGET "data" fits the CSV's y; "constant" fits y = 1.5, whose minimiser is weights 0 and
      intercept 1.5 for any L2 (every sample's gradient vanishes there), so that the ridge is
      tested on an interpolated problem too. Prints the minimiser w* (d numbers), then
      the estimate of E[(w_t - w*)(w_t - w*)^T] (d*d numbers, row by row) and the standard error
      of each entry (d*d numbers): the standard deviation over runs / sqrt(RUNS).

The gradient is written here from the definition of the cost, independently of stepgate:
J(w) = 1/(2n)·||X w + b − y||² + (l2/2)·||w||², a batch B estimating the data term by its mean
over B: g_B = X_Bᵀ(X_B w + b − y_B)/|B| + l2·w (intercept not penalised).
"""
import sys

import numpy as np


def make(path):
    rng = np.random.default_rng(20180701)
    n = 40
    X = rng.standard_normal((n, 3)) * np.array([1.0, 2.0, 0.5])
    y = X @ np.array([1.0, -2.0, 0.5]) + 0.3
    with open(path, "w") as f:
        f.write("x1,x2,x3,y\n")
        for row, t in zip(X, y):
            f.write(",".join(repr(float(v)) for v in (*row, t)) + "\n")
    print(path)


def load(path):
    data = np.loadtxt(path, delimiter=",", skiprows=1)
    return data[:, :-1], data[:, -1]


def simulate(path, eta, batch, steps, sampling, l2, target, runs, seed):
    X, y = load(path)
    n = X.shape[0]
    A = np.hstack([X, np.ones((n, 1))])           # intercept last
    d = A.shape[1]
    if target == "constant":
        y = np.full(n, 1.5)
    pen = np.full(d, l2)
    pen[-1] = 0.0
    # The minimiser: normal equations of the full cost (exact here: the data are interpolated).
    H = A.T @ A / n + np.diag(pen)
    w_star = np.linalg.solve(H, A.T @ y / n)
    rng = np.random.default_rng(seed)
    W = np.zeros((runs, d))
    for _ in range(steps):
        if sampling == "independent":
            rows = np.argsort(rng.random((runs, n)), axis=1)[:, :batch]   # uniform b-subsets
        else:
            rows = rng.integers(0, n, size=(runs, batch))
        AB = A[rows]                                   # runs x b x d
        r = np.einsum("rbd,rd->rb", AB, W) - y[rows]  # residuals
        G = np.einsum("rbd,rb->rd", AB, r) / batch + pen * W
        W = W - eta * G
    E = W - w_star
    P = E[:, :, None] * E[:, None, :]                  # runs x d x d
    M = P.mean(axis=0)
    se = P.std(axis=0, ddof=1) / np.sqrt(runs)
    print(" ".join(repr(float(v)) for v in w_star))
    print(" ".join(repr(float(v)) for v in M.ravel()))
    print(" ".join(repr(float(v)) for v in se.ravel()))


if __name__ == "__main__":
    if sys.argv[1] == "make":
        make(sys.argv[2])
    else:
        a = sys.argv[2:]
        simulate(a[0], float(a[1]), int(a[2]), int(a[3]), a[4], float(a[5]), a[6], int(a[7]), int(a[8]))
