//! The library's schema, as numbered migrations. Each migration is applied
//! once, inside one transaction, and recorded in SQLite's `user_version`
//! (rusqlite_migration). Never edit a published migration: add a new one.

use rusqlite_migration::{M, Migrations};

/// Version 1: singers, typed-in ranges, recordings, auditions, pieces,
/// programmes and placement scenarios.
pub const V1: &str = r#"
CREATE TABLE singers (
    id INTEGER PRIMARY KEY,
    name TEXT NOT NULL,
    -- trimmed and lower-cased name: one singer per name, as in a roster
    name_key TEXT NOT NULL UNIQUE,
    -- contact notes and remarks
    notes TEXT,
    section TEXT,
    voice_type TEXT,
    archived INTEGER NOT NULL DEFAULT 0 CHECK (archived IN (0, 1)),
    created_at TEXT NOT NULL
);

-- Ranges typed in from a piano check, kept apart from measured profiles.
CREATE TABLE typed_ranges (
    id INTEGER PRIMARY KEY,
    singer_id INTEGER NOT NULL REFERENCES singers(id) ON DELETE CASCADE,
    entered_at TEXT NOT NULL,
    range_low_midi REAL NOT NULL,
    range_high_midi REAL NOT NULL,
    comfort_low_midi REAL NOT NULL,
    comfort_high_midi REAL NOT NULL,
    primo_midi REAL,
    secondo_midi REAL
);

-- Recording files in the library folder, named by their SHA-256. A file is
-- referenced by any number of audition_recordings rows.
CREATE TABLE recordings (
    sha256 TEXT PRIMARY KEY CHECK (length(sha256) = 64),
    file_name TEXT NOT NULL,
    bytes INTEGER NOT NULL
);

CREATE TABLE auditions (
    id INTEGER PRIMARY KEY,
    singer_id INTEGER NOT NULL REFERENCES singers(id) ON DELETE CASCADE,
    held_on TEXT NOT NULL,
    profile_json TEXT NOT NULL,
    analysis_version TEXT NOT NULL,
    created_at TEXT NOT NULL
);

CREATE TABLE audition_recordings (
    audition_id INTEGER NOT NULL REFERENCES auditions(id) ON DELETE CASCADE,
    task TEXT NOT NULL CHECK (task IN ('speech', 'glide', 'scale', 'sustain', 'song')),
    sha256 TEXT NOT NULL REFERENCES recordings(sha256),
    original_name TEXT NOT NULL,
    PRIMARY KEY (audition_id, task, sha256)
);

CREATE TABLE pieces (
    id INTEGER PRIMARY KEY,
    title TEXT NOT NULL UNIQUE,
    sha256 TEXT NOT NULL CHECK (length(sha256) = 64),
    file_name TEXT NOT NULL,
    original_name TEXT NOT NULL,
    analysis_json TEXT NOT NULL,
    analysis_version TEXT NOT NULL,
    mapping_json TEXT,
    overrides_json TEXT NOT NULL DEFAULT '{}',
    added_at TEXT NOT NULL
);

CREATE TABLE programmes (
    id INTEGER PRIMARY KEY,
    name TEXT NOT NULL UNIQUE,
    created_at TEXT NOT NULL
);

CREATE TABLE programme_pieces (
    programme_id INTEGER NOT NULL REFERENCES programmes(id) ON DELETE CASCADE,
    position INTEGER NOT NULL,
    piece_id INTEGER NOT NULL REFERENCES pieces(id) ON DELETE RESTRICT,
    PRIMARY KEY (programme_id, position)
);

CREATE TABLE scenarios (
    id INTEGER PRIMARY KEY,
    name TEXT NOT NULL,
    programme_id INTEGER REFERENCES programmes(id) ON DELETE SET NULL,
    constraints_json TEXT NOT NULL,
    result_json TEXT NOT NULL,
    notes TEXT,
    saved_at TEXT NOT NULL
);
"#;

/// Version 2: indexes for a singer's history and for counting the
/// references to a recording file; the layout a scenario was placed into.
pub const V2: &str = r#"
CREATE INDEX auditions_by_singer ON auditions(singer_id, held_on, id);
CREATE INDEX typed_ranges_by_singer ON typed_ranges(singer_id, entered_at, id);
CREATE INDEX audition_recordings_by_file ON audition_recordings(sha256);
ALTER TABLE scenarios ADD COLUMN layout TEXT;
"#;

/// Every migration, oldest first.
pub fn migrations() -> Migrations<'static> {
    Migrations::new(vec![M::up(V1), M::up(V2)])
}

/// The schema version this build writes.
pub const LATEST_VERSION: i64 = 2;
