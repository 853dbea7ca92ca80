//! The app's commands through Tauri's IPC on the mock runtime (feature
//! `test`), each on a fresh library in a temporary folder.
//!
//! Expected values come from outside the app: pitch facts (scientific pitch
//! notation, ISO 16 A4 = 440 Hz, equal temperament), the sample score's own
//! part list, and the files on disk.

mod common;

use std::path::{Path, PathBuf};
use std::sync::mpsc;
use std::time::Duration;

use ambit::library::Library;
use ambit_app::AppState;
use common::TestApp;
use serde_json::{Value, json};
use tauri::{Listener, Manager};

/// The app on a new library; `with_choir` adds the demo choir as a typed-in
/// roster (the app's first start measures their synthesised auditions too,
/// which is slower than a test needs).
fn app(with_choir: bool) -> TestApp {
    let folder = tempfile::tempdir().expect("a scratch folder");
    let mut library = Library::create(&folder.path().join("library")).expect("a library");
    if with_choir {
        library
            .import_roster(&ambit::demo::seed::demo_roster())
            .expect("the demo roster imports");
    }
    TestApp::build(AppState::opened(library, with_choir), folder)
}

impl TestApp {
    fn library(&self) -> PathBuf {
        self.folder.path().join("library")
    }
}

fn repository() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("the repository root")
        .to_path_buf()
}

/// A sine at `hz` for `seconds`, 16-bit mono at 22 050 Hz.
fn sine_wav(path: &Path, hz: f64, seconds: f64) {
    let rate = 22_050u32;
    let spec = hound::WavSpec {
        channels: 1,
        sample_rate: rate,
        bits_per_sample: 16,
        sample_format: hound::SampleFormat::Int,
    };
    let mut writer = hound::WavWriter::create(path, spec).expect("a WAV");
    let count = (seconds * f64::from(rate)) as usize;
    for index in 0..count {
        let time = index as f64 / f64::from(rate);
        let value = 0.4 * (2.0 * std::f64::consts::PI * hz * time).sin();
        writer
            .write_sample((value * f64::from(i16::MAX)) as i16)
            .expect("a sample");
    }
    writer.finalize().expect("the WAV closes");
}

#[test]
fn a_typed_singer_is_stored_with_scientific_pitch_numbers() {
    let app = app(false);
    let row = app.ok(
        "singer_add_typed",
        json!({ "row": { "name": "Orla Fenwick", "rangeLow": "A2", "rangeHigh": "F4",
                         "comfortLow": "C3", "comfortHigh": "D4", "section": "B1" } }),
    );
    // Scientific pitch notation with MIDI numbers: A4 = 69 (ISO 16 reference),
    // so A2 = 69 − 24 = 45, C3 = 48, D4 = 62, F4 = 65.
    assert_eq!(row["rangeLowMidi"], json!(45.0));
    assert_eq!(row["rangeHighMidi"], json!(65.0));
    assert_eq!(row["comfortLowMidi"], json!(48.0));
    assert_eq!(row["comfortHighMidi"], json!(62.0));
    assert_eq!(row["rangeLow"], "A2");
    assert_eq!(row["source"], "typed");
    let list = app.ok("singers_list", json!({ "includeArchived": false }));
    assert_eq!(list.as_array().map(Vec::len), Some(1));
    assert_eq!(list[0]["name"], "Orla Fenwick");

    app.ok(
        "singer_set_archived",
        json!({ "name": "Orla Fenwick", "archived": true }),
    );
    let active = app.ok("singers_list", json!({ "includeArchived": false }));
    assert_eq!(active.as_array().map(Vec::len), Some(0));
    let info = app.ok("library_info", json!({}));
    assert_eq!(info["archived"], 1);
}

#[test]
fn a_bad_typed_pitch_is_refused_with_its_text() {
    let app = app(false);
    let error = app
        .call(
            "singer_add_typed",
            json!({ "row": { "name": "Orla Fenwick", "rangeLow": "H9", "rangeHigh": "F4",
                             "comfortLow": "C3", "comfortHigh": "D4" } }),
        )
        .expect_err("H is not a note letter in scientific pitch notation");
    assert!(error.contains("H9"), "{error}");
    let list = app.ok("singers_list", json!({}));
    assert_eq!(list.as_array().map(Vec::len), Some(0));
}

#[test]
fn an_audition_of_a_held_a3_measures_a3_and_deleting_the_singer_removes_the_files() {
    let app = app(false);
    let scratch = tempfile::tempdir().expect("scratch");
    // 220 Hz = A3: 440 · 2^((57 − 69)/12) (ISO 16, equal temperament).
    let sustain = scratch.path().join("sustain.wav");
    sine_wav(&sustain, 220.0, 3.0);
    let files = json!([{ "task": "sustain", "path": sustain }]);
    let done = app.job(
        "audition_analyse",
        json!({ "singer": "Pell Marrow", "files": files }),
    );
    let result = &done["result"];
    assert!(done["error"].is_null(), "{done}");
    let low = result["range"]["low_midi"].as_f64().expect("a range");
    let high = result["range"]["high_midi"].as_f64().expect("a range");
    assert!(
        (low - 57.0).abs() < 0.5 && (high - 57.0).abs() < 0.5,
        "{low}–{high}"
    );
    assert!(
        !result["cautions"].as_array().is_none_or(Vec::is_empty),
        "the cautions come with every profile"
    );

    let id = app.ok(
        "audition_save",
        json!({ "singer": "Pell Marrow", "files": files, "date": "2026-03-14" }),
    );
    assert!(id.as_i64().is_some());
    let history = app.ok("singer_history", json!({ "name": "Pell Marrow" }));
    assert_eq!(history[0]["date"], "2026-03-14");
    let stored: Vec<PathBuf> = std::fs::read_dir(app.library().join("recordings"))
        .expect("the recordings folder")
        .filter_map(|entry| entry.ok().map(|entry| entry.path()))
        .collect();
    assert_eq!(stored.len(), 1, "the one recording is in the library");

    let deleted = app.ok("singer_delete", json!({ "name": "Pell Marrow" }));
    let removed: Vec<PathBuf> =
        serde_json::from_value(deleted["removedFiles"].clone()).expect("a list of paths");
    assert_eq!(removed, stored);
    for file in &removed {
        assert!(!file.exists(), "{} is still on disk", file.display());
    }
    let gone = app
        .call_typed("singer_history", json!({ "name": "Pell Marrow" }))
        .expect_err("the singer is gone");
    assert_eq!(gone["kind"], "notFound", "{gone}");
    assert!(
        gone["message"]
            .as_str()
            .is_some_and(|message| message.contains("Pell Marrow")),
        "{gone}"
    );
}

#[test]
fn an_audition_of_a_missing_file_ends_the_job_with_an_error_naming_it() {
    let app = app(false);
    let done = app.job(
        "audition_analyse",
        json!({ "singer": "Pell Marrow", "files": [{ "task": "glide", "path": "/nonexistent/glide.wav" }] }),
    );
    let error = done["error"]["message"].as_str().expect("an error");
    assert!(error.contains("/nonexistent/glide.wav"), "{error}");
    assert_eq!(done["error"]["kind"], "invalid", "{done}");
}

/// The `<part-name>`s of a MusicXML file, read with plain string search.
fn part_names(musicxml: &str) -> Vec<String> {
    musicxml
        .split("<part-name")
        .skip(1)
        .filter_map(|rest| {
            let start = rest.find('>')? + 1;
            let end = rest.find("</part-name>")?;
            rest.get(start..end).map(|name| name.trim().to_string())
        })
        .collect()
}

#[test]
fn an_imported_score_lists_the_parts_of_its_musicxml_part_list() {
    let app = app(false);
    let score = repository().join("sample-scores/the-tide-clock.musicxml");
    let text = std::fs::read_to_string(&score).expect("the sample score");
    let expected = part_names(&text);
    assert!(!expected.is_empty());
    let view = app.ok("piece_import", json!({ "path": score }));
    let names: Vec<String> = view["parts"]
        .as_array()
        .expect("parts")
        .iter()
        .filter_map(|part| part["name"].as_str().map(str::to_string))
        .collect();
    assert_eq!(names, expected);
    let title = view["title"].as_str().expect("a title").to_string();
    let list = app.ok("pieces_list", json!({}));
    assert_eq!(list[0]["title"], title.as_str());
    assert_eq!(list[0]["parts"], expected.len());
    let again = app.ok("piece_analysis", json!({ "title": title }));
    assert_eq!(again["parts"], view["parts"]);

    // Two bars of the first part: two <measure> elements, with the clef in force.
    let excerpt = app.ok(
        "notation_excerpt",
        json!({ "title": title, "part": expected[0], "firstBar": "1", "lastBar": "2" }),
    );
    let excerpt = excerpt.as_str().expect("MusicXML text");
    assert_eq!(excerpt.matches("<measure").count(), 2, "{excerpt}");
    assert!(excerpt.contains("<clef"), "{excerpt}");
    assert_eq!(part_names(excerpt), vec![expected[0].clone()]);
}

#[test]
fn a_score_that_is_not_a_score_is_refused_with_its_name() {
    let app = app(false);
    let scratch = tempfile::tempdir().expect("scratch");
    let path = scratch.path().join("notes.musicxml");
    std::fs::write(&path, b"this is not music").expect("written");
    let error = app
        .call("piece_import", json!({ "path": path }))
        .expect_err("not a score");
    assert!(error.contains("notes.musicxml"), "{error}");
}

#[test]
fn a_placement_move_changes_the_total_by_the_two_fits() {
    let app = app(true);
    let score = repository().join("sample-scores/the-tide-clock.musicxml");
    app.ok("piece_import", json!({ "path": score }));
    let done = app.job("place_solve", json!({ "pieces": [], "layout": "SATB" }));
    assert!(done["error"].is_null(), "{done}");
    let result = &done["result"];
    let info = app.ok("library_info", json!({}));
    let assignments = result["assignments"].as_array().expect("assignments");
    assert_eq!(Some(assignments.len() as u64), info["singers"].as_u64());
    let first = &assignments[0];
    let name = first["singer"].as_str().expect("a name");
    let from = first["section"].as_str().expect("a section");
    let fit_of = |section: &str| {
        result["section_fit"]
            .as_array()
            .expect("section_fit")
            .iter()
            .find(|pair| pair["singer"] == name && pair["section"] == section)
            .and_then(|pair| pair["fit"].as_f64())
    };
    let to = ["S", "A", "T", "B"]
        .into_iter()
        .find(|section| *section != from && fit_of(section).is_some())
        .expect("another allowed section");
    let moved = app.ok("place_move", json!({ "name": name, "section": to }));
    // The total is the sum of the assigned fits, so one move changes it by
    // the singer's fit in the new section minus the old.
    let expected = fit_of(to).expect("fit") - fit_of(from).expect("fit");
    let delta = moved["objectiveDelta"].as_f64().expect("a delta");
    assert!((delta - expected).abs() < 1e-9, "{delta} vs {expected}");
    let after = moved["placement"]["assignments"]
        .as_array()
        .expect("assignments")
        .iter()
        .find(|assignment| assignment["singer"] == name)
        .and_then(|assignment| assignment["section"].as_str())
        .map(str::to_string);
    assert_eq!(after.as_deref(), Some(to));

    let id = app.ok(
        "scenario_save",
        json!({ "name": "first try", "notes": "moved one", "result": moved["placement"] }),
    );
    assert!(id.as_i64().is_some());
    let scenarios = app.ok("scenarios_list", json!({}));
    assert_eq!(scenarios[0]["name"], "first try");
}

#[test]
fn a_move_before_any_placement_is_refused() {
    let app = app(true);
    let error = app
        .call("place_move", json!({ "name": "anyone", "section": "S" }))
        .expect_err("nothing placed yet");
    assert!(error.contains("optimiser"), "{error}");
}

#[test]
fn recording_without_a_microphone_says_so_and_with_one_writes_a_wav() {
    let app = app(false);
    match app.call("recording_start", json!({ "task": "sustain" })) {
        Err(error) => assert!(error.contains("microphone"), "{error}"),
        Ok(_) => {
            std::thread::sleep(Duration::from_millis(300));
            let take = app.ok("recording_stop", json!({}));
            let path = PathBuf::from(take["path"].as_str().expect("a path"));
            let reader = hound::WavReader::open(&path).expect("a WAV the recorder wrote");
            assert_eq!(reader.spec().channels, 1);
        }
    }
}

#[test]
fn the_cautions_and_the_tasks_are_the_engines() {
    let app = app(false);
    let cautions = app.ok("cautions", json!({}));
    assert_eq!(cautions, json!(ambit::cautions::cautions()));
    let tasks = app.ok("audition_tasks", json!({}));
    let names: Vec<&str> = tasks
        .as_array()
        .expect("tasks")
        .iter()
        .filter_map(|task| task["task"].as_str())
        .collect();
    // docs/AUDITION.md: the five tasks in order.
    assert_eq!(names, ["speech", "glide", "scale", "sustain", "song"]);
}

/// The app with nothing open yet, as at start-up, whose demo library lives
/// in `<scratch>/demo-library`.
fn starting_app() -> (TestApp, PathBuf) {
    let folder = tempfile::tempdir().expect("a scratch folder");
    let demo = folder.path().join("demo-library");
    let state = AppState::default();
    state.set_demo_folder(demo.clone());
    (TestApp::build(state, folder), demo)
}

impl TestApp {
    /// Collects `library-status` events until one is not `preparing`.
    fn statuses_until_settled(&self, receiver: &mpsc::Receiver<String>) -> Vec<Value> {
        let mut seen = Vec::new();
        loop {
            let payload = receiver
                .recv_timeout(Duration::from_secs(900))
                .expect("a library-status event within fifteen minutes");
            let status: Value = serde_json::from_str(&payload).expect("JSON");
            let settled = status["state"] != "preparing";
            seen.push(status);
            if settled {
                return seen;
            }
        }
    }

    fn listen_status(&self) -> mpsc::Receiver<String> {
        let (sender, receiver) = mpsc::channel::<String>();
        self.app.listen_any("library-status", move |event| {
            let _ = sender.send(event.payload().to_string());
        });
        receiver
    }
}

#[test]
fn a_first_start_prepares_the_demo_library_in_the_background_and_leaves_no_partial_folder() {
    let (app, demo) = starting_app();
    // What an interrupted earlier start leaves behind.
    let partial = demo.with_file_name("demo-library.partial");
    std::fs::create_dir_all(partial.join("recordings")).expect("a stale partial folder");
    std::fs::write(partial.join("library.sqlite"), b"half written").expect("written");

    let statuses = app.listen_status();
    let state = app.app.state::<AppState>();
    state.open_or_prepare(app.app.handle(), demo.clone());
    // The call returns at once; the window can ask and is told to wait.
    let now = app.ok("library_status", json!({}));
    assert_eq!(now["state"], "preparing", "{now}");
    let error = app
        .call("singers_list", json!({}))
        .expect_err("nothing is open while the demo library is prepared");
    assert!(error.contains("being prepared"), "{error}");
    let error = app
        .call(
            "library_create_empty",
            json!({ "folder": app.folder.path().join("other") }),
        )
        .expect_err("switching libraries waits for the preparation");
    assert!(error.contains("being prepared"), "{error}");

    let seen = app.statuses_until_settled(&statuses);
    let last = seen.last().expect("a final status");
    assert_eq!(last["state"], "ready", "{last}");
    let steps: Vec<u64> = seen
        .iter()
        .filter(|status| status["state"] == "preparing")
        .filter_map(|status| status["done"].as_u64())
        .collect();
    assert!(
        steps.windows(2).all(|pair| pair[0] <= pair[1]),
        "progress never goes back: {steps:?}"
    );
    let total = ambit::demo::seed::SEED_STEPS as u64;
    assert_eq!(steps.last().copied(), Some(total), "{steps:?}");
    assert!(
        seen.iter()
            .all(|status| status["state"] != "preparing" || status["total"] == total)
    );

    // On disk: the library in place, the partial folder gone.
    assert!(demo.join("library.sqlite").is_file());
    assert!(!partial.exists(), "{} is left over", partial.display());
    let info = app.ok("library_info", json!({}));
    assert_eq!(info["isDemo"], true);
    assert_eq!(
        info["singers"].as_u64(),
        Some(ambit::demo::DEMO_CHOIR.len() as u64)
    );
    assert_eq!(
        info["pieces"].as_u64(),
        Some(ambit::demo::seed::SAMPLE_SCORES.len() as u64)
    );
    // Every stored recording is a WAV file hound can read.
    let recordings: Vec<PathBuf> = std::fs::read_dir(demo.join("recordings"))
        .expect("the recordings folder")
        .filter_map(|entry| entry.ok().map(|entry| entry.path()))
        .collect();
    assert_eq!(
        recordings.len() as u64,
        info["recordings"].as_u64().expect("a count")
    );
    for file in &recordings {
        hound::WavReader::open(file).unwrap_or_else(|error| panic!("{}: {error}", file.display()));
    }

    // Going back to the demo library later opens it at once.
    app.ok(
        "library_create_empty",
        json!({ "folder": app.folder.path().join("own") }),
    );
    assert_eq!(app.ok("library_info", json!({}))["isDemo"], false);
    let status = app.ok("library_open_demo", json!({}));
    assert_eq!(status["state"], "ready", "{status}");
    let info = app.ok("library_info", json!({}));
    assert_eq!(info["isDemo"], true);
    assert_eq!(info["folder"], json!(demo));
}

#[test]
fn a_folder_that_holds_other_files_is_not_made_into_a_library() {
    let (app, _) = starting_app();
    let folder = app.folder.path().join("letters");
    std::fs::create_dir_all(&folder).expect("a folder");
    std::fs::write(folder.join("minutes.txt"), b"rehearsal minutes").expect("written");
    let statuses = app.listen_status();
    app.app
        .state::<AppState>()
        .open_or_prepare(app.app.handle(), folder.clone());
    let seen = app.statuses_until_settled(&statuses);
    let last = seen.last().expect("a status");
    assert_eq!(last["state"], "failed", "{last}");
    let error = last["error"].as_str().expect("an error");
    assert!(error.contains("letters"), "{error}");
    // Nothing was written there, and nothing beside it.
    let names: Vec<String> = std::fs::read_dir(&folder)
        .expect("the folder")
        .filter_map(|entry| entry.ok())
        .map(|entry| entry.file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names, ["minutes.txt"]);
    assert!(!folder.with_file_name("letters.partial").exists());
    let error = app
        .call("library_info", json!({}))
        .expect_err("no library is open");
    assert!(error.contains("letters"), "{error}");
}

#[test]
fn libraries_are_created_opened_and_refused_by_folder() {
    let app = app(true);
    let first = app.library();
    let other = app.folder.path().join("second");
    let info = app.ok("library_create_empty", json!({ "folder": other }));
    assert_eq!(info["folder"], json!(other));
    assert_eq!(info["singers"], 0);
    assert!(other.join("library.sqlite").is_file());
    let status = app.ok("library_status", json!({}));
    assert_eq!(status["state"], "ready");

    let info = app.ok("library_open", json!({ "folder": first }));
    assert_eq!(info["folder"], json!(first));
    assert_eq!(
        info["singers"].as_u64(),
        Some(ambit::demo::seed::demo_roster().singers.len() as u64)
    );

    let nowhere = app.folder.path().join("nowhere");
    let error = app
        .call("library_open", json!({ "folder": nowhere }))
        .expect_err("no library there");
    assert!(error.contains("nowhere"), "{error}");
    assert!(!nowhere.exists(), "opening does not create");
    // The open library is unchanged by the refusal.
    assert_eq!(app.ok("library_info", json!({}))["folder"], json!(first));
}

#[test]
fn the_roster_exports_as_csv_and_imports_into_another_library() {
    let source = app(true);
    let scratch = tempfile::tempdir().expect("scratch");
    let csv_path = scratch.path().join("roster.csv");
    source.ok("roster_export", json!({ "path": csv_path }));
    let listed = source.ok("singers_list", json!({ "includeArchived": true }));
    let listed = listed.as_array().expect("singers");

    // Read back with the csv crate (RFC 4180), not with Ambit's reader.
    let mut reader = csv::Reader::from_path(&csv_path).expect("a CSV file");
    let headers = reader.headers().expect("a header row").clone();
    let rows: Vec<csv::StringRecord> = reader
        .records()
        .collect::<Result<_, _>>()
        .expect("well-formed rows");
    assert_eq!(rows.len(), listed.len());
    let column = |name: &str| {
        headers
            .iter()
            .position(|header| header.eq_ignore_ascii_case(name))
            .unwrap_or_else(|| panic!("no {name} column in {headers:?}"))
    };
    let name_at = column("name");
    for singer in listed {
        let name = singer["name"].as_str().expect("a name");
        assert!(
            rows.iter().any(|row| row.get(name_at) == Some(name)),
            "{name} is in the CSV"
        );
    }

    let target = app(false);
    let preview = target.ok("roster_import_preview", json!({ "path": csv_path }));
    let nothing = target.ok("singers_list", json!({ "includeArchived": true }));
    assert_eq!(
        nothing.as_array().map(Vec::len),
        Some(0),
        "a preview stores nothing: {preview}"
    );
    let committed = target.ok("roster_import_commit", json!({ "path": csv_path }));
    assert_eq!(preview, committed, "the preview shows what the import does");
    let imported = target.ok("singers_list", json!({ "includeArchived": true }));
    let imported = imported.as_array().expect("singers");
    assert_eq!(imported.len(), listed.len());
    for singer in listed {
        let twin = imported
            .iter()
            .find(|row| row["name"] == singer["name"])
            .expect("the same singer");
        for field in [
            "rangeLowMidi",
            "rangeHighMidi",
            "comfortLowMidi",
            "comfortHighMidi",
        ] {
            assert_eq!(twin[field], singer[field], "{field} of {}", singer["name"]);
        }
    }

    let missing = scratch.path().join("absent.csv");
    let error = target
        .call("roster_import_preview", json!({ "path": missing }))
        .expect_err("no such file");
    assert!(error.contains("absent.csv"), "{error}");
}

#[test]
fn a_cancelled_job_ends_with_cancelled_and_an_unknown_job_is_not_an_error() {
    let app = app(false);
    let scratch = tempfile::tempdir().expect("scratch");
    // Five long takes, so the job is still measuring when it is cancelled.
    let files: Vec<Value> = ["speech", "glide", "scale", "sustain", "song"]
        .iter()
        .map(|task| {
            let path = scratch.path().join(format!("{task}.wav"));
            sine_wav(&path, 196.0, 40.0);
            json!({ "task": task, "path": path })
        })
        .collect();
    let done = app.job_with(
        "audition_analyse",
        json!({ "singer": "Pell Marrow", "files": files }),
        |job| {
            app.ok("job_cancel", json!({ "job": job }));
        },
    );
    let job = done["job"].clone();
    assert_eq!(done["error"]["kind"], "cancelled", "{done}");
    assert!(done["result"].is_null());
    // Cancelling again, or a job that never was, is harmless.
    app.ok("job_cancel", json!({ "job": job }));
    app.ok("job_cancel", json!({ "job": 987_654 }));
    let nothing = app.ok("singers_list", json!({ "includeArchived": true }));
    assert_eq!(
        nothing.as_array().map(Vec::len),
        Some(0),
        "nothing was saved"
    );
}

#[test]
fn a_part_mapped_by_hand_to_another_section_stays_there() {
    let app = app(false);
    let score = repository().join("sample-scores/haul-away.musicxml");
    let expected = part_names(&std::fs::read_to_string(&score).expect("the score"));
    assert_eq!(expected, ["Tenor I", "Tenor II", "Bass I", "Bass II"]);
    let view = app.ok("piece_import", json!({ "path": score, "layout": "TTBB" }));
    let title = view["title"].as_str().expect("a title").to_string();
    assert_eq!(view["layout"], "TTBB");
    // Tenor I is sung by the first tenors, Tenor II by the second, and so
    // on (common practice in TTBB writing).
    for (part, section) in expected.iter().zip(["T1", "T2", "B1", "B2"]) {
        assert_eq!(view["mapping"][part], json!([section]), "{part}: {view}");
    }
    // The director swaps the tenor lines.
    let changed = app.ok(
        "piece_set_mapping",
        json!({ "title": title, "overrides": { "Tenor I": "T2", "Tenor II": "T1" }, "layout": "TTBB" }),
    );
    assert_eq!(changed["mapping"]["Tenor I"], json!(["T2"]), "{changed}");
    assert_eq!(changed["mapping"]["Tenor II"], json!(["T1"]), "{changed}");
    assert_eq!(changed["mapping"]["Bass I"], json!(["B1"]), "{changed}");
    assert_eq!(changed["overrides"]["Tenor I"], "T2");
    let stored = app.ok("piece_analysis", json!({ "title": title }));
    assert_eq!(stored["mapping"], changed["mapping"], "kept in the library");

    let error = app
        .call(
            "piece_set_mapping",
            json!({ "title": "No Such Piece", "overrides": {} }),
        )
        .expect_err("no such piece");
    assert!(error.contains("No Such Piece"), "{error}");
}

#[test]
fn time_outside_comfort_is_none_for_a_zone_around_everything_and_all_for_one_above() {
    let app = app(false);
    // Comfort zones in scientific pitch notation (ISO 16, A4 = 440 Hz): C1 to
    // C8 spans the whole piano, so every sung note lies inside; C8 to B8 is
    // above every note a choir part holds (common practice: choral parts lie
    // between about E2 and C6).
    for (name, low, high) in [("Wide Zone", "C1", "C8"), ("High Zone", "C8", "B8")] {
        app.ok(
            "singer_add_typed",
            json!({ "row": { "name": name, "rangeLow": low, "rangeHigh": high,
                             "comfortLow": low, "comfortHigh": high } }),
        );
    }
    let score = repository().join("sample-scores/lanterns-on-the-quay.musicxml");
    let expected = part_names(&std::fs::read_to_string(&score).expect("the score"));
    let view = app.ok("piece_import", json!({ "path": score }));
    let title = view["title"].as_str().expect("a title");

    let by_part = app.ok(
        "fit_matrix",
        json!({ "pieces": [title], "layout": "SATB", "by": "part" }),
    );
    assert_eq!(by_part["columns"], json!(expected));
    let rows: Vec<&str> = by_part["rows"]
        .as_array()
        .expect("rows")
        .iter()
        .filter_map(Value::as_str)
        .collect();
    for (row, name) in rows.iter().enumerate() {
        let share = if *name == "Wide Zone" { 0.0 } else { 1.0 };
        for column in 0..expected.len() {
            let cell = &by_part["cells"][row][column];
            let outside = cell["outside_share"]
                .as_f64()
                .or_else(|| cell["outsideShare"].as_f64())
                .unwrap_or_else(|| panic!("{name}, column {column}: {cell}"));
            assert!((outside - share).abs() < 1e-9, "{name}: {outside}");
        }
    }
    assert!(!by_part["cautions"].as_array().is_none_or(Vec::is_empty));

    let by_section = app.ok(
        "fit_matrix",
        json!({ "pieces": [title], "layout": "SATB", "by": "section" }),
    );
    assert_eq!(by_section["columns"], json!(["S", "A", "T", "B"]));
    let error = app
        .call(
            "fit_matrix",
            json!({ "pieces": [title], "layout": "SATB", "by": "voice" }),
        )
        .expect_err("by part or by section only");
    assert!(error.contains("voice"), "{error}");
}

#[test]
fn key_advice_covers_each_shift_with_its_interval_and_the_cautions() {
    let app = app(false);
    // One singer per SATB section with a typical comfort zone for the voice
    // (common practice, from memory: soprano E4–E5, alto A3–C5, tenor D3–F4,
    // bass G2–C4), ranges a few semitones wider.
    for (name, section, range, comfort) in [
        ("Ada Strand", "S", ("C4", "A5"), ("E4", "E5")),
        ("Bea Mallory", "A", ("F3", "E5"), ("A3", "C5")),
        ("Cal Thorne", "T", ("B2", "A4"), ("D3", "F4")),
        ("Dov Ashby", "B", ("E2", "E4"), ("G2", "C4")),
    ] {
        app.ok(
            "singer_add_typed",
            json!({ "row": { "name": name, "section": section,
                             "rangeLow": range.0, "rangeHigh": range.1,
                             "comfortLow": comfort.0, "comfortHigh": comfort.1 } }),
        );
    }
    let score = repository().join("sample-scores/the-tide-clock.musicxml");
    let view = app.ok("piece_import", json!({ "path": score }));
    let title = view["title"].as_str().expect("a title");
    let advice = app.ok("transpose_advice", json!({ "title": title }));
    assert_eq!(advice["mode"], "choir");
    assert!(!advice["cautions"].as_array().is_none_or(Vec::is_empty));
    let keys = advice["keys"].as_array().expect("keys");
    assert!(!keys.is_empty());
    // Interval names by semitones (common practice): 1 minor second, 2 major
    // second, 3 minor third, 4 major third, 5 perfect fourth.
    let names = [
        "as written",
        "minor second",
        "major second",
        "minor third",
        "major third",
        "perfect fourth",
    ];
    let mut shifts = Vec::new();
    for key in keys {
        let shift = key["transpose_semitones"].as_i64().expect("a shift");
        shifts.push(shift);
        let interval = key["interval"]
            .as_str()
            .expect("an interval")
            .to_lowercase();
        if let Some(name) = names.get(shift.unsigned_abs() as usize) {
            assert!(interval.contains(name), "{shift}: {interval}");
        }
        if shift > 0 {
            assert!(interval.contains("up"), "{shift}: {interval}");
        } else if shift < 0 {
            assert!(interval.contains("down"), "{shift}: {interval}");
        }
    }
    assert!(shifts.contains(&0), "the written key is among the choices");
    // Each key's tonic is the written tonic moved by the shift, in pitch
    // classes (equal temperament: C 0, D 2, E 4, F 5, G 7, A 9, B 11; a sharp
    // adds one, a flat takes one away).
    let tonic = |key: &str| -> Option<i64> {
        let mut characters = key.chars();
        let base: i64 = match characters.next()? {
            'C' => 0,
            'D' => 2,
            'E' => 4,
            'F' => 5,
            'G' => 7,
            'A' => 9,
            'B' => 11,
            _ => return None,
        };
        let accidental = match characters.next() {
            Some('♯' | '#') => 1,
            Some('♭' | 'b') => -1,
            _ => 0,
        };
        Some((base + accidental).rem_euclid(12))
    };
    let written = advice["written_key"]
        .as_str()
        .and_then(tonic)
        .expect("the sample score states its key");
    let mut checked = 0;
    for key in keys {
        let shift = key["transpose_semitones"].as_i64().expect("a shift");
        let name = key["key"].as_str().expect("a key name");
        let moved = tonic(name).expect("a tonic");
        assert_eq!(moved, (written + shift).rem_euclid(12), "{shift}: {name}");
        checked += 1;
    }
    assert_eq!(checked, keys.len());
    let best = advice["best_semitones"].as_i64().expect("a best shift");
    assert!(shifts.contains(&best));
    let error = app
        .call("transpose_advice", json!({ "title": "No Such Piece" }))
        .expect_err("no such piece");
    assert!(error.contains("No Such Piece"), "{error}");
}

#[test]
fn the_seating_list_is_written_as_csv_with_the_moves_made() {
    let app = app(true);
    let scratch = tempfile::tempdir().expect("scratch");
    let path = scratch.path().join("seating.csv");
    let error = app
        .call("seating_export", json!({ "path": path }))
        .expect_err("nothing is placed yet");
    assert!(error.contains("optimiser"), "{error}");
    assert!(!path.exists());

    let score = repository().join("sample-scores/the-tide-clock.musicxml");
    app.ok("piece_import", json!({ "path": score }));
    let done = app.job("place_solve", json!({ "pieces": [], "layout": "SATB" }));
    let assignments = done["result"]["assignments"]
        .as_array()
        .expect("assignments")
        .clone();
    let name = assignments[0]["singer"].as_str().expect("a name");
    let from = assignments[0]["section"].as_str().expect("a section");
    let to = if from == "B" { "T" } else { "B" };
    app.ok("place_move", json!({ "name": name, "section": to }));

    let rows = app.ok("seating_export", json!({ "path": path }));
    assert_eq!(rows.as_u64(), Some(assignments.len() as u64));
    // Read back with the csv crate (RFC 4180).
    let mut reader = csv::Reader::from_path(&path).expect("a CSV file");
    assert_eq!(
        reader
            .headers()
            .expect("a header")
            .iter()
            .collect::<Vec<_>>(),
        ["section", "singer", "fit"]
    );
    let records: Vec<csv::StringRecord> = reader.records().collect::<Result<_, _>>().expect("rows");
    assert_eq!(records.len(), assignments.len());
    let section_of = |singer: &str| {
        records
            .iter()
            .find(|record| record.get(1) == Some(singer))
            .and_then(|record| record.get(0).map(str::to_string))
    };
    assert_eq!(
        section_of(name).as_deref(),
        Some(to),
        "the move is in the list"
    );
    // Sections in SATB order (common practice), each singer once.
    let order = ["S", "A", "T", "B"];
    let positions: Vec<usize> = records
        .iter()
        .map(|record| {
            order
                .iter()
                .position(|section| Some(*section) == record.get(0))
                .expect("an SATB section")
        })
        .collect();
    assert!(
        positions.windows(2).all(|pair| pair[0] <= pair[1]),
        "{positions:?}"
    );
    let mut names: Vec<&str> = records.iter().filter_map(|record| record.get(1)).collect();
    names.sort_unstable();
    names.dedup();
    assert_eq!(names.len(), records.len());
    // Nothing else was left beside it.
    let left: Vec<_> = std::fs::read_dir(scratch.path())
        .expect("the folder")
        .filter_map(|entry| entry.ok().map(|entry| entry.file_name()))
        .collect();
    assert_eq!(left, [std::ffi::OsString::from("seating.csv")]);

    let error = app
        .call(
            "seating_export",
            json!({ "path": scratch.path().join("no-such-folder/seating.csv") }),
        )
        .expect_err("no such folder");
    assert!(error.contains("no-such-folder"), "{error}");
}

#[test]
fn undo_takes_a_move_back_and_redo_makes_it_again() {
    let app = app(true);
    let score = repository().join("sample-scores/the-tide-clock.musicxml");
    app.ok("piece_import", json!({ "path": score }));
    let done = app.job("place_solve", json!({ "pieces": [], "layout": "SATB" }));
    assert!(done["error"].is_null(), "{done}");
    let optimum = done["result"].clone();
    assert_eq!(optimum["canUndo"], false);
    assert!(
        app.ok("place_undo", json!({})).is_null(),
        "nothing to undo yet"
    );
    let first = &optimum["assignments"][0];
    let name = first["singer"].as_str().expect("a name");
    let to = if first["section"] == "S" { "A" } else { "S" };
    let moved = app.ok("place_move", json!({ "name": name, "section": to }));
    assert_eq!(moved["placement"]["canUndo"], true);
    let undone = app.ok("place_undo", json!({}));
    // Undo gives back the optimum exactly: the same seats and the same total.
    assert_eq!(undone["assignments"], optimum["assignments"]);
    assert_eq!(undone["objective"], optimum["objective"]);
    assert_eq!(undone["canRedo"], true);
    let redone = app.ok("place_redo", json!({}));
    assert_eq!(redone["assignments"], moved["placement"]["assignments"]);
    assert!(
        app.ok("place_redo", json!({})).is_null(),
        "nothing more to redo"
    );
}

/// The app path of the one-engine check (the CLI, library and demo paths
/// are in the root package's `tests/one_engine.rs`): four demo auditions
/// analysed and saved through the app's commands must give the section
/// fits and the placement that the engine gives for the same recordings
/// converted once (`roster::singer_from_profile`, as `ambit profile
/// --roster-row` does).
#[test]
fn auditions_saved_in_the_app_place_as_the_engine_places_the_same_recordings() {
    use ambit::demo::seed::{audition_seed, write_audition_files};
    use ambit::demo::{DEMO_CHOIR, DemoSinger};
    use ambit::usecases::audition::measure_audition;
    use ambit::usecases::{Cancel, Quiet};
    use ambit::voice::ProfileConfig;
    use ambit::voice::types::VoiceType;

    let app = app(false);
    let scratch = tempfile::tempdir().expect("scratch");
    let score = repository().join("sample-scores/the-tide-clock.mxl");
    app.ok("piece_import", json!({ "path": score }));
    let mut roster = ambit::roster::Roster {
        singers: Vec::new(),
    };
    for wanted in [
        VoiceType::Soprano,
        VoiceType::MezzoSoprano,
        VoiceType::Tenor,
        VoiceType::Bass,
    ] {
        let (index, singer): (usize, &DemoSinger) = DEMO_CHOIR
            .iter()
            .enumerate()
            .find(|(_, singer)| singer.voice_type == wanted)
            .expect("every type is in the demo choir");
        let files = write_audition_files(
            singer,
            audition_seed(index),
            &scratch.path().join(index.to_string()),
        )
        .expect("the audition is written");
        let done = app.job(
            "audition_analyse",
            json!({ "singer": singer.name, "files": files }),
        );
        assert!(done["error"].is_null(), "{done}");
        app.ok(
            "audition_save",
            json!({ "singer": singer.name, "files": files, "date": "2026-09-05" }),
        );
        let profile = measure_audition(&files, &ProfileConfig::default(), &Quiet, &Cancel::new())
            .expect("the engine measures it");
        roster
            .singers
            .push(ambit::roster::singer_from_profile(singer.name, &profile));
    }
    let piece = ambit::score::read_score(&score, &ambit::score::ReadOptions::default())
        .expect("the sample score");
    let layout = ambit::sections::Layout::parse("SATB").expect("a layout");
    let engine = ambit::plan::place_programme(
        &roster,
        std::slice::from_ref(&piece),
        &layout,
        &ambit::plan::PlanConstraints::default(),
        &ambit::plan::ProgrammeConfig::default(),
    )
    .expect("the engine places them");

    let matrix = app.ok(
        "fit_matrix",
        json!({ "pieces": [], "layout": "SATB", "by": "section" }),
    );
    for (row, name) in engine.matrix.singers.iter().enumerate() {
        let app_row = matrix["rows"]
            .as_array()
            .expect("rows")
            .iter()
            .position(|candidate| candidate == name)
            .expect("the singer is in the app's matrix");
        for (column, fit) in engine.matrix.fit[row].iter().enumerate() {
            let cell = &matrix["cells"][app_row][column];
            assert_eq!(
                cell["fit"].as_f64(),
                *fit,
                "{name} / {}",
                engine.matrix.sections[column]
            );
        }
    }
    let done = app.job("place_solve", json!({ "pieces": [], "layout": "SATB" }));
    assert!(done["error"].is_null(), "{done}");
    for assignment in &engine.placement.assignments {
        let seated = done["result"]["assignments"]
            .as_array()
            .expect("assignments")
            .iter()
            .find(|candidate| candidate["singer"] == assignment.singer.as_str())
            .expect("every singer is seated");
        assert_eq!(seated["section"], assignment.section.as_str());
        assert_eq!(seated["fit"].as_f64(), Some(assignment.fit));
    }
}
