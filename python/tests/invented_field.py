"""An invented survey field for the synthetic tests and the benchmark: sources with
sinusoidal or eclipse-like variability at known periods, unevenly sampled over 80 days,
times in BJD_TDB, and one source with too few points (reported as skipped)."""

import numpy as np
import pandas as pd


def invented_field(sources: int = 40, seed: int = 2026, points=(120, 260)) -> pd.DataFrame:
    rng = np.random.default_rng(seed)
    frames = []
    for k in range(sources):
        n = int(rng.integers(points[0], points[1]))
        t = np.sort(2460300.0 + 80.0 * rng.random(n))
        period = float(np.exp(rng.uniform(np.log(0.25), np.log(6.0))))
        phase = ((t - t[0]) / period) % 1.0
        if k % 3 == 0:
            signal = 0.3 * np.exp(-0.5 * ((phase - 0.5) / 0.03) ** 2)  # an eclipse-like dip
        else:
            signal = 0.08 * np.sin(2 * np.pi * phase)
        err = np.full(n, 0.01)
        mag = 14.0 + signal + err * rng.standard_normal(n)
        frames.append(pd.DataFrame({"source": f"IF-{k:04d}", "time": t, "mag": mag, "mag_err": err, "period_true_d": period}))
    frames.append(pd.DataFrame({"source": "IF-short", "time": [2460301.0, 2460302.0], "mag": [14.0, 14.1],
                                "mag_err": [0.01, 0.01], "period_true_d": [np.nan, np.nan]}))
    return pd.concat(frames, ignore_index=True)
