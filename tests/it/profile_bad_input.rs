//! Bad audition input (issue 4, "Bad input").
//!
//! "A recording with no singing, or only noise or speech where singing was
//! asked: a clear message naming the task and file": `ambit profile` is run
//! on white noise given as the sustain task, and on every demo singer's
//! synthesised speech given as the song.
//!
//! "Clipped or very noisy recordings: a warning, and the confidence is
//! lowered": the profile warns, naming the problem and the file, and its
//! confidences drop.
//!
//! One demo tenor's audition is rendered by the singing synthesiser and
//! written three ways: clean; clipped hard (the samples ×8, so every loud
//! stretch hits full scale of the 16-bit file); and with white Gaussian noise
//! at 10 dB signal-to-noise ratio. The SNR is the textbook definition, the
//! ratio of mean signal power to mean noise power in decibels, taken over the
//! voiced samples as in the tracker evaluation (METHODS.md, Singing
//! synthesiser: Degradations). Each file goes through the same path as
//! `ambit profile`: decode, track, profile.

use crate::common;

use std::path::Path;

use ambit::demo::{DEMO_CHOIR, synthesise_task};
use ambit::synth::random::SplitMix64;
use ambit::synth::{Synthesis, write_wav};
use ambit::voice::{PassaggioSource, Profile, ProfileConfig, Task, load_recording, profile};

#[derive(Clone, Copy, Debug)]
enum Condition {
    Clean,
    Clipped,
    Noisy,
}

/// Adds white noise at `snr_db` over the voiced samples, then scales the
/// whole so its peak stays under full scale (no clipping from the noise).
fn add_noise(synthesis: &mut Synthesis, snr_db: f64, seed: u64) {
    let rate = f64::from(synthesis.sample_rate);
    let half_hop = synthesis.hop_seconds / 2.0;
    let mut voiced = vec![false; synthesis.samples.len()];
    for frame in synthesis.truth.iter().filter(|f| f.voiced) {
        let first = (((frame.time - half_hop) * rate).ceil().max(0.0) as usize).min(voiced.len());
        let last = (((frame.time + half_hop) * rate).ceil().max(0.0) as usize).min(voiced.len());
        voiced[first..last].iter_mut().for_each(|v| *v = true);
    }
    let mut random = SplitMix64::new(seed);
    let noise: Vec<f64> = (0..synthesis.samples.len())
        .map(|_| random.normal())
        .collect();
    let power = |values: &mut dyn Iterator<Item = f64>| {
        let (sum, count) = values.fold((0.0, 0usize), |(s, c), x| (s + x * x, c + 1));
        sum / count.max(1) as f64
    };
    let signal_power = power(
        &mut synthesis
            .samples
            .iter()
            .zip(&voiced)
            .filter(|(_, v)| **v)
            .map(|(x, _)| f64::from(*x)),
    );
    let noise_power = power(
        &mut noise
            .iter()
            .zip(&voiced)
            .filter(|(_, v)| **v)
            .map(|(x, _)| *x),
    );
    let scale = (signal_power / noise_power / 10f64.powf(snr_db / 10.0)).sqrt();
    let mixed: Vec<f64> = synthesis
        .samples
        .iter()
        .zip(&noise)
        .map(|(x, n)| f64::from(*x) + scale * n)
        .collect();
    let peak = mixed.iter().fold(0.0_f64, |m, x| m.max(x.abs()));
    let gain = if peak > 0.9 { 0.9 / peak } else { 1.0 };
    synthesis.samples = mixed.iter().map(|x| (x * gain) as f32).collect();
}

/// Renders the tenor's five tasks under `condition`, writes them as WAV and
/// profiles them as `ambit profile` would.
fn audition_profile(folder: &Path, condition: Condition) -> Profile {
    let singer = DEMO_CHOIR
        .iter()
        .find(|s| s.voice_type.label() == "tenor" && s.glide_breaks)
        .expect("a tenor whose glide breaks");
    let mut recordings = Vec::new();
    for (index, task) in Task::ALL.into_iter().enumerate() {
        let mut synthesis = synthesise_task(singer, task, 300 + index as u64).expect("renders");
        match condition {
            Condition::Clean => {}
            Condition::Clipped => {
                for sample in &mut synthesis.samples {
                    *sample = (*sample * 8.0).clamp(-1.0, 1.0);
                }
            }
            Condition::Noisy => add_noise(&mut synthesis, 10.0, 900 + index as u64),
        }
        let path = folder.join(format!("{condition:?}-{}.wav", task.label()));
        write_wav(&path, &synthesis).expect("writes");
        recordings.push(load_recording(task, &path).expect("decodes and tracks"));
    }
    profile(&recordings, &ProfileConfig::default()).expect("a profile")
}

fn measured_passaggio_confidences(profile: &Profile) -> Vec<f64> {
    profile
        .passaggi
        .iter()
        .filter(|p| p.source == PassaggioSource::Measured)
        .map(|p| p.confidence)
        .collect()
}

#[test]
fn clipping_and_noise_lower_the_confidence_and_are_named() {
    let folder = tempfile::tempdir().expect("a scratch folder");
    let clean = audition_profile(folder.path(), Condition::Clean);
    // The clean audition raises neither problem.
    assert!(
        !clean
            .warnings
            .iter()
            .any(|w| w.contains("clipped") || w.contains("noisy")),
        "{:#?}",
        clean.warnings
    );
    let clean_passaggi = measured_passaggio_confidences(&clean);
    assert!(!clean_passaggi.is_empty(), "{:#?}", clean.passaggi);

    for (condition, word) in [(Condition::Clipped, "clipped"), (Condition::Noisy, "noisy")] {
        let degraded = audition_profile(folder.path(), condition);
        eprintln!(
            "{condition:?}: type {} {:.2} (clean {:.2}), range {:.2} (clean {:.2}), comfort {:.2} (clean {:.2}), passaggi {:?} (clean {:?})",
            degraded.voice_type.label,
            degraded.voice_type.confidence,
            clean.voice_type.confidence,
            degraded.range_confidence,
            clean.range_confidence,
            degraded.comfort.confidence,
            clean.comfort.confidence,
            measured_passaggio_confidences(&degraded),
            clean_passaggi,
        );
        // A warning names the problem and each file it was found in.
        for task in Task::ALL {
            let file = format!("{condition:?}-{}.wav", task.label());
            assert!(
                degraded
                    .warnings
                    .iter()
                    .any(|w| w.contains(&file) && w.contains(word)),
                "{condition:?}: no warning saying {word} for {file}: {:#?}",
                degraded.warnings
            );
        }
        // The singing is still singing: no task is left out.
        assert!(
            degraded.missing_tasks.is_empty(),
            "{condition:?}: {:?} left out: {:#?}",
            degraded.missing_tasks,
            degraded.warnings
        );
        // Every reported confidence is lower than on the clean recording.
        assert!(
            degraded.voice_type.confidence < clean.voice_type.confidence,
            "{condition:?}: voice type {} vs clean {}",
            degraded.voice_type.confidence,
            clean.voice_type.confidence
        );
        assert!(degraded.range_confidence < clean.range_confidence);
        assert!(degraded.comfort.confidence < clean.comfort.confidence);
        let best_clean = clean_passaggi.iter().fold(0.0_f64, |m, c| m.max(*c));
        for confidence in degraded.passaggi.iter().map(|p| p.confidence) {
            assert!(
                confidence < best_clean,
                "{condition:?}: passaggio confidence {confidence} vs clean {best_clean}"
            );
        }
    }
}

/// Writes `seconds` of white Gaussian noise at about −20 dBFS RMS.
fn write_noise(path: &Path, seconds: f64) {
    let mut random = SplitMix64::new(7);
    let noise = Synthesis {
        samples: (0..(seconds * 22_050.0) as usize)
            .map(|_| (0.1 * random.normal()) as f32)
            .collect(),
        sample_rate: 22_050,
        hop_seconds: 0.01,
        truth: Vec::new(),
        segments: Vec::new(),
        notes: Vec::new(),
        register_breaks: Vec::new(),
        snr_db: None,
    };
    write_wav(path, &noise).expect("writes");
}

/// Runs `ambit profile … --json` and returns the profile's warnings.
fn profile_warnings(arguments: &[&str]) -> Vec<String> {
    let mut arguments = arguments.to_vec();
    arguments.push("--json");
    let (ok, stdout, stderr) = common::run_ambit(&arguments);
    assert!(ok, "{stderr}");
    let profile: serde_json::Value = serde_json::from_str(&stdout).expect("JSON");
    profile["warnings"]
        .as_array()
        .expect("warnings")
        .iter()
        .filter_map(|w| w.as_str().map(String::from))
        .collect()
}

#[test]
fn noise_or_speech_where_singing_was_asked_is_named_by_task_and_file() {
    let folder = tempfile::tempdir().expect("a scratch folder");
    let noise = folder.path().join("hiss.wav");
    write_noise(&noise, 3.0);
    let singer = DEMO_CHOIR
        .iter()
        .find(|s| s.voice_type.label() == "mezzo-soprano")
        .expect("a mezzo-soprano");
    let sustain = folder.path().join("held.wav");
    write_wav(
        &sustain,
        &synthesise_task(singer, Task::Sustain, 42).expect("renders"),
    )
    .expect("writes");
    let (noise, sustain) = (noise.display().to_string(), sustain.display().to_string());

    // Nothing but noise: no profile, and the error says which file of which
    // task held no voice.
    let (ok, _, stderr) = common::run_ambit(&["profile", "--sustain", &noise]);
    assert!(!ok, "a profile from noise: {stderr}");
    assert!(
        stderr.contains("hiss.wav (sustain): no voice found"),
        "{stderr}"
    );

    // Speech where a song was asked, for every demo voice: reported by file
    // and task, and left out.
    for (index, speaker) in DEMO_CHOIR.iter().enumerate() {
        let speech = folder.path().join(format!("reading-{index}.wav"));
        write_wav(
            &speech,
            &synthesise_task(speaker, Task::Speech, 60 + index as u64).expect("renders"),
        )
        .expect("writes");
        let speech = speech.display().to_string();
        let warnings = profile_warnings(&["profile", "--sustain", &sustain, "--song", &speech]);
        let file = format!("reading-{index}.wav (song)");
        assert!(
            warnings
                .iter()
                .any(|w| w.contains(&file) && w.contains("not singing")),
            "{}: speech taken for a song: {warnings:#?}",
            speaker.name
        );
    }

    // With a real sustain beside it, the profile is made and the noise
    // recording is reported with its task.
    let warnings = profile_warnings(&["profile", "--sustain", &sustain, "--sustain", &noise]);
    assert!(
        warnings
            .iter()
            .any(|w| w.contains("hiss.wav (sustain): no voice found")),
        "{warnings:#?}"
    );
}

/// "Contradictory tasks, such as a glide far above every sustained note:
/// reported, not hidden." The glide of a demo soprano is put together with a
/// demo bass's other tasks: the glide reaches about two octaves above any
/// held note, and the profile must say so rather than quietly use one or the
/// other.
#[test]
fn a_glide_far_above_every_held_note_is_reported() {
    use ambit::demo::audition;
    use ambit::voice::types::VoiceType;
    let pick = |voice_type: VoiceType| {
        DEMO_CHOIR
            .iter()
            .position(|singer| singer.voice_type == voice_type)
            .expect("the demo choir has every voice type")
    };
    let soprano = pick(VoiceType::Soprano);
    let bass = pick(VoiceType::Bass);
    let high = audition(&DEMO_CHOIR[soprano], 11).unwrap();
    let low = audition(&DEMO_CHOIR[bass], 12).unwrap();
    let mixed: Vec<_> = low
        .into_iter()
        .filter(|recording| recording.task != Task::Glide)
        .chain(
            high.into_iter()
                .filter(|recording| recording.task == Task::Glide),
        )
        .collect();
    let measured = profile(&mixed, &ProfileConfig::default()).unwrap();
    assert!(
        measured.warnings.iter().any(
            |warning| warning.contains("the glide reached") && warning.contains("no held note")
        ),
        "{:?}",
        measured.warnings
    );
    // The range stays the held notes' range (the bass's), not the glide's.
    assert!(
        measured.range.high_midi < DEMO_CHOIR[soprano].range_high_midi - 7.0,
        "{:?}",
        measured.range
    );
}
