//! Auditions: recordings copied in by hash, the measured profile kept as
//! JSON with the analysis version, and a singer's history in one query.

use std::path::PathBuf;

use rusqlite::params;
use serde::{Deserialize, Serialize};

use super::{ANALYSIS_VERSION, Library, LibraryError, RECORDINGS_DIR, check_date, now_timestamp};
use crate::voice::{Profile, Task};

/// One task recording to store.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct RecordingInput {
    pub task: Task,
    pub path: PathBuf,
}

/// An audition to store: the profile has already been measured by the
/// engine from these recordings.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AuditionInput {
    pub singer: String,
    /// YYYY-MM-DD.
    pub held_on: String,
    pub recordings: Vec<RecordingInput>,
    pub profile: Profile,
}

/// A stored recording of an audition.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct StoredRecording {
    pub task: Task,
    pub sha256: String,
    /// The file inside the library's `recordings/` folder.
    pub file_name: String,
    /// The name it had when it was added.
    pub original_name: String,
}

/// A stored audition.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct AuditionRecord {
    pub id: i64,
    pub held_on: String,
    pub analysis_version: String,
    pub profile: Profile,
    pub recordings: Vec<StoredRecording>,
}

/// One point of a singer's history.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct HistoryEntry {
    pub audition_id: i64,
    pub held_on: String,
    pub analysis_version: String,
    pub profile: Profile,
}

fn task_from_label(label: &str) -> Option<Task> {
    Task::ALL.into_iter().find(|task| task.label() == label)
}

impl Library {
    /// Stores an audition: copies the recordings in (named by SHA-256, a
    /// file already present is shared), then inserts the audition, its
    /// profile and its recording references in one transaction. Adds the
    /// singer if the name is new. Returns the audition id.
    pub fn add_audition(&mut self, input: &AuditionInput) -> Result<i64, LibraryError> {
        check_date(&input.held_on).map_err(|message| LibraryError::Invalid {
            file: self.database.clone(),
            message,
        })?;
        crate::text::check_name("the singer's name", &input.singer).map_err(|message| {
            LibraryError::Invalid {
                file: self.database.clone(),
                message,
            }
        })?;
        let profile_json =
            serde_json::to_string(&input.profile).map_err(|error| LibraryError::Invalid {
                file: self.database.clone(),
                message: format!("the profile cannot be stored: {error}"),
            })?;
        // Files first (whole, fsynced); the rows that refer to them after.
        let mut stored = Vec::new();
        for recording in &input.recordings {
            let (sha, file_name, bytes) = self.store_file(RECORDINGS_DIR, &recording.path)?;
            let original_name = recording
                .path
                .file_name()
                .map(|name| name.to_string_lossy().into_owned())
                .unwrap_or_default();
            stored.push((recording.task, sha, file_name, bytes, original_name));
        }
        self.write(|transaction, database| {
            let db = |source| super::database_error(database, source);
            let now = now_timestamp();
            transaction
                .execute(
                    "INSERT INTO singers (name, name_key, created_at) VALUES (?1, ?2, ?3)
                     ON CONFLICT(name_key) DO NOTHING",
                    params![input.singer.trim(), crate::roster::name_key(&input.singer), now],
                )
                .map_err(db)?;
            let singer_id: i64 = transaction
                .query_row(
                    "SELECT id FROM singers WHERE name_key = ?1",
                    params![crate::roster::name_key(&input.singer)],
                    |row| row.get(0),
                )
                .map_err(db)?;
            transaction
                .execute(
                    "INSERT INTO auditions (singer_id, held_on, profile_json, analysis_version, created_at)
                     VALUES (?1, ?2, ?3, ?4, ?5)",
                    params![singer_id, input.held_on, profile_json, ANALYSIS_VERSION, now],
                )
                .map_err(db)?;
            let audition_id = transaction.last_insert_rowid();
            for (task, sha, file_name, bytes, original_name) in &stored {
                transaction
                    .execute(
                        "INSERT OR IGNORE INTO recordings (sha256, file_name, bytes) VALUES (?1, ?2, ?3)",
                        params![sha, file_name, *bytes as i64],
                    )
                    .map_err(db)?;
                transaction
                    .execute(
                        "INSERT OR IGNORE INTO audition_recordings (audition_id, task, sha256, original_name)
                         VALUES (?1, ?2, ?3, ?4)",
                        params![audition_id, task.label(), sha, original_name],
                    )
                    .map_err(db)?;
            }
            Ok(audition_id)
        })
    }

    /// A singer's measured profiles, oldest first, in one query.
    pub fn history(&self, name: &str) -> Result<Vec<HistoryEntry>, LibraryError> {
        let id = self.singer_id(name)?;
        let mut statement = self
            .conn
            .prepare(
                "SELECT id, held_on, analysis_version, profile_json FROM auditions
                 WHERE singer_id = ?1 ORDER BY held_on, id",
            )
            .map_err(|e| self.db_error(e))?;
        let rows = statement
            .query_map(params![id], |row| {
                Ok((
                    row.get::<_, i64>(0)?,
                    row.get::<_, String>(1)?,
                    row.get::<_, String>(2)?,
                    row.get::<_, String>(3)?,
                ))
            })
            .map_err(|e| self.db_error(e))?;
        let mut history = Vec::new();
        for row in rows {
            let (audition_id, held_on, analysis_version, json) =
                row.map_err(|e| self.db_error(e))?;
            history.push(HistoryEntry {
                audition_id,
                held_on,
                analysis_version,
                profile: self.read_profile(audition_id, &json)?,
            });
        }
        Ok(history)
    }

    fn read_profile(&self, audition_id: i64, json: &str) -> Result<Profile, LibraryError> {
        serde_json::from_str(json).map_err(|error| LibraryError::Invalid {
            file: self.database.clone(),
            message: format!("the profile of audition {audition_id} cannot be read: {error}"),
        })
    }

    /// A singer's auditions with their recordings, oldest first.
    pub(crate) fn auditions_of(&self, singer_id: i64) -> Result<Vec<AuditionRecord>, LibraryError> {
        let mut statement = self
            .conn
            .prepare(
                "SELECT a.id, a.held_on, a.analysis_version, a.profile_json, ar.task, ar.sha256,
                        r.file_name, ar.original_name
                 FROM auditions a
                 LEFT JOIN audition_recordings ar ON ar.audition_id = a.id
                 LEFT JOIN recordings r ON r.sha256 = ar.sha256
                 WHERE a.singer_id = ?1 ORDER BY a.held_on, a.id, ar.task",
            )
            .map_err(|e| self.db_error(e))?;
        let rows = statement
            .query_map(params![singer_id], |row| {
                Ok((
                    row.get::<_, i64>(0)?,
                    row.get::<_, String>(1)?,
                    row.get::<_, String>(2)?,
                    row.get::<_, String>(3)?,
                    row.get::<_, Option<String>>(4)?,
                    row.get::<_, Option<String>>(5)?,
                    row.get::<_, Option<String>>(6)?,
                    row.get::<_, Option<String>>(7)?,
                ))
            })
            .map_err(|e| self.db_error(e))?;
        let mut auditions: Vec<AuditionRecord> = Vec::new();
        for row in rows {
            let (id, held_on, analysis_version, json, task, sha, file_name, original) =
                row.map_err(|e| self.db_error(e))?;
            if auditions.last().map(|last| last.id) != Some(id) {
                auditions.push(AuditionRecord {
                    id,
                    held_on,
                    analysis_version,
                    profile: self.read_profile(id, &json)?,
                    recordings: Vec::new(),
                });
            }
            if let (Some(task), Some(sha256), Some(file_name), Some(original_name), Some(last)) = (
                task.as_deref().and_then(task_from_label),
                sha,
                file_name,
                original,
                auditions.last_mut(),
            ) {
                last.recordings.push(StoredRecording {
                    task,
                    sha256,
                    file_name,
                    original_name,
                });
            }
        }
        Ok(auditions)
    }
}
