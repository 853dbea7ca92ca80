//! The HTML report of a programme plan: one self-contained file (inline SVG
//! and CSS, no scripts, no network) that a choir director can read on
//! screen or print.
//!
//! `view.rs` turns a [`ProgrammePlan`] into a view model (chart geometry in
//! pixels, colours, note names, text); `templates/report.html` is an askama
//! template that lays the view model out. Askama escapes every value it
//! inserts into the HTML, so a singer called `<script>` is shown, never run.
//! [`write_report`] renders first and writes through a temporary file in the
//! same folder, renamed into place, so a failure never leaves half a report.
//!
//! Architecture invariant: the report computes no figure of the analysis.
//! Every number it shows comes from `fit`, `placement`, `tessitura`,
//! `transpose` or the roster, through [`ProgrammePlan`]; this module only
//! lays them out (positions, colours, names) and escapes all text.

pub mod palette;
mod view;

use std::io::Write as _;
use std::path::{Path, PathBuf};

use askama::Template;
use thiserror::Error;

use crate::plan::ProgrammePlan;

/// What one report shows: a plan, a title and a line on where it came from.
#[derive(Debug, Clone, Copy)]
pub struct ReportDocument<'a> {
    /// e.g. "Wrenhaven Harbour Choir: programme plan".
    pub title: &'a str,
    /// One sentence on the source of the figures.
    pub source: &'a str,
    pub plan: &'a ProgrammePlan,
}

#[derive(Debug, Error)]
pub enum ReportError {
    #[error("rendering the report: {0}")]
    Render(#[from] askama::Error),
    #[error("{}: cannot write the file: {source}", path.display())]
    Write {
        path: PathBuf,
        #[source]
        source: std::io::Error,
    },
}

/// The report as one HTML document.
pub fn render_html(document: &ReportDocument) -> Result<String, ReportError> {
    Ok(view::page(document).render()?)
}

/// Renders the report and writes it to `path`, whole or not at all.
pub fn write_report(path: &Path, document: &ReportDocument) -> Result<(), ReportError> {
    let html = render_html(document)?;
    write_atomically(path, html.as_bytes())
}

/// Writes `bytes` to a temporary file in `path`'s folder, then renames it to
/// `path`: readers see the old file or the whole new one, never a part.
pub fn write_atomically(path: &Path, bytes: &[u8]) -> Result<(), ReportError> {
    let error = |source| ReportError::Write {
        path: path.to_path_buf(),
        source,
    };
    let folder = match path.parent() {
        Some(parent) if !parent.as_os_str().is_empty() => parent,
        _ => Path::new("."),
    };
    let mut builder = tempfile::Builder::new();
    builder.prefix(".ambit-").suffix(".tmp");
    // A report or roster is an ordinary document: readable by others, as a
    // file the user saved would be (temporary files default to owner-only).
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt as _;
        builder.permissions(std::fs::Permissions::from_mode(0o644));
    }
    let mut file = builder.tempfile_in(folder).map_err(error)?;
    file.write_all(bytes).map_err(error)?;
    file.as_file().sync_all().map_err(error)?;
    file.persist(path).map_err(|failure| error(failure.error))?;
    Ok(())
}
