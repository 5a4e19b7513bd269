#!/usr/bin/env python3
"""As ok.py, and first appends what it was told to the file after --record: per-run mode its
arguments (a JSON array), serving mode each request line as received."""
import json, os, sys
here = os.path.dirname(os.path.abspath(__file__))
record = sys.argv[sys.argv.index("--record") + 1]
if "--serve" not in sys.argv:
    with open(record, "a") as f:
        f.write(json.dumps(sys.argv[1:]) + "\n")
    os.execv(sys.executable, [sys.executable, os.path.join(here, "ok.py")] + sys.argv[1:])
# Serving: a tee of stdin into the record, in front of ok.py --serve.
r, w = os.pipe()
if os.fork() == 0:
    os.close(r)
    with open(record, "ab", buffering=0) as f:
        while True:
            chunk = os.read(0, 65536)
            if not chunk:
                break
            f.write(chunk)
            os.write(w, chunk)
    os._exit(0)
os.close(w)
os.dup2(r, 0)
os.execv(sys.executable, [sys.executable, os.path.join(here, "ok.py"), "--serve"])
