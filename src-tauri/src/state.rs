//! What the app holds between commands: the open library, the demo
//! library's folder, running jobs, the recording in progress, the last
//! placement (for what-if moves) and the last measured profile.

use crate::error::AppError;
use ambit::usecases::ErrorKind;
use std::path::PathBuf;
use std::sync::Mutex;

use ambit::demo::seed::create_demo_library;
use ambit::library::{LIBRARY_ENV, Library, LibraryError};
use ambit::voice::Profile;
use serde::{Deserialize, Serialize};
use tauri::{AppHandle, Emitter, Manager, Runtime};

use crate::commands::audition::AuditionFile;
use crate::jobs::Jobs;
use crate::recorder::Recording;

#[derive(Default)]
pub struct AppState {
    library: Mutex<Option<OpenLibrary>>,
    demo_folder: Mutex<Option<PathBuf>>,
    startup_error: Mutex<Option<String>>,
    status: Mutex<LibraryStatus>,
    pub jobs: Jobs,
    pub recording: Mutex<Option<Recording>>,
    pub placement: Mutex<Option<ambit::usecases::placement::PlacementSession>>,
    /// The last profile measured, with the files it came from, so that
    /// saving an audition does not measure it twice.
    pub last_profile: Mutex<Option<(String, Vec<AuditionFile>, Profile)>>,
}

/// Event name of library status changes (preparing the demo library).
pub const LIBRARY_STATUS: &str = "library-status";

/// Where the app's library stands (`library_status`, `library-status` events).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize, Default)]
#[serde(rename_all = "camelCase")]
pub enum LibraryState {
    /// Nothing is open yet (before start-up has decided).
    #[default]
    None,
    /// The demo library is being made in the background.
    Preparing,
    /// A library is open.
    Ready,
    /// Opening or preparing failed; `error` says why.
    Failed,
}

#[derive(Debug, Clone, PartialEq, Serialize, Deserialize, Default)]
#[serde(rename_all = "camelCase")]
pub struct LibraryStatus {
    pub state: LibraryState,
    /// Steps done and in all while preparing.
    pub done: usize,
    pub total: usize,
    /// The step just finished, in words.
    pub label: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub error: Option<String>,
}

struct OpenLibrary {
    library: Library,
    is_demo: bool,
}

/// A poisoned lock only means another command panicked; the data is still usable.
pub fn lock<T>(mutex: &Mutex<T>) -> std::sync::MutexGuard<'_, T> {
    mutex
        .lock()
        .unwrap_or_else(|poisoned| poisoned.into_inner())
}

impl AppState {
    /// A state with `library` already open (tests, embedding).
    pub fn opened(library: Library, is_demo: bool) -> AppState {
        let state = AppState::default();
        *lock(&state.library) = Some(OpenLibrary { library, is_demo });
        lock(&state.status).state = LibraryState::Ready;
        state
    }

    pub fn set_demo_folder(&self, folder: PathBuf) {
        *lock(&self.demo_folder) = Some(folder);
    }

    pub fn demo_folder(&self) -> Result<PathBuf, AppError> {
        lock(&self.demo_folder).clone().ok_or_else(|| {
            AppError::new(
                ErrorKind::NotFound,
                "the app has no data folder for the demo library",
            )
        })
    }

    /// Where the library stands now.
    pub fn status(&self) -> LibraryStatus {
        lock(&self.status).clone()
    }

    fn set_status<R: Runtime>(&self, app: &AppHandle<R>, status: LibraryStatus) {
        *lock(&self.status) = status.clone();
        let _ = app.emit(LIBRARY_STATUS, status);
    }

    /// Opens the start-up library: `AMBIT_LIBRARY` when set, else the demo
    /// library in the app's data folder. See [`AppState::open_or_prepare`].
    pub fn open_startup_library<R: Runtime>(&self, app: &AppHandle<R>) {
        match std::env::var_os(LIBRARY_ENV).filter(|value| !value.is_empty()) {
            Some(folder) => self.open_or_prepare(app, PathBuf::from(folder)),
            None => match self.demo_folder() {
                Ok(folder) => self.open_or_prepare(app, folder),
                Err(error) => self.fail(app, error.message),
            },
        }
    }

    /// Opens the library in `folder` at once when it exists. Otherwise makes
    /// the demo library there on a thread of its own, reporting each step as
    /// a `library-status` event, so the window stays responsive; the library
    /// opens when it is complete.
    pub fn open_or_prepare<R: Runtime>(&self, app: &AppHandle<R>, folder: PathBuf) {
        if lock(&self.status).state == LibraryState::Preparing {
            return;
        }
        if folder.join(ambit::library::DATABASE_FILE).is_file() {
            match Library::open(&folder) {
                Ok(library) => {
                    let is_demo = self.demo_folder().is_ok_and(|demo| demo == folder);
                    self.replace_library(library, is_demo);
                    self.set_status(app, ready());
                }
                Err(error) => self.fail(app, error.to_string()),
            }
            return;
        }
        self.set_status(
            app,
            LibraryStatus {
                state: LibraryState::Preparing,
                total: ambit::demo::seed::SEED_STEPS,
                label: "Starting".to_string(),
                ..LibraryStatus::default()
            },
        );
        let handle = app.clone();
        let spawned = std::thread::Builder::new()
            .name("ambit-demo-library".to_string())
            .spawn(move || {
                let state = handle.state::<AppState>();
                let outcome = create_demo_library(&folder, &mut |done, total, label| {
                    state.set_status(
                        &handle,
                        LibraryStatus {
                            state: LibraryState::Preparing,
                            done,
                            total,
                            label: label.to_string(),
                            error: None,
                        },
                    );
                });
                match outcome {
                    Ok(library) => {
                        state.replace_library(library, true);
                        state.set_status(&handle, ready());
                    }
                    Err(error) => state.fail(&handle, error.to_string()),
                }
            });
        if let Err(error) = spawned {
            self.fail(
                app,
                format!("cannot start preparing the demo library: {error}"),
            );
        }
    }

    /// `Err` while the demo library is being prepared: it would replace
    /// whatever was opened meanwhile.
    pub fn refuse_while_preparing(&self) -> Result<(), AppError> {
        if self.status().state == LibraryState::Preparing {
            Err(AppError::new(
                ErrorKind::Busy,
                "the demo library is still being prepared; try again when it is ready",
            ))
        } else {
            Ok(())
        }
    }

    fn fail<R: Runtime>(&self, app: &AppHandle<R>, error: String) {
        eprintln!("ambit: {error}");
        *lock(&self.startup_error) = Some(error.clone());
        self.set_status(
            app,
            LibraryStatus {
                state: LibraryState::Failed,
                error: Some(error),
                ..LibraryStatus::default()
            },
        );
    }

    /// Makes `library` the open one (what-if placement and the last profile
    /// belong to the old one and are dropped).
    pub fn replace_library(&self, library: Library, is_demo: bool) {
        *lock(&self.library) = Some(OpenLibrary { library, is_demo });
        *lock(&self.startup_error) = None;
        lock(&self.status).state = LibraryState::Ready;
        *lock(&self.placement) = None;
        *lock(&self.last_profile) = None;
    }

    /// Runs `work` on the open library.
    pub fn with_library<T>(
        &self,
        work: impl FnOnce(&mut Library) -> Result<T, LibraryError>,
    ) -> Result<T, AppError> {
        let mut guard = lock(&self.library);
        match guard.as_mut() {
            Some(open) => work(&mut open.library).map_err(AppError::from),
            None => Err(self.no_library()),
        }
    }

    /// Runs `work`, whose errors are already messages, on the open library.
    pub fn using<T>(
        &self,
        work: impl FnOnce(&mut Library) -> Result<T, AppError>,
    ) -> Result<T, AppError> {
        let mut guard = lock(&self.library);
        match guard.as_mut() {
            Some(open) => work(&mut open.library),
            None => Err(self.no_library()),
        }
    }

    /// Runs `work` on the open library and whether it is the demo.
    pub fn with_library_flag<T>(
        &self,
        work: impl FnOnce(&mut Library, bool) -> Result<T, LibraryError>,
    ) -> Result<T, AppError> {
        let mut guard = lock(&self.library);
        match guard.as_mut() {
            Some(open) => work(&mut open.library, open.is_demo).map_err(AppError::from),
            None => Err(self.no_library()),
        }
    }

    fn no_library(&self) -> AppError {
        let status = self.status();
        if status.state == LibraryState::Preparing {
            return AppError::new(
                ErrorKind::Busy,
                format!(
                    "the demo library is still being prepared ({} of {} steps done)",
                    status.done, status.total
                ),
            );
        }
        let message = match lock(&self.startup_error).as_ref() {
            Some(error) => format!("no library is open ({error})"),
            None => "no library is open; open or create one".to_string(),
        };
        AppError::new(ErrorKind::NotFound, message)
    }
}

fn ready() -> LibraryStatus {
    LibraryStatus {
        state: LibraryState::Ready,
        ..LibraryStatus::default()
    }
}
