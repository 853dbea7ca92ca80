//! `ambit track` end to end: a WAV written here, the JSON/CSV/summary shapes
//! of the CLI contract, and clear errors.

use crate::common;

use std::path::Path;

/// Writes `seconds` of a 220 Hz harmonic complex (A3 in equal temperament at
/// A4 = 440 Hz, ISO 16) as a 16-bit mono WAV at 22 050 Hz.
fn write_a3(path: &Path, seconds: f64) {
    let spec = hound::WavSpec {
        channels: 1,
        sample_rate: 22_050,
        bits_per_sample: 16,
        sample_format: hound::SampleFormat::Int,
    };
    let mut writer = hound::WavWriter::create(path, spec).expect("a temporary WAV");
    let count = (seconds * 22_050.0) as usize;
    for index in 0..count {
        let phase = 2.0 * std::f64::consts::PI * 220.0 * index as f64 / 22_050.0;
        let value: f64 = (1..=5).map(|k| (k as f64 * phase).sin() / k as f64).sum();
        writer
            .write_sample((value * 0.3 * 32_767.0) as i16)
            .expect("a sample written");
    }
    writer.finalize().expect("a finished WAV");
}

#[test]
fn json_output_follows_the_contract() {
    let directory = tempfile::tempdir().expect("a temporary directory");
    let path = directory.path().join("a3.wav");
    write_a3(&path, 2.0);
    let path_text = path.to_str().expect("a UTF-8 path");
    let (ok, stdout, stderr) = common::run_ambit(&["track", path_text, "--json"]);
    assert!(ok, "ambit track failed: {stderr}");
    let json: serde_json::Value = serde_json::from_str(&stdout).expect("JSON");
    // {"file":str,"sample_rate":int,"hop_seconds":float,"frames":[...]}
    assert_eq!(json["file"], path_text);
    assert_eq!(json["sample_rate"], 22_050);
    assert_eq!(json["hop_seconds"], 0.01);
    let frames = json["frames"].as_array().expect("a frame list");
    assert_eq!(frames.len(), 200, "2 s at 10 ms");
    for frame in frames {
        let keys: Vec<&str> = frame
            .as_object()
            .expect("a frame object")
            .keys()
            .map(String::as_str)
            .collect();
        assert_eq!(keys.len(), 5);
        for key in ["time", "f0_hz", "voiced", "confidence", "level_db"] {
            assert!(keys.contains(&key), "missing {key}");
        }
        assert!(frame["f0_hz"].is_null() || frame["f0_hz"].is_f64());
    }
    let middle = &frames[100];
    let f0 = middle["f0_hz"].as_f64().expect("a voiced middle frame");
    assert!((1200.0 * (f0 / 220.0).log2()).abs() < 5.0, "f0 {f0}");
}

#[test]
fn csv_and_summary_outputs() {
    let directory = tempfile::tempdir().expect("a temporary directory");
    let path = directory.path().join("a3.wav");
    write_a3(&path, 2.0);
    let path_text = path.to_str().expect("a UTF-8 path");
    let (ok, stdout, stderr) = common::run_ambit(&["track", path_text, "--csv"]);
    assert!(ok, "ambit track --csv failed: {stderr}");
    let mut lines = stdout.lines();
    assert_eq!(lines.next(), Some("time,f0_hz,voiced,confidence,level_db"));
    assert_eq!(lines.count(), 200);
    let (ok, stdout, stderr) = common::run_ambit(&["track", path_text]);
    assert!(ok, "ambit track failed: {stderr}");
    // 220 Hz is A3 (ISO 16, equal temperament); held for 2 s, so it is both
    // the lowest and the highest stable pitch.
    assert!(stdout.contains("median pitch"), "{stdout}");
    assert!(stdout.contains("A3"), "{stdout}");
    assert!(stdout.contains("lowest stable pitch"), "{stdout}");
}

#[test]
fn a_bad_search_range_is_refused_before_decoding() {
    let (ok, _, stderr) = common::run_ambit(&["track", "no-such-file.wav", "--fmin", "20"]);
    assert!(!ok);
    assert!(stderr.contains("no-such-file.wav"), "{stderr}");
    assert!(stderr.contains("below 30 Hz"), "{stderr}");
    let (ok, _, stderr) = common::run_ambit(&[
        "track",
        "no-such-file.wav",
        "--fmin",
        "400",
        "--fmax",
        "300",
    ]);
    assert!(!ok);
    assert!(stderr.contains("must be below fmax"), "{stderr}");
}
