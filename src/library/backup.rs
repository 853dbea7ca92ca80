//! Full backup to one zip file and restore checked by hash.
//!
//! A backup holds `library.sqlite` (a consistent snapshot made with
//! `VACUUM INTO` while others may be writing), every referenced recording
//! and score, and `manifest.json` listing each entry with its size and
//! SHA-256. Restore checks every entry against the manifest, and the
//! database's integrity and schema version, before it touches the library:
//! a truncated or tampered backup is an error and the library is unchanged.

use std::collections::HashMap;
use std::fs::File;
use std::io::{Read, Write};
use std::path::{Path, PathBuf};

use serde::{Deserialize, Serialize};
use sha2::{Digest, Sha256};
use zip::write::SimpleFileOptions;

use super::{
    DATABASE_FILE, Library, LibraryError, RECORDINGS_DIR, SCORES_DIR, now_timestamp, schema,
};

/// The manifest's format name, so another zip is not taken for a backup.
pub const BACKUP_FORMAT: &str = "ambit-library-backup";
const MANIFEST: &str = "manifest.json";
/// Largest manifest read (a library of 100,000 files is about 15 MB).
const MAX_MANIFEST_BYTES: u64 = 64 * 1024 * 1024;

/// One file in a backup.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct ManifestEntry {
    pub path: String,
    pub bytes: u64,
    pub sha256: String,
}

/// What a backup holds.
#[derive(Debug, Clone, PartialEq, Eq, Serialize, Deserialize)]
pub struct BackupManifest {
    pub format: String,
    pub format_version: u32,
    pub schema_version: i64,
    pub created_at: String,
    pub entries: Vec<ManifestEntry>,
}

fn backup_error(file: &Path, message: impl Into<String>) -> LibraryError {
    LibraryError::Backup {
        file: file.to_path_buf(),
        message: message.into(),
    }
}

/// Entry names are `library.sqlite`, `recordings/<name>` or `scores/<name>`
/// with a plain file name: nothing can be written outside the library.
fn safe_entry(path: &str) -> bool {
    if path == DATABASE_FILE {
        return true;
    }
    match path.split_once('/') {
        Some((dir, name)) => {
            (dir == RECORDINGS_DIR || dir == SCORES_DIR)
                && !name.is_empty()
                && !name.starts_with('.')
                && name
                    .chars()
                    .all(|c| c.is_ascii_alphanumeric() || c == '.' || c == '_' || c == '-')
        }
        None => false,
    }
}

impl Library {
    /// Writes a full backup to `out` (written to a temp file, then renamed).
    pub fn backup(&self, out: &Path) -> Result<BackupManifest, LibraryError> {
        let io = |file: &Path| {
            let file = file.to_path_buf();
            move |source| LibraryError::Io { file, source }
        };
        let staging = tempdir_in(&self.folder, "backup")?;
        let snapshot = staging.join(DATABASE_FILE);
        self.conn
            .execute("VACUUM INTO ?1", [snapshot.to_string_lossy().as_ref()])
            .map_err(|e| self.db_error(e))?;
        // The files to include are those the snapshot refers to.
        let (schema_version, files) = {
            let copy = rusqlite::Connection::open(&snapshot).map_err(|e| self.db_error(e))?;
            let version: i64 = copy
                .query_row("PRAGMA user_version", [], |row| row.get(0))
                .map_err(|e| self.db_error(e))?;
            let mut files = Vec::new();
            for (dir, sql) in [
                (
                    RECORDINGS_DIR,
                    "SELECT file_name FROM recordings ORDER BY file_name",
                ),
                (
                    SCORES_DIR,
                    "SELECT DISTINCT file_name FROM pieces ORDER BY file_name",
                ),
            ] {
                let mut statement = copy.prepare(sql).map_err(|e| self.db_error(e))?;
                let names = statement
                    .query_map([], |row| row.get::<_, String>(0))
                    .map_err(|e| self.db_error(e))?
                    .collect::<Result<Vec<_>, _>>()
                    .map_err(|e| self.db_error(e))?;
                files.extend(names.into_iter().map(|name| (dir, name)));
            }
            (version, files)
        };
        let temp_out = out.with_extension("partial");
        let result =
            (|| {
                let mut zip = zip::ZipWriter::new(File::create(&temp_out).map_err(io(&temp_out))?);
                let options = SimpleFileOptions::default()
                    .compression_method(zip::CompressionMethod::Deflated)
                    .large_file(true);
                let mut entries = Vec::new();
                let mut sources: Vec<(String, PathBuf)> =
                    vec![(DATABASE_FILE.to_string(), snapshot.clone())];
                sources.extend(files.iter().map(|(dir, name)| {
                    (format!("{dir}/{name}"), self.folder.join(dir).join(name))
                }));
                for (entry, source) in sources {
                    let mut file = File::open(&source).map_err(io(&source))?;
                    zip.start_file(entry.as_str(), options)
                        .map_err(|error| backup_error(&temp_out, error.to_string()))?;
                    let mut hasher = Sha256::new();
                    let mut buffer = vec![0u8; 64 * 1024];
                    let mut bytes = 0u64;
                    loop {
                        let read = file.read(&mut buffer).map_err(io(&source))?;
                        if read == 0 {
                            break;
                        }
                        let chunk = buffer.get(..read).unwrap_or_default();
                        hasher.update(chunk);
                        zip.write_all(chunk).map_err(io(&temp_out))?;
                        bytes += read as u64;
                    }
                    entries.push(ManifestEntry {
                        path: entry,
                        bytes,
                        sha256: super::hex(&hasher.finalize()),
                    });
                }
                let manifest = BackupManifest {
                    format: BACKUP_FORMAT.into(),
                    format_version: 1,
                    schema_version,
                    created_at: now_timestamp(),
                    entries,
                };
                let text = serde_json::to_vec_pretty(&manifest)
                    .map_err(|error| backup_error(&temp_out, error.to_string()))?;
                zip.start_file(MANIFEST, options)
                    .map_err(|error| backup_error(&temp_out, error.to_string()))?;
                zip.write_all(&text).map_err(io(&temp_out))?;
                let file = zip
                    .finish()
                    .map_err(|error| backup_error(&temp_out, error.to_string()))?;
                file.sync_all().map_err(io(&temp_out))?;
                std::fs::rename(&temp_out, out).map_err(io(out))?;
                Ok(manifest)
            })();
        if result.is_err() {
            let _ = std::fs::remove_file(&temp_out);
        }
        let _ = std::fs::remove_dir_all(&staging);
        result
    }

    /// Checks a backup entry by entry and unpacks it into a staging folder.
    fn unpack_checked(backup: &Path, staging: &Path) -> Result<BackupManifest, LibraryError> {
        let file = File::open(backup).map_err(|source| LibraryError::Io {
            file: backup.to_path_buf(),
            source,
        })?;
        let mut archive = zip::ZipArchive::new(file).map_err(|error| {
            backup_error(backup, format!("not a readable backup (zip): {error}"))
        })?;
        let manifest: BackupManifest = {
            let entry = archive.by_name(MANIFEST).map_err(|_| {
                backup_error(backup, "no manifest.json: not an Ambit library backup")
            })?;
            let mut text = Vec::new();
            entry
                .take(MAX_MANIFEST_BYTES)
                .read_to_end(&mut text)
                .map_err(|error| backup_error(backup, format!("manifest.json: {error}")))?;
            serde_json::from_slice(&text)
                .map_err(|error| backup_error(backup, format!("manifest.json: {error}")))?
        };
        if manifest.format != BACKUP_FORMAT || manifest.format_version != 1 {
            return Err(backup_error(
                backup,
                format!(
                    "manifest.json: format {} version {} is not one this Ambit reads",
                    manifest.format, manifest.format_version
                ),
            ));
        }
        if manifest.schema_version > schema::LATEST_VERSION {
            return Err(backup_error(
                backup,
                format!(
                    "made by a newer Ambit (schema version {}; this Ambit reads up to {})",
                    manifest.schema_version,
                    schema::LATEST_VERSION
                ),
            ));
        }
        let listed: HashMap<&str, &ManifestEntry> = manifest
            .entries
            .iter()
            .map(|entry| (entry.path.as_str(), entry))
            .collect();
        if !listed.contains_key(DATABASE_FILE) {
            return Err(backup_error(
                backup,
                "manifest.json lists no library.sqlite",
            ));
        }
        let names = archive
            .file_names()
            .map(|name| name.map(|name| name.into_owned()))
            .collect::<Result<Vec<String>, _>>()
            .map_err(|error| backup_error(backup, format!("entry names: {error}")))?;
        for name in names {
            if name != MANIFEST && !listed.contains_key(name.as_str()) {
                return Err(backup_error(
                    backup,
                    format!("{name}: in the zip but not in manifest.json (tampered?)"),
                ));
            }
        }
        for entry in &manifest.entries {
            if !safe_entry(&entry.path) {
                return Err(backup_error(
                    backup,
                    format!("manifest.json: `{}` is not a library file name", entry.path),
                ));
            }
            let mut reader = archive.by_name(&entry.path).map_err(|_| {
                backup_error(
                    backup,
                    format!(
                        "{}: listed in manifest.json but missing (truncated?)",
                        entry.path
                    ),
                )
            })?;
            let target = staging.join(&entry.path);
            if let Some(parent) = target.parent() {
                std::fs::create_dir_all(parent).map_err(|source| LibraryError::Io {
                    file: parent.to_path_buf(),
                    source,
                })?;
            }
            let mut out = File::create(&target).map_err(|source| LibraryError::Io {
                file: target.clone(),
                source,
            })?;
            let mut hasher = Sha256::new();
            let mut buffer = vec![0u8; 64 * 1024];
            let mut bytes = 0u64;
            // Read one byte past the listed size to notice a longer entry.
            let mut limited = (&mut reader).take(entry.bytes.saturating_add(1));
            loop {
                let read = limited.read(&mut buffer).map_err(|error| {
                    backup_error(
                        backup,
                        format!("{}: cannot be read at byte {bytes}: {error}", entry.path),
                    )
                })?;
                if read == 0 {
                    break;
                }
                let chunk = buffer.get(..read).unwrap_or_default();
                hasher.update(chunk);
                out.write_all(chunk).map_err(|source| LibraryError::Io {
                    file: target.clone(),
                    source,
                })?;
                bytes += read as u64;
            }
            let sha = super::hex(&hasher.finalize());
            if bytes != entry.bytes || sha != entry.sha256 {
                return Err(backup_error(
                    backup,
                    format!(
                        "{}: does not match manifest.json ({} bytes, SHA-256 {}; expected {} bytes, {}): the backup is damaged or was changed",
                        entry.path, bytes, sha, entry.bytes, entry.sha256
                    ),
                ));
            }
            out.sync_all().map_err(|source| LibraryError::Io {
                file: target.clone(),
                source,
            })?;
        }
        Ok(manifest)
    }

    /// Restores a backup into `folder` (created if missing), replacing its
    /// database. Everything is checked first; on any error the library is
    /// left as it was. Recordings the restored database does not refer to
    /// are removed afterwards (delete means gone, also across a restore).
    pub fn restore(backup: &Path, folder: &Path) -> Result<BackupManifest, LibraryError> {
        std::fs::create_dir_all(folder).map_err(|source| LibraryError::Io {
            file: folder.to_path_buf(),
            source,
        })?;
        let staging = tempdir_in(folder, "restore")?;
        let result = Library::restore_from_staging(backup, folder, &staging);
        let _ = std::fs::remove_dir_all(&staging);
        result
    }

    fn restore_from_staging(
        backup: &Path,
        folder: &Path,
        staging: &Path,
    ) -> Result<BackupManifest, LibraryError> {
        let manifest = Library::unpack_checked(backup, staging)?;
        // The staged database must be a sound library before it replaces ours;
        // migrating it here keeps the swap below a plain rename.
        {
            let staged = Library::open_inner(staging, false).map_err(|error| {
                backup_error(backup, format!("library.sqlite in the backup: {error}"))
            })?;
            staged.check_integrity().map_err(|error| {
                backup_error(backup, format!("library.sqlite in the backup: {error}"))
            })?;
            staged
                .conn
                .execute_batch("PRAGMA wal_checkpoint(TRUNCATE); PRAGMA journal_mode = DELETE;")
                .map_err(|e| staged.db_error(e))?;
        }
        let database = folder.join(DATABASE_FILE);
        // Fold the live library's WAL into its file so nothing is left in a
        // side file that could be paired with the new database.
        if database.is_file() {
            let current = rusqlite::Connection::open(&database)
                .map_err(|source| super::database_error(&database, source))?;
            current
                .busy_timeout(super::BUSY_TIMEOUT)
                .and_then(|_| current.execute_batch("PRAGMA wal_checkpoint(TRUNCATE);"))
                .map_err(|source| super::database_error(&database, source))?;
        }
        for dir in [RECORDINGS_DIR, SCORES_DIR] {
            let from_dir = staging.join(dir);
            let to_dir = folder.join(dir);
            std::fs::create_dir_all(&to_dir).map_err(|source| LibraryError::Io {
                file: to_dir.clone(),
                source,
            })?;
            let Ok(entries) = std::fs::read_dir(&from_dir) else {
                continue;
            };
            for entry in entries.flatten() {
                let target = to_dir.join(entry.file_name());
                if !target.is_file() {
                    std::fs::rename(entry.path(), &target).map_err(|source| LibraryError::Io {
                        file: target.clone(),
                        source,
                    })?;
                }
            }
            super::sync_dir(&to_dir);
        }
        for side in ["-wal", "-shm"] {
            let _ = std::fs::remove_file(folder.join(format!("{DATABASE_FILE}{side}")));
        }
        std::fs::rename(staging.join(DATABASE_FILE), &database).map_err(|source| {
            LibraryError::Io {
                file: database.clone(),
                source,
            }
        })?;
        super::sync_dir(folder);
        let library = Library::open(folder)?;
        library.sweep_older_than(std::time::Duration::ZERO)?;
        Ok(manifest)
    }
}

/// A fresh hidden folder inside `parent` (same file system, so renames work).
fn tempdir_in(parent: &Path, purpose: &str) -> Result<PathBuf, LibraryError> {
    let nanos = std::time::SystemTime::now()
        .duration_since(std::time::UNIX_EPOCH)
        .map(|elapsed| elapsed.subsec_nanos())
        .unwrap_or(0);
    let dir = parent.join(format!(".{purpose}-{}-{nanos}", std::process::id()));
    std::fs::create_dir_all(&dir).map_err(|source| LibraryError::Io {
        file: dir.clone(),
        source,
    })?;
    Ok(dir)
}
