#!/usr/bin/env python3
"""The manual check of examples/torch_minibatch: train.py's training run by hand at a list of
rates, judged the way a practitioner reads a training curve, without stepgate.

For every configuration (the suite's two optimizers, and the planted changes) and every rate,
both seeds train for the suite's budget of steps (no early stop but a non-finite loss), and the
table shows, per rate: the start loss (iteration 0's minibatch loss), the final smoothed loss
(the mean of the minibatch losses of the last 10% of the steps), the held-out accuracy at the
end (1,000 test images), the largest minibatch loss seen, and a judgement. Values of the two
seeds are separated by "/".

Judgement, per seed (rules of thumb of our own, stated so that they can be argued with); a rate
gets its worse seed's word (fails > degrades > slow > trains):
  fails     a non-finite loss; or a blow-up: a minibatch loss above BLOWUP x the start loss; or
            ends at chance level: held-out accuracy below CHANCE_LEVEL (ten classes: 0.1 is a
            guess); or trained to nothing: final smoothed loss not below the start loss.
  trains    held-out accuracy within ACCURACY_SLACK of the configuration's best, and final
            smoothed loss within LOSS_SLACK x of the configuration's best (best: the highest
            accuracy and the lowest smoothed loss of any rate, seeds averaged);
  slow      otherwise, at a rate below the configuration's best-accuracy rate (not there yet);
  degrades  otherwise, above it (trains, but worse than a smaller rate does).
The manual edge is the highest rate judged `trains` with every rate between it and the most
accurate `trains` rate also `trains`; the first failing rate is the lowest rate above the most
accurate one that is judged `fails` (where the run is lost, as a blow-up is for stepgate).

Rates: 1e-4..10 at 3 per decade, plus 0.07, 0.15 and 0.3 (between 0.05 and 0.5); while the best
rate is among the three lowest, a decade lower at 3 per decade (down to 1e-8); then two rates
between the highest `trains` grid rate and the next grid rate (so the edge is resolved to a
factor 1.29).

    /usr/bin/python3 examples/torch_minibatch/manual_check.py --jobs 2
    /usr/bin/python3 examples/torch_minibatch/manual_check.py --only adam-cosine
"""
import argparse
import math
import multiprocessing
import os
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import train  # noqa: E402

BUDGET = 300          # steps, as suite.json
SEEDS = (1, 2)        # as suite.json ("seeds": 2 means 1, 2)
BATCH = 64
BLOWUP = 10.0         # a minibatch loss 10x the start: the curve has left the chart
CHANCE_LEVEL = 0.2    # ten classes: guessing scores 0.1
ACCURACY_SLACK = 0.02  # two points of held-out accuracy below the best
LOSS_SLACK = 1.25     # final smoothed loss at most 25% above the best
GRID = [10.0 ** (e / 3) for e in range(-12, 4)]
LOWEST = 1e-8         # how far down the rates go when the best rate is among the lowest
EXTRA = [0.07, 0.15, 0.3]

# name: (kind, schedule, batch size, --sum-loss, --no-normalize). The planted changes are made on
# both optimizers of the suite.
MOMENTUM = dict(kind="momentum", beta=0.9)
ADAM = dict(kind="adam", beta1=0.9, beta2=0.999, eps=1e-8)
COSINE = {"kind": "cosine", "warmup": 30, "floor": 0.0}
CONSTANT = {"kind": "constant", "warmup": 0}
CONFIGS = {
    "hb-0.9": (MOMENTUM, CONSTANT, BATCH, False, False),
    "hb-0.9 --sum-loss": (MOMENTUM, CONSTANT, BATCH, True, False),
    "hb-0.9 --no-normalize": (MOMENTUM, CONSTANT, BATCH, False, True),
    "hb-0.9 batch x4": (MOMENTUM, CONSTANT, 4 * BATCH, False, False),
    "adam-cosine": (ADAM, COSINE, BATCH, False, False),
    "adam-cosine --sum-loss": (ADAM, COSINE, BATCH, True, False),
    "adam-cosine --no-normalize": (ADAM, COSINE, BATCH, False, True),
    "adam-cosine batch x4": (ADAM, COSINE, 4 * BATCH, False, False),
}

_data = {}


def one_run(job):
    """(start, smoothed, accuracy, max loss, finite) of one run: config name, rate, seed."""
    name, rate, seed = job
    optimizer, schedule, batch, sum_loss, no_normalize = CONFIGS[name]
    if no_normalize not in _data:
        _data[no_normalize] = train.load_images(normalize=not no_normalize)
    data = _data[no_normalize]
    settings = dict(optimizer, batch_size=batch, schedule=schedule)
    costs = []
    model = train.train(data, settings, rate, seed, BUDGET, "sum" if sum_loss else "mean", 0,
                        lambda o: costs.append(o["cost"]), lambda: False)
    finite = model is not None
    tail = costs[-max(1, len(costs) // 10):]
    accuracy = math.nan
    if finite:
        with train.torch.no_grad():
            accuracy = float((model(data[2]).argmax(1) == data[3]).float().mean())
    return costs[0], sum(tail) / len(tail), accuracy, max(costs), finite


def verdict_of(run, best_accuracy, best_loss, below_best):
    start, smoothed, accuracy, top, finite = run
    if not finite:
        return "fails", "NaN"
    if top > BLOWUP * start:
        return "fails", "blow-up"
    if accuracy < CHANCE_LEVEL:
        return "fails", "chance level"
    if smoothed >= start:
        return "fails", "trained to nothing"
    if accuracy >= best_accuracy - ACCURACY_SLACK and smoothed <= LOSS_SLACK * best_loss:
        return "trains", ""
    return ("slow", "") if below_best else ("degrades", "")


RANK = {"trains": 0, "slow": 1, "degrades": 2, "fails": 3}
WHY = ["", "trained to nothing", "chance level", "blow-up", "NaN"]  # the worse reason is shown


def mean(xs):
    return sum(xs) / len(xs)


def best_rate(results):
    """The rate with the highest held-out accuracy (seeds averaged) among runs that stayed finite."""
    usable = {r: runs for r, runs in results.items() if all(x[4] for x in runs)}
    return max(usable, key=lambda r: mean([x[2] for x in usable[r]]))


def judge(results):
    """{rate: (word, why)} and the manual edge, from {rate: [run per seed]}."""
    usable = {r: runs for r, runs in results.items() if all(x[4] for x in runs)}
    best_accuracy_rate = best_rate(results)
    best_accuracy = mean([x[2] for x in usable[best_accuracy_rate]])
    best_loss = min(mean([x[1] for x in runs]) for runs in usable.values())
    words = {}
    for r, runs in results.items():
        verdicts = [verdict_of(x, best_accuracy, best_loss, r < best_accuracy_rate) for x in runs]
        words[r] = max(verdicts, key=lambda v: (RANK[v[0]], WHY.index(v[1])))
    trains = [r for r in results if words[r][0] == "trains"]
    if not trains:
        return words, None
    edge = max(trains, key=lambda r: mean([x[2] for x in results[r]]))
    for r in sorted(results):
        if r > edge:
            if words[r][0] != "trains":
                break
            edge = r
    return words, edge


def table(name, results, words, edge):
    both = lambda xs, f: " / ".join(f.format(x) for x in xs)  # noqa: E731
    best = best_rate(results)
    print(f"\n### {name}: manual edge {edge:.4g}" if edge else f"\n### {name}: no rate trains")
    print(f"\nbest held-out accuracy {mean([x[2] for x in results[best]]):.3f} at rate {best:.4g}\n")
    print("| rate | start loss | final smoothed loss | held-out accuracy | max loss | judgement |")
    print("|---:|---:|---:|---:|---:|---|")
    for r in sorted(results):
        runs = results[r]
        word, why = words[r]
        print(f"| {r:.4g} | {runs[0][0]:.4g} | {both([x[1] for x in runs], '{:.4g}')} | "
              f"{both([x[2] for x in runs], '{:.3f}')} | {both([x[3] for x in runs], '{:.3g}')} | "
              f"{word}{' (' + why + ')' if why else ''} |")


def check(name, pool):
    def run_rates(rates):
        jobs = [(name, r, s) for r in rates for s in SEEDS]
        out = pool.map(one_run, jobs) if pool else list(map(one_run, jobs))
        return {r: out[i * len(SEEDS):(i + 1) * len(SEEDS)] for i, r in enumerate(rates)}

    results = run_rates(sorted(set(GRID + EXTRA)))
    words, _ = judge(results)
    # The best rate among the lowest three: the range that trains lies lower (raw inputs); go
    # down a decade at a time until rates below the best are seen.
    while min(results) > LOWEST and best_rate(results) in sorted(results)[:3]:
        low = min(results)
        results.update(run_rates([low * 10.0 ** (-i / 3) for i in (1, 2, 3)]))
        words, _ = judge(results)
    grid = sorted(r for r in results if r in GRID or r < GRID[0])
    trains = [r for r in grid if words[r][0] == "trains"]
    if trains:  # two rates between the highest `trains` grid rate and the next grid rate
        low = max(trains)
        high = next((r for r in grid if r > low), None)
        if high:
            between = [low * (high / low) ** (i / 3) for i in (1, 2)]
            results.update(run_rates([r for r in between if r not in results]))
    words, edge = judge(results)
    table(name, results, words, edge)
    best = best_rate(results)
    fails = [r for r in sorted(results) if r > best and words[r][0] == "fails"]
    return edge, (fails[0] if fails else None), mean([x[2] for x in results[best]]), best


def main():
    p = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    p.add_argument("--jobs", type=int, default=1, help="processes (default 1)")
    p.add_argument("--only", choices=sorted(CONFIGS), action="append", help="one configuration (repeatable)")
    args = p.parse_args()
    print(f"budget {BUDGET} steps, batch {BATCH} unless stated, seeds {SEEDS}, "
          f"{train.TRAIN_IMAGES} training images, {train.HELDOUT_IMAGES} held-out")
    train.setup_torch()  # once: the forked workers inherit it
    pool = multiprocessing.get_context("fork").Pool(args.jobs) if args.jobs > 1 else None
    found = {name: check(name, pool) for name in (args.only or CONFIGS)}
    number = lambda v: "none" if v is None else f"{v:.4g}"  # noqa: E731
    print("\n| configuration | manual edge | first failing rate | best held-out accuracy (at rate) |")
    print("|---|---:|---:|---:|")
    for name, (edge, fails, accuracy, best) in found.items():
        print(f"| {name} | {number(edge)} | {number(fails)} | {accuracy:.3f} ({best:.4g}) |")
    return 0


if __name__ == "__main__":
    sys.exit(main())
