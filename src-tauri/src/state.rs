//! What the app holds between commands: the open library, the demo
//! library's folder, running jobs, the recording in progress, the last
//! placement (for what-if moves) and the last measured profile.

use std::path::{Path, PathBuf};
use std::sync::Mutex;

use ambit::library::{LIBRARY_ENV, Library, LibraryError};
use ambit::placement::{Placement, PlacementProblem};
use ambit::voice::Profile;

use crate::commands::audition::AuditionFile;
use crate::jobs::Jobs;
use crate::recorder::Recording;

/// The placement the director is working on: the problem as posed and the
/// current seating (the optimum, then each move applied).
pub struct CurrentPlacement {
    pub problem: PlacementProblem,
    pub placement: Placement,
    pub matrix: ambit::fit::SectionFitMatrix,
    /// The roster placed, for the divisi choices after a move.
    pub roster: ambit::roster::Roster,
}

#[derive(Default)]
pub struct AppState {
    library: Mutex<Option<OpenLibrary>>,
    demo_folder: Mutex<Option<PathBuf>>,
    startup_error: Mutex<Option<String>>,
    pub jobs: Jobs,
    pub recording: Mutex<Option<Recording>>,
    pub placement: Mutex<Option<CurrentPlacement>>,
    /// The last profile measured, with the files it came from, so that
    /// saving an audition does not measure it twice.
    pub last_profile: Mutex<Option<(String, Vec<AuditionFile>, Profile)>>,
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
        state
    }

    pub fn set_demo_folder(&self, folder: PathBuf) {
        *lock(&self.demo_folder) = Some(folder);
    }

    pub fn demo_folder(&self) -> Result<PathBuf, String> {
        lock(&self.demo_folder)
            .clone()
            .ok_or_else(|| "the app has no data folder for the demo library".to_string())
    }

    pub fn set_startup_error(&self, error: String) {
        *lock(&self.startup_error) = Some(error);
    }

    /// `AMBIT_LIBRARY` when set (created and seeded with the demo choir when
    /// the folder holds no library yet), else the demo library.
    pub fn open_startup_library(&self) -> Result<(), String> {
        match std::env::var_os(LIBRARY_ENV).filter(|value| !value.is_empty()) {
            Some(folder) => {
                let folder = PathBuf::from(folder);
                let (library, seeded) = open_or_seed(&folder)?;
                self.replace_library(library, seeded);
                Ok(())
            }
            None => {
                let folder = self.demo_folder()?;
                let (library, _) = open_or_seed(&folder)?;
                self.replace_library(library, true);
                Ok(())
            }
        }
    }

    pub fn replace_library(&self, library: Library, is_demo: bool) {
        *lock(&self.library) = Some(OpenLibrary { library, is_demo });
        *lock(&self.placement) = None;
        *lock(&self.last_profile) = None;
    }

    /// Runs `work` on the open library.
    pub fn with_library<T>(
        &self,
        work: impl FnOnce(&mut Library) -> Result<T, LibraryError>,
    ) -> Result<T, String> {
        let mut guard = lock(&self.library);
        match guard.as_mut() {
            Some(open) => work(&mut open.library).map_err(|error| error.to_string()),
            None => Err(self.no_library()),
        }
    }

    /// Runs `work`, whose errors are already messages, on the open library.
    pub fn using<T>(
        &self,
        work: impl FnOnce(&mut Library) -> Result<T, String>,
    ) -> Result<T, String> {
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
    ) -> Result<T, String> {
        let mut guard = lock(&self.library);
        match guard.as_mut() {
            Some(open) => work(&mut open.library, open.is_demo).map_err(|error| error.to_string()),
            None => Err(self.no_library()),
        }
    }

    fn no_library(&self) -> String {
        match lock(&self.startup_error).as_ref() {
            Some(error) => format!("no library is open ({error})"),
            None => "no library is open; open or create one".to_string(),
        }
    }
}

/// Opens the library in `folder`, or creates it and seeds it with the demo
/// choir and the sample scores when there is none. Returns whether it was seeded.
pub fn open_or_seed(folder: &Path) -> Result<(Library, bool), String> {
    if folder.join(ambit::library::DATABASE_FILE).is_file() {
        let library = Library::open(folder).map_err(|error| error.to_string())?;
        return Ok((library, false));
    }
    let mut library = Library::create(folder).map_err(|error| error.to_string())?;
    crate::seed::seed_demo(&mut library, &mut |done, total, label| {
        eprintln!("ambit: preparing the demo library {done}/{total}: {label}");
    })?;
    Ok((library, true))
}
