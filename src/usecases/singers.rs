//! Deleting a singer, saying what went.

use serde::{Deserialize, Serialize};

use super::UseCaseError;
use crate::library::Library;

/// What deleting a singer removes (or, before `--yes`, would remove).
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct DeletedSinger {
    pub name: String,
    pub auditions: u64,
    /// Recording files removed from disk (files shared with another
    /// singer's audition stay). `None` in a preview.
    pub recording_files: Option<usize>,
}

/// What [`delete_singer`] would remove; changes nothing.
pub fn preview_delete(library: &Library, name: &str) -> Result<DeletedSinger, UseCaseError> {
    let id = library.singer_id(name)?;
    let record = library
        .singers(true)?
        .into_iter()
        .find(|singer| singer.id == id)
        .ok_or_else(|| UseCaseError::NotFound(format!("no singer called \"{name}\"")))?;
    Ok(DeletedSinger {
        name: record.name,
        auditions: record.auditions,
        recording_files: None,
    })
}

/// Deletes a singer: their rows, typed-in ranges, auditions and every
/// recording file no other audition refers to. Returns what went.
pub fn delete_singer(library: &mut Library, name: &str) -> Result<DeletedSinger, UseCaseError> {
    let preview = preview_delete(library, name)?;
    let removed = library.delete_singer(name)?;
    Ok(DeletedSinger {
        recording_files: Some(removed),
        ..preview
    })
}
