//! Voice types and choir sections: the pedagogy tables, and a transparent
//! likelihood over the seven voice types.
//!
//! The seven types (bass, baritone, tenor, countertenor, contralto,
//! mezzo-soprano, soprano) are common practice. Each type's typical figures
//! are Gaussian centres; each measured figure adds a log-likelihood term
//! −½·((measured − typical)/spread)²·weight, and a softmax turns the sums
//! into confidences. Every term is reported as a reason.

use serde::{Deserialize, Serialize};

use crate::pitch::{hz_to_midi, nearest_name};

/// The seven voice types, lowest first.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash, PartialOrd, Ord, Serialize, Deserialize)]
#[serde(rename_all = "kebab-case")]
pub enum VoiceType {
    Bass,
    Baritone,
    Tenor,
    Countertenor,
    Contralto,
    MezzoSoprano,
    Soprano,
}

impl VoiceType {
    pub const ALL: [VoiceType; 7] = [
        VoiceType::Bass,
        VoiceType::Baritone,
        VoiceType::Tenor,
        VoiceType::Countertenor,
        VoiceType::Contralto,
        VoiceType::MezzoSoprano,
        VoiceType::Soprano,
    ];

    pub fn label(self) -> &'static str {
        match self {
            VoiceType::Bass => "bass",
            VoiceType::Baritone => "baritone",
            VoiceType::Tenor => "tenor",
            VoiceType::Countertenor => "countertenor",
            VoiceType::Contralto => "contralto",
            VoiceType::MezzoSoprano => "mezzo-soprano",
            VoiceType::Soprano => "soprano",
        }
    }

    pub fn from_label(text: &str) -> Option<VoiceType> {
        let wanted = text.trim().to_ascii_lowercase().replace([' ', '_'], "-");
        VoiceType::ALL.into_iter().find(|kind| {
            kind.label() == wanted || (wanted == "mezzo" && *kind == VoiceType::MezzoSoprano)
        })
    }

    /// Whether the type's speaking voice is usually an adult man's.
    pub fn speaks_low(self) -> bool {
        matches!(
            self,
            VoiceType::Bass | VoiceType::Baritone | VoiceType::Tenor | VoiceType::Countertenor
        )
    }

    /// Typical figures for the type. See the table's sources in [`TYPICAL`].
    pub fn typical(self) -> &'static Typical {
        &TYPICAL[self as usize]
    }
}

/// Typical figures of a voice type, as MIDI numbers and hertz.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Typical {
    pub range_low_midi: f64,
    pub range_high_midi: f64,
    pub comfort_low_midi: f64,
    pub comfort_high_midi: f64,
    pub primo_midi: f64,
    pub secondo_midi: f64,
    pub speaking_f0_hz: f64,
    /// Whether the passaggio figures come from a named source.
    pub passaggi_source: &'static str,
}

/// The pedagogy table.
///
/// - Ranges and comfort zones: from memory (common choral and solo practice;
///   cf. the usual textbook tables of voice classification).
/// - Passaggi: Miller, *The Structure of Singing* (1986) for tenor (D4/G4),
///   baritone (B3/E4) and bass-baritone (A3/D4, used here between baritone
///   and bass); bass, countertenor and the female values are from memory.
/// - Speaking f0: within Baken (2000)'s adult norms (men ≈ 85–155 Hz, women
///   ≈ 165–255 Hz); the per-type centres are from memory.
pub const TYPICAL: [Typical; 7] = [
    // bass: E2–E4, comfort A2–C4, passaggi G3/C4 (from memory), speaks ≈ 100 Hz
    Typical {
        range_low_midi: 40.0,
        range_high_midi: 64.0,
        comfort_low_midi: 45.0,
        comfort_high_midi: 60.0,
        primo_midi: 55.0,
        secondo_midi: 60.0,
        speaking_f0_hz: 100.0,
        passaggi_source: "from memory",
    },
    // baritone: A2–G4, comfort C3–D4, passaggi B3/E4 (Miller), speaks ≈ 112 Hz
    Typical {
        range_low_midi: 45.0,
        range_high_midi: 67.0,
        comfort_low_midi: 48.0,
        comfort_high_midi: 62.0,
        primo_midi: 59.0,
        secondo_midi: 64.0,
        speaking_f0_hz: 112.0,
        passaggi_source: "Miller",
    },
    // tenor: C3–C5, comfort E3–G4, passaggi D4/G4 (Miller), speaks ≈ 128 Hz
    Typical {
        range_low_midi: 48.0,
        range_high_midi: 72.0,
        comfort_low_midi: 52.0,
        comfort_high_midi: 67.0,
        primo_midi: 62.0,
        secondo_midi: 67.0,
        speaking_f0_hz: 128.0,
        passaggi_source: "Miller",
    },
    // countertenor: G3–E5 in falsetto, comfort C4–C5, passaggi E4/A4 (from memory), speaks ≈ 120 Hz
    Typical {
        range_low_midi: 55.0,
        range_high_midi: 76.0,
        comfort_low_midi: 60.0,
        comfort_high_midi: 72.0,
        primo_midi: 64.0,
        secondo_midi: 69.0,
        speaking_f0_hz: 120.0,
        passaggi_source: "from memory",
    },
    // contralto: F3–F5, comfort A3–C5, passaggi D4/D5 (from memory), speaks ≈ 180 Hz
    Typical {
        range_low_midi: 53.0,
        range_high_midi: 77.0,
        comfort_low_midi: 57.0,
        comfort_high_midi: 72.0,
        primo_midi: 62.0,
        secondo_midi: 74.0,
        speaking_f0_hz: 180.0,
        passaggi_source: "from memory",
    },
    // mezzo-soprano: A3–A5, comfort C4–F5, passaggi E4/E5 (from memory), speaks ≈ 200 Hz
    Typical {
        range_low_midi: 57.0,
        range_high_midi: 81.0,
        comfort_low_midi: 60.0,
        comfort_high_midi: 77.0,
        primo_midi: 64.0,
        secondo_midi: 76.0,
        speaking_f0_hz: 200.0,
        passaggi_source: "from memory",
    },
    // soprano: C4–C6, comfort E4–A5, passaggi F4/F#5 (from memory), speaks ≈ 220 Hz
    Typical {
        range_low_midi: 60.0,
        range_high_midi: 84.0,
        comfort_low_midi: 64.0,
        comfort_high_midi: 81.0,
        primo_midi: 65.0,
        secondo_midi: 78.0,
        speaking_f0_hz: 220.0,
        passaggi_source: "from memory",
    },
];

/// What the classifier is given. Absent figures add no evidence.
#[derive(Debug, Clone, Copy, Default, PartialEq, Serialize, Deserialize)]
pub struct Evidence {
    pub range_low_midi: Option<f64>,
    pub range_high_midi: Option<f64>,
    pub comfort_low_midi: Option<f64>,
    pub comfort_high_midi: Option<f64>,
    pub primo_midi: Option<f64>,
    pub secondo_midi: Option<f64>,
    pub speaking_f0_hz: Option<f64>,
    pub centroid_hz: Option<f64>,
}

/// One voice type's share of the belief.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Candidate {
    pub voice_type: VoiceType,
    pub confidence: f64,
}

/// The classifier's answer.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Classification {
    /// All seven types, most likely first; confidences sum to 1.
    pub ranked: Vec<Candidate>,
    pub reasons: Vec<String>,
}

/// Spread (semitones) and weight of each term. Ranges and comfort zones are
/// the strong evidence; speaking f0 is a weak prior (Baken 2000 shows wide
/// overlap within each sex); timbre is weaker still.
const RANGE_SPREAD: f64 = 2.5;
const COMFORT_SPREAD: f64 = 2.5;
const PASSAGGIO_SPREAD: f64 = 2.0;
const SPEAKING_SPREAD: f64 = 3.0;
const SPEAKING_WEIGHT: f64 = 0.6;
const PASSAGGIO_WEIGHT: f64 = 0.7;

fn term(measured: f64, typical: f64, spread: f64) -> f64 {
    -0.5 * ((measured - typical) / spread).powi(2)
}

/// Log-likelihood of every type given the evidence.
fn log_likelihoods(evidence: &Evidence) -> [f64; 7] {
    let mut scores = [0.0; 7];
    for (score, kind) in scores.iter_mut().zip(VoiceType::ALL) {
        let typical = kind.typical();
        let pairs = [
            (
                evidence.range_low_midi,
                typical.range_low_midi,
                RANGE_SPREAD,
                1.0,
            ),
            (
                evidence.range_high_midi,
                typical.range_high_midi,
                RANGE_SPREAD,
                1.0,
            ),
            (
                evidence.comfort_low_midi,
                typical.comfort_low_midi,
                COMFORT_SPREAD,
                1.0,
            ),
            (
                evidence.comfort_high_midi,
                typical.comfort_high_midi,
                COMFORT_SPREAD,
                1.0,
            ),
            (
                evidence.primo_midi,
                typical.primo_midi,
                PASSAGGIO_SPREAD,
                PASSAGGIO_WEIGHT,
            ),
            (
                evidence.secondo_midi,
                typical.secondo_midi,
                PASSAGGIO_SPREAD,
                PASSAGGIO_WEIGHT,
            ),
            (
                evidence.speaking_f0_hz.and_then(hz_to_midi),
                hz_to_midi(typical.speaking_f0_hz).unwrap_or(0.0),
                SPEAKING_SPREAD,
                SPEAKING_WEIGHT,
            ),
        ];
        *score = pairs
            .iter()
            .filter_map(|&(measured, centre, spread, weight)| {
                measured.map(|value| weight * term(value, centre, spread))
            })
            .sum();
    }
    scores
}

/// The types whose typical value is within `tolerance` semitones of `measured`,
/// as "tenor or baritone".
fn typical_of(measured: f64, pick: fn(&Typical) -> f64, tolerance: f64) -> Option<String> {
    let mut near: Vec<(f64, VoiceType)> = VoiceType::ALL
        .into_iter()
        .map(|kind| ((pick(kind.typical()) - measured).abs(), kind))
        .filter(|(distance, _)| *distance <= tolerance)
        .collect();
    near.sort_by(|a, b| a.0.total_cmp(&b.0));
    let names: Vec<&str> = near.iter().take(2).map(|(_, kind)| kind.label()).collect();
    (!names.is_empty()).then(|| names.join(" or "))
}

/// Classifies a voice from the evidence, with reasons.
pub fn classify(evidence: &Evidence) -> Classification {
    let scores = log_likelihoods(evidence);
    let best = scores.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let weights: Vec<f64> = scores.iter().map(|s| (s - best).exp()).collect();
    let total: f64 = weights.iter().sum();
    let mut ranked: Vec<Candidate> = VoiceType::ALL
        .into_iter()
        .zip(weights)
        .map(|(voice_type, weight)| Candidate {
            voice_type,
            confidence: weight / total,
        })
        .collect();
    ranked.sort_by(|a, b| b.confidence.total_cmp(&a.confidence));

    let mut reasons = Vec::new();
    let mut describe = |what: &str, value: Option<f64>, pick: fn(&Typical) -> f64| {
        if let Some(midi) = value {
            let near = typical_of(midi, pick, 2.0)
                .map(|types| format!("typical of {types}"))
                .unwrap_or_else(|| "not typical of any one type".into());
            reasons.push(format!("{what} {}, {near}", nearest_name(midi)));
        }
    };
    describe("lowest sustained pitch", evidence.range_low_midi, |t| {
        t.range_low_midi
    });
    describe("highest sustained pitch", evidence.range_high_midi, |t| {
        t.range_high_midi
    });
    describe("comfort zone starts at", evidence.comfort_low_midi, |t| {
        t.comfort_low_midi
    });
    describe(
        "comfort zone tops out at",
        evidence.comfort_high_midi,
        |t| t.comfort_high_midi,
    );
    describe("primo passaggio at", evidence.primo_midi, |t| t.primo_midi);
    describe("secondo passaggio at", evidence.secondo_midi, |t| {
        t.secondo_midi
    });
    if let Some(hz) = evidence.speaking_f0_hz {
        // Baken (2000): adult men speak at about 85–155 Hz, women 165–255 Hz.
        let band = if hz < 160.0 {
            "within the usual range of adult men's speech (85–155 Hz, Baken 2000)"
        } else {
            "within the usual range of adult women's speech (165–255 Hz, Baken 2000)"
        };
        reasons.push(format!("speaking f0 {hz:.0} Hz, {band}; a weak cue"));
    }
    Classification { ranked, reasons }
}

/// Typical tessitura (where a part sits most of the time) of each choir
/// section, MIDI low and high. From memory (common choral practice).
pub const SECTION_TESSITURA: [(&str, f64, f64); 8] = [
    ("S1", 67.0, 79.0), // G4–G5
    ("S2", 62.0, 74.0), // D4–D5
    ("A1", 59.0, 71.0), // B3–B4
    ("A2", 55.0, 67.0), // G3–G4
    ("T1", 54.0, 67.0), // F#3–G4
    ("T2", 50.0, 62.0), // D3–D4
    ("B1", 45.0, 60.0), // A2–C4
    ("B2", 41.0, 57.0), // F2–A3
];

/// A section and how well its typical tessitura sits in a comfort zone.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SectionChoice {
    pub section: String,
    /// Share (0–1) of the section's typical tessitura inside the comfort zone,
    /// less a penalty for the distance between the two centres.
    pub score: f64,
}

/// Ranks the eight sections for a comfort zone: the share of the section's
/// typical tessitura that lies inside the zone, with the distance between
/// the centres (in octaves) as a tie-breaker.
pub fn rank_sections(comfort_low_midi: f64, comfort_high_midi: f64) -> Vec<SectionChoice> {
    let centre = (comfort_low_midi + comfort_high_midi) / 2.0;
    let mut ranked: Vec<SectionChoice> = SECTION_TESSITURA
        .iter()
        .map(|&(section, low, high)| {
            let inside = (high.min(comfort_high_midi) - low.max(comfort_low_midi)).max(0.0);
            let share = inside / (high - low);
            let distance = ((low + high) / 2.0 - centre).abs() / 12.0;
            SectionChoice {
                section: section.to_string(),
                score: share - 0.5 * distance,
            }
        })
        .collect();
    ranked.sort_by(|a, b| b.score.total_cmp(&a.score));
    ranked
}

#[cfg(test)]
mod tests {
    use super::*;

    fn evidence_of(kind: VoiceType) -> Evidence {
        let t = kind.typical();
        Evidence {
            range_low_midi: Some(t.range_low_midi),
            range_high_midi: Some(t.range_high_midi),
            comfort_low_midi: Some(t.comfort_low_midi),
            comfort_high_midi: Some(t.comfort_high_midi),
            primo_midi: None,
            secondo_midi: None,
            speaking_f0_hz: Some(t.speaking_f0_hz),
            centroid_hz: None,
        }
    }

    #[test]
    fn the_table_carries_millers_passaggi() {
        // Miller, The Structure of Singing: lyric tenor D4/G4, lyric baritone B3/E4.
        let tenor = VoiceType::Tenor.typical();
        assert_eq!((tenor.primo_midi, tenor.secondo_midi), (62.0, 67.0));
        let baritone = VoiceType::Baritone.typical();
        assert_eq!((baritone.primo_midi, baritone.secondo_midi), (59.0, 64.0));
        // Bass-baritone A3/D4 lies between baritone and bass in the table.
        let bass = VoiceType::Bass.typical();
        assert!(bass.primo_midi <= 57.0 && 57.0 <= baritone.primo_midi);
        assert!(bass.secondo_midi <= 62.0 && 62.0 <= baritone.secondo_midi);
    }

    #[test]
    fn speaking_norms_follow_baken() {
        // Baken (2000): men ≈ 85–155 Hz, women ≈ 165–255 Hz.
        for kind in VoiceType::ALL {
            let hz = kind.typical().speaking_f0_hz;
            if kind.speaks_low() {
                assert!((85.0..=155.0).contains(&hz), "{kind:?}");
            } else {
                assert!((165.0..=255.0).contains(&hz), "{kind:?}");
            }
        }
    }

    #[test]
    fn each_textbook_voice_is_classified_as_itself() {
        for kind in VoiceType::ALL {
            let result = classify(&evidence_of(kind));
            assert_eq!(result.ranked[0].voice_type, kind, "{result:?}");
            let total: f64 = result.ranked.iter().map(|c| c.confidence).sum();
            assert!((total - 1.0).abs() < 1e-9);
        }
    }

    #[test]
    fn speech_separates_a_countertenor_from_a_contralto() {
        // Similar sung ranges; a man's speaking voice tips it (Baken 2000).
        let mut evidence = evidence_of(VoiceType::Countertenor);
        evidence.speaking_f0_hz = Some(115.0);
        assert_eq!(
            classify(&evidence).ranked[0].voice_type,
            VoiceType::Countertenor
        );
        evidence.speaking_f0_hz = Some(190.0);
        assert_ne!(
            classify(&evidence).ranked[0].voice_type,
            VoiceType::Countertenor
        );
    }

    #[test]
    fn reasons_name_the_pitches() {
        let mut evidence = evidence_of(VoiceType::Tenor);
        evidence.secondo_midi = Some(65.0);
        let result = classify(&evidence);
        assert!(
            result
                .reasons
                .iter()
                .any(|r| r.starts_with("secondo passaggio at F4, typical of")),
            "{:?}",
            result.reasons
        );
    }

    #[test]
    fn sections_follow_the_comfort_zone() {
        // common practice: a comfortable G4–G5 soprano sits in S1, a
        // comfortable A2–C4 bass-baritone in B1.
        assert_eq!(rank_sections(67.0, 79.0)[0].section, "S1");
        assert_eq!(rank_sections(45.0, 60.0)[0].section, "B1");
        assert_eq!(rank_sections(52.0, 67.0)[0].section, "T1");
    }
}
