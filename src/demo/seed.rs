//! The demo library: the demo choir's synthesised auditions written as WAV
//! files, profiled, and stored with the sample scores as one programme, so
//! the desktop app and the CLI can open a library with real content at once.
//!
//! Architecture invariant: everything goes through the library's public API
//! (`add_audition`, `add_piece`): a seeded library is an ordinary library,
//! and seeding that fails part way leaves only whole auditions and pieces.

use std::path::{Path, PathBuf};

use rayon::prelude::*;

use super::{DEMO_CHOIR, DemoSinger, synthesise_task, task_seed};
use crate::library::{AuditionInput, Library, LibraryError, RecordingInput};
use crate::roster::{Roster, Singer};
use crate::synth::write_wav;
use crate::usecases::audition::measure_audition;
use crate::usecases::pieces::{ImportOptions, MappingChoice, import_piece};
use crate::usecases::{Cancel, Quiet};
use crate::voice::{ProfileConfig, Task};

/// The programme the sample scores form in the demo library.
pub const DEMO_PROGRAMME: &str = "Harbour Lights";

/// The layout the demo choir sings in.
pub const DEMO_LAYOUT: &str = "SSAATTBB";

/// Progress steps [`seed_library`] reports: one per demo singer measured,
/// one per sample score analysed.
pub const SEED_STEPS: usize = DEMO_CHOIR.len() + SAMPLE_SCORES.len();

/// The date the demo auditions are stored under.
pub const DEMO_AUDITION_DATE: &str = "2026-09-05";

/// The four sample scores, embedded so the demo works from any folder:
/// (file name, bytes). They are this project's own compositions
/// (`sample-scores/README.md`).
pub const SAMPLE_SCORES: [(&str, &[u8]); 4] = [
    (
        "lanterns-on-the-quay.mxl",
        include_bytes!("../../sample-scores/lanterns-on-the-quay.mxl"),
    ),
    (
        "the-tide-clock.mxl",
        include_bytes!("../../sample-scores/the-tide-clock.mxl"),
    ),
    (
        "the-lamplighter.mxl",
        include_bytes!("../../sample-scores/the-lamplighter.mxl"),
    ),
    (
        "haul-away.mxl",
        include_bytes!("../../sample-scores/haul-away.mxl"),
    ),
];

/// A file-system-safe folder name for a singer: lower case ASCII letters and
/// digits, other characters as `-`.
pub fn singer_slug(name: &str) -> String {
    let mut slug = String::new();
    for character in name.chars() {
        if character.is_ascii_alphanumeric() {
            slug.push(character.to_ascii_lowercase());
        } else if !slug.ends_with('-') {
            slug.push('-');
        }
    }
    slug.trim_matches('-').to_string()
}

/// The seed the demo uses for the `index`-th singer of [`DEMO_CHOIR`], so
/// every front end synthesises the same recordings.
pub fn audition_seed(index: usize) -> u64 {
    1000 + index as u64
}

/// Synthesises one singer's five audition tasks and writes them as 16-bit
/// WAV files `<folder>/<task>.wav`. Returns the files with their tasks.
pub fn write_audition_files(
    singer: &DemoSinger,
    seed: u64,
    folder: &Path,
) -> Result<Vec<RecordingInput>, LibraryError> {
    let io_error = |source| LibraryError::Io {
        file: folder.to_path_buf(),
        source,
    };
    std::fs::create_dir_all(folder).map_err(io_error)?;
    Task::ALL
        .iter()
        .enumerate()
        .map(|(index, &task)| {
            let synthesis =
                synthesise_task(singer, task, task_seed(seed, index)).map_err(|error| {
                    LibraryError::Invalid {
                        file: folder.to_path_buf(),
                        message: format!("{} ({}): {error}", singer.name, task.label()),
                    }
                })?;
            let path = folder.join(format!("{}.wav", task.label()));
            write_wav(&path, &synthesis).map_err(|error| LibraryError::Invalid {
                file: path.clone(),
                message: error.to_string(),
            })?;
            Ok(RecordingInput { task, path })
        })
        .collect()
}

/// Writes the embedded sample scores into `folder`; returns their paths.
pub fn write_sample_scores(folder: &Path) -> Result<Vec<PathBuf>, LibraryError> {
    std::fs::create_dir_all(folder).map_err(|source| LibraryError::Io {
        file: folder.to_path_buf(),
        source,
    })?;
    SAMPLE_SCORES
        .iter()
        .map(|(name, bytes)| {
            let path = folder.join(name);
            std::fs::write(&path, bytes).map_err(|source| LibraryError::Io {
                file: path.clone(),
                source,
            })?;
            Ok(path)
        })
        .collect()
}

/// The demo choir as a typed-in roster: the figures a director would type
/// from earlier seasons, before any audition is measured.
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
                section: None,
                notes: (!singer.notes.is_empty()).then(|| singer.notes.to_string()),
            })
            .collect(),
    }
}

/// What seeding stored.
#[derive(Debug, Clone, PartialEq, serde::Serialize, serde::Deserialize)]
pub struct SeedReport {
    pub auditions: usize,
    pub pieces: usize,
    pub programme: String,
}

/// Fills `library` with the demo choir (each singer's synthesised audition,
/// profiled and stored with its recordings) and the sample scores as the
/// programme [`DEMO_PROGRAMME`], mapped to [`DEMO_LAYOUT`].
///
/// `staging` is a scratch folder for the generated files (it is removed
/// afterwards; the library keeps its own copies). `progress(done, total,
/// label)` is called after each stored item.
pub fn seed_library(
    library: &mut Library,
    staging: &Path,
    progress: &mut dyn FnMut(usize, usize, &str),
) -> Result<SeedReport, LibraryError> {
    let result = seed_into(library, staging, SEED_STEPS, progress);
    // The scratch copies are demo data, not personal data; a failure to
    // remove them does not undo the seeding.
    let _ = std::fs::remove_dir_all(staging);
    result
}

/// Makes a new library in `folder` holding the demo: seeded in a sibling
/// folder `<folder>.partial` and renamed into place only when complete, so an
/// interrupted run leaves no half-made library behind (the next run removes
/// the partial folder and begins again). `folder` must be missing or empty.
/// `progress` as for [`seed_library`].
pub fn create_demo_library(
    folder: &Path,
    progress: &mut dyn FnMut(usize, usize, &str),
) -> Result<Library, LibraryError> {
    let invalid = |message: &str| LibraryError::Invalid {
        file: folder.to_path_buf(),
        message: message.to_string(),
    };
    let io = |path: &Path| {
        let file = path.to_path_buf();
        move |source| LibraryError::Io { file, source }
    };
    let name = folder
        .file_name()
        .ok_or_else(|| invalid("not a folder name"))?;
    if let Ok(mut entries) = std::fs::read_dir(folder)
        && entries.next().is_some()
    {
        return Err(invalid(
            "the folder holds files but no library; choose an empty folder",
        ));
    }
    let mut partial_name = name.to_os_string();
    partial_name.push(".partial");
    let partial = folder.with_file_name(partial_name);
    if partial.exists() {
        std::fs::remove_dir_all(&partial).map_err(io(&partial))?;
    }
    let mut library = Library::create(&partial)?;
    let staging = partial.join("demo-staging");
    if let Err(error) = seed_library(&mut library, &staging, progress) {
        drop(library);
        let _ = std::fs::remove_dir_all(&partial);
        return Err(error);
    }
    // Close the database (its WAL is checkpointed) before the folder moves.
    drop(library);
    if folder.exists() {
        // Empty (checked above): rename cannot replace it on every platform.
        std::fs::remove_dir(folder).map_err(io(folder))?;
    }
    std::fs::rename(&partial, folder).map_err(io(folder))?;
    Library::open(folder)
}

fn seed_into(
    library: &mut Library,
    staging: &Path,
    total: usize,
    progress: &mut dyn FnMut(usize, usize, &str),
) -> Result<SeedReport, LibraryError> {
    // Synthesis and profiling are the slow part: run them in parallel
    // (reporting each singer as it is measured), then store one audition per
    // transaction in choir order.
    let (measured_one, measured_names) = std::sync::mpsc::channel::<&'static str>();
    let measured = std::thread::scope(|scope| {
        let worker = scope.spawn(move || measure_choir(staging, measured_one));
        let mut done = 0;
        for name in measured_names {
            done += 1;
            progress(done, total, &format!("Measured the audition of {name}"));
        }
        worker.join()
    })
    .map_err(|_| LibraryError::Invalid {
        file: staging.to_path_buf(),
        message: "measuring the demo auditions failed unexpectedly".to_string(),
    })?;
    let mut done = DEMO_CHOIR.len();
    for audition in measured {
        library.add_audition(&audition?)?;
    }
    progress(done, total, "Stored the demo choir");

    let options = ImportOptions {
        title: None,
        programme: Some(DEMO_PROGRAMME.to_string()),
        mapping: Some(MappingChoice {
            layout: Some(DEMO_LAYOUT.to_string()),
            overrides: Default::default(),
        }),
    };
    for path in write_sample_scores(&staging.join("scores"))? {
        let imported = import_piece(library, &path, &options, &Quiet).map_err(|error| {
            LibraryError::Invalid {
                file: path.clone(),
                message: error.to_string(),
            }
        })?;
        let title = imported.title;
        done += 1;
        progress(done, total, &format!("Analysed {title}"));
    }
    Ok(SeedReport {
        auditions: DEMO_CHOIR.len(),
        pieces: SAMPLE_SCORES.len(),
        programme: DEMO_PROGRAMME.to_string(),
    })
}

/// Synthesises and profiles every demo singer's audition in parallel;
/// sends each singer's name on `measured_one` as it is done.
fn measure_choir(
    staging: &Path,
    measured_one: std::sync::mpsc::Sender<&'static str>,
) -> Vec<Result<AuditionInput, LibraryError>> {
    DEMO_CHOIR
        .par_iter()
        .enumerate()
        .map(|(index, singer)| {
            let folder = staging.join("auditions").join(singer_slug(singer.name));
            let recordings = write_audition_files(singer, audition_seed(index), &folder)?;
            let invalid = |message: String| LibraryError::Invalid {
                file: folder.clone(),
                message,
            };
            let measured = measure_audition(
                &recordings,
                &ProfileConfig::default(),
                &Quiet,
                &Cancel::new(),
            )
            .map_err(|error| invalid(error.to_string()))?;
            let _ = measured_one.send(singer.name);
            Ok(AuditionInput {
                singer: singer.name.to_string(),
                held_on: DEMO_AUDITION_DATE.to_string(),
                recordings,
                profile: measured,
            })
        })
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn slugs_are_safe_folder_names() {
        assert_eq!(singer_slug("Maren Oakes-Whitby"), "maren-oakes-whitby");
        assert_eq!(singer_slug("  Ö. Lund / 2 "), "lund-2");
    }

    #[test]
    fn embedded_scores_read_as_scores() {
        for (name, bytes) in SAMPLE_SCORES {
            let piece = crate::score::read_score_bytes(
                Path::new(name),
                bytes,
                &crate::score::ReadOptions::default(),
            );
            assert!(piece.is_ok(), "{name}: {:?}", piece.err());
        }
    }
}
