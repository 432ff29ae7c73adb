//! Every failure a user can cause gives a clear error, never a panic or a silent answer.

use skyclock::fold::{BinStatistic, bin_folded, fold_times, refine_period};
use skyclock::frequencies::detrend::{remove_polynomial, remove_segment_offsets};
use skyclock::frequencies::fit_sinusoids;
use skyclock::frequencies::model::Sinusoid;
use skyclock::periodogram::bls::{BoxOptions, box_search, plan_box_grid};
use skyclock::periodogram::*;

fn t10() -> Vec<f64> {
    (0..10).map(|i| i as f64 * 1.1).collect()
}

#[test]
fn nans_are_dropped_and_counted() {
    let t = [0.0, 1.0, f64::NAN, 3.0, 4.0, 5.0];
    let y = [1.0, 2.0, 3.0, f64::INFINITY, 2.0, 1.5];
    let e = [0.1, f64::NAN, 0.1, 0.1, 0.1, 0.1];
    let s = Series::from_arrays(&t, &y, Some(&e)).unwrap();
    assert_eq!(s.len(), 3);
    assert_eq!(s.n_dropped(), 3);
    assert_eq!(s.row(), &[0, 4, 5]);
    let all_nan = [f64::NAN; 6];
    let err = Series::from_arrays(&t, &all_nan, None).unwrap_err();
    assert!(matches!(err, SearchError::TooFewPoints { got: 0, dropped: 6, .. }));
    assert!(err.to_string().contains("dropping 6"));
}

#[test]
fn bad_uncertainties_times_and_lengths_are_refused() {
    let t = t10();
    let y: Vec<f64> = t.iter().map(|x| x.sin()).collect();
    let mut e = vec![0.1; 10];
    e[4] = 0.0;
    assert!(matches!(Series::from_arrays(&t, &y, Some(&e)), Err(SearchError::NonPositiveError { row: 4, .. })));
    e[4] = -0.2;
    assert!(matches!(Series::from_arrays(&t, &y, Some(&e)), Err(SearchError::NonPositiveError { row: 4, .. })));
    let mut tu = t.clone();
    tu.swap(2, 3);
    let err = Series::from_arrays(&tu, &y, None).unwrap_err();
    assert!(matches!(err, SearchError::UnsortedTimes { row: 3, .. }), "{err}");
    assert!(err.to_string().contains("sort"));
    let mut td = t.clone();
    td[5] = td[4];
    assert!(matches!(Series::from_arrays(&td, &y, None), Err(SearchError::DuplicateTime { row: 5, first_row: 4, .. })));
    // the same time in two different bands is fine
    let band: Vec<u32> = (0..10).map(|i| (i % 2) as u32).collect();
    assert!(Series::from_light_curve(&LightCurve::new(&td, &y).with_band(&band)).is_ok());
    assert!(matches!(Series::from_arrays(&t, &y[..9], None), Err(SearchError::LengthMismatch { .. })));
}

#[test]
fn constant_curve_and_too_few_points_are_refused() {
    let t = t10();
    assert!(matches!(Series::from_arrays(&t, &[2.5; 10], None), Err(SearchError::ConstantSeries)));
    assert!(matches!(
        Series::from_arrays(&t[..2], &[1.0, 2.0], None),
        Err(SearchError::TooFewPoints { needed: 3, .. })
    ));
    let y = [1.0, 2.0, 1.5];
    let s = Series::from_arrays(&t[..3], &y, None).unwrap();
    let g = FrequencyGrid::new(0.1, 0.01, 10).unwrap();
    assert!(matches!(
        GeneralisedLombScargle::default().evaluate(&s, &g),
        Err(SearchError::TooFewPoints { needed: 4, got: 3, .. })
    ));
    assert!(matches!(
        multiharmonic::MultiHarmonic { harmonics: 3 }.evaluate(&s, &g),
        Err(SearchError::TooFewPoints { .. })
    ));
    assert!(matches!(
        fit_sinusoids(&s, &[Sinusoid { freq_per_day: 0.3, amplitude: 1.0, phase_cycles: 0.0 }]),
        Err(SearchError::TooFewPoints { .. })
    ));
    assert!(refine_period(&s, 0.3, 2).is_err());
    assert!(remove_polynomial(&s, 3).is_err());
}

#[test]
fn unresolvable_ranges_and_huge_grids_are_refused() {
    // baseline 9.9 d: a lowest frequency of 0.05 c/d (20 d period) cannot be resolved
    let req = GridRequest { min_freq_per_day: Some(0.05), ..GridRequest::up_to(5.0) };
    let err = plan_grid(9.9, &req).unwrap_err();
    assert!(matches!(err, SearchError::UnresolvableRange { .. }));
    assert!(err.to_string().contains("baseline"));
    assert!(matches!(
        plan_grid(9.9, &GridRequest { min_freq_per_day: Some(2.0), ..GridRequest::up_to(1.0) }),
        Err(SearchError::UnresolvableRange { .. })
    ));
    assert!(matches!(plan_grid(9.9, &GridRequest::up_to(f64::NAN)), Err(SearchError::UnresolvableRange { .. })));
    assert!(matches!(plan_grid(0.0, &GridRequest::up_to(1.0)), Err(SearchError::InvalidParameter { .. })));
    assert!(matches!(
        plan_grid(9.9, &GridRequest { oversampling: 0.5, ..GridRequest::up_to(1.0) }),
        Err(SearchError::InvalidParameter { .. })
    ));
    // 3650 d baseline up to 1e5 c/d at oversampling 10: ~3.7e9 frequencies, refused with an estimate
    let err = plan_grid(3650.0, &GridRequest { oversampling: 10.0, ..GridRequest::up_to(1.0e5) }).unwrap_err();
    match err {
        SearchError::GridTooLarge { n_freq, bytes_needed, .. } => {
            assert!(n_freq > 3_000_000_000 && bytes_needed > 1 << 40);
        }
        other => panic!("unexpected {other}"),
    }
    assert!(matches!(plan_box_grid(10.0, 1.0, 20.0, 0.1, 2.0, 1 << 30), Err(SearchError::UnresolvableRange { .. })));
}

#[test]
fn bad_method_parameters_are_refused() {
    let t = t10();
    let y: Vec<f64> = t.iter().map(|x| (x * 0.9).sin()).collect();
    let s = Series::from_arrays(&t, &y, None).unwrap();
    let g = FrequencyGrid::new(0.1, 0.01, 20).unwrap();
    assert!(box_search(&s, &g, &BoxOptions::flux(vec![])).is_err());
    assert!(box_search(&s, &g, &BoxOptions::flux(vec![-0.1])).is_err());
    assert!(box_search(&s, &g, &BoxOptions::flux(vec![3.0])).is_err());
    assert!(dispersion::PhaseDispersion { n_bins: 1 }.evaluate(&s, &g).is_err());
    assert!(entropy::ConditionalEntropy { n_phase: 0, n_value: 5 }.evaluate(&s, &g).is_err());
    assert!(fold_times(&t, -1.0, 0.0).is_err());
    assert!(bin_folded(&[0.1, 0.2], &[1.0], None, 4, BinStatistic::Mean).is_err());
    assert!(bin_folded(&[0.1], &[1.0], None, 0, BinStatistic::Median).is_err());
    assert!(remove_segment_offsets(&s, 0.0).is_err());
    assert!(FrequencyGrid::new(0.0, 0.0, 5).is_err());
    assert!(FrequencyGrid::new(-1.0, 0.1, 5).is_err());
    assert!(FrequencyGrid::new(0.0, 0.1, 0).is_err());
}
