"""The loop both peers run, as a practitioner writes it: one run at a time, from the run's
start, `steps` updates of gd or heavy ball with cost and gradient at every step, stopping early
only on a non-finite cost. `cost_grad(w) -> (cost, gradient)` and `vector(start)` (the start as
the library's vector; None for zeros) come from the peer, which times this on its library."""
import math
import time


def time_runs(job, cost_grad, vector):
    """Returns (seconds, final costs)."""
    opt = job["optimizer"]
    finals = []
    start = time.perf_counter()
    for run in job["runs"]:
        w = vector(run.get("start"))
        v = 0 * w
        rate = run["rate"]
        for _ in range(run["steps"]):
            cost, g = cost_grad(w)
            if not math.isfinite(cost):
                break
            if opt["kind"] == "momentum":
                v = opt["beta"] * v - rate * g
                w = w + v
            else:
                w = w - rate * g
        finals.append(float(cost_grad(w)[0]))
    return time.perf_counter() - start, finals
