#!/usr/bin/env python3
"""A small PyTorch MLP classifier, full-batch SGD with momentum, reporting its cost to stepgate.

Scenario: Larkspur Freight sorts parcels into three service tiers (economy, standard,
express) from eight measurements taken at drop-off. The data are generated here from a
fixed data seed (2026), not measured: an invented scenario. The columns have very different
scales on purpose (route distance in the thousands of km, declared value in the hundreds,
a fragility score between 0 and 1), so input normalisation matters:

  weight_kg, distance_km, declared_value, volume_l, fragility, days_to_deadline,
  dropoff_hour, tenure_months

Model: 8 -> 16 -> 16 -> 3, tanh (or --activation relu), float64, PyTorch's default initialisation under
torch.manual_seed(seed) (the run's --seed sets the initial weights only; the data never
change). Inputs standardised with mean and POPULATION sd (divisor n) unless --no-normalize.
Training: full batch, torch.optim.SGD(lr, momentum=beta), cross-entropy with reduction
"mean" (or "sum" with --sum-loss). Iteration k's cost is the full-batch loss after k
updates (iteration 0: at the initial weights); grad_norm is the norm of its gradient.

Protocol (stepgate problem kind `command`):
  per run : train_mlp.py --lr R --seed S --steps N [--beta B]  -> {"iter": k, "cost": J,
            "grad_norm": g} lines for k = 0..N, then {"params": [...]} (all weights, flat)
  serving : train_mlp.py --serve   (requests on stdin, one JSON object per line; a request's
            "beta" field, if present, overrides --beta)
"""
import argparse
import math
import os
import signal
import sys

import numpy as np
import torch

# The command protocol (examples/stepgate_command.py) and the data helpers (examples/example_data.py),
# shared by the examples.
sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from example_data import standardise  # noqa: E402
from stepgate_command import run_or_serve  # noqa: E402

DATA_SEED = 2026
ROWS, CLASSES = 1200, 3


# ---------------------------------------------------------------------------------------
# The data and the model
# ---------------------------------------------------------------------------------------

def make_parcels(rows=ROWS, seed=DATA_SEED):
    """Larkspur Freight's parcels: features in their natural units, and tier labels 0..2."""
    rng = np.random.default_rng(seed)
    weight = rng.lognormal(mean=1.5, sigma=0.6, size=rows)            # kg, ~ 5
    distance = rng.uniform(50.0, 4000.0, size=rows)                    # km, thousands
    value = rng.lognormal(mean=5.0, sigma=0.8, size=rows)              # currency, ~ 200
    volume = weight * rng.uniform(3.0, 8.0, size=rows)                 # litres, ~ 30
    fragility = rng.beta(2.0, 5.0, size=rows)                          # 0..1
    deadline = rng.integers(1, 11, size=rows).astype(np.float64)       # days, 1..10
    hour = rng.uniform(6.0, 22.0, size=rows)                           # hour of day
    tenure = rng.exponential(30.0, size=rows)                          # months
    X = np.column_stack([weight, distance, value, volume, fragility, deadline, hour, tenure])
    # Hidden rule: urgency (near deadline, long route, valuable, fragile) pushes a parcel up
    # the tiers; late drop-offs and loyal customers nudge it; noise keeps classes overlapping.
    z = (X - X.mean(axis=0)) / X.std(axis=0)
    urgency = (-1.2 * z[:, 5] + 0.8 * z[:, 1] + 0.6 * z[:, 2] + 0.5 * z[:, 4]
               + 0.3 * np.tanh(z[:, 6]) + 0.2 * z[:, 7] - 0.3 * z[:, 0] * z[:, 3])
    urgency += rng.normal(scale=0.5, size=rows)
    y = np.digitize(urgency, np.quantile(urgency, [0.4, 0.75]))      # 40% / 35% / 25%
    return X, y


ACTIVATIONS = {"tanh": torch.nn.Tanh, "relu": torch.nn.ReLU}


def make_model(seed, features, activation):
    torch.manual_seed(seed)
    kw = {"dtype": torch.float64}
    act = ACTIVATIONS[activation]
    return torch.nn.Sequential(
        torch.nn.Linear(features, 16, **kw), act(),
        torch.nn.Linear(16, 16, **kw), act(),
        torch.nn.Linear(16, CLASSES, **kw))


def train(X, y, reduction, activation, lr, seed, steps, beta, emit, stopped):
    """Emits iterations 0..steps; returns the final parameters as a flat list, or None when
    the run diverged or was stopped."""
    model = make_model(seed, X.shape[1], activation)
    params = list(model.parameters())
    opt = torch.optim.SGD(params, lr=lr, momentum=beta)
    loss_fn = torch.nn.CrossEntropyLoss(reduction=reduction)
    for k in range(steps + 1):
        opt.zero_grad(set_to_none=False)
        loss = loss_fn(model(X), y)
        loss.backward()
        with torch.no_grad():
            grad_norm = math.sqrt(sum(float((p.grad * p.grad).sum()) for p in params))
        cost = float(loss)
        emit({"iter": k, "cost": cost, "grad_norm": grad_norm})
        if not math.isfinite(cost) or stopped():
            return None
        if k < steps:
            opt.step()
    return [float(v) for p in params for v in p.detach().reshape(-1)]


def main():
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("--lr", type=float, help="learning rate (per-run mode)")
    p.add_argument("--seed", type=int, default=0, help="seed of the weight initialisation (default 0)")
    p.add_argument("--steps", type=int, help="number of updates (per-run mode)")
    p.add_argument("--beta", type=float, default=0.9, help="momentum (default 0.9; 0 = plain gradient descent)")
    p.add_argument("--activation", choices=sorted(ACTIVATIONS), default="tanh",
                   help="hidden-layer activation (default tanh)")
    p.add_argument("--sum-loss", action="store_true", help="planted change: reduction='sum', not 'mean'")
    p.add_argument("--no-normalize", action="store_true", help="planted change: inputs not standardised")
    p.add_argument("--serve", action="store_true", help="serving mode: requests on stdin")
    args = p.parse_args()
    signal.signal(signal.SIGPIPE, signal.SIG_DFL)  # reader gone: end quietly
    torch.set_num_threads(1)
    torch.set_num_interop_threads(1)
    torch.use_deterministic_algorithms(True)

    X, y = make_parcels()
    X = torch.from_numpy(X if args.no_normalize else standardise(X, "train_mlp"))
    y = torch.from_numpy(y).long()
    reduction = "sum" if args.sum_loss else "mean"

    def run_one(rate, seed, budget, beta, emit, stopped):
        return train(X, y, reduction, args.activation, rate, seed, budget, beta, emit, stopped)

    return run_or_serve(p, args, run_one, beta=args.beta)


if __name__ == "__main__":
    sys.exit(main())
