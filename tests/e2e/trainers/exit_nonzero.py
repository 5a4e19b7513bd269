#!/usr/bin/env python3
"""Fault: three good iterations, then a message on stderr and exit status 3."""
import argparse, json, sys
p = argparse.ArgumentParser(); [p.add_argument(f, type=float) for f in ("--lr", "--seed", "--steps")]
a, _ = p.parse_known_args()  # extras ignored
for k in range(3):
    print(json.dumps({"iter": k, "cost": 1.0 / (k + 1)}), flush=True)
print("boom: disk on fire", file=sys.stderr, flush=True)
sys.exit(3)
