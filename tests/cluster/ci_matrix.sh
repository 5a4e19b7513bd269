#!/usr/bin/env bash
# The CI-matrix pattern without a CI: N jobs, each `stepgate run SUITE --shard K/N`, started as
# N concurrent processes that share nothing but the suite, then one merge job that sees only the
# shards' results.json (copied, as a CI passes artifacts), and the merge must equal a
# one-machine run, timestamps, timings, host facts and the shard field aside.
#
# Usage: ci_matrix.sh STEPGATE [SUITE] [N]    (SUITE defaults to tests/cluster/suite.json, N to 3)
# Exit 0 equal, 1 a failure, 77 skipped (no /usr/bin/python3 to compare with).
set -euo pipefail

here=$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)
stepgate=${1:?usage: ci_matrix.sh STEPGATE [SUITE] [N]}
suite=${2:-$here/suite.json}
n=${3:-3}
python=/usr/bin/python3

fail() { echo "FAIL: $*" >&2; exit 1; }
[[ -x $stepgate ]] || fail "stepgate binary not found or not executable: $stepgate"
[[ -f $suite ]] || fail "suite not found: $suite"
[[ $n =~ ^[1-9][0-9]*$ ]] || fail "N must be a positive integer, got '$n'"
[[ -x $python ]] || { echo "SKIP: $python is missing (needed to compare results)" >&2; exit 77; }

work=$(mktemp -d "${TMPDIR:-/tmp}/sg-matrix.XXXXXX")
pids=()
cleanup() {
  local status=$?
  set +e        # a failing step (or a closed reader of our output: PIPE is ignored) must not
  trap '' PIPE  # stop the cleanup half-way
  for pid in "${pids[@]}"; do kill -TERM "$pid" 2> /dev/null || true; done
  wait 2> /dev/null || true
  rm -rf "$work"
  exit "$status"
}
trap cleanup EXIT
trap 'exit 130' INT TERM

# The matrix jobs: each in its own folder, all at once (--jobs 1: one core each, like a small
# runner; results do not depend on it).
t0=$(date +%s.%N)
for ((k = 1; k <= n; k++)); do
  mkdir -p "$work/job-$k"
  (cd "$work/job-$k" && exec "$stepgate" run "$suite" --shard "$k/$n" --jobs 1 --quiet --out out) \
    > "$work/job-$k/log" 2>&1 &
  pids+=($!)
done
failed=0
for ((k = 1; k <= n; k++)); do
  if ! wait "${pids[k - 1]}"; then
    echo "matrix job $k/$n failed:" >&2
    tail -n 20 "$work/job-$k/log" >&2
    failed=1
  fi
done
pids=()
((failed == 0)) || fail "a matrix job failed"
t1=$(date +%s.%N)
echo "matrix: $n concurrent shard jobs done in $("$python" -c "print(f'{$t1 - $t0:.1f}')") s"

# The merge job gets only the artifacts, in an order of its own (last shard first).
mkdir -p "$work/merge"
artifacts=()
for ((k = n; k >= 1; k--)); do
  [[ -f $work/job-$k/out/results.json ]] || fail "matrix job $k/$n wrote no results.json"
  mkdir -p "$work/merge/shard-$k"
  cp "$work/job-$k/out/results.json" "$work/merge/shard-$k/results.json"
  artifacts+=("$work/merge/shard-$k/results.json")
done
(cd "$work/merge" && "$stepgate" merge "${artifacts[@]}" --out merged) || fail "stepgate merge failed"

"$stepgate" run "$suite" --out "$work/single" --quiet || fail "the one-machine run failed"
"$python" "$here/compare_results.py" "$work/merge/merged/results.json" "$work/single/results.json" ||
  fail "the merged matrix results differ from the one-machine run"
