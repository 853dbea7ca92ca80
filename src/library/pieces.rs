//! Pieces (score file copied in and hashed, cached part analysis, section
//! mapping and overrides), programmes (ordered pieces) and placement
//! scenarios (constraints, result, notes, time), all as JSON from the engine.

use std::path::PathBuf;

use rusqlite::{OptionalExtension, params};
use serde::{Deserialize, Serialize};

use super::{ANALYSIS_VERSION, Library, LibraryError, SCORES_DIR, now_timestamp};

/// A piece to store; `analysis` is the engine's part analysis.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PieceInput {
    pub title: String,
    pub score: PathBuf,
    pub analysis: serde_json::Value,
    pub mapping: Option<serde_json::Value>,
}

/// A stored piece.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct PieceRecord {
    pub id: i64,
    pub title: String,
    pub sha256: String,
    /// The score file inside the library.
    pub path: PathBuf,
    pub original_name: String,
    pub analysis_version: String,
    pub added_at: String,
}

/// A placement scenario to save.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ScenarioInput {
    pub name: String,
    pub programme: Option<String>,
    pub layout: Option<String>,
    pub constraints: serde_json::Value,
    pub result: serde_json::Value,
    pub notes: Option<String>,
}

/// A saved scenario.
#[derive(Debug, Clone, PartialEq, Serialize, Deserialize)]
pub struct ScenarioRecord {
    pub id: i64,
    pub name: String,
    pub programme: Option<String>,
    pub layout: Option<String>,
    pub constraints: serde_json::Value,
    pub result: serde_json::Value,
    pub notes: Option<String>,
    pub saved_at: String,
}

fn json_text(value: &serde_json::Value) -> String {
    // A Value always serialises.
    serde_json::to_string(value).unwrap_or_default()
}

impl Library {
    /// Copies the score in (named by SHA-256) and stores the piece with its
    /// analysis; a piece of the same title is replaced. With `programme`,
    /// appends the piece to that programme (created if new).
    pub fn add_piece(
        &mut self,
        input: &PieceInput,
        programme: Option<&str>,
    ) -> Result<i64, LibraryError> {
        crate::text::check_name("the piece's title", &input.title).map_err(|message| {
            LibraryError::Invalid {
                file: input.score.clone(),
                message,
            }
        })?;
        if let Some(programme) = programme {
            crate::text::check_name("the programme's name", programme).map_err(|message| {
                LibraryError::Invalid {
                    file: self.database.clone(),
                    message,
                }
            })?;
        }
        let (sha, file_name, _) = self.store_file(SCORES_DIR, &input.score)?;
        let original_name = input
            .score
            .file_name()
            .map(|name| name.to_string_lossy().into_owned())
            .unwrap_or_default();
        let folder = self.folder.clone();
        let replaced_file = self.write(|transaction, database| {
            let db = |source| super::database_error(database, source);
            let old: Option<(String, String)> = transaction
                .query_row(
                    "SELECT sha256, file_name FROM pieces WHERE title = ?1",
                    params![input.title.trim()],
                    |row| Ok((row.get(0)?, row.get(1)?)),
                )
                .optional()
                .map_err(db)?;
            // The replaced score's name is checked before anything changes.
            let old = match old {
                Some((old_sha, old_name)) => Some((
                    old_name.clone(),
                    super::stored_path(&folder, database, SCORES_DIR, "pieces", &old_sha, &old_name)?,
                )),
                None => None,
            };
            transaction
                .execute(
                    "INSERT INTO pieces (title, sha256, file_name, original_name, analysis_json,
                         analysis_version, mapping_json, added_at)
                     VALUES (?1, ?2, ?3, ?4, ?5, ?6, ?7, ?8)
                     ON CONFLICT(title) DO UPDATE SET sha256 = excluded.sha256,
                         file_name = excluded.file_name, original_name = excluded.original_name,
                         analysis_json = excluded.analysis_json, analysis_version = excluded.analysis_version,
                         mapping_json = excluded.mapping_json, added_at = excluded.added_at",
                    params![
                        input.title.trim(),
                        sha,
                        file_name,
                        original_name,
                        json_text(&input.analysis),
                        ANALYSIS_VERSION,
                        input.mapping.as_ref().map(json_text),
                        now_timestamp()
                    ],
                )
                .map_err(db)?;
            let piece_id: i64 = transaction
                .query_row(
                    "SELECT id FROM pieces WHERE title = ?1",
                    params![input.title.trim()],
                    |row| row.get(0),
                )
                .map_err(db)?;
            if let Some(programme) = programme {
                transaction
                    .execute(
                        "INSERT INTO programmes (name, created_at) VALUES (?1, ?2) ON CONFLICT(name) DO NOTHING",
                        params![programme.trim(), now_timestamp()],
                    )
                    .map_err(db)?;
                transaction
                    .execute(
                        "INSERT INTO programme_pieces (programme_id, position, piece_id)
                         SELECT p.id, coalesce((SELECT max(position) + 1 FROM programme_pieces WHERE programme_id = p.id), 0), ?2
                         FROM programmes p WHERE p.name = ?1
                           AND NOT EXISTS (SELECT 1 FROM programme_pieces q WHERE q.programme_id = p.id AND q.piece_id = ?2)",
                        params![programme.trim(), piece_id],
                    )
                    .map_err(db)?;
            }
            // The old score file goes if no piece uses it any more.
            let still_used = match &old {
                Some((old, _)) => transaction
                    .query_row(
                        "SELECT count(*) FROM pieces WHERE file_name = ?1",
                        params![old],
                        |row| row.get::<_, i64>(0),
                    )
                    .map_err(db)?
                    > 0,
                None => true,
            };
            Ok((piece_id, if still_used { None } else { old.map(|(_, path)| path) }))
        })?;
        let (piece_id, orphan) = replaced_file;
        if let Some(orphan) = orphan {
            self.remove_files(SCORES_DIR, &[orphan]);
        }
        Ok(piece_id)
    }

    /// Every piece, by title.
    pub fn pieces(&self) -> Result<Vec<PieceRecord>, LibraryError> {
        self.piece_query(
            "SELECT id, title, sha256, file_name, original_name, analysis_version, added_at FROM pieces ORDER BY title",
            None,
        )
    }

    /// The pieces of a programme, in programme order.
    pub fn programme(&self, name: &str) -> Result<Vec<PieceRecord>, LibraryError> {
        let exists: Option<i64> = self
            .conn
            .query_row(
                "SELECT id FROM programmes WHERE name = ?1",
                params![name.trim()],
                |row| row.get(0),
            )
            .optional()
            .map_err(|e| self.db_error(e))?;
        if exists.is_none() {
            return Err(LibraryError::NotFound {
                file: self.database.clone(),
                what: "programme",
                name: name.to_string(),
            });
        }
        self.piece_query(
            "SELECT p.id, p.title, p.sha256, p.file_name, p.original_name, p.analysis_version, p.added_at
             FROM programme_pieces pp JOIN programmes g ON g.id = pp.programme_id
             JOIN pieces p ON p.id = pp.piece_id WHERE g.name = ?1 ORDER BY pp.position",
            Some(name.trim()),
        )
    }

    fn piece_query(&self, sql: &str, name: Option<&str>) -> Result<Vec<PieceRecord>, LibraryError> {
        let mut statement = self.conn.prepare(sql).map_err(|e| self.db_error(e))?;
        let map = |row: &rusqlite::Row<'_>| {
            Ok((
                PieceRecord {
                    id: row.get(0)?,
                    title: row.get(1)?,
                    sha256: row.get(2)?,
                    path: PathBuf::new(),
                    original_name: row.get(4)?,
                    analysis_version: row.get(5)?,
                    added_at: row.get(6)?,
                },
                row.get::<_, String>(3)?,
            ))
        };
        let rows = match name {
            Some(name) => statement.query_map(params![name], map),
            None => statement.query_map([], map),
        }
        .map_err(|e| self.db_error(e))?
        .collect::<Result<Vec<_>, _>>()
        .map_err(|e| self.db_error(e))?;
        rows.into_iter()
            .map(|(mut record, file_name)| {
                record.path = self.stored_file(SCORES_DIR, "pieces", &record.sha256, &file_name)?;
                Ok(record)
            })
            .collect()
    }

    /// The cached part analysis of a piece.
    pub fn piece_analysis(&self, title: &str) -> Result<serde_json::Value, LibraryError> {
        let text: String = self
            .conn
            .query_row(
                "SELECT analysis_json FROM pieces WHERE title = ?1",
                params![title.trim()],
                |row| row.get(0),
            )
            .optional()
            .map_err(|e| self.db_error(e))?
            .ok_or_else(|| LibraryError::NotFound {
                file: self.database.clone(),
                what: "piece",
                name: title.to_string(),
            })?;
        serde_json::from_str(&text).map_err(|error| LibraryError::Invalid {
            file: self.database.clone(),
            message: format!("the analysis of {title} cannot be read: {error}"),
        })
    }

    /// The stored section mapping of a piece (`None` when none was set).
    pub fn piece_mapping(&self, title: &str) -> Result<Option<serde_json::Value>, LibraryError> {
        let text: Option<Option<String>> = self
            .conn
            .query_row(
                "SELECT mapping_json FROM pieces WHERE title = ?1",
                params![title.trim()],
                |row| row.get(0),
            )
            .optional()
            .map_err(|e| self.db_error(e))?;
        let text = text.ok_or_else(|| LibraryError::NotFound {
            file: self.database.clone(),
            what: "piece",
            name: title.to_string(),
        })?;
        text.map(|text| {
            serde_json::from_str(&text).map_err(|error| LibraryError::Invalid {
                file: self.database.clone(),
                message: format!("the section mapping of {title} cannot be read: {error}"),
            })
        })
        .transpose()
    }

    /// Replaces the stored section mapping of a piece (`None` clears it).
    pub fn set_piece_mapping(
        &mut self,
        title: &str,
        mapping: Option<&serde_json::Value>,
    ) -> Result<(), LibraryError> {
        let changed = self.write(|transaction, database| {
            transaction
                .execute(
                    "UPDATE pieces SET mapping_json = ?2 WHERE title = ?1",
                    params![title.trim(), mapping.map(json_text)],
                )
                .map_err(|source| super::database_error(database, source))
        })?;
        if changed == 0 {
            return Err(LibraryError::NotFound {
                file: self.database.clone(),
                what: "piece",
                name: title.to_string(),
            });
        }
        Ok(())
    }

    /// Saves a placement scenario with the current time.
    pub fn save_scenario(&mut self, input: &ScenarioInput) -> Result<i64, LibraryError> {
        crate::text::check_name("the scenario's name", &input.name).map_err(|message| {
            LibraryError::Invalid {
                file: self.database.clone(),
                message,
            }
        })?;
        if let Some(programme) = &input.programme {
            self.programme(programme)?;
        }
        self.write(|transaction, database| {
            transaction
                .execute(
                    "INSERT INTO scenarios (name, programme_id, layout, constraints_json, result_json, notes, saved_at)
                     VALUES (?1, (SELECT id FROM programmes WHERE name = ?2), ?3, ?4, ?5, ?6, ?7)",
                    params![
                        input.name.trim(),
                        input.programme.as_deref().map(str::trim),
                        input.layout,
                        json_text(&input.constraints),
                        json_text(&input.result),
                        input.notes,
                        now_timestamp()
                    ],
                )
                .map_err(|source| super::database_error(database, source))?;
            Ok(transaction.last_insert_rowid())
        })
    }

    /// Every saved scenario, newest first.
    pub fn scenarios(&self) -> Result<Vec<ScenarioRecord>, LibraryError> {
        let mut statement = self
            .conn
            .prepare(
                "SELECT s.id, s.name, g.name, s.layout, s.constraints_json, s.result_json, s.notes, s.saved_at
                 FROM scenarios s LEFT JOIN programmes g ON g.id = s.programme_id
                 ORDER BY s.saved_at DESC, s.id DESC",
            )
            .map_err(|e| self.db_error(e))?;
        let rows = statement
            .query_map([], |row| {
                Ok((
                    row.get::<_, i64>(0)?,
                    row.get::<_, String>(1)?,
                    row.get::<_, Option<String>>(2)?,
                    row.get::<_, Option<String>>(3)?,
                    row.get::<_, String>(4)?,
                    row.get::<_, String>(5)?,
                    row.get::<_, Option<String>>(6)?,
                    row.get::<_, String>(7)?,
                ))
            })
            .map_err(|e| self.db_error(e))?;
        let mut scenarios = Vec::new();
        for row in rows {
            let (id, name, programme, layout, constraints, result, notes, saved_at) =
                row.map_err(|e| self.db_error(e))?;
            let parse = |text: &str| {
                serde_json::from_str(text).map_err(|error| LibraryError::Invalid {
                    file: self.database.clone(),
                    message: format!("scenario {name} cannot be read: {error}"),
                })
            };
            scenarios.push(ScenarioRecord {
                id,
                constraints: parse(&constraints)?,
                result: parse(&result)?,
                name,
                programme,
                layout,
                notes,
                saved_at,
            });
        }
        Ok(scenarios)
    }
}
