"""stepgate's `command` protocol for a Python trainer (README, "Gating your own training code").

One run prints one JSON line per iteration, {"iter": k, "cost": J, ...}, for k = 0 (before any
update) up to the budget; `budget` counts what the trainer reports as "iter" (optimizer steps,
or epochs if it reports once per epoch). In serving mode (`--serve`) the program reads one
request per line from stdin, for example

  {"run": 7, "rate": 0.05, "seed": 1, "budget": 500, "optimizer": "hb-0.9",
   "kind": "momentum", "beta": 0.9,
   "schedule": {"kind": "cosine", "floor": 0.0, "warmup": 50}, "scaling": "none"}

  {"run": 8, "rate": 0.001, "seed": 1, "budget": 500, "optimizer": "adam-64",
   "kind": "adam", "beta1": 0.9, "beta2": 0.999, "eps": 1e-08, "batch_size": 64, "sampling": "epochs",
   "schedule": {"kind": "constant", "warmup": 0}, "scaling": "none"}

with exactly the fields of the optimizer's kind (momentum, nesterov: beta; adam: beta1, beta2,
eps; rmsprop: rho, eps; adagrad: eps; gd, sgd: none), "batch_size" and "sampling" only when the suite sets a batch size,
and the schedule's kind, its own parameters (step: factor, every; exponential, inverse_time:
decay; cosine: floor) and warmup. It answers each with its lines tagged {"run": id, ...} and a
last {"run": id, "end": true}; a {"stop": id} line asks it to end that run early. In per-run mode
the same values reach argv through placeholders ({rate}, {optimizer.beta},
{optimizer.batch_size}, {schedule.warmup}, ...). Every example under examples/ uses this file;
copy it beside your own trainer.
"""
import collections
import json
import os
import select
import sys



def say(obj):
    # json.dumps writes floats with repr (round-trips exactly) and non-finite values as the
    # bare tokens NaN / Infinity / -Infinity, which stepgate accepts.
    sys.stdout.write(json.dumps(obj) + "\n")
    sys.stdout.flush()


class Inbox:
    """JSON lines from fd 0, read with os.read (no Python buffering, so select() on fd 0
    tells the truth about what is waiting)."""

    def __init__(self):
        self.partial = b""
        self.messages = collections.deque()
        self.eof = False

    def pump(self, block):
        timeout = None if block else 0.0
        while not self.eof and select.select([0], [], [], timeout)[0]:
            chunk = os.read(0, 1 << 16)
            if not chunk:
                self.eof = True
                chunk = b"\n"  # a last line without a newline still counts
            *lines, self.partial = (self.partial + chunk).split(b"\n")
            for line in lines:
                if line.strip():
                    try:
                        msg = json.loads(line)
                    except ValueError:
                        msg = None
                    if not isinstance(msg, dict):
                        sys.exit(f"serve: not a JSON object on stdin: {line[:200]!r}")
                    self.messages.append(msg)
            timeout = 0.0

    def next(self):
        """The next message, waiting for it; None at the end of input."""
        while not self.messages and not self.eof:
            self.pump(block=True)
        return self.messages.popleft() if self.messages else None

    def stop_requested(self, run):
        """True if a {"stop": run} line has arrived; drops every stop line read so far (a
        stop for a run that is not running is stale and ignored)."""
        self.pump(block=False)
        found = any(m.get("stop") == run for m in self.messages if "stop" in m)
        if any("stop" in m for m in self.messages):
            self.messages = collections.deque(m for m in self.messages if "stop" not in m)
        return found


def serve(run_one, default_beta=None, whole_request=False):
    """Answers requests until stdin ends. run_one(rate, seed, budget, extra, emit, stopped) gets
    as `extra` the request's beta (or default_beta), or with whole_request the request itself
    (a dict: the optimizer's kind and fields, batch_size, schedule)."""
    inbox = Inbox()
    while True:
        msg = inbox.next()
        if msg is None:
            return 0
        if "run" not in msg:
            continue  # a stop for a run that has already ended
        rid = msg["run"]
        try:
            rate, seed, budget = float(msg["rate"]), int(msg["seed"]), int(msg["budget"])
        except (KeyError, TypeError, ValueError) as e:
            sys.exit(f"serve: request {msg!r}: needs numeric rate, seed and budget ({e})")
        if whole_request:
            extra = msg
        else:
            extra = float(msg["beta"]) if "beta" in msg else default_beta
        run_one(rate, seed, budget, extra, lambda obj: say({"run": rid, **obj}),
                lambda: inbox.stop_requested(rid))
        say({"run": rid, "end": True})


def run_or_serve(parser, args, run_one, beta=None, whole_request=False):
    """The trainer's main: serving mode with --serve, else one run from --lr, --seed and --steps
    whose final parameters end the output. Returns the exit code. `extra` (see serve) is beta in
    per-run mode, or with whole_request an empty request: the command line's values stand."""
    if args.serve:
        return serve(run_one, default_beta=beta, whole_request=whole_request)
    if args.lr is None or args.steps is None or args.steps < 0:
        parser.error("per-run mode needs --lr and --steps >= 0 (or --serve)")
    params = run_one(args.lr, args.seed, args.steps, {} if whole_request else beta, say, lambda: False)
    if params is not None:
        say({"params": [float(v) for v in params]})
    return 0
