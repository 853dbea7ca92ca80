//! The Tauri commands, one file per screen group (see docs/APP-API.md).
//! Each command parses its arguments, calls the engine or the library, and
//! returns plain data; errors are the engine's messages as they are.

pub mod audition;
pub mod library;
pub mod pieces;
pub mod planning;
pub mod singers;

/// An error as the string the UI shows.
pub(crate) fn text(error: impl std::fmt::Display) -> String {
    error.to_string()
}
