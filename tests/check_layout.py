#!/usr/bin/env python3
"""Checks that every stage includes only the stages docs/design.md allows (arrows point one way)."""
import pathlib, re, sys

ALLOWED = {
    "core": set(),
    "data": {"core"}, "problems": {"core"}, "optimizers": {"core"},
    "analysis": {"problems", "core"},
    "suite": {"data", "core"},
    "run": {"problems", "optimizers", "analysis", "core"},
    "search": {"run", "analysis", "core"},
    # sweep/run_suite applies the gate and writes the reports of a whole run, as `stepgate run`
    "sweep": {"search", "run", "suite", "problems", "data", "gate", "report", "core"},
    "gate": {"core"},
    "report": {"gate", "core"},
}
STAGES = set(ALLOWED) | {"cli"}
root = pathlib.Path(sys.argv[1] if len(sys.argv) > 1 else ".") / "harness"
include = re.compile(r'#include\s+"stepgate/([a-z_]+)/')
bare = re.compile(r'#include\s+"([a-z_]+)/')
bad = []
for path in sorted(root.rglob("*.[ch]pp")):
    parts = path.relative_to(root).parts
    stage = parts[0] if len(parts) > 1 else "umbrella"  # harness/stepgate.hpp: the public headers
    if stage not in STAGES and stage != "umbrella":
        bad.append(f"{path}: folder '{stage}' is not a stage of the table")
        continue
    for n, line in enumerate(path.read_text().splitlines(), 1):
        b = bare.match(line.strip())
        if b and b.group(1) in STAGES:  # headers are reached as "stepgate/STAGE/..." only
            bad.append(f"{path}:{n}: include \"{b.group(1)}/...\" without the stepgate/ prefix")
    if stage in ("cli", "umbrella"):  # these two may include every stage
        continue
    for n, line in enumerate(path.read_text().splitlines(), 1):
        m = include.match(line.strip())
        if m and m.group(1) in STAGES and m.group(1) != stage and m.group(1) not in ALLOWED[stage]:
            bad.append(f"{path}:{n}: stage '{stage}' may not include '{m.group(1)}'")
print("\n".join(bad) if bad else f"layout: {sum(1 for _ in root.rglob('*.[ch]pp'))} files, all includes point down the house")
sys.exit(1 if bad else 0)
