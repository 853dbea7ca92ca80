//! Unit tests of the tracker's internals; behaviour on signals is tested in
//! tests/it/track.rs.

use super::*;

#[test]
fn frames_cover_exactly_the_centres_inside_the_signal() {
    // Frame k is centred on round(k · hop · rate); the track holds every
    // frame whose centre is a sample of the signal, and no other.
    for rate in [8_000, 22_050, 44_100] {
        let plan = Plan::new(rate, &TrackConfig::default()).expect("a valid config");
        for length in [1usize, 2, 219, 220, 221, 441, 22_050, 100_003] {
            let count = plan.frame_count(length);
            assert!(plan.centre_sample(count - 1) <= (length - 1) as i64);
            assert!(plan.centre_sample(count) > (length - 1) as i64);
        }
        assert_eq!(plan.frame_count(0), 0);
    }
}

#[test]
fn pitch_grid_spans_fmin_to_fmax_in_20_cent_steps() {
    // 50 → 2100 Hz is 1200·log2(42) = 6470.9 cents: bins 0..=323 of 20 cents.
    assert_eq!(hmm::bin_count(50.0, 2100.0, 5), 324);
    let top = hmm::bin_hz(50.0, 5, 323);
    assert!(top <= 2100.0 && top > 2100.0 * 2f64.powf(-20.0 / 1200.0));
}

#[test]
fn default_layout_at_the_analysis_rate() {
    // 22 050 Hz: lags ⌊22050/2100⌋ = 10 to ⌈22050/50⌉ = 441; W = 441 samples
    // (one period of 50 Hz); frame W + 2·442 = 1325 samples (60 ms).
    let plan = Plan::new(ANALYSIS_SAMPLE_RATE, &TrackConfig::default()).expect("valid");
    assert_eq!(plan.layout.min_lag, 10);
    assert_eq!(plan.layout.max_lag, 441);
    assert_eq!(plan.layout.integration_samples, 441);
    assert_eq!(plan.layout.frame_samples, 1325);
    // ±11 bins of 20 cents per 10 ms: 35.92 oct/s · 12 · 0.01 s = 4.31
    // semitones in all, half each way (librosa.pyin's convention).
    assert_eq!(plan.hmm.transition_half_width, 11);
    assert_eq!(plan.hmm.lag_frames, 25);
}
