#!/usr/bin/env python3
"""Fault: iteration 0 with cost 1.0, iteration 1 with cost NaN (the bare JSON token), exit 0."""
import argparse, json
p = argparse.ArgumentParser(); [p.add_argument(f, type=float) for f in ("--lr", "--seed", "--steps")]
a, _ = p.parse_known_args()  # extras ignored
print(json.dumps({"iter": 0, "cost": 1.0}), flush=True)
print(json.dumps({"iter": 1, "cost": float("nan")}), flush=True)
