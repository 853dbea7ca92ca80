//! MusicXML reader: `score-partwise` and `score-timewise` documents, plain
//! (`.musicxml`, `.xml`) or compressed (`.mxl`), become one [`Piece`] of
//! sounding notes.
//!
//! The work happens in three passes:
//! 1. [`prescan`] and [`archive`] enforce the input limits (size, zip entries,
//!    nesting depth, no entity declarations) before any tree is built;
//! 2. [`measures`] walks the XML tree once and turns each part into written
//!    measures of notes positioned in quarter notes, with the tempo, dynamic,
//!    repeat and navigation marks found in them;
//! 3. [`perform`] lays the measures out in performance order (repeats
//!    unrolled), builds one conductor tempo map from all parts, and assigns
//!    seconds.
//!
//! Invariant: nothing here panics or grows without bound on hostile input;
//! every refusal is a [`ScoreError`] naming the file and the place.

mod archive;
pub mod excerpt;
mod measures;
mod perform;
pub mod prescan;

use std::path::Path;

use super::{Location, Piece, ReadOptions, ScoreError};

pub use archive::{MAX_ARCHIVE_ENTRIES, MAX_COMPRESSION_RATIO, MAX_DECOMPRESSED_BYTES};

/// Most XML nodes one document may hold. A long choral work has well under a
/// million; the cap bounds the tree's memory whatever the input.
pub const MAX_XML_NODES: u32 = 8_000_000;

/// Reads an uncompressed MusicXML document.
pub fn read_musicxml(
    path: &Path,
    bytes: &[u8],
    options: &ReadOptions,
) -> Result<Piece, ScoreError> {
    with_document(path, bytes, |_, document| {
        let written = measures::read_document(path, document)?;
        perform::perform(path, written, options)
    })
}

/// Checks the input limits, decodes and parses the document, and hands the
/// tree to `work`: the one way into a MusicXML tree.
fn with_document<T>(
    path: &Path,
    bytes: &[u8],
    work: impl FnOnce(&str, &roxmltree::Document<'_>) -> Result<T, ScoreError>,
) -> Result<T, ScoreError> {
    if bytes.len() as u64 > super::MAX_SCORE_BYTES {
        return Err(ScoreError::TooLarge {
            file: path.to_path_buf(),
            message: format!(
                "{} bytes of XML; Ambit reads scores up to {} bytes",
                bytes.len(),
                super::MAX_SCORE_BYTES
            ),
        });
    }
    let text = decode(path, bytes)?;
    let text = text.as_ref();
    prescan::prescan(text.as_bytes()).map_err(|error| {
        let (offset, message) = match error {
            prescan::PrescanError::TooDeep { offset } => (
                offset,
                format!(
                    "elements nested deeper than {} levels",
                    prescan::MAX_NESTING_DEPTH
                ),
            ),
            prescan::PrescanError::EntityDeclaration { offset } => (
                offset,
                "the document declares XML entities, which MusicXML never needs \
                 (refused to rule out entity-expansion attacks)"
                    .to_string(),
            ),
            prescan::PrescanError::InternalSubset { offset } => (
                offset,
                "the DOCTYPE has an internal subset ([…]), where XML entities are \
                 declared; MusicXML never needs one (refused to rule out \
                 entity-expansion attacks)"
                    .to_string(),
            ),
        };
        ScoreError::Malformed {
            file: path.to_path_buf(),
            location: Location::ByteOffset(offset as u64),
            message,
        }
    })?;
    let parse_options = roxmltree::ParsingOptions {
        // MusicXML files carry a DOCTYPE naming the public DTD. roxmltree
        // never fetches external DTDs; internal subsets (where entities
        // are declared) were refused above.
        allow_dtd: true,
        nodes_limit: MAX_XML_NODES,
        ..roxmltree::ParsingOptions::default()
    };
    let document =
        roxmltree::Document::parse_with_options(text, parse_options).map_err(|error| {
            let (position, message) = match error {
                roxmltree::Error::NodesLimitReached => {
                    (error.pos(), format!("more than {MAX_XML_NODES} XML nodes"))
                }
                // roxmltree places these at 1:1; the place is the end.
                roxmltree::Error::UnclosedRootNode | roxmltree::Error::UnexpectedEndOfStream => (
                    end_position(text),
                    format!(
                        "the XML ends at byte {} before the document is complete (truncated file?)",
                        text.len()
                    ),
                ),
                other => (other.pos(), format!("XML error: {other}")),
            };
            ScoreError::Malformed {
                file: path.to_path_buf(),
                location: Location::LineColumn {
                    line: position.row,
                    column: position.col,
                },
                message,
            }
        })?;
    work(text, &document)
}

/// Bars `first_bar`…`last_bar` (printed numbers) of one part of a MusicXML
/// or `.mxl` score already in memory, as a MusicXML document of their own.
pub fn excerpt_bytes(
    path: &Path,
    bytes: &[u8],
    part: &str,
    first_bar: &str,
    last_bar: &str,
) -> Result<String, ScoreError> {
    let xml = match super::sniff_format(bytes) {
        Some(super::Format::CompressedMusicXml) => archive::extract_score(path, bytes)?.1,
        Some(super::Format::MusicXml) => bytes.to_vec(),
        Some(super::Format::Midi) => {
            return Err(ScoreError::Unsupported {
                file: path.to_path_buf(),
                location: Location::Whole,
                message: "a MIDI file carries no notation to show; import the piece's MusicXML for excerpts".into(),
            });
        }
        None => {
            return Err(ScoreError::UnknownFormat {
                file: path.to_path_buf(),
                message: "expected MusicXML (.musicxml, .xml, .mxl)".into(),
            });
        }
    };
    with_document(path, &xml, |text, document| {
        excerpt::excerpt_of(path, text, document, part, first_bar, last_bar)
    })
}

/// Line and column just past the last character.
fn end_position(text: &str) -> roxmltree::TextPos {
    let line = text.bytes().filter(|&byte| byte == b'\n').count() + 1;
    let last_line = text.rsplit('\n').next().unwrap_or("");
    roxmltree::TextPos::new(
        u32::try_from(line).unwrap_or(u32::MAX),
        u32::try_from(last_line.chars().count() + 1).unwrap_or(u32::MAX),
    )
}

/// Reads a compressed MusicXML archive through `META-INF/container.xml`.
pub fn read_mxl(path: &Path, bytes: &[u8], options: &ReadOptions) -> Result<Piece, ScoreError> {
    let (entry, xml) = archive::extract_score(path, bytes)?;
    read_musicxml(path, &xml, options).map_err(|error| in_entry(error, &entry))
}

/// Adds the archive entry to an error found in the score inside an `.mxl`.
fn in_entry(mut error: ScoreError, entry: &str) -> ScoreError {
    if let ScoreError::Malformed { message, .. }
    | ScoreError::Unsupported { message, .. }
    | ScoreError::TooLarge { message, .. } = &mut error
    {
        *message = format!("in archive entry {entry}: {message}");
    }
    error
}

/// The document as text: UTF-8 (with or without BOM), UTF-16 with a BOM, or
/// ISO-8859-1 when the XML declaration says so. Anything else is refused
/// with the byte offset of the first bad byte.
fn decode<'a>(path: &Path, bytes: &'a [u8]) -> Result<std::borrow::Cow<'a, str>, ScoreError> {
    use std::borrow::Cow;
    let malformed = |offset: usize, message: String| ScoreError::Malformed {
        file: path.to_path_buf(),
        location: Location::ByteOffset(offset as u64),
        message,
    };
    if let Some(body) = bytes.strip_prefix(b"\xEF\xBB\xBF") {
        return std::str::from_utf8(body)
            .map(Cow::Borrowed)
            .map_err(|error| {
                malformed(
                    error.valid_up_to() + 3,
                    "invalid UTF-8 (the file starts with a UTF-8 byte-order mark)".into(),
                )
            });
    }
    let utf16 = |body: &[u8], big_endian: bool| {
        if !body.len().is_multiple_of(2) {
            return Err(malformed(
                bytes.len(),
                "UTF-16 text with an odd number of bytes (truncated file?)".into(),
            ));
        }
        let units = body.chunks_exact(2).map(|pair| {
            if big_endian {
                u16::from_be_bytes([pair[0], pair[1]])
            } else {
                u16::from_le_bytes([pair[0], pair[1]])
            }
        });
        let mut text = String::with_capacity(body.len() / 2);
        for (index, unit) in char::decode_utf16(units).enumerate() {
            match unit {
                Ok(character) => text.push(character),
                Err(_) => {
                    return Err(malformed(
                        2 + 2 * index,
                        "invalid UTF-16 (unpaired surrogate)".into(),
                    ));
                }
            }
        }
        Ok(Cow::Owned(text))
    };
    if let Some(body) = bytes.strip_prefix(b"\xFF\xFE") {
        return utf16(body, false);
    }
    if let Some(body) = bytes.strip_prefix(b"\xFE\xFF") {
        return utf16(body, true);
    }
    match std::str::from_utf8(bytes) {
        Ok(text) => Ok(Cow::Borrowed(text)),
        Err(error) => {
            let declaration_end = bytes
                .iter()
                .take(200)
                .position(|&byte| byte == b'>')
                .unwrap_or(0);
            let declaration = String::from_utf8_lossy(&bytes[..declaration_end]).to_lowercase();
            let latin1 = ["iso-8859-1", "latin1", "latin-1", "iso8859-1"]
                .iter()
                .any(|name| declaration.contains(name));
            if declaration.starts_with("<?xml") && latin1 {
                // ISO-8859-1 maps each byte to the code point of the same value.
                Ok(Cow::Owned(bytes.iter().map(|&byte| byte as char).collect()))
            } else {
                Err(malformed(
                    error.valid_up_to(),
                    "not UTF-8 text; Ambit reads MusicXML in UTF-8, UTF-16 (with a \
                     byte-order mark) or declared ISO-8859-1"
                        .into(),
                ))
            }
        }
    }
}
