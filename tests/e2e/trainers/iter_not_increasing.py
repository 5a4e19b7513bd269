#!/usr/bin/env python3
"""Fault: iterations 0, 1, 2, 2 (the last one repeats), costs decreasing, exit 0."""
import argparse, json
p = argparse.ArgumentParser(); [p.add_argument(f, type=float) for f in ("--lr", "--seed", "--steps")]
a, _ = p.parse_known_args()  # extras ignored
for i, k in enumerate([0, 1, 2, 2]):
    print(json.dumps({"iter": k, "cost": 1.0 / (i + 1)}), flush=True)
