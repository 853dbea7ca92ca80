//! MusicXML reader: `score-partwise` documents, plain or compressed (`.mxl`).

use std::path::Path;

use super::{Location, Piece, ReadOptions, ScoreError};

/// Reads an uncompressed MusicXML document.
pub fn read_musicxml(
    path: &Path,
    _bytes: &[u8],
    _options: &ReadOptions,
) -> Result<Piece, ScoreError> {
    Err(ScoreError::Unsupported {
        file: path.to_path_buf(),
        location: Location::Whole,
        message: "the MusicXML reader is not written yet".into(),
    })
}

/// Reads a compressed MusicXML archive through `META-INF/container.xml`.
pub fn read_mxl(path: &Path, _bytes: &[u8], _options: &ReadOptions) -> Result<Piece, ScoreError> {
    Err(ScoreError::Unsupported {
        file: path.to_path_buf(),
        location: Location::Whole,
        message: "the MusicXML reader is not written yet".into(),
    })
}
