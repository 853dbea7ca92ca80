//! Library commands: what is open, open another, create an empty one, go
//! back to the demo library.

use crate::error::AppError;
use std::path::PathBuf;

use ambit::library::Library;
use serde::Serialize;
use tauri::{AppHandle, Runtime, State};

use crate::state::{AppState, LibraryStatus};

/// What the open library holds (`library_info`).
#[derive(Debug, Clone, PartialEq, Serialize, serde::Deserialize)]
#[serde(rename_all = "camelCase")]
pub struct LibraryInfoView {
    pub folder: String,
    pub singers: u64,
    pub archived: u64,
    pub auditions: u64,
    pub recordings: u64,
    pub pieces: u64,
    pub programmes: u64,
    pub scenarios: u64,
    pub schema_version: i64,
    pub is_demo: bool,
}

pub fn info_of(state: &AppState) -> Result<LibraryInfoView, AppError> {
    state.with_library_flag(|library, is_demo| {
        let info = library.info()?;
        Ok(LibraryInfoView {
            folder: info.folder,
            singers: info.singers,
            archived: info.archived_singers,
            auditions: info.auditions,
            recordings: info.recordings,
            pieces: info.pieces,
            programmes: info.programmes,
            scenarios: info.scenarios,
            schema_version: info.schema_version,
            is_demo,
        })
    })
}

/// Whether a library is open, or the demo library is being prepared (with
/// its progress), or opening failed.
#[tauri::command]
pub fn library_status(state: State<'_, AppState>) -> LibraryStatus {
    state.status()
}

#[tauri::command]
pub fn library_info(state: State<'_, AppState>) -> Result<LibraryInfoView, AppError> {
    info_of(&state)
}

#[tauri::command(async)]
pub fn library_open(
    state: State<'_, AppState>,
    folder: PathBuf,
) -> Result<LibraryInfoView, AppError> {
    state.refuse_while_preparing()?;
    let library = Library::open(&folder).map_err(super::text)?;
    state.replace_library(library, false);
    info_of(&state)
}

#[tauri::command(async)]
pub fn library_create_empty(
    state: State<'_, AppState>,
    folder: PathBuf,
) -> Result<LibraryInfoView, AppError> {
    state.refuse_while_preparing()?;
    let library = Library::create(&folder).map_err(super::text)?;
    state.replace_library(library, false);
    info_of(&state)
}

/// Goes back to the demo library: opens it, or starts preparing it in the
/// background (first use), and returns the status; `library-status` events
/// follow while it is prepared.
#[tauri::command]
pub fn library_open_demo<R: Runtime>(
    app: AppHandle<R>,
    state: State<'_, AppState>,
) -> Result<LibraryStatus, AppError> {
    state.open_or_prepare(&app, state.demo_folder()?);
    Ok(state.status())
}
