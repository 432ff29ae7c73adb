//! The survey cascade's per-source table: each source's [`Classification`] turned into one
//! typed row once the size of the field is known (the class and the variability flag depend
//! on the number of sources searched), and the rows into the columns `survey-batch` writes
//! and the Python module returns. The command line and the Python binding only call this.

use std::collections::BTreeMap;

use polars::prelude::{Column, DataFrame, PolarsResult};

use super::cascade::{CascadeModel, Classification, VariabilityClass};

/// One source's cascade description in a field: the class at the field's false-alarm
/// level and the evidence behind it. Units: periods and durations in days, amplitudes and
/// depths in the units of the values, mid-event time in days of the series' reference;
/// `None` where a stage did not run or a value is not finite.
#[derive(Debug, Clone, PartialEq)]
pub struct CascadeRow {
    /// Class label in the field ([`super::cascade::VariabilityClass::label`]).
    pub class: String,
    /// Whether the source is variable at the field's false-alarm level.
    pub variable: bool,
    /// False-alarm probability of the source within the field.
    pub field_false_alarm: Option<f64>,
    /// False-alarm probability of the source alone (over its trials and models).
    pub source_false_alarm: Option<f64>,
    /// The winning model's label.
    pub model: String,
    /// Period taken, days.
    pub period_d: Option<f64>,
    /// 1σ of the period, days.
    pub period_err_d: Option<f64>,
    /// Factor by which the period σ was inflated by √χ²_red (1 when not).
    pub period_err_inflation: Option<f64>,
    /// Semi-amplitude, half the peak-to-peak or box depth (see [`Classification`]).
    pub amplitude: Option<f64>,
    /// BIC of a constant.
    pub bic_constant: Option<f64>,
    /// BIC of the sinusoid.
    pub bic_sinusoid: Option<f64>,
    /// BIC of the harmonic series.
    pub bic_harmonic_series: Option<f64>,
    /// BIC of the box.
    pub bic_box: Option<f64>,
    /// Box depth.
    pub box_depth: Option<f64>,
    /// 1σ of the box depth.
    pub box_depth_err: Option<f64>,
    /// Box duration, days.
    pub box_duration_d: Option<f64>,
    /// Mid-event time of the first event after the first point, days.
    pub box_mid_event_d: Option<f64>,
    /// Box depth over its σ.
    pub box_signal_to_noise: Option<f64>,
    /// |odd − even| depth difference over its σ.
    pub box_odd_even_sigma: Option<f64>,
    /// Depth at phase 0.5.
    pub box_depth_phase_half: Option<f64>,
    /// Phase of the deepest secondary dip elsewhere, cycles.
    pub box_secondary_phase: Option<f64>,
    /// S/N of that dip.
    pub box_secondary_signal_to_noise: Option<f64>,
    /// Dimming episodes per cycle of the best harmonic fit.
    pub harmonic_minima_per_cycle: Option<u64>,
    /// What was decided and why.
    pub decision_note: String,
}

fn finite(v: f64) -> Option<f64> {
    v.is_finite().then_some(v)
}

impl CascadeRow {
    /// The row of `c` in a field of `n_sources` at field false-alarm level `level`.
    pub fn new(c: &Classification, n_sources: usize, level: f64) -> Self {
        let b = c.box_detection;
        let m = b.map(|b| b.measurement);
        let bic_of = |model| c.stage(model).and_then(|s| finite(s.bic));
        CascadeRow {
            class: c.class_in_field(n_sources, level).label().to_string(),
            variable: c.is_variable(n_sources, level),
            field_false_alarm: finite(c.field_false_alarm(n_sources)),
            source_false_alarm: finite(c.false_alarm),
            model: c.model.label().to_string(),
            period_d: finite(c.period_d),
            period_err_d: finite(c.period_err_d),
            period_err_inflation: finite(c.err_scale),
            amplitude: finite(c.amplitude),
            bic_constant: finite(c.bic_constant),
            bic_sinusoid: bic_of(CascadeModel::Sinusoid),
            bic_harmonic_series: bic_of(CascadeModel::Harmonics),
            bic_box: bic_of(CascadeModel::Box),
            box_depth: b.and_then(|b| finite(b.depth)),
            box_depth_err: b.and_then(|b| finite(b.depth_err)),
            box_duration_d: b.and_then(|b| finite(b.duration_d)),
            box_mid_event_d: b.and_then(|b| finite(b.epoch_d)),
            box_signal_to_noise: b.and_then(|b| finite(b.snr)),
            box_odd_even_sigma: m.and_then(|m| finite(m.odd_even_sigma)),
            box_depth_phase_half: m.and_then(|m| finite(m.secondary_depth)),
            box_secondary_phase: m.and_then(|m| finite(m.secondary_search_phase)),
            box_secondary_signal_to_noise: m.and_then(|m| finite(m.secondary_search_snr())),
            harmonic_minima_per_cycle: (c.minima_per_cycle > 0).then_some(c.minima_per_cycle as u64),
            decision_note: c.note.clone(),
        }
    }
}

/// The cascade's rows of a field, in input order (`None` for a source that was skipped).
#[derive(Debug, Clone, PartialEq)]
pub struct CascadeTable {
    /// Sources in the field (the count the field false-alarm level is carried over).
    pub n_sources: usize,
    /// Field false-alarm level of the variability flag.
    pub false_alarm_level: f64,
    /// One row per source.
    pub rows: Vec<Option<CascadeRow>>,
}

/// The names of the cascade's columns, in table order.
pub const CASCADE_COLUMNS: [&str; 24] = [
    "class",
    "variable",
    "field_false_alarm_probability",
    "source_false_alarm_probability",
    "model",
    "period_d",
    "period_err_d",
    "period_err_inflation",
    "amplitude",
    "bic_constant",
    "bic_sinusoid",
    "bic_harmonic_series",
    "bic_box",
    "box_depth",
    "box_depth_err",
    "box_duration_d",
    "box_mid_event_d",
    "box_signal_to_noise",
    "box_odd_even_sigma",
    "box_depth_phase_half",
    "box_secondary_phase",
    "box_secondary_signal_to_noise",
    "harmonic_minima_per_cycle",
    "decision_note",
];

impl CascadeTable {
    /// The rows of `found` (one per source, `None` when skipped) in a field of `n_sources`
    /// at field false-alarm level `level`.
    pub fn new(found: &[Option<Classification>], n_sources: usize, level: f64) -> Self {
        CascadeTable {
            n_sources,
            false_alarm_level: level,
            rows: found.iter().map(|c| c.as_ref().map(|c| CascadeRow::new(c, n_sources, level))).collect(),
        }
    }

    /// Sources per class label (skipped sources not counted).
    pub fn class_counts(&self) -> BTreeMap<String, usize> {
        let mut counts = BTreeMap::new();
        for r in self.rows.iter().flatten() {
            *counts.entry(r.class.clone()).or_insert(0) += 1;
        }
        counts
    }

    /// The columns [`CASCADE_COLUMNS`], one row per source (nulls for skipped sources).
    pub fn columns(&self) -> Vec<Column> {
        let text = |f: &dyn Fn(&CascadeRow) -> String| -> Vec<Option<String>> {
            self.rows.iter().map(|r| r.as_ref().map(f)).collect()
        };
        let num = |f: &dyn Fn(&CascadeRow) -> Option<f64>| -> Vec<Option<f64>> {
            self.rows.iter().map(|r| r.as_ref().and_then(f)).collect()
        };
        let [
            c_class,
            c_variable,
            c_ffap,
            c_sfap,
            c_model,
            c_period,
            c_perr,
            c_infl,
            c_amp,
            c_bc,
            c_bs,
            c_bh,
            c_bb,
            c_depth,
            c_derr,
            c_dur,
            c_mid,
            c_snr,
            c_oe,
            c_half,
            c_sph,
            c_ssnr,
            c_min,
            c_note,
        ] = CASCADE_COLUMNS;
        vec![
            Column::new(c_class.into(), text(&|r| r.class.clone())),
            Column::new(
                c_variable.into(),
                self.rows.iter().map(|r| r.as_ref().map(|r| r.variable)).collect::<Vec<_>>(),
            ),
            Column::new(c_ffap.into(), num(&|r| r.field_false_alarm)),
            Column::new(c_sfap.into(), num(&|r| r.source_false_alarm)),
            Column::new(c_model.into(), text(&|r| r.model.clone())),
            Column::new(c_period.into(), num(&|r| r.period_d)),
            Column::new(c_perr.into(), num(&|r| r.period_err_d)),
            Column::new(c_infl.into(), num(&|r| r.period_err_inflation)),
            Column::new(c_amp.into(), num(&|r| r.amplitude)),
            Column::new(c_bc.into(), num(&|r| r.bic_constant)),
            Column::new(c_bs.into(), num(&|r| r.bic_sinusoid)),
            Column::new(c_bh.into(), num(&|r| r.bic_harmonic_series)),
            Column::new(c_bb.into(), num(&|r| r.bic_box)),
            Column::new(c_depth.into(), num(&|r| r.box_depth)),
            Column::new(c_derr.into(), num(&|r| r.box_depth_err)),
            Column::new(c_dur.into(), num(&|r| r.box_duration_d)),
            Column::new(c_mid.into(), num(&|r| r.box_mid_event_d)),
            Column::new(c_snr.into(), num(&|r| r.box_signal_to_noise)),
            Column::new(c_oe.into(), num(&|r| r.box_odd_even_sigma)),
            Column::new(c_half.into(), num(&|r| r.box_depth_phase_half)),
            Column::new(c_sph.into(), num(&|r| r.box_secondary_phase)),
            Column::new(c_ssnr.into(), num(&|r| r.box_secondary_signal_to_noise)),
            Column::new(
                c_min.into(),
                self.rows.iter().map(|r| r.as_ref().and_then(|r| r.harmonic_minima_per_cycle)).collect::<Vec<_>>(),
            ),
            Column::new(c_note.into(), text(&|r| r.decision_note.clone())),
        ]
    }

    /// The columns as a table (one row per source).
    pub fn table(&self) -> PolarsResult<DataFrame> {
        DataFrame::new(self.rows.len(), self.columns())
    }
}

/// A row's flags carried from the field it was made in to a larger field of `n_sources`
/// (a field searched in parts, e.g. one Dask partition each, then gathered): returns (class
/// label, variable, field false-alarm probability) as [`CascadeRow::new`] would have given
/// them with `n_sources`. The field probability grows with the number of sources, so a row
/// that was constant in its part stays constant, and a variable one keeps its class while
/// its probability in the whole field, computed again from `source_false_alarm` (the
/// source's own, [`CascadeRow::source_false_alarm`]), stays under `level`. Exact when
/// `n_sources` is at least the count the row was made with (the caller's duty: the whole
/// field holds every part). Source: [`super::false_alarm::field_false_alarm`].
pub fn flags_in_larger_field(
    class_in_part: &str,
    source_false_alarm: Option<f64>,
    n_sources: usize,
    level: f64,
) -> (String, bool, Option<f64>) {
    let field = source_false_alarm.map(|p| super::false_alarm::field_false_alarm(p, n_sources)).and_then(finite);
    let variable = field.is_some_and(|p| p < level);
    let class = if variable { class_in_part.to_string() } else { VariabilityClass::Constant.label().to_string() };
    (class, variable, field)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::SeededRng;
    use crate::periodogram::{Algorithm, GridRequest, Series, plan_grid};
    use crate::survey::cascade::{CascadeOptions, classify_series};

    #[test]
    fn a_field_of_one_sinusoid_and_one_skipped_source_gives_named_columns_and_counts() {
        // Invented: 300 points over 60 nights, a 0.7 d sinusoid of 0.1 mag, noise 0.01.
        let mut rng = SeededRng::new(21);
        let t: Vec<f64> = (0..300).map(|k| (k / 5) as f64 + 0.05 * (k % 5) as f64 + 0.01 * rng.uniform()).collect();
        let y: Vec<f64> =
            t.iter().map(|&x| 14.0 + 0.1 * (std::f64::consts::TAU * x / 0.7).sin() + 0.01 * rng.normal()).collect();
        let s = Series::from_arrays(&t, &y, Some(&vec![0.01; t.len()])).unwrap();
        let grid = plan_grid(s.baseline_d(), &GridRequest::up_to(5.0)).unwrap().grid;
        let c = classify_series(&s, &grid, Algorithm::Auto, 1 << 30, &CascadeOptions::new(true)).unwrap();
        let table = CascadeTable::new(&[Some(c.clone()), None], 2, 0.01);
        let df = table.table().unwrap();
        let names: Vec<String> = df.get_column_names().iter().map(|n| n.to_string()).collect();
        assert_eq!(names, CASCADE_COLUMNS.map(str::to_string).to_vec());
        assert_eq!(df.height(), 2);
        let row = table.rows[0].as_ref().unwrap();
        assert_eq!(row.class, "sinusoidal");
        assert!(row.variable);
        assert!((row.period_d.unwrap() / 0.7 - 1.0).abs() < 1e-3);
        assert_eq!(row.field_false_alarm, Some(c.field_false_alarm(2)));
        assert!(table.rows[1].is_none());
        assert_eq!(table.class_counts().get("sinusoidal"), Some(&1));
        assert_eq!(table.class_counts().values().sum::<usize>(), 1);
    }

    /// Rows made in two halves of a field and carried to the whole field equal the rows
    /// made in the whole field: class, flag and field false-alarm probability.
    #[test]
    fn rows_of_parts_carried_to_the_whole_field_equal_the_whole_fields() {
        // Invented: sinusoids of falling amplitude in noise, so that some sources are
        // variable in a field of 3 and not in one of 3000.
        let mut found = Vec::new();
        for (k, amp) in [0.1, 0.004, 0.0025, 0.002, 0.0015, 0.0].into_iter().enumerate() {
            let mut rng = SeededRng::new(40 + k as u64);
            let t: Vec<f64> = (0..200).map(|j| (j / 4) as f64 + 0.06 * (j % 4) as f64 + 0.01 * rng.uniform()).collect();
            let y: Vec<f64> = t
                .iter()
                .map(|&x| 14.0 + amp * (std::f64::consts::TAU * x / 0.61).sin() + 0.01 * rng.normal())
                .collect();
            let s = Series::from_arrays(&t, &y, Some(&vec![0.01; t.len()])).unwrap();
            let grid = plan_grid(s.baseline_d(), &GridRequest::up_to(5.0)).unwrap().grid;
            found.push(Some(classify_series(&s, &grid, Algorithm::Auto, 1 << 30, &CascadeOptions::new(true)).unwrap()));
        }
        for whole_field in [6, 3000] {
            let whole = CascadeTable::new(&found, whole_field, 0.01);
            let mut changed = 0;
            for offset in [0, 3] {
                let part = CascadeTable::new(&found[offset..offset + 3], 3, 0.01);
                for (p, w) in part.rows.iter().zip(&whole.rows[offset..offset + 3]) {
                    let (p, w) = (p.as_ref().unwrap(), w.as_ref().unwrap());
                    let carried = flags_in_larger_field(&p.class, p.source_false_alarm, whole_field, 0.01);
                    assert_eq!(carried, (w.class.clone(), w.variable, w.field_false_alarm));
                    changed += usize::from(p.variable != w.variable);
                }
            }
            if whole_field == 3000 {
                assert!(changed > 0, "some source must change flag between a field of 3 and one of 3000");
            }
        }
    }
}
