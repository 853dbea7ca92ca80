//! Shared helpers for the library tests: a measured profile built by hand
//! (the store keeps whatever the engine measured; these tests are about
//! storage, not measurement) and small recording files.

#![allow(dead_code)]

use std::path::{Path, PathBuf};

use ambit::library::{AuditionInput, RecordingInput};
use ambit::voice::{Comfort, PitchSpan, Profile, Task, VoiceTypeResult};

/// A profile with the given held range and comfort zone (MIDI numbers).
pub fn profile(range: (f64, f64), comfort: (f64, f64)) -> Profile {
    Profile {
        range: PitchSpan::new(range.0, range.1),
        range_confidence: 0.9,
        comfort: Comfort {
            span: PitchSpan::new(comfort.0, comfort.1),
            confidence: 0.8,
            basis: "steady notes in the scale task".into(),
        },
        reached: None,
        passaggi: Vec::new(),
        registers: Vec::new(),
        speaking_f0_hz: Some(120.0),
        timbre: None,
        voice_type: VoiceTypeResult {
            label: "baritone".into(),
            confidence: 0.6,
            alternatives: Vec::new(),
        },
        section: "B1".into(),
        section_runner_up: "T2".into(),
        reasons: vec!["held range".into()],
        cautions: ambit::cautions::cautions(),
        missing_tasks: Vec::new(),
        warnings: Vec::new(),
    }
}

/// Writes a small "recording" (the store treats it as opaque bytes).
pub fn recording(dir: &Path, name: &str, content: &[u8]) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, content).unwrap();
    path
}

/// An audition of `singer` with one glide recording.
pub fn audition(singer: &str, held_on: &str, file: PathBuf, profile: Profile) -> AuditionInput {
    AuditionInput {
        singer: singer.into(),
        held_on: held_on.into(),
        recordings: vec![RecordingInput {
            task: Task::Glide,
            path: file,
        }],
        profile,
    }
}

/// Files in a library's recordings folder.
pub fn recording_files(library_folder: &Path) -> Vec<String> {
    file_names(&library_folder.join("recordings"))
}

/// The names in a folder, sorted (none when it does not exist).
pub fn file_names(folder: &Path) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(folder)
        .map(|entries| {
            entries
                .flatten()
                .map(|entry| entry.file_name().to_string_lossy().into_owned())
                .collect()
        })
        .unwrap_or_default();
    names.sort();
    names
}
