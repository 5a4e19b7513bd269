"""Data helpers shared by the Python examples: a CSV file with one target column, and the
standardisation stepgate's `standardize` scaling applies (population sd, ddof = 0), so that a
trainer's features match the built-in problems' exactly."""
import csv
import sys

import numpy as np


def load_csv(path, target, who):
    """(feature names, X, y) from a CSV file with a header line; exits naming `who` when the
    target column is missing."""
    with open(path, newline="") as f:
        rows = list(csv.reader(f))
    header, body = rows[0], rows[1:]
    if target not in header:
        sys.exit(f"{who}: {path}: no column named {target!r}; columns are {header}")
    t = header.index(target)
    values = np.array(body, dtype=np.float64)
    return [name for j, name in enumerate(header) if j != t], np.delete(values, t, axis=1), values[:, t]


def standardise(v, who):
    """(v - mean) / sd per column, sd the population sd; exits when a column is constant."""
    mean = v.mean(axis=0)
    sd = np.sqrt(((v - mean) ** 2).sum(axis=0) / v.shape[0])
    if np.any(sd == 0.0):
        sys.exit(f"{who}: a column is constant; cannot standardise it")
    return (v - mean) / sd
