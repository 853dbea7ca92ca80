//! A library written by schema version 1 (the fixture
//! `tests/data/library-v1.sqlite`, made by migration 1 alone) opens with
//! this build, is migrated to the latest version, and keeps its data.

use ambit::library::{Library, schema};

/// The table and index definitions of a database, sorted.
fn schema_of(conn: &rusqlite::Connection) -> Vec<(String, String)> {
    let mut statement = conn
        .prepare("SELECT name, coalesce(sql, '') FROM sqlite_schema WHERE name NOT LIKE 'sqlite_%' ORDER BY name")
        .unwrap();
    statement
        .query_map([], |row| Ok((row.get(0)?, row.get(1)?)))
        .unwrap()
        .collect::<Result<_, _>>()
        .unwrap()
}

#[test]
fn the_v1_fixture_is_what_migration_1_makes() {
    // Guards the fixture itself: its schema must equal migration 1 applied
    // by rusqlite_migration to an empty database.
    let fixture = rusqlite::Connection::open_with_flags(
        "tests/data/library-v1.sqlite",
        rusqlite::OpenFlags::SQLITE_OPEN_READ_ONLY,
    )
    .unwrap();
    let mut fresh = rusqlite::Connection::open_in_memory().unwrap();
    schema::migrations().to_version(&mut fresh, 1).unwrap();
    assert_eq!(schema_of(&fixture), schema_of(&fresh));
    let version: i64 = fixture
        .query_row("PRAGMA user_version", [], |r| r.get(0))
        .unwrap();
    assert_eq!(version, 1);
}

#[test]
fn a_v1_library_is_migrated_and_keeps_its_singers_and_scenarios() {
    let dir = tempfile::tempdir().unwrap();
    let folder = dir.path().join("lib");
    std::fs::create_dir_all(&folder).unwrap();
    std::fs::copy(
        "tests/data/library-v1.sqlite",
        folder.join("library.sqlite"),
    )
    .unwrap();

    let library = Library::open(&folder).unwrap();
    assert_eq!(library.schema_version().unwrap(), schema::LATEST_VERSION);
    library.check_integrity().unwrap();
    // Migration 2 adds the scenarios.layout column and the history indexes.
    let layout: Option<String> = library
        .connection()
        .query_row(
            "SELECT layout FROM scenarios WHERE name = 'spring draft'",
            [],
            |r| r.get(0),
        )
        .unwrap();
    assert_eq!(layout, None);
    let indexes: i64 = library
        .connection()
        .query_row(
            "SELECT count(*) FROM sqlite_schema WHERE type = 'index' AND name = 'auditions_by_singer'",
            [],
            |r| r.get(0),
        )
        .unwrap();
    assert_eq!(indexes, 1);
    // The fixture's singer, typed in as F3–F5 (MIDI 53–77, C4 = 60).
    let singers = library.singers(true).unwrap();
    assert_eq!(singers.len(), 1);
    let wenna = singers[0].current.as_ref().unwrap();
    assert_eq!((wenna.range_low_midi, wenna.range_high_midi), (53.0, 77.0));
    assert_eq!(
        library.scenarios().unwrap()[0].notes.as_deref(),
        Some("made before v2")
    );
}
