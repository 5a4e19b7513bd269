#!/usr/bin/env python3
"""Fault: one iteration, then sleeps forever (never exits on its own; SIGTERM ends it)."""
import argparse, json, time
p = argparse.ArgumentParser(); [p.add_argument(f, type=float) for f in ("--lr", "--seed", "--steps")]
a, _ = p.parse_known_args()  # extras ignored
print(json.dumps({"iter": 0, "cost": 1.0}), flush=True)
while True:
    time.sleep(3600)
