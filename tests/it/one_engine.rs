//! One audition, every path: the same four auditions go in as CLI roster
//! rows (`ambit profile --roster-row`), through the library
//! (`ambit library add-audition`, then `place`/`fit --library`) and through
//! the demo seeding (`ambit library init --demo`, which synthesises the
//! same recordings from the same seeds). Every singer × section fit, every
//! line fit and every assignment must be equal. (The app's commands are
//! checked against the same engine calls in
//! `src-tauri/tests/commands.rs`.)
//!
//! The expected values are not written down here: the check is that four
//! independent routes through the front ends agree to the last digit, which
//! fails whenever one of them converts a profile differently (as the
//! library once did, keeping typical passaggi as if measured).

use crate::common;

use std::path::{Path, PathBuf};
use std::process::Command;

use ambit::demo::seed::{audition_seed, write_audition_files};
use ambit::demo::{DEMO_CHOIR, DemoSinger};
use ambit::voice::types::VoiceType;
use serde_json::Value;

fn ambit(arguments: &[&str]) -> Value {
    let output = Command::new(common::ambit_binary())
        .args(arguments)
        .output()
        .expect("run ambit");
    assert!(
        output.status.success(),
        "ambit {arguments:?} failed: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_slice(&output.stdout).unwrap_or_else(|error| {
        panic!(
            "ambit {arguments:?}: not JSON ({error}): {}",
            String::from_utf8_lossy(&output.stdout)
        )
    })
}

fn ambit_text(arguments: &[&str]) -> String {
    let output = Command::new(common::ambit_binary())
        .args(arguments)
        .output()
        .expect("run ambit");
    assert!(
        output.status.success(),
        "ambit {arguments:?} failed: {}",
        String::from_utf8_lossy(&output.stderr)
    );
    String::from_utf8(output.stdout).expect("UTF-8")
}

/// The first demo singer of each family's type: soprano, mezzo, tenor, bass.
fn four_singers() -> Vec<(usize, &'static DemoSinger)> {
    [
        VoiceType::Soprano,
        VoiceType::MezzoSoprano,
        VoiceType::Tenor,
        VoiceType::Bass,
    ]
    .iter()
    .map(|wanted| {
        DEMO_CHOIR
            .iter()
            .enumerate()
            .find(|(_, singer)| singer.voice_type == *wanted)
            .expect("the demo choir has every type")
    })
    .collect()
}

/// The audition's task files as `--speech F --glide F …` arguments.
fn task_arguments(folder: &Path, index: usize, singer: &DemoSinger) -> Vec<String> {
    write_audition_files(singer, audition_seed(index), folder)
        .expect("write the audition")
        .into_iter()
        .flat_map(|recording| {
            [
                format!("--{}", recording.task.label()),
                recording.path.display().to_string(),
            ]
        })
        .collect()
}

/// `section_fit` pairs and assignments of `ambit place --json`, and the
/// records of `ambit fit --json` without the file name, sorted.
fn figures(place: &Value, fit: &Value) -> (Vec<Value>, Vec<Value>, Vec<Value>) {
    let sorted = |value: &Value| {
        let mut items = value.as_array().expect("an array").clone();
        items.sort_by_key(|item| item.to_string());
        items
    };
    let mut records = sorted(&fit["records"]);
    for record in &mut records {
        record.as_object_mut().expect("a record").remove("file");
    }
    records.sort_by_key(|item| item.to_string());
    (
        sorted(&place["section_fit"]),
        sorted(&place["assignments"]),
        records,
    )
}

#[test]
fn one_audition_gives_the_same_fits_through_every_path() {
    let scratch = tempfile::tempdir().expect("temp dir");
    let score = common::project_root().join("sample-scores/the-tide-clock.mxl");
    let score = score.to_str().expect("UTF-8 path");
    let singers = four_singers();

    // Path 1: CLI roster rows.
    let mut csv = String::from(
        "name,range_low,range_high,comfort_low,comfort_high,primo,secondo,voice_type,section,notes\n",
    );
    let mut task_files: Vec<(String, Vec<String>)> = Vec::new();
    for (index, singer) in &singers {
        let folder = scratch.path().join(format!("audition-{index}"));
        let tasks = task_arguments(&folder, *index, singer);
        let mut arguments = vec!["profile", "--roster-row", singer.name];
        arguments.extend(tasks.iter().map(String::as_str));
        csv.push_str(&ambit_text(&arguments));
        task_files.push((singer.name.to_string(), tasks));
    }
    let roster = scratch.path().join("roster.csv");
    std::fs::write(&roster, csv).expect("write roster");
    let roster = roster.to_str().expect("UTF-8 path");
    let by_rows = figures(
        &ambit(&[
            "place", "--roster", roster, "--layout", "SATB", score, "--json",
        ]),
        &ambit(&["fit", "--roster", roster, score, "--json"]),
    );

    // Path 2: the library.
    let library: PathBuf = scratch.path().join("library");
    let library = library.to_str().expect("UTF-8 path");
    ambit_text(&["library", "--library", library, "init"]);
    for (name, tasks) in &task_files {
        let mut arguments = vec![
            "library",
            "--library",
            library,
            "add-audition",
            name.as_str(),
            "--date",
            "2026-09-05",
        ];
        arguments.extend(tasks.iter().map(String::as_str));
        ambit_text(&arguments);
    }
    let by_library = figures(
        &ambit(&[
            "place",
            "--library",
            library,
            "--layout",
            "SATB",
            score,
            "--json",
        ]),
        &ambit(&["fit", "--library", library, score, "--json"]),
    );
    assert_eq!(by_rows.0, by_library.0, "section fits: rows vs library");
    assert_eq!(by_rows.1, by_library.1, "assignments: rows vs library");
    assert_eq!(by_rows.2, by_library.2, "line fits: rows vs library");

    // Path 3: the demo seeding, which synthesises the same recordings from
    // the same seeds and stores them through the same use cases. Its four
    // singers, exported as a roster, must place and fit the same.
    let demo = scratch.path().join("demo");
    let demo = demo.to_str().expect("UTF-8 path");
    ambit_text(&["library", "--library", demo, "init", "--demo"]);
    let exported = ambit_text(&["library", "--library", demo, "export-roster"]);
    let mut lines = exported.lines();
    let mut four = format!("{}\n", lines.next().expect("a header"));
    for line in lines {
        if singers
            .iter()
            .any(|(_, singer)| line.starts_with(singer.name))
        {
            four.push_str(line);
            four.push('\n');
        }
    }
    assert_eq!(four.lines().count(), 5, "four demo singers: {four}");
    let demo_roster = scratch.path().join("demo-four.csv");
    std::fs::write(&demo_roster, four).expect("write roster");
    let demo_roster = demo_roster.to_str().expect("UTF-8 path");
    let by_demo = figures(
        &ambit(&[
            "place",
            "--roster",
            demo_roster,
            "--layout",
            "SATB",
            score,
            "--json",
        ]),
        &ambit(&["fit", "--roster", demo_roster, score, "--json"]),
    );
    assert_eq!(by_rows.0, by_demo.0, "section fits: rows vs demo seeding");
    assert_eq!(by_rows.1, by_demo.1, "assignments: rows vs demo seeding");
    assert_eq!(by_rows.2, by_demo.2, "line fits: rows vs demo seeding");
}
