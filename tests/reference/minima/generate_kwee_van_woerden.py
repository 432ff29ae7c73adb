#!/usr/bin/env python3
"""Reference Kwee-van Woerden times of minimum and their errors, written independently.

Library versions (pinned in tests/reference/requirements.txt): numpy 2.4.6. Nothing else.

Method, coded here from Kwee & van Woerden (1956, Bull. Astron. Inst. Netherlands 12, 327;
procedure as remembered, "from memory" where the paper's details are recalled):
  1. The N observations of one minimum are interpolated linearly onto N equally spaced
     instants spanning the same range (step dT).
  2. For a trial centre T the interpolated branch after T is reflected onto the branch
     before it; S(T) = sum over the reflected pairs of (m(T + k dT) - m(T - k dT))^2.
     Trial centres on the grid points and half-way between them pair grid points only.
  3. T1 = the trial centre with the smallest S per pair among those whose reflection covers
     at least a quarter of the grid (and 3 pairs) on each side; S is summed over a common
     number of pairs at T1 - dT/2, T1, T1 + dT/2.
  4. A parabola S(T) = A T^2 + B T + C through the three gives T0 = -B / (2A) and
     sigma^2 = (4AC - B^2) / (4 A^2 (Z - 1)),
     with Z = N/4 (N = observations within the reflected range about T0): the paper's
     number of independent pairs for interpolated data (from memory). The column
     error_z_half_d gives the same with Z = N/2 so that a test can tell the two apart.

The light curves are invented: Gaussian or flat-bottomed (cosh^-2) dips, uneven sampling,
seeded Gaussian noise; 30 events with 12-150 points.

    python tests/reference/minima/generate_kwee_van_woerden.py
"""
import csv
import os

import numpy as np


def reflection_sum(grid, centre_half_steps, pairs):
    """S for a trial centre at half-step index j (time t0 + j dT/2), over `pairs` pairs."""
    j = centre_half_steps
    if j % 2 == 0:
        left = [j // 2 - k for k in range(1, pairs + 1)]
        right = [j // 2 + k for k in range(1, pairs + 1)]
    else:
        left = [(j + 1) // 2 - k for k in range(1, pairs + 1)]
        right = [(j - 1) // 2 + k for k in range(1, pairs + 1)]
    d = grid[right] - grid[left]
    return float(np.dot(d, d))


def available_pairs(j, n):
    """Pairs that fit inside grid indices 0..n-1 about half-step index j."""
    if j % 2 == 0:
        return min(j // 2, n - 1 - j // 2)
    return min((j + 1) // 2, n - 1 - (j - 1) // 2)


def kwee_van_woerden(t, m):
    t = np.asarray(t, float)
    m = np.asarray(m, float)
    n = len(t)
    step = (t[-1] - t[0]) / (n - 1)
    grid_t = t[0] + step * np.arange(n)
    grid = np.interp(grid_t, t, m)
    need = max((n - 1) // 4, 3)
    candidates = [j for j in range(1, 2 * (n - 1)) if available_pairs(j, n) >= need]
    per_pair = [reflection_sum(grid, j, available_pairs(j, n)) / available_pairs(j, n) for j in candidates]
    j1 = candidates[int(np.argmin(per_pair))]
    assert available_pairs(j1 - 1, n) >= need and available_pairs(j1 + 1, n) >= need, "edge"
    pairs = min(available_pairs(j, n) for j in (j1 - 1, j1, j1 + 1))
    times = np.array([t[0] + j * step / 2.0 for j in (j1 - 1, j1, j1 + 1)])
    sums = np.array([reflection_sum(grid, j, pairs) for j in (j1 - 1, j1, j1 + 1)])
    # Parabola through three points, in time relative to the middle one (conditioning).
    x = times - times[1]
    A, B, C = np.polyfit(x, sums, 2)
    t0 = times[1] - B / (2.0 * A)
    reach = pairs * step
    used = int(np.sum(np.abs(t - t0) <= reach))
    def sigma(z):
        return float(np.sqrt((4.0 * A * C - B * B) / (4.0 * A * A * (z - 1.0))))
    return t0, sigma(used / 4.0), sigma(used / 2.0), pairs, used, step


rng = np.random.default_rng(1956_327)
points, results = [], []
for event in range(30):
    n = int(rng.integers(12, 151))
    centre = 2460000.0 + 3.1 * event + rng.uniform(-0.01, 0.01)
    width = rng.uniform(0.01, 0.04)
    half = width * rng.uniform(2.5, 4.0)
    depth = rng.uniform(0.2, 1.0)
    noise = depth * rng.uniform(0.005, 0.05)
    shape = "gaussian" if event % 2 == 0 else "flat"
    # Window off-centre by up to 10 % of its half width; uneven sampling.
    lo = centre - half * (1.0 + rng.uniform(-0.1, 0.1))
    hi = centre + half * (1.0 + rng.uniform(-0.1, 0.1))
    base = np.linspace(lo, hi, n)
    jitter = (hi - lo) / (n - 1) * 0.35 * rng.uniform(-1.0, 1.0, n)
    jitter[0] = jitter[-1] = 0.0
    t = np.sort(base + jitter)
    x = (t - centre) / width
    dip = np.exp(-0.5 * x * x) if shape == "gaussian" else 1.0 / np.cosh(x) ** 2
    m = 11.0 + depth * dip + noise * rng.normal(size=n)
    # Times relative to a whole day, as a light-curve reader would keep them precise.
    origin = float(np.floor(t[0]))
    t_rel = t - origin
    t0, err, err_half, pairs, used, step = kwee_van_woerden(t_rel, m)
    for ti, mi in zip(t_rel, m):
        points.append([event, repr(float(ti)), repr(float(mi))])
    results.append([event, shape, n, repr(origin), repr(float(centre - origin)), repr(float(t0)), repr(err), repr(err_half),
                    pairs, used, repr(float(step))])

here = os.path.dirname(os.path.abspath(__file__))
with open(os.path.join(here, "kwee_van_woerden_points.csv"), "w", newline="") as fh:
    w = csv.writer(fh, lineterminator="\n")
    w.writerow(["event", "time_d", "magnitude"])
    w.writerows(points)
with open(os.path.join(here, "kwee_van_woerden_reference.csv"), "w", newline="") as fh:
    w = csv.writer(fh, lineterminator="\n")
    w.writerow(["event", "shape", "points", "time_origin_d", "injected_centre_d", "centre_d", "error_d",
                "error_z_half_d", "pairs", "observations_used", "grid_step_d"])
    w.writerows(results)
print(f"wrote {len(results)} events, {len(points)} points (numpy {np.__version__})")
