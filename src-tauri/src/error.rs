//! The one error type every command returns: a kind the UI can act on
//! (retry when busy, offer to open a library when none is open, …) and the
//! engine's message, which names the file or the thing.
//!
//! The kind comes from the engine where it knows it
//! ([`ambit::usecases::UseCaseError::kind`]); an error that is only a
//! message is `invalid`.

use ambit::library::LibraryError;
use ambit::usecases::{ErrorKind, UseCaseError};
use serde::{Deserialize, Serialize};

/// A command's error as the UI receives it: `{ "kind": …, "message": … }`.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct AppError {
    pub kind: ErrorKind,
    pub message: String,
}

impl AppError {
    pub fn new(kind: ErrorKind, message: impl Into<String>) -> AppError {
        AppError {
            kind,
            message: message.into(),
        }
    }

    /// Wrong input: a bad file, option or constraint.
    pub fn invalid(message: impl Into<String>) -> AppError {
        AppError::new(ErrorKind::Invalid, message)
    }

    /// The error a cancelled job ends with.
    pub fn cancelled() -> AppError {
        AppError::new(ErrorKind::Cancelled, "cancelled")
    }
}

impl std::fmt::Display for AppError {
    fn fmt(&self, formatter: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        formatter.write_str(&self.message)
    }
}

impl From<UseCaseError> for AppError {
    fn from(error: UseCaseError) -> AppError {
        AppError::new(error.kind(), error.to_string())
    }
}

impl From<LibraryError> for AppError {
    fn from(error: LibraryError) -> AppError {
        AppError::from(UseCaseError::from(error))
    }
}

/// A message without a kind of its own (e.g. from the recorder) is wrong
/// input or a device that refused.
impl From<String> for AppError {
    fn from(message: String) -> AppError {
        AppError::invalid(message)
    }
}

impl From<&str> for AppError {
    fn from(message: &str) -> AppError {
        AppError::invalid(message)
    }
}

/// The engine's own error types take their kind from [`UseCaseError`].
macro_rules! through_use_case {
    ($($error:ty),* $(,)?) => {$(
        impl From<$error> for AppError {
            fn from(error: $error) -> AppError {
                AppError::from(UseCaseError::from(error))
            }
        }
    )*};
}

through_use_case!(
    ambit::voice::VoiceError,
    ambit::score::ScoreError,
    ambit::sections::LayoutError,
    ambit::sections::MappingError,
    ambit::plan::PlanError,
    ambit::plan::ProgrammeError,
    ambit::placement::PlacementError,
);

/// Errors whose kind is fixed: wrong input, or a file that could not be
/// written.
macro_rules! of_kind {
    ($kind:expr => $($error:ty),* $(,)?) => {$(
        impl From<$error> for AppError {
            fn from(error: $error) -> AppError {
                AppError::new($kind, error.to_string())
            }
        }
    )*};
}

of_kind!(ErrorKind::Invalid =>
    serde_json::Error,
    ambit::roster::RosterError,
    ambit::transpose::TransposeError,
);
of_kind!(ErrorKind::Storage => ambit::report::ReportError);
