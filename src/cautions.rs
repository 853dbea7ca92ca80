//! The cautions shown wherever Ambit classifies a voice or suggests a
//! placement or a key. One wording, used by the CLI, the report and the app.
//!
//! Architecture invariant: the only place this text lives.

/// Ambit's results describe one day's singing.
pub const NOT_MEDICAL: &str =
    "Ambit's results describe singing on one day. They are not a medical or clinical assessment.";
/// Don't push singers to their extremes.
pub const NO_EXTREMES: &str =
    "Never push a singer to the extremes to \"find the top\". Stop at any strain.";
/// Changing voices need re-checking.
pub const CHANGING_VOICES: &str =
    "Adolescent and changing voices need re-checking every few months.";
/// Lasting hoarseness needs a doctor.
pub const SEE_A_DOCTOR: &str = "Hoarseness or breathiness lasting more than two weeks should be examined by a doctor. A speech-language pathologist or ENT specialist is the right person to ask about voice problems.";
/// Placements are suggestions.
pub const STARTING_POINT: &str = "Placement suggestions are a starting point for the director's judgement. They are not a verdict.";

/// Rehearsal plans: rest a tired voice.
pub const REST_WHEN_TIRED: &str =
    "Rest the voice when it is tired; no rehearsing through laryngitis.";

/// The cautions that go with every voice classification, placement or key
/// suggestion, in the order they are shown.
pub fn cautions() -> Vec<String> {
    [
        NOT_MEDICAL,
        NO_EXTREMES,
        CHANGING_VOICES,
        SEE_A_DOCTOR,
        STARTING_POINT,
    ]
    .iter()
    .map(|text| text.to_string())
    .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn every_caution_the_brief_requires_is_there() {
        let all = cautions().join(" ");
        for required in [
            "not a medical",
            "Stop at any strain",
            "re-checking",
            "more than two weeks",
            "speech-language pathologist",
            "ENT specialist",
        ] {
            assert!(all.contains(required), "missing: {required}");
        }
    }
}
