#!/usr/bin/python3
"""Dense float64 GEMM at 2000 x 2000 through numpy (all cores): prints GFLOP/s and the BLAS used."""
import json
import time

import numpy as np

from blas_name import blas_name

n = 2000
rng = np.random.default_rng(1)
A, B = rng.standard_normal((n, n)), rng.standard_normal((n, n))
A @ B  # warm-up: threads started, pages touched
best = min((lambda t0: (A @ B, time.perf_counter() - t0)[1])(time.perf_counter()) for _ in range(5))
print(json.dumps({"peer": f"numpy {np.__version__} ({blas_name()})", "gflops": 2.0 * n ** 3 / best / 1e9}))
