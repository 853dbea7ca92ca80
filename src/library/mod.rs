//! Choir library: a local SQLite store of singers, typed-in ranges,
//! auditions with their recordings and measured profiles, pieces,
//! programmes and placement scenarios, in one folder.
//!
//! Layout of a library folder:
//! ```text
//! PATH/library.sqlite        the database (WAL mode, foreign keys on)
//! PATH/recordings/<sha256>.<ext>   audition recordings, one file per content
//! PATH/scores/<sha256>.<ext>       score files of the pieces
//! ```
//!
//! Files are named by the SHA-256 of their content, so the same recording
//! used by two auditions is stored once; a file is deleted when no row
//! refers to it any more. Files are written (temp file, fsync, rename)
//! before the transaction that refers to them, and deleted only after the
//! transaction that drops the last reference has committed. A crash between
//! the two leaves an unreferenced file, which [`Library::sweep`] (run on
//! every open) removes.
//!
//! Every file name read from the database is checked where it is used: it
//! must be the bare SHA-256 name of its row inside its folder, else the
//! operation stops with an error naming the row ([`LibraryError::StoredName`]).
//! A restored backup whose database names anything else is refused.
//!
//! Opening runs `PRAGMA quick_check`. A damaged database, or a folder this
//! user cannot write, is opened read-only ([`Library::read_only_reason`]);
//! every write is then refused with [`LibraryError::ReadOnly`]. Deleted rows
//! are overwritten (`PRAGMA secure_delete`), files are created 0600 and
//! folders 0700 on Unix, and leftovers of a killed backup, restore or export
//! are swept at the next open.
//!
//! Architecture invariant: the library stores and retrieves; it analyses
//! nothing. Profiles, part analyses and placements arrive as finished values
//! from the engine (called by the CLI or the app) and are kept as JSON, so
//! the store does not depend on the solver's or the analysers' internals.

mod auditions;
mod backup;
mod pieces;
pub mod schema;
mod singers;

use std::collections::HashSet;
use std::io::Read;
use std::path::{Path, PathBuf};
use std::time::{Duration, SystemTime, UNIX_EPOCH};

use rusqlite::{Connection, ErrorCode, OpenFlags, TransactionBehavior};
use sha2::{Digest, Sha256};
use thiserror::Error;

pub use auditions::{AuditionInput, AuditionRecord, HistoryEntry, RecordingInput};
pub use backup::{BackupManifest, ManifestEntry};
pub use pieces::{PieceInput, PieceRecord, ScenarioInput, ScenarioRecord};
pub use singers::{Change, ImportPlan, SingerRecord, SingerSource};

/// The database file inside a library folder.
pub const DATABASE_FILE: &str = "library.sqlite";
/// Folder of recordings inside a library folder.
pub const RECORDINGS_DIR: &str = "recordings";
/// Folder of score files inside a library folder.
pub const SCORES_DIR: &str = "scores";
/// Environment variable naming the library folder.
pub const LIBRARY_ENV: &str = "AMBIT_LIBRARY";

/// How long a writer waits for another writer before giving up.
pub const BUSY_TIMEOUT: Duration = Duration::from_secs(5);

/// Unreferenced files younger than this are left alone by the sweep: they
/// may belong to a transaction another process has not committed yet.
pub const SWEEP_GRACE: Duration = Duration::from_secs(10 * 60);

/// Largest recording or score copied into the library (1 GiB).
pub const MAX_FILE_BYTES: u64 = 1 << 30;

/// The analysis version stored beside every profile and part analysis.
pub const ANALYSIS_VERSION: &str = concat!("ambit ", env!("CARGO_PKG_VERSION"));

/// Everything that can go wrong with a library. Messages name the file.
#[derive(Debug, Error)]
pub enum LibraryError {
    #[error("{}: {source}", file.display())]
    Io {
        file: PathBuf,
        #[source]
        source: std::io::Error,
    },
    #[error("{}: not an Ambit library (not an SQLite database)", file.display())]
    NotSqlite { file: PathBuf },
    #[error(
        "{}: made by a newer Ambit (schema version {found}; this Ambit reads up to {supported}); update Ambit to open it",
        file.display()
    )]
    NewerSchema {
        file: PathBuf,
        found: i64,
        supported: i64,
    },
    #[error("{}: no library here; create one with `ambit library init`", folder.display())]
    Missing { folder: PathBuf },
    #[error(
        "{}: the library is busy (another Ambit window or command is writing to it); try again in a moment",
        file.display()
    )]
    Busy { file: PathBuf },
    #[error("{}: database error: {source}", file.display())]
    Database {
        file: PathBuf,
        #[source]
        source: rusqlite::Error,
    },
    #[error("{}: cannot migrate the schema: {message}", file.display())]
    Migration { file: PathBuf, message: String },
    #[error(
        "{}: damaged: integrity check says {message}; restore your latest backup with `ambit library restore BACKUP.zip` (see docs/DATA.md)",
        file.display()
    )]
    Damaged { file: PathBuf, message: String },
    #[error(
        "{}: {table} row {row}: the stored file name `{name}` is not the bare SHA-256 name of a file inside the library's {dir}/ folder; refusing to use it (the database was changed outside Ambit)",
        file.display()
    )]
    StoredName {
        file: PathBuf,
        table: &'static str,
        row: String,
        dir: &'static str,
        name: String,
    },
    #[error("{}: the library is open read-only ({reason}); nothing was changed", file.display())]
    ReadOnly { file: PathBuf, reason: String },
    #[error(transparent)]
    Roster(#[from] crate::roster::RosterError),
    #[error("{}: {message}", file.display())]
    Backup { file: PathBuf, message: String },
    #[error("{}: no singer called \"{name}\"", file.display())]
    UnknownSinger { file: PathBuf, name: String },
    #[error("{}: {what} \"{name}\" not found", file.display())]
    NotFound {
        file: PathBuf,
        what: &'static str,
        name: String,
    },
    #[error("{}: {message}", file.display())]
    Invalid { file: PathBuf, message: String },
}

/// Where the library lives: `explicit` (from `--library`), else the
/// `AMBIT_LIBRARY` environment variable, else `Ambit/library` in the OS data
/// directory (e.g. `~/.local/share/ambit/library` on Linux).
pub fn resolve_folder(explicit: Option<&Path>) -> Result<PathBuf, LibraryError> {
    if let Some(path) = explicit {
        return Ok(path.to_path_buf());
    }
    if let Some(path) = std::env::var_os(LIBRARY_ENV).filter(|value| !value.is_empty()) {
        return Ok(PathBuf::from(path));
    }
    directories::ProjectDirs::from("", "", "Ambit")
        .map(|dirs| dirs.data_dir().join("library"))
        .ok_or_else(|| LibraryError::Invalid {
            file: PathBuf::from("."),
            message: format!(
                "no home directory to keep the library in; give --library PATH or set {LIBRARY_ENV}"
            ),
        })
}

/// An open library.
pub struct Library {
    folder: PathBuf,
    database: PathBuf,
    conn: Connection,
    /// Why the library is read-only, when it is (damaged, or a folder this
    /// user cannot write).
    read_only: Option<String>,
}

/// Leftovers of a killed backup, restore or export older than this are
/// swept even when their process id is in use again.
pub const LEFTOVER_GRACE: Duration = Duration::from_secs(24 * 60 * 60);

/// Counts of what a library holds.
#[derive(Debug, Clone, PartialEq, Eq, serde::Serialize, serde::Deserialize)]
pub struct LibraryInfo {
    pub folder: String,
    pub schema_version: i64,
    pub singers: u64,
    pub archived_singers: u64,
    pub auditions: u64,
    pub recordings: u64,
    pub recording_bytes: u64,
    pub pieces: u64,
    pub programmes: u64,
    pub scenarios: u64,
}

impl Library {
    /// Creates the library folder and database if missing, then opens it.
    pub fn create(folder: &Path) -> Result<Library, LibraryError> {
        for dir in [
            folder.to_path_buf(),
            folder.join(RECORDINGS_DIR),
            folder.join(SCORES_DIR),
        ] {
            create_private_dir(&dir)?;
        }
        // Created here (0600) rather than by SQLite, whose files follow the
        // umask; its -wal and -shm files take the database file's mode.
        let database = folder.join(DATABASE_FILE);
        if !database.exists() {
            create_private_file(&database)?;
        }
        Library::open_inner(folder, true)
    }

    /// Opens an existing library, migrating an older schema to this
    /// version. A file that is not SQLite, or is from a newer schema, is an
    /// error and is left untouched.
    pub fn open(folder: &Path) -> Result<Library, LibraryError> {
        if !folder.join(DATABASE_FILE).is_file() {
            return Err(LibraryError::Missing {
                folder: folder.to_path_buf(),
            });
        }
        Library::open_inner(folder, false)
    }

    fn open_inner(folder: &Path, create: bool) -> Result<Library, LibraryError> {
        let database = folder.join(DATABASE_FILE);
        if !create && !is_writable(folder) {
            return Library::open_read_only(
                folder,
                "this user cannot write to the library folder; reading, listing and backing up work"
                    .into(),
            );
        }
        match Library::open_read_write(folder, create) {
            Err(LibraryError::Damaged { message, .. }) if !create => {
                let reason = format!(
                    "the database is damaged (integrity check: {message}); restore your latest backup with `ambit library restore BACKUP.zip` (see docs/DATA.md)"
                );
                Library::open_read_only(folder, reason).map_err(|_| LibraryError::Damaged {
                    file: database.clone(),
                    message,
                })
            }
            other => other,
        }
    }

    fn open_read_write(folder: &Path, create: bool) -> Result<Library, LibraryError> {
        let database = folder.join(DATABASE_FILE);
        let mut flags = OpenFlags::SQLITE_OPEN_READ_WRITE | OpenFlags::SQLITE_OPEN_NO_MUTEX;
        if create {
            flags |= OpenFlags::SQLITE_OPEN_CREATE;
        }
        let damaged = |source: rusqlite::Error| {
            if source.sqlite_error_code() == Some(ErrorCode::DatabaseCorrupt) {
                LibraryError::Damaged {
                    file: database.clone(),
                    message: source.to_string(),
                }
            } else {
                database_error(&database, source)
            }
        };
        let mut conn = Connection::open_with_flags(&database, flags).map_err(damaged)?;
        conn.busy_timeout(BUSY_TIMEOUT).map_err(damaged)?;
        // Read before writing anything: a foreign or newer file stays as it is.
        let found = Library::check_version(&conn, &database, create)?;
        // WAL lets the app read while the CLI writes; synchronous=FULL makes
        // every reported commit survive a crash of the process or the machine.
        let mode: String = conn
            .query_row("PRAGMA journal_mode = WAL", [], |row| row.get(0))
            .map_err(damaged)?;
        if !mode.eq_ignore_ascii_case("wal") {
            return Err(LibraryError::Invalid {
                file: database,
                message: format!("cannot switch to WAL mode (journal mode is {mode})"),
            });
        }
        // secure_delete: SQLite overwrites deleted content with zeros, so a
        // deleted person cannot be read back from free pages of the file.
        conn.execute_batch(
            "PRAGMA synchronous = FULL; PRAGMA foreign_keys = ON; PRAGMA secure_delete = ON;",
        )
        .map_err(damaged)?;
        quick_check(&conn, &database)?;
        if found < schema::LATEST_VERSION {
            schema::migrations()
                .to_latest(&mut conn)
                .map_err(|error| match error {
                    rusqlite_migration::Error::RusqliteError { err, .. } if is_busy(&err) => {
                        LibraryError::Busy {
                            file: database.clone(),
                        }
                    }
                    other => LibraryError::Migration {
                        file: database.clone(),
                        message: other.to_string(),
                    },
                })?;
        }
        let library = Library {
            folder: folder.to_path_buf(),
            database,
            conn,
            read_only: None,
        };
        library.sweep_leftovers();
        library.sweep()?;
        Ok(library)
    }

    /// Opens the library for reading only; every write is refused with
    /// `reason`. Used for a damaged database and for a folder this user
    /// cannot write. Nothing in the folder is changed.
    pub fn open_read_only(folder: &Path, reason: String) -> Result<Library, LibraryError> {
        let database = folder.join(DATABASE_FILE);
        if !database.is_file() {
            return Err(LibraryError::Missing {
                folder: folder.to_path_buf(),
            });
        }
        let wal_present = |side: &str| folder.join(format!("{DATABASE_FILE}{side}")).is_file();
        // A WAL database needs its -shm index; in a folder we cannot write
        // and without one, the file is read as it is (`immutable`): its last
        // checkpoint holds every commit, as a clean close leaves it.
        let wal_complete = wal_present("-wal") && wal_present("-shm");
        let immutable = !(is_writable(folder) || wal_complete);
        let uri = format!(
            "file:{}?mode=ro{}",
            uri_path(&database),
            if immutable { "&immutable=1" } else { "" }
        );
        let flags = OpenFlags::SQLITE_OPEN_READ_ONLY
            | OpenFlags::SQLITE_OPEN_URI
            | OpenFlags::SQLITE_OPEN_NO_MUTEX;
        let conn = Connection::open_with_flags(&uri, flags)
            .map_err(|source| database_error(&database, source))?;
        conn.busy_timeout(BUSY_TIMEOUT)
            .map_err(|source| database_error(&database, source))?;
        let found = Library::check_version(&conn, &database, false)?;
        if found < schema::LATEST_VERSION {
            return Err(LibraryError::ReadOnly {
                file: database,
                reason: format!(
                    "{reason}; its schema (version {found}) is older than this Ambit's ({}) and cannot be updated without writing",
                    schema::LATEST_VERSION
                ),
            });
        }
        Ok(Library {
            folder: folder.to_path_buf(),
            database,
            conn,
            read_only: Some(reason),
        })
    }

    /// The schema version, after refusing a newer or a foreign database.
    fn check_version(
        conn: &Connection,
        database: &Path,
        create: bool,
    ) -> Result<i64, LibraryError> {
        let found: i64 = conn
            .query_row("PRAGMA user_version", [], |row| row.get(0))
            .map_err(|source| database_error(database, source))?;
        if found > schema::LATEST_VERSION {
            return Err(LibraryError::NewerSchema {
                file: database.to_path_buf(),
                found,
                supported: schema::LATEST_VERSION,
            });
        }
        if found == 0 && !create {
            let tables: i64 = conn
                .query_row("SELECT count(*) FROM sqlite_schema", [], |row| row.get(0))
                .map_err(|source| database_error(database, source))?;
            if tables > 0 {
                return Err(LibraryError::NotSqlite {
                    file: database.to_path_buf(),
                });
            }
        }
        Ok(found)
    }

    /// Why the library is open read-only (a damaged database, a folder this
    /// user cannot write), or `None` when it can be changed.
    pub fn read_only_reason(&self) -> Option<&str> {
        self.read_only.as_deref()
    }

    /// Refuses a write on a read-only library.
    pub(crate) fn check_writable(&self) -> Result<(), LibraryError> {
        match &self.read_only {
            Some(reason) => Err(LibraryError::ReadOnly {
                file: self.database.clone(),
                reason: reason.clone(),
            }),
            None => Ok(()),
        }
    }

    /// The path of a stored file, after checking that the database names it
    /// by its row's SHA-256 (`<sha256>` or `<sha256>.<ext>`, lower-case):
    /// a name with a folder, `..`, an absolute path or anything else is an
    /// error naming the row, so no command reaches outside the library.
    pub(crate) fn stored_file(
        &self,
        dir: &'static str,
        table: &'static str,
        sha256: &str,
        file_name: &str,
    ) -> Result<PathBuf, LibraryError> {
        stored_path(&self.folder, &self.database, dir, table, sha256, file_name)
    }

    /// Checks every file name the database stores (see [`Library::stored_file`]).
    pub fn check_stored_names(&self) -> Result<(), LibraryError> {
        self.stored_files(&self.conn).map(|_| ())
    }

    /// Every file the database behind `conn` (this library's, or a snapshot
    /// of it) refers to, as (`dir/name`, path in this library), each name
    /// checked with [`Library::stored_file`].
    pub(crate) fn stored_files(
        &self,
        conn: &Connection,
    ) -> Result<Vec<(String, PathBuf)>, LibraryError> {
        let mut files = Vec::new();
        for (dir, table, sql) in [
            (
                RECORDINGS_DIR,
                "recordings",
                "SELECT sha256, file_name FROM recordings ORDER BY file_name",
            ),
            (
                SCORES_DIR,
                "pieces",
                "SELECT DISTINCT sha256, file_name FROM pieces ORDER BY file_name",
            ),
        ] {
            let mut statement = conn.prepare(sql).map_err(|e| self.db_error(e))?;
            let rows = statement
                .query_map([], |row| {
                    Ok((row.get::<_, String>(0)?, row.get::<_, String>(1)?))
                })
                .map_err(|e| self.db_error(e))?
                .collect::<Result<Vec<_>, _>>()
                .map_err(|e| self.db_error(e))?;
            for (sha, name) in rows {
                let path = self.stored_file(dir, table, &sha, &name)?;
                files.push((format!("{dir}/{name}"), path));
            }
        }
        Ok(files)
    }

    /// Removes what a killed backup, restore or export left: `.backup-*` and
    /// `.restore-*` staging folders in the library folder, and the
    /// `*.partial` outputs recorded in `.pending-*` markers. Only leftovers
    /// whose process has ended (or that are older than [`LEFTOVER_GRACE`])
    /// are removed. Best effort: a failure leaves them for the next open.
    fn sweep_leftovers(&self) {
        let Ok(entries) = std::fs::read_dir(&self.folder) else {
            return;
        };
        for entry in entries.flatten() {
            let name = entry.file_name().to_string_lossy().into_owned();
            let Some(rest) = [".backup-", ".restore-", ".pending-"]
                .iter()
                .find_map(|prefix| name.strip_prefix(prefix))
            else {
                continue;
            };
            let pid = rest
                .split('-')
                .next()
                .and_then(|pid| pid.parse::<u32>().ok());
            let age = entry
                .metadata()
                .ok()
                .and_then(|metadata| metadata.modified().ok())
                .and_then(|modified| SystemTime::now().duration_since(modified).ok())
                .unwrap_or_default();
            let ended = pid.is_some_and(|pid| !process_alive(pid));
            if !(ended || age >= LEFTOVER_GRACE) {
                continue;
            }
            let path = entry.path();
            if name.starts_with(".pending-") {
                if let Ok(partial) = std::fs::read_to_string(&path) {
                    let partial = PathBuf::from(partial.trim());
                    if partial
                        .file_name()
                        .is_some_and(|name| name.to_string_lossy().ends_with(".partial"))
                    {
                        let _ = std::fs::remove_dir_all(&partial);
                        let _ = std::fs::remove_file(&partial);
                    }
                }
                let _ = std::fs::remove_file(&path);
            } else {
                let _ = std::fs::remove_dir_all(&path);
            }
        }
    }

    /// Notes `partial` (a backup or export being written outside the
    /// library) in a `.pending-*` marker, so that the next open removes it
    /// if this process is killed. The marker goes when the guard drops.
    pub(crate) fn pending(&self, partial: &Path) -> PendingGuard {
        if self.read_only.is_some() {
            return PendingGuard { marker: None };
        }
        let marker = self.folder.join(format!(
            ".pending-{}-{}",
            std::process::id(),
            unique_suffix()
        ));
        let absolute = std::path::absolute(partial).unwrap_or_else(|_| partial.to_path_buf());
        let written = create_private_file(&marker).and_then(|mut file| {
            use std::io::Write as _;
            file.write_all(absolute.to_string_lossy().as_bytes())
                .map_err(|source| LibraryError::Io {
                    file: marker.clone(),
                    source,
                })
        });
        PendingGuard {
            marker: written.is_ok().then_some(marker),
        }
    }

    /// The library folder.
    pub fn folder(&self) -> &Path {
        &self.folder
    }

    /// The database file.
    pub fn database_path(&self) -> &Path {
        &self.database
    }

    /// The underlying connection, for read-only checks (integrity, tests).
    pub fn connection(&self) -> &Connection {
        &self.conn
    }

    /// The schema version of the open database.
    pub fn schema_version(&self) -> Result<i64, LibraryError> {
        self.conn
            .query_row("PRAGMA user_version", [], |row| row.get(0))
            .map_err(|source| self.db_error(source))
    }

    /// `PRAGMA integrity_check`: `Ok` when SQLite answers "ok".
    pub fn check_integrity(&self) -> Result<(), LibraryError> {
        let answer: String = self
            .conn
            .query_row("PRAGMA integrity_check", [], |row| row.get(0))
            .map_err(|source| self.db_error(source))?;
        if answer == "ok" {
            Ok(())
        } else {
            Err(LibraryError::Damaged {
                file: self.database.clone(),
                message: answer,
            })
        }
    }

    /// Counts of singers, auditions, files, pieces and scenarios.
    pub fn info(&self) -> Result<LibraryInfo, LibraryError> {
        let count = |sql: &str| -> Result<u64, LibraryError> {
            self.conn
                .query_row(sql, [], |row| row.get::<_, i64>(0))
                .map(|n| n.max(0) as u64)
                .map_err(|source| self.db_error(source))
        };
        Ok(LibraryInfo {
            folder: self.folder.display().to_string(),
            schema_version: self.schema_version()?,
            singers: count("SELECT count(*) FROM singers WHERE archived = 0")?,
            archived_singers: count("SELECT count(*) FROM singers WHERE archived = 1")?,
            auditions: count("SELECT count(*) FROM auditions")?,
            recordings: count("SELECT count(*) FROM recordings")?,
            recording_bytes: count("SELECT coalesce(sum(bytes), 0) FROM recordings")?,
            pieces: count("SELECT count(*) FROM pieces")?,
            programmes: count("SELECT count(*) FROM programmes")?,
            scenarios: count("SELECT count(*) FROM scenarios")?,
        })
    }

    /// Removes files in `recordings/` and `scores/` that no row refers to
    /// (left by a crash between a commit and a file deletion, or by an
    /// interrupted copy). Files younger than [`SWEEP_GRACE`] are kept: another
    /// process may be about to commit a reference to them. Returns how many
    /// files were removed.
    pub fn sweep(&self) -> Result<usize, LibraryError> {
        if self.read_only.is_some() {
            return Ok(0);
        }
        self.sweep_older_than(SWEEP_GRACE)
    }

    pub(crate) fn sweep_older_than(&self, grace: Duration) -> Result<usize, LibraryError> {
        let referenced = |sql: &str| -> Result<HashSet<String>, LibraryError> {
            let mut statement = self
                .conn
                .prepare(sql)
                .map_err(|source| self.db_error(source))?;
            let names = statement
                .query_map([], |row| row.get::<_, String>(0))
                .map_err(|source| self.db_error(source))?
                .collect::<Result<HashSet<_>, _>>()
                .map_err(|source| self.db_error(source))?;
            Ok(names)
        };
        let mut removed = 0;
        for (dir, sql) in [
            (RECORDINGS_DIR, "SELECT file_name FROM recordings"),
            (SCORES_DIR, "SELECT file_name FROM pieces"),
        ] {
            let dir = self.folder.join(dir);
            let entries = match std::fs::read_dir(&dir) {
                Ok(entries) => entries,
                Err(error) if error.kind() == std::io::ErrorKind::NotFound => continue,
                Err(source) => return Err(LibraryError::Io { file: dir, source }),
            };
            let keep = referenced(sql)?;
            let now = SystemTime::now();
            for entry in entries.flatten() {
                let name = entry.file_name().to_string_lossy().into_owned();
                if keep.contains(&name) {
                    continue;
                }
                let Ok(metadata) = entry.metadata() else {
                    continue;
                };
                if !metadata.is_file() {
                    continue;
                }
                let age = metadata
                    .modified()
                    .ok()
                    .and_then(|modified| now.duration_since(modified).ok())
                    .unwrap_or_default();
                if age >= grace && remove_file_if_present(&entry.path()).is_ok() {
                    removed += 1;
                }
            }
        }
        Ok(removed)
    }

    pub(crate) fn db_error(&self, source: rusqlite::Error) -> LibraryError {
        database_error(&self.database, source)
    }

    /// Runs `work` in one IMMEDIATE transaction: the write lock is taken at
    /// the start (waiting up to [`BUSY_TIMEOUT`]), so two writers never
    /// deadlock on a lock upgrade, and either all of `work` commits or none.
    pub(crate) fn write<T>(
        &mut self,
        work: impl FnOnce(&rusqlite::Transaction<'_>, &Path) -> Result<T, LibraryError>,
    ) -> Result<T, LibraryError> {
        self.check_writable()?;
        let database = self.database.clone();
        let transaction = self
            .conn
            .transaction_with_behavior(TransactionBehavior::Immediate)
            .map_err(|source| database_error(&database, source))?;
        let value = work(&transaction, &database)?;
        transaction
            .commit()
            .map_err(|source| database_error(&database, source))?;
        Ok(value)
    }

    /// Copies `source` into `dir` under the SHA-256 of its content. Returns
    /// (sha256, file name in `dir`, bytes). The copy goes through a temp
    /// file, fsync and rename, so a file with a hash name is always whole.
    pub(crate) fn store_file(
        &self,
        dir: &str,
        source: &Path,
    ) -> Result<(String, String, u64), LibraryError> {
        self.check_writable()?;
        let io = |file: &Path| {
            let file = file.to_path_buf();
            move |source| LibraryError::Io { file, source }
        };
        let bytes = std::fs::metadata(source).map_err(io(source))?.len();
        if bytes > MAX_FILE_BYTES {
            return Err(LibraryError::Invalid {
                file: source.to_path_buf(),
                message: format!(
                    "too large ({bytes} bytes; the library keeps files up to {MAX_FILE_BYTES} bytes)"
                ),
            });
        }
        let extension = source
            .extension()
            .and_then(|ext| ext.to_str())
            .filter(|ext| ext.len() <= 8 && ext.chars().all(|c| c.is_ascii_alphanumeric()))
            .map(|ext| ext.to_ascii_lowercase());
        let dir_path = self.folder.join(dir);
        create_private_dir(&dir_path)?;
        // Copied first, through a byte budget (the length reported for a
        // pipe or a device is not trusted), then hashed: the name is the
        // hash of exactly the bytes stored. The copy is private (0600),
        // whatever the source's mode.
        let temp = dir_path.join(format!(
            ".incoming-{}-{}",
            std::process::id(),
            unique_suffix()
        ));
        let copied = (|| {
            let mut from = std::fs::File::open(source).map_err(io(source))?;
            let mut to = create_private_file(&temp)?;
            let bytes = copy_bounded(&mut from, source, &mut to, &temp, MAX_FILE_BYTES)?;
            to.sync_all().map_err(io(&temp))?;
            Ok::<_, LibraryError>((sha256_file(&temp)?, bytes))
        })();
        let (sha, bytes) = match copied {
            Ok(copied) => copied,
            Err(error) => {
                let _ = std::fs::remove_file(&temp);
                return Err(error);
            }
        };
        let file_name = match extension {
            Some(ext) => format!("{sha}.{ext}"),
            None => sha.clone(),
        };
        let target = dir_path.join(&file_name);
        if target.is_file() {
            let _ = std::fs::remove_file(&temp);
            // Mark it fresh so a concurrent sweep keeps it until we commit.
            if let Ok(file) = std::fs::OpenOptions::new().append(true).open(&target) {
                let _ = file.set_modified(SystemTime::now());
            }
            return Ok((sha, file_name, bytes));
        }
        std::fs::rename(&temp, &target).map_err(io(&target))?;
        sync_dir(&dir_path);
        Ok((sha, file_name, bytes))
    }

    /// Deletes files (already checked with [`Library::stored_file`]) after
    /// the transaction that dropped their last reference has committed. A
    /// failure leaves the file for the sweep.
    pub(crate) fn remove_files(&self, dir: &str, paths: &[PathBuf]) -> usize {
        let removed = paths
            .iter()
            .filter(|path| remove_file_if_present(path).is_ok())
            .count();
        sync_dir(&self.folder.join(dir));
        removed
    }
}

pub(crate) fn is_busy(error: &rusqlite::Error) -> bool {
    matches!(
        error.sqlite_error_code(),
        Some(ErrorCode::DatabaseBusy | ErrorCode::DatabaseLocked)
    )
}

pub(crate) fn database_error(file: &Path, source: rusqlite::Error) -> LibraryError {
    if is_busy(&source) {
        return LibraryError::Busy {
            file: file.to_path_buf(),
        };
    }
    if source.sqlite_error_code() == Some(ErrorCode::NotADatabase) {
        return LibraryError::NotSqlite {
            file: file.to_path_buf(),
        };
    }
    LibraryError::Database {
        file: file.to_path_buf(),
        source,
    }
}

fn remove_file_if_present(path: &Path) -> std::io::Result<()> {
    match std::fs::remove_file(path) {
        Err(error) if error.kind() == std::io::ErrorKind::NotFound => Ok(()),
        other => other,
    }
}

/// Makes a rename or delete in `dir` durable (best effort; not on Windows).
fn sync_dir(dir: &Path) {
    #[cfg(unix)]
    if let Ok(handle) = std::fs::File::open(dir) {
        let _ = handle.sync_all();
    }
    #[cfg(not(unix))]
    let _ = dir;
}

/// Removes the `.pending-*` marker of a finished backup or export.
pub(crate) struct PendingGuard {
    marker: Option<PathBuf>,
}

impl Drop for PendingGuard {
    fn drop(&mut self) {
        if let Some(marker) = &self.marker {
            let _ = std::fs::remove_file(marker);
        }
    }
}

/// `<sha256>` or `<sha256>.<ext>` (64 lower-case hex digits; an extension
/// of 1–8 lower-case letters or digits), as [`Library::store_file`] names
/// files: a bare name, inside its folder, with no way out of it.
fn is_stored_name(sha256: &str, file_name: &str) -> bool {
    let hex_ok = sha256.len() == 64
        && sha256
            .bytes()
            .all(|b| b.is_ascii_digit() || (b'a'..=b'f').contains(&b));
    let extension_ok = match file_name.strip_prefix(sha256) {
        Some("") => true,
        Some(rest) => rest.strip_prefix('.').is_some_and(|ext| {
            (1..=8).contains(&ext.len())
                && ext
                    .bytes()
                    .all(|b| b.is_ascii_lowercase() || b.is_ascii_digit())
        }),
        None => false,
    };
    hex_ok && extension_ok
}

/// The path of a stored file in `folder/dir`, or [`LibraryError::StoredName`]
/// naming the row (see [`Library::stored_file`]).
pub(crate) fn stored_path(
    folder: &Path,
    database: &Path,
    dir: &'static str,
    table: &'static str,
    sha256: &str,
    file_name: &str,
) -> Result<PathBuf, LibraryError> {
    if is_stored_name(sha256, file_name) {
        Ok(folder.join(dir).join(file_name))
    } else {
        Err(LibraryError::StoredName {
            file: database.to_path_buf(),
            table,
            row: format!("sha256 {}", crate::text::terminal_safe(sha256)),
            dir,
            name: file_name.to_string(),
        })
    }
}

/// Creates `dir` and its missing parents, readable by this user only (0700
/// on Unix).
pub(crate) fn create_private_dir(dir: &Path) -> Result<(), LibraryError> {
    let mut builder = std::fs::DirBuilder::new();
    builder.recursive(true);
    #[cfg(unix)]
    std::os::unix::fs::DirBuilderExt::mode(&mut builder, 0o700);
    builder.create(dir).map_err(|source| LibraryError::Io {
        file: dir.to_path_buf(),
        source,
    })
}

/// Creates (or truncates) a file readable by this user only (0600 on Unix).
pub(crate) fn create_private_file(path: &Path) -> Result<std::fs::File, LibraryError> {
    let mut options = std::fs::OpenOptions::new();
    options.write(true).create(true).truncate(true);
    #[cfg(unix)]
    std::os::unix::fs::OpenOptionsExt::mode(&mut options, 0o600);
    options.open(path).map_err(|source| LibraryError::Io {
        file: path.to_path_buf(),
        source,
    })
}

/// Copies at most `budget` bytes from `from` to `to`, counting as it goes
/// (a reported length is never trusted). A read error names `from_path`, a
/// write error (a full disk) names `to_path`. Returns the bytes copied.
pub(crate) fn copy_bounded(
    from: &mut impl Read,
    from_path: &Path,
    to: &mut impl std::io::Write,
    to_path: &Path,
    budget: u64,
) -> Result<u64, LibraryError> {
    let mut buffer = vec![0u8; 64 * 1024];
    let mut copied = 0u64;
    loop {
        let read = from.read(&mut buffer).map_err(|source| LibraryError::Io {
            file: from_path.to_path_buf(),
            source,
        })?;
        if read == 0 {
            return Ok(copied);
        }
        copied += read as u64;
        if copied > budget {
            return Err(LibraryError::Invalid {
                file: from_path.to_path_buf(),
                message: format!(
                    "too large (more than {budget} bytes; the library keeps files up to {MAX_FILE_BYTES} bytes)"
                ),
            });
        }
        to.write_all(buffer.get(..read).unwrap_or_default())
            .map_err(|source| LibraryError::Io {
                file: to_path.to_path_buf(),
                source,
            })?;
    }
}

/// `PRAGMA quick_check` (SQLite's faster integrity check, run on every
/// open): a damaged database is [`LibraryError::Damaged`].
fn quick_check(conn: &Connection, database: &Path) -> Result<(), LibraryError> {
    let answer = conn
        .prepare("PRAGMA quick_check(5)")
        .and_then(|mut statement| {
            statement
                .query_map([], |row| row.get::<_, String>(0))?
                .collect::<Result<Vec<_>, _>>()
        });
    match answer {
        Ok(lines) if lines.len() == 1 && lines[0] == "ok" => Ok(()),
        Ok(lines) => Err(LibraryError::Damaged {
            file: database.to_path_buf(),
            message: lines.join("; "),
        }),
        Err(source) if is_busy(&source) => Err(database_error(database, source)),
        Err(source) => Err(LibraryError::Damaged {
            file: database.to_path_buf(),
            message: source.to_string(),
        }),
    }
}

/// Whether this user may create files in `folder`.
fn is_writable(folder: &Path) -> bool {
    #[cfg(unix)]
    {
        use std::os::unix::ffi::OsStrExt as _;
        let Ok(path) = std::ffi::CString::new(folder.as_os_str().as_bytes()) else {
            return false;
        };
        // SAFETY: `path` is a valid NUL-terminated string for the call.
        unsafe { libc::access(path.as_ptr(), libc::W_OK) == 0 }
    }
    #[cfg(not(unix))]
    {
        std::fs::metadata(folder).is_ok_and(|metadata| !metadata.permissions().readonly())
    }
}

/// Whether a process with this id is running (on Unix, `kill(pid, 0)`;
/// elsewhere assumed running, so only [`LEFTOVER_GRACE`] applies).
fn process_alive(pid: u32) -> bool {
    #[cfg(unix)]
    {
        let Ok(pid) = libc::pid_t::try_from(pid) else {
            return false;
        };
        // SAFETY: signal 0 only checks that the process exists.
        let result = unsafe { libc::kill(pid, 0) };
        result == 0 || std::io::Error::last_os_error().raw_os_error() == Some(libc::EPERM)
    }
    #[cfg(not(unix))]
    {
        let _ = pid;
        true
    }
}

/// A path as an SQLite URI path (RFC 3986 percent-encoding of every byte
/// that is not unreserved or `/`).
fn uri_path(path: &Path) -> String {
    let text = path.to_string_lossy();
    #[cfg(windows)]
    let text = text.replace('\\', "/");
    let mut encoded = String::with_capacity(text.len());
    for byte in text.bytes() {
        if byte.is_ascii_alphanumeric() || b"/-._~".contains(&byte) {
            encoded.push(byte as char);
        } else {
            encoded.push_str(&format!("%{byte:02X}"));
        }
    }
    encoded
}

/// Nanoseconds of the current second, to tell apart temporary names made
/// by one process.
pub(crate) fn unique_suffix() -> u32 {
    SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map(|elapsed| elapsed.subsec_nanos())
        .unwrap_or(0)
}

/// SHA-256 of a file, hex, read in blocks (memory stays bounded).
pub fn sha256_file(path: &Path) -> Result<String, LibraryError> {
    let io = |source| LibraryError::Io {
        file: path.to_path_buf(),
        source,
    };
    let mut file = std::fs::File::open(path).map_err(io)?;
    let mut hasher = Sha256::new();
    let mut buffer = vec![0u8; 64 * 1024];
    loop {
        let read = file.read(&mut buffer).map_err(io)?;
        if read == 0 {
            break;
        }
        hasher.update(&buffer[..read]);
    }
    Ok(hex(&hasher.finalize()))
}

/// SHA-256 of bytes in memory, hex.
pub fn sha256_bytes(bytes: &[u8]) -> String {
    hex(&Sha256::digest(bytes))
}

fn hex(bytes: &[u8]) -> String {
    use std::fmt::Write as _;
    let mut text = String::with_capacity(bytes.len() * 2);
    for byte in bytes {
        // Writing to a String cannot fail.
        let _ = write!(text, "{byte:02x}");
    }
    text
}

/// The current time as an RFC 3339 UTC timestamp (second resolution).
pub fn now_timestamp() -> String {
    let seconds = SystemTime::now()
        .duration_since(UNIX_EPOCH)
        .map(|elapsed| elapsed.as_secs() as i64)
        .unwrap_or(0);
    let (year, month, day) = civil_from_days(seconds.div_euclid(86_400));
    let rest = seconds.rem_euclid(86_400);
    format!(
        "{year:04}-{month:02}-{day:02}T{:02}:{:02}:{:02}Z",
        rest / 3600,
        rest % 3600 / 60,
        rest % 60
    )
}

/// Today's date (UTC) as YYYY-MM-DD.
pub fn today() -> String {
    now_timestamp().chars().take(10).collect()
}

/// Checks a YYYY-MM-DD date.
pub fn check_date(text: &str) -> Result<(), String> {
    let parts: Vec<&str> = text.split('-').collect();
    let valid = match parts.as_slice() {
        [year, month, day] if year.len() == 4 && month.len() == 2 && day.len() == 2 => {
            match (
                year.parse::<u32>(),
                month.parse::<u32>(),
                day.parse::<u32>(),
            ) {
                (Ok(_), Ok(month), Ok(day)) => (1..=12).contains(&month) && (1..=31).contains(&day),
                _ => false,
            }
        }
        _ => false,
    };
    if valid {
        Ok(())
    } else {
        Err(format!("`{text}` is not a date written YYYY-MM-DD"))
    }
}

/// Days since 1970-01-01 to (year, month, day) in the proleptic Gregorian
/// calendar (H. Hinnant, "chrono-Compatible Low-Level Date Algorithms").
fn civil_from_days(days: i64) -> (i64, u32, u32) {
    let z = days + 719_468;
    let era = z.div_euclid(146_097);
    let doe = z - era * 146_097;
    let yoe = (doe - doe / 1460 + doe / 36_524 - doe / 146_096) / 365;
    let y = yoe + era * 400;
    let doy = doe - (365 * yoe + yoe / 4 - yoe / 100);
    let mp = (5 * doy + 2) / 153;
    let d = (doy - (153 * mp + 2) / 5 + 1) as u32;
    let m = if mp < 10 { mp + 3 } else { mp - 9 } as u32;
    (if m <= 2 { y + 1 } else { y }, m, d)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn civil_dates_match_known_days() {
        // 1970-01-01 is day 0 of the Unix epoch (POSIX); 2000-03-01 is day
        // 11017 (30 years of 365 days + 7 leap days + Jan + Feb 2000).
        assert_eq!(civil_from_days(0), (1970, 1, 1));
        assert_eq!(civil_from_days(11_017), (2000, 3, 1));
        assert_eq!(civil_from_days(-1), (1969, 12, 31));
    }

    #[test]
    fn sha256_of_abc_matches_fips_180_2() {
        // FIPS 180-2, appendix B.1: SHA-256("abc").
        assert_eq!(
            sha256_bytes(b"abc"),
            "ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad"
        );
    }

    #[test]
    fn dates_are_checked() {
        assert!(check_date("2026-09-14").is_ok());
        assert!(check_date("2026-13-01").is_err());
        assert!(check_date("14.09.2026").is_err());
    }
}
