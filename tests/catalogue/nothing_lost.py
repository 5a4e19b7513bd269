"""The second hostile-input campaign: nothing lost, nothing left behind.

Entries for the classes of defects of that campaign, added to the catalogue by catalogue.py
(`c` below is that module: Entry, the starting suites, the cache). Each class has its section:
  1. an output that is (a link to, a hard link of) a file the command reads is refused;
  2. a commit killed between its renames is finished by the next reader, never read mixed;
  3. trainer and produce processes: the timeout holds, a run ends when its process exits,
     and no process started for a suite outlives it;
  4. trainer output that breaks the protocol makes the run failed with a reason saying what;
  5. impossible values in files stepgate reads (journal, results, baseline) are refused;
  6. merge refuses shards of different builds, data sets or gate tolerances;
  7. resources: a data file or a gzip bomb too large to hold is refused up front with the
     estimate, max_rows bounds what is read, and a suite whose runs cannot be held in memory
     is refused at validation;
  8. names and paths: a suite named "." or "..", a Slurm task id that is not a number, a NUL in
     an argument, a trainer that does not exist: refused before any run;
  9. escaping: a path with a line break stays on its line, the resume hint is quoted for a
     POSIX shell, names are inert in report.md and the record, invalid UTF-8 from a trainer
     never reaches report.html;
  10. a journal write that fails (a full disk) stops the run at once, keeping what was written.
"""
import hashlib
import json
import os
import re
import subprocess
import time
from pathlib import Path

NEVER_ONTO = "never written onto an input"


# ---------------------------------------------------------------------------------------------
# 1. Outputs onto inputs.

def onto_inputs(c):
    E = []
    DIR = c.DIR

    def link(target, name, hard=False):
        def setup(ctx):
            ctx.p(name).parent.mkdir(parents=True, exist_ok=True)
            if hard:
                os.link(ctx.p(target), ctx.p(name))
            else:
                os.symlink(os.path.relpath(ctx.p(target), ctx.p(name).parent), ctx.p(name))
        return setup

    def run_entry(name, files, setup, err, argv_more=()):
        return c.Entry(name, ["run", "suite.json", "--out", "out", "--quiet", "--jobs", "1", *argv_more], 2,
                       err=err, files=files, setup=setup, max_seconds=1.5, timeout=10)

    E.append(run_entry("run-results-json-links-to-the-suite", {"suite.json": c.slow_suite(), "out/": DIR},
                       link("suite.json", "out/results.json"), ["results.json", "suite.json", NEVER_ONTO]))
    E.append(run_entry("run-results-json-is-a-hard-link-of-the-suite", {"suite.json": c.slow_suite(), "out/": DIR},
                       link("suite.json", "out/results.json", hard=True), ["results.json", "suite.json", NEVER_ONTO]))
    E.append(run_entry("run-report-md-links-to-the-data-set",
                       lambda ctx: {**c.plant_files(), "out/": DIR},
                       link("plant.csv", "out/report.md"), ["report.md", "plant.csv", NEVER_ONTO]))
    E.append(run_entry("run-junit-links-to-the-baseline-being-gated-against",
                       lambda ctx: {"suite.json": ctx.cache.tiny()["suite"], "base.json": ctx.cache.tiny()["baseline"],
                                    "out/": DIR},
                       link("base.json", "out/junit.xml"), ["junit.xml", "base.json", NEVER_ONTO],
                       argv_more=("--baseline", "base.json")))
    results = lambda ctx: {"r.json": ctx.cache.tiny()["results"], "base.json": ctx.cache.tiny()["baseline"],
                           "rep/": DIR}
    E.append(c.Entry("report-md-links-to-its-own-results", ["report", "r.json", "--out", "rep"], 2,
                     err=["report.md", "r.json", NEVER_ONTO], files=results, setup=link("r.json", "rep/report.md")))
    E.append(c.Entry("report-html-links-to-the-baseline", ["report", "r.json", "--baseline", "base.json", "--out", "rep"],
                     2, err=["report.html", "base.json", NEVER_ONTO], files=results,
                     setup=link("base.json", "rep/report.html")))
    E.append(c.Entry("report-junit-in-the-results-folder-is-a-hard-link-of-the-results",
                     ["report", "out/results.json"], 2, err=["junit.xml", "results.json", NEVER_ONTO],
                     files=lambda ctx: {"out/results.json": ctx.cache.tiny()["results"]},
                     setup=link("out/results.json", "out/junit.xml", hard=True)))
    acc = lambda ctx: {"r.json": ctx.cache.tiny()["results"]}
    E.append(c.Entry("accept-baseline-is-a-hard-link-of-the-results",
                     ["accept", "r.json", "--baseline", "b.json", "--record", "rec.md"], 2,
                     err=["b.json", "r.json", NEVER_ONTO], files=acc, setup=link("r.json", "b.json", hard=True)))
    E.append(c.Entry("accept-record-is-a-hard-link-of-the-results",
                     ["accept", "r.json", "--baseline", "b.json", "--record", "rec.md"], 2,
                     err=["rec.md", "r.json", NEVER_ONTO], files=acc, setup=link("r.json", "rec.md", hard=True)))
    shards = lambda ctx: {"s1/results.json": ctx.cache.shards()[0], "s2/results.json": ctx.cache.shards()[1],
                          "m/": DIR}
    E.append(c.Entry("merge-report-links-to-a-shard", ["merge", "s1/results.json", "s2/results.json", "--out", "m"], 2,
                     err=["report.md", "s1/results.json", NEVER_ONTO], files=shards,
                     setup=link("s1/results.json", "m/report.md")))
    return E


# ---------------------------------------------------------------------------------------------
# 2. A commit killed between its renames.

KILL = "STEPGATE_TEST_KILL_IN_COMMIT"


def run_hooked(c, ctx, argv, renames=1):
    """Runs stepgate with the test hook that SIGKILLs it after `renames` renames of a commit."""
    code, _, err, _, _ = c.run_binary(argv, ctx.tmp, 120, {KILL: str(renames)})
    if code != -9:
        raise c.SetupError(f"setup: the hooked {' '.join(argv)} exited {code}, expected SIGKILL: "
                           f"{(err.strip().splitlines() or [''])[0]}")


def run_plain(c, ctx, argv):
    code, _, err, _, _ = c.run_binary(argv, ctx.tmp, 120)
    if code not in (0, 1):
        raise c.SetupError(f"setup: {' '.join(argv)} exited {code}: {(err.strip().splitlines() or [''])[0]}")


def remember_staged(ctx, folders):
    """{target: sha256 of its staged content} for every manifest in `folders` (relative)."""
    staged = {}
    for folder in folders:
        manifest = ctx.p(folder) / ".stepgate-commit"
        if not manifest.exists():
            raise C.SetupError(f"setup: no commit manifest in {folder} after the kill")
        for src, dst in json.loads(manifest.read_text())["renames"]:
            if os.path.exists(src):
                staged[dst] = hashlib.sha256(Path(src).read_bytes()).hexdigest()
    if not staged:
        raise C.SetupError("setup: the kill left nothing staged")
    ctx.state["staged"] = staged
    ctx.state["folders"] = folders


def finished_whole(ctx, code):
    """Every target holds what was staged for it; no manifest, no staged file is left."""
    problems = []
    for target, digest in ctx.state["staged"].items():
        if not os.path.exists(target):
            problems.append(f"{target} missing")
        elif hashlib.sha256(Path(target).read_bytes()).hexdigest() != digest:
            problems.append(f"{os.path.relpath(target, ctx.tmp)} does not hold the interrupted commit's content "
                            "(a mixed set)")
    for folder in ctx.state["folders"]:
        for name in os.listdir(ctx.p(folder)):
            if name == ".stepgate-commit" or ".staged-" in name:
                problems.append(f"{folder}/{name} left behind")
    return problems


def interrupted_commits(c):
    E = []

    def run_then_killed_run(ctx):
        suite = c.quad_suite()
        ctx.write("suite.json", suite)
        run_plain(c, ctx, ["run", "suite.json", "--out", "out", "--quiet", "--jobs", "1"])
        run_plain(c, ctx, ["accept", "out/results.json", "--baseline", "base.json", "--record", "rec.md"])
        suite["defaults"]["budget"] = 250  # other results, so that a mixed set would show
        ctx.write("suite.json", suite)
        run_hooked(c, ctx, ["run", "suite.json", "--out", "out", "--quiet", "--jobs", "1"])
        remember_staged(ctx, ["out"])

    readers = [
        ("check", ["check", "out/results.json", "--baseline", "base.json"], (0, 1), ["out/*"]),
        ("report", ["report", "out/results.json", "--out", "rep"], 0, ["out/*", "rep", "rep/*"]),
        ("accept", ["accept", "out/results.json", "--baseline", "b2.json", "--record", "r2.md"], 0,
         ["out/*", "b2.json", "r2.md"]),
        ("run-resume", ["run", "suite.json", "--out", "out", "--resume", "--quiet", "--jobs", "1"], (0, 1), ["out/*"]),
    ]
    def run_again_whole(ctx, code):
        # `run --resume` finishes the commit, then writes a new set of its own: whole, and of
        # the changed suite.
        problems = [f"out/{n} left behind" for n in os.listdir(ctx.p("out")) if n == ".stepgate-commit" or ".staged-" in n]
        said = json.loads(ctx.p("out/results.json").read_text())["suite"]["sha256"]
        now = hashlib.sha256(ctx.p("suite.json").read_bytes()).hexdigest()
        return problems + ([] if said == now else ["results.json is not of the changed suite"])

    for name, argv, code, allow in readers:
        E.append(c.Entry(f"{name}-finishes-a-run-commit-killed-between-renames", argv, code, setup=run_then_killed_run,
                         check=run_again_whole if name == "run-resume" else finished_whole, allow=allow,
                         finishes_commit=True, timeout=60))

    def merge_then_killed_merge(ctx):
        shards = ctx.cache.shards()
        ctx.write("s1/results.json", shards[0])
        ctx.write("s2/results.json", shards[1])
        run_plain(c, ctx, ["merge", "s1/results.json", "s2/results.json", "--out", "m"])
        run_hooked(c, ctx, ["merge", "s1/results.json", "s2/results.json", "--out", "m"], renames=2)
        remember_staged(ctx, ["m"])

    E.append(c.Entry("report-finishes-a-merge-commit-killed-between-renames", ["report", "m/results.json"], 0,
                     setup=merge_then_killed_merge, check=finished_whole, allow=["m/*"], finishes_commit=True))
    E.append(c.Entry("merge-again-finishes-a-merge-commit-killed-between-renames",
                     ["merge", "s1/results.json", "s2/results.json", "--out", "m"], 0,
                     setup=merge_then_killed_merge, allow=["m/*"], finishes_commit=True,
                     check=lambda ctx, code: [f"m/{n} left behind" for n in os.listdir(ctx.p("m"))
                                              if n == ".stepgate-commit" or ".staged-" in n]))

    def accept_then_killed_accept(ctx):
        ctx.write("r.json", ctx.cache.tiny()["results"])
        (ctx.p("refs")).mkdir()
        (ctx.p("recs")).mkdir()
        run_plain(c, ctx, ["accept", "r.json", "--baseline", "refs/base.json", "--record", "recs/rec.md"])
        time.sleep(1.1)  # another "accepted" second: the second baseline differs from the first
        run_hooked(c, ctx, ["accept", "r.json", "--baseline", "refs/base.json", "--record", "recs/rec.md"])
        remember_staged(ctx, ["refs", "recs"])

    E.append(c.Entry("check-finishes-an-accept-killed-between-baseline-and-record",
                     ["check", "r.json", "--baseline", "refs/base.json"], (0, 1), setup=accept_then_killed_accept,
                     check=finished_whole, allow=["refs/*", "recs/*"], finishes_commit=True))
    E.append(c.Entry("accept-again-finishes-an-accept-killed-between-baseline-and-record",
                     ["accept", "r.json", "--baseline", "refs/base.json", "--record", "recs/rec.md"], 0,
                     setup=accept_then_killed_accept, allow=["refs/*", "recs/*"], finishes_commit=True,
                     check=lambda ctx, code: [f"{f}/.stepgate-commit left behind" for f in ("refs", "recs")
                                              if ctx.p(f"{f}/.stepgate-commit").exists()]
                     + ([] if ctx.p("recs/rec.md").read_text().count("## ") >= 3 else
                        ["the record lost an entry: expected the first, the interrupted and the new one"])))
    return E


# ---------------------------------------------------------------------------------------------
# 3. Trainer and produce processes.

# Every trainer writes the ids of the processes it starts (and its own) into pids/, so that the
# check can see that none is left once stepgate has exited.
TRAINER_HEAD = """import json, os, subprocess, sys, time
pids = os.path.join(os.path.dirname(os.path.abspath(__file__)), "pids")
os.makedirs(pids, exist_ok=True)
def keep(pid): open(os.path.join(pids, str(pid)), "w").close()
keep(os.getpid())
def say(k, cost): print(json.dumps({"iter": k, "cost": cost}), flush=True)
def converge():
    w = 1.0
    for k in range(61):
        say(k, w * w / 2); w *= 0.5
"""

TRAINERS = {
    # closes stdout after two lines and goes on running: the timeout must still hold
    "closes-stdout-and-runs-on": TRAINER_HEAD + """say(0, 0.5); say(1, 0.4)
os.close(1)
time.sleep(1000)
""",
    # converges, exits, and leaves a worker that holds the pipe open (as a data loader's may)
    "worker-holds-the-pipe-after-the-trainer-exits": TRAINER_HEAD + """w = subprocess.Popen(["sleep", "1000"])
keep(w.pid)
converge()
""",
    # converges and leaves a process in a session of its own
    "setsid-child-outlives-the-trainer": TRAINER_HEAD + """w = subprocess.Popen(["sleep", "1000"], start_new_session=True,
                     stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
keep(w.pid)
converge()
""",
    # converges and leaves a daemon (fork, setsid, fork again)
    "double-forked-daemon-outlives-the-trainer": TRAINER_HEAD + """r, wfd = os.pipe()
if os.fork() == 0:
    os.setsid()
    if os.fork() == 0:
        os.close(r); os.write(wfd, str(os.getpid()).encode()); os.close(wfd)
        os.closerange(0, 3); time.sleep(1000); os._exit(0)
    os._exit(0)
os.close(wfd); keep(int(os.read(r, 32) or b"0")); os.close(r)
converge()
""",
    # hangs with a process in a session of its own: the timeout kills both
    "setsid-child-of-a-hanging-trainer": TRAINER_HEAD + """w = subprocess.Popen(["sleep", "1000"], start_new_session=True,
                     stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
keep(w.pid)
say(0, 0.5)
time.sleep(1000)
""",
}


def command_suite(ctx, script, timeout=2.0):
    return {"format": "stepgate.suite/1", "name": "cat-procs",
            "defaults": {"seeds": 1, "budget": 60, "rates": {"grid": None, "fixed": [0.5]}},
            "problems": [{"name": "t", "kind": "command", "optimum": 0.0, "optimizers": ["gd"],
                          "command": {"argv": ["/usr/bin/python3", str(ctx.p(script)), "--lr", "{rate}"],
                                      "timeout": timeout, "grace": 0.5}}]}


def none_left(ctx):
    """The processes listed in pids/ have all ended (a zombie counts as ended)."""
    time.sleep(0.3)  # SIGKILL is asynchronous
    left = []
    folder = ctx.p("pids")
    for name in (os.listdir(folder) if folder.exists() else []):
        pid = int(name)
        try:
            state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
        except (FileNotFoundError, ProcessLookupError, IndexError):
            continue
        if state != "Z":
            left.append(pid)
            try:
                os.kill(pid, 9)  # do not let the catalogue leave it either
            except OSError:
                pass
    return [f"processes left running after stepgate exited: {left}"] if left else []


def run_outcome(expected_outcome, reason=None):
    def check(ctx, code):
        problems = none_left(ctx)
        path = ctx.p("out/results.json")
        if not path.exists():
            return problems + ["out/results.json not written"]
        run = json.loads(path.read_text())["cases"][0]["runs"][0]
        if run["outcome"] != expected_outcome:
            problems.append(f"the run is {run['outcome']} ({run.get('reason', '')}), expected {expected_outcome}")
        if reason and reason not in run.get("reason", ""):
            problems.append(f"the run's reason {run.get('reason')!r} lacks {reason!r}")
        return problems
    return check


def trainer_processes(c):
    E = []
    for name, outcome, reason, seconds in (
            # seconds: the timeout is 2 s; well under the 20 s a run waiting for the pipe to close would take
            ("closes-stdout-and-runs-on", "failed", "timeout", 8),
            ("worker-holds-the-pipe-after-the-trainer-exits", "converged", None, 8),
            ("setsid-child-outlives-the-trainer", "converged", None, 8),
            ("double-forked-daemon-outlives-the-trainer", "converged", None, 8),
            ("setsid-child-of-a-hanging-trainer", "failed", "timeout", 8)):
        E.append(c.Entry(f"trainer-{name}", ["run", "suite.json", "--out", "out", "--quiet", "--jobs", "1"], (0, 1),
                         files=lambda ctx, n=name: {"trainer.py": TRAINERS[n],
                                                    "suite.json": command_suite(ctx, "trainer.py")},
                         check=run_outcome(outcome, reason), allow=["out", "out/*", "pids", "pids/*"],
                         max_seconds=seconds, timeout=30))

    def produce_suite(script):
        def files(ctx):
            s = c.plant_suite()
            s["datasets"]["plant"]["csv"] = "made.csv"
            s["datasets"]["plant"]["produce"] = {"argv": ["/usr/bin/python3", str(ctx.p("make.py"))],
                                                 "cwd": str(ctx.tmp), "timeout": 2}
            return {"suite.json": s, "plant.csv": c.plant_csv(), "make.py": script}
        return files

    make_head = TRAINER_HEAD + "import shutil\nshutil.copy('plant.csv', 'made.csv')\n"
    E.append(c.Entry("produce-closes-stdout-and-runs-on", ["run", "suite.json", "--out", "out", "--quiet", "--jobs", "1"],
                     2, err=["produce", "2 s"],
                     files=produce_suite(make_head + "os.close(1)\ntime.sleep(1000)\n"),
                     check=lambda ctx, code: none_left(ctx), allow_on_error=["made.csv", "pids", "pids/*"],
                     max_seconds=6, timeout=30))
    E.append(c.Entry("produce-leaves-a-setsid-child", ["run", "suite.json", "--out", "out", "--quiet", "--jobs", "1"],
                     (0, 1), files=produce_suite(make_head + """w = subprocess.Popen(["sleep", "1000"], start_new_session=True,
                     stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
keep(w.pid)
"""), check=lambda ctx, code: none_left(ctx), allow=["made.csv", "out", "out/*", "pids", "pids/*"], timeout=60))
    return E


# ---------------------------------------------------------------------------------------------
# 4. Trainer output that breaks the protocol.

PROTOCOL = {
    # name: (trainer body after TRAINER_HEAD, fragment of the failed run's reason)
    "negative-iter": ("say(-1, 0.5)\nsay(0, 0.4)\n", "negative"),
    "iter-past-the-budget": ("for k in range(70): say(k, 0.5)\n", "past the budget"),
    "cost-after-params": ("say(0, 0.5); say(1, 0.5)\nprint(json.dumps({'params': [1.0]}), flush=True)\nsay(2, 0.5)\n",
                          "after the final"),
    "cost-below-the-stated-optimum": ("say(0, 0.5); say(1, 0.25); say(2, -0.125)\n", "below the stated optimum"),
    "a-key-given-twice": ("print('{\"iter\": 0, \"cost\": 0.5, \"cost\": 0.0}', flush=True)\n", "twice"),
    "params-not-numbers": ("say(0, 0.5)\nprint(json.dumps({'params': [1.0, 'x']}), flush=True)\n", "expected a number"),
    "exits-after-20-of-60-iterations": ("for k in range(21): say(k, 0.5)\n", "ended early"),
    "exits-after-iteration-0": ("say(0, 0.5)\n", "ended early"),
}

SERVING_STRING_RUN = TRAINER_HEAD + """for line in sys.stdin:
    q = json.loads(line)
    if "run" not in q: continue
    for k in range(61):
        print(json.dumps({"run": str(q["run"]), "iter": k, "cost": 0.5}), flush=True)
    print(json.dumps({"run": str(q["run"]), "end": True}), flush=True)
"""


def protocol_breaks(c):
    E = []
    for name, (body, reason) in PROTOCOL.items():
        E.append(c.Entry(f"trainer-protocol-{name}", ["run", "suite.json", "--out", "out", "--quiet", "--jobs", "1"],
                         (0, 1), files=lambda ctx, b=body: {"trainer.py": TRAINER_HEAD + b,
                                                            "suite.json": command_suite(ctx, "trainer.py", 20)},
                         check=run_outcome("failed", reason), allow=["out", "out/*", "pids", "pids/*"],
                         max_seconds=10, timeout=40))

    def serving(ctx):
        s = command_suite(ctx, "trainer.py", 20)
        s["problems"][0]["command"]["argv"] = ["/usr/bin/python3", str(ctx.p("trainer.py"))]
        s["problems"][0]["command"]["serve"] = True
        return {"trainer.py": SERVING_STRING_RUN, "suite.json": s}

    # Each run used to wait out its whole timeout (20 s here) for a line with its id.
    E.append(c.Entry("trainer-protocol-serving-reply-run-id-is-a-string",
                     ["run", "suite.json", "--out", "out", "--quiet", "--jobs", "1"], (0, 1), files=serving,
                     check=run_outcome("failed", "integer id"), allow=["out", "out/*", "pids", "pids/*"],
                     max_seconds=10, timeout=40))
    return E


# ---------------------------------------------------------------------------------------------
# 5. Impossible values in files stepgate reads.

def impossible_values(c):
    E = []
    resume = ["run", "suite.json", "--out", "out", "--resume", "--quiet", "--jobs", "1"]

    def journal_with(change):
        """The tiny suite's journal with line 2's entry changed (not the last line: a torn last
        line is dropped, not refused)."""
        def files(ctx):
            lines = ctx.cache.journal("tiny", c.tiny_suite())["lines"]
            if len(lines) < 3:
                raise C.SetupError("setup: the journal has fewer than 3 lines")
            entry = json.loads(lines[1])
            text = change(entry)
            return {"suite.json": c.tiny_suite(),
                    "out/journal.jsonl": lines[0] + (text if isinstance(text, str) else json.dumps(entry)) + "\n"
                    + "".join(lines[2:])}
        return files

    def set_run(key, value):
        def change(e):
            e["run"][key] = value(e["run"]) if callable(value) else value
        return change

    def rate_of_another_lane(e):
        e["run"]["rate"] = e["run"]["rate"] * 1.5

    E.append(c.Entry("resume-journal-run-rate-differs-from-its-lane", resume, 2,
                     err=["journal.jsonl", "rate", "where the plan asks for"],
                     files=journal_with(rate_of_another_lane), max_seconds=5))
    E.append(c.Entry("resume-journal-steps-far-above-the-budget", resume, 2, err=["journal.jsonl", "budget"],
                     files=journal_with(set_run("steps", 10 ** 12)), max_seconds=5))
    E.append(c.Entry("resume-journal-another-rng-seed", resume, 2, err=["journal.jsonl", "rng_seed"],
                     files=journal_with(set_run("rng_seed", lambda r: (r["rng_seed"] + 1) % 2 ** 64)), max_seconds=5))

    def converged_without_at(e):
        e["run"]["outcome"] = "converged"
        e["run"]["converged_at"] = None

    E.append(c.Entry("resume-journal-converged-without-converged-at", resume, 2,
                     err=["journal.jsonl:2", "converged_at"], files=journal_with(converged_without_at), max_seconds=5))
    E.append(c.Entry("resume-journal-key-given-twice", resume, 2, err=["journal.jsonl:2", "second time"],
                     files=journal_with(lambda e: json.dumps(e)[:-1] + ', "lane": 0}'), max_seconds=5))

    check = ["check", "r.json", "--baseline", "base.json"]

    def results_with(change, baseline_change=None):
        def files(ctx):
            r = json.loads(ctx.cache.tiny()["results"])
            b = json.loads(ctx.cache.tiny()["baseline"])
            text = change(r) if change else None
            if baseline_change:
                baseline_change(b)
            return {"r.json": text if isinstance(text, str) else r, "base.json": b}
        return files

    def first_with_edge(doc):
        for i, case in enumerate(doc["cases"]):
            s = case.get("summary", case)
            if s.get("edge") is not None:
                return i, case
        raise C.SetupError("setup: no case with an edge")

    def negative_edge(b):
        i, case = first_with_edge(b)
        case["edge"] = -case["edge"]

    E.append(c.Entry("check-baseline-with-a-negative-edge", check, 2,
                     err=[re.compile(r"base\.json#/cases/\d+/edge"), "rate > 0"],
                     files=results_with(None, negative_edge)))

    def headroom_off(b):
        for case in b["cases"]:
            if case.get("headroom") is not None:
                case["headroom"] *= 2
                return
        raise C.SetupError("setup: no case with a headroom")

    E.append(c.Entry("check-baseline-headroom-not-edge-over-pinned", check, 2,
                     err=[re.compile(r"base\.json#/cases/\d+/headroom"), "edge / pinned"],
                     files=results_with(None, headroom_off)))

    def precision_huge(r):
        r["cases"][0]["summary"]["precision"] = 1e308

    E.append(c.Entry("check-results-precision-1e308", check, 2,
                     err=["r.json#/cases/0/summary/precision", "(0, 1]"], files=results_with(precision_huge)))

    def ragged_off_edge(r):
        i, case = first_with_edge(r)
        edge = case["summary"]["edge"]
        case["summary"]["ragged_zone"] = [edge / 2, edge * 2]

    E.append(c.Entry("check-results-ragged-zone-not-starting-at-the-edge", check, 2,
                     err=[re.compile(r"r\.json#/cases/\d+/summary/ragged_zone/0"), "starts at the edge"],
                     files=results_with(ragged_off_edge)))

    def key_twice(r):
        return json.dumps(r)[:-1] + ', "format": "stepgate.results/2"}'

    E.append(c.Entry("check-results-key-given-twice", check, 2, err=["r.json#/format", "second time"],
                     files=results_with(key_twice)))

    def every_outcome_flipped(r):
        for case in r["cases"]:
            for run in case["runs"]:
                run["outcome"] = "diverged" if run["outcome"] == "converged" else "converged"
                if run["outcome"] == "converged":
                    run["converged_at"] = 0
                else:
                    run["converged_at"] = None

    E.append(c.Entry("check-results-every-run-outcome-changed-under-the-same-summary", check, 2,
                     err=[re.compile(r"r\.json#/cases/\d+/summary/(seeds/\d+/edge|pinned_outcome)")],
                     files=results_with(every_outcome_flipped)))
    return E


# ---------------------------------------------------------------------------------------------
# 6. merge of shards that are not of one run.

def mixed_shards(c):
    E = []
    merge = ["merge", "s1/results.json", "s2/results.json", "--out", "m"]

    def shards_with(change):
        def files(ctx):
            a, b = (json.loads(t) for t in ctx.cache.shards())
            change(a, b)
            return {"s1/results.json": a, "s2/results.json": b}
        return files

    def other_build(a, b):
        b["tool"]["version"] = b["tool"]["version"] + "-other"

    def other_gate(a, b):
        b["gate"]["edge_moved"] = 0.5

    def other_data(a, b):
        # The tiny suite's data set is used by shard 2 alone: shard 1 is given the same data
        # set with other bytes, as a shard run on a changed copy of the data would list it.
        if not b.get("datasets"):
            raise C.SetupError("setup: shard 2 lists no data set")
        a["datasets"] = [dict(b["datasets"][0], sha256="0" * 64)]

    for name, change, pointer in (("another-stepgate-build", other_build, "s2/results.json#/tool/version"),
                                  ("other-gate-tolerances", other_gate, "s2/results.json#/gate"),
                                  ("another-data-set", other_data, "s2/results.json#/datasets/0/sha256")):
        E.append(c.Entry(f"merge-shards-of-{name}", merge, 2, err=[pointer, "s1/results.json", "one run"],
                         files=shards_with(change)))
    return E


# ---------------------------------------------------------------------------------------------
# 7. Resources.

def gzip_of_zeros(gib, trailer=None):
    import zlib
    c = zlib.compressobj(9, zlib.DEFLATED, 31)
    block = b"\0" * (1 << 24)
    out = [c.compress(block) for _ in range(int(gib * 64))] + [c.flush()]
    data = b"".join(out)
    if trailer is not None:  # a trailer that lies about the size
        data = data[:-4] + int(trailer).to_bytes(4, "little")
    return data


def resources(c):
    E = []
    under_asan = lambda: "the address space is not capped under AddressSanitizer" if "ASAN_OPTIONS" in os.environ else None
    runq = ["run", "suite.json", "--out", "out", "--quiet", "--jobs", "1"]

    def plant_with_csv(csv_name):
        s = c.plant_suite()
        s["datasets"]["plant"]["csv"] = csv_name
        return s

    def sparse(size):
        def setup(ctx):
            with open(ctx.p("big.csv"), "wb") as f:
                f.write(c.plant_csv().encode() if isinstance(c.plant_csv(), str) else c.plant_csv())
                f.truncate(size)
        return setup

    E.append(c.Entry("data-file-of-4-gib", runq, 2, err=["big.csv", "GiB", "max_rows"],
                     files={"suite.json": plant_with_csv("big.csv")}, setup=sparse(4 << 30), max_seconds=3))
    E.append(c.Entry("data-gzip-that-states-1-gib", runq, 2, err=["big.csv.gz", "expands to", "GiB"],
                     files=lambda ctx: {"suite.json": plant_with_csv("big.csv.gz"), "big.csv.gz": gzip_of_zeros(1)},
                     skip=under_asan, max_seconds=5))
    E.append(c.Entry("data-gzip-bomb-with-a-lying-trailer", runq, 2, err=["big.csv.gz", "expands to more than"],
                     files=lambda ctx: {"suite.json": plant_with_csv("big.csv.gz"),
                                        "big.csv.gz": gzip_of_zeros(1, trailer=1000)},
                     skip=under_asan, max_seconds=20, timeout=60))

    def max_rows_then_hole(ctx):
        # 1,000 rows of data, then a 3 GiB hole: with max_rows 1000 only the rows are read.
        text = c.plant_csv()
        header, rows = text.split("\n", 1)[0], [l for l in text.split("\n")[1:] if l.strip()]
        body = "\n".join([header] + [rows[i % len(rows)] for i in range(1000)]) + "\n"
        with open(ctx.p("big.csv"), "wb") as f:
            f.write(body.encode())
            f.truncate(3 << 30)

    def limited(ctx):
        s = plant_with_csv("big.csv")
        s["datasets"]["plant"]["max_rows"] = 1000
        return {"suite.json": s}

    E.append(c.Entry("max-rows-bounds-what-is-read", runq, (0, 1), files=limited, setup=max_rows_then_hole,
                     allow=["out", "out/*"], max_seconds=30, timeout=120,
                     check=lambda ctx, code: [] if json.loads(ctx.p("out/results.json").read_text())["datasets"][0]["rows"]
                     == 1000 else ["the data set does not have 1000 rows"]))

    many = c.quad_suite()
    many["defaults"] = {"seeds": 1, "budget": 10000, "rates": {"grid": None, "fixed": [1e-3 * (1 + i / 1e5) for i in range(100000)]}}
    E.append(c.Entry("suite-of-100000-fixed-rates", ["validate", "suite.json"], 2,
                     err=["suite.json#/problems/0", "GiB", "fewer rates"], files={"suite.json": many}, max_seconds=20))
    return E


# ---------------------------------------------------------------------------------------------
# 8. Names and paths.

def names_and_paths(c):
    E = []
    for name in (".", ".."):
        suite = c.quad_suite()
        suite["name"] = name
        E.append(c.Entry(f"suite-named-{'dot' if name == '.' else 'dotdot'}", ["run", "suite.json", "--quiet"], 2,
                         err=["suite.json#/name", "names a folder"], files={"suite.json": suite}, max_seconds=2))
    slurm = ["run", "suite.json", "--out", "out", "--shard", "slurm", "--quiet"]
    for value in ("abc", "1x", "-1", ""):
        E.append(c.Entry(f"slurm-task-id-{value or 'empty'}", slurm, 2,
                         err=["--shard slurm", "SLURM_ARRAY_TASK_ID", "whole number"],
                         files={"suite.json": c.quad_suite()}, max_seconds=2,
                         env={"SLURM_ARRAY_TASK_ID": value, "SLURM_ARRAY_TASK_COUNT": "2"}))

    def command_suite_with(argv=None, env=None):
        def files(ctx):
            s = command_suite(ctx, "trainer.py")
            if argv is not None:
                s["problems"][0]["command"]["argv"] = argv
            if env is not None:
                s["problems"][0]["command"]["env"] = env
            return {"suite.json": s, "trainer.py": TRAINER_HEAD + "converge()\n"}
        return files

    runq = ["run", "suite.json", "--out", "out", "--quiet", "--jobs", "1"]
    E.append(c.Entry("trainer-program-does-not-exist", runq, 2,
                     err=["suite.json#/problems/0/command/argv/0", "not an executable file"],
                     files=command_suite_with(argv=["/nonexistent/train", "--lr", "{rate}"]), max_seconds=2))
    E.append(c.Entry("trainer-program-not-on-path", runq, 2,
                     err=["suite.json#/problems/0/command/argv/0", "not on PATH"],
                     files=command_suite_with(argv=["stepgate-no-such-trainer", "--lr", "{rate}"]), max_seconds=2))
    E.append(c.Entry("trainer-argument-with-a-nul", runq, 2,
                     err=["suite.json#/problems/0/command/argv/1", "NUL"],
                     files=command_suite_with(argv=["/usr/bin/python3", "trainer.py\u0000--evil", "--lr", "{rate}"]),
                     max_seconds=2))
    E.append(c.Entry("trainer-env-with-a-nul", runq, 2,
                     err=["suite.json#/problems/0/command/env/A", "NUL"],
                     files=command_suite_with(env={"A": "x\u0000y"}), max_seconds=2))
    return E


# ---------------------------------------------------------------------------------------------
# 9. Escaping.

def escaping(c):
    E = []
    # A missing suite whose name holds a line break: the message stays one line.
    E.append(c.Entry("validate-path-with-a-line-break-stays-on-its-line", ["validate", "a\nstepgate: error: forged.json"],
                     2, err=["\\x0a"], check=lambda ctx, code: [] if ctx.state["stderr"].count("\n") == 1 else
                     [f"the message spans {ctx.state['stderr'].count(chr(10))} lines"]))

    hostile_suite, hostile_out = "s $(touch pwned) `touch pwned2`.json", "o'ut dir"

    def resume_hint_is_quoted(ctx, code):
        proc = subprocess.Popen([C.BIN, "run", hostile_suite, "--out", hostile_out, "--jobs", "1"], cwd=ctx.tmp,
                                stdin=subprocess.DEVNULL, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
        for _ in range(200):  # until the sweep has started (its journal exists); it takes about a second
            if (ctx.p(hostile_out) / "journal.jsonl").exists():
                break
            time.sleep(0.005)
        proc.send_signal(2)  # Ctrl-C
        _, err = proc.communicate(timeout=60)
        err = err.decode("utf-8", "replace")
        hint = [line for line in err.splitlines() if "continue with: stepgate run" in line]
        if proc.returncode != 130 or not hint:
            return [f"no resume hint after Ctrl-C (exit {proc.returncode}): {err.strip()[:200]}"]
        # Paste it into a shell with `stepgate` standing for a program that prints its arguments.
        line = hint[0].split("continue with: ", 1)[1].replace("stepgate ", "printf '%s\\n' ", 1)
        shown = subprocess.run(["sh", "-c", line], cwd=ctx.tmp, capture_output=True, text=True).stdout.splitlines()
        problems = []
        if shown != ["run", hostile_suite, "--out", hostile_out, "--resume"]:
            problems.append(f"pasting the hint gives the arguments {shown}")
        if (ctx.p("pwned")).exists() or (ctx.p("pwned2")).exists():
            problems.append("pasting the hint ran a command substitution")
        return problems

    E.append(c.Entry("resume-hint-is-quoted-for-the-shell", ["validate", hostile_suite], 0,
                     files={hostile_suite: c.slow_suite()}, check=resume_hint_is_quoted,
                     allow=[hostile_out.replace("'", "?"), hostile_out.replace("'", "?") + "/*"], timeout=120))

    markdown = "[click](http://evil.example) *em* _u_ `code` <b>x</b> \x1b[31mred"

    def hostile_names(ctx):
        r = json.loads(ctx.cache.tiny()["results"])
        r["suite"]["path"] = markdown
        return {"r.json": r}

    def record_is_inert(ctx, code):
        text = ctx.p("rec.md").read_text(errors="replace")
        problems = []
        if "\x1b" in text:
            problems.append("a raw ESC in the record")
        if "[click](http" in text or "<b>" in text or " *em* " in text:
            problems.append("live Markdown or HTML from a name in the record")
        return problems

    E.append(c.Entry("accept-record-names-are-inert-markdown", ["accept", "r.json", "--baseline", "b.json", "--record", "rec.md"],
                     0, files=hostile_names, check=record_is_inert, allow=["b.json", "rec.md"]))

    def trainer_prints_invalid_utf8(ctx):
        s = command_suite(ctx, "trainer.py")
        return {"suite.json": s, "trainer.py": TRAINER_HEAD + "say(0, 0.5)\nsys.stderr.buffer.write(b'bad \\xff\\xfe \\xc3( bytes\\n')\nsys.exit(1)\n"}

    def html_is_utf8(ctx, code):
        data = ctx.p("out/report.html").read_bytes()
        try:
            data.decode("utf-8")
        except UnicodeDecodeError as e:
            return [f"report.html is not valid UTF-8: {e}"]
        return [] if "bad" in data.decode() else ["the trainer's stderr is not in report.html"]

    E.append(c.Entry("report-html-gets-no-invalid-utf8-from-a-trainer", ["run", "suite.json", "--out", "out", "--quiet", "--jobs", "1"],
                     (0, 1, 3), files=trainer_prints_invalid_utf8, check=html_is_utf8, allow=["out", "out/*", "pids", "pids/*"],
                     timeout=60))
    return E


# ---------------------------------------------------------------------------------------------
# 10. A journal write that fails.

def journal_write_fails(c):
    def whole_lines_kept(ctx, code):
        path = ctx.p("out/journal.jsonl")
        if not path.exists():
            return ["the journal is gone"]
        text = path.read_text()
        if not text.endswith("\n"):
            return ["the journal ends in a torn line"]
        try:
            lines = [json.loads(line) for line in text.splitlines()]
        except ValueError as e:
            return [f"a journal line does not parse: {e}"]
        return [] if len(lines) >= 2 else ["no run was kept in the journal"]

    # 96 kB: the header and the first batches fit (the whole journal is about 230 kB).
    return [c.Entry("run-journal-write-fails-disk-full", ["run", "suite.json", "--out", "out", "--quiet", "--jobs", "1"],
                    3, err=["journal.jsonl", "File too large", "kept"], files={"suite.json": c.tiny_suite()},
                    fsize=96 << 10, allow_on_error=["out", "out/journal.jsonl"], check=whole_lines_kept, timeout=60)]


C = None  # the catalogue module, set by entries()


def entries(c):
    global C
    C = c
    return (onto_inputs(c) + interrupted_commits(c) + trainer_processes(c) + protocol_breaks(c)
            + impossible_values(c) + mixed_shards(c) + resources(c) + names_and_paths(c) + escaping(c) + journal_write_fails(c))
