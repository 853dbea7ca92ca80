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
    DATABASE_FILE, Library, LibraryError, MAX_FILE_BYTES, RECORDINGS_DIR, SCORES_DIR,
    create_private_dir, create_private_file, now_timestamp, schema,
};

/// The manifest's format name, so another zip is not taken for a backup.
pub const BACKUP_FORMAT: &str = "ambit-library-backup";
const MANIFEST: &str = "manifest.json";
/// Largest manifest read (a library of 100,000 files is about 15 MB).
const MAX_MANIFEST_BYTES: u64 = 64 * 1024 * 1024;
/// Most bytes a restore writes (all entries together; chosen here: far
/// above a choir's library of two-minute auditions, and refused before
/// anything is written). Each recording or score is also at most
/// [`super::MAX_FILE_BYTES`], as when it was added.
pub const MAX_RESTORE_BYTES: u64 = 64 << 30;

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

fn missing_entry(backup: &Path, entry: &str) -> LibraryError {
    backup_error(
        backup,
        format!("{entry}: listed in manifest.json but missing (truncated?)"),
    )
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
        // The snapshot is staged in the library (swept at the next open if
        // this process is killed), or beside the output when the library
        // is read-only.
        let staging_parent = match (&self.read_only, out.parent()) {
            (Some(_), Some(parent)) if !parent.as_os_str().is_empty() => parent.to_path_buf(),
            (Some(_), _) => PathBuf::from("."),
            (None, _) => self.folder.clone(),
        };
        let staging = tempdir_in(&staging_parent, "backup")?;
        let snapshot = staging.join(DATABASE_FILE);
        if let Err(error) = self
            .conn
            .execute("VACUUM INTO ?1", [snapshot.to_string_lossy().as_ref()])
        {
            let _ = std::fs::remove_dir_all(&staging);
            return Err(self.db_error(error));
        }
        // The files to include are those the snapshot refers to.
        let snapshot_files = (|| {
            let copy = rusqlite::Connection::open(&snapshot).map_err(|e| self.db_error(e))?;
            let version: i64 = copy
                .query_row("PRAGMA user_version", [], |row| row.get(0))
                .map_err(|e| self.db_error(e))?;
            // Nothing from outside the library goes into a backup.
            let files = self.stored_files(&copy)?;
            Ok::<_, LibraryError>((version, files))
        })();
        let (schema_version, files) = match snapshot_files {
            Ok(found) => found,
            Err(error) => {
                let _ = std::fs::remove_dir_all(&staging);
                return Err(error);
            }
        };
        let temp_out = super::singers::partial_path(out);
        let _pending = self.pending(&temp_out);
        let result = (|| {
            let mut zip = zip::ZipWriter::new(create_private_file(&temp_out)?);
            let options = SimpleFileOptions::default()
                .compression_method(zip::CompressionMethod::Deflated)
                .large_file(true);
            let mut entries = Vec::new();
            let mut sources: Vec<(String, PathBuf)> =
                vec![(DATABASE_FILE.to_string(), snapshot.clone())];
            sources.extend(files.iter().cloned());
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

    /// Reads and checks a backup's manifest against the zip before anything
    /// is written: format and schema version, entry names, and sizes within
    /// the restore budget ([`MAX_RESTORE_BYTES`], [`MAX_FILE_BYTES`] per
    /// recording or score, the free space of the target's disk). The sizes
    /// the zip declares must agree with the manifest's; while unpacking the
    /// bytes are counted, so neither declaration is trusted alone.
    fn check_backup(
        backup: &Path,
        folder: &Path,
    ) -> Result<(zip::ZipArchive<File>, BackupManifest), LibraryError> {
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
        let mut total_bytes = 0u64;
        for entry in &manifest.entries {
            if !safe_entry(&entry.path) {
                return Err(backup_error(
                    backup,
                    format!("manifest.json: `{}` is not a library file name", entry.path),
                ));
            }
            if entry.path != DATABASE_FILE && entry.bytes > MAX_FILE_BYTES {
                return Err(backup_error(
                    backup,
                    format!(
                        "{}: {} bytes, more than the library keeps for one file ({MAX_FILE_BYTES} bytes); nothing was written",
                        entry.path, entry.bytes
                    ),
                ));
            }
            total_bytes = total_bytes.saturating_add(entry.bytes);
            let declared = archive
                .by_name(&entry.path)
                .map(|file| file.size())
                .map_err(|_| missing_entry(backup, &entry.path))?;
            if declared != entry.bytes {
                return Err(backup_error(
                    backup,
                    format!(
                        "{}: the zip says {declared} bytes, manifest.json says {}: the backup is damaged or was changed; nothing was written",
                        entry.path, entry.bytes
                    ),
                ));
            }
        }
        if total_bytes > MAX_RESTORE_BYTES {
            return Err(backup_error(
                backup,
                format!(
                    "would write {total_bytes} bytes, more than a restore writes ({MAX_RESTORE_BYTES} bytes); nothing was written"
                ),
            ));
        }
        if let Some(free) = free_bytes(folder)
            && total_bytes > free
        {
            return Err(backup_error(
                backup,
                format!(
                    "would write {total_bytes} bytes but {} has {free} bytes free; nothing was written",
                    folder.display()
                ),
            ));
        }
        Ok((archive, manifest))
    }

    /// Unpacks a checked backup into `staging`, comparing every entry's
    /// bytes and SHA-256 with the manifest as it goes.
    fn unpack_checked(
        backup: &Path,
        archive: &mut zip::ZipArchive<File>,
        manifest: &BackupManifest,
        staging: &Path,
    ) -> Result<(), LibraryError> {
        for entry in &manifest.entries {
            let mut reader = archive
                .by_name(&entry.path)
                .map_err(|_| missing_entry(backup, &entry.path))?;
            let target = staging.join(&entry.path);
            if let Some(parent) = target.parent() {
                create_private_dir(parent)?;
            }
            let mut out = create_private_file(&target)?;
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
        Ok(())
    }

    /// Restores a backup into `folder` (created if missing), replacing its
    /// database. Everything is checked first; on any error the library is
    /// left as it was. Recordings the restored database does not refer to
    /// are removed afterwards (delete means gone, also across a restore).
    pub fn restore(backup: &Path, folder: &Path) -> Result<BackupManifest, LibraryError> {
        create_private_dir(folder)?;
        let (mut archive, manifest) = Library::check_backup(backup, folder)?;
        let staging = tempdir_in(folder, "restore")?;
        let result = Library::unpack_checked(backup, &mut archive, &manifest, &staging)
            .and_then(|()| Library::restore_from_staging(backup, folder, &staging, manifest));
        let _ = std::fs::remove_dir_all(&staging);
        result
    }

    fn restore_from_staging(
        backup: &Path,
        folder: &Path,
        staging: &Path,
        manifest: BackupManifest,
    ) -> Result<BackupManifest, LibraryError> {
        // The staged database must be a sound library before it replaces ours;
        // migrating it here keeps the swap below a plain rename.
        {
            let staged = Library::open_inner(staging, false).map_err(|error| {
                backup_error(backup, format!("library.sqlite in the backup: {error}"))
            })?;
            staged.check_integrity().map_err(|error| {
                backup_error(backup, format!("library.sqlite in the backup: {error}"))
            })?;
            // A database naming files outside the library is refused here,
            // and again wherever a name is used.
            staged.check_stored_names().map_err(|error| {
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
            create_private_dir(&to_dir)?;
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

/// A fresh hidden private folder inside `parent` (same file system, so
/// renames work), named `.<purpose>-<pid>-<nanos>` so that the next open
/// can tell a killed process's leftover from one still at work.
fn tempdir_in(parent: &Path, purpose: &str) -> Result<PathBuf, LibraryError> {
    let dir = parent.join(format!(
        ".{purpose}-{}-{}",
        std::process::id(),
        super::unique_suffix()
    ));
    create_private_dir(&dir)?;
    Ok(dir)
}

/// Free bytes for this user on the disk holding `folder` (`statvfs`), or
/// `None` where that is not known.
fn free_bytes(folder: &Path) -> Option<u64> {
    #[cfg(unix)]
    {
        use std::os::unix::ffi::OsStrExt as _;
        let path = std::ffi::CString::new(folder.as_os_str().as_bytes()).ok()?;
        // SAFETY: an all-zero statvfs is a valid value to be filled in.
        let mut stats: libc::statvfs = unsafe { std::mem::zeroed() };
        // SAFETY: `path` is NUL-terminated and `stats` is a valid out-pointer.
        if unsafe { libc::statvfs(path.as_ptr(), &mut stats) } != 0 {
            return None;
        }
        #[allow(clippy::unnecessary_cast)] // the field types differ between platforms
        Some((stats.f_bavail as u64).saturating_mul(stats.f_frsize as u64))
    }
    #[cfg(not(unix))]
    {
        let _ = folder;
        None
    }
}
