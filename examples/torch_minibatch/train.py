#!/usr/bin/env python3
"""A PyTorch MLP trained by minibatches (SGD with momentum or Adam, shuffled epochs, float32),
reporting its loss to stepgate every step or a held-out loss every N steps.

Scenario (invented): Wrenfield Resale, a second-hand clothing marketplace, tags the photos of
new listings with one of ten garment categories. Its tagger is retrained weekly from a fresh
sample of labelled photos. The photos here are real: the first TRAIN_IMAGES training images of
Fashion-MNIST (Xiao, Rasul & Vollgraf 2017, "Fashion-MNIST: a Novel Image Dataset for
Benchmarking Machine Learning Algorithms", arXiv:1708.07747), 28 x 28 grey levels, read in
place from Debian's dataset-fashion-mnist package (gzip IDX files; nothing is downloaded). The
held-out set is the first HELDOUT_IMAGES images of its test file.

Inputs: pixels / 255, then standardised with ONE mean and ONE population sd (divisor n) over
all pixels of the training images (so constant border pixels are no problem), the same shift
and scale applied to the held-out images; --no-normalize keeps the raw grey levels 0..255.
Model: 784 -> HIDDEN (32) -> 10 with ReLU, float32, PyTorch's default initialisation under
torch.manual_seed(seed). Epochs are shuffled by a torch.Generator seeded with the run's seed;
each epoch is cut into floor(n / batch) full minibatches (the remainder is dropped, so every
step sees `batch` images). One thread, deterministic algorithms: a run is a function of its
request.

The budget counts optimizer STEPS (updates), not epochs. What is logged (--log):
  step       (default) {"iter": k, "cost": J_k} for k = 0..budget, J_k the training loss (mean
             cross-entropy; the sum under --sum-loss) of the minibatch of step k+1 at the
             weights after k updates: the loss a training loop computes just before its
             (k+1)-th update. Iteration 0 is the loss at the initial weights, before any
             update; iteration `budget` is the loss of the next minibatch after the last
             update (computed, not stepped).
  heldout:N  {"iter": k, "cost": H_k} for k = 0, N, 2N, ... and k = budget, H_k the mean
             cross-entropy of the held-out images at the weights after k updates (the mean
             also under --sum-loss: an evaluation, not the training loss).
A non-finite minibatch loss is printed at its iteration whatever --log says (the training
cannot go on; with heldout:N at the next iteration when that one's held-out loss is already
printed) and the run ends. The optimizer's rate at update t (0-based) is
rate * multiplier(t) of the schedule, defined as stepgate's (linear warm-up over `warmup`
updates, then the schedule's own clock; cosine decays to `floor` at the budget).

Protocol (stepgate problem kind `command`, examples/stepgate_command.py):
  per run : train.py --lr R --seed S --steps N [--kind momentum|adam|sgd ...]
  serving : train.py --serve; each request {"run", "rate", "seed", "budget", "optimizer",
            "kind", "beta", "beta1", "beta2", "eps", "batch_size", "schedule": {"kind",
            "warmup", "floor", ...}, "scaling"} sets what it carries; what it does not carry
            (or a batch_size <= 0) comes from the command line.

Planted changes: --sum-loss (reduction "sum": the loss and gradient are `batch` times larger),
--no-normalize (raw grey levels), and a batch size x4 (batch_size in the suite or --batch-size).
"""
import argparse
import gzip
import math
import os
import signal
import struct
import sys

import numpy as np
import torch

# The command protocol (examples/stepgate_command.py), shared by the examples.
sys.path.insert(0, os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
from stepgate_command import run_or_serve  # noqa: E402

DATA_DIR = "/usr/share/datasets/fashion-mnist"
TRAIN_IMAGES = 5000  # the first images of the training file
HELDOUT_IMAGES = 1000  # the first images of the test file
HIDDEN = 32
CLASSES = 10
PIXELS = 28 * 28


# ---------------------------------------------------------------------------------------
# The data
# ---------------------------------------------------------------------------------------

def read_idx(path, count, item_shape):
    """The first `count` items of a gzip IDX file (uint8), read without decompressing the rest.
    Format: a big-endian magic 0x000008DD (DD = number of dimensions), the dimension sizes as
    big-endian uint32, then the data (LeCun et al.'s MNIST file format, used by Fashion-MNIST)."""
    with gzip.open(path, "rb") as f:
        magic, = struct.unpack(">I", f.read(4))
        dims = magic & 0xFF
        if magic >> 8 != 0x08 or dims != 1 + len(item_shape):
            sys.exit(f"train.py: {path}: not a uint8 IDX file with {1 + len(item_shape)} dimensions")
        shape = struct.unpack(">" + "I" * dims, f.read(4 * dims))
        if tuple(shape[1:]) != item_shape or shape[0] < count:
            sys.exit(f"train.py: {path}: shape {shape}, need at least {count} items of {item_shape}")
        size = count * int(np.prod(item_shape, dtype=np.int64))
        data = f.read(size)
        if len(data) != size:
            sys.exit(f"train.py: {path}: truncated")
    return np.frombuffer(data, dtype=np.uint8).reshape((count,) + item_shape)


def load_images(normalize):
    """(X_train, y_train, X_heldout, y_heldout) as float32 / int64 tensors."""
    def part(name, count):
        X = read_idx(os.path.join(DATA_DIR, f"{name}-images-idx3-ubyte.gz"), count, (28, 28))
        y = read_idx(os.path.join(DATA_DIR, f"{name}-labels-idx1-ubyte.gz"), count, ())
        return X.reshape(count, PIXELS).astype(np.float64), y.astype(np.int64)
    if not os.path.isdir(DATA_DIR):
        sys.exit(f"train.py: {DATA_DIR} is missing: install Debian's dataset-fashion-mnist "
                 "(scripts/setup --tests)")
    X, y = part("train", TRAIN_IMAGES)
    Xh, yh = part("t10k", HELDOUT_IMAGES)
    if normalize:
        X, Xh = X / 255.0, Xh / 255.0
        mean = X.mean()
        sd = math.sqrt(((X - mean) ** 2).mean())  # population sd over every training pixel
        X, Xh = (X - mean) / sd, (Xh - mean) / sd
    as_tensor = lambda a: torch.from_numpy(np.ascontiguousarray(a, dtype=np.float32))  # noqa: E731
    return as_tensor(X), torch.from_numpy(y), as_tensor(Xh), torch.from_numpy(yh)


# ---------------------------------------------------------------------------------------
# The optimizer, as a run's settings describe it
# ---------------------------------------------------------------------------------------

def multiplier(schedule, t, budget):
    """The rate multiplier at update t (0-based) of a run of `budget` updates, as stepgate's
    Schedule::multiplier (harness/core/schedule.hpp): linear warm-up (t + 1) / warmup over the
    first `warmup` updates, then the schedule's own clock t - warmup."""
    kind = schedule.get("kind", "constant")
    warmup = int(schedule.get("warmup", 0))
    t = max(t, 0)

    def base(u):
        if kind == "constant":
            return 1.0
        if kind == "cosine":
            horizon = max(budget - warmup, 1)
            floor = float(schedule.get("floor", 0.0))
            if u >= horizon:
                return floor
            return floor + (1.0 - floor) * 0.5 * (1.0 + math.cos(math.pi * u / horizon))
        if kind == "step":
            return float(schedule.get("factor", 0.5)) ** (u // int(schedule.get("every", 1000)))
        if kind == "exponential":
            return math.exp(-float(schedule.get("decay", 1e-3)) * u)
        if kind == "inverse_time":
            return 1.0 / (1.0 + float(schedule.get("decay", 1e-3)) * u)
        raise ValueError(f"unknown schedule kind {kind!r}")

    if t < warmup:
        return base(0) * (t + 1) / warmup
    return base(t - warmup)


def make_optimizer(params, settings, rate):
    kind = settings["kind"]
    if kind == "momentum":
        return torch.optim.SGD(params, lr=rate, momentum=settings["beta"])
    if kind == "sgd":
        return torch.optim.SGD(params, lr=rate)
    if kind == "adam":
        return torch.optim.Adam(params, lr=rate, betas=(settings["beta1"], settings["beta2"]),
                                eps=settings["eps"])
    raise ValueError(f"optimizer kind {kind!r}: this trainer knows momentum, adam and sgd")


def run_settings(defaults, request):
    """The defaults (from the command line) overridden by what the request carries. A
    batch_size <= 0 means "not set" (an older stepgate sends 0 for every optimizer)."""
    s = dict(defaults, schedule=dict(defaults["schedule"]))
    for key in ("beta", "beta1", "beta2", "eps"):
        if isinstance(request.get(key), (int, float)):
            s[key] = float(request[key])
    if isinstance(request.get("kind"), str):
        s["kind"] = request["kind"]
    b = request.get("batch_size")
    if isinstance(b, (int, float)) and b >= 1:
        s["batch_size"] = int(b)
    q = request.get("schedule")
    if isinstance(q, str):
        q = {"kind": q}
    if isinstance(q, dict):
        s["schedule"] = {k: v for k, v in q.items() if v is not None}
    return s


# ---------------------------------------------------------------------------------------
# Training
# ---------------------------------------------------------------------------------------

def make_model(seed):
    torch.manual_seed(seed)
    return torch.nn.Sequential(torch.nn.Linear(PIXELS, HIDDEN), torch.nn.ReLU(),
                               torch.nn.Linear(HIDDEN, CLASSES))


class Batches:
    """Shuffled epochs of full minibatches, from a generator seeded with the run's seed."""

    def __init__(self, n, batch, seed):
        if not 1 <= batch <= n:
            raise ValueError(f"batch size {batch} must be between 1 and the {n} training images")
        self.n, self.batch, self.per_epoch = n, batch, n // batch
        self.gen = torch.Generator().manual_seed(seed)
        self.order, self.next_batch = None, self.per_epoch

    def next(self):
        if self.next_batch == self.per_epoch:
            self.order, self.next_batch = torch.randperm(self.n, generator=self.gen), 0
        i = self.next_batch * self.batch
        self.next_batch += 1
        return self.order[i:i + self.batch]


def train(data, settings, rate, seed, budget, reduction, log_every, emit, stopped):
    """Emits the log lines of one run (see the module's docstring); returns the model, or None
    when the run ended early (a non-finite loss, or a stop)."""
    X, y, Xh, yh = data
    model = make_model(seed)
    opt = make_optimizer(model.parameters(), settings, rate)
    loss_fn = torch.nn.CrossEntropyLoss(reduction=reduction)
    heldout_loss = torch.nn.CrossEntropyLoss()  # always the mean: an evaluation, not the training loss
    batches = Batches(X.shape[0], settings["batch_size"], seed)
    for k in range(budget + 1):
        logged = log_every and (k % log_every == 0 or k == budget)
        if logged:
            with torch.no_grad():
                held = float(heldout_loss(model(Xh), yh))
            emit({"iter": k, "cost": held})
            if stopped() or not math.isfinite(held):
                return None
            if k == budget:
                break
        idx = batches.next()
        loss = loss_fn(model(X[idx]), y[idx])
        cost = float(loss)
        if not log_every:
            emit({"iter": k, "cost": cost})
            if not math.isfinite(cost) or stopped():
                return None
        elif not math.isfinite(cost):  # iterations must increase: after a held-out line, the next
            emit({"iter": k + 1 if logged else k, "cost": cost})
            return None
        if k == budget:
            break
        opt.zero_grad(set_to_none=True)
        loss.backward()
        for g in opt.param_groups:
            g["lr"] = rate * multiplier(settings["schedule"], k, budget)
        opt.step()
    return model


def parse_log(text):
    """0 for "step"; N for "heldout:N"."""
    if text == "step":
        return 0
    head, _, n = text.partition(":")
    if head == "heldout" and n.isdigit() and int(n) >= 1:
        return int(n)
    raise argparse.ArgumentTypeError(f"--log {text!r}: expected step or heldout:N with N >= 1")


def command_line():
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("--lr", type=float, help="base learning rate (per-run mode)")
    p.add_argument("--seed", type=int, default=0, help="seed of the initialisation and the shuffling (default 0)")
    p.add_argument("--steps", type=int, help="number of optimizer steps (per-run mode)")
    p.add_argument("--kind", choices=["momentum", "adam", "sgd"], default="momentum",
                   help="optimizer (default momentum; a request's \"kind\" overrides it)")
    p.add_argument("--beta", type=float, default=0.9, help="momentum coefficient (default 0.9)")
    p.add_argument("--beta1", type=float, default=0.9, help="Adam's first-moment decay (default 0.9)")
    p.add_argument("--beta2", type=float, default=0.999, help="Adam's second-moment decay (default 0.999)")
    p.add_argument("--eps", type=float, default=1e-8, help="Adam's eps (default 1e-8)")
    p.add_argument("--batch-size", type=int, default=64, help="images per step (default 64)")
    p.add_argument("--schedule", choices=["constant", "cosine"], default="constant",
                   help="rate schedule after the warm-up (default constant)")
    p.add_argument("--warmup", type=int, default=0, help="steps of linear warm-up (default 0)")
    p.add_argument("--floor", type=float, default=0.0, help="cosine: final multiplier (default 0)")
    p.add_argument("--log", type=parse_log, default=0, metavar="step|heldout:N",
                   help="log the minibatch loss every step (default) or the held-out loss every N steps")
    p.add_argument("--sum-loss", action="store_true", help="planted change: reduction='sum', not 'mean'")
    p.add_argument("--no-normalize", action="store_true", help="planted change: raw grey levels 0..255")
    p.add_argument("--serve", action="store_true", help="serving mode: requests on stdin")
    return p


def defaults_of(args):
    return {"kind": args.kind, "beta": args.beta, "beta1": args.beta1, "beta2": args.beta2,
            "eps": args.eps, "batch_size": args.batch_size,
            "schedule": {"kind": args.schedule, "warmup": args.warmup, "floor": args.floor}}


def setup_torch():
    torch.set_num_threads(1)
    torch.set_num_interop_threads(1)
    torch.use_deterministic_algorithms(True)


def main():
    p = command_line()
    args = p.parse_args()
    signal.signal(signal.SIGPIPE, signal.SIG_DFL)  # reader gone: end quietly
    setup_torch()
    data = load_images(normalize=not args.no_normalize)
    reduction = "sum" if args.sum_loss else "mean"
    defaults = defaults_of(args)

    def run_one(rate, seed, budget, request, emit, stopped):
        try:
            settings = run_settings(defaults, request)
            train(data, settings, rate, seed, budget, reduction, args.log, emit, stopped)
        except ValueError as e:
            sys.exit(f"train.py: {e}")
        return None  # no params line: 25,450 weights, and no reference to compare them with

    return run_or_serve(p, args, run_one, whole_request=True)


if __name__ == "__main__":
    sys.exit(main())
