#!/usr/bin/python3
"""Writes the seed corpora of the fuzz targets (tests/fuzz/corpus/<target>/) from the repository's
own suites and data, plus a few odd inputs each. Run from anywhere; with a stepgate binary as
argument it also makes the results/baseline seeds from a run of a tiny suite (otherwise the
committed ones stay). Seeds are small on purpose: libFuzzer mutates them, it does not need size.

    tests/fuzz/make_corpus.py [path/to/stepgate]
"""
import gzip, json, os, pathlib, shutil, struct, subprocess, sys, tempfile

SRC = pathlib.Path(__file__).resolve().parents[2]
OUT = SRC / "tests/fuzz/corpus"


def put(target, name, data):
    d = OUT / target
    d.mkdir(parents=True, exist_ok=True)
    (d / name).write_bytes(data if isinstance(data, bytes) else data.encode())


def gz(b):
    return gzip.compress(b, mtime=0)  # mtime 0: the same bytes on every run


def head_lines(path, n):
    return "".join(pathlib.Path(path).read_text().splitlines(keepends=True)[:n])


# fuzz_suite: documents as placed in tests/data/suites/ (the target's fake path).
def suites():
    t = "fuzz_suite"
    put(t, "full.json", (SRC / "tests/data/suites/full.json").read_bytes())
    up = "../../../"
    for name, rel in [("demo.json", "suites/demo.json"), ("reference.json", "suites/reference.json")]:
        text = (SRC / rel).read_text().replace('"data/', f'"{up}suites/data/').replace('"../references/', f'"{up}references/')
        put(t, name, text)
    put(t, "fashion.json", (SRC / "suites/fashion.json").read_bytes())
    put(t, "longley.json", (SRC / "tests/e2e/suites/longley.json").read_bytes())
    put(t, "gate-small.json", (SRC / "tests/e2e/suites/gate-small.json").read_bytes())
    put(t, "plant.json", (SRC / "tests/e2e/suites/plant.json").read_text().replace('"../data/', '"../../e2e/data/'))
    put(t, "numpy-command.json", (SRC / "examples/numpy/suite.json").read_text().replace('"../../suites/', f'"{up}suites/'))
    put(t, "huber-custom-kind.json", (SRC / "examples/cpp/huber.json").read_text().replace('"../../suites/', f'"{up}suites/'))
    base = {"format": "stepgate.suite/1", "name": "odd",
            "problems": [{"name": "bowl", "kind": "quadratic", "dim": 3, "L": 1, "condition": 10}]}
    put(t, "minimal.json", json.dumps(base))
    put(t, "syntax-error.json", '{"format": "stepgate.suite/1", "name": "x",\n  "problems": [1, ]\n')
    put(t, "wrong-format.json", json.dumps({**base, "format": "stepgate.suite/2"}))
    put(t, "unknown-key.json", json.dumps({**base, "problemz": []}))
    put(t, "big-numbers.json", json.dumps({**base, "defaults": {
        "seeds": 3, "budget": 9007199254740993, "rates": {"grid": {"from": 1e-300, "to": 1e300, "per_decade": 1},
                                                         "precision": 1e-12, "lanes": 64}}}))
    put(t, "deep.json", "[" * 2000 + "]" * 2000)
    put(t, "bom-nul.json", b"\xef\xbb\xbf{\"format\": \"stepgate.suite/1\", \"name\": \"a\x00b\"}")


# fuzz_csv: one byte of options (fuzz_csv.cpp), then the text.
HEADER, WS, Q_SINGLE, Q_NONE, NAMES, FILE = 8, 4, 16, 32, 64, 128


def csvs():
    t = "fuzz_csv"
    for name in ["tiny.csv"]:
        put(t, name, bytes([HEADER]) + (SRC / "tests/data/suites/data" / name).read_bytes())
    put(t, "longley.csv", bytes([HEADER]) + (SRC / "suites/data/longley.csv").read_bytes())
    put(t, "iris-head.csv", bytes([HEADER | FILE]) + head_lines(SRC / "suites/data/iris.csv", 12).encode())
    put(t, "wine-head.csv", bytes([HEADER]) + head_lines(SRC / "suites/data/wine.csv", 6).encode())
    put(t, "noheader-ws.txt", bytes([WS | Q_NONE]) + (SRC / "tests/data/suites/data/tiny-noheader.txt").read_bytes())
    put(t, "names-semicolon.csv", bytes([1 | NAMES]) + b"1;2;3\n4;5;6\n")
    put(t, "quoted-crlf.csv", bytes([HEADER]) + b'\xef\xbb\xbf"a","b ""x""",c\r\n"1,5","2\r\n3",4\r\n\r\n5 , "6" ,7\r')
    put(t, "single-quote-tab.csv", bytes([HEADER | 2 | Q_SINGLE]) + b"x\ty\n'1'\t2\n3\t'4''5'\n")
    put(t, "unterminated.csv", bytes([HEADER]) + b'a,b\n1,"2\n3,4\n')
    put(t, "ragged-dup.csv", bytes([HEADER]) + b"a,a,b\n1,2\n3,4,5,6\n")
    put(t, "numbers-odd.csv", bytes([HEADER]) + b"a,b,c\n0x10,1e999,nan\n-0, +.5e-3 ,\n inf,1e-400,1.5.2\n")
    put(t, "quote-in-field.csv", bytes([HEADER]) + b'a,b\n1x"y,2\n"3"z,4\n')
    put(t, "empty-lines.csv", bytes([HEADER]) + b"\n\n\r\n")


# fuzz_idx: one byte of mode (fuzz_idx.cpp), then the file bytes.
def idx_file(dims, values):
    return struct.pack(">I", 0x0800 | len(dims)) + b"".join(struct.pack(">I", d) for d in dims) + bytes(values)


def idxs():
    t = "fuzz_idx"
    images = (SRC / "tests/data/suites/data/tiny-images.idx").read_bytes()
    labels = (SRC / "tests/data/suites/data/tiny-labels.idx").read_bytes()
    put(t, "images.bin", bytes([0]) + images)
    put(t, "labels.bin", bytes([1]) + labels)
    put(t, "images-gz.bin", bytes([4]) + gz(images))
    put(t, "labels-gz.bin", bytes([5]) + gz(labels))
    put(t, "both.bin", bytes([3 | (2 << 3)]) + struct.pack(">H", len(images)) + images + labels)
    gi, gl = gz(images), gz(labels)
    put(t, "both-gz.bin", bytes([7 | (1 << 6)]) + struct.pack(">H", len(gi)) + gi + gl)
    put(t, "dims2.bin", bytes([2, 2]) + idx_file([2, 3], range(6)))
    put(t, "dims0.bin", bytes([2, 0]) + idx_file([], []))
    put(t, "truncated.bin", bytes([0]) + images[:-5])
    put(t, "extra-bytes.bin", bytes([1]) + labels + b"\x00\x00")
    put(t, "overflow-dims.bin", bytes([0]) + idx_file([0xFFFFFFFF, 0xFFFFFFFF, 0xFFFFFFFF], []))
    put(t, "wrong-magic.bin", bytes([0]) + b"\x00\x00\x0d\x03" + images[4:])
    put(t, "count-mismatch.bin", bytes([3]) + struct.pack(">H", len(images)) + images + idx_file([3], [0, 1, 2]))
    put(t, "zero-images.bin", bytes([3]) + struct.pack(">H", 16) + idx_file([0, 28, 28], []) + idx_file([0], []))
    put(t, "bad-gzip.bin", bytes([4]) + gz(images)[:-6])


# fuzz_command: one byte of mode (fuzz_command.cpp), then the program's stdout.
SERVE, OPTIMUM, PARAMS, SHORT = 1, 2, 4, 8


def trajectory(lr, steps, run=None):
    w, lines = 1.0, []
    for k in range(steps + 1):
        cost = w * w / 2
        o = {"iter": k, "cost": cost if abs(cost) <= 1e300 else float("inf")}
        if run is not None:
            o = {"run": run, **o}
        lines.append(json.dumps(o))  # Python writes Infinity, as a real trainer would
        if not abs(cost) <= 1e300:
            break
        w -= lr * w
    return lines


def commands():
    t = "fuzz_command"
    ok = ["starting"] + trajectory(0.5, 40) + ['{"params": [0.0]}']
    put(t, "ok.txt", bytes([OPTIMUM | PARAMS | SHORT]) + "\n".join(ok).encode() + b"\n")
    put(t, "ok-plateau.txt", bytes([0]) + "\n".join(trajectory(0.9, 120)).encode() + b"\n")
    put(t, "diverges.txt", bytes([OPTIMUM]) + "\n".join(trajectory(2.5, 30)).encode() + b"\n")
    serve = trajectory(0.5, 30, run=1) + ['{"run": 1, "params": [1e-9]}', '{"run": 1, "end": true}']
    put(t, "serve.txt", bytes([SERVE | OPTIMUM | PARAMS]) + "\n".join(serve).encode() + b"\n")
    put(t, "serve-late-and-bad.txt", bytes([SERVE | SHORT]) +
        b'{"run": 0, "iter": 5, "cost": 1}\nlog line\n{"run": 1, "iter": 0, "cost": 1}\n{"iter": 1, "cost": 0.5}\n')
    put(t, "nan-cost.txt", bytes([SHORT]) + b'{"iter": 0, "cost": 1.0}\n{"iter": 1, "cost": NaN}\n')
    put(t, "cut-json.txt", bytes([0]) + b'{"iter": 0, "cost": 1.0}\n{"iter": 1, "cost": ')
    put(t, "not-increasing.txt", bytes([0]) + b'{"iter": 0, "cost": 1}\n{"iter": 1, "cost": 1}\n{"iter": 1, "cost": 1}\n')
    put(t, "odd-fields.txt", bytes([OPTIMUM | SHORT]) +
        b'  {"iter": 9223372036854775807, "cost": -1e308, "grad_norm": "x"}\r\n{"iter": -5, "cost": 2}\n'
        b'{"params": ["a", null, 1e400, [1]]}\n{"params": 3}\n')
    put(t, "strings-with-tokens.txt", bytes([SHORT]) +
        b'{"iter": 0, "cost": 1, "note": "NaN \\" Infinity"}\n{"iter": 1, "cost": -Infinity}\n')
    put(t, "empty.txt", bytes([0]))


def results(stepgate):
    """results.json and a baseline from a run of a suite of two tiny quadratics and a failing command."""
    t = "fuzz_results"
    suite = {"format": "stepgate.suite/1", "name": "fuzz-seed",
             "defaults": {"seeds": 1, "budget": 300, "rates": {"grid": {"from": 0.1, "to": 3, "per_decade": 2}, "precision": 0.2}},
             "problems": [{"name": "bowl", "kind": "quadratic", "dim": 2, "L": 1, "condition": 4, "pinned": 0.5},
                          {"name": "banana", "kind": "test_function", "function": "beale", "optimizers": ["adam"],
                           "rates": {"grid": None, "fixed": [0.01]}},
                          {"name": "broken", "kind": "command", "command": {"argv": ["/bin/false"]},
                           "rates": {"grid": None, "fixed": [0.1]}}]}
    with tempfile.TemporaryDirectory() as tmp:
        tmp = pathlib.Path(tmp)
        (tmp / "suite.json").write_text(json.dumps(suite))
        subprocess.run([stepgate, "run", str(tmp / "suite.json"), "--out", str(tmp / "out"), "--quiet", "--jobs", "2"], check=False)
        subprocess.run([stepgate, "accept", str(tmp / "out/results.json"), "--baseline", str(tmp / "baseline.json"),
                        "--record", str(tmp / "record.md")], check=True)
        res = json.loads((tmp / "out/results.json").read_text())
        put(t, "results.json", json.dumps(res, indent=1))
        put(t, "baseline.json", (tmp / "baseline.json").read_bytes())
    for ex in ["numpy", "sklearn"]:
        put(t, f"baseline-{ex}.json", (SRC / f"examples/{ex}/baseline.json").read_bytes())
    put(t, "syntax-error.json", b'{"format": "stepgate.results/1",\n "cases": [\n  {"id": 1e}\n')
    put(t, "wrong-format.json", json.dumps({"format": "stepgate.results/0", "cases": []}))
    put(t, "empty-object.json", b"{}")


if __name__ == "__main__":
    for d in ["fuzz_suite", "fuzz_csv", "fuzz_idx", "fuzz_command"]:
        shutil.rmtree(OUT / d, ignore_errors=True)
    suites(); csvs(); idxs(); commands()
    if len(sys.argv) > 1:
        shutil.rmtree(OUT / "fuzz_results", ignore_errors=True)
        results(sys.argv[1])
