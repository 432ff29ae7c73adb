//! Peaks of a periodogram: the highest local maxima and their alias annotations. Refining
//! a peak needs the models of the stages above (multi-sine and Fourier-series fits), so
//! `frequencies::peaks::describe_peaks` turns local maxima into refined, annotated peaks.

use super::Spectrum;

/// Sidereal day in cycles per (solar) day: 1.0027379 c/d (common practice; the ratio of
/// the mean solar to the mean sidereal day, e.g. Explanatory Supplement 3rd ed., §3.2).
pub const SIDEREAL_FREQ_PER_DAY: f64 = 1.002_737_9;
/// One cycle per Julian year, c/d (365.25 d; common practice).
pub const YEAR_FREQ_PER_DAY: f64 = 1.0 / 365.25;

/// Why a peak may be an alias of a stronger peak.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum AliasKind {
    /// f ≈ |f_strong + n × 1.0027379| (daily gaps).
    SiderealDay {
        /// Number n of cycles per sidereal day added (negative: subtracted).
        n: i32,
    },
    /// f ≈ |f_strong + n / 365.25| (seasonal gaps).
    Year {
        /// Number n of cycles per year added (negative: subtracted).
        n: i32,
    },
    /// f ≈ n f_strong.
    Harmonic {
        /// Harmonic number n (2 or more).
        n: u32,
    },
    /// f ≈ f_strong / n.
    Subharmonic {
        /// Divisor n (2 or more).
        n: u32,
    },
    /// f ≈ |f_strong ± f_w| for a sidelobe f_w of the spectral window.
    WindowSidelobe {
        /// Frequency f_w of the window sidelobe, cycles per day.
        window_freq_per_day: f64,
    },
}

/// An alias annotation: this peak relates to a stronger peak by `kind`.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct AliasNote {
    /// Index (in the returned peak list) of the stronger peak.
    pub stronger_peak: usize,
    /// How the two frequencies relate.
    pub kind: AliasKind,
    /// |f − predicted alias frequency|, c/d.
    pub mismatch_per_day: f64,
}

/// A described periodogram peak.
#[derive(Debug, Clone, PartialEq)]
pub struct Peak {
    /// Grid index of the local maximum.
    pub grid_index: usize,
    /// Statistic at the grid maximum.
    pub power: f64,
    /// Refined frequency, cycles per day (the grid frequency when not refined).
    pub freq_per_day: f64,
    /// 1σ of the frequency, cycles per day (NaN when not refined).
    pub freq_err_per_day: f64,
    /// Period 1/f, days.
    pub period_d: f64,
    /// 1σ of the period, days (NaN when not refined).
    pub period_err_d: f64,
    /// Semi-amplitude, in the units of the values (from the spectrum when not refined, 0
    /// for methods without one; NaN after a Fourier-series refinement).
    pub amplitude: f64,
    /// 1σ of the semi-amplitude, in the units of the values (NaN when not sinusoid-refined).
    pub amplitude_err: f64,
    /// Phase φ of maximum of A cos(2π(f t − φ)), cycles, referred to t = 0 (NaN when not
    /// sinusoid-refined).
    pub phase_cycles: f64,
    /// 1σ of the phase, cycles (NaN when not sinusoid-refined).
    pub phase_err_cycles: f64,
    /// Whether the least-squares refinement succeeded (else grid values, NaN errors).
    pub refined: bool,
    /// How this peak may be an alias of stronger peaks in the same list (empty: none found).
    pub aliases: Vec<AliasNote>,
}

/// Highest local maxima of `power`, in descending order, at least `min_sep` (c/d) apart.
/// Returns grid indices.
pub fn local_maxima(spectrum: &Spectrum, count: usize, min_sep_per_day: f64) -> Vec<usize> {
    let p = &spectrum.power;
    let m = p.len();
    let mut cand: Vec<usize> = (0..m)
        .filter(|&k| p[k].is_finite() && (k == 0 || p[k] >= p[k - 1]) && (k + 1 == m || p[k] > p[k + 1]))
        .collect();
    // Descending power, ties by ascending index (a total order: the same result as a
    // stable sort). Only a prefix is ordered: the `count` separated peaks nearly always lie
    // among the first few candidates; the prefix grows until they are found.
    let order = |a: &usize, b: &usize| p[*b].total_cmp(&p[*a]).then(a.cmp(b));
    let mut prefix = (8 * count).max(64);
    let mut out: Vec<usize> = Vec::new();
    loop {
        if prefix < cand.len() {
            cand.select_nth_unstable_by(prefix, order);
            cand[..prefix].sort_by(order);
        } else {
            cand.sort_by(order);
        }
        out.clear();
        for &k in cand.iter().take(prefix) {
            if out.len() >= count {
                break;
            }
            let f = spectrum.grid.freq_per_day(k);
            if out.iter().all(|&j| (spectrum.grid.freq_per_day(j) - f).abs() >= min_sep_per_day) {
                out.push(k);
            }
        }
        if out.len() >= count || prefix >= cand.len() {
            return out;
        }
        prefix *= 4;
    }
}

/// Frequencies of the strongest sidelobes of a spectral window (c/d), excluding the main
/// lobe below `1/T` c/d: the offsets at which the sampling repeats a signal.
pub fn window_sidelobes(window: &Spectrum, baseline_d: f64, count: usize) -> Vec<f64> {
    let lo = 1.5 / baseline_d;
    let idx = local_maxima(window, count + 8, 1.0 / baseline_d);
    idx.into_iter().map(|k| window.grid.freq_per_day(k)).filter(|&f| f > lo).take(count).collect()
}

/// A frequency at which a signal at some frequency f also shows up (or from which it
/// could have come), for marking on a periodogram figure.
#[derive(Debug, Clone, PartialEq)]
pub struct AliasFrequency {
    /// The alias frequency, c/d.
    pub freq_per_day: f64,
    /// How it relates to f.
    pub kind: AliasKind,
}

impl AliasFrequency {
    /// Short label: "+1/sd", "−1/yr", "2f", "f/2".
    pub fn short_label(&self) -> String {
        match self.kind {
            AliasKind::SiderealDay { n } => format!("{n:+}/sd"),
            AliasKind::Year { n } => format!("{n:+}/yr"),
            AliasKind::Harmonic { n } => format!("{n}f"),
            AliasKind::Subharmonic { n } => format!("f/{n}"),
            AliasKind::WindowSidelobe { window_freq_per_day } => format!("±{window_freq_per_day:.3}"),
        }
    }
}

/// The aliases of a peak at `freq_per_day` that lie within [`lo_per_day`, `hi_per_day`]:
/// |f ± 1 c/sidereal day| (1.0027379 c/d), |f ± 1 c/yr| (1/365.25 c/d), the harmonic 2f
/// and the subharmonic f/2 (common practice). In that order; ones outside the range, and
/// ones closer to f than `min_offset_per_day` (unresolvable: use the resolution 1/T of the
/// baseline T, as [`annotate_aliases`] does), are left out.
pub fn alias_frequencies(
    freq_per_day: f64,
    lo_per_day: f64,
    hi_per_day: f64,
    min_offset_per_day: f64,
) -> Vec<AliasFrequency> {
    let f = freq_per_day;
    let candidates = [
        ((f - SIDEREAL_FREQ_PER_DAY).abs(), AliasKind::SiderealDay { n: -1 }),
        (f + SIDEREAL_FREQ_PER_DAY, AliasKind::SiderealDay { n: 1 }),
        ((f - YEAR_FREQ_PER_DAY).abs(), AliasKind::Year { n: -1 }),
        (f + YEAR_FREQ_PER_DAY, AliasKind::Year { n: 1 }),
        (2.0 * f, AliasKind::Harmonic { n: 2 }),
        (0.5 * f, AliasKind::Subharmonic { n: 2 }),
    ];
    if !f.is_finite() {
        return Vec::new();
    }
    candidates
        .into_iter()
        .filter(|(x, _)| *x >= lo_per_day && *x <= hi_per_day && (x - f).abs() >= min_offset_per_day)
        .map(|(x, kind)| AliasFrequency { freq_per_day: x, kind })
        .collect()
}

/// Marks each peak that lies within `tol` (c/d) of an alias of a stronger peak: ±n sidereal
/// days (n ≤ 3), ±n years (n ≤ 2), harmonics and subharmonics (n = 2..5), window sidelobes.
/// Peaks must be in descending order of strength.
pub fn annotate_aliases(peaks: &mut [Peak], tol: f64, sidelobes_per_day: &[f64]) {
    for j in 1..peaks.len() {
        let fj = peaks[j].freq_per_day;
        let mut notes = Vec::new();
        for i in 0..j {
            let fi = peaks[i].freq_per_day;
            let mut test = |target: f64, kind: AliasKind, offset: f64| {
                if offset >= 2.0 * tol && (fj - target).abs() <= tol {
                    notes.push(AliasNote { stronger_peak: i, kind, mismatch_per_day: (fj - target).abs() });
                }
            };
            for n in [-3i32, -2, -1, 1, 2, 3] {
                test(
                    (fi + n as f64 * SIDEREAL_FREQ_PER_DAY).abs(),
                    AliasKind::SiderealDay { n },
                    (n as f64 * SIDEREAL_FREQ_PER_DAY).abs(),
                );
            }
            for n in [-2i32, -1, 1, 2] {
                test(
                    (fi + n as f64 * YEAR_FREQ_PER_DAY).abs(),
                    AliasKind::Year { n },
                    (n as f64 * YEAR_FREQ_PER_DAY).abs(),
                );
            }
            for n in 2u32..=5 {
                test(fi * n as f64, AliasKind::Harmonic { n }, fi * (n as f64 - 1.0));
                test(fi / n as f64, AliasKind::Subharmonic { n }, fi * (1.0 - 1.0 / n as f64));
            }
            for &fw in sidelobes_per_day {
                for target in [fi + fw, (fi - fw).abs()] {
                    test(target, AliasKind::WindowSidelobe { window_freq_per_day: fw }, fw);
                }
            }
        }
        peaks[j].aliases = notes;
    }
}

#[cfg(test)]
mod alias_frequency_tests {
    use super::*;

    /// f = 0.8 c/d in [0.01, 2]: f+1/sd = 1.8027379, |f−1/sd| = 0.2027379, f ± 1/365.25,
    /// 2f = 1.6, f/2 = 0.4 (definitions, common practice).
    #[test]
    fn aliases_of_a_peak_within_the_range() {
        let a = alias_frequencies(0.8, 0.01, 2.0, 0.001);
        let f: Vec<f64> = a.iter().map(|x| x.freq_per_day).collect();
        assert_eq!(f.len(), 6);
        assert!((f[0] - 0.2027379).abs() < 1e-12 && (f[1] - 1.8027379).abs() < 1e-12);
        assert!((f[2] - (0.8 - 1.0 / 365.25)).abs() < 1e-12 && (f[3] - (0.8 + 1.0 / 365.25)).abs() < 1e-12);
        assert_eq!((f[4], f[5]), (1.6, 0.4));
        // 2f and f+1/sd fall outside [0, 1.5]
        let b = alias_frequencies(0.8, 0.0, 1.5, 0.001);
        assert!(b.iter().all(|x| x.freq_per_day <= 1.5) && b.len() == 4);
        // a 100-day baseline (resolution 0.01 c/d) cannot separate the ±1/yr aliases
        let c = alias_frequencies(0.8, 0.0, 2.0, 1.0 / 100.0);
        assert!(c.len() == 4 && c.iter().all(|x| !matches!(x.kind, AliasKind::Year { .. })));
        assert_eq!(a[4].short_label(), "2f");
    }
}
