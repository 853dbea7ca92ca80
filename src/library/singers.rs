//! Singers and typed-in ranges: roster import (plan, then all or nothing),
//! roster export, listing, deletion and one person's data export.

use std::path::{Path, PathBuf};

use rusqlite::{OptionalExtension, Transaction, params};
use serde::{Deserialize, Serialize};

use super::{Library, LibraryError, RECORDINGS_DIR, now_timestamp};
use crate::roster::{Roster, Singer, name_key, singer_from_profile};
use crate::voice::Profile;

/// Where a singer's current range comes from.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize, Deserialize)]
#[serde(rename_all = "snake_case")]
pub enum SingerSource {
    /// Typed in (roster import, piano check).
    Typed,
    /// Measured in an audition.
    Measured,
    /// Neither: the singer has no range yet.
    None,
}

/// A singer as listed: their row, their current range (the newer of the
/// latest typed-in range and the latest measured profile) and counts.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct SingerRecord {
    pub id: i64,
    pub name: String,
    pub notes: Option<String>,
    pub section: Option<String>,
    pub voice_type: Option<String>,
    pub archived: bool,
    pub auditions: u64,
    pub source: SingerSource,
    /// The singer as the engine takes them, when a range is known.
    pub current: Option<Singer>,
}

/// One singer's change in a roster import.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct Change {
    pub name: String,
    /// What differs, e.g. "range_high B4 → C5".
    pub fields: Vec<String>,
}

/// What a roster import adds, changes and leaves alone.
#[derive(Debug, Clone, PartialEq, Default, Serialize, Deserialize)]
pub struct ImportPlan {
    pub added: Vec<String>,
    pub changed: Vec<Change>,
    pub skipped: Vec<String>,
}

/// The typed-in range row as stored.
#[derive(Debug, Clone, PartialEq)]
struct TypedRange {
    range_low_midi: f64,
    range_high_midi: f64,
    comfort_low_midi: f64,
    comfort_high_midi: f64,
    primo_midi: Option<f64>,
    secondo_midi: Option<f64>,
}

impl TypedRange {
    fn of(singer: &Singer) -> TypedRange {
        TypedRange {
            range_low_midi: singer.range_low_midi,
            range_high_midi: singer.range_high_midi,
            comfort_low_midi: singer.comfort_low_midi,
            comfort_high_midi: singer.comfort_high_midi,
            primo_midi: singer.primo_midi,
            secondo_midi: singer.secondo_midi,
        }
    }
}

fn pitch_text(midi: Option<f64>) -> String {
    match midi {
        Some(midi) if midi.fract() == 0.0 => crate::pitch::midi_name(midi as i32),
        Some(midi) => format!("{midi:.2}"),
        None => "-".into(),
    }
}

fn plan_one(
    transaction: &Transaction<'_>,
    singer: &Singer,
) -> rusqlite::Result<(Option<i64>, Vec<String>)> {
    let row = transaction
        .query_row(
            "SELECT id, notes, section, voice_type FROM singers WHERE name_key = ?1",
            params![name_key(&singer.name)],
            |row| {
                Ok((
                    row.get::<_, i64>(0)?,
                    row.get::<_, Option<String>>(1)?,
                    row.get::<_, Option<String>>(2)?,
                    row.get::<_, Option<String>>(3)?,
                ))
            },
        )
        .optional()?;
    let Some((id, notes, section, voice_type)) = row else {
        return Ok((None, Vec::new()));
    };
    let typed = latest_typed(transaction, id)?;
    let mut fields = Vec::new();
    let new = TypedRange::of(singer);
    match &typed {
        None => fields.push("typed range added".to_string()),
        Some(old) => {
            for (label, before, after) in [
                (
                    "range_low",
                    Some(old.range_low_midi),
                    Some(new.range_low_midi),
                ),
                (
                    "range_high",
                    Some(old.range_high_midi),
                    Some(new.range_high_midi),
                ),
                (
                    "comfort_low",
                    Some(old.comfort_low_midi),
                    Some(new.comfort_low_midi),
                ),
                (
                    "comfort_high",
                    Some(old.comfort_high_midi),
                    Some(new.comfort_high_midi),
                ),
                ("primo", old.primo_midi, new.primo_midi),
                ("secondo", old.secondo_midi, new.secondo_midi),
            ] {
                if before != after {
                    fields.push(format!(
                        "{label} {} → {}",
                        pitch_text(before),
                        pitch_text(after)
                    ));
                }
            }
        }
    }
    // Optional columns left empty in the CSV keep what the library has.
    for (label, before, after) in [
        ("section", &section, &singer.section),
        ("voice_type", &voice_type, &singer.voice_type),
        ("notes", &notes, &singer.notes),
    ] {
        if after.is_some() && before != after {
            fields.push(format!(
                "{label} {} → {}",
                before.as_deref().unwrap_or("-"),
                after.as_deref().unwrap_or("-")
            ));
        }
    }
    Ok((Some(id), fields))
}

fn latest_typed(
    transaction: &rusqlite::Connection,
    singer_id: i64,
) -> rusqlite::Result<Option<TypedRange>> {
    transaction
        .query_row(
            "SELECT range_low_midi, range_high_midi, comfort_low_midi, comfort_high_midi, primo_midi, secondo_midi
             FROM typed_ranges WHERE singer_id = ?1 ORDER BY entered_at DESC, id DESC LIMIT 1",
            params![singer_id],
            |row| {
                Ok(TypedRange {
                    range_low_midi: row.get(0)?,
                    range_high_midi: row.get(1)?,
                    comfort_low_midi: row.get(2)?,
                    comfort_high_midi: row.get(3)?,
                    primo_midi: row.get(4)?,
                    secondo_midi: row.get(5)?,
                })
            },
        )
        .optional()
}

fn insert_typed(
    transaction: &Transaction<'_>,
    singer_id: i64,
    singer: &Singer,
) -> rusqlite::Result<()> {
    transaction.execute(
        "INSERT INTO typed_ranges (singer_id, entered_at, range_low_midi, range_high_midi,
             comfort_low_midi, comfort_high_midi, primo_midi, secondo_midi)
         VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8)",
        params![
            singer_id,
            now_timestamp(),
            singer.range_low_midi,
            singer.range_high_midi,
            singer.comfort_low_midi,
            singer.comfort_high_midi,
            singer.primo_midi,
            singer.secondo_midi
        ],
    )?;
    Ok(())
}

/// Plans, and with `commit` applies, a roster import inside `transaction`.
fn import_in(
    transaction: &Transaction<'_>,
    roster: &Roster,
    commit: bool,
) -> rusqlite::Result<ImportPlan> {
    let mut plan = ImportPlan::default();
    for singer in &roster.singers {
        let (id, fields) = plan_one(transaction, singer)?;
        match id {
            None => {
                plan.added.push(singer.name.clone());
                if commit {
                    transaction.execute(
                        "INSERT INTO singers (name, name_key, notes, section, voice_type, created_at)
                         VALUES (?1, ?2, ?3, ?4, ?5, ?6)",
                        params![
                            singer.name.trim(),
                            name_key(&singer.name),
                            singer.notes,
                            singer.section,
                            singer.voice_type,
                            now_timestamp()
                        ],
                    )?;
                    insert_typed(transaction, transaction.last_insert_rowid(), singer)?;
                }
            }
            Some(_) if fields.is_empty() => plan.skipped.push(singer.name.clone()),
            Some(id) => {
                if commit {
                    transaction.execute(
                        "UPDATE singers SET notes = coalesce(?2, notes), section = coalesce(?3, section),
                             voice_type = coalesce(?4, voice_type) WHERE id = ?1",
                        params![id, singer.notes, singer.section, singer.voice_type],
                    )?;
                    let typed_changed = fields.iter().any(|field| {
                        !(field.starts_with("section ")
                            || field.starts_with("voice_type ")
                            || field.starts_with("notes "))
                    });
                    if typed_changed {
                        insert_typed(transaction, id, singer)?;
                    }
                }
                plan.changed.push(Change {
                    name: singer.name.clone(),
                    fields,
                });
            }
        }
    }
    Ok(plan)
}

/// One person's data, as exported on request.
#[derive(Debug, Clone, Serialize, Deserialize)]
pub struct PersonExport {
    pub exported_at: String,
    pub singer: SingerRecord,
    pub typed_ranges: Vec<serde_json::Value>,
    pub auditions: Vec<super::AuditionRecord>,
}

impl Library {
    /// What importing `roster` would add, change and skip; writes nothing.
    pub fn plan_roster_import(&mut self, roster: &Roster) -> Result<ImportPlan, LibraryError> {
        let database = self.database.clone();
        let transaction = self
            .conn
            .transaction()
            .map_err(|source| super::database_error(&database, source))?;
        let plan = import_in(&transaction, roster, false)
            .map_err(|source| super::database_error(&database, source))?;
        // Dropping the transaction rolls it back.
        Ok(plan)
    }

    /// Imports `roster` in one transaction: every singer or none. New names
    /// are added with their typed-in range; known names get a new typed-in
    /// range row (history is kept) when anything differs.
    pub fn import_roster(&mut self, roster: &Roster) -> Result<ImportPlan, LibraryError> {
        self.write(|transaction, database| {
            import_in(transaction, roster, true)
                .map_err(|source| super::database_error(database, source))
        })
    }

    /// Reads a roster file with the one roster parser and imports it.
    pub fn import_roster_file(
        &mut self,
        path: &Path,
        dry_run: bool,
    ) -> Result<ImportPlan, LibraryError> {
        let roster = crate::roster::read_roster(path)?;
        if dry_run {
            self.plan_roster_import(&roster)
        } else {
            self.import_roster(&roster)
        }
    }

    /// Every singer, in name order, with their current range.
    pub fn singers(&self, include_archived: bool) -> Result<Vec<SingerRecord>, LibraryError> {
        // One pass over each table; the newest typed range and profile per
        // singer are picked with window functions rather than a query per singer.
        let sql = "
            WITH typed AS (
                SELECT singer_id, entered_at, range_low_midi, range_high_midi, comfort_low_midi,
                       comfort_high_midi, primo_midi, secondo_midi,
                       row_number() OVER (PARTITION BY singer_id ORDER BY entered_at DESC, id DESC) AS n
                FROM typed_ranges),
            measured AS (
                SELECT singer_id, created_at, profile_json,
                       row_number() OVER (PARTITION BY singer_id ORDER BY held_on DESC, id DESC) AS n,
                       count(*) OVER (PARTITION BY singer_id) AS auditions
                FROM auditions)
            SELECT s.id, s.name, s.notes, s.section, s.voice_type, s.archived,
                   t.entered_at, t.range_low_midi, t.range_high_midi, t.comfort_low_midi,
                   t.comfort_high_midi, t.primo_midi, t.secondo_midi,
                   m.created_at, m.profile_json, coalesce(m.auditions, 0)
            FROM singers s
            LEFT JOIN typed t ON t.singer_id = s.id AND t.n = 1
            LEFT JOIN measured m ON m.singer_id = s.id AND m.n = 1
            WHERE ?1 OR s.archived = 0
            ORDER BY s.name_key";
        let mut statement = self.conn.prepare(sql).map_err(|e| self.db_error(e))?;
        let rows = statement
            .query_map(params![include_archived], |row| {
                let name: String = row.get(1)?;
                let notes: Option<String> = row.get(2)?;
                let section: Option<String> = row.get(3)?;
                let voice_type: Option<String> = row.get(4)?;
                let typed_at: Option<String> = row.get(6)?;
                let typed = match typed_at {
                    Some(at) => Some((
                        at,
                        Singer {
                            name: name.clone(),
                            range_low_midi: row.get(7)?,
                            range_high_midi: row.get(8)?,
                            comfort_low_midi: row.get(9)?,
                            comfort_high_midi: row.get(10)?,
                            primo_midi: row.get(11)?,
                            secondo_midi: row.get(12)?,
                            voice_type: voice_type.clone(),
                            section: section.clone(),
                            notes: notes.clone(),
                        },
                    )),
                    None => None,
                };
                let measured_at: Option<String> = row.get(13)?;
                let profile_json: Option<String> = row.get(14)?;
                let auditions: i64 = row.get(15)?;
                Ok((
                    row.get::<_, i64>(0)?,
                    name,
                    notes,
                    section,
                    voice_type,
                    row.get::<_, bool>(5)?,
                    typed,
                    measured_at.zip(profile_json),
                    auditions,
                ))
            })
            .map_err(|e| self.db_error(e))?;
        let mut singers = Vec::new();
        for row in rows {
            let (id, name, notes, section, voice_type, archived, typed, measured, auditions) =
                row.map_err(|e| self.db_error(e))?;
            let measured = match measured {
                Some((at, json)) => {
                    let profile: Profile =
                        serde_json::from_str(&json).map_err(|error| LibraryError::Invalid {
                            file: self.database.clone(),
                            message: format!(
                                "the stored profile of {name} cannot be read: {error}"
                            ),
                        })?;
                    let mut singer = singer_from_profile(&name, &profile);
                    // The director's section and type win over the suggestion.
                    singer.section = section.clone().or(singer.section);
                    singer.voice_type = voice_type.clone().or(singer.voice_type);
                    singer.notes = notes.clone();
                    Some((at, singer))
                }
                None => None,
            };
            let (source, current) = match (typed, measured) {
                (Some((typed_at, typed)), Some((measured_at, measured))) => {
                    if measured_at >= typed_at {
                        (SingerSource::Measured, Some(measured))
                    } else {
                        (SingerSource::Typed, Some(typed))
                    }
                }
                (Some((_, typed)), None) => (SingerSource::Typed, Some(typed)),
                (None, Some((_, measured))) => (SingerSource::Measured, Some(measured)),
                (None, None) => (SingerSource::None, None),
            };
            singers.push(SingerRecord {
                id,
                name,
                notes,
                section,
                voice_type,
                archived,
                auditions: auditions.max(0) as u64,
                source,
                current,
            });
        }
        Ok(singers)
    }

    /// The active singers with a known range, as a roster for the engine.
    /// Returns the roster and the names left out for having no range.
    pub fn roster(&self) -> Result<(Roster, Vec<String>), LibraryError> {
        let mut left_out = Vec::new();
        let mut singers = Vec::new();
        for record in self.singers(false)? {
            match record.current {
                Some(singer) => singers.push(singer),
                None => left_out.push(record.name),
            }
        }
        Ok((Roster { singers }, left_out))
    }

    /// Finds a singer's id by name (case and surrounding spaces ignored).
    pub fn singer_id(&self, name: &str) -> Result<i64, LibraryError> {
        self.conn
            .query_row(
                "SELECT id FROM singers WHERE name_key = ?1",
                params![name_key(name)],
                |row| row.get(0),
            )
            .optional()
            .map_err(|e| self.db_error(e))?
            .ok_or_else(|| LibraryError::UnknownSinger {
                file: self.database.clone(),
                name: name.to_string(),
            })
    }

    /// Adds a singer with no range yet (an audition will measure it).
    pub fn add_singer(&mut self, name: &str, section: Option<&str>) -> Result<i64, LibraryError> {
        crate::text::check_name("the singer's name", name).map_err(|message| {
            LibraryError::Invalid {
                file: self.database.clone(),
                message,
            }
        })?;
        self.write(|transaction, database| {
            transaction
                .execute(
                    "INSERT INTO singers (name, name_key, section, created_at) VALUES (?1, ?2, ?3, ?4)
                     ON CONFLICT(name_key) DO NOTHING",
                    params![name.trim(), name_key(name), section, now_timestamp()],
                )
                .and_then(|_| {
                    transaction.query_row(
                        "SELECT id FROM singers WHERE name_key = ?1",
                        params![name_key(name)],
                        |row| row.get(0),
                    )
                })
                .map_err(|source| super::database_error(database, source))
        })
    }

    /// Archives or reactivates a singer (kept, but left out of the roster).
    pub fn set_archived(&mut self, name: &str, archived: bool) -> Result<(), LibraryError> {
        let id = self.singer_id(name)?;
        self.write(|transaction, database| {
            transaction
                .execute(
                    "UPDATE singers SET archived = ?2 WHERE id = ?1",
                    params![id, archived],
                )
                .map(|_| ())
                .map_err(|source| super::database_error(database, source))
        })
    }

    /// Deletes a singer: their row, typed-in ranges, auditions and profiles
    /// in one transaction, then (after the commit) every recording file no
    /// other audition refers to. Returns how many files were removed.
    pub fn delete_singer(&mut self, name: &str) -> Result<usize, LibraryError> {
        let id = self.singer_id(name)?;
        let folder = self.folder.clone();
        let paths = self.write(|transaction, database| {
            let db = |source| super::database_error(database, source);
            transaction
                .execute("DELETE FROM singers WHERE id = ?1", params![id])
                .map_err(db)?;
            // The cascade removed their audition_recordings; files nobody
            // refers to any more go with them.
            let mut statement = transaction
                .prepare(
                    "SELECT sha256, file_name FROM recordings r
                     WHERE NOT EXISTS (SELECT 1 FROM audition_recordings a WHERE a.sha256 = r.sha256)",
                )
                .map_err(db)?;
            let orphans = statement
                .query_map([], |row| Ok((row.get::<_, String>(0)?, row.get::<_, String>(1)?)))
                .map_err(db)?
                .collect::<Result<Vec<_>, _>>()
                .map_err(db)?;
            let mut paths = Vec::new();
            for (sha, file) in &orphans {
                // A name reaching outside recordings/ rolls the whole deletion back.
                paths.push(super::stored_path(
                    &folder,
                    database,
                    RECORDINGS_DIR,
                    "recordings",
                    sha,
                    file,
                )?);
                transaction
                    .execute("DELETE FROM recordings WHERE sha256 = ?1", params![sha])
                    .map_err(db)?;
            }
            Ok(paths)
        })?;
        let removed = self.remove_files(RECORDINGS_DIR, &paths);
        // Fold the WAL into the database and empty it: its older frames
        // still hold the deleted rows (secure_delete zeroes the pages that
        // are written now, not the copies written before).
        let _ = self
            .conn
            .query_row("PRAGMA wal_checkpoint(TRUNCATE)", [], |_| Ok(()));
        Ok(removed)
    }

    /// One person's data: their rows as JSON and their recording files,
    /// written into `out` (a new folder): `person.json` and `recordings/`.
    pub fn export_person(&self, name: &str, out: &Path) -> Result<PersonExport, LibraryError> {
        let id = self.singer_id(name)?;
        let singer = self
            .singers(true)?
            .into_iter()
            .find(|record| record.id == id)
            .ok_or_else(|| LibraryError::UnknownSinger {
                file: self.database.clone(),
                name: name.to_string(),
            })?;
        let mut statement = self
            .conn
            .prepare(
                "SELECT entered_at, range_low_midi, range_high_midi, comfort_low_midi, comfort_high_midi,
                        primo_midi, secondo_midi FROM typed_ranges WHERE singer_id = ?1 ORDER BY entered_at, id",
            )
            .map_err(|e| self.db_error(e))?;
        let typed_ranges = statement
            .query_map(params![id], |row| {
                Ok(serde_json::json!({
                    "entered_at": row.get::<_, String>(0)?,
                    "range_low_midi": row.get::<_, f64>(1)?,
                    "range_high_midi": row.get::<_, f64>(2)?,
                    "comfort_low_midi": row.get::<_, f64>(3)?,
                    "comfort_high_midi": row.get::<_, f64>(4)?,
                    "primo_midi": row.get::<_, Option<f64>>(5)?,
                    "secondo_midi": row.get::<_, Option<f64>>(6)?,
                }))
            })
            .map_err(|e| self.db_error(e))?
            .collect::<Result<Vec<_>, _>>()
            .map_err(|e| self.db_error(e))?;
        let auditions = self.auditions_of(id)?;
        // Every file name is checked before anything is written.
        let mut files: Vec<(PathBuf, String)> = Vec::new();
        for audition in &auditions {
            for recording in &audition.recordings {
                if !files.iter().any(|(_, name)| *name == recording.file_name) {
                    let from = self.stored_file(
                        RECORDINGS_DIR,
                        "recordings",
                        &recording.sha256,
                        &recording.file_name,
                    )?;
                    files.push((from, recording.file_name.clone()));
                }
            }
        }
        let export = PersonExport {
            exported_at: now_timestamp(),
            singer,
            typed_ranges,
            auditions,
        };
        let json =
            serde_json::to_string_pretty(&export).map_err(|error| LibraryError::Invalid {
                file: out.join("person.json"),
                message: error.to_string(),
            })?;
        if out.exists() {
            return Err(LibraryError::Invalid {
                file: out.to_path_buf(),
                message: "already exists; give a new folder".into(),
            });
        }
        // Written into `<out>.partial` and renamed when complete, so a full
        // disk or a kill never leaves a half-written export under the name
        // asked for; errors name the destination (what could not be written).
        let partial = partial_path(out);
        let _pending = self.pending(&partial);
        let _ = std::fs::remove_dir_all(&partial);
        let written = (|| {
            let recordings_out = partial.join(RECORDINGS_DIR);
            super::create_private_dir(&recordings_out)
                .map_err(|error| rename_in(error, &partial, out))?;
            for (from, name) in &files {
                let to = recordings_out.join(name);
                let mut source = std::fs::File::open(from).map_err(|source| LibraryError::Io {
                    file: from.clone(),
                    source,
                })?;
                let mut target = super::create_private_file(&to)
                    .map_err(|error| rename_in(error, &partial, out))?;
                super::copy_bounded(&mut source, from, &mut target, &to, u64::MAX)
                    .and_then(|_| {
                        target.sync_all().map_err(|source| LibraryError::Io {
                            file: to.clone(),
                            source,
                        })
                    })
                    .map_err(|error| rename_in(error, &partial, out))?;
            }
            let json_path = partial.join("person.json");
            let mut file = super::create_private_file(&json_path)
                .map_err(|error| rename_in(error, &partial, out))?;
            std::io::Write::write_all(&mut file, json.as_bytes())
                .and_then(|()| file.sync_all())
                .map_err(|source| LibraryError::Io {
                    file: out.join("person.json"),
                    source,
                })?;
            std::fs::rename(&partial, out).map_err(|source| LibraryError::Io {
                file: out.to_path_buf(),
                source,
            })
        })();
        if let Err(error) = written {
            let _ = std::fs::remove_dir_all(&partial);
            return Err(error);
        }
        Ok(export)
    }
}

/// `<out>.partial` beside `out`: where an export or a backup is written
/// before it is renamed into place.
pub(crate) fn partial_path(out: &Path) -> PathBuf {
    let mut name = out
        .file_name()
        .map(|name| name.to_os_string())
        .unwrap_or_else(|| "export".into());
    name.push(".partial");
    out.with_file_name(name)
}

/// An I/O error on a file inside `partial` reported at its place in `out`,
/// the destination the user asked for.
fn rename_in(error: LibraryError, partial: &Path, out: &Path) -> LibraryError {
    match error {
        LibraryError::Io { file, source } => LibraryError::Io {
            file: file
                .strip_prefix(partial)
                .map(|inner| out.join(inner))
                .unwrap_or(file),
            source,
        },
        other => other,
    }
}
