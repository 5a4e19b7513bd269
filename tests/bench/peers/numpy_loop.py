#!/usr/bin/python3
"""The loop a practitioner writes with numpy, as a peer of stepgate-bench.

Usage: numpy_loop.py JOB.json   (prints one JSON object on stdout)

JOB.json (written by stepgate-bench): the problem ("least_squares", "logistic" or "softmax",
mean reduction, no ridge), the feature matrix with its ones column (float64, row-major, n x p)
and the targets (float64, n) as raw files, the optimizer ("gd" or heavy ball "momentum" with
beta), and the runs: rate, start vector (or none: zeros) and the number of steps stepgate took.
Each run is done on its own, one step at a time, computing the cost and the gradient at every
step and stopping early if the cost is not finite, as a hand-written loop does. The output
holds the seconds spent in the loops (data loading excluded) and each run's final cost.
"""
import json
import sys

import numpy as np

from blas_name import blas_name
from peer_loop import time_runs


def main(path):
    job = json.load(open(path))
    n, p, C = job["rows"], job["cols"], job.get("classes", 1)
    X = np.fromfile(job["X"], dtype="<f8").reshape(n, p)
    y = np.fromfile(job["y"], dtype="<f8")
    s = 1.0 / n
    kind = job["problem"]
    if kind == "softmax":
        labels = y.astype(np.int64)
        onehot = np.zeros((n, C))
        onehot[np.arange(n), labels] = 1.0

    def cost_grad(w):
        if kind == "least_squares":
            r = X @ w - y
            return 0.5 * s * (r @ r), s * (X.T @ r)
        if kind == "logistic":
            z = X @ w
            cost = s * np.sum(np.logaddexp(0.0, z) - y * z)
            return cost, s * (X.T @ (1.0 / (1.0 + np.exp(-z)) - y))
        W = w.reshape(C, p).T  # stepgate's layout: class c's weights are entries c*p .. c*p+p-1
        Z = X @ W
        m = Z.max(axis=1, keepdims=True)
        E = np.exp(Z - m)
        tot = E.sum(axis=1, keepdims=True)
        cost = s * np.sum(m[:, 0] + np.log(tot[:, 0]) - Z[np.arange(n), labels])
        G = s * (X.T @ (E / tot - onehot))
        return cost, G.T.reshape(-1)

    def vector(start):
        return np.array(start, dtype=np.float64) if start else np.zeros(p * C)

    with np.errstate(over="ignore", invalid="ignore"):
        seconds, finals = time_runs(job, cost_grad, vector)
    print(json.dumps({"peer": f"numpy {np.__version__} ({blas_name()})", "seconds": seconds,
                      "final_costs": [c if np.isfinite(c) else None for c in finals]}))


if __name__ == "__main__":
    main(sys.argv[1])
