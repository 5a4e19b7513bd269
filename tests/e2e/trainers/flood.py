#!/usr/bin/env python3
"""Fault: an endless stream of valid iteration lines (past --steps, never stopping), each with
a 10 kB "note" field; cost fixed at 1.0."""
import argparse, json, signal
p = argparse.ArgumentParser(); [p.add_argument(f, type=float) for f in ("--lr", "--seed", "--steps")]
a, _ = p.parse_known_args()  # extras ignored
signal.signal(signal.SIGPIPE, signal.SIG_DFL)  # reader gone: die quietly
note = "x" * 10240
k = 0
while True:
    print(json.dumps({"iter": k, "cost": 1.0, "note": note}), flush=True)
    k += 1
