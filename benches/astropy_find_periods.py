"""astropy's twin of `skyclock find-periods` for benches/find_periods_process.rs, whole
process: read the light curve (CSV or Parquet), fast Lomb-Scargle on the same grid, the top
peaks (local maxima at least 1/T apart), their Baluev false-alarm probabilities, a JSON of
the peaks and, when asked, the spectrum table.

Run:  python benches/astropy_find_periods.py INPUT START STEP COUNT PEAKS OUT.json [SPECTRUM]
(needs numpy, astropy; pyarrow for Parquet). INPUT has columns time (BJD_TDB, JD), value,
error. Prints the peaks' frequencies on stdout for the agreement check.
"""
import json
import sys

import numpy as np
from astropy.timeseries import LombScargle

path, start, step, count, n_peaks, out_json = sys.argv[1:7]
spectrum_path = sys.argv[7] if len(sys.argv) > 7 else None
start, step, count, n_peaks = float(start), float(step), int(count), int(n_peaks)

if path.endswith(".parquet"):
    import pyarrow.parquet as pq

    table = pq.read_table(path, columns=["time", "value", "error"])
    t = np.asarray(table.column("time").to_numpy(), dtype=float)
    y = table.column("value").to_numpy()
    dy = table.column("error").to_numpy()
else:
    t, y, dy = np.loadtxt(path, delimiter=",", skiprows=1, unpack=True)
epoch = np.floor(t[0])
t = t - epoch
freq = start + step * np.arange(count)
ls = LombScargle(t, y, dy)
power = ls.power(freq, method="fast")

# local maxima, strongest first, at least 1/T apart
baseline = t.max() - t.min()
inner = np.flatnonzero((power[1:-1] >= power[:-2]) & (power[1:-1] >= power[2:])) + 1
order = inner[np.argsort(power[inner])[::-1]]
chosen = []
for k in order:
    if all(abs(freq[k] - freq[j]) >= 1.0 / baseline for j in chosen):
        chosen.append(k)
    if len(chosen) == n_peaks:
        break
fap = ls.false_alarm_probability(power[chosen], method="baluev", maximum_frequency=freq[-1])
peaks = [
    {"freq_per_day": float(freq[k]), "period_d": float(1.0 / freq[k]), "power": float(power[k]), "fap": float(p)}
    for k, p in zip(chosen, np.atleast_1d(fap))
]
with open(out_json, "w") as f:
    json.dump({"peaks": peaks}, f)
if spectrum_path:
    header = "freq_per_day,period_d,power"
    np.savetxt(spectrum_path, np.column_stack([freq, 1.0 / freq, power]), delimiter=",", header=header, comments="")
for p in peaks:
    print(f"peak {p['freq_per_day']:.8f} {p['power']:.6f}")
