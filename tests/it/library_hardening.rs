//! The choir library against hostile or careless use: a backup whose
//! database names files outside the library, deleted data left in the
//! file, leftovers of killed runs, oversize restores, loose permissions,
//! damaged and read-only libraries, interrupted exports, spreadsheet
//! formulas in CSV cells, control characters and very long names.

use crate::common;
use crate::library_support;
use crate::smf_builder;

use std::io::{Read, Write};
use std::path::{Path, PathBuf};

use ambit::library::{BackupManifest, Library, LibraryError, PieceInput, sha256_bytes};
use ambit::roster::{parse_roster, roster_to_csv};
use common::run_ambit;
use library_support::{audition, file_names, profile, recording};

const ROSTER: &str = "name,range_low,range_high,comfort_low,comfort_high,section\n\
Maren Voss,F3,C6,A3,F5,S1\n\
Jolan Brekke,E2,E4,G2,C4,B1\n";

/// A library with two typed-in singers and one audition of "Zephyrine
/// Quillfeather" (a name found nowhere else), plus one piece.
fn library_with_audition(dir: &Path) -> (Library, PathBuf) {
    let roster = dir.join("roster.csv");
    std::fs::write(&roster, ROSTER).unwrap();
    let mut library = Library::create(&dir.join("lib")).unwrap();
    library.import_roster_file(&roster, false).unwrap();
    let take = recording(dir, "take.wav", b"zephyrine glide take");
    library
        .add_audition(&audition(
            "Zephyrine Quillfeather",
            "2026-05-05",
            take.clone(),
            profile((55.0, 79.0), (58.0, 74.0)),
        ))
        .unwrap();
    let score = recording(dir, "motet.xml", b"<score-partwise/>");
    library
        .add_piece(
            &PieceInput {
                title: "Motet".into(),
                score,
                analysis: serde_json::json!({}),
                mapping: None,
            },
            None,
        )
        .unwrap();
    (library, take)
}

/// Changes the database of a closed library with plain SQL, as someone
/// editing the file (or the copy inside a backup) would.
fn tamper(database: &Path, sql: &str) {
    let conn = rusqlite::Connection::open(database).unwrap();
    conn.execute_batch(sql).unwrap();
}

fn read_zip(path: &Path) -> Vec<(String, Vec<u8>)> {
    let mut archive = zip::ZipArchive::new(std::fs::File::open(path).unwrap()).unwrap();
    let names: Vec<String> = archive
        .file_names()
        .map(|name| name.unwrap().into_owned())
        .collect();
    names
        .into_iter()
        .map(|name| {
            let mut bytes = Vec::new();
            archive
                .by_name(&name)
                .unwrap()
                .read_to_end(&mut bytes)
                .unwrap();
            (name, bytes)
        })
        .collect()
}

fn write_zip(path: &Path, entries: &[(String, Vec<u8>)]) {
    let mut writer = zip::ZipWriter::new(std::fs::File::create(path).unwrap());
    for (name, bytes) in entries {
        writer
            .start_file(name.as_str(), zip::write::SimpleFileOptions::default())
            .unwrap();
        writer.write_all(bytes).unwrap();
    }
    writer.finish().unwrap();
}

/// Rewrites a backup with `change` applied to its manifest.
fn rewrite_manifest(backup: &Path, out: &Path, change: impl Fn(&mut BackupManifest)) {
    let mut entries = read_zip(backup);
    for (name, bytes) in &mut entries {
        if name == "manifest.json" {
            let mut manifest: BackupManifest = serde_json::from_slice(bytes).unwrap();
            change(&mut manifest);
            *bytes = serde_json::to_vec(&manifest).unwrap();
        }
    }
    write_zip(out, &entries);
}

/// A backup of the library of [`library_with_audition`], the library closed.
fn backed_up(dir: &Path) -> PathBuf {
    let (library, _) = library_with_audition(dir);
    let backup = dir.join("backup.zip");
    library.backup(&backup).unwrap();
    backup
}

/// The folder of the library of [`library_with_audition`], closed.
fn closed_library(dir: &Path) -> PathBuf {
    library_with_audition(dir).0.folder().to_path_buf()
}

#[test]
fn a_backup_whose_database_names_files_outside_the_library_is_refused() {
    let dir = tempfile::tempdir().unwrap();
    let backup = backed_up(dir.path());

    // Change the database inside the backup and re-hash the manifest: the
    // hashes then agree, so only the name check can stop it.
    let victim = dir.path().join("victim.txt");
    std::fs::write(&victim, "not the library's").unwrap();
    let mut entries = read_zip(&backup);
    let staged = dir.path().join("staged.sqlite");
    let database = entries
        .iter()
        .position(|(name, _)| name == "library.sqlite")
        .unwrap();
    std::fs::write(&staged, &entries[database].1).unwrap();
    tamper(
        &staged,
        "UPDATE recordings SET file_name = '../../victim.txt';",
    );
    entries[database].1 = std::fs::read(&staged).unwrap();
    let (sha, bytes) = (
        sha256_bytes(&entries[database].1),
        entries[database].1.len() as u64,
    );
    for (name, content) in &mut entries {
        if name == "manifest.json" {
            let mut manifest: BackupManifest = serde_json::from_slice(content).unwrap();
            for entry in &mut manifest.entries {
                if entry.path == "library.sqlite" {
                    entry.sha256 = sha.clone();
                    entry.bytes = bytes;
                }
            }
            *content = serde_json::to_vec(&manifest).unwrap();
        }
    }
    let hostile = dir.path().join("hostile.zip");
    write_zip(&hostile, &entries);

    let target = dir.path().join("restored");
    let error = Library::restore(&hostile, &target).unwrap_err();
    let message = error.to_string();
    assert!(message.contains("../../victim.txt"), "{message}");
    assert!(message.contains("recordings row"), "{message}");
    assert!(!target.join("library.sqlite").exists());
    assert_eq!(
        std::fs::read_to_string(&victim).unwrap(),
        "not the library's"
    );
}

#[test]
fn no_command_reaches_outside_the_library_through_a_changed_database() {
    let dir = tempfile::tempdir().unwrap();
    let folder = closed_library(dir.path());
    let victim = dir.path().join("victim.txt");
    std::fs::write(&victim, "keep me").unwrap();
    let database = folder.join("library.sqlite");

    for hostile in [
        victim.display().to_string(), // an absolute path
        "../../victim.txt".to_string(),
    ] {
        tamper(
            &database,
            &format!("UPDATE recordings SET file_name = '{hostile}';"),
        );
        let mut library = Library::open(&folder).unwrap();

        let out = dir.path().join("export");
        let error = library
            .export_person("Zephyrine Quillfeather", &out)
            .unwrap_err();
        assert!(matches!(error, LibraryError::StoredName { .. }), "{error}");
        assert!(!out.exists());

        let zip = dir.path().join("b.zip");
        let error = library.backup(&zip).unwrap_err();
        assert!(matches!(error, LibraryError::StoredName { .. }), "{error}");
        assert!(!zip.exists());
        // Its snapshot of the database is gone too.
        assert!(
            !file_names(&folder)
                .iter()
                .any(|name| name.starts_with(".backup-"))
        );

        let error = library.delete_singer("Zephyrine Quillfeather").unwrap_err();
        assert!(error.to_string().contains(&hostile), "{error}");
        // The deletion was rolled back as a whole: the singer is still there.
        assert!(library.singer_id("Zephyrine Quillfeather").is_ok());
        assert_eq!(std::fs::read_to_string(&victim).unwrap(), "keep me");
    }

    // A score name is checked the same way wherever the piece is listed.
    tamper(&database, "UPDATE pieces SET file_name = '/etc/hostname';");
    let library = Library::open(&folder).unwrap();
    let error = library.pieces().unwrap_err();
    assert!(error.to_string().contains("pieces row"), "{error}");
}

/// Every byte of the database file and its WAL.
fn database_bytes(folder: &Path) -> Vec<u8> {
    let mut bytes = std::fs::read(folder.join("library.sqlite")).unwrap();
    if let Ok(wal) = std::fs::read(folder.join("library.sqlite-wal")) {
        bytes.extend(wal);
    }
    bytes
}

fn contains(haystack: &[u8], needle: &str) -> bool {
    haystack
        .windows(needle.len())
        .any(|window| window == needle.as_bytes())
}

#[test]
fn a_deleted_singer_cannot_be_read_back_from_the_database_file() {
    let dir = tempfile::tempdir().unwrap();
    let (mut library, take) = library_with_audition(dir.path());
    let folder = library.folder().to_path_buf();
    let take_sha = ambit::library::sha256_file(&take).unwrap();
    // The search can find them before the deletion (so it can fail after).
    let before = database_bytes(&folder);
    assert!(contains(&before, "Zephyrine Quillfeather"));
    assert!(contains(&before, &take_sha));

    library.delete_singer("Zephyrine Quillfeather").unwrap();
    for bytes in [database_bytes(&folder), {
        drop(library);
        database_bytes(&folder)
    }] {
        for trace in ["Zephyrine", "zephyrine quillfeather", take_sha.as_str()] {
            assert!(!contains(&bytes, trace), "`{trace}` is still in the file");
        }
        // The others are still there.
        assert!(contains(&bytes, "Maren Voss"));
    }
}

#[test]
fn leftovers_of_killed_runs_are_swept_at_the_next_open() {
    let dir = tempfile::tempdir().unwrap();
    let folder = closed_library(dir.path());
    // Process id 4,000,000,000 cannot exist (Linux pid_max is at most 2^22).
    let dead = 4_000_000_000u32;
    for name in [format!(".backup-{dead}-1"), format!(".restore-{dead}-2")] {
        std::fs::create_dir(folder.join(&name)).unwrap();
        std::fs::write(folder.join(&name).join("library.sqlite"), "Zephyrine").unwrap();
    }
    let partial = dir.path().join("choir.zip.partial");
    std::fs::write(&partial, "half a backup").unwrap();
    std::fs::write(
        folder.join(format!(".pending-{dead}-3")),
        partial.display().to_string(),
    )
    .unwrap();
    // One that belongs to a running process (this one) stays.
    let live = format!(".backup-{}-4", std::process::id());
    std::fs::create_dir(folder.join(&live)).unwrap();

    drop(Library::open(&folder).unwrap());
    let left: Vec<String> = file_names(&folder)
        .into_iter()
        .filter(|name| name.starts_with('.'))
        .collect();
    assert_eq!(left, vec![live]);
    assert!(!partial.exists());
}

#[test]
fn an_oversize_or_inconsistent_restore_is_refused_before_anything_is_written() {
    let dir = tempfile::tempdir().unwrap();
    let backup = backed_up(dir.path());

    let huge = dir.path().join("huge.zip");
    rewrite_manifest(&backup, &huge, |manifest| {
        for entry in &mut manifest.entries {
            if entry.path.starts_with("recordings/") {
                entry.bytes = (1 << 30) + 1;
            }
        }
    });
    let longer = dir.path().join("longer.zip");
    rewrite_manifest(&backup, &longer, |manifest| {
        for entry in &mut manifest.entries {
            if entry.path.starts_with("scores/") {
                entry.bytes += 1;
            }
        }
    });
    for (bad, expected) in [
        (&huge, "more than the library keeps for one file"),
        (&longer, "the zip says"),
    ] {
        let target = dir.path().join("target");
        let error = Library::restore(bad, &target).unwrap_err();
        assert!(error.to_string().contains(expected), "{error}");
        assert!(error.to_string().contains("nothing was written"), "{error}");
        // Nothing was unpacked: no staging folder, no database.
        assert!(file_names(&target).is_empty(), "{:?}", file_names(&target));
    }
}

#[cfg(unix)]
#[test]
fn library_files_are_private_to_their_owner() {
    use std::os::unix::fs::PermissionsExt;
    let dir = tempfile::tempdir().unwrap();
    let (library, take) = library_with_audition(dir.path());
    // Whatever the source recording's mode, the library's copy is private.
    let _ = take;
    let folder = library.folder().to_path_buf();
    let backup = dir.path().join("backup.zip");
    library.backup(&backup).unwrap();
    let export = dir.path().join("person");
    library
        .export_person("Zephyrine Quillfeather", &export)
        .unwrap();
    let mode = |path: &Path| std::fs::metadata(path).unwrap().permissions().mode() & 0o777;
    let recording = folder
        .join("recordings")
        .join(library_support::recording_files(&folder)[0].clone());
    for path in [
        folder.join("library.sqlite"),
        folder.join("library.sqlite-wal"),
        recording,
        backup,
        export.join("person.json"),
    ] {
        assert_eq!(mode(&path), 0o600, "{}", path.display());
    }
    for path in [
        folder.clone(),
        folder.join("recordings"),
        folder.join("scores"),
        export.clone(),
        export.join("recordings"),
    ] {
        assert_eq!(mode(&path), 0o700, "{}", path.display());
    }
}

#[test]
fn a_damaged_database_opens_read_only_with_the_way_out() {
    let dir = tempfile::tempdir().unwrap();
    let (library, _) = library_with_audition(dir.path());
    let folder = library.folder().to_path_buf();
    let root_page: i64 = library
        .connection()
        .query_row(
            "SELECT rootpage FROM sqlite_schema WHERE name = 'singers'",
            [],
            |row| row.get(0),
        )
        .unwrap();
    drop(library);
    // Flip the b-tree page type of the singers table (SQLite file format,
    // section 1.6: byte 0 of a b-tree page is 2, 5, 10 or 13).
    let database = folder.join("library.sqlite");
    let mut bytes = std::fs::read(&database).unwrap();
    let page_size = usize::from(u16::from_be_bytes([bytes[16], bytes[17]]));
    bytes[(root_page as usize - 1) * page_size] = 0x07;
    std::fs::write(&database, &bytes).unwrap();

    let mut library = Library::open(&folder).unwrap();
    let reason = library.read_only_reason().unwrap().to_string();
    assert!(reason.contains("damaged"), "{reason}");
    assert!(reason.contains("ambit library restore"), "{reason}");
    let error = library.add_singer("Odile Ward", None).unwrap_err();
    assert!(matches!(error, LibraryError::ReadOnly { .. }), "{error}");
    drop(library);
    assert_eq!(std::fs::read(&database).unwrap(), bytes);

    // `init` on it is an error, never "library ready".
    let error = Library::create(&folder).err().unwrap();
    assert!(matches!(error, LibraryError::Damaged { .. }), "{error}");
    assert!(error.to_string().contains("restore your latest backup"));
}

#[cfg(unix)]
#[test]
fn a_read_only_library_folder_can_be_read_and_backed_up() {
    use std::os::unix::fs::PermissionsExt;
    let dir = tempfile::tempdir().unwrap();
    let folder = closed_library(dir.path());
    let before = file_names(&folder);
    std::fs::set_permissions(&folder, std::fs::Permissions::from_mode(0o500)).unwrap();
    // SAFETY: geteuid has no preconditions.
    let root = unsafe { libc::geteuid() } == 0;
    let library = if root {
        // The superuser may write anywhere, so the folder's mode cannot make
        // it read-only; open it the way a read-only folder is opened.
        Library::open_read_only(&folder, "test".into()).unwrap()
    } else {
        Library::open(&folder).unwrap()
    };
    let result = (|| {
        assert!(library.read_only_reason().is_some());
        assert_eq!(library.info()?.singers, 3);
        assert_eq!(library.singers(false)?.len(), 3);
        let backup = dir.path().join("from-read-only.zip");
        let manifest = library.backup(&backup)?;
        assert!(manifest.entries.len() >= 3);
        Ok::<_, LibraryError>(())
    })();
    drop(library);
    let mut library = Library::open_read_only(&folder, "test".into()).unwrap();
    let refused = library.add_singer("Odile Ward", None);
    drop(library);
    std::fs::set_permissions(&folder, std::fs::Permissions::from_mode(0o700)).unwrap();
    result.unwrap();
    assert!(matches!(refused, Err(LibraryError::ReadOnly { .. })));
    if !root {
        assert_eq!(file_names(&folder), before);
    }
}

#[test]
fn an_interrupted_export_leaves_nothing_and_names_the_destination() {
    let dir = tempfile::tempdir().unwrap();
    let (library, _) = library_with_audition(dir.path());
    let out = dir.path().join("zephyrine");
    // Something in the way of the temporary folder makes the write fail.
    let partial = dir.path().join("zephyrine.partial");
    std::fs::write(&partial, "in the way").unwrap();
    let error = library
        .export_person("Zephyrine Quillfeather", &out)
        .unwrap_err();
    let message = error.to_string();
    assert!(
        message.contains(&out.display().to_string()),
        "the error names the destination: {message}"
    );
    assert!(!message.contains(&library.folder().display().to_string()));
    assert!(!out.exists());

    std::fs::remove_file(&partial).unwrap();
    library
        .export_person("Zephyrine Quillfeather", &out)
        .unwrap();
    assert!(out.join("person.json").is_file());
    assert_eq!(file_names(&out.join("recordings")).len(), 1);
    assert!(!partial.exists());
    // An existing folder is never written into.
    assert!(
        library
            .export_person("Zephyrine Quillfeather", &out)
            .is_err()
    );
}

#[test]
fn csv_cells_are_safe_in_a_spreadsheet_and_read_back_unchanged() {
    // OWASP "CSV Injection": cells starting with = + - @ tab or CR are
    // prefixed with a single quote. Names starting with # are data.
    let csv = "name,range_low,range_high,comfort_low,comfort_high,notes\n\
               \"=HYPERLINK(\"\"http://x\"\")\",F3,C6,A3,F5,-3\n\
               +Ida Holm,F3,C6,A3,F5,@home\n\
               -Lene Aas,F3,C6,A3,F5,\n\
               #Nils Berg,E2,E4,G2,C4,'quoted\n";
    let roster = parse_roster(Path::new("roster.csv"), csv.as_bytes()).unwrap();
    let names: Vec<&str> = roster.singers.iter().map(|s| s.name.as_str()).collect();
    assert_eq!(
        names,
        [
            "=HYPERLINK(\"http://x\")",
            "+Ida Holm",
            "-Lene Aas",
            "#Nils Berg"
        ]
    );
    let written = roster_to_csv(&roster).unwrap();
    for line in written.lines().skip(1) {
        let first = line.trim_start_matches('"').chars().next().unwrap();
        assert!(!"=+-@".contains(first), "{line}");
    }
    assert!(
        written.contains(",-3\n") || written.contains(",-3\r\n"),
        "{written}"
    );
    let again = parse_roster(Path::new("again.csv"), written.as_bytes()).unwrap();
    assert_eq!(again, roster);

    // The seating list goes through the same cell function.
    let placement: ambit::placement::Placement = serde_json::from_value(serde_json::json!({
        "assignments": [{"singer": "=1+1", "singer_index": 0, "section": "S1",
                         "section_index": 0, "fit": 80.0, "locked": false,
                         "runner_up": null, "explanation": ""}],
        "objective": 80.0, "balance_penalty": 0.0, "sections": [], "at_risk": []
    }))
    .unwrap();
    let seating = ambit::views::seating_to_csv(&placement, &["S1".into()]).unwrap();
    assert!(seating.contains("S1,'=1+1,80.0"), "{seating}");
}

#[test]
fn very_long_names_and_control_characters_never_crash_or_reach_the_terminal() {
    let dir = tempfile::tempdir().unwrap();
    let folder = closed_library(dir.path());
    // Stored before the name limit (or by another program): 70,000
    // characters, past the 65,535 a format width can hold, and an ESC.
    let long = "L".repeat(70_000);
    tamper(
        &folder.join("library.sqlite"),
        &format!(
            "UPDATE singers SET name = '{long}' WHERE name = 'Maren Voss';
             UPDATE singers SET name = 'Jolan' || char(27) || '[2J' WHERE name = 'Jolan Brekke';"
        ),
    );
    let folder_text = folder.display().to_string();
    let (ok, stdout, stderr) = run_ambit(&["library", "--library", &folder_text, "singers"]);
    assert!(ok, "{stderr}");
    assert!(stdout.contains(&long));
    assert!(!stdout.contains('\u{1b}'));
    assert!(stdout.contains("Jolan\\x1b[2J"), "{stdout}");

    // At input, a long name is a clear error (exit 1), not a crash (101).
    let roster = dir.path().join("long.csv");
    std::fs::write(
        &roster,
        format!("name,range_low,range_high,comfort_low,comfort_high\n{long},F3,C6,A3,F5\n"),
    )
    .unwrap();
    let score = common::project_root().join("sample-scores");
    let score = std::fs::read_dir(&score)
        .unwrap()
        .flatten()
        .map(|entry| entry.path())
        .find(|path| {
            path.extension()
                .is_some_and(|ext| ext == "musicxml" || ext == "mid")
        })
        .unwrap();
    let output = std::process::Command::new(common::ambit_binary())
        .args(["fit", "--roster"])
        .arg(&roster)
        .arg(&score)
        .output()
        .unwrap();
    assert_eq!(output.status.code(), Some(1));
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(stderr.contains("at most 200 characters"), "{stderr}");

    // A score's track name of any length and content prints safely.
    use smf_builder::{Track, smf};
    let conductor = Track::new().tempo(0, 500_000).end(0);
    let voice = Track::new()
        .name(0, &format!("Alto\u{1b}]0;owned\u{7}{long}"))
        .note_on(0, 0, 67, 80)
        .note_off(960, 0, 67)
        .note_on(0, 0, 69, 80)
        .note_off(960, 0, 69)
        .end(0);
    let midi = dir.path().join("long-name.mid");
    std::fs::write(&midi, smf(1, 480, &[conductor, voice])).unwrap();
    let (ok, stdout, stderr) = run_ambit(&["parts", &midi.display().to_string()]);
    assert!(ok, "{stderr}");
    assert!(!stdout.contains('\u{1b}') && !stdout.contains('\u{7}'));
    assert!(stdout.contains("Alto"), "{stdout}");
}
