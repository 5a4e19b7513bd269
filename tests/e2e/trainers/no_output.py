#!/usr/bin/env python3
"""Fault: prints nothing at all and exits 0."""
import argparse
p = argparse.ArgumentParser(); [p.add_argument(f, type=float) for f in ("--lr", "--seed", "--steps")]
a, _ = p.parse_known_args()  # extras ignored
