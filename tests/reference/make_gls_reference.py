"""Reference values for the Lomb-Scargle family and the Baluev false-alarm probability.

Invented light curve (star "Tessellate-7", an invented pulsator seen from an invented
site): irregular nightly sampling, period 0.3127 d, heteroscedastic noise. Frequencies are
written as start + k*step and re-created identically in the Rust test.

Run:  python make_gls_reference.py > gls_reference.json
Needs numpy, scipy, astropy (versions are written into the output).
"""
import json
import numpy as np
import scipy
import astropy
from scipy.signal import lombscargle
from astropy.timeseries import LombScargle

rng = np.random.default_rng(20260101)
nights = np.sort(rng.choice(np.arange(60), size=25, replace=False)).astype(float)
t = np.sort(np.concatenate([n + 0.15 + 0.3 * rng.random(6) for n in nights]))
dy = 0.02 + 0.03 * rng.random(t.size)
y = 12.0 + 0.05 * np.sin(2 * np.pi * t / 0.3127 + 0.4) + dy * rng.standard_normal(t.size)
T = t.max() - t.min()
start, step, n_freq = 1.0 / T, 0.2 / T, 450
f = start + step * np.arange(n_freq)

out = {
    "source": f"numpy {np.__version__}, scipy {scipy.__version__}, astropy {astropy.__version__}",
    "time_d": t.tolist(), "value": y.tolist(), "error": dy.tolist(),
    "grid_start_per_day": start, "grid_step_per_day": step, "grid_len": n_freq,
}
# Generalised LS (floating mean, weights 1/sigma^2), standard normalisation.
ls = LombScargle(t, y, dy, fit_mean=True, center_data=True, normalization="standard")
out["astropy_gls_power"] = ls.power(f, method="slow").tolist()
# Classical LS on mean-centred data, weights, no floating mean.
ls0 = LombScargle(t, y, dy, fit_mean=False, center_data=True, normalization="standard")
out["astropy_classical_power"] = ls0.power(f, method="slow").tolist()
# scipy: unweighted classical LS on centred data, normalised to [0,1].
yc = y - y.mean()
out["scipy_classical_unweighted_power"] = lombscargle(t, yc, 2 * np.pi * f, precenter=False, normalize=True).tolist()
# scipy: weighted floating-mean LS on weighted-mean-centred data, normalised.
w = 1.0 / dy**2
ycw = y - np.sum(w * y) / np.sum(w)
out["scipy_gls_power"] = lombscargle(t, ycw, 2 * np.pi * f, normalize=True, weights=w, floating_mean=True).tolist()
# Baluev (2008) false-alarm probability for several powers, fmax = last grid frequency.
powers = [0.05, 0.1, 0.2, 0.3, 0.5]
out["baluev_powers"] = powers
# astropy snaps the maximum frequency onto its own automatic grid; record the value it used.
_, fmax_used = ls.autofrequency(maximum_frequency=f[-1], return_freq_limits=True)
out["baluev_max_freq_per_day"] = float(fmax_used)
out["astropy_baluev_fap"] = [float(ls.false_alarm_probability(p, method="baluev", maximum_frequency=f[-1])) for p in powers]
print(json.dumps(out))
