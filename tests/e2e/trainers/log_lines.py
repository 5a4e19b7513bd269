#!/usr/bin/env python3
"""Like ok.py (w <- w - lr*w from w = 1, J = w^2/2), with a log line before every JSON line."""
import argparse, json, signal
p = argparse.ArgumentParser(); [p.add_argument(f, type=t) for f, t in (("--lr", float), ("--seed", int), ("--steps", int))]
a, _ = p.parse_known_args()  # extras ignored
signal.signal(signal.SIGPIPE, signal.SIG_DFL)  # reader gone: die quietly
w = 1.0
for k in range(a.steps + 1):
    print(f"log: step {k} of {a.steps}, w = {w!r}", flush=True)
    print(json.dumps({"iter": k, "cost": w * w / 2}), flush=True)
    if not abs(w * w / 2) <= 1e300:  # huge, infinite or NaN: stop
        break
    w -= a.lr * w
print("log: done", flush=True)
