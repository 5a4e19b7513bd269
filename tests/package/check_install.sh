#!/usr/bin/env bash
# The C++ package from a user's side: install the build into a temporary prefix, build
# examples/cpp against it with find_package(stepgate), run it on examples/cpp/huber.json, and
# check its exit code and results.json; then check that bad input to the registered kind is an
# error naming the place (exit 2).
#
#   check_install.sh BUILD_DIR SOURCE_DIR TMP_DIR [CMAKE]
set -euo pipefail
build=$1 src=$2 tmp=$3 cmake=${4:-cmake}
python=${PYTHON:-python3}
fail() { echo "check_install: $*" >&2; exit 1; }

rm -rf "$tmp"
mkdir -p "$tmp"
"$cmake" --install "$build" --prefix "$tmp/prefix" > "$tmp/install.log"
prefix=$tmp/prefix
for f in include/stepgate/stepgate.hpp include/stepgate/sweep/registry.hpp include/stepgate/core/custom_kinds.hpp \
         include/stepgate/analysis/problem_checks.hpp include/stepgate/sweep/run_suite.hpp \
         lib/cmake/stepgate/stepgateConfig.cmake lib/cmake/stepgate/stepgateConfigVersion.cmake \
         lib/cmake/stepgate/stepgateTargets.cmake; do
  [ -f "$prefix/$f" ] || fail "not installed: $f"
done
ls "$prefix"/lib/libstepgate.* > /dev/null 2>&1 || fail "no library under $prefix/lib"
[ ! -e "$prefix/include/stepgate/cli" ] || fail "the CLI's headers were installed"
# The installed headers are the library's; nothing may point back into the source tree.
if grep -rq "$src" "$prefix/lib/cmake/stepgate"; then fail "the package refers to the source tree $src"; fi

# A downstream project: only the prefix, never the source or build tree.
"$cmake" -S "$src/examples/cpp" -B "$tmp/example" -DCMAKE_PREFIX_PATH="$prefix" > "$tmp/configure.log" \
  || { cat "$tmp/configure.log"; fail "examples/cpp does not configure against the package"; }
"$cmake" --build "$tmp/example" -j2 > "$tmp/build.log" 2>&1 \
  || { cat "$tmp/build.log"; fail "examples/cpp does not build against the package"; }
example=$tmp/example/huber_example

set +e
"$example" "$src/examples/cpp/huber.json" "$tmp/out" 2 > "$tmp/run.out" 2> "$tmp/run.err"
rc=$?
set -e
cat "$tmp/run.out"
[ $rc -eq 0 ] || { cat "$tmp/run.err"; fail "huber_example exited $rc, expected 0"; }
grep -q "checks of progression-huber / std (huber):" "$tmp/run.out" || fail "no checks printed"
[ "$(grep -c ': pass$' "$tmp/run.out")" -ge 6 ] || fail "fewer than six checks passed"
for f in results.json report.md report.html junit.xml; do [ -s "$tmp/out/$f" ] || fail "no $f written"; done
"$python" - "$tmp/out/results.json" <<'PY'
import json, math, sys
r = json.load(open(sys.argv[1]))
cases = {c["id"]: c for c in r["cases"]}
for opt in ("gd", "hb-0.9"):
    c = cases.get(f"progression-huber/std/{opt}")
    assert c is not None, f"no huber case for {opt}: {sorted(cases)}"
    assert c["problem_kind"] == "huber", c["problem_kind"]
    assert not c.get("error"), c.get("error")
    edge = c["summary"]["edge"]
    assert isinstance(edge, (int, float)) and math.isfinite(edge) and edge > 0, f"edge {edge}"
    print(f"huber {opt}: edge {edge:.4g}, optimum cost {c['optimum_cost']}")
PY

# Bad input to the registered kind: exit 2, the message names the suite file and the pointer.
bad() {  # bad NAME EXPECTED_WHERE EXPECTED_TEXT PYTHON_EDIT
  "$python" - "$src/examples/cpp/huber.json" "$tmp/$1.json" "$src/suites/data/diabetes.csv" "$4" <<'PY'
import json, sys
suite = json.load(open(sys.argv[1]))
suite["datasets"]["diabetes"]["csv"] = sys.argv[3]
huber = suite["problems"][0]
exec(sys.argv[4])
json.dump(suite, open(sys.argv[2], "w"), indent=2)
PY
  set +e
  "$example" "$tmp/$1.json" "$tmp/out-$1" 1 > /dev/null 2> "$tmp/$1.err"
  local code=$?
  set -e
  [ $code -eq 2 ] || { cat "$tmp/$1.err"; fail "$1: exit $code, expected 2"; }
  grep -qF "$tmp/$1.json#$2" "$tmp/$1.err" || { cat "$tmp/$1.err"; fail "$1: the error does not name $2"; }
  grep -qF "$3" "$tmp/$1.err" || { cat "$tmp/$1.err"; fail "$1: the error does not say '$3'"; }
  echo "bad input $1: $(cat "$tmp/$1.err")"
}
bad negative-delta "/problems/0/delta: " "expected a number > 0 (in target units), found -1" 'huber["delta"] = -1'
bad text-delta "/problems/0/delta: " 'found "wide"' 'huber["delta"] = "wide"'
bad missing-delta "/problems/0: " "missing required key 'delta'" 'del huber["delta"]'
bad misspelled-delta "/problems/0/delat: " "did you mean 'delta'?" 'huber["delat"] = huber.pop("delta")'
bad huber-without-data "/problems/0: " "missing required key 'dataset'" 'del huber["dataset"]'
bad kind-typo "/problems/0/kind: " "did you mean 'huber'?" 'huber["kind"] = "hubber"'
bad key-of-another-kind "/problems/0/l2: " "does not apply to a huber problem" 'huber["l2"] = 0.1'
# A suite file that is not there, and one that is not JSON: exit 2 naming the file.
set +e
"$example" "$tmp/no-such-suite.json" "$tmp/out-none" 1 > /dev/null 2> "$tmp/none.err"; code=$?
printf '{"format": "stepgate.suite/1",\n "name": }\n' > "$tmp/syntax.json"
"$example" "$tmp/syntax.json" "$tmp/out-syntax" 1 > /dev/null 2> "$tmp/syntax.err"; code2=$?
set -e
[ $code -eq 2 ] && grep -qF "$tmp/no-such-suite.json" "$tmp/none.err" || { cat "$tmp/none.err"; fail "missing suite: exit $code"; }
[ $code2 -eq 2 ] && grep -qF "$tmp/syntax.json:2:" "$tmp/syntax.err" || { cat "$tmp/syntax.err"; fail "bad JSON: exit $code2"; }
echo "bad input missing suite: $(cat "$tmp/none.err")"
echo "bad input JSON syntax: $(cat "$tmp/syntax.err")"
echo "check_install: pass"
