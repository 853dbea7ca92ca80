//! Measuring an audition: the task recordings are decoded and tracked in
//! parallel, then profiled. The CLI (`ambit profile`, `ambit library
//! add-audition`), the app's audition screen and the demo seeding all call
//! [`measure_audition`], so one set of recordings gives one profile.

use std::sync::atomic::{AtomicUsize, Ordering};

use rayon::prelude::*;

use super::{Cancel, Progress, UseCaseError};
use crate::library::{AuditionInput, Library, RecordingInput};
use crate::voice::{Profile, ProfileConfig, load_recording, profile};

/// Measures a profile from the task recordings: one progress step per file
/// read and tracked (in parallel), one for the profile. Cancelling stops
/// before the next file and before the profile.
pub fn measure_audition(
    files: &[RecordingInput],
    config: &ProfileConfig,
    progress: &dyn Progress,
    cancel: &Cancel,
) -> Result<Profile, UseCaseError> {
    if files.is_empty() {
        return Err(crate::voice::VoiceError::NoRecordings.into());
    }
    let total = files.len() + 1;
    let done = AtomicUsize::new(0);
    let recordings = files
        .par_iter()
        .map(|file| {
            cancel.check()?;
            let recording = load_recording(file.task, &file.path)?;
            let finished = done.fetch_add(1, Ordering::Relaxed) + 1;
            progress.step(
                finished,
                total,
                &format!("Read the {} take {}", file.task.label(), file_label(file)),
            );
            Ok(recording)
        })
        .collect::<Result<Vec<_>, UseCaseError>>()?;
    cancel.check()?;
    let mut measured = profile(&recordings, config)?;
    if measured.cautions.is_empty() {
        measured.cautions = crate::cautions::cautions();
    }
    progress.step(total, total, "Measured the profile");
    Ok(measured)
}

/// Stores a measured audition (the recordings copied into the library) in
/// the singer's history, adding the singer if new. Returns the audition id.
pub fn store_audition(
    library: &mut Library,
    singer: &str,
    held_on: &str,
    recordings: Vec<RecordingInput>,
    profile: Profile,
) -> Result<i64, UseCaseError> {
    Ok(library.add_audition(&AuditionInput {
        singer: singer.trim().to_string(),
        held_on: held_on.to_string(),
        recordings,
        profile,
    })?)
}

fn file_label(file: &RecordingInput) -> String {
    file.path.file_name().map_or_else(
        || file.path.display().to_string(),
        |name| name.to_string_lossy().into_owned(),
    )
}
