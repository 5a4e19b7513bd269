#!/usr/bin/env python3
"""Fault: two good iterations, then the process dies of SIGSEGV (no core file is written)."""
import argparse, json, os, resource, signal
p = argparse.ArgumentParser(); [p.add_argument(f, type=float) for f in ("--lr", "--seed", "--steps")]
a, _ = p.parse_known_args()  # extras ignored
for k in range(2):
    print(json.dumps({"iter": k, "cost": 1.0 / (k + 1)}), flush=True)
resource.setrlimit(resource.RLIMIT_CORE, (0, 0))
os.kill(os.getpid(), signal.SIGSEGV)
