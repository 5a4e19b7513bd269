#!/usr/bin/env python3
"""scikit-learn SGDRegressor, trained one epoch at a time, reporting its cost to stepgate.

Scenario: Tamarind Health Analytics predicts one-year disease progression from ten baseline
measurements (suites/data/diabetes.csv) with scikit-learn's SGDRegressor and its constant
learning rate eta0, and asks stepgate which eta0 values are safe.

Columns: target `progression`; features: the other ten columns in file order, age, sex, bmi,
bp, s1, s2, s3, s4, s5, s6.
Data: features standardised with mean and POPULATION standard deviation (divisor n), unless
--raw-features (the planted change: features in their raw units). The target is always
standardised the same way (centred, divided by its population sd), so the zero model has
cost 0.5 and costs read as fractions of the target's variance.
Model: SGDRegressor(loss="squared_error", penalty=None, learning_rate="constant", eta0=lr,
fit_intercept=True, shuffle=True, random_state=numpy.random.RandomState(seed)). One
partial_fit call = one epoch = n single-row updates in a shuffled order. A RandomState
object, not the int seed, is passed so that each epoch gets a fresh order (with an int,
every partial_fit call re-seeds and repeats the first epoch's order); the run is still a
pure function of the seed. With --alpha A > 0 the penalty is "l2" with that alpha.
Cost: J = 1/(2n) * sum_i (x_i . coef + intercept - y_i)^2 on the full training set, plus
(alpha/2) * ||coef||^2 when --alpha is given (the intercept is not penalised), i.e. the
objective SGDRegressor minimises. Iteration 0 is the zero model SGDRegressor starts from
(partial_fit's first call starts from coef = 0, intercept = 0); iteration k is after k epochs.

Protocol (stepgate problem kind `command`):
  per run : train_sgd.py --lr R --seed S --steps EPOCHS   -> {"iter": k, "cost": J} lines
            for k = 0..EPOCHS, then {"params": [coef..., intercept]}
  serving : train_sgd.py --serve   (requests on stdin, one JSON object per line)
"""
import argparse
import math
import os
import signal
import sys
import warnings

import numpy as np
from sklearn.exceptions import ConvergenceWarning
from sklearn.linear_model import SGDRegressor

# The command protocol (examples/stepgate_command.py) and the CSV helpers (examples/example_data.py),
# shared by the examples.
sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from example_data import load_csv, standardise  # noqa: E402
from stepgate_command import run_or_serve  # noqa: E402

HERE = os.path.dirname(os.path.abspath(__file__))
DEFAULT_DATA = os.path.join(HERE, "..", "..", "suites", "data", "diabetes.csv")


# ---------------------------------------------------------------------------------------
# The model
# ---------------------------------------------------------------------------------------

def cost(X, y, coef, intercept, alpha):
    with np.errstate(all="ignore"):
        r = X @ coef + intercept - y
        J = 0.5 * float(r @ r) / X.shape[0]
        if alpha > 0.0:
            J += 0.5 * alpha * float(coef @ coef)
    return J if math.isfinite(J) else float("nan") if math.isnan(J) else float("inf")


def train(X, y, alpha, lr, seed, epochs, emit, stopped):
    """Emits iterations 0..epochs; returns [coef..., intercept], or None when the run
    diverged or was stopped."""
    model = SGDRegressor(loss="squared_error", penalty="l2" if alpha > 0.0 else None,
                         alpha=alpha if alpha > 0.0 else 0.0001, learning_rate="constant",
                         eta0=lr, fit_intercept=True, shuffle=True, max_iter=1, tol=None,
                         random_state=np.random.RandomState(seed))
    coef, intercept = np.zeros(X.shape[1]), 0.0
    for k in range(epochs + 1):
        if k > 0:
            try:
                model.partial_fit(X, y)
            except ValueError as e:  # "Floating-point under-/overflow occurred at epoch #1..."
                print(f"train_sgd: epoch {k}: SGDRegressor gave up: {e}", file=sys.stderr)
                emit({"iter": k, "cost": float("inf")})
                return None
            coef, intercept = model.coef_, float(model.intercept_[0])
        J = cost(X, y, coef, intercept, alpha)
        emit({"iter": k, "cost": J})
        if not math.isfinite(J) or stopped():
            return None
    return [float(c) for c in coef] + [intercept]


def main():
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("--lr", type=float, help="eta0, the constant learning rate (per-run mode)")
    p.add_argument("--seed", type=int, default=0, help="seed of the shuffling (default 0)")
    p.add_argument("--steps", type=int, help="number of epochs (per-run mode)")
    p.add_argument("--alpha", type=float, default=0.0,
                   help="L2 strength; 0 (default) means penalty=None")
    p.add_argument("--data", default=DEFAULT_DATA, help="CSV file (default: suites/data/diabetes.csv)")
    p.add_argument("--target", default="progression", help="target column (default progression)")
    p.add_argument("--raw-features", action="store_true",
                   help="planted change: features not standardised (raw units)")
    p.add_argument("--serve", action="store_true", help="serving mode: requests on stdin")
    args = p.parse_args()
    signal.signal(signal.SIGPIPE, signal.SIG_DFL)  # reader gone: end quietly
    warnings.simplefilter("ignore", ConvergenceWarning)
    if not (args.alpha >= 0.0):
        p.error("--alpha must be >= 0")

    _, X, y = load_csv(args.data, args.target, "train_sgd")
    X = X if args.raw_features else standardise(X, "train_sgd")
    y = standardise(y, "train_sgd")

    def run_one(rate, seed, budget, beta, emit, stopped):
        return train(X, y, args.alpha, rate, seed, budget, emit, stopped)

    return run_or_serve(p, args, run_one)


if __name__ == "__main__":
    sys.exit(main())
