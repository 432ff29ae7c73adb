"""Same-run astropy reference for benches/search_speed.rs (sections 4 and 5): reads the
light curves and grids the Rust benchmark wrote into DIR, times astropy's BoxLeastSquares on
the same box grid, and the survey cascade written with astropy calls (Lomb-Scargle on the
same grid; a K-term Lomb-Scargle at the three strongest peaks and at half their frequency
with 2K terms; BoxLeastSquares on the same box grid with the cascade's eight duty cycles
applied to the shortest trial period, as astropy takes durations in days). One process,
one core (numpy without threads for these calls). Prints key=value lines.

Run by the benchmark: python3 benches/astropy_box_cascade.py DIR  (needs numpy, astropy)
"""
import os
import sys
import time

os.environ.setdefault("OMP_NUM_THREADS", "1")
import numpy as np  # noqa: E402
import astropy  # noqa: E402
from astropy.timeseries import BoxLeastSquares, LombScargle  # noqa: E402

d = sys.argv[1]
print(f"astropy_version={astropy.__version__}")

# 4. one light curve, the same box grid and durations
t, y, dy = np.loadtxt(os.path.join(d, "box_curve.csv"), delimiter=",", unpack=True)
freqs = np.loadtxt(os.path.join(d, "box_freqs.csv"))
durations = np.loadtxt(os.path.join(d, "box_durations.csv"), ndmin=1)
periods = np.sort(1.0 / freqs)
t0 = time.perf_counter()
BoxLeastSquares(t, y, dy).power(periods, durations, method="fast", oversample=10)
print(f"astropy_box_s={time.perf_counter() - t0:.6f}")

# 5. the cascade on the field (absent when the benchmark ran section 4 alone)
if not os.path.exists(os.path.join(d, "field.csv")):
    sys.exit(0)
field = np.loadtxt(os.path.join(d, "field.csv"), delimiter=",")
gls_freqs = np.loadtxt(os.path.join(d, "field_gls_freqs.csv"))
box_freqs = np.loadtxt(os.path.join(d, "field_box_freqs.csv"))
harmonics = int(open(os.path.join(d, "field_harmonics.txt")).read())
duty = np.loadtxt(os.path.join(d, "field_duty.csv"))
t0 = time.perf_counter()
for k in np.unique(field[:, 0]):
    rows = field[field[:, 0] == k]
    t, y, dy = rows[:, 1], rows[:, 2], rows[:, 3]
    p = LombScargle(t, y, dy).power(gls_freqs)
    top = np.argsort(p)[::-1][:3]
    for f in gls_freqs[top]:
        LombScargle(t, y, dy, nterms=harmonics).power(np.array([f]))
        LombScargle(t, y, dy, nterms=2 * harmonics).power(np.array([0.5 * f]))
    bp = np.sort(1.0 / box_freqs)
    BoxLeastSquares(t, y, dy).power(bp, duty * bp.min(), method="fast", oversample=10)
print(f"astropy_cascade_s={time.perf_counter() - t0:.6f}")
