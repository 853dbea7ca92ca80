//! The first-start library: the invented demo choir and the bundled sample
//! scores, so a new user sees real content at once.
//!
//! Until the engine's `ambit::demo::seed_library` lands, this seeds through
//! the library's own API: the demo choir as a typed-in roster (their true
//! ranges, comfort zones and passaggi, with the engine's suggested section)
//! and the four sample scores, embedded in the binary, as pieces.

use std::path::Path;

use ambit::demo::DEMO_CHOIR;
use ambit::library::Library;
use ambit::roster::{Roster, Singer};
use ambit::voice::types::rank_sections;

use crate::commands::pieces::import;

/// The sample scores, embedded so the app needs no files beside it.
pub const SAMPLE_SCORES: [(&str, &[u8]); 4] = [
    (
        "haul-away.musicxml",
        include_bytes!("../../sample-scores/haul-away.musicxml"),
    ),
    (
        "lanterns-on-the-quay.musicxml",
        include_bytes!("../../sample-scores/lanterns-on-the-quay.musicxml"),
    ),
    (
        "the-lamplighter.musicxml",
        include_bytes!("../../sample-scores/the-lamplighter.musicxml"),
    ),
    (
        "the-tide-clock.musicxml",
        include_bytes!("../../sample-scores/the-tide-clock.musicxml"),
    ),
];

/// The demo choir as a roster of typed-in ranges.
pub fn demo_roster() -> Roster {
    Roster {
        singers: DEMO_CHOIR
            .iter()
            .map(|singer| Singer {
                name: singer.name.to_string(),
                range_low_midi: singer.range_low_midi,
                range_high_midi: singer.range_high_midi,
                comfort_low_midi: singer.comfort_low_midi,
                comfort_high_midi: singer.comfort_high_midi,
                primo_midi: Some(singer.primo_midi),
                secondo_midi: Some(singer.secondo_midi),
                voice_type: Some(singer.voice_type.label().to_string()),
                section: rank_sections(singer.comfort_low_midi, singer.comfort_high_midi)
                    .first()
                    .map(|choice| choice.section.clone()),
                notes: Some(singer.notes.to_string()),
            })
            .collect(),
    }
}

/// Seeds an empty library with the demo choir and the sample scores.
pub fn seed_demo(library: &mut Library) -> Result<(), String> {
    library
        .import_roster(&demo_roster())
        .map_err(|error| error.to_string())?;
    let folder = tempfile_dir(library.folder())?;
    let result = (|| {
        for (name, bytes) in SAMPLE_SCORES {
            let path = folder.join(name);
            std::fs::write(&path, bytes).map_err(|error| format!("{}: {error}", path.display()))?;
            import(library, &path, None)?;
        }
        Ok(())
    })();
    let _ = std::fs::remove_dir_all(&folder);
    result
}

/// A scratch folder inside the library for the embedded files on their way in.
fn tempfile_dir(library_folder: &Path) -> Result<std::path::PathBuf, String> {
    let folder = library_folder.join(".seed");
    std::fs::create_dir_all(&folder).map_err(|error| format!("{}: {error}", folder.display()))?;
    Ok(folder)
}
