//! The use cases: one façade that every front end calls. The CLI, the
//! desktop app's commands and the demo seeding parse their input, call a
//! function here and format what it returns; none of them holds a second
//! copy of a use case or a figure of its own.
//!
//! - [`audition`]: measure an audition from task recordings, store it.
//! - [`pieces`]: import a score into the library (one title rule, one stored
//!   mapping), read a programme back.
//! - [`placement`]: the fit matrix views and a placement session (solve,
//!   what-if moves, undo and redo, divisi, seating CSV).
//! - [`rehearsal`]: plan a rehearsal by vocal load from score files.
//! - [`singers`]: delete a singer, saying what went.
//!
//! Long work takes a [`Progress`] and a [`Cancel`] as parameters; results
//! are typed. Errors are [`UseCaseError`], whose [`ErrorKind`] lets a front
//! end tell "busy" from "not found" without reading the message.
//!
//! Architecture invariant: this layer composes the domain stages and the
//! library; it holds no formula, threshold or vocabulary of its own.

pub mod audition;
pub mod pieces;
pub mod placement;
pub mod rehearsal;
pub mod singers;

use std::sync::Arc;
use std::sync::atomic::{AtomicBool, Ordering};

use serde::{Deserialize, Serialize};
use thiserror::Error;

/// Where long work reports how far it has got: `done` of `total` steps,
/// with a label for the step just finished or begun. Implemented by any
/// `Fn(usize, usize, &str) + Sync`, so a closure serves.
pub trait Progress: Sync {
    fn step(&self, done: usize, total: usize, label: &str);
}

impl<F: Fn(usize, usize, &str) + Sync> Progress for F {
    fn step(&self, done: usize, total: usize, label: &str) {
        self(done, total, label)
    }
}

/// Progress that nobody watches.
#[derive(Debug, Clone, Copy, Default)]
pub struct Quiet;

impl Progress for Quiet {
    fn step(&self, _done: usize, _total: usize, _label: &str) {}
}

/// A cancel flag shared between the worker and whoever may cancel it; work
/// checks it between steps and stops with [`UseCaseError::Cancelled`].
#[derive(Debug, Clone, Default)]
pub struct Cancel(Arc<AtomicBool>);

impl Cancel {
    pub fn new() -> Self {
        Self::default()
    }

    /// A cancel token over an existing flag (the app's job table keeps one).
    pub fn from_flag(flag: Arc<AtomicBool>) -> Self {
        Self(flag)
    }

    pub fn cancel(&self) {
        self.0.store(true, Ordering::Relaxed);
    }

    pub fn is_cancelled(&self) -> bool {
        self.0.load(Ordering::Relaxed)
    }

    /// `Err(Cancelled)` once cancelled.
    pub fn check(&self) -> Result<(), UseCaseError> {
        if self.is_cancelled() {
            Err(UseCaseError::Cancelled)
        } else {
            Ok(())
        }
    }
}

/// What kind of failure, for a front end that must react differently
/// (retry when busy, offer to create when missing, …).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "camelCase")]
pub enum ErrorKind {
    /// The input is wrong: a bad file, a bad option, a constraint that
    /// cannot be met.
    Invalid,
    /// A named singer, piece, scenario or library does not exist.
    NotFound,
    /// Another window or command holds the library; try again.
    Busy,
    /// The work was cancelled.
    Cancelled,
    /// Reading or writing a file failed, or the library is damaged.
    Storage,
}

/// Every use case's error. Each message names the file or the thing.
#[derive(Debug, Error)]
pub enum UseCaseError {
    #[error("cancelled")]
    Cancelled,
    #[error(transparent)]
    Library(#[from] crate::library::LibraryError),
    #[error(transparent)]
    Voice(#[from] crate::voice::VoiceError),
    #[error(transparent)]
    Score(#[from] crate::score::ScoreError),
    #[error(transparent)]
    Layout(#[from] crate::sections::LayoutError),
    #[error(transparent)]
    Mapping(#[from] crate::sections::MappingError),
    #[error(transparent)]
    Plan(#[from] crate::plan::PlanError),
    #[error(transparent)]
    Programme(#[from] crate::plan::ProgrammeError),
    #[error(transparent)]
    Placement(#[from] crate::placement::PlacementError),
    #[error(transparent)]
    Rehearsal(#[from] crate::rehearsal::RehearsalError),
    #[error("{0}")]
    Invalid(String),
    #[error("{0}")]
    NotFound(String),
}

impl UseCaseError {
    pub fn kind(&self) -> ErrorKind {
        use crate::library::LibraryError as L;
        match self {
            Self::Cancelled => ErrorKind::Cancelled,
            Self::Library(L::Busy { .. }) => ErrorKind::Busy,
            Self::Library(L::NotFound { .. } | L::UnknownSinger { .. } | L::Missing { .. }) => {
                ErrorKind::NotFound
            }
            Self::Library(
                L::Io { .. }
                | L::Database { .. }
                | L::Damaged { .. }
                | L::Migration { .. }
                | L::NotSqlite { .. }
                | L::NewerSchema { .. },
            ) => ErrorKind::Storage,
            Self::NotFound(_) => ErrorKind::NotFound,
            _ => ErrorKind::Invalid,
        }
    }
}
