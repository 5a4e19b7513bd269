#!/usr/bin/env python3
"""Fault: iteration 0, then a line of JSON cut off in the middle (newline-terminated), exit 0."""
import argparse, json, sys
p = argparse.ArgumentParser(); [p.add_argument(f, type=float) for f in ("--lr", "--seed", "--steps")]
a, _ = p.parse_known_args()  # extras ignored
print(json.dumps({"iter": 0, "cost": 1.0}), flush=True)
sys.stdout.write('{"iter": 1, "cost": \n')
sys.stdout.flush()
