#!/usr/bin/env python3
"""Checks suites/schema/suite.schema.json (JSON Schema draft 2020-12, python3-jsonschema):
the schema is itself valid, every suites/*.json and tests/data/suites/*.json follows it, and
deliberately wrong documents are rejected. stepgate's own parser checks more (references
between sections, from < to, files); tests/unit/test_suite.cpp covers that."""
import copy
import json
import pathlib
import sys

SKIP = 77  # ctest SKIP_RETURN_CODE
try:
    import jsonschema
except ImportError:
    print("python3-jsonschema is not installed; skipped")
    sys.exit(SKIP)

root = pathlib.Path(sys.argv[1] if len(sys.argv) > 1 else ".")
schema = json.loads((root / "suites/schema/suite.schema.json").read_text())
jsonschema.Draft202012Validator.check_schema(schema)
validator = jsonschema.Draft202012Validator(schema)
failures = []


def errors(document):
    return sorted(validator.iter_errors(document), key=lambda e: list(e.absolute_path))


suites = (sorted(root.glob("suites/*.json")) + sorted(root.glob("tests/data/suites/*.json"))
          + sorted(root.glob("examples/*/suite.json")))
for path in suites:
    for e in errors(json.loads(path.read_text())):
        failures.append(f"{path}: /{'/'.join(map(str, e.absolute_path))}: {e.message}")

BASE = {
    "format": "stepgate.suite/1",
    "name": "schema-base",
    "datasets": {"houses": {"csv": "data/tiny.csv", "target": "price"}},
    "optimizers": {"hb": {"kind": "momentum", "beta": 0.9}},
    "defaults": {"seeds": 3},
    "problems": [
        {"name": "ols", "kind": "least_squares", "dataset": "houses", "optimizers": ["gd", "hb"],
         "rates": {"precision": 0.01}},
        {"name": "bowl", "kind": "quadratic"},
    ],
}
for e in errors(BASE):
    failures.append(f"the valid base document: /{'/'.join(map(str, e.absolute_path))}: {e.message}")


def p0(doc):
    return doc["problems"][0]


WRONG = {
    "bad format tag": lambda d: d.update(format="stepgate.suite/2"),
    "missing name": lambda d: d.pop("name"),
    "bad suite name": lambda d: d.update(name="my suite"),
    "unknown top-level key": lambda d: d.update(problem=[]),
    "empty problems": lambda d: d.update(problems=[]),
    "unknown problem key": lambda d: p0(d).update(preciison=0.1),
    "unknown rates key": lambda d: p0(d)["rates"].update(preciison=0.1),
    "unknown defaults key": lambda d: d["defaults"].update(name="x"),
    "budget as a string": lambda d: p0(d).update(budget="many"),
    "budget 0": lambda d: p0(d).update(budget=0),
    "precision 0": lambda d: p0(d)["rates"].update(precision=0),
    "lanes 17": lambda d: p0(d)["rates"].update(lanes=17),
    "negative fixed rate": lambda d: p0(d)["rates"].update(fixed=[0.1, -1]),
    "empty seeds": lambda d: p0(d).update(seeds=[]),
    "duplicate seeds": lambda d: p0(d).update(seeds=[1, 2, 1]),
    "bad criterion": lambda d: p0(d).update(outcome={"criterion": "gapp"}),
    "pinned 0": lambda d: p0(d).update(pinned=0),
    "beta 1.0": lambda d: d["optimizers"]["hb"].update(beta=1.0),
    "optimizer without kind": lambda d: d["optimizers"]["hb"].pop("kind"),
    "sgd without batch size": lambda d: d["optimizers"].update(mb={"kind": "sgd"}),
    "unknown batch sampling": lambda d: d["optimizers"].update(
        mb={"kind": "sgd", "batch_size": 4, "sampling": "shuffled"}),
    "batch sampling without batch size": lambda d: d["optimizers"].update(mb={"kind": "gd", "sampling": "independent"}),
    "two data sources": lambda d: d["datasets"]["houses"].update(generate={}),
    "no data source": lambda d: d["datasets"].update(empty={}),
    "linear model without dataset": lambda d: p0(d).pop("dataset"),
    "dataset on a quadratic": lambda d: d["problems"][1].update(dataset="houses"),
    "scaling on a quadratic": lambda d: d["problems"][1].update(scalings=["none", "std"]),
    "reference on softmax": lambda d: p0(d).update(kind="softmax", reference="ref.json"),
    "unknown test function": lambda d: d["problems"].append(
        {"name": "tf", "kind": "test_function", "function": "rosenbrok"}),
    "units scaling with span": lambda d: d.update(scalings={"u": {"kind": "units", "span": 10}}),
    "units factor 0": lambda d: d.update(scalings={"u": {"kind": "units", "factor": 0}}),
    "bad gate severity": lambda d: d.update(gate={"case_added": "error"}),
    "command without argv": lambda d: d["problems"].append({"name": "c", "kind": "command", "command": {}}),
    "command argv as a shell string": lambda d: d["problems"].append(
        {"name": "c", "kind": "command", "command": {"argv": "python3 train.py --lr {rate}"}}),
    "command with a dataset": lambda d: d["problems"].append(
        {"name": "c", "kind": "command", "dataset": "houses", "command": {"argv": ["t"]}}),
    "command key on a quadratic": lambda d: d["problems"][1].update(command={"argv": ["t"]}),
    "unknown command key": lambda d: d["problems"].append(
        {"name": "c", "kind": "command", "command": {"argv": ["t"], "shell": True}}),
    "produce without argv": lambda d: d["datasets"]["houses"].update(produce={"cwd": "."}),
}
for what, change in WRONG.items():
    document = copy.deepcopy(BASE)
    change(document)
    if not errors(document):
        failures.append(f"the schema accepts a wrong document: {what}")

if failures:
    print("\n".join(failures))
    sys.exit(1)
print(f"schema: {len(suites)} suite files valid, {len(WRONG)} wrong documents rejected")
