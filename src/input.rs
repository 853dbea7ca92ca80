//! Reading input files through a byte budget: the one way the engine reads a
//! file a user hands it (scores, rosters, audio, JSON files for the CLI).
//!
//! The length a file reports is never trusted. `/dev/zero`, a named pipe, a
//! process substitution or a file that grows while it is read all report a
//! length that says nothing about how many bytes will come, so the bytes are
//! counted as they arrive, and the read stops one byte past the budget. A
//! reported length is used only to refuse early (a regular file already
//! known to be too large) and as a capacity hint capped by the budget.
//!
//! Architecture invariant: this module knows nothing about formats. Each
//! reader turns an [`InputError`] into its own error type, keeping the file
//! name and the limit in the message.

use std::fs::File;
use std::io::{Read, Seek, SeekFrom};
use std::path::{Path, PathBuf};

use thiserror::Error;

/// Largest JSON document read whole (a saved placement result, its
/// constraints): a programme of a few hundred singers is well under 1 MiB.
pub const MAX_JSON_BYTES: u64 = 64 << 20;

/// Why an input file could not be read within its budget.
#[derive(Debug, Error)]
pub enum InputError {
    #[error("{}: cannot read: {source}", file.display())]
    Io {
        file: PathBuf,
        #[source]
        source: std::io::Error,
    },
    /// More than `budget` bytes: `what` names the kind of file ("scores").
    #[error("{}: {}", file.display(), too_large_message(*budget, what))]
    TooLarge {
        file: PathBuf,
        budget: u64,
        what: &'static str,
    },
}

/// The words of [`InputError::TooLarge`] without the file name, for readers
/// whose own error type puts the file first.
pub fn too_large_message(budget: u64, what: &str) -> String {
    format!(
        "too large: more than {budget} bytes ({}); Ambit reads {what} up to that size \
         (a device or a pipe that does not end is refused the same way)",
        human_bytes(budget)
    )
}

/// 64 MiB, 1 GiB: a budget in words.
pub fn human_bytes(bytes: u64) -> String {
    const UNITS: [(&str, u64); 3] = [("GiB", 1 << 30), ("MiB", 1 << 20), ("KiB", 1 << 10)];
    for (unit, size) in UNITS {
        if bytes >= size && bytes.is_multiple_of(size) {
            return format!("{} {unit}", bytes / size);
        }
    }
    format!("{bytes} bytes")
}

impl InputError {
    /// The problem without the file name (for error types that add it).
    pub fn message(&self) -> String {
        match self {
            InputError::Io { source, .. } => format!("cannot read: {source}"),
            InputError::TooLarge { budget, what, .. } => too_large_message(*budget, what),
        }
    }
}

/// The whole of `path`, at most `budget` bytes; more is
/// [`InputError::TooLarge`]. At most `budget + 1` bytes are ever read,
/// whatever the file is.
pub fn read_bounded(path: &Path, budget: u64, what: &'static str) -> Result<Vec<u8>, InputError> {
    let io = |source| InputError::Io {
        file: path.to_path_buf(),
        source,
    };
    let file = File::open(path).map_err(io)?;
    let reported = file.metadata().map_err(io)?;
    let too_large = || InputError::TooLarge {
        file: path.to_path_buf(),
        budget,
        what,
    };
    // A regular file that says it is too large is refused unread; any other
    // kind says nothing useful about its length.
    if reported.is_file() && reported.len() > budget {
        return Err(too_large());
    }
    let hint = if reported.is_file() {
        reported.len().min(budget)
    } else {
        0
    };
    let mut bytes = Vec::with_capacity(usize::try_from(hint).unwrap_or(0));
    file.take(budget.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(io)?;
    if bytes.len() as u64 > budget {
        return Err(too_large());
    }
    Ok(bytes)
}

/// A file opened for streaming (decoders that read and seek as they go),
/// which fails with [`InputError::TooLarge`]'s message once a read reaches
/// past `budget` bytes from the start. Seeking is passed through; the budget
/// is on positions, so seeking back and reading again costs nothing extra,
/// and a device that never ends is stopped at the budget.
pub struct BoundedFile {
    file: File,
    path: PathBuf,
    position: u64,
    budget: u64,
    what: &'static str,
    /// Set once the budget was hit, so the caller can tell this error from
    /// the decoder's own (a decoder may swallow I/O errors into its own).
    exceeded: bool,
    /// Whether seeking works (false for pipes and character devices).
    seekable: bool,
}

impl BoundedFile {
    pub fn open(path: &Path, budget: u64, what: &'static str) -> Result<BoundedFile, InputError> {
        let io = |source| InputError::Io {
            file: path.to_path_buf(),
            source,
        };
        let file = File::open(path).map_err(io)?;
        let metadata = file.metadata().map_err(io)?;
        if metadata.is_file() && metadata.len() > budget {
            return Err(InputError::TooLarge {
                file: path.to_path_buf(),
                budget,
                what,
            });
        }
        Ok(BoundedFile {
            file,
            path: path.to_path_buf(),
            position: 0,
            budget,
            what,
            exceeded: false,
            seekable: metadata.is_file(),
        })
    }

    /// True once a read went past the budget.
    pub fn exceeded(&self) -> bool {
        self.exceeded
    }

    /// Whether the file is a regular file (seekable, with a true length).
    pub fn is_regular(&self) -> bool {
        self.seekable
    }

    /// The length of a regular file; `None` for pipes and devices.
    pub fn regular_len(&self) -> Option<u64> {
        if self.seekable {
            self.file.metadata().ok().map(|metadata| metadata.len())
        } else {
            None
        }
    }

    /// The error a caller reports when [`Self::exceeded`] is set.
    pub fn too_large(&self) -> InputError {
        InputError::TooLarge {
            file: self.path.clone(),
            budget: self.budget,
            what: self.what,
        }
    }
}

impl Read for BoundedFile {
    fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
        if self.position >= self.budget {
            // One byte past the budget tells "exactly at the limit" from
            // "beyond it".
            let mut probe = [0u8; 1];
            if self.file.read(&mut probe)? == 0 {
                return Ok(0);
            }
            self.exceeded = true;
            return Err(std::io::Error::other(too_large_message(
                self.budget,
                self.what,
            )));
        }
        let room = usize::try_from(self.budget - self.position).unwrap_or(usize::MAX);
        let limit = buf.len().min(room);
        let read = self.file.read(&mut buf[..limit])?;
        self.position += read as u64;
        Ok(read)
    }
}

impl Seek for BoundedFile {
    fn seek(&mut self, to: SeekFrom) -> std::io::Result<u64> {
        let position = self.file.seek(to)?;
        self.position = position;
        Ok(position)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_file_within_the_budget_is_read_whole_and_one_beyond_it_is_refused() {
        let dir = tempfile::tempdir().expect("temp dir");
        let path = dir.path().join("ten.bin");
        std::fs::write(&path, [7u8; 10]).expect("write");
        assert_eq!(
            read_bounded(&path, 10, "tests").expect("fits"),
            vec![7u8; 10]
        );
        let error = read_bounded(&path, 9, "tests").expect_err("one byte over");
        assert!(
            matches!(error, InputError::TooLarge { budget: 9, .. }),
            "{error}"
        );
        assert!(error.to_string().contains("ten.bin"), "{error}");
    }

    #[cfg(unix)]
    #[test]
    fn a_device_that_never_ends_is_stopped_at_the_budget() {
        // /dev/zero reports a length of 0 and never reaches its end.
        let error = read_bounded(Path::new("/dev/zero"), 1 << 20, "tests").expect_err("endless");
        assert!(matches!(error, InputError::TooLarge { .. }), "{error}");
        assert!(
            error.to_string().starts_with("/dev/zero: too large"),
            "{error}"
        );

        let mut streamed = BoundedFile::open(Path::new("/dev/zero"), 1000, "tests").expect("open");
        let mut sink = Vec::new();
        let result = streamed.read_to_end(&mut sink);
        assert!(result.is_err() && streamed.exceeded());
        assert_eq!(sink.len(), 1000);
    }

    #[test]
    fn budgets_are_named_in_binary_units() {
        assert_eq!(human_bytes(64 << 20), "64 MiB");
        assert_eq!(human_bytes(1 << 30), "1 GiB");
        assert_eq!(human_bytes(1000), "1000 bytes");
    }
}
