"""Times astropy's equivalents of benches/search_speed.rs on the same sizes, for the
ratios recorded in docs/benchmarks.md. Invented random data (same shapes, not the same
numbers: timings do not depend on the values).

Run:  python benches/astropy_reference.py   (needs numpy, astropy)
"""
import time
import numpy as np
import astropy
from astropy.timeseries import LombScargle, BoxLeastSquares

rng = np.random.default_rng(1)
print("astropy", astropy.__version__, "numpy", np.__version__)

# 1. fast LS, N = 1e5, M = 1e6 (astropy method "fast", Press & Rybicki)
t = np.sort(rng.random(100_000) * 1000.0)
y = np.sin(3.1 * t) + rng.standard_normal(t.size)
dy = np.ones_like(t)
f = 0.001 + 1e-4 * np.arange(1_000_000)
t0 = time.perf_counter()
LombScargle(t, y, dy).power(f, method="fast")
print(f"astropy fast LS N=1e5 M=1e6: {time.perf_counter() - t0:.3f} s")

# 2. exact LS, N = 1e3, M = 1e5 (astropy method "cython")
t = np.sort(rng.random(1000) * 100.0)
y = np.sin(3.1 * t) + rng.standard_normal(t.size)
dy = np.ones_like(t)
f = 0.01 + 1e-3 * np.arange(100_000)
t0 = time.perf_counter()
LombScargle(t, y, dy).power(f, method="cython")
print(f"astropy exact (cython) LS N=1e3 M=1e5: {time.perf_counter() - t0:.3f} s")

# 3. BLS, N = 1e4, 2e4 periods x 3 durations (astropy method "fast", default oversample 10)
t = np.sort(rng.random(10_000) * 200.0)
y = 1.0 + 0.01 * rng.standard_normal(t.size)
dy = np.full_like(t, 0.01)
freqs = 1.0 / 20.0 + (1.0 / 0.5 - 1.0 / 20.0) / 20_000 * np.arange(20_000)
periods = np.sort(1.0 / freqs)
t0 = time.perf_counter()
BoxLeastSquares(t, y, dy).power(periods, [0.05, 0.1, 0.2], method="fast")
print(f"astropy BLS (fast) N=1e4 2e4 periods x 3 durations: {time.perf_counter() - t0:.3f} s")
