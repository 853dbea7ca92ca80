//! The choir library as a director uses it: import a roster, store
//! auditions, read a singer's history, back up and restore, delete a
//! person's data — and every bad input refused with the library unchanged.

use crate::library_support;

use std::path::Path;

use ambit::library::{Library, LibraryError, ScenarioInput, sha256_file};
use ambit::roster::{Roster, read_roster};
use library_support::{audition, profile, recording, recording_files};

const ROSTER: &str = "name,range_low,range_high,comfort_low,comfort_high,primo,secondo,voice_type,section,notes\n\
Maren Voss,F3,C6,A3,F5,E4,F#5,soprano,S1,\n\
Jolan Brekke,E2,E4,G2,C4,,,bass,B1,\n\
Ilse Marwick,G3,A5,B3,E5,,,alto,A1,\n";

fn library_with_roster(dir: &Path) -> Library {
    let roster_file = dir.join("roster.csv");
    std::fs::write(&roster_file, ROSTER).unwrap();
    let mut library = Library::create(&dir.join("lib")).unwrap();
    library.import_roster_file(&roster_file, false).unwrap();
    library
}

/// The whole database as text, to show that a refused operation changed nothing.
fn dump(library: &Library) -> String {
    let conn = library.connection();
    let mut text = String::new();
    for table in [
        "singers",
        "typed_ranges",
        "auditions",
        "audition_recordings",
        "recordings",
        "pieces",
        "scenarios",
    ] {
        let mut statement = conn
            .prepare(&format!("SELECT * FROM {table} ORDER BY 1"))
            .unwrap();
        let columns = statement.column_count();
        let rows = statement
            .query_map([], |row| {
                (0..columns)
                    .map(|i| {
                        row.get::<_, rusqlite::types::Value>(i)
                            .map(|v| format!("{v:?}"))
                    })
                    .collect::<Result<Vec<_>, _>>()
            })
            .unwrap();
        for row in rows {
            text.push_str(&format!("{table}: {}\n", row.unwrap().join(" | ")));
        }
    }
    text
}

#[test]
fn roster_import_plans_then_commits_and_exports_the_same_columns() {
    let dir = tempfile::tempdir().unwrap();
    let mut library = Library::create(&dir.path().join("lib")).unwrap();
    let roster_file = dir.path().join("roster.csv");
    std::fs::write(&roster_file, ROSTER).unwrap();

    // A dry run lists three new singers and writes nothing.
    let plan = library.import_roster_file(&roster_file, true).unwrap();
    assert_eq!(
        plan.added,
        vec!["Maren Voss", "Jolan Brekke", "Ilse Marwick"]
    );
    assert_eq!(library.singers(true).unwrap().len(), 0);

    library.import_roster_file(&roster_file, false).unwrap();
    // Raising Maren's top from C6 to D6 (MIDI 84 → 86, C4 = 60) is a change;
    // the other two are unchanged.
    std::fs::write(
        &roster_file,
        ROSTER.replace("Maren Voss,F3,C6", "Maren Voss,F3,D6"),
    )
    .unwrap();
    let plan = library.import_roster_file(&roster_file, false).unwrap();
    assert_eq!(plan.added.len(), 0);
    assert_eq!(plan.skipped, vec!["Jolan Brekke", "Ilse Marwick"]);
    assert_eq!(plan.changed.len(), 1);
    assert_eq!(plan.changed[0].fields, vec!["range_high C6 → D6"]);

    // Export through the one roster writer, read back through the one parser.
    let (roster, left_out) = library.roster().unwrap();
    assert!(left_out.is_empty());
    let exported = dir.path().join("export.csv");
    std::fs::write(&exported, ambit::roster::roster_to_csv(&roster).unwrap()).unwrap();
    let back = read_roster(&exported).unwrap();
    let maren = back
        .singers
        .iter()
        .find(|s| s.name == "Maren Voss")
        .unwrap();
    assert_eq!(maren.range_high_midi, 86.0);
    assert_eq!(maren.primo_midi, Some(64.0)); // E4 = MIDI 64
    assert_eq!(back.singers.len(), 3);
}

#[test]
fn history_lists_every_profile_in_date_order_and_the_newest_is_current() {
    let dir = tempfile::tempdir().unwrap();
    let mut library = library_with_roster(dir.path());
    // A student's comfort top grows from D4 (62) to F4 (65) over a year.
    for (date, top) in [
        ("2026-09-01", 65.0),
        ("2025-09-01", 62.0),
        ("2026-03-01", 64.0),
    ] {
        let file = recording(dir.path(), &format!("glide-{date}.wav"), date.as_bytes());
        library
            .add_audition(&audition(
                "Jolan Brekke",
                date,
                file,
                profile((40.0, 67.0), (45.0, top)),
            ))
            .unwrap();
    }
    let history = library.history("jolan brekke").unwrap();
    let dates: Vec<&str> = history.iter().map(|entry| entry.held_on.as_str()).collect();
    assert_eq!(dates, vec!["2025-09-01", "2026-03-01", "2026-09-01"]);
    let tops: Vec<f64> = history
        .iter()
        .map(|e| e.profile.comfort.span.high_midi)
        .collect();
    assert_eq!(tops, vec![62.0, 64.0, 65.0]);
    // The audition was stored after the typed-in range, so it is current.
    let jolan = library
        .singers(false)
        .unwrap()
        .into_iter()
        .find(|s| s.name == "Jolan Brekke")
        .unwrap();
    assert_eq!(jolan.auditions, 3);
    assert_eq!(jolan.current.unwrap().comfort_high_midi, 65.0);
}

#[test]
fn recordings_are_named_by_sha256_and_shared_files_are_stored_once() {
    let dir = tempfile::tempdir().unwrap();
    let mut library = library_with_roster(dir.path());
    let shared = recording(dir.path(), "warmup.wav", b"the same bytes");
    library
        .add_audition(&audition(
            "Maren Voss",
            "2026-01-10",
            shared.clone(),
            profile((53.0, 84.0), (57.0, 77.0)),
        ))
        .unwrap();
    library
        .add_audition(&audition(
            "Ilse Marwick",
            "2026-01-10",
            shared.clone(),
            profile((55.0, 81.0), (59.0, 76.0)),
        ))
        .unwrap();
    // SHA-256 as computed independently of the library's own helper would
    // be ideal; sha256_file is checked against FIPS 180-2 in its unit test.
    let expected = format!("{}.wav", sha256_file(&shared).unwrap());
    assert_eq!(recording_files(library.folder()), vec![expected]);
}

#[test]
fn deleting_a_singer_removes_their_rows_and_files_but_keeps_shared_files() {
    let dir = tempfile::tempdir().unwrap();
    let mut library = library_with_roster(dir.path());
    let own = recording(dir.path(), "jolan.wav", b"only jolan sings this");
    let shared = recording(dir.path(), "shared.wav", b"sung by two singers");
    library
        .add_audition(&audition(
            "Jolan Brekke",
            "2026-02-01",
            own.clone(),
            profile((40.0, 64.0), (43.0, 60.0)),
        ))
        .unwrap();
    library
        .add_audition(&audition(
            "Jolan Brekke",
            "2026-02-02",
            shared.clone(),
            profile((40.0, 64.0), (43.0, 60.0)),
        ))
        .unwrap();
    library
        .add_audition(&audition(
            "Maren Voss",
            "2026-02-02",
            shared.clone(),
            profile((53.0, 84.0), (57.0, 77.0)),
        ))
        .unwrap();
    let own_file = library
        .folder()
        .join("recordings")
        .join(format!("{}.wav", sha256_file(&own).unwrap()));
    let shared_file = library
        .folder()
        .join("recordings")
        .join(format!("{}.wav", sha256_file(&shared).unwrap()));
    assert!(own_file.is_file() && shared_file.is_file());

    let removed = library.delete_singer("Jolan Brekke").unwrap();
    assert_eq!(removed, 1);
    // Gone from disk: only the file Maren's audition shares is left.
    assert!(!own_file.exists());
    assert!(shared_file.is_file());
    // Gone from every table.
    let conn = library.connection();
    let count = |sql: &str| conn.query_row(sql, [], |row| row.get::<_, i64>(0)).unwrap();
    assert_eq!(
        count("SELECT count(*) FROM singers WHERE name = 'Jolan Brekke'"),
        0
    );
    assert_eq!(count("SELECT count(*) FROM auditions"), 1);
    assert_eq!(count("SELECT count(*) FROM typed_ranges"), 2);
    assert_eq!(count("SELECT count(*) FROM recordings"), 1);
    assert!(matches!(
        library.history("Jolan Brekke"),
        Err(LibraryError::UnknownSinger { .. })
    ));
    // Nothing of Jolan's bytes survives anywhere in the library folder.
    for entry in walk(library.folder()) {
        let bytes = std::fs::read(&entry).unwrap();
        assert!(
            !bytes
                .windows(b"only jolan".len())
                .any(|w| w == b"only jolan"),
            "{} still holds the deleted recording",
            entry.display()
        );
    }
}

fn walk(dir: &Path) -> Vec<std::path::PathBuf> {
    let mut files = Vec::new();
    for entry in std::fs::read_dir(dir).unwrap().flatten() {
        let path = entry.path();
        if path.is_dir() {
            files.extend(walk(&path));
        } else {
            files.push(path);
        }
    }
    files
}

#[test]
fn person_export_holds_their_rows_and_recordings() {
    let dir = tempfile::tempdir().unwrap();
    let mut library = library_with_roster(dir.path());
    let file = recording(dir.path(), "ilse.wav", b"ilse glide");
    library
        .add_audition(&audition(
            "Ilse Marwick",
            "2026-04-04",
            file.clone(),
            profile((55.0, 81.0), (59.0, 76.0)),
        ))
        .unwrap();
    let out = dir.path().join("ilse-export");
    let export = library.export_person("Ilse Marwick", &out).unwrap();
    assert_eq!(export.auditions.len(), 1);
    assert_eq!(export.typed_ranges.len(), 1);
    let copied = out
        .join("recordings")
        .join(format!("{}.wav", sha256_file(&file).unwrap()));
    assert_eq!(std::fs::read(copied).unwrap(), b"ilse glide");
    let json: serde_json::Value =
        serde_json::from_slice(&std::fs::read(out.join("person.json")).unwrap()).unwrap();
    assert_eq!(json["singer"]["name"], "Ilse Marwick");
}

#[test]
fn backup_then_delete_then_restore_brings_the_singer_and_files_back() {
    let dir = tempfile::tempdir().unwrap();
    let mut library = library_with_roster(dir.path());
    let file = recording(dir.path(), "maren.wav", b"maren sustain");
    library
        .add_audition(&audition(
            "Maren Voss",
            "2026-05-05",
            file.clone(),
            profile((53.0, 84.0), (57.0, 77.0)),
        ))
        .unwrap();
    library
        .save_scenario(&ScenarioInput {
            name: "autumn".into(),
            programme: None,
            layout: Some("SATB".into()),
            constraints: serde_json::json!({"sizes": []}),
            result: serde_json::json!({"assignments": []}),
            notes: Some("first try".into()),
        })
        .unwrap();
    let before = dump(&library);
    let backup = dir.path().join("backup.zip");
    let manifest = library.backup(&backup).unwrap();
    assert_eq!(manifest.entries.len(), 2); // database + one recording

    library.delete_singer("Maren Voss").unwrap();
    assert!(recording_files(library.folder()).is_empty());
    let folder = library.folder().to_path_buf();
    drop(library);

    Library::restore(&backup, &folder).unwrap();
    let restored = Library::open(&folder).unwrap();
    restored.check_integrity().unwrap();
    assert_eq!(dump(&restored), before);
    assert_eq!(
        recording_files(&folder),
        vec![format!("{}.wav", sha256_file(&file).unwrap())]
    );
    assert_eq!(
        restored.scenarios().unwrap()[0].notes.as_deref(),
        Some("first try")
    );
}

/// Rewrites one entry of a backup zip with other bytes (a tampered copy).
fn rewrite_entry(backup: &Path, out: &Path, entry: &str, content: &[u8]) {
    let mut archive = zip::ZipArchive::new(std::fs::File::open(backup).unwrap()).unwrap();
    let mut writer = zip::ZipWriter::new(std::fs::File::create(out).unwrap());
    let names: Vec<String> = archive
        .file_names()
        .map(|name| name.unwrap().into_owned())
        .collect();
    for name in names {
        let mut bytes = Vec::new();
        std::io::Read::read_to_end(&mut archive.by_name(&name).unwrap(), &mut bytes).unwrap();
        if name == entry {
            bytes = content.to_vec();
        }
        writer
            .start_file(name.as_str(), zip::write::SimpleFileOptions::default())
            .unwrap();
        std::io::Write::write_all(&mut writer, &bytes).unwrap();
    }
    writer.finish().unwrap();
}

#[test]
fn tampered_or_truncated_backups_are_refused_and_the_library_is_unchanged() {
    let dir = tempfile::tempdir().unwrap();
    let mut library = library_with_roster(dir.path());
    let file = recording(dir.path(), "maren.wav", b"maren sustain");
    library
        .add_audition(&audition(
            "Maren Voss",
            "2026-05-05",
            file.clone(),
            profile((53.0, 84.0), (57.0, 77.0)),
        ))
        .unwrap();
    let backup = dir.path().join("backup.zip");
    library.backup(&backup).unwrap();
    // Make the live library differ from the backup, so a wrong restore shows.
    library.delete_singer("Ilse Marwick").unwrap();
    let before = dump(&library);
    let files_before = recording_files(library.folder());
    let folder = library.folder().to_path_buf();
    drop(library);

    let recording_entry = format!("recordings/{}.wav", sha256_file(&file).unwrap());
    let tampered = dir.path().join("tampered.zip");
    rewrite_entry(&backup, &tampered, &recording_entry, b"maren sustaiN");
    let truncated = dir.path().join("truncated.zip");
    let bytes = std::fs::read(&backup).unwrap();
    std::fs::write(&truncated, &bytes[..bytes.len() / 2]).unwrap();
    let not_zip = dir.path().join("notes.zip");
    std::fs::write(&not_zip, "not a zip at all").unwrap();

    for (bad, expected) in [
        (&tampered, "does not match manifest.json"),
        (&truncated, "not a readable backup"),
        (&not_zip, "not a readable backup"),
    ] {
        let error = Library::restore(bad, &folder).unwrap_err();
        let message = error.to_string();
        assert!(message.contains(expected), "{message}");
        assert!(message.contains(&bad.display().to_string()), "{message}");
        let library = Library::open(&folder).unwrap();
        assert_eq!(dump(&library), before);
        assert_eq!(recording_files(&folder), files_before);
    }
}

#[test]
fn bad_roster_files_are_refused_and_nothing_is_imported() {
    let dir = tempfile::tempdir().unwrap();
    let mut library = library_with_roster(dir.path());
    let before = dump(&library);
    let cases: [(&str, &[u8], &str); 3] = [
        // Row 3 has an unknown note: the whole file is refused, not rows 2 and 4.
        (
            "bad_row.csv",
            b"name,range_low,range_high,comfort_low,comfort_high\nNew One,C3,C5,E3,A4\nNew Two,C3,H9,E3,A4\nNew Three,C3,C5,E3,A4\n",
            "line 3",
        ),
        ("missing_column.csv", b"name,range_low,range_high,comfort_low\nNew One,C3,C5,E3\n", "comfort_high"),
        // "Zoë" saved as Latin-1: 0xEB is not valid UTF-8.
        ("latin1.csv", b"name,range_low,range_high,comfort_low,comfort_high\nZo\xEB Hartl,C3,C5,E3,A4\n", "latin1.csv"),
    ];
    for (name, content, expected) in cases {
        let path = dir.path().join(name);
        std::fs::write(&path, content).unwrap();
        let error = library.import_roster_file(&path, false).unwrap_err();
        let message = error.to_string();
        assert!(message.contains(name), "{message}");
        assert!(message.contains(expected), "{message}");
        assert_eq!(dump(&library), before, "{name} changed the library");
    }
}

#[test]
fn an_import_that_fails_midway_commits_nothing() {
    // A roster can be valid on its own yet break the store; simulate that
    // with a trigger that refuses the third singer: the first two must not stay.
    let dir = tempfile::tempdir().unwrap();
    let mut library = Library::create(&dir.path().join("lib")).unwrap();
    library
        .connection()
        .execute_batch(
            "CREATE TRIGGER refuse_third BEFORE INSERT ON singers WHEN NEW.name = 'Ilse Marwick'
             BEGIN SELECT RAISE(ABORT, 'refused'); END;",
        )
        .unwrap();
    let roster_file = dir.path().join("roster.csv");
    std::fs::write(&roster_file, ROSTER).unwrap();
    let roster: Roster = read_roster(&roster_file).unwrap();
    assert!(library.import_roster(&roster).is_err());
    assert_eq!(library.singers(true).unwrap().len(), 0);
}

#[test]
fn a_file_that_is_not_sqlite_is_refused_and_left_alone() {
    let dir = tempfile::tempdir().unwrap();
    let folder = dir.path().join("lib");
    std::fs::create_dir_all(&folder).unwrap();
    let database = folder.join("library.sqlite");
    let text = b"name,range_low\nthis is a CSV saved under the wrong name\n".repeat(20);
    std::fs::write(&database, &text).unwrap();
    let error = Library::open(&folder).err().unwrap();
    assert!(matches!(error, LibraryError::NotSqlite { .. }), "{error}");
    assert!(error.to_string().contains("library.sqlite"));
    assert_eq!(std::fs::read(&database).unwrap(), text);
}

#[test]
fn a_library_from_a_newer_schema_is_refused_and_left_alone() {
    let dir = tempfile::tempdir().unwrap();
    let folder = dir.path().join("lib");
    drop(Library::create(&folder).unwrap());
    let database = folder.join("library.sqlite");
    {
        let conn = rusqlite::Connection::open(&database).unwrap();
        conn.execute_batch("PRAGMA user_version = 99; PRAGMA wal_checkpoint(TRUNCATE);")
            .unwrap();
    }
    let before = std::fs::read(&database).unwrap();
    let error = Library::open(&folder).err().unwrap();
    assert!(
        matches!(error, LibraryError::NewerSchema { found: 99, .. }),
        "{error}"
    );
    assert!(error.to_string().contains("newer Ambit"));
    assert_eq!(std::fs::read(&database).unwrap(), before);
}

#[test]
fn a_missing_library_says_how_to_make_one() {
    let dir = tempfile::tempdir().unwrap();
    let error = Library::open(&dir.path().join("nowhere")).err().unwrap();
    assert!(error.to_string().contains("ambit library init"), "{error}");
}
