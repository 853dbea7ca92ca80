//! Bad audio input: each case gets a clear error naming the file and the
//! problem (or, where the file is still usable, a warning), never a panic.
//!
//! The corpus is built here, in a temporary directory, from inline bytes or
//! from the small committed tone files; the two-hour file is streamed to disk
//! by the test itself. Header layouts follow the RIFF/WAVE specification
//! (Microsoft/IBM, "Multimedia Programming Interface and Data Specifications
//! 1.0", 1991): "RIFF" size "WAVE", then "fmt " (16 bytes: tag, channels,
//! rate, byte rate, block align, bits) and "data".

use crate::common;

use std::path::{Path, PathBuf};

use ambit::audio::{self, AudioError, DecodeOptions, decode_file};

fn data(name: &str) -> PathBuf {
    common::project_root().join("tests/data/audio").join(name)
}

/// A canonical 44-byte WAV header followed by `data`.
fn wav_bytes(tag: u16, channels: u16, rate: u32, bits: u16, data: &[u8]) -> Vec<u8> {
    let block_align = channels * bits / 8;
    let mut v = Vec::new();
    v.extend_from_slice(b"RIFF");
    v.extend_from_slice(&(36 + data.len() as u32).to_le_bytes());
    v.extend_from_slice(b"WAVEfmt ");
    v.extend_from_slice(&16u32.to_le_bytes());
    v.extend_from_slice(&tag.to_le_bytes());
    v.extend_from_slice(&channels.to_le_bytes());
    v.extend_from_slice(&rate.to_le_bytes());
    v.extend_from_slice(&(rate * u32::from(block_align)).to_le_bytes());
    v.extend_from_slice(&block_align.to_le_bytes());
    v.extend_from_slice(&bits.to_le_bytes());
    v.extend_from_slice(b"data");
    v.extend_from_slice(&(data.len() as u32).to_le_bytes());
    v.extend_from_slice(data);
    v
}

/// 16-bit samples of a 220 Hz sine at half scale.
fn tone_pcm16(rate: u32, seconds: f64) -> Vec<u8> {
    let n = (f64::from(rate) * seconds) as usize;
    (0..n)
        .flat_map(|i| {
            let x = 0.5 * (std::f64::consts::TAU * 220.0 * i as f64 / f64::from(rate)).sin();
            ((x * 32767.0).round() as i16).to_le_bytes()
        })
        .collect()
}

fn write(dir: &Path, name: &str, bytes: &[u8]) -> PathBuf {
    let path = dir.join(name);
    std::fs::write(&path, bytes).expect("write corpus file");
    path
}

/// Asserts the error message names the file and contains `words`.
fn assert_message(e: &AudioError, path: &Path, words: &str) {
    let message = e.to_string();
    assert!(
        message.starts_with(&path.display().to_string()),
        "no file name in: {message}"
    );
    assert!(message.contains(words), "expected {words:?} in: {message}");
}

const NATIVE: DecodeOptions = DecodeOptions {
    target_sample_rate: None,
    max_duration_seconds: Some(ambit::audio::MAX_DECODE_SECONDS),
};

#[test]
fn empty_file_is_unusable() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = write(dir.path(), "empty.wav", b"");
    let e = decode_file(&path, &NATIVE).expect_err("empty");
    assert!(matches!(e, AudioError::Unusable { .. }), "{e:?}");
    assert_message(&e, &path, "is empty (0 bytes)");
}

#[test]
fn missing_file_is_an_io_error() {
    let path = PathBuf::from("/nonexistent/ambit/take1.wav");
    let e = decode_file(&path, &NATIVE).expect_err("missing");
    assert!(matches!(e, AudioError::Io { .. }), "{e:?}");
    assert_message(&e, &path, "cannot read");
}

#[test]
fn header_with_no_data_is_unusable() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = write(
        dir.path(),
        "header-only.wav",
        &wav_bytes(1, 1, 16_000, 16, &[]),
    );
    let e = decode_file(&path, &NATIVE).expect_err("no data");
    assert!(matches!(e, AudioError::Unusable { .. }), "{e:?}");
    // The data chunk header starts at byte 36 of a canonical header.
    assert_message(
        &e,
        &path,
        "no audio data (the data chunk at byte 36 is empty)",
    );
}

#[test]
fn header_cut_short_is_malformed_with_its_length() {
    let dir = tempfile::tempdir().expect("tempdir");
    let full = wav_bytes(1, 1, 16_000, 16, &tone_pcm16(16_000, 1.0));
    let path = write(dir.path(), "cut-header.wav", &full[..8]);
    let e = decode_file(&path, &NATIVE).expect_err("cut");
    assert_message(&e, &path, "the file is only 8 bytes");
    let path = write(dir.path(), "cut-fmt.wav", &full[..30]);
    let e = decode_file(&path, &NATIVE).expect_err("cut");
    assert!(matches!(e, AudioError::Malformed { .. }), "{e:?}");
    assert_message(&e, &path, "fmt chunk at byte 12 is cut off");
}

/// A WAV whose header promises 2 s but whose file holds 1 s: decoded as far
/// as it goes, with a warning saying so.
#[test]
fn truncated_wav_decodes_what_is_there_with_a_warning() {
    let dir = tempfile::tempdir().expect("tempdir");
    let full = wav_bytes(1, 1, 16_000, 16, &tone_pcm16(16_000, 2.0));
    let path = write(dir.path(), "truncated.wav", &full[..44 + 32_000]);
    let audio = decode_file(&path, &NATIVE).expect("usable part");
    assert_eq!(audio.samples.len(), 16_000);
    let w = audio.report.warnings.join(" | ");
    assert!(w.contains("the file is truncated"), "{w}");
    assert!(
        w.contains("promises 2.00 s") && w.contains("only 1.00 s"),
        "{w}"
    );
}

/// Compressed files cut at two thirds. Where the frames before the cut can
/// be read, they are decoded and the report says decoding stopped early;
/// where the cut takes away what the container needs to start (the OGG
/// reader checks the last page; an ffmpeg-written m4a keeps its index, the
/// moov box, at the end), the error says the file is cut off.
#[test]
fn truncated_compressed_files_are_reported() {
    let dir = tempfile::tempdir().expect("tempdir");
    let cases = [
        ("tone220.flac", Ok("decoding stopped early")),
        ("tone220.mp3", Ok("(the header promises 1.50 s)")),
        ("tone220.ogg", Err("is cut off")),
        (
            "tone220.m4a",
            Err("without its index (moov box); it is probably truncated"),
        ),
    ];
    for (name, expected) in cases {
        let bytes = std::fs::read(data(name)).expect("read");
        let path = write(
            dir.path(),
            &format!("cut-{name}"),
            &bytes[..bytes.len() * 2 / 3],
        );
        match (decode_file(&path, &NATIVE), expected) {
            (Ok(audio), Ok(words)) => {
                assert!(
                    audio.duration_seconds < 1.45,
                    "{name}: {} s",
                    audio.duration_seconds
                );
                assert!(
                    audio.report.warnings.iter().any(|w| w.contains(words)),
                    "{name}: {:?}",
                    audio.report.warnings
                );
            }
            (Err(e), Err(words)) => {
                assert!(matches!(e, AudioError::Malformed { .. }), "{name}: {e:?}");
                assert_message(&e, &path, words);
            }
            (got, _) => panic!(
                "{name}: expected {expected:?}, got {:?}",
                got.map(|a| a.report.warnings)
            ),
        }
    }
}

/// An ADPCM WAV (format tag 0x0002) is refused by name, with the way out.
#[test]
fn unsupported_wav_codec_is_named() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = write(
        dir.path(),
        "adpcm.wav",
        &wav_bytes(2, 1, 16_000, 4, &[0u8; 8000]),
    );
    let e = decode_file(&path, &NATIVE).expect_err("adpcm");
    assert!(matches!(e, AudioError::Unsupported { .. }), "{e:?}");
    assert_message(&e, &path, "WAV format tag 0x0002 (Microsoft ADPCM)");
    assert_message(&e, &path, "convert it to 16-bit PCM WAV or FLAC");
}

/// µ-law WAV (ITU-T G.711) is not refused: symphonia's PCM decoder expands it.
#[test]
fn mu_law_wav_is_decoded() {
    let audio = decode_file(&data("tone220-mulaw.wav"), &NATIVE).expect("mu-law");
    assert_eq!(audio.source_sample_rate, 8_000);
    assert_eq!(audio.samples.len(), 12_000);
}

/// Random bytes and a text file are "not a recognised audio file".
#[test]
fn random_binary_and_text_are_not_audio() {
    let dir = tempfile::tempdir().expect("tempdir");
    let mut rng = ambit::synth::random::SplitMix64::new(0x2545_F491_4F6C_DD1Du64);
    let noise: Vec<u8> = (0..65_536)
        .map(|_| {
            let state = rng.next_u64();
            (state >> 56) as u8
        })
        .collect();
    for (name, bytes) in [
        ("random.bin", noise.as_slice()),
        (
            "notes.txt",
            b"Soprano 1: take two, after the break.\n".as_slice(),
        ),
        ("random.mp3", noise.as_slice()),
    ] {
        let path = write(dir.path(), name, bytes);
        let e = decode_file(&path, &NATIVE).expect_err(name);
        assert_message(&e, &path, "");
        assert!(
            matches!(
                e,
                AudioError::Unsupported { .. }
                    | AudioError::Malformed { .. }
                    | AudioError::Unusable { .. }
            ),
            "{name}: {e:?}"
        );
    }
}

#[test]
fn sample_rates_out_of_range_are_refused_with_the_rate() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = write(
        dir.path(),
        "4k.wav",
        &wav_bytes(1, 1, 4_000, 16, &tone_pcm16(4_000, 1.0)),
    );
    let e = decode_file(&path, &NATIVE).expect_err("4 kHz");
    assert!(matches!(e, AudioError::Unsupported { .. }), "{e:?}");
    // The rate field of a canonical header is at byte 24.
    assert_message(
        &e,
        &path,
        "sample rate 4000 Hz (byte 24) is below the 8000 Hz minimum",
    );
    let path = write(
        dir.path(),
        "1M.wav",
        &wav_bytes(1, 1, 1_000_000, 16, &tone_pcm16(16_000, 1.0)),
    );
    let e = decode_file(&path, &NATIVE).expect_err("1 MHz");
    assert_message(
        &e,
        &path,
        "sample rate 1000000 Hz (byte 24) is above the 384000 Hz maximum",
    );
}

#[test]
fn zero_channel_header_is_malformed() {
    let dir = tempfile::tempdir().expect("tempdir");
    let mut bytes = wav_bytes(1, 1, 16_000, 16, &tone_pcm16(16_000, 1.0));
    bytes[22..24].copy_from_slice(&0u16.to_le_bytes());
    let path = write(dir.path(), "zero-channels.wav", &bytes);
    let e = decode_file(&path, &NATIVE).expect_err("0 channels");
    assert!(matches!(e, AudioError::Malformed { .. }), "{e:?}");
    assert_message(&e, &path, "0 channels (byte 22)");
}

/// NaN and ±∞ samples in a float WAV are replaced by silence and reported
/// with their count and the time of the first.
#[test]
fn nan_and_infinite_samples_are_replaced_with_a_warning() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("nan.wav");
    let spec = hound::WavSpec {
        channels: 1,
        sample_rate: 16_000,
        bits_per_sample: 32,
        sample_format: hound::SampleFormat::Float,
    };
    let mut w = hound::WavWriter::create(&path, spec).expect("create");
    for i in 0..16_000u32 {
        let x = match i {
            8_000 => f32::NAN,
            8_001 => f32::INFINITY,
            8_002 => f32::NEG_INFINITY,
            _ => 0.5 * (std::f32::consts::TAU * 220.0 * i as f32 / 16_000.0).sin(),
        };
        w.write_sample(x).expect("write");
    }
    w.finalize().expect("finalize");
    let audio = decode_file(&path, &NATIVE).expect("usable");
    assert!(audio.samples.iter().all(|x| x.is_finite()));
    assert_eq!(audio.samples[8_000..8_003], [0.0, 0.0, 0.0]);
    let w = audio.report.warnings.join(" | ");
    assert!(
        w.contains("3 samples were not numbers") && w.contains("at 0.50 s"),
        "{w}"
    );
}

/// A float WAV where every sample is NaN holds no audio: it is named as
/// damaged, not as silent (issue 17: it was called "silent (every sample is
/// zero)", the zeros being the NaNs' replacements).
#[test]
fn all_nan_audio_is_damaged_not_silent() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("all-nan.wav");
    let spec = hound::WavSpec {
        channels: 2,
        sample_rate: 16_000,
        bits_per_sample: 32,
        sample_format: hound::SampleFormat::Float,
    };
    let mut w = hound::WavWriter::create(&path, spec).expect("create");
    for _ in 0..2 * 16_000 {
        w.write_sample(f32::NAN).expect("write");
    }
    w.finalize().expect("finalize");
    let e = decode_file(&path, &NATIVE).expect_err("no audio");
    assert!(matches!(e, AudioError::Unusable { .. }), "{e:?}");
    assert_message(&e, &path, "every one of its 32000 samples is not a number");
    assert!(!e.to_string().contains("silent"), "{e}");
}

#[test]
fn silence_is_unusable() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = write(
        dir.path(),
        "silence.wav",
        &wav_bytes(1, 1, 16_000, 16, &[0u8; 64_000]),
    );
    let e = decode_file(&path, &DecodeOptions::default()).expect_err("silent");
    assert!(matches!(e, AudioError::Unusable { .. }), "{e:?}");
    assert_message(&e, &path, "is silent (every sample is zero)");
    // −70 dBFS hum is still "silent" for singing (peak below −60 dBFS).
    let quiet: Vec<u8> = (0..32_000)
        .flat_map(|i| {
            let x = 10f64.powf(-70.0 / 20.0)
                * (std::f64::consts::TAU * 50.0 * f64::from(i) / 16_000.0).sin();
            ((x * 32768.0).round() as i16).to_le_bytes()
        })
        .collect();
    let path = write(dir.path(), "hum.wav", &wav_bytes(1, 1, 16_000, 16, &quiet));
    let e = decode_file(&path, &NATIVE).expect_err("quiet");
    assert_message(&e, &path, "is silent (peak level -70");
}

#[test]
fn too_short_is_unusable_with_its_length() {
    let dir = tempfile::tempdir().expect("tempdir");
    let path = write(
        dir.path(),
        "blip.wav",
        &wav_bytes(1, 1, 16_000, 16, &tone_pcm16(16_000, 0.12)),
    );
    let e = decode_file(&path, &NATIVE).expect_err("short");
    assert!(matches!(e, AudioError::Unusable { .. }), "{e:?}");
    assert_message(&e, &path, "is 0.12 s long; at least 0.5 s is needed");
}

/// Pure noise is fine at this stage (the tracker will report it as
/// unvoiced); the report flags it as noisy.
#[test]
fn pure_noise_decodes_with_a_noise_warning() {
    let dir = tempfile::tempdir().expect("tempdir");
    let mut rng = ambit::synth::random::SplitMix64::new(7u64);
    let pcm: Vec<u8> = (0..32_000)
        .flat_map(|_| {
            let state = rng.next_u64();
            ((state >> 48) as i16 / 4).to_le_bytes()
        })
        .collect();
    let path = write(dir.path(), "noise.wav", &wav_bytes(1, 1, 16_000, 16, &pcm));
    let audio = decode_file(&path, &DecodeOptions::default()).expect("noise is usable");
    assert!(
        audio
            .report
            .warnings
            .iter()
            .any(|w| w.contains("no quiet passage")),
        "{:?}",
        audio.report.warnings
    );
}

#[test]
fn block_align_that_does_not_match_the_channels_is_malformed() {
    let dir = tempfile::tempdir().expect("tempdir");
    let mut bytes = wav_bytes(1, 1, 16_000, 16, &tone_pcm16(16_000, 1.0));
    // Block align (byte 32) says 3 bytes per frame for one 16-bit channel.
    bytes[32..34].copy_from_slice(&3u16.to_le_bytes());
    let path = write(dir.path(), "bad-align.wav", &bytes);
    let e = decode_file(&path, &NATIVE).expect_err("bad block align");
    assert!(matches!(e, AudioError::Malformed { .. }), "{e:?}");
    assert_message(
        &e,
        &path,
        "block align 3 (byte 32) does not match 1 channels of 16-bit samples",
    );
}

proptest::proptest! {
    #![proptest_config(proptest::test_runner::Config::with_cases(200))]

    /// Hostile headers: any bytes in the first 64 bytes of a WAV, and any
    /// cut, give Ok or an error naming the file, never a panic or a hang.
    #[test]
    fn mangled_wav_headers_never_panic(
        edits in proptest::collection::vec((0usize..64, proptest::prelude::any::<u8>()), 1..8),
        keep in 0usize..4_000,
    ) {
        let dir = tempfile::tempdir().expect("tempdir");
        let mut bytes = wav_bytes(1, 1, 8_000, 16, &tone_pcm16(8_000, 0.6));
        for (at, value) in edits {
            bytes[at] = value;
        }
        bytes.truncate(bytes.len().min(44 + keep * 4));
        let path = write(dir.path(), "mangled.wav", &bytes);
        if let Err(e) = decode_file(&path, &DecodeOptions::default()) {
            proptest::prop_assert!(e.to_string().starts_with(&path.display().to_string()));
        }
    }

    /// Damaged compressed files: random bytes overwritten anywhere in each
    /// committed file give Ok or an error naming the file, never a panic.
    #[test]
    fn damaged_compressed_files_never_panic(
        which in 0usize..4,
        edits in proptest::collection::vec((0.0f64..1.0, proptest::prelude::any::<u8>()), 1..16),
    ) {
        let name = ["tone220.flac", "tone220.ogg", "tone220.mp3", "tone220.m4a"][which];
        let mut bytes = std::fs::read(data(name)).expect("read");
        let len = bytes.len();
        for (at, value) in edits {
            bytes[((at * len as f64) as usize).min(len - 1)] = value;
        }
        let dir = tempfile::tempdir().expect("tempdir");
        let path = write(dir.path(), name, &bytes);
        if let Err(e) = decode_file(&path, &DecodeOptions::default()) {
            proptest::prop_assert!(e.to_string().starts_with(&path.display().to_string()));
        }
    }
}

fn vm_rss_kib() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmRSS:"))?;
    line.split_whitespace().nth(1)?.parse().ok()
}

/// A two-hour recording (8 kHz mono 16-bit, 115 MB, streamed to disk here)
/// is read chunk by chunk with bounded memory: chunks stay small, the
/// reader's buffers do not grow, and the process's resident memory grows by
/// less than 64 MB (half the file) while it is read.
#[test]
fn two_hour_file_streams_in_bounded_memory() {
    // Resident memory is the process's: measure it with no other test running.
    if !common::in_own_process("bad_audio::two_hour_file_streams_in_bounded_memory") {
        return;
    }
    let dir = tempfile::tempdir().expect("tempdir");
    let path = dir.path().join("two-hours.wav");
    let rate = 8_000u32;
    let frames = u64::from(rate) * 2 * 3600;
    {
        let spec = hound::WavSpec {
            channels: 1,
            sample_rate: rate,
            bits_per_sample: 16,
            sample_format: hound::SampleFormat::Int,
        };
        let mut w = hound::WavWriter::create(&path, spec).expect("create");
        // A 220 Hz tone repeating every second: one period table written over and over.
        let second: Vec<i16> = (0..rate)
            .map(|i| {
                (8000.0 * (std::f64::consts::TAU * 220.0 * f64::from(i) / f64::from(rate)).sin())
                    as i16
            })
            .collect();
        let mut writer = w.get_i16_writer(rate * 7200);
        for _ in 0..7200 {
            for &s in &second {
                writer.write_sample(s);
            }
        }
        writer.flush().expect("flush");
        w.finalize().expect("finalize");
    }
    let before = vm_rss_kib();
    // Streaming holds no more for a longer file, so no duration limit.
    let streaming = DecodeOptions {
        max_duration_seconds: None,
        ..DecodeOptions::default()
    };
    let mut reader = audio::open(&path, &streaming).expect("open");
    let capacity_after_first = {
        let first = reader.next_chunk().expect("chunk").expect("some");
        assert!(!first.is_empty());
        reader.buffer_capacity()
    };
    let mut total = 0u64;
    let mut peak_rss = 0;
    let mut chunks = 0u64;
    while let Some(chunk) = reader.next_chunk().expect("chunk") {
        total += chunk.len() as u64;
        chunks += 1;
        if chunks.is_multiple_of(1000) {
            peak_rss = peak_rss.max(vm_rss_kib().unwrap_or(0));
        }
    }
    assert_eq!(reader.source_frames(), frames);
    assert!(
        reader.largest_chunk_len() <= 16_384,
        "largest chunk {}",
        reader.largest_chunk_len()
    );
    assert!(
        reader.buffer_capacity() <= capacity_after_first * 2,
        "buffers grew from {capacity_after_first} to {}",
        reader.buffer_capacity()
    );
    let report = reader.finish().expect("report");
    // A tone that never pauses: the only warning is that there is no quiet passage.
    assert_eq!(report.warnings.len(), 1, "{:?}", report.warnings);
    assert!(
        report.warnings[0].starts_with("no quiet passage"),
        "{:?}",
        report.warnings
    );
    // 2 h at 22 050 Hz, less the first chunk counted separately.
    assert!(total > 2 * 3600 * 22_050 - 20_000, "{total}");
    if let Some(before) = before {
        let growth_mib = peak_rss.saturating_sub(before) / 1024;
        assert!(growth_mib < 64, "resident memory grew by {growth_mib} MiB");
    }
}
