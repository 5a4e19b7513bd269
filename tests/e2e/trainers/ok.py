#!/usr/bin/env python3
"""Well-behaved trainer: w <- w - lr*w from w = 1 on J = w^2/2 (diverges for lr > 2). --serve too."""
import argparse, json, os, select, signal, sys
def run(lr, steps, say, stopped=lambda: False):
    w = 1.0
    for k in range(steps + 1):
        say({"iter": k, "cost": w * w / 2})
        if not abs(w * w / 2) <= 1e300 or stopped():  # huge, infinite or NaN: stop
            return
        w -= lr * w
    say({"params": [w]})  # the final parameters (stepgate compares them with a reference)
def out(obj): print(json.dumps(obj), flush=True)
p = argparse.ArgumentParser(); [p.add_argument(f, type=t) for f, t in (("--lr", float), ("--seed", int), ("--steps", int))]
p.add_argument("--serve", action="store_true"); a, _ = p.parse_known_args()  # extras ignored
signal.signal(signal.SIGPIPE, signal.SIG_DFL); print("starting", flush=True)  # reader gone: die quietly
if not a.serve:
    sys.exit(run(a.lr, a.steps, out))
buf, inbox, eof = b"", [], False
def pump(timeout):  # read what fd 0 has (raw, so select() is truthful); JSON lines -> inbox
    global buf, eof
    while not eof and select.select([0], [], [], timeout)[0]:
        chunk = os.read(0, 65536); eof = not chunk; *lines, buf = (buf + (chunk or b"\n")).split(b"\n")
        inbox.extend(json.loads(l) for l in lines if l.strip()); timeout = 0
while inbox or not eof:
    pump(0 if inbox else None)
    req = inbox.pop(0) if inbox else {}
    if "run" in req:  # else: end of input, or a stop for a run that is not running
        def stopped(r=req["run"]):
            pump(0); hit = any(m.get("stop") == r for m in inbox); inbox[:] = [m for m in inbox if "stop" not in m]; return hit
        run(req["rate"], req["budget"], lambda o: out({"run": req["run"], **o}), stopped); out({"run": req["run"], "end": True})
