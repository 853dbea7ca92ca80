//! Recording through cpal and ALSA from a virtual capture device: ALSA's own
//! `file` plugin (alsa-lib, "PCM file plugin": `infile` is read on capture)
//! over its `null` device, behind a `plug` that converts to whatever format
//! cpal asks for. The machine needs no sound card; the app's recorder runs
//! unchanged: device, format conversion, the writer thread, the WAV, the
//! live tracker and its `pitch-frame` events.
//!
//! What this device cannot give: real-time pacing (the null device is
//! always ready, so capture runs as fast as the writer takes it) and a
//! contiguous input (measured: with cpal's reads the plugin's position in
//! `infile` jumps between reads, so the take is pieces of the input). So the
//! test checks that the take is made of the input's samples and that every
//! live frame names its own pitch correctly; pitch accuracy of the live
//! tracker is checked on contiguous audio elsewhere (the engine's
//! streaming-equals-offline tests, `examples/live_latency.rs`).
//!
//! One test in its own binary: it points ALSA at its configuration through
//! `ALSA_CONFIG_PATH` before anything in the process opens ALSA.

use std::io::Write;
use std::path::Path;
use std::sync::mpsc;
use std::time::Duration;

mod common;

use ambit::library::Library;
use ambit_app::AppState;
use common::TestApp;
use serde_json::{Value, json};
use tauri::Listener;

const RATE: u32 = 48_000;
/// 220 Hz is A3: 440 · 2^((57 − 69)/12) (ISO 16 A4 = 440 Hz, equal temperament).
const A3_HZ: f64 = 220.0;
const SECONDS: f64 = 3.0;

/// The ALSA configuration: the system's, then a default capture device that
/// reads `infile` (16-bit little-endian mono at 48 kHz).
fn alsa_config(folder: &Path, infile: &Path) -> std::path::PathBuf {
    let system = ["/usr/share/alsa/alsa.conf", "/etc/alsa/alsa.conf"]
        .into_iter()
        .find(|path| Path::new(path).is_file())
        .expect("alsa-lib's configuration (libasound2-data)");
    let config = folder.join("asound.conf");
    std::fs::write(
        &config,
        format!(
            "<{system}>\n\
             pcm.ambit_file_input {{\n\
                 type file\n\
                 slave.pcm \"null\"\n\
                 file \"/dev/null\"\n\
                 infile \"{}\"\n\
                 format \"raw\"\n\
             }}\n\
             pcm.!default {{\n\
                 type plug\n\
                 slave {{ pcm \"ambit_file_input\" format S16_LE rate {RATE} channels 1 }}\n\
             }}\n",
            infile.display()
        ),
    )
    .expect("the ALSA configuration");
    config
}

#[test]
fn a_take_from_an_alsa_capture_device_is_saved_as_wav_and_traced_live_with_note_names() {
    let folder = tempfile::tempdir().expect("a scratch folder");
    let infile = folder.path().join("input.raw");
    let count = (SECONDS * f64::from(RATE)) as usize;
    let mut raw = std::fs::File::create(&infile).expect("the input file");
    for index in 0..count {
        let time = index as f64 / f64::from(RATE);
        let value = 0.4 * (2.0 * std::f64::consts::PI * A3_HZ * time).sin();
        raw.write_all(&((value * f64::from(i16::MAX)) as i16).to_le_bytes())
            .expect("a sample");
    }
    drop(raw);
    let config = alsa_config(folder.path(), &infile);
    // SAFETY: this binary's only test sets the variable before any thread of
    // its own starts and before ALSA is first opened; nothing else reads it.
    unsafe { std::env::set_var("ALSA_CONFIG_PATH", &config) };

    let library = Library::create(&folder.path().join("library")).expect("a library");
    let app = TestApp::build(AppState::opened(library, false), folder);
    let call = |command: &str, arguments: Value| app.call(command, arguments);
    let (sender, frames) = mpsc::channel::<String>();
    app.app.listen_any("pitch-frame", move |event| {
        let _ = sender.send(event.payload().to_string());
    });

    call("recording_start", json!({ "task": "sustain" }))
        .expect("recording starts from the virtual device");
    // The device is faster than real time: this is plenty for 3 s of input.
    std::thread::sleep(Duration::from_millis(500));
    let take = call("recording_stop", json!({})).expect("the take");

    // The WAV: 16-bit mono at the device's rate, beginning with the input.
    let path = take["path"].as_str().expect("a path");
    let mut reader = hound::WavReader::open(path).expect("a WAV hound reads");
    let spec = reader.spec();
    assert_eq!(spec.channels, 1);
    assert_eq!(spec.bits_per_sample, 16);
    let samples: Vec<i16> = reader
        .samples::<i16>()
        .collect::<Result<_, _>>()
        .expect("samples");
    let rate = f64::from(spec.sample_rate);
    let recorded = samples.len() as f64 / rate;
    assert!(
        recorded >= SECONDS,
        "only {recorded:.2} s were recorded ({take})"
    );
    // Every stretch of the take is the input: a 20-sample window from
    // anywhere in its first seconds matches the generated sine (±2 LSB of
    // rounding) at some offset.
    let input: Vec<i16> = (0..count)
        .map(|index| {
            let time = index as f64 / f64::from(RATE);
            let value = 0.4 * (2.0 * std::f64::consts::PI * A3_HZ * time).sin();
            (value * f64::from(i16::MAX)) as i16
        })
        .collect();
    assert_eq!(
        spec.sample_rate, RATE,
        "the plug gives cpal the input's rate"
    );
    let from_input = |window: &[i16]| {
        input.windows(window.len()).any(|candidate| {
            candidate
                .iter()
                .zip(window)
                .all(|(a, b)| (i32::from(*a) - i32::from(*b)).abs() <= 2)
        })
    };
    for start in (0..count.min(samples.len()) - 50).step_by(count / 17) {
        // A window may straddle a jump between reads; of two windows 25
        // samples apart, at most one can.
        assert!(
            from_input(&samples[start..start + 20]) || from_input(&samples[start + 25..start + 45]),
            "samples {start}.. of the take are not from the input"
        );
    }

    // The live trace: a frame every 10 ms hop, and each voiced frame's note
    // is its own f0's nearest equal-tempered note (MIDI 69 = A4 = 440 Hz,
    // ISO 16; twelve semitones an octave).
    let frames: Vec<Value> = frames
        .try_iter()
        .map(|payload| serde_json::from_str(&payload).expect("JSON"))
        .collect();
    assert!(frames.len() > 100, "{} frames", frames.len());
    for (index, frame) in frames.iter().enumerate().take(1000) {
        let time = frame["time"].as_f64().expect("a time");
        assert!(
            (time - index as f64 * 0.01).abs() < 1e-6,
            "frame {index} at {time}"
        );
    }
    let names = [
        "C", "C#", "D", "D#", "E", "F", "F#", "G", "G#", "A", "A#", "B",
    ];
    let mut voiced = 0;
    for frame in &frames {
        let Some(hz) = frame["f0Hz"].as_f64() else {
            continue;
        };
        voiced += 1;
        let midi = (69.0 + 12.0 * (hz / 440.0).log2()).round() as i64;
        let expected = format!(
            "{}{}",
            names[midi.rem_euclid(12) as usize],
            midi.div_euclid(12) - 1
        );
        let note = frame["note"].as_str().expect("a voiced frame has a note");
        assert_eq!(note.replace('♯', "#"), expected, "{hz} Hz");
    }
    assert!(voiced > 50, "{voiced} voiced frames");
}
