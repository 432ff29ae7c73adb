"""Reference for tests/search_significance.rs: the false-alarm probability of the top peak
of a whole period search, near 1e-27, from astropy 8.0.2.

An invented light curve (seeded numpy, written to search_fap_series.csv so that both sides
read the same numbers): N = 400 times t_i = 0.05 i + 0.02 sin(1.7 i) d, dy = 1, values
A sin(2 pi 1.37 t) + unit normal noise, with A chosen (from a short list) so that the top
peak's false-alarm probability is closest to 1e-27. astropy's LombScargle (standard
normalisation, floating mean) on the grid skyclock plans for this baseline (start 1/T,
step 1/(5T), up to 10 c/d; recomputed here the same way) with method="slow"; at the
highest power, LombScargle.false_alarm_probability(power, method="baluev",
minimum_frequency=start, maximum_frequency=last grid frequency).
Command: python tests/reference/generate_search_fap_reference.py
"""
import csv
import math
import os

import astropy
import numpy as np
from astropy.timeseries import LombScargle

HERE = os.path.dirname(os.path.abspath(__file__))
n = 400
i = np.arange(n)
t = 0.05 * i + 0.02 * np.sin(1.7 * i)
dy = np.ones(n)
noise = np.random.default_rng(27).standard_normal(n)
baseline = float(t[-1] - t[0])
start = 1.0 / baseline
step = start / 5.0
count = int(math.floor((10.0 - start) / step)) + 1
freq = start + step * np.arange(count)

best = None
for amplitude in np.arange(0.5, 1.5, 0.01):
    y = amplitude * np.sin(2 * np.pi * 1.37 * t) + noise
    ls = LombScargle(t, y, dy, fit_mean=True, center_data=True, normalization="standard")
    power = ls.power(freq, method="slow")
    k = int(np.argmax(power))
    fap = float(ls.false_alarm_probability(power[k], method="baluev", minimum_frequency=start,
                                           maximum_frequency=freq[-1]))
    if fap > 0 and (best is None or abs(math.log10(fap) + 27) < abs(math.log10(best[3]) + 27)):
        best = (amplitude, k, float(power[k]), fap, y)

amplitude, k, power, fap, y = best
with open(os.path.join(HERE, "search_fap_series.csv"), "w", newline="") as f:
    w = csv.writer(f)
    w.writerow(["time_d", "value", "error"])
    for a, b, c in zip(t, y, dy):
        w.writerow([repr(float(a)), repr(float(b)), repr(float(c))])
with open(os.path.join(HERE, "search_fap_reference.csv"), "w", newline="") as f:
    w = csv.writer(f)
    w.writerow(["amplitude", "grid_start_per_day", "grid_step_per_day", "grid_count", "peak_index",
                "peak_freq_per_day", "power_astropy", "fap_astropy", "log10_fap_astropy"])
    w.writerow([repr(float(amplitude)), repr(start), repr(step), count, k, repr(float(freq[k])), repr(power),
                repr(fap), repr(math.log10(fap))])
print("astropy", astropy.__version__, "numpy", np.__version__, "amplitude", amplitude, "fap", fap)
