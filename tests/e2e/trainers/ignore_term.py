#!/usr/bin/env python3
"""Fault: ignores SIGTERM and prints iterations every 0.05 s forever, cost fixed at 1.0 (so a
run never decides). Its child `sleep 1000` stays in this process group and, having inherited
the ignored SIGTERM, ignores it too: only SIGKILL to the group ends both."""
import argparse, json, signal, subprocess, time
p = argparse.ArgumentParser(); [p.add_argument(f, type=float) for f in ("--lr", "--seed", "--steps")]
a, _ = p.parse_known_args()  # extras ignored
signal.signal(signal.SIGTERM, signal.SIG_IGN)
child = subprocess.Popen(["sleep", "1000"])  # same process group (no new session)
print(f"child pid {child.pid}", flush=True)  # a log line: tests can check the child is gone
k = 0
while True:
    print(json.dumps({"iter": k, "cost": 1.0}), flush=True)
    k += 1
    time.sleep(0.05)
