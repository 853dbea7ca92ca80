//! The choir library end to end through the `ambit` command line, on the
//! demo choir, in the order a director meets it in a season: create the
//! library, import the roster, add auditions, add the programme's scores,
//! place the choir and save the scenario, back up, delete a singer,
//! restore. Each step is checked on disk, not only by what the command says.

use crate::common;

use std::path::{Path, PathBuf};
use std::process::Command;

use ambit::demo::DEMO_CHOIR;
use ambit::demo::seed::{
    DEMO_LAYOUT, DEMO_PROGRAMME, audition_seed, demo_roster, singer_slug, write_audition_files,
    write_sample_scores,
};
use ambit::library::Library;
use ambit::roster::roster_to_csv;
use common::run_ambit;

fn ok(arguments: &[&str]) -> String {
    let (success, stdout, stderr) = run_ambit(arguments);
    assert!(success, "ambit {arguments:?} failed:\n{stdout}\n{stderr}");
    stdout
}

/// `ambit library --library FOLDER …`, which must succeed.
fn in_library(folder: &str, arguments: &[&str]) -> String {
    let mut all = vec!["library", "--library", folder];
    all.extend_from_slice(arguments);
    ok(&all)
}

fn files_under(dir: &Path) -> Vec<PathBuf> {
    let mut files = Vec::new();
    if let Ok(entries) = std::fs::read_dir(dir) {
        for entry in entries.flatten() {
            let path = entry.path();
            if path.is_dir() {
                files.extend(files_under(&path));
            } else {
                files.push(path);
            }
        }
    }
    files.sort();
    files
}

/// SHA-256 of a file by coreutils' `sha256sum`, an implementation outside
/// the project (FIPS 180-4), so "named by SHA-256" is checked independently.
fn coreutils_sha256(path: &Path) -> Option<String> {
    let output = Command::new("sha256sum").arg(path).output().ok()?;
    let text = String::from_utf8(output.stdout).ok()?;
    text.split_whitespace().next().map(str::to_string)
}

fn integrity_ok(folder: &Path) -> bool {
    let library = Library::open(folder).expect("the library opens");
    library.check_integrity().is_ok()
}

#[test]
fn a_season_in_the_library_from_init_to_restore() {
    let dir = tempfile::tempdir().unwrap();
    let library = dir.path().join("library");
    let lib = library.to_str().unwrap();

    // 1. Create an empty library.
    in_library(lib, &["init"]);
    assert!(library.join("library.sqlite").is_file());

    // 2. Import the demo roster (typed-in figures for all 24 singers).
    let roster_file = dir.path().join("demo-roster.csv");
    std::fs::write(&roster_file, roster_to_csv(&demo_roster()).unwrap()).unwrap();
    let preview = in_library(
        lib,
        &["import-roster", roster_file.to_str().unwrap(), "--dry-run"],
    );
    assert!(preview.contains(DEMO_CHOIR[0].name), "{preview}");
    in_library(lib, &["import-roster", roster_file.to_str().unwrap()]);
    let singers = in_library(lib, &["singers"]);
    for singer in DEMO_CHOIR {
        assert!(
            singers.contains(singer.name),
            "{} missing:\n{singers}",
            singer.name
        );
    }

    // 3. Add every singer's audition from WAV files (synthesised demo voices).
    let mut recordings_of = Vec::new();
    for (index, singer) in DEMO_CHOIR.iter().enumerate() {
        let folder = dir.path().join("auditions").join(singer_slug(singer.name));
        let files = write_audition_files(singer, audition_seed(index), &folder).unwrap();
        let mut arguments = vec![
            "library".to_string(),
            "--library".into(),
            lib.into(),
            "add-audition".into(),
            singer.name.into(),
            "--date".into(),
            "2026-09-05".into(),
        ];
        for file in &files {
            arguments.push(format!("--{}", file.task.label()));
            arguments.push(file.path.display().to_string());
        }
        let arguments: Vec<&str> = arguments.iter().map(String::as_str).collect();
        let stored = ok(&arguments);
        assert!(stored.contains("voice type"), "{stored}");
        recordings_of.push((singer.name, files));
    }
    // Every task file is in the library once, named by its SHA-256.
    let stored: Vec<PathBuf> = files_under(&library.join("recordings"));
    assert_eq!(stored.len(), DEMO_CHOIR.len() * 5);
    for file in &stored {
        let stem = file.file_stem().unwrap().to_str().unwrap();
        if let Some(hash) = coreutils_sha256(file) {
            assert_eq!(stem, hash, "{}", file.display());
        }
    }
    let history = in_library(lib, &["history", DEMO_CHOIR[7].name]);
    assert!(history.contains("2026-09-05"), "{history}");

    // 4. Add the sample scores as one programme, mapped to the layout.
    let scores = write_sample_scores(&dir.path().join("scores")).unwrap();
    for score in &scores {
        in_library(
            lib,
            &[
                "add-piece",
                score.to_str().unwrap(),
                "--programme",
                DEMO_PROGRAMME,
                "--layout",
                DEMO_LAYOUT,
            ],
        );
    }
    let pieces = in_library(lib, &["pieces", "--programme", DEMO_PROGRAMME]);
    assert_eq!(
        pieces
            .lines()
            .filter(|line| !line.trim().is_empty())
            .count(),
        4,
        "{pieces}"
    );

    // 5. Place the choir for the programme, with every section sung, and
    //    save the scenario.
    let mut arguments = vec![
        "place",
        "--library",
        lib,
        "--programme",
        DEMO_PROGRAMME,
        "--layout",
        DEMO_LAYOUT,
        "--save-scenario",
        "first rehearsal",
        "--json",
    ];
    let sizes: Vec<String> = ["S1", "S2", "A1", "A2", "T1", "T2", "B1", "B2"]
        .iter()
        .map(|section| format!("{section}=2..4"))
        .collect();
    for size in &sizes {
        arguments.push("--size");
        arguments.push(size);
    }
    let placed: serde_json::Value = serde_json::from_str(&ok(&arguments)).unwrap();
    let assignments = placed["assignments"].as_array().unwrap();
    assert_eq!(assignments.len(), DEMO_CHOIR.len());
    let objective = placed["objective"].as_f64().unwrap();
    let sum: f64 = assignments.iter().map(|a| a["fit"].as_f64().unwrap()).sum();
    assert!((objective - sum).abs() <= 1e-9 * objective.abs().max(1.0));
    for section in placed["sections"].as_array().unwrap() {
        let count = section["count"].as_u64().unwrap();
        assert!((2..=4).contains(&count), "{section}");
    }
    assert!(!placed["cautions"].as_array().unwrap().is_empty());
    let scenarios = in_library(lib, &["scenarios"]);
    assert!(scenarios.contains("first rehearsal"), "{scenarios}");

    // 6. Back up.
    let backup = dir.path().join("season.zip");
    in_library(lib, &["backup", backup.to_str().unwrap()]);
    assert!(backup.is_file());

    // 7. Delete one auditioned singer: their recordings leave the disk.
    let (gone, gone_files) = &recordings_of[1];
    let gone_stored: Vec<PathBuf> = gone_files
        .iter()
        .map(|file| {
            let hash = ambit::library::sha256_file(&file.path).unwrap();
            library.join("recordings").join(format!("{hash}.wav"))
        })
        .collect();
    assert!(gone_stored.iter().all(|file| file.is_file()));
    in_library(lib, &["delete-singer", gone, "--yes"]);
    assert!(gone_stored.iter().all(|file| !file.exists()));
    assert_eq!(
        files_under(&library.join("recordings")).len(),
        (DEMO_CHOIR.len() - 1) * 5
    );
    let singers = in_library(lib, &["singers"]);
    assert!(!singers.contains(gone), "{singers}");
    assert!(integrity_ok(&library));

    // 8. Restore the backup into a new folder: the singer and the files are back.
    let restored = dir.path().join("restored");
    in_library(
        restored.to_str().unwrap(),
        &["restore", backup.to_str().unwrap()],
    );
    assert!(integrity_ok(&restored));
    let singers = in_library(restored.to_str().unwrap(), &["singers"]);
    assert!(singers.contains(gone), "{singers}");
    for (file, original) in gone_stored.iter().zip(gone_files) {
        let back = restored.join("recordings").join(file.file_name().unwrap());
        assert_eq!(
            std::fs::read(&back).unwrap(),
            std::fs::read(&original.path).unwrap(),
            "{}",
            back.display()
        );
    }
    let scenarios = in_library(restored.to_str().unwrap(), &["scenarios"]);
    assert!(scenarios.contains("first rehearsal"), "{scenarios}");
}

#[test]
fn demo_init_fills_only_an_empty_library() {
    let dir = tempfile::tempdir().unwrap();
    let library = dir.path().join("library");
    let lib = library.to_str().unwrap();
    let roster_file = dir.path().join("one.csv");
    std::fs::write(
        &roster_file,
        "name,range_low,range_high,comfort_low,comfort_high\nNell Ashby,A3,E5,C4,C5\n",
    )
    .unwrap();
    in_library(lib, &["init"]);
    in_library(lib, &["import-roster", roster_file.to_str().unwrap()]);
    let (success, _, stderr) = run_ambit(&["library", "--library", lib, "init", "--demo"]);
    assert!(!success);
    assert!(stderr.contains("only an empty library"), "{stderr}");
    assert!(stderr.contains(lib), "{stderr}");
    assert_eq!(files_under(&library.join("recordings")).len(), 0);
    // The singer typed in before is still the only one.
    let singers = in_library(lib, &["singers"]);
    assert!(singers.contains("Nell Ashby"));
    assert!(!singers.contains(DEMO_CHOIR[0].name));
}

#[test]
fn demo_init_stores_the_whole_choir_and_programme() {
    let dir = tempfile::tempdir().unwrap();
    let library = dir.path().join("library");
    let lib = library.to_str().unwrap();
    let said = in_library(lib, &["init", "--demo"]);
    // The cautions go with every stored voice classification.
    assert!(said.contains("not a medical"), "{said}");
    let info: serde_json::Value =
        serde_json::from_str(&in_library(lib, &["info", "--json"])).unwrap();
    assert_eq!(info["singers"], DEMO_CHOIR.len());
    assert_eq!(info["auditions"], DEMO_CHOIR.len());
    assert_eq!(info["recordings"], DEMO_CHOIR.len() * 5);
    assert_eq!(info["pieces"], 4);
    // The scratch files are gone; only the library's own copies remain.
    assert!(!library.join("demo-staging").exists());
    assert!(integrity_ok(&library));
}
