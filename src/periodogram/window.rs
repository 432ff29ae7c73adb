//! The spectral window's strongest sidelobes, found on a grid as coarse as they need: the
//! alias notes of a search use only a few sidelobe frequencies, to a tolerance of half a
//! resolution element 1/T, so the window is evaluated at [`WINDOW_POINTS_PER_RESOLUTION`]
//! points per 1/T (not at the search grid's oversampling) and each sidelobe's frequency and
//! height are interpolated between the grid points around it.

use super::peaks::local_maxima;
use super::{Algorithm, FrequencyGrid, Periodogram, SearchError, Series, SpectralWindow, Spectrum};

/// Points per resolution element 1/T of the grid the window is evaluated on (unless the
/// search grid is coarser still, when the search grid is used). At 2 points the main lobe of
/// a sidelobe (half-width 1/T) spans four grid points, and a three-point interpolation places
/// its top to a few hundredths of 1/T (tests/search_twins.rs holds it to 0.1/T of the
/// full-grid twin). Common practice (sampling a peak at twice its resolution).
pub const WINDOW_POINTS_PER_RESOLUTION: f64 = 2.0;

/// The grid the window of a search on `grid` is evaluated on, for baseline `baseline_d`:
/// the same range, with step max(search step, 1/(2T)) (see [`WINDOW_POINTS_PER_RESOLUTION`]).
pub fn window_grid(grid: &FrequencyGrid, baseline_d: f64) -> Result<FrequencyGrid, SearchError> {
    let coarse_step = 1.0 / (WINDOW_POINTS_PER_RESOLUTION * baseline_d);
    if !(coarse_step.is_finite() && coarse_step > grid.step_per_day) || grid.len < 2 {
        return Ok(*grid);
    }
    let span = grid.max_freq_per_day() - grid.start_per_day;
    let len = (span / coarse_step).floor() as usize + 1;
    FrequencyGrid::new(grid.start_per_day, coarse_step, len.max(2))
}

/// The frequencies (c/d) of the `count` strongest sidelobes of the spectral window of
/// `series` over the range of `grid`, strongest first, leaving out the main lobe below
/// 1.5/T: the offsets at which the sampling repeats a signal (daily, yearly, …).
///
/// The window W(f) = |Σ w e^{2πift}|²/(Σw)² (Deeming 1975, Ap&SS 36, 137) is evaluated on
/// [`window_grid`] with `algorithm`; its local maxima at least 1/T apart are the candidates,
/// each moved to the vertex of the parabola through its grid point and the two beside it
/// (frequency and height), and ranked by the interpolated height. Accuracy: the frequency
/// to ≲ 0.1/T of the maximum on the search grid itself (tested against that twin); the
/// cost is the window's on the coarse grid, the search grid's oversampling/2 times less.
pub fn strongest_window_sidelobes(
    series: &Series,
    grid: &FrequencyGrid,
    count: usize,
    algorithm: Algorithm,
) -> Result<Vec<f64>, SearchError> {
    if count == 0 {
        return Ok(Vec::new());
    }
    let baseline_d = series.baseline_d();
    let coarse = window_grid(grid, baseline_d)?;
    let window = SpectralWindow { algorithm }.evaluate(series, &coarse)?;
    Ok(interpolated_sidelobes(&window, baseline_d, count))
}

/// The `count` strongest sidelobes of an evaluated window (see
/// [`strongest_window_sidelobes`]): candidates at least 1/T apart, interpolated, above
/// 1.5/T, strongest interpolated height first.
pub fn interpolated_sidelobes(window: &Spectrum, baseline_d: f64, count: usize) -> Vec<f64> {
    let lo = 1.5 / baseline_d;
    let p = &window.power;
    let mut found: Vec<(f64, f64)> = local_maxima(window, count + 8, 1.0 / baseline_d)
        .into_iter()
        .map(|k| {
            let f = window.grid.freq_per_day(k);
            if k == 0 || k + 1 >= p.len() {
                return (f, p[k]);
            }
            let (a, b, c) = (p[k - 1], p[k], p[k + 1]);
            let curvature = a - 2.0 * b + c;
            if !(curvature < 0.0) {
                return (f, b);
            }
            // vertex of the parabola through (−1, a), (0, b), (1, c); |x| ≤ ½ at a maximum
            let x = (0.5 * (a - c) / curvature).clamp(-0.5, 0.5);
            (f + x * window.grid.step_per_day, b - 0.25 * (a - c) * x)
        })
        .filter(|&(f, _)| f > lo)
        .collect();
    found.sort_by(|x, y| y.1.total_cmp(&x.1));
    found.into_iter().take(count).map(|(f, _)| f).collect()
}
