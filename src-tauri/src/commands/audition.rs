//! Audition screen: the five tasks, recording with a live pitch trace,
//! measuring a profile from the files (a job), and saving it to the
//! singer's history.

use crate::error::AppError;
use ambit::library::{RecordingInput, today};
use ambit::usecases::audition::{measure_audition, store_audition};
use ambit::usecases::{Cancel, Quiet};
use ambit::voice::{Profile, ProfileConfig, Task};
use serde::{Deserialize, Serialize};
use tauri::{AppHandle, Runtime, State};

use super::text;
use crate::recorder::{self, Recorded};
use crate::state::{AppState, lock};

/// One task of the audition, as the singer is told it (docs/AUDITION.md).
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct TaskInfo {
    pub task: Task,
    pub title: String,
    pub instructions: String,
}

/// The tasks in order, worded as in docs/AUDITION.md.
pub fn tasks() -> Vec<TaskInfo> {
    let info = |task, title: &str, instructions: &str| TaskInfo {
        task,
        title: title.to_string(),
        instructions: instructions.to_string(),
    };
    vec![
        info(
            Task::Speech,
            "Speech (about 15 s)",
            "Read a short paragraph, or count from one to twenty, at your normal speaking level. Don't put on a voice.",
        ),
        info(
            Task::Glide,
            "Glide (about 10 s, twice)",
            "On \"oo\" or \"ng\", slide slowly from a comfortably low note up to a comfortably high note and back down, like a siren. It is fine if the voice flips or cracks on the way. Don't push past where it feels easy.",
        ),
        info(
            Task::Scale,
            "Scale (about 30 s)",
            "Sing five-note scales up and down (do-re-mi-fa-so-fa-mi-re-do), starting low and moving each one up a step, through the part of your voice that feels comfortable. Stop when it starts to feel like work.",
        ),
        info(
            Task::Sustain,
            "Sustain (about 10 s)",
            "Hold the lowest note that feels secure for two seconds; then the highest note that feels secure, for two seconds. Secure, not extreme.",
        ),
        info(
            Task::Song,
            "Song (about 20 s)",
            "Sing a phrase of any song you know well, in your own key.",
        ),
    ]
}

#[tauri::command]
pub fn audition_tasks() -> Vec<TaskInfo> {
    tasks()
}

/// One recording given for a task (the engine's type).
pub type AuditionFile = RecordingInput;

#[tauri::command]
pub fn recording_start<R: Runtime>(
    app: AppHandle<R>,
    state: State<'_, AppState>,
    task: Task,
) -> Result<(), AppError> {
    let mut recording = lock(&state.recording);
    if recording.is_some() {
        return Err("a recording is already running; stop it first".into());
    }
    let folder = state.with_library(|library| Ok(library.folder().to_path_buf()))?;
    *recording = Some(recorder::start(app, &folder, task)?);
    Ok(())
}

#[tauri::command(async)]
pub fn recording_stop(state: State<'_, AppState>) -> Result<Recorded, AppError> {
    let recording = lock(&state.recording)
        .take()
        .ok_or_else(|| AppError::invalid("no recording is running"))?;
    Ok(recording.stop()?)
}

/// The profile as `ambit profile --json`, with the cautions beside it.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ProfileResult {
    pub singer: String,
    #[serde(flatten)]
    pub profile: Profile,
}

#[tauri::command]
pub fn audition_analyse<R: Runtime>(
    app: AppHandle<R>,
    state: State<'_, AppState>,
    singer: String,
    files: Vec<AuditionFile>,
) -> Result<u64, AppError> {
    state.jobs.spawn(&app, move |job| {
        let measured = measure_audition(
            &files,
            &ProfileConfig::default(),
            &|done: usize, total: usize, label: &str| job.progress(done, total, label),
            &job.cancel_token(),
        )
        .map_err(text)?;
        job.check()?;
        if let Some(state) = tauri::Manager::try_state::<AppState>(job.app()) {
            *lock(&state.last_profile) = Some((singer.clone(), files.clone(), measured.clone()));
        }
        serde_json::to_value(ProfileResult {
            singer,
            profile: measured,
        })
        .map_err(text)
    })
}

/// Stores the audition (the recordings copied into the library) and its
/// profile in the singer's history; the singer is added if new.
#[tauri::command(async)]
pub fn audition_save(
    state: State<'_, AppState>,
    singer: String,
    files: Vec<AuditionFile>,
    date: Option<String>,
) -> Result<i64, AppError> {
    let cached = lock(&state.last_profile)
        .as_ref()
        .filter(|(name, cached_files, _)| name == &singer && cached_files == &files)
        .map(|(_, _, profile)| profile.clone());
    let measured = match cached {
        Some(profile) => profile,
        None => measure_audition(&files, &ProfileConfig::default(), &Quiet, &Cancel::new())
            .map_err(text)?,
    };
    let held_on = date
        .filter(|date| !date.trim().is_empty())
        .unwrap_or_else(today);
    let id = state.using(|library| {
        store_audition(library, &singer, &held_on, files.clone(), measured).map_err(text)
    })?;
    // Takes recorded in the app are now stored by content; the take files go.
    for file in &files {
        if recorder::is_take(&file.path) {
            let _ = std::fs::remove_file(&file.path);
        }
    }
    Ok(id)
}

#[tauri::command]
pub fn job_cancel(state: State<'_, AppState>, job: u64) {
    state.jobs.cancel(job);
}
