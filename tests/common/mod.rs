//! Invented light curves for synthetic recovery tests (fixed seeds). The site, the star
//! and the observing pattern are invented: a single mid-latitude site observing a field
//! for a few hours each clear night, so daily gaps and aliases are realistic.
#![allow(dead_code)]

use skyclock::fit::SeededRng;

/// Times (d): `span_nights` nights, each clear with probability `clear`, observed for
/// `hours` hours starting near local midnight with `per_night` points at random times.
pub fn nightly_times(rng: &mut SeededRng, span_nights: usize, clear: f64, per_night: usize, hours: f64) -> Vec<f64> {
    let mut t = Vec::new();
    for night in 0..span_nights {
        if rng.uniform() >= clear {
            continue;
        }
        let start = night as f64 + 0.35 + 0.06 * rng.uniform();
        for _ in 0..per_night {
            t.push(start + rng.uniform() * hours / 24.0);
        }
    }
    t.sort_by(|a, b| a.total_cmp(b));
    t.dedup();
    t
}

/// Phase in [0,1).
pub fn frac(x: f64) -> f64 {
    x - x.floor()
}

/// Fast-rise, slow-decline pulsation (magnitudes; brightest at phase 0.15): full
/// amplitude `amp`.
pub fn sawtooth_mag(phase: f64, amp: f64) -> f64 {
    let p = frac(phase);
    if p < 0.15 { amp * (0.5 - p / 0.15) } else { amp * (-0.5 + (p - 0.15) / 0.85) }
}

/// Detached eclipsing binary (magnitudes): primary eclipse of depth `depth` at phase 0,
/// secondary of 0.4·depth at phase 0.5, each lasting `width` in phase, parabolic bottoms.
pub fn eclipses_mag(phase: f64, depth: f64, width: f64) -> f64 {
    let p = frac(phase);
    let d1 = p.min(1.0 - p);
    let d2 = (p - 0.5).abs();
    let h = 0.5 * width;
    let mut m = 0.0;
    if d1 < h {
        m += depth * (1.0 - (d1 / h).powi(2));
    }
    if d2 < h {
        m += 0.4 * depth * (1.0 - (d2 / h).powi(2));
    }
    m
}

/// A frequency drawn uniformly in [lo, hi) c/d, redrawn while n·f is within 0.04 of an
/// integer for n ≤ 3: from one site such signals keep showing the same few phases every
/// night, so no method can recover them (common practice: the daily-alias problem).
pub fn draw_observable_freq(rng: &mut SeededRng, lo: f64, hi: f64) -> f64 {
    loop {
        let f = lo + (hi - lo) * rng.uniform();
        if (1..=3).all(|n| {
            let x = n as f64 * f;
            (x - x.round()).abs() >= 0.04
        }) {
            return f;
        }
    }
}
