//! The Tauri commands, one file per screen group (see docs/APP-API.md).
//! Each command parses its arguments, calls the engine or the library, and
//! returns plain data; errors are [`AppError`]: a kind and the engine's message.

pub mod audition;
pub mod library;
pub mod pieces;
pub mod planning;
pub mod singers;

pub use crate::error::AppError;

/// An error as the UI receives it, with the engine's kind where it has one.
pub(crate) fn text(error: impl Into<AppError>) -> AppError {
    error.into()
}
