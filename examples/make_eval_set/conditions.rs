//! The tracker evaluation grid: voice types × conditions, each a short
//! synthetic recording with exact ground truth. Shared by
//! `examples/make_eval_set` and `tests/it/track_accuracy.rs`, so CI runs a
//! subset of exactly what `docs/PERFORMANCE.md` reports.
#![allow(dead_code)]

use ambit::synth::{
    Glide, Noise, NoiseColour, Note, Register, RegisterBreak, Reverb, Segment, Speech, SynthConfig,
    TractSize, Vibrato, Voice, Vowel,
};

/// A voice type's singing range and passaggio for the test material.
/// Ranges are common practice (choral voice-type tables, from memory),
/// stretched to the brief's 55 Hz (A1) floor for the bass and 1400 Hz (F6)
/// top for the soprano. Break pitches: Miller, *The Structure of Singing*
/// (primo passaggio: bass A3, baritone B3, tenor D4); the female
/// chest-to-head transitions are from memory.
#[derive(Debug, Clone, Copy)]
pub struct VoiceType {
    pub name: &'static str,
    pub tract: TractSize,
    pub low_midi: f64,
    pub high_midi: f64,
    pub break_midi: f64,
    /// Speaking pitch (Baken 2000: men about 85–155 Hz, women 165–255 Hz).
    pub speaking_midi: f64,
    pub singers_formant: Option<(f64, f64)>,
}

pub const VOICE_TYPES: [VoiceType; 5] = [
    VoiceType {
        name: "bass",
        tract: TractSize::Man,
        low_midi: 33.0,
        high_midi: 62.0,
        break_midi: 57.0,
        speaking_midi: 43.0,
        singers_formant: Some((2_700.0, 0.7)),
    },
    VoiceType {
        name: "baritone",
        tract: TractSize::Man,
        low_midi: 43.0,
        high_midi: 66.0,
        break_midi: 59.0,
        speaking_midi: 45.0,
        singers_formant: Some((2_800.0, 0.7)),
    },
    VoiceType {
        name: "tenor",
        tract: TractSize::Man,
        low_midi: 48.0,
        high_midi: 72.0,
        break_midi: 62.0,
        speaking_midi: 48.0,
        singers_formant: Some((2_900.0, 0.7)),
    },
    VoiceType {
        name: "alto",
        tract: TractSize::Woman,
        low_midi: 53.0,
        high_midi: 77.0,
        break_midi: 63.0,
        speaking_midi: 55.0,
        singers_formant: None,
    },
    VoiceType {
        name: "soprano",
        tract: TractSize::Woman,
        low_midi: 60.0,
        high_midi: 89.0,
        break_midi: 65.0,
        speaking_midi: 57.0,
        singers_formant: Some((3_200.0, 0.4)),
    },
];

/// One recording condition.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Condition {
    /// Notes across the range with vibrato (5.8 Hz, ±50 cents), 44.1 kHz.
    Vibrato,
    /// The same notes held steady (no vibrato).
    NoVibrato,
    /// Deep scoops (−150 cents) and slow portamento (0.2 s).
    ScoopsPortamento,
    /// Up and down sirens with a register break each way.
    GlideBreak,
    /// Speech-like syllables with declination.
    Speech,
    /// The vibrato phrase with white noise at 40, 20 or 10 dB SNR.
    Snr40,
    Snr20,
    Snr10,
    /// The vibrato phrase in a room (RT60 0.7 s, direct-to-reverberant 3 dB).
    Reverb,
    /// The vibrato phrase at other sample rates.
    Rate16k,
    Rate22k,
    Rate48k,
}

impl Condition {
    pub const ALL: [Condition; 12] = [
        Condition::Vibrato,
        Condition::NoVibrato,
        Condition::ScoopsPortamento,
        Condition::GlideBreak,
        Condition::Speech,
        Condition::Snr40,
        Condition::Snr20,
        Condition::Snr10,
        Condition::Reverb,
        Condition::Rate16k,
        Condition::Rate22k,
        Condition::Rate48k,
    ];

    pub fn label(self) -> &'static str {
        match self {
            Condition::Vibrato => "vibrato",
            Condition::NoVibrato => "no-vibrato",
            Condition::ScoopsPortamento => "scoops-portamento",
            Condition::GlideBreak => "glide-register-break",
            Condition::Speech => "speech",
            Condition::Snr40 => "snr-40db",
            Condition::Snr20 => "snr-20db",
            Condition::Snr10 => "snr-10db",
            Condition::Reverb => "reverb-rt60-0.7s",
            Condition::Rate16k => "rate-16k",
            Condition::Rate22k => "rate-22.05k",
            Condition::Rate48k => "rate-48k",
        }
    }

    /// Clean (no noise, no reverb) sung material, where the issue's
    /// ≥ 98 % raw pitch accuracy target applies.
    pub fn is_clean_singing(self) -> bool {
        matches!(
            self,
            Condition::Vibrato
                | Condition::NoVibrato
                | Condition::ScoopsPortamento
                | Condition::GlideBreak
                | Condition::Rate16k
                | Condition::Rate22k
                | Condition::Rate48k
        )
    }
}

/// A recording to render.
pub struct Case {
    pub name: String,
    pub condition: Condition,
    pub voice_type: VoiceType,
    pub voice: Voice,
    pub segments: Vec<Segment>,
    pub config: SynthConfig,
}

/// Notes spread evenly over the range, up then down, in legato groups of
/// four separated by short rests; vowels rotate.
fn range_phrase(voice_type: &VoiceType, note_seconds: f64, count: usize) -> Vec<Segment> {
    let mut segments = Vec::new();
    let span = voice_type.high_midi - voice_type.low_midi;
    let up: Vec<f64> = (0..count)
        .map(|i| (voice_type.low_midi + span * i as f64 / (count - 1) as f64).round())
        .collect();
    let pitches: Vec<f64> = up
        .iter()
        .chain(up.iter().rev().skip(1).step_by(2))
        .copied()
        .collect();
    for (index, pitch_midi) in pitches.iter().enumerate() {
        if index > 0 && index % 4 == 0 {
            segments.push(Segment::Rest {
                duration_seconds: 0.25,
            });
        }
        segments.push(Segment::Note(Note {
            pitch_midi: *pitch_midi,
            duration_seconds: note_seconds,
            vowel: Vowel::ALL[index % 5],
            level_db: -3.0 * (index % 3) as f64,
            register: if voice_type.tract == TractSize::Man
                && *pitch_midi > voice_type.break_midi + 5.0
            {
                Register::Falsetto
            } else {
                Register::Modal
            },
        }));
    }
    segments
}

fn sirens(voice_type: &VoiceType, glide_seconds: f64) -> Vec<Segment> {
    let low = voice_type.low_midi + 1.0;
    let high = voice_type.high_midi - 1.0;
    let up = Glide {
        from_midi: low,
        to_midi: high,
        duration_seconds: glide_seconds,
        vowel: Vowel::U,
        level_db: 0.0,
        register: Register::Modal,
        register_break: Some(RegisterBreak {
            at_midi: voice_type.break_midi,
            jump_semitones: 3.0,
        }),
    };
    // Hysteresis: the downward break sits lower than the upward one
    // (Roubeau et al. 2009; brief §4).
    let down = Glide {
        from_midi: high,
        to_midi: low,
        duration_seconds: glide_seconds,
        vowel: Vowel::A,
        level_db: 0.0,
        register: Register::Falsetto,
        register_break: Some(RegisterBreak {
            at_midi: voice_type.break_midi + 1.0,
            jump_semitones: 3.0,
        }),
    };
    vec![
        Segment::Glide(up),
        Segment::Rest {
            duration_seconds: 0.3,
        },
        Segment::Glide(down),
    ]
}

/// The grid. `small` keeps a CI-sized subset with shorter clips.
pub fn cases(small: bool) -> Vec<Case> {
    let (note_seconds, note_count, glide_seconds, speech_seconds) = if small {
        (0.45, 5, 1.6, 2.0)
    } else {
        (0.6, 8, 3.0, 4.0)
    };
    let voice_types: Vec<VoiceType> = if small {
        VOICE_TYPES
            .iter()
            .copied()
            .filter(|v| matches!(v.name, "bass" | "tenor" | "soprano"))
            .collect()
    } else {
        VOICE_TYPES.to_vec()
    };
    let conditions: &[Condition] = if small {
        &[
            Condition::Vibrato,
            Condition::GlideBreak,
            Condition::Snr20,
            Condition::Rate16k,
        ]
    } else {
        &Condition::ALL
    };
    let mut result = Vec::new();
    for (voice_index, voice_type) in voice_types.iter().enumerate() {
        for (condition_index, &condition) in conditions.iter().enumerate() {
            let mut voice = Voice {
                singers_formant: voice_type.singers_formant,
                vibrato: Some(Vibrato::default()),
                ..Voice::new(voice_type.tract)
            };
            let mut config = SynthConfig {
                seed: 1_000 + (voice_index * 100 + condition_index) as u64,
                ..SynthConfig::default()
            };
            let mut segments = range_phrase(voice_type, note_seconds, note_count);
            match condition {
                Condition::Vibrato => {}
                Condition::NoVibrato => voice.vibrato = None,
                Condition::ScoopsPortamento => {
                    voice.scoop = Some(ambit::synth::Scoop {
                        depth_cents: 150.0,
                        seconds: 0.12,
                    });
                    voice.portamento_seconds = 0.2;
                }
                Condition::GlideBreak => segments = sirens(voice_type, glide_seconds),
                Condition::Speech => {
                    segments = vec![Segment::Speech(Speech {
                        speaking_midi: voice_type.speaking_midi,
                        duration_seconds: speech_seconds,
                        syllables_per_second: 4.5,
                        declination_semitones: 4.0,
                        level_db: 0.0,
                    })]
                }
                Condition::Snr40 | Condition::Snr20 | Condition::Snr10 => {
                    let snr_db = match condition {
                        Condition::Snr40 => 40.0,
                        Condition::Snr20 => 20.0,
                        _ => 10.0,
                    };
                    config.noise = Some(Noise {
                        snr_db,
                        colour: NoiseColour::White,
                    });
                }
                Condition::Reverb => {
                    config.reverb = Some(Reverb {
                        rt60_seconds: 0.7,
                        direct_to_reverberant_db: 3.0,
                    })
                }
                Condition::Rate16k => config.sample_rate = 16_000,
                Condition::Rate22k => config.sample_rate = 22_050,
                Condition::Rate48k => config.sample_rate = 48_000,
            }
            result.push(Case {
                name: format!("{}-{}", voice_type.name, condition.label()),
                condition,
                voice_type: *voice_type,
                voice,
                segments,
                config,
            });
        }
    }
    result
}
