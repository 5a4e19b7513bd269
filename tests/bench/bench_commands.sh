#!/usr/bin/env bash
# Benchmark (not a test): the PyTorch example trainer at 20 iterations a run, 16 runs, in
# per-run mode (one process, and one `import torch`, per run) against serving mode (one process
# per worker). Prints both wall times and the ratio. Usage: tests/bench/bench_commands.sh [BUILD]
set -euo pipefail
here="$(cd "$(dirname "$0")/../.." && pwd)"
build="${1:-$here/build}"
work="$(mktemp -d)"
trap 'rm -rf "$work"' EXIT
rates='[0.01, 0.02, 0.05, 0.1, 0.2, 0.3, 0.5, 0.7, 1.0, 1.2, 1.5, 2.0, 3.0, 5.0, 7.0, 10.0]'
suite() {  # $1: serve true/false
  local argv
  if [[ $1 == true ]]; then argv='["/usr/bin/python3", "train_mlp.py", "--serve"]'
  else argv='["/usr/bin/python3", "train_mlp.py", "--lr", "{rate}", "--seed", "{seed}", "--steps", "{budget}", "--beta", "{optimizer.beta}"]'; fi
  cat <<JSON
{"format": "stepgate.suite/1", "name": "bench-commands",
 "optimizers": {"hb-0.9": {"kind": "momentum", "beta": 0.9}},
 "defaults": {"seeds": 1, "budget": 20, "outcome": {"criterion": "cost", "target": 0.3, "confirm_min": 10},
              "rates": {"grid": null, "fixed": $rates}},
 "problems": [{"name": "tiers-mlp", "kind": "command", "optimizers": ["hb-0.9"],
   "command": {"argv": $argv, "serve": $1, "cwd": "$here/examples/torch", "env": {"OMP_NUM_THREADS": "1"}}}]}
JSON
}
suite false > "$work/per-run.json"
suite true > "$work/serving.json"
for jobs in 1 2; do
  t0=$(date +%s.%N); "$build/stepgate" run "$work/per-run.json" --out "$work/p" --jobs $jobs --quiet >/dev/null; t1=$(date +%s.%N)
  "$build/stepgate" run "$work/serving.json" --out "$work/s" --jobs $jobs --quiet >/dev/null; t2=$(date +%s.%N)
  python3 - "$t0" "$t1" "$t2" "$jobs" "$work" <<'PY'
import json, sys
t0, t1, t2, jobs, work = float(sys.argv[1]), float(sys.argv[2]), float(sys.argv[3]), sys.argv[4], sys.argv[5]
p = json.load(open(f"{work}/p/results.json"))["cases"][0]["runs"]
s = json.load(open(f"{work}/s/results.json"))["cases"][0]["runs"]
same = all(a["outcome"] == b["outcome"] and a["trace"] == b["trace"] for a, b in zip(p, s))
print(f"PyTorch MLP, 16 runs x 20 iterations, --jobs {jobs}: per-run {t1 - t0:.2f} s ({(t1 - t0) / 16:.3f} s a run), "
      f"serving {t2 - t1:.2f} s ({(t2 - t1) / 16:.3f} s a run): serving {(t1 - t0) / (t2 - t1):.1f}x faster; "
      f"same runs in both modes: {same}")
PY
done
