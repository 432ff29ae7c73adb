//! Cosine and sine of phases given in turns (cycles), for many points at once: the inner
//! loop of every pass of a sinusoid fit over a light curve (one phase f·tᵢ per point).
//!
//! Method (common practice for vectorised sine–cosine): the phase x is reduced to the
//! nearest quarter turn, x = n/4 + r with |r| ≤ 1/8, exactly in floating point (4x is
//! exact, n is its nearest integer by the 1.5·2⁵² rounding constant, and 4x − n is exact
//! by Sterbenz's lemma); sin and cos of θ = 2πr (|θ| ≤ π/4) are the Taylor polynomials to
//! θ¹⁵ and θ¹⁶ (truncation below 5e-17 at π/4); the quarter n mod 4 then swaps and
//! negates them. The loop has no branches and no library calls, so the compiler runs it
//! in SIMD lanes (AVX2 with FMA when the CPU has them, chosen at run time).
//! Accuracy: within 4e-16 of `sin_cos(2π·(x − round x))` (tested below against the
//! standard library), the same argument reduction as [`super::sums::cis_cycles`]. An
//! |x| ≥ 2⁴⁹ turns has no fractional phase left in f64; it is taken at its nearest
//! quarter turn.

/// 1.5·2⁵²: adding and subtracting it rounds an |x| < 2⁵¹ to the nearest integer.
const ROUNDING: f64 = 6_755_399_441_055_744.0;

/// Beyond this |4x| the rounding constant no longer applies; 4x is then an integer
/// to within half a unit and is taken as its own quarter count.
const LARGEST_ROUNDED: f64 = 2_251_799_813_685_248.0; // 2^51

#[inline(always)]
fn nearest_integer(v: f64) -> f64 {
    if v.abs() < LARGEST_ROUNDED { (v + ROUNDING) - ROUNDING } else { v }
}

/// (cos 2πx, sin 2πx) for x in turns; see the module doc for the method and accuracy.
#[inline(always)]
pub(crate) fn cis_turns(x: f64) -> (f64, f64) {
    let x4 = 4.0 * x;
    let n = nearest_integer(x4);
    let theta = std::f64::consts::FRAC_PI_2 * (x4 - n);
    // quarter index n mod 4 in {−2, −1, 0, 1, 2} (±2 both the half turn)
    let q = n - 4.0 * nearest_integer(0.25 * n);
    let z = theta * theta;
    let sin = theta
        * (1.0
            + z * (-1.0 / 6.0
                + z * (1.0 / 120.0
                    + z * (-1.0 / 5040.0
                        + z * (1.0 / 362_880.0
                            + z * (-1.0 / 39_916_800.0
                                + z * (1.0 / 6_227_020_800.0 + z * (-1.0 / 1_307_674_368_000.0))))))));
    let cos = 1.0
        + z * (-0.5
            + z * (1.0 / 24.0
                + z * (-1.0 / 720.0
                    + z * (1.0 / 40_320.0
                        + z * (-1.0 / 3_628_800.0
                            + z * (1.0 / 479_001_600.0
                                + z * (-1.0 / 87_178_291_200.0 + z * (1.0 / 20_922_789_888_000.0))))))));
    let odd = q == 1.0 || q == -1.0;
    let half = q == 2.0 || q == -2.0;
    let (a, b) = if odd { (sin, cos) } else { (cos, sin) };
    let c = if q == 1.0 || half { -a } else { a };
    let s = if q == -1.0 || half { -b } else { b };
    (c, s)
}

#[inline(always)]
fn fill(freq: f64, t: &[f64], cos: &mut [f64], sin: &mut [f64]) {
    for ((&ti, c), s) in t.iter().zip(cos.iter_mut()).zip(sin.iter_mut()) {
        (*c, *s) = cis_turns(freq * ti);
    }
}

#[cfg(target_arch = "x86_64")]
#[target_feature(enable = "avx2,fma")]
unsafe fn fill_avx2_fma(freq: f64, t: &[f64], cos: &mut [f64], sin: &mut [f64]) {
    fill(freq, t, cos, sin)
}

/// cos and sin of 2π·freq·tᵢ for every i (turns = freq × time in matching units), written
/// to `cos` and `sin`; the shortest of the three slices sets the count. Accuracy: see the
/// module doc (≤ 4e-16 against the standard library's sine and cosine of the reduced phase).
pub(crate) fn cis_turns_many(freq: f64, t: &[f64], cos: &mut [f64], sin: &mut [f64]) {
    #[cfg(target_arch = "x86_64")]
    {
        if std::arch::is_x86_feature_detected!("avx2") && std::arch::is_x86_feature_detected!("fma") {
            // SAFETY: the CPU supports AVX2 and FMA (checked just above).
            return unsafe { fill_avx2_fma(freq, t, cos, sin) };
        }
    }
    fill(freq, t, cos, sin)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::SeededRng;

    /// Reference: the standard library (libm) on the phase reduced to [−½, ½] turn.
    fn reference(x: f64) -> (f64, f64) {
        let (s, c) = (std::f64::consts::TAU * (x - x.round())).sin_cos();
        (c, s)
    }

    #[test]
    fn matches_the_standard_library_over_many_turns() {
        let mut rng = SeededRng::new(11);
        let mut worst: f64 = 0.0;
        for k in 0..200_000 {
            let scale = [1.0, 10.0, 1e3, 1e6, 1e9][k % 5];
            let x = (rng.uniform() - 0.5) * 2.0 * scale;
            let (c, s) = cis_turns(x);
            let (rc, rs) = reference(x);
            worst = worst.max((c - rc).abs()).max((s - rs).abs());
        }
        assert!(worst <= 4e-16, "largest difference {worst:e}");
    }

    #[test]
    fn exact_at_quarter_turns_and_at_each_octant_edge() {
        for n in -16i32..=16 {
            let x = n as f64 * 0.25;
            let (c, s) = cis_turns(x);
            // exact values at quarter turns (the library's sin π is 1.2e-16, not 0)
            let (ec, es) = [(1.0, 0.0), (0.0, 1.0), (-1.0, 0.0), (0.0, -1.0)][n.rem_euclid(4) as usize];
            assert!(c == ec && s == es, "x = {x}: ({c}, {s})");
            for edge in [0.125, -0.125, 0.375, -0.375] {
                let (c, s) = cis_turns(x + edge);
                let (rc, rs) = reference(x + edge);
                assert!((c - rc).abs() <= 4e-16 && (s - rs).abs() <= 4e-16, "x = {}", x + edge);
            }
        }
    }

    #[test]
    fn batched_form_agrees_with_the_single_form_and_passes_nan_through() {
        let mut rng = SeededRng::new(5);
        let t: Vec<f64> = (0..1001).map(|_| rng.uniform() * 2000.0 - 1000.0).collect();
        let (mut c, mut s) = (vec![0.0; t.len()], vec![0.0; t.len()]);
        cis_turns_many(0.4934, &t, &mut c, &mut s);
        for i in 0..t.len() {
            let (rc, rs) = cis_turns(0.4934 * t[i]);
            // the FMA build may round the polynomial once where the portable one rounds twice
            assert!((c[i] - rc).abs() <= 2e-16 && (s[i] - rs).abs() <= 2e-16);
        }
        let (c, s) = cis_turns(f64::NAN);
        assert!(c.is_nan() && s.is_nan());
    }
}
