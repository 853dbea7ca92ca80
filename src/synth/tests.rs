//! Worked examples for the synthesiser. Each check names where its expected
//! value comes from.

use super::*;
use crate::pitch::midi_to_hz;
use rustfft::{FftPlanner, num_complex::Complex};

/// A steady voice: no vibrato, jitter, shimmer, breath or scoop, so the
/// spectrum is a clean harmonic series.
fn steady_voice(tract: TractSize) -> Voice {
    Voice {
        vibrato: None,
        jitter_percent: 0.0,
        shimmer_percent: 0.0,
        breath_db: -120.0,
        scoop: None,
        ..Voice::new(tract)
    }
}

fn note(pitch_midi: f64, duration_seconds: f64, vowel: Vowel) -> Segment {
    Segment::Note(Note {
        pitch_midi,
        duration_seconds,
        vowel,
        level_db: 0.0,
        register: Register::Modal,
    })
}

fn config(sample_rate: u32) -> SynthConfig {
    SynthConfig {
        sample_rate,
        peak_dbfs: None,
        ..SynthConfig::default()
    }
}

/// Hann-windowed power spectrum of `samples[start..start + length]`
/// (bin spacing sample_rate / length).
fn power_spectrum(samples: &[f32], start: usize, length: usize) -> Vec<f64> {
    let mut buffer: Vec<Complex<f64>> = samples[start..start + length]
        .iter()
        .enumerate()
        .map(|(n, &x)| {
            let window = 0.5 - 0.5 * (std::f64::consts::TAU * n as f64 / length as f64).cos();
            Complex::new(f64::from(x) * window, 0.0)
        })
        .collect();
    FftPlanner::new()
        .plan_fft_forward(length)
        .process(&mut buffer);
    buffer[..length / 2].iter().map(|c| c.norm_sqr()).collect()
}

/// Truth contour in MIDI over a time span (voiced frames only).
fn truth_midi(synthesis: &Synthesis, from_seconds: f64, to_seconds: f64) -> Vec<(f64, f64)> {
    synthesis
        .truth
        .iter()
        .filter(|frame| frame.time >= from_seconds && frame.time < to_seconds)
        .filter_map(|frame| Some((frame.time, crate::pitch::hz_to_midi(frame.f0_hz?)?)))
        .collect()
}

/// Indices where the contour crosses `centre` upward.
fn upward_crossings(contour: &[(f64, f64)], centre: f64) -> Vec<usize> {
    (1..contour.len())
        .filter(|&i| contour[i - 1].1 < centre && contour[i].1 >= centre)
        .collect()
}

#[test]
fn a_held_note_averages_to_its_equal_tempered_frequency_over_whole_vibrato_cycles() {
    // Expected: f = 440 · 2^((m − 69)/12) (ISO 16 A4 = 440 Hz, equal
    // temperament), for a low bass A1, C4, A4 and a soprano's F6.
    let voice = Voice {
        vibrato: Some(Vibrato {
            rate_hz: 6.0,
            extent_cents: 80.0,
            drift: 0.05,
            delay_seconds: 0.1,
            ramp_seconds: 0.2,
        }),
        ..Voice::new(TractSize::Woman)
    };
    for (pitch_midi, expected_hz) in [
        (33.0, 55.0),
        (60.0, 261.625_565),
        (69.0, 440.0),
        (89.0, 1_396.912_926),
    ] {
        let synthesis = synthesize(&voice, &[note(pitch_midi, 3.0, Vowel::A)], &config(22_050))
            .expect("a valid note renders");
        // Skip the onset (scoop, vibrato ramp) and the release.
        let contour = truth_midi(&synthesis, 0.3 + 0.5, 0.3 + 2.9);
        let crossings = upward_crossings(&contour, pitch_midi);
        assert!(
            crossings.len() >= 10,
            "vibrato cycles found: {}",
            crossings.len()
        );
        let whole_cycles = &contour[crossings[0]..*crossings.last().unwrap_or(&0)];
        let mean_midi =
            whole_cycles.iter().map(|(_, m)| m).sum::<f64>() / whole_cycles.len() as f64;
        let mean_hz = midi_to_hz(mean_midi);
        let cents = 1200.0 * (mean_hz / expected_hz).log2();
        assert!(
            cents.abs() < 2.0,
            "MIDI {pitch_midi}: mean {mean_hz:.3} Hz, {cents:.2} cents off {expected_hz} Hz"
        );
    }
}

#[test]
fn vibrato_rate_and_extent_on_the_truth_contour_are_as_requested() {
    // Requested 5.5 Hz at ±60 cents: within the 5–7 Hz, ±20–90 cents of
    // trained singers (Sundberg 1987, from memory). The slow drift is ±4 %,
    // so the measured values must lie within 6 % and 10 %.
    let voice = Voice {
        vibrato: Some(Vibrato {
            rate_hz: 5.5,
            extent_cents: 60.0,
            drift: 0.04,
            delay_seconds: 0.1,
            ramp_seconds: 0.2,
        }),
        ..Voice::new(TractSize::Man)
    };
    let synthesis =
        synthesize(&voice, &[note(50.0, 4.0, Vowel::O)], &config(16_000)).expect("renders");
    let contour = truth_midi(&synthesis, 0.9, 4.1);
    let crossings = upward_crossings(&contour, 50.0);
    let cycles = crossings.len() - 1;
    let seconds = contour[crossings[cycles]].0 - contour[crossings[0]].0;
    let rate_hz = cycles as f64 / seconds;
    assert!((rate_hz / 5.5 - 1.0).abs() < 0.06, "rate {rate_hz:.2} Hz");
    // Extent: half the peak-to-peak excursion of each whole cycle, in cents.
    let extents: Vec<f64> = crossings
        .windows(2)
        .map(|pair| {
            let cycle = &contour[pair[0]..pair[1]];
            let high = cycle.iter().map(|(_, m)| *m).fold(f64::MIN, f64::max);
            let low = cycle.iter().map(|(_, m)| *m).fold(f64::MAX, f64::min);
            50.0 * (high - low)
        })
        .collect();
    let extent_cents = extents.iter().sum::<f64>() / extents.len() as f64;
    assert!(
        (extent_cents / 60.0 - 1.0).abs() < 0.10,
        "extent ±{extent_cents:.1} cents"
    );
}

#[test]
fn added_noise_has_the_requested_snr_over_voiced_frames() {
    // SNR = 10 log10(P_signal / P_noise) over the voiced frames (the usual
    // definition; the brief asks for 40, 20 and 10 dB). Measured by
    // rendering the same seed with and without noise: the difference is the
    // noise alone.
    let voice = Voice::new(TractSize::Woman);
    let segments = [
        note(67.0, 1.0, Vowel::E),
        Segment::Rest {
            duration_seconds: 0.5,
        },
        note(72.0, 1.0, Vowel::A),
    ];
    let clean = synthesize(&voice, &segments, &config(44_100)).expect("renders");
    for snr_db in [40.0, 20.0, 10.0] {
        for colour in [NoiseColour::White, NoiseColour::Pink] {
            let noisy_config = SynthConfig {
                noise: Some(Noise { snr_db, colour }),
                ..config(44_100)
            };
            let noisy = synthesize(&voice, &segments, &noisy_config).expect("renders");
            let (mut signal_power, mut noise_power) = (0.0, 0.0);
            for frame in clean.truth.iter().filter(|frame| frame.voiced) {
                let centre = (frame.time * 44_100.0).round() as usize;
                for n in centre.saturating_sub(220)..(centre + 220).min(clean.samples.len()) {
                    let s = f64::from(clean.samples[n]);
                    let e = f64::from(noisy.samples[n]) - s;
                    signal_power += s * s;
                    noise_power += e * e;
                }
            }
            let measured_db = 10.0 * (signal_power / noise_power).log10();
            assert!(
                (measured_db - snr_db).abs() < 0.3,
                "{colour:?} asked {snr_db} dB, measured {measured_db:.2} dB"
            );
            assert!(
                noisy
                    .snr_db
                    .is_some_and(|reported| (reported - snr_db).abs() < 1e-6)
            );
        }
    }
}

/// Levels (dB) of the harmonics k·f0, k = 1…, read from the spectrum peak
/// within ±2 bins of each.
fn harmonic_levels_db(spectrum: &[f64], f0_hz: f64, bin_hz: f64, up_to_hz: f64) -> Vec<f64> {
    (1..)
        .map(|k| k as f64 * f0_hz)
        .take_while(|f| *f < up_to_hz)
        .map(|f| {
            let bin = (f / bin_hz).round() as usize;
            let peak = spectrum[bin.saturating_sub(2)..=bin + 2]
                .iter()
                .cloned()
                .fold(0.0, f64::max);
            10.0 * peak.max(1e-30).log10()
        })
        .collect()
}

#[test]
fn the_spectrum_peaks_near_the_requested_formants() {
    // Expected F1 and F2 from Peterson & Barney 1952, Table II averages
    // (from memory): a man's /ɑ/ 730 and 1090 Hz, /i/ 270 and 2290 Hz, /u/
    // 300 and 870 Hz; a woman's /ɛ/ 610 and 2330 Hz. The harmonic envelope
    // must have a local maximum within one harmonic spacing of each.
    let cases = [
        (TractSize::Man, Vowel::A, 43.0, [730.0, 1090.0]),
        (TractSize::Man, Vowel::I, 43.0, [270.0, 2290.0]),
        (TractSize::Man, Vowel::U, 43.0, [300.0, 870.0]),
        (TractSize::Woman, Vowel::E, 50.0, [610.0, 2330.0]),
    ];
    let rate = 16_000;
    for (tract, vowel, pitch_midi, expected) in cases {
        let synthesis = synthesize(
            &steady_voice(tract),
            &[note(pitch_midi, 1.5, vowel)],
            &config(rate),
        )
        .expect("renders");
        let spectrum = power_spectrum(&synthesis.samples, rate as usize / 2, rate as usize);
        let f0_hz = midi_to_hz(pitch_midi);
        let levels = harmonic_levels_db(&spectrum, f0_hz, 1.0, 3500.0);
        let peaks_hz: Vec<f64> = (0..levels.len())
            .filter(|&i| {
                let left = if i == 0 { f64::MIN } else { levels[i - 1] };
                let right = levels.get(i + 1).copied().unwrap_or(f64::MIN);
                levels[i] >= left && levels[i] >= right
            })
            .map(|i| (i + 1) as f64 * f0_hz)
            .collect();
        for formant_hz in expected {
            assert!(
                peaks_hz
                    .iter()
                    .any(|peak| (peak - formant_hz).abs() <= f0_hz),
                "{tract:?} /{vowel:?}/: no envelope peak near {formant_hz} Hz; peaks at {peaks_hz:?}"
            );
        }
    }
}

#[test]
fn the_singers_formant_option_raises_the_2_to_4_khz_band() {
    // Sundberg 1974: clustering F3–F5 near 2.8 kHz gives a strong peak
    // there; the band level relative to 0–2 kHz rises by well over 6 dB.
    let band_ratio_db = |voice: &Voice| {
        let synthesis =
            synthesize(voice, &[note(48.0, 1.2, Vowel::A)], &config(16_000)).expect("renders");
        let spectrum = power_spectrum(&synthesis.samples, 8_000, 8_000);
        let band = |low: usize, high: usize| spectrum[low / 2..high / 2].iter().sum::<f64>();
        10.0 * (band(2_000, 4_000) / band(0, 2_000)).log10()
    };
    let plain = band_ratio_db(&steady_voice(TractSize::Man));
    let singer = band_ratio_db(&Voice {
        singers_formant: Some((2_800.0, 1.0)),
        ..steady_voice(TractSize::Man)
    });
    assert!(
        singer > plain + 6.0,
        "plain {plain:.1} dB, with singer's formant {singer:.1} dB"
    );
}

#[test]
fn the_rendered_fundamental_is_the_truth_f0() {
    // A steady A3: the spectrum's lowest peak lies at 220 Hz (ISO 16 and
    // equal temperament: 440 / 2), and so does every voiced truth frame.
    let synthesis = synthesize(
        &steady_voice(TractSize::Man),
        &[note(57.0, 1.5, Vowel::O)],
        &config(44_100),
    )
    .expect("renders");
    let spectrum = power_spectrum(&synthesis.samples, 22_050, 44_100);
    let peak_bin = (150..300)
        .max_by(|&a, &b| spectrum[a].total_cmp(&spectrum[b]))
        .unwrap_or(0);
    assert_eq!(peak_bin, 220);
    let mid = synthesis
        .truth
        .iter()
        .find(|frame| frame.time >= 1.0)
        .and_then(|frame| frame.f0_hz);
    assert!(mid.is_some_and(|f0| (f0 - 220.0).abs() < 1e-9));
}

/// Share of spectral power that lies farther than 25 Hz from every
/// harmonic of `f0_hz` below the Nyquist frequency.
fn inharmonic_share(samples: &[f32], sample_rate: usize, f0_hz: f64) -> f64 {
    let spectrum = power_spectrum(samples, sample_rate / 2, sample_rate);
    let total: f64 = spectrum.iter().sum();
    let inharmonic: f64 = spectrum
        .iter()
        .enumerate()
        .filter(|(bin, _)| {
            let f = *bin as f64;
            let nearest = (f / f0_hz).round() * f0_hz;
            (f - nearest).abs() > 25.0 || nearest == 0.0
        })
        .map(|(_, p)| p)
        .sum();
    inharmonic / total
}

#[test]
fn no_energy_folds_back_from_above_nyquist() {
    // A soprano's F6 (1396.9 Hz) at 16 kHz: harmonics above 8 kHz would fold
    // back to 16 000 − k·f0, between the harmonics. Band-limited synthesis
    // leaves less than −60 dB of the power there. The same check on a
    // naively sampled Rosenberg pulse derivative (not band-limited) fails,
    // which shows the check can fail.
    let rate = 16_000;
    let f0_hz = midi_to_hz(89.0);
    let synthesis = synthesize(
        &steady_voice(TractSize::Woman),
        &[note(89.0, 1.5, Vowel::A)],
        &config(rate),
    )
    .expect("renders");
    let share = inharmonic_share(&synthesis.samples, rate as usize, f0_hz);
    assert!(
        10.0 * share.log10() < -60.0,
        "inharmonic power {:.1} dB",
        10.0 * share.log10()
    );

    let shape = glottal::PulseShape::for_register(Register::Modal);
    let opening = shape.open_quotient * shape.speed_quotient / (1.0 + shape.speed_quotient);
    let closing = shape.open_quotient - opening;
    let naive: Vec<f32> = (0..2 * rate)
        .map(|n| {
            let phase = (n as f64 * f0_hz / f64::from(rate)).fract();
            let derivative = if phase < opening {
                (std::f64::consts::PI * phase / opening).sin() / opening
            } else if phase < shape.open_quotient {
                -(std::f64::consts::FRAC_PI_2 * (phase - opening) / closing).sin() / closing
            } else {
                0.0
            };
            derivative as f32
        })
        .collect();
    let naive_share = inharmonic_share(&naive, rate as usize, f0_hz);
    assert!(
        10.0 * naive_share.log10() > -60.0,
        "naive pulse {:.1} dB",
        10.0 * naive_share.log10()
    );
}

#[test]
fn a_glide_breaks_register_where_asked_with_an_f0_jump_recorded_in_the_truth() {
    // An upward siren G2 → G4 with a break at D4 and a 3-semitone jump
    // (Roubeau et al. 2009: an f0 jump at the M1 → M2 transition). The
    // truth records the break; the contour just before and after it differs
    // by the jump plus the sweep over the jump time.
    let glide = Glide {
        from_midi: 43.0,
        to_midi: 67.0,
        duration_seconds: 3.0,
        vowel: Vowel::A,
        level_db: 0.0,
        register: Register::Modal,
        register_break: Some(RegisterBreak {
            at_midi: 62.0,
            jump_semitones: 3.0,
        }),
    };
    let synthesis = synthesize(
        &steady_voice(TractSize::Man),
        &[Segment::Glide(glide)],
        &config(22_050),
    )
    .expect("renders");
    let [register_break] = synthesis.register_breaks[..] else {
        panic!("one break expected, got {:?}", synthesis.register_breaks);
    };
    // Sweep rate (67 − 43 − 3) / 3 s = 7 semitones per second; the break is
    // reached after (62 − 43) / 7 s from the glide's start at 0.3 s.
    assert!((register_break.time_seconds - (0.3 + 19.0 / 7.0)).abs() < 1e-9);
    assert_eq!(
        (register_break.midi_before, register_break.midi_after),
        (62.0, 65.0)
    );
    assert_eq!(register_break.to_register, Register::Falsetto);
    let at = |time: f64| {
        truth_midi(&synthesis, time - 0.005, time + 0.005)
            .first()
            .map(|(_, m)| *m)
            .unwrap_or(f64::NAN)
    };
    let before = at(register_break.time_seconds - 0.02);
    let after = at(register_break.time_seconds + 0.04);
    let expected = 3.0 + 7.0 * 0.06;
    assert!(
        ((after - before) - expected).abs() < 0.1,
        "jump {:.2} semitones",
        after - before
    );
}

#[test]
fn falsetto_notes_have_higher_h1_minus_h2_than_modal_notes_at_the_same_pitch() {
    // Roubeau, Henrich & Castellengo 2009: H1–H2 is higher in M2. Measured
    // on the rendered audio of an /u/ at G4 (F1 tuned above f0 either way).
    let h1_h2 = |register: Register| {
        let segment = Segment::Note(Note {
            pitch_midi: 67.0,
            duration_seconds: 1.5,
            vowel: Vowel::U,
            level_db: 0.0,
            register,
        });
        let synthesis = synthesize(&steady_voice(TractSize::Woman), &[segment], &config(22_050))
            .expect("renders");
        let spectrum = power_spectrum(&synthesis.samples, 11_025, 22_050);
        let levels = harmonic_levels_db(&spectrum, midi_to_hz(67.0), 1.0, 1_000.0);
        levels[0] - levels[1]
    };
    let modal = h1_h2(Register::Modal);
    let falsetto = h1_h2(Register::Falsetto);
    assert!(
        falsetto > modal + 3.0,
        "H1–H2 modal {modal:.1} dB, falsetto {falsetto:.1} dB"
    );
}

#[test]
fn speech_declines_around_the_speaking_pitch_with_syllable_rate_voicing() {
    // A man's speaking f0 of about 110 Hz (Baken 2000: men 85–155 Hz), 4
    // syllables per second and 4 semitones of declination: the first second
    // sits higher than the last, and voiced runs come at about the
    // syllable rate (±30 %).
    let speech = Speech {
        speaking_midi: 45.0,
        duration_seconds: 5.0,
        syllables_per_second: 4.0,
        declination_semitones: 4.0,
        level_db: 0.0,
    };
    let synthesis = synthesize(
        &Voice::new(TractSize::Man),
        &[Segment::Speech(speech)],
        &config(16_000),
    )
    .expect("renders");
    let median = |from: f64, to: f64| {
        let mut values: Vec<f64> = truth_midi(&synthesis, from, to)
            .iter()
            .map(|(_, m)| *m)
            .collect();
        values.sort_by(f64::total_cmp);
        values[values.len() / 2]
    };
    assert!(median(0.3, 1.3) > median(4.3, 5.3) + 2.0);
    let runs = synthesis
        .truth
        .windows(2)
        .filter(|pair| !pair[0].voiced && pair[1].voiced)
        .count();
    assert!((14..=26).contains(&runs), "{runs} voiced runs in 5 s");
}

#[test]
fn legato_notes_join_with_portamento_and_a_note_after_silence_scoops_from_below() {
    // Scoop: the first voiced frames start below the note (60 cents deep by
    // default) and reach it within the scoop time. Portamento: between two
    // legato notes the truth moves monotonically from one to the other.
    let voice = Voice {
        vibrato: None,
        ..Voice::new(TractSize::Woman)
    };
    let segments = [note(64.0, 0.5, Vowel::A), note(67.0, 0.5, Vowel::A)];
    let synthesis = synthesize(&voice, &segments, &config(16_000)).expect("renders");
    let onset = truth_midi(&synthesis, 0.3, 0.42);
    assert!(
        onset[0].1 < 63.8 && onset[0].1 >= 63.4 - 1e-9,
        "first voiced frame at MIDI {}",
        onset[0].1
    );
    assert!(onset.last().is_some_and(|(_, m)| (m - 64.0).abs() < 1e-9));
    // Up 3 semitones takes at least 89.6 + 8.7 · 3 = 115.7 ms (Xu & Sun 2002,
    // from memory), longer than the 80 ms portamento asked.
    let transition = truth_midi(&synthesis, 0.8, 0.8 + 0.125);
    assert!(transition.windows(2).all(|pair| pair[1].1 >= pair[0].1));
    assert!(
        transition.first().is_some_and(|(_, m)| *m < 64.1)
            && transition.last().is_some_and(|(_, m)| *m > 66.9)
    );
    let at_80_ms = truth_midi(&synthesis, 0.879, 0.889);
    assert!(
        at_80_ms.first().is_some_and(|(_, m)| *m < 66.9),
        "{at_80_ms:?}"
    );
    assert!(
        synthesis
            .truth
            .iter()
            .filter(|f| f.time > 0.35 && f.time < 1.25)
            .all(|f| f.voiced)
    );
}

#[test]
fn the_same_seed_gives_the_same_recording_and_another_seed_another() {
    let voice = Voice::new(TractSize::Child);
    let segments = [note(72.0, 0.5, Vowel::I)];
    let render = |seed: u64| {
        synthesize(
            &voice,
            &segments,
            &SynthConfig {
                seed,
                ..config(22_050)
            },
        )
        .expect("renders")
    };
    let (first, again, other) = (render(7), render(7), render(8));
    assert_eq!(first, again);
    assert_ne!(first.samples, other.samples);
}

#[test]
fn reverb_spreads_a_note_into_the_following_silence() {
    // An exponential decay of 60 dB in RT60 = 0.8 s: 0.2 s after the note
    // the tail is still well above the dry recording's silence, and it
    // decays between 0.1 s and 0.4 s after the note's end.
    let voice = steady_voice(TractSize::Man);
    let segments = [
        note(48.0, 0.6, Vowel::A),
        Segment::Rest {
            duration_seconds: 0.6,
        },
    ];
    let reverberant = SynthConfig {
        reverb: Some(Reverb {
            rt60_seconds: 0.8,
            direct_to_reverberant_db: 0.0,
        }),
        ..config(16_000)
    };
    let wet = synthesize(&voice, &segments, &reverberant).expect("renders");
    let dry = synthesize(&voice, &segments, &config(16_000)).expect("renders");
    let level = |samples: &[f32], from: f64| {
        let start = (from * 16_000.0) as usize;
        let power = samples[start..start + 800]
            .iter()
            .map(|x| f64::from(*x).powi(2))
            .sum::<f64>()
            / 800.0;
        10.0 * power.max(1e-30).log10()
    };
    let (early, late) = (
        level(&wet.samples, 0.9 + 0.1),
        level(&wet.samples, 0.9 + 0.4),
    );
    // 0.3 s apart: 60 · 0.3 / 0.8 = 22.5 dB expected decay (±6 dB for the
    // random tail).
    assert!(
        (early - late - 22.5).abs() < 6.0,
        "decay {:.1} dB",
        early - late
    );
    assert!(level(&dry.samples, 1.0) < early - 60.0);
}

#[test]
fn bad_settings_are_errors_naming_the_segment_or_setting() {
    let voice = Voice::new(TractSize::Man);
    let too_low = synthesize(&voice, &[note(20.0, 1.0, Vowel::A)], &config(16_000));
    assert!(matches!(
        too_low,
        Err(SynthError::BadSegment { index: 0, .. })
    ));
    let bad_break = Glide {
        from_midi: 48.0,
        to_midi: 60.0,
        duration_seconds: 2.0,
        vowel: Vowel::A,
        level_db: 0.0,
        register: Register::Modal,
        register_break: Some(RegisterBreak {
            at_midi: 59.0,
            jump_semitones: 3.0,
        }),
    };
    let result = synthesize(
        &voice,
        &[note(48.0, 1.0, Vowel::A), Segment::Glide(bad_break)],
        &config(16_000),
    );
    assert!(matches!(
        result,
        Err(SynthError::BadSegment { index: 1, .. })
    ));
    let result = synthesize(&voice, &[note(48.0, f64::NAN, Vowel::A)], &config(16_000));
    assert!(matches!(
        result,
        Err(SynthError::BadSegment { index: 0, .. })
    ));
    let result = synthesize(&voice, &[note(48.0, 1.0, Vowel::A)], &config(4_000));
    assert!(matches!(
        result,
        Err(SynthError::BadConfig {
            name: "sample_rate",
            ..
        })
    ));
    let result = synthesize(&voice, &[note(48.0, 1_000.0, Vowel::A)], &config(16_000));
    assert!(matches!(
        result,
        Err(SynthError::BadConfig {
            name: "total duration",
            ..
        })
    ));
}

#[test]
fn wav_and_truth_csv_files_round_trip() {
    // The CSV follows mir_eval's melody convention: time, f0 with 0 = unvoiced.
    let directory = tempfile::tempdir().expect("a temporary directory");
    let synthesis = synthesize(
        &Voice::new(TractSize::Woman),
        &[note(65.0, 0.5, Vowel::O)],
        &SynthConfig::default(),
    )
    .expect("renders");
    let wav = directory.path().join("note.wav");
    let csv = directory.path().join("note.csv");
    write_wav(&wav, &synthesis).expect("writes");
    write_truth_csv(&csv, &synthesis).expect("writes");
    let reader = hound::WavReader::open(&wav).expect("reads back");
    assert_eq!(reader.spec().sample_rate, 44_100);
    assert_eq!(reader.len() as usize, synthesis.samples.len());
    let text = std::fs::read_to_string(&csv).expect("reads back");
    let rows: Vec<&str> = text.lines().collect();
    assert_eq!(rows[0], "time_seconds,f0_hz");
    assert_eq!(rows.len(), synthesis.truth.len() + 1);
    assert_eq!(rows[1], "0.000000,0.000000");
    let missing = write_wav(&directory.path().join("no/such/dir.wav"), &synthesis);
    assert!(matches!(missing, Err(SynthError::Write { .. })));
}
