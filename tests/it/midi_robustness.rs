//! Damaged MIDI never panics: property tests cut and corrupt a valid file at
//! random places. Every outcome must be a piece with sane notes, or an error
//! that names the file. (The cargo-fuzz target `fuzz/fuzz_targets/midi.rs`
//! explores the same property without a seed corpus limit.)

use crate::smf_builder;

use std::path::Path;

use ambit::score::{ReadOptions, read_score_bytes};
use proptest::prelude::*;
use smf_builder::{Track, smf};

fn valid_file() -> Vec<u8> {
    let conductor = Track::new()
        .name(0, "Night Watch")
        .tempo(0, 600_000)
        .time_signature(0, 3, 2)
        .key_signature(0, 1, false)
        .tempo(1440, 450_000)
        .end(0);
    let mut voice = Track::new().name(0, "Alto").program(0, 0, 52);
    for key in [62u8, 64, 66, 67, 69, 67, 66, 64] {
        voice = voice
            .note_on(0, 0, key, 70)
            .note_on(0, 0, key - 5, 60)
            .note_off(480, 0, key)
            .note_on(0, 0, key - 5, 0);
    }
    smf(1, 480, &[conductor, voice.end(0)])
}

fn check(bytes: &[u8]) -> Result<(), TestCaseError> {
    let path = Path::new("damaged.mid");
    match read_score_bytes(path, bytes, &ReadOptions::default()) {
        Ok(piece) => {
            for part in &piece.parts {
                for pair in part.notes.windows(2) {
                    prop_assert!(pair[0].onset_quarters <= pair[1].onset_quarters);
                }
                for note in &part.notes {
                    prop_assert!(note.onset_seconds.is_finite() && note.onset_seconds >= 0.0);
                    prop_assert!(note.duration_seconds > 0.0 && note.duration_quarters > 0.0);
                    prop_assert!(note.measure_index < piece.measures.len().max(1));
                }
            }
        }
        Err(error) => prop_assert!(error.to_string().contains("damaged.mid"), "{error}"),
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(512))]

    #[test]
    fn a_cut_file_never_panics(cut in 0usize..400) {
        let bytes = valid_file();
        check(&bytes[..cut.min(bytes.len())])?;
    }

    #[test]
    fn corrupted_bytes_never_panic(changes in proptest::collection::vec((0usize..400, any::<u8>()), 1..8)) {
        let mut bytes = valid_file();
        let length = bytes.len();
        for (position, value) in changes {
            bytes[position % length] = value;
        }
        check(&bytes)?;
    }
}
