#!/usr/bin/python3
"""The loop a practitioner writes with PyTorch (float64, CPU), as a peer of stepgate-bench.

Usage: torch_loop.py JOB.json   (prints one JSON object on stdout)

The same job and the same arithmetic as numpy_loop.py (see there), written with torch tensors:
one run at a time, cost and gradient at every step (explicit formulas, no autograd, which
would only add work), an early stop on a non-finite cost. Threads: every core, as on a
practitioner's machine (Debian's build may start with fewer; the bench prints the count).
"""
import json
import os
import sys

import numpy as np
import torch

from peer_loop import time_runs


def main(path):
    torch.set_num_threads(os.cpu_count())
    job = json.load(open(path))
    n, p, C = job["rows"], job["cols"], job.get("classes", 1)
    X = torch.from_numpy(np.fromfile(job["X"], dtype="<f8").reshape(n, p).copy())
    y = torch.from_numpy(np.fromfile(job["y"], dtype="<f8").copy())
    s = 1.0 / n
    kind = job["problem"]
    if kind == "softmax":
        labels = y.to(torch.int64)
        onehot = torch.nn.functional.one_hot(labels, C).to(torch.float64)
        rows = torch.arange(n)
    zero = torch.zeros(n, dtype=torch.float64)

    def cost_grad(w):
        if kind == "least_squares":
            r = X @ w - y
            return 0.5 * s * float(r @ r), s * (X.T @ r)
        if kind == "logistic":
            z = X @ w
            cost = s * float(torch.sum(torch.logaddexp(zero, z) - y * z))
            return cost, s * (X.T @ (torch.sigmoid(z) - y))
        W = w.reshape(C, p).T
        Z = X @ W
        lse = torch.logsumexp(Z, dim=1)
        cost = s * float(torch.sum(lse - Z[rows, labels]))
        G = s * (X.T @ (torch.exp(Z - lse[:, None]) - onehot))
        return cost, G.T.reshape(-1)

    def vector(start):
        return torch.tensor(start, dtype=torch.float64) if start else torch.zeros(p * C, dtype=torch.float64)

    with torch.no_grad():
        seconds, finals = time_runs(job, cost_grad, vector)
    print(json.dumps({"peer": "torch " + torch.__version__ + f" ({torch.get_num_threads()} threads)",
                      "seconds": seconds, "final_costs": [c if np.isfinite(c) else None for c in finals]}))


if __name__ == "__main__":
    main(sys.argv[1])
