"""B1 closed form vectorised with numpy: the side-by-side comparison figure for the exact engine.

Same problem as bench/problems/b1.ts; prints one JSON line {"b1_numpy_ions_per_s": ..., "b1_numpy_t_ref_ns": ...}.
Only the trace is timed (sampling excluded), best of 5, like the TypeScript benchmark.
"""
import json, time
import numpy as np

e = 1.602176634e-19; u = 1.66053906660e-27
k = e / (1000 * u)
d1, d2, L1, dm, L2 = 3e-3, 10e-3, 1.0, 0.1, 0.8
a1 = k * 3000 / d1; a2 = k * 17000 / d2; am = -k * 21500 / dm

def trace(z0, v0):
    # stage 1 from z0 to 3 mm (ions moving back turn before the repeller for these fields)
    ahead = d1 - z0
    v1 = np.sqrt(v0 * v0 + 2 * a1 * ahead)
    t = (v1 - v0) / a1
    v2 = np.sqrt(v1 * v1 + 2 * a2 * d2)
    t += 2 * d2 / (v1 + v2)
    t += L1 / v2
    t += 2 * v2 / -am
    t += L2 / v2
    struck = v0 * v0 > 2 * a1 * z0
    return np.where(struck & (v0 < 0), np.nan, t)

rng = np.random.default_rng(1)
n = 1_000_000
z0 = rng.uniform(1.0e-3, 1.5e-3, n)
v0 = rng.normal(400, 150, n)
trace(z0, v0)
best = min((lambda s: (trace(z0, v0), time.perf_counter() - s)[1])(time.perf_counter()) for _ in range(5))
tref = trace(np.array([1.5e-3]), np.array([0.0]))[0]
print(json.dumps({"b1_numpy_ions_per_s": round(n / best), "b1_numpy_t_ref_ns": tref * 1e9}))
