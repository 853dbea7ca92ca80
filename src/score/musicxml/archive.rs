//! Compressed MusicXML (`.mxl`): a zip archive whose `META-INF/container.xml`
//! names the score's root file.
//!
//! Invariant: no size written in the archive is trusted. Every entry is read
//! through `Read::take` with the remaining budget, so a zip bomb costs at most
//! [`MAX_DECOMPRESSED_BYTES`] of memory, and only two entries are ever inflated.

use std::io::{Cursor, Read};
use std::path::Path;

use crate::score::{Location, ScoreError};

/// Most bytes inflated from one archive, all entries together.
pub const MAX_DECOMPRESSED_BYTES: u64 = 64 * 1024 * 1024;
/// Most entries an archive may list. A `.mxl` holds the score, the container
/// and perhaps a few images.
pub const MAX_ARCHIVE_ENTRIES: usize = 1000;
/// Largest inflated/compressed ratio accepted for one entry once it is past
/// 1 MiB. XML compresses about 10–30×; deflate's ceiling is about 1032×, so
/// anything near it is a bomb.
pub const MAX_COMPRESSION_RATIO: u64 = 200;

const CONTAINER: &str = "META-INF/container.xml";

/// Returns the root file's entry name and its bytes.
pub fn extract_score(path: &Path, bytes: &[u8]) -> Result<(String, Vec<u8>), ScoreError> {
    let malformed = |location: Location, message: String| ScoreError::Malformed {
        file: path.to_path_buf(),
        location,
        message,
    };
    let mut archive = zip::ZipArchive::new(Cursor::new(bytes)).map_err(|error| {
        if error.to_string().contains("EOCD") {
            // The zip directory sits at the end; without it the file was cut short.
            malformed(
                Location::ByteOffset(bytes.len() as u64),
                "no zip central directory before the end of the file (truncated .mxl?)".into(),
            )
        } else {
            malformed(
                Location::Whole,
                format!("not a readable zip archive (.mxl): {error}"),
            )
        }
    })?;
    if archive.len() > MAX_ARCHIVE_ENTRIES {
        return Err(ScoreError::TooLarge {
            file: path.to_path_buf(),
            message: format!(
                "the archive lists {} entries; a .mxl needs a handful (limit {MAX_ARCHIVE_ENTRIES})",
                archive.len()
            ),
        });
    }
    let mut budget = MAX_DECOMPRESSED_BYTES;
    let root = match archive.index_for_name(CONTAINER) {
        Some(index) => {
            let container = read_entry(path, &mut archive, index, &mut budget)?;
            Some(root_file(path, &container)?)
        }
        None => None,
    };
    let root = match root {
        Some(root) => root,
        None => archive
            .file_names()
            .filter_map(Result::ok)
            .filter(|name| {
                !name.contains('/')
                    && (name.ends_with(".musicxml") || name.ends_with(".xml"))
                    && name != "container.xml"
            })
            .map(|name| name.into_owned())
            .min()
            .ok_or_else(|| {
                malformed(
                    Location::Whole,
                    format!(
                        "the archive has no {CONTAINER} and no .musicxml or .xml file at its top level"
                    ),
                )
            })?,
    };
    let index = archive.index_for_name(&root).ok_or_else(|| {
        malformed(
            Location::ZipEntry(CONTAINER.into()),
            format!("the container names root file {root}, which is not in the archive"),
        )
    })?;
    let score = read_entry(path, &mut archive, index, &mut budget)?;
    Ok((root, score))
}

/// Inflates one entry within the remaining byte budget.
fn read_entry(
    path: &Path,
    archive: &mut zip::ZipArchive<Cursor<&[u8]>>,
    index: usize,
    budget: &mut u64,
) -> Result<Vec<u8>, ScoreError> {
    let mut entry = archive.by_index(index).map_err(|error| match error {
        zip::result::ZipError::UnsupportedArchive(what) => ScoreError::Unsupported {
            file: path.to_path_buf(),
            location: Location::ZipEntry(format!("#{index}")),
            message: format!("the archive entry uses a zip feature Ambit does not read: {what}"),
        },
        error => ScoreError::Malformed {
            file: path.to_path_buf(),
            location: Location::ZipEntry(format!("#{index}")),
            message: format!("cannot open the archive entry: {error}"),
        },
    })?;
    let name = entry
        .name()
        .map(|name| name.into_owned())
        .unwrap_or_else(|_| format!("#{index}"));
    // MusicXML 4.0, "Compressed MusicXML files": entries are deflated or
    // stored. Anything else (bzip2, LZMA, Zstandard…) is named as such, not
    // mistaken for damage.
    let method = entry.compression();
    if !matches!(
        method,
        zip::CompressionMethod::Stored | zip::CompressionMethod::Deflated
    ) {
        return Err(ScoreError::Unsupported {
            file: path.to_path_buf(),
            location: Location::ZipEntry(name),
            message: format!(
                "the archive entry uses {method:?} compression; Ambit reads .mxl entries that \
                 are deflated or stored (as MusicXML specifies): re-save the file from the \
                 notation program"
            ),
        });
    }
    let compressed = entry.compressed_size().max(1);
    let mut bytes = Vec::new();
    // One byte over the budget tells "exactly at the limit" from "beyond it".
    let read = (&mut entry)
        .take(budget.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(|error| ScoreError::Malformed {
            file: path.to_path_buf(),
            location: Location::ZipEntry(name.clone()),
            message: format!("cannot inflate the archive entry (damaged or truncated): {error}"),
        })? as u64;
    if read > *budget {
        return Err(ScoreError::TooLarge {
            file: path.to_path_buf(),
            message: format!(
                "archive entry {name} inflates beyond {MAX_DECOMPRESSED_BYTES} bytes (zip bomb?)"
            ),
        });
    }
    if read > 1024 * 1024 && read / compressed > MAX_COMPRESSION_RATIO {
        return Err(ScoreError::TooLarge {
            file: path.to_path_buf(),
            message: format!(
                "archive entry {name} inflates {read} bytes from {compressed}, a ratio above \
                 {MAX_COMPRESSION_RATIO}:1 (zip bomb?)"
            ),
        });
    }
    *budget -= read;
    Ok(bytes)
}

/// The first `<rootfile full-path>` in the container (MusicXML 4.0 §
/// "Compressed MusicXML files": the first rootfile is the score).
fn root_file(path: &Path, container: &[u8]) -> Result<String, ScoreError> {
    let location = Location::ZipEntry(CONTAINER.into());
    let malformed = |message: String| ScoreError::Malformed {
        file: path.to_path_buf(),
        location: location.clone(),
        message,
    };
    let text = std::str::from_utf8(container.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(container))
        .map_err(|error| malformed(format!("not UTF-8 at byte {}", error.valid_up_to())))?;
    super::prescan::prescan(text.as_bytes()).map_err(|_| {
        malformed("nested too deeply, or has a DOCTYPE internal subset (entities)".into())
    })?;
    let options = roxmltree::ParsingOptions {
        allow_dtd: true,
        nodes_limit: 100_000,
        ..roxmltree::ParsingOptions::default()
    };
    let document = roxmltree::Document::parse_with_options(text, options)
        .map_err(|error| malformed(format!("XML error: {error}")))?;
    document
        .descendants()
        .find(|node| node.has_tag_name("rootfile"))
        .and_then(|node| node.attribute("full-path"))
        .map(str::to_string)
        .ok_or_else(|| malformed("no <rootfile full-path=…> in the container".into()))
}
