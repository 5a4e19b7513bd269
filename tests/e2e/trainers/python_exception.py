#!/usr/bin/env python3
"""Fault: a trainer whose import fails, as one without PyTorch installed does: a Python
traceback ending in ModuleNotFoundError on stderr, exit status 1, no output."""
import argparse
p = argparse.ArgumentParser(); [p.add_argument(f, type=float) for f in ("--lr", "--seed", "--steps")]
a, _ = p.parse_known_args()  # extras ignored
import stepgate_test_module_that_is_not_installed  # noqa: F401  (raises ModuleNotFoundError)
