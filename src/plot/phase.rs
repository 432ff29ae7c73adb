//! The phase range a folded figure is drawn over. Folded curves are drawn over more than
//! one cycle so that an event at phase 0 (a primary eclipse, a pulse, a periastron) is
//! seen whole instead of being cut in two at 0 and 1 (common practice). Every point of
//! phase φ ∈ [0, 1) is drawn at each φ + k (k whole) that falls inside the range.

use std::fmt;
use std::str::FromStr;

/// Widest range accepted, cycles (more copies only repeat the same curve).
pub const MAX_PHASE_SPAN: f64 = 4.0;

/// A phase interval [start, end] in cycles, 0 < end − start ≤ [`MAX_PHASE_SPAN`].
#[derive(Debug, Clone, Copy, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct PhaseRange {
    /// First phase drawn, cycles.
    pub start: f64,
    /// Last phase drawn, cycles.
    pub end: f64,
}

/// Why a phase range was refused (the text a user typed and what is wrong with it).
#[derive(Debug, Clone, PartialEq, thiserror::Error)]
pub enum PhaseRangeError {
    /// The text is not two numbers separated by one comma.
    #[error("phase range '{text}': expected two numbers START,END in cycles, e.g. -0.25,1.25")]
    Syntax {
        /// The text as given.
        text: String,
    },
    /// A bound is not finite, or the end is not after the start.
    #[error("phase range {start},{end}: the end must be after the start and both finite")]
    Order {
        /// First phase given, cycles.
        start: f64,
        /// Last phase given, cycles.
        end: f64,
    },
    /// The range is wider than [`MAX_PHASE_SPAN`].
    #[error("phase range {start},{end}: at most {max} cycles wide")]
    TooWide {
        /// First phase given, cycles.
        start: f64,
        /// Last phase given, cycles.
        end: f64,
        /// The widest range accepted, cycles.
        max: f64,
    },
}

impl PhaseRange {
    /// The default of folded light curves and orbits: −0.25 to 1.25, so that phase 0 and
    /// phase 1 both lie a quarter cycle inside the edges (common practice).
    pub const FOLDED: PhaseRange = PhaseRange { start: -0.25, end: 1.25 };
    /// One cycle, 0 to 1.
    pub const ONE_CYCLE: PhaseRange = PhaseRange { start: 0.0, end: 1.0 };

    /// A checked range: both finite, `end > start`, at most [`MAX_PHASE_SPAN`] wide.
    pub fn new(start: f64, end: f64) -> Result<PhaseRange, PhaseRangeError> {
        if !(start.is_finite() && end.is_finite() && end > start) {
            return Err(PhaseRangeError::Order { start, end });
        }
        if end - start > MAX_PHASE_SPAN {
            return Err(PhaseRangeError::TooWide { start, end, max: MAX_PHASE_SPAN });
        }
        Ok(PhaseRange { start, end })
    }

    /// Width in cycles.
    pub fn span(&self) -> f64 {
        self.end - self.start
    }

    /// The phases at which a point of phase `phase` (cycles, any value) is drawn: every
    /// `phase − floor(phase) + k` (k whole) inside [start, end], in increasing order.
    /// Empty for a non-finite phase.
    pub fn copies(&self, phase: f64) -> Vec<f64> {
        if !phase.is_finite() {
            return Vec::new();
        }
        let p = phase.rem_euclid(1.0);
        let first = (self.start - p).ceil() as i64;
        let last = (self.end - p).floor() as i64;
        (first..=last).map(|k| p + k as f64).collect()
    }

    /// Repeats parallel per-point data over the range: for each point `i` and each copy of
    /// `phase[i]`, the copied phase and the index `i` (so values, errors and details can be
    /// taken along). Points are listed copy by copy in phase order of the copies.
    pub fn repeat(&self, phase: &[f64]) -> (Vec<f64>, Vec<usize>) {
        let mut phases = Vec::with_capacity(phase.len() * 2);
        let mut index = Vec::with_capacity(phase.len() * 2);
        for (i, &p) in phase.iter().enumerate() {
            for c in self.copies(p) {
                phases.push(c);
                index.push(i);
            }
        }
        (phases, index)
    }
}

impl Default for PhaseRange {
    fn default() -> PhaseRange {
        PhaseRange::FOLDED
    }
}

impl fmt::Display for PhaseRange {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "{},{}", self.start, self.end)
    }
}

impl FromStr for PhaseRange {
    type Err = PhaseRangeError;

    /// Reads `START,END` (cycles; a Unicode minus sign is accepted).
    fn from_str(text: &str) -> Result<PhaseRange, PhaseRangeError> {
        let syntax = || PhaseRangeError::Syntax { text: text.to_string() };
        let cleaned = text.replace('−', "-");
        let mut parts = cleaned.split(',');
        let (Some(a), Some(b), None) = (parts.next(), parts.next(), parts.next()) else {
            return Err(syntax());
        };
        let start: f64 = a.trim().parse().map_err(|_| syntax())?;
        let end: f64 = b.trim().parse().map_err(|_| syntax())?;
        PhaseRange::new(start, end)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn copies_cover_the_range_once_per_cycle() {
        let r = PhaseRange::FOLDED;
        // Phase 0 (the primary event) is drawn at 0 and at 1; 0.1 at 0.1 and 1.1; 0.9 at −0.1 and 0.9.
        assert_eq!(r.copies(0.0), vec![0.0, 1.0]);
        assert_eq!(r.copies(0.1), vec![0.1, 1.1]);
        let c = r.copies(0.9);
        assert_eq!(c.len(), 2);
        assert!((c[0] + 0.1).abs() < 1e-12 && (c[1] - 0.9).abs() < 1e-12);
        // 0.5 only once: 1.5 and −0.5 fall outside.
        assert_eq!(r.copies(0.5), vec![0.5]);
        // Phases outside [0, 1) are wrapped first.
        assert_eq!(r.copies(2.5), vec![0.5]);
        assert!(r.copies(f64::NAN).is_empty());
        // Two whole cycles: every point twice.
        let two = PhaseRange::new(0.0, 2.0).unwrap();
        let (p, i) = two.repeat(&[0.25, 0.75]);
        assert_eq!(p, vec![0.25, 1.25, 0.75, 1.75]);
        assert_eq!(i, vec![0, 0, 1, 1]);
    }

    #[test]
    fn parses_and_refuses_clearly() {
        assert_eq!("-0.25,1.25".parse::<PhaseRange>().unwrap(), PhaseRange::FOLDED);
        assert_eq!(" −0.5 , 1.5 ".parse::<PhaseRange>().unwrap(), PhaseRange::new(-0.5, 1.5).unwrap());
        for bad in ["", "1", "a,b", "0,1,2", "1,0", "0,0", "nan,1", "0,inf", "-3,3"] {
            let e = bad.parse::<PhaseRange>().unwrap_err();
            assert!(!e.to_string().is_empty(), "{bad}");
        }
        assert!(matches!("-3,3".parse::<PhaseRange>(), Err(PhaseRangeError::TooWide { .. })));
        assert!(matches!("1,0".parse::<PhaseRange>(), Err(PhaseRangeError::Order { .. })));
    }
}
