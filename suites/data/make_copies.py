#!/usr/bin/python3
"""Writes the CSV copies in this folder from the files Debian's python3-sklearn 1.2.1 ships
(/usr/lib/python3/dist-packages/sklearn/datasets/data), with a header row of column names.
Run once by a maintainer; stepgate itself never runs Python. See README.md for provenance."""
import csv, gzip, pathlib
from sklearn import datasets  # only for the feature names

SRC = pathlib.Path("/usr/lib/python3/dist-packages/sklearn/datasets/data")
HERE = pathlib.Path(__file__).parent

def snake(name):
    return name.replace(" (cm)", "").replace(" ", "_").replace("/", "_").replace("-", "_")

def write(name, header, rows):
    with open(HERE / name, "w", newline="") as f:
        w = csv.writer(f, lineterminator="\n")
        w.writerow(header)
        w.writerows(rows)

# Diabetes (Efron, Hastie, Johnstone & Tibshirani 2004): raw features and target, two files.
X = [line.split() for line in gzip.open(SRC / "diabetes_data_raw.csv.gz", "rt")]
y = [line.split()[0] for line in gzip.open(SRC / "diabetes_target.csv.gz", "rt")]
write("diabetes.csv", ["age", "sex", "bmi", "bp", "s1", "s2", "s3", "s4", "s5", "s6", "progression"],
      [row + [t] for row, t in zip(X, y)])

# Files whose first line is "n_samples,n_features,class names...", then features and class id.
for src, dst, names, target in [
    ("breast_cancer.csv", "breast_cancer.csv", datasets.load_breast_cancer().feature_names, "benign"),
    ("wine_data.csv", "wine.csv", datasets.load_wine().feature_names, "cultivar"),
    ("iris.csv", "iris.csv", datasets.load_iris().feature_names, "species"),
]:
    rows = list(csv.reader(open(SRC / src)))[1:]
    write(dst, [snake(n) for n in names] + [target], rows)
