#!/usr/bin/env python3
"""Full-batch gradient descent on L2-regularised logistic regression, written in plain numpy.

Scenario: Hollowbrook Diagnostics keeps a small in-house screening model on the Wisconsin
breast-cancer measurements and wants stepgate to tell it which learning rates are safe for
its own training loop. The objective is the one stepgate's built-in `logistic` problem uses,
so the two can be compared rate for rate:

    J(w) = s * sum_i [softplus(z_i) - y_i z_i] + (l2/2) * ||w[:d]||^2,   z = X_aug w,
    s = 1/n (default) or 1 (--sum-loss),

X_aug = [standardised features | column of ones] (ones LAST), so w = [w_1..w_d, b]. The
penalty covers w_1..w_d only: the intercept b is not penalised (as in stepgate's
harness/problems/linear_common.cpp, add_ridge). Features are standardised with their mean
and POPULATION standard deviation (divisor n). Start: w = 0. Update: w <- w - lr * grad J(w).

Columns (suites/data/breast_cancer.csv): target `benign` (1 benign, 0 malignant); features:
all 30 other columns, in file order (w_1..w_30 follow this order):
  mean_radius, mean_texture, mean_perimeter, mean_area, mean_smoothness,
  mean_compactness, mean_concavity, mean_concave_points, mean_symmetry, mean_fractal_dimension,
  radius_error, texture_error, perimeter_error, area_error, smoothness_error, compactness_error,
  concavity_error, concave_points_error, symmetry_error, fractal_dimension_error, worst_radius,
  worst_texture, worst_perimeter, worst_area, worst_smoothness, worst_compactness,
  worst_concavity, worst_concave_points, worst_symmetry, worst_fractal_dimension

Protocol (stepgate problem kind `command`):
  per run : train_logreg.py --lr R --seed S --steps N   -> {"iter": k, "cost": J, "grad_norm": g}
            lines for k = 0..N, then {"params": [...]}
  serving : train_logreg.py --serve   (requests on stdin, one JSON object per line)
"""
import argparse
import math
import os
import signal
import sys

import numpy as np

# The command protocol (examples/stepgate_command.py) and the CSV helpers (examples/example_data.py),
# shared by the examples.
sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from example_data import load_csv, standardise  # noqa: E402
from stepgate_command import run_or_serve  # noqa: E402

HERE = os.path.dirname(os.path.abspath(__file__))
DEFAULT_DATA = os.path.join(HERE, "..", "..", "suites", "data", "breast_cancer.csv")


# ---------------------------------------------------------------------------------------
# The model
# ---------------------------------------------------------------------------------------

def load(path, target):
    features, X, y = load_csv(path, target, "train_logreg")
    if not np.all((y == 0.0) | (y == 1.0)):
        sys.exit(f"train_logreg: {path}: column {target!r} must hold 0/1 labels")
    return features, X, y


def softplus(z):
    """log(1 + exp(z)) without overflow for either sign of z."""
    return np.maximum(z, 0.0) + np.log1p(np.exp(-np.abs(z)))


def sigmoid(z):
    """1 / (1 + exp(-z)) without overflow."""
    e = np.exp(-np.abs(z))
    return np.where(z >= 0.0, 1.0 / (1.0 + e), e / (1.0 + e))


class Logistic:
    def __init__(self, X, y, l2, sum_loss):
        self.X = np.hstack([X, np.ones((X.shape[0], 1))])  # intercept column LAST
        self.y = y
        self.l2 = l2
        self.d = X.shape[1]  # penalised entries: w[:d]; w[d] is the intercept
        self.weight = 1.0 if sum_loss else 1.0 / X.shape[0]

    def cost_grad(self, w):
        z = self.X @ w
        cost = self.weight * float(np.sum(softplus(z) - self.y * z))
        # sigma(z) - y, computed as -sigma(-z) where y = 1 so that it keeps its digits.
        r = np.where(self.y == 1.0, -sigmoid(-z), sigmoid(z))
        grad = self.weight * (self.X.T @ r)
        if self.l2 != 0.0:
            cost += 0.5 * self.l2 * float(w[: self.d] @ w[: self.d])
            grad[: self.d] += self.l2 * w[: self.d]
        return cost, grad


def train(model, lr, steps, emit, stopped):
    """Runs `steps` updates from w = 0; emits iterations 0..steps. Returns the final w, or
    None when the run diverged or was stopped."""
    w = np.zeros(model.X.shape[1])
    with np.errstate(all="ignore"):  # overflow shows as a non-finite cost, reported below
        for k in range(steps + 1):
            cost, grad = model.cost_grad(w)
            emit({"iter": k, "cost": cost, "grad_norm": float(np.linalg.norm(grad))})
            if not math.isfinite(cost) or stopped():
                return None
            if k < steps:
                w = w - lr * grad
    return w


def main():
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("--lr", type=float, help="learning rate (per-run mode)")
    p.add_argument("--seed", type=int, default=0, help="accepted; the run is deterministic anyway")
    p.add_argument("--steps", type=int, help="number of updates (per-run mode)")
    p.add_argument("--l2", type=float, default=1e-3, help="L2 strength on w_1..w_d (default 1e-3)")
    p.add_argument("--data", default=DEFAULT_DATA, help="CSV file (default: suites/data/breast_cancer.csv)")
    p.add_argument("--target", default="benign", help="0/1 label column (default benign)")
    p.add_argument("--sum-loss", action="store_true", help="planted change: loss summed, not averaged")
    p.add_argument("--serve", action="store_true", help="serving mode: requests on stdin")
    args = p.parse_args()
    signal.signal(signal.SIGPIPE, signal.SIG_DFL)  # reader gone: end quietly

    _, X, y = load(args.data, args.target)
    model = Logistic(standardise(X, "train_logreg"), y, args.l2, args.sum_loss)

    def run_one(rate, seed, budget, beta, emit, stopped):
        return train(model, rate, budget, emit, stopped)

    return run_or_serve(p, args, run_one)


if __name__ == "__main__":
    sys.exit(main())
