//! The bundled demo: an invented choir whose audition recordings are
//! synthesised on the fly from each singer's true voice, so a new user sees
//! the whole pipeline (auditions → profiles → fit → placement) without any
//! personal data.
//!
//! Architecture invariant: demo data only. Nothing here is used to analyse
//! real singers; tests may use it as ground truth but never as the only
//! proof.

pub mod choir;
pub mod run;
pub mod seed;

use std::path::Path;

use rayon::prelude::*;

use crate::pitch::{Tuning, hz_to_midi};
use crate::synth::Note as SungNote;
use crate::synth::{
    Glide, Register, RegisterBreak, Segment, Speech, SynthConfig, SynthError, Synthesis, TractSize,
    Vibrato, Voice, Vowel, synthesize, write_wav,
};
use crate::track::{TrackConfig, track_samples};
use crate::voice::types::VoiceType;
use crate::voice::{PROFILE_SAMPLE_RATE, Recording, Task};

pub use choir::{DEMO_CHOIR, DemoSinger};
pub use run::{DemoConfig, DemoError, DemoResult, MeasuredSinger, run_demo};

/// Scale steps of the "five-note scale" task: do re mi fa so fa mi re do.
const FIVE_NOTE_SCALE: [f64; 9] = [0.0, 2.0, 4.0, 5.0, 7.0, 5.0, 4.0, 2.0, 0.0];

fn voice_of(singer: &DemoSinger) -> Voice {
    let tract = if singer.voice_type.speaks_low() {
        TractSize::Man
    } else {
        TractSize::Woman
    };
    let mut voice = Voice::new(tract);
    voice.vibrato = Some(Vibrato {
        rate_hz: singer.vibrato_hz,
        extent_cents: singer.vibrato_cents,
        ..Vibrato::default()
    });
    voice
}

fn note(pitch_midi: f64, duration_seconds: f64, vowel: Vowel, register: Register) -> Segment {
    Segment::Note(SungNote {
        pitch_midi,
        duration_seconds,
        vowel,
        level_db: 0.0,
        register,
    })
}

fn rest(duration_seconds: f64) -> Segment {
    Segment::Rest { duration_seconds }
}

/// Where this singer's glide breaks: see [`task_segments`].
pub fn break_midi(singer: &DemoSinger) -> f64 {
    match singer.voice_type {
        VoiceType::Bass | VoiceType::Baritone | VoiceType::Tenor => singer.secondo_midi,
        _ => singer.primo_midi,
    }
}

/// The register a note is sung in: mechanism M1 (modal, chest) below the
/// singer's break, M2 (falsetto, head) above it.
fn register_at(singer: &DemoSinger, midi: f64) -> Register {
    if midi > break_midi(singer) + 1.0 {
        Register::Falsetto
    } else {
        Register::Modal
    }
}

/// The segments of one task for one singer, following docs/AUDITION.md.
pub fn task_segments(singer: &DemoSinger, task: Task) -> Vec<Segment> {
    match task {
        Task::Speech => vec![Segment::Speech(Speech {
            speaking_midi: hz_to_midi(singer.speaking_f0_hz).unwrap_or(48.0),
            duration_seconds: 4.0,
            syllables_per_second: 5.0,
            declination_semitones: 2.0,
            level_db: 0.0,
        })],
        Task::Glide => {
            // From a tone above the bottom to a tone under the top, and back.
            // A siren may go past the held top in the upper register; it
            // always goes far enough to cross the break.
            let low = singer.range_low_midi + 2.0;
            let high = (singer.range_high_midi - 1.0).max(break_midi(singer) + 4.0);
            let rate = 9.0; // semitones per second, an unhurried siren
            let seconds = (high - low) / rate;
            // The audible break of a siren: a man's modal-to-falsetto switch
            // near his secondo; a woman's (and a countertenor's) chest-to-head
            // switch near the primo (common practice).
            let passaggio = break_midi(singer);
            let jump = 2.5;
            // Going up the voice jumps from just under the passaggio; coming
            // down it holds the upper register a little past it, so the
            // upward jump's midpoint sits a semitone above the passaggio and
            // the downward one a semitone below (hysteresis).
            let up_break = singer.glide_breaks.then_some(RegisterBreak {
                at_midi: passaggio + 1.0 - jump / 2.0,
                jump_semitones: jump,
            });
            let down_break = singer.glide_breaks.then_some(RegisterBreak {
                at_midi: passaggio - 1.0 + jump / 2.0,
                jump_semitones: jump,
            });
            vec![
                Segment::Glide(Glide {
                    from_midi: low,
                    to_midi: high,
                    duration_seconds: seconds,
                    vowel: Vowel::U,
                    level_db: 0.0,
                    register: Register::Modal,
                    register_break: up_break,
                }),
                rest(0.4),
                Segment::Glide(Glide {
                    from_midi: high,
                    to_midi: low,
                    duration_seconds: seconds,
                    vowel: Vowel::U,
                    level_db: 0.0,
                    register: if singer.glide_breaks {
                        Register::Falsetto
                    } else {
                        Register::Modal
                    },
                    register_break: down_break,
                }),
            ]
        }
        Task::Scale => {
            // Five-note scales stepped up a whole tone at a time through the
            // comfort zone, then back down.
            let mut starts = Vec::new();
            let mut start = singer.comfort_low_midi;
            while start + 7.0 <= singer.comfort_high_midi + 0.01 {
                starts.push(start);
                start += 2.0;
            }
            if starts.last() != Some(&(singer.comfort_high_midi - 7.0)) {
                starts.push(singer.comfort_high_midi - 7.0);
            }
            let mut segments = Vec::new();
            for start in &starts {
                for step in FIVE_NOTE_SCALE {
                    let midi = start + step;
                    segments.push(note(midi, 0.45, Vowel::A, register_at(singer, midi)));
                }
                segments.push(rest(0.35));
            }
            segments
        }
        Task::Sustain => vec![
            note(singer.range_low_midi, 2.2, Vowel::A, Register::Modal),
            rest(0.6),
            note(
                singer.range_high_midi,
                2.2,
                Vowel::A,
                register_at(singer, singer.range_high_midi),
            ),
        ],
        Task::Song => {
            // An invented eight-note phrase in the middle of the comfort zone.
            let tonic = (singer.comfort_low_midi + singer.comfort_high_midi) / 2.0 - 4.0;
            let phrase = [
                (0.0, 0.5),
                (2.0, 0.5),
                (4.0, 1.0),
                (7.0, 0.5),
                (5.0, 0.5),
                (4.0, 0.5),
                (2.0, 0.5),
                (0.0, 1.2),
            ];
            phrase
                .iter()
                .map(|&(step, seconds)| {
                    let midi = tonic + step;
                    note(midi, seconds, Vowel::O, register_at(singer, midi))
                })
                .collect()
        }
    }
}

/// Renders one task of one singer at the profile's analysis rate.
pub fn synthesise_task(
    singer: &DemoSinger,
    task: Task,
    seed: u64,
) -> Result<Synthesis, SynthError> {
    let config = SynthConfig {
        sample_rate: PROFILE_SAMPLE_RATE,
        seed,
        tuning: Tuning::default(),
        ..SynthConfig::default()
    };
    synthesize(&voice_of(singer), &task_segments(singer, task), &config)
}

/// The synthesis seed of the `index`-th task of an audition seeded `seed`.
pub fn task_seed(seed: u64, index: usize) -> u64 {
    seed.wrapping_mul(31).wrapping_add(index as u64)
}

/// Synthesises and tracks a whole audition (all five tasks) for one singer.
pub fn audition(singer: &DemoSinger, seed: u64) -> Result<Vec<Recording>, String> {
    audition_to(singer, seed, None)
}

/// As [`audition`]; when `wav_dir` is given, each task's recording is also
/// written there as a 16-bit WAV file named after the task (`glide.wav`, …)
/// and the recording names that file.
pub fn audition_to(
    singer: &DemoSinger,
    seed: u64,
    wav_dir: Option<&Path>,
) -> Result<Vec<Recording>, String> {
    Task::ALL
        .iter()
        .enumerate()
        .map(|(index, &task)| {
            let failed = |error: &dyn std::fmt::Display| {
                format!("{} ({}): {error}", singer.name, task.label())
            };
            let synthesis = synthesise_task(singer, task, task_seed(seed, index))
                .map_err(|error| failed(&error))?;
            let file = match wav_dir {
                Some(dir) => {
                    let path = dir.join(format!("{}.wav", task.label()));
                    write_wav(&path, &synthesis).map_err(|error| failed(&error))?;
                    path.display().to_string()
                }
                None => format!("demo:{}/{}", singer.name, task.label()),
            };
            let track = track_samples(
                &synthesis.samples,
                synthesis.sample_rate,
                &TrackConfig::default(),
            )
            .map_err(|error| failed(&error))?;
            Ok(Recording {
                task,
                file,
                samples: synthesis.samples,
                sample_rate: synthesis.sample_rate,
                track,
                clipped_share: 0.0,
                noise_floor_db: -90.0,
                warnings: Vec::new(),
            })
        })
        .collect()
}

/// Every demo singer's audition, in parallel, in choir order.
pub fn choir_auditions() -> Vec<(&'static DemoSinger, Result<Vec<Recording>, String>)> {
    DEMO_CHOIR
        .par_iter()
        .enumerate()
        .map(|(index, singer)| (singer, audition(singer, seed::audition_seed(index))))
        .collect()
}
