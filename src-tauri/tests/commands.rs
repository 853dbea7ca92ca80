//! The app's commands through Tauri's IPC on the mock runtime (feature
//! `test`), each on a fresh library in a temporary folder.
//!
//! Expected values come from outside the app: pitch facts (scientific pitch
//! notation, ISO 16 A4 = 440 Hz, equal temperament), the sample score's own
//! part list, and the files on disk.

use std::path::{Path, PathBuf};
use std::sync::mpsc;
use std::time::Duration;

use ambit::library::Library;
use ambit_app::AppState;
use serde_json::{Value, json};
use tauri::Listener;
use tauri::test::{INVOKE_KEY, MockRuntime, mock_builder, mock_context, noop_assets};
use tauri::webview::InvokeRequest;
use tauri::{App, WebviewWindow};

struct TestApp {
    app: App<MockRuntime>,
    window: WebviewWindow<MockRuntime>,
    folder: tempfile::TempDir,
}

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
    let app = ambit_app::with_commands(mock_builder(), AppState::opened(library, with_choir))
        .build(mock_context(noop_assets()))
        .expect("the app builds");
    let window = tauri::WebviewWindowBuilder::new(&app, "main", Default::default())
        .build()
        .expect("a window");
    TestApp {
        app,
        window,
        folder,
    }
}

impl TestApp {
    fn call(&self, command: &str, arguments: Value) -> Result<Value, String> {
        tauri::test::get_ipc_response(
            &self.window,
            InvokeRequest {
                cmd: command.into(),
                callback: tauri::ipc::CallbackFn(0),
                error: tauri::ipc::CallbackFn(1),
                // The app's own origin on Linux and macOS (Windows: http://tauri.localhost).
                url: "tauri://localhost".parse().expect("a URL"),
                body: tauri::ipc::InvokeBody::Json(arguments),
                headers: Default::default(),
                invoke_key: INVOKE_KEY.to_string(),
            },
        )
        .map(|body| body.deserialize::<Value>().expect("JSON"))
        .map_err(|error| match error {
            Value::String(message) => message,
            other => other.to_string(),
        })
    }

    fn ok(&self, command: &str, arguments: Value) -> Value {
        self.call(command, arguments)
            .unwrap_or_else(|error| panic!("{command}: {error}"))
    }

    /// Starts a job and waits for its `job-done` event.
    fn job(&self, command: &str, arguments: Value) -> Value {
        let (sender, receiver) = mpsc::channel::<String>();
        let id = self.app.listen_any("job-done", move |event| {
            let _ = sender.send(event.payload().to_string());
        });
        let job = self.ok(command, arguments);
        let done = loop {
            let payload = receiver
                .recv_timeout(Duration::from_secs(600))
                .expect("job-done within ten minutes");
            let done: Value = serde_json::from_str(&payload).expect("JSON");
            if done["job"] == job {
                break done;
            }
        };
        self.app.unlisten(id);
        done
    }

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
    assert!(
        app.call("singer_history", json!({ "name": "Pell Marrow" }))
            .is_err()
    );
}

#[test]
fn an_audition_of_a_missing_file_ends_the_job_with_an_error_naming_it() {
    let app = app(false);
    let done = app.job(
        "audition_analyse",
        json!({ "singer": "Pell Marrow", "files": [{ "task": "glide", "path": "/nonexistent/glide.wav" }] }),
    );
    let error = done["error"].as_str().expect("an error");
    assert!(error.contains("/nonexistent/glide.wav"), "{error}");
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
