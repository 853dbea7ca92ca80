//! Audio input: every supported format decodes to the signal that made it.
//!
//! Each test names where its expected value comes from: the generating
//! formula (a sine of known frequency and amplitude), the definition of RMS,
//! the quantisation step of the bit depth, or a codec's documented delay.

use crate::common;

use std::f64::consts::TAU;
use std::path::{Path, PathBuf};

use ambit::audio::{self, ANALYSIS_SAMPLE_RATE, DecodeOptions, decode_file};
use rustfft::FftPlanner;
use rustfft::num_complex::Complex;

fn data(name: &str) -> PathBuf {
    common::project_root().join("tests/data/audio").join(name)
}

const NATIVE: DecodeOptions = DecodeOptions {
    target_sample_rate: None,
    max_duration_seconds: Some(ambit::audio::MAX_DECODE_SECONDS),
};

/// Frequency of the strongest spectral peak, Hz: Hann window, zero-padding to
/// at least 8× the length, parabolic interpolation of the log magnitude
/// (Smith, "Spectral Audio Signal Processing", quadratic interpolation of
/// spectral peaks).
fn peak_frequency_hz(samples: &[f32], sample_rate: u32) -> f64 {
    let n = samples.len();
    let size = (n * 8).next_power_of_two();
    let mut buf: Vec<Complex<f64>> = samples
        .iter()
        .enumerate()
        .map(|(i, &x)| {
            let w = 0.5 - 0.5 * (TAU * i as f64 / n as f64).cos();
            Complex::new(f64::from(x) * w, 0.0)
        })
        .collect();
    buf.resize(size, Complex::new(0.0, 0.0));
    FftPlanner::new().plan_fft_forward(size).process(&mut buf);
    let mags: Vec<f64> = buf[..size / 2]
        .iter()
        .map(|c| c.norm().max(1e-30).ln())
        .collect();
    let k = (1..mags.len() - 1)
        .max_by(|&a, &b| mags[a].total_cmp(&mags[b]))
        .expect("spectrum");
    let (a, b, c) = (mags[k - 1], mags[k], mags[k + 1]);
    let offset = 0.5 * (a - c) / (a - 2.0 * b + c);
    (k as f64 + offset) * f64::from(sample_rate) / size as f64
}

fn rms_db(samples: &[f32]) -> f64 {
    let mean_square = samples
        .iter()
        .map(|&x| f64::from(x) * f64::from(x))
        .sum::<f64>()
        / samples.len() as f64;
    10.0 * mean_square.log10()
}

/// The middle of a signal (drops `edge_seconds` at each end, where codec
/// and resampler edge effects live).
fn middle(samples: &[f32], rate: u32, edge_seconds: f64) -> &[f32] {
    let edge = (f64::from(rate) * edge_seconds) as usize;
    &samples[edge..samples.len() - edge]
}

/// A steady tone never pauses, so its noise floor (the 10th percentile of
/// 50 ms frame levels) is its own level, −9 dBFS, and the report says there
/// is no quiet passage; it must say nothing else (no clipping, DC offset or
/// truncation).
fn assert_only_steady_tone_warning(warnings: &[String]) {
    assert_eq!(warnings.len(), 1, "{warnings:?}");
    assert!(
        warnings[0].starts_with("no quiet passage: the quietest tenth of the file is at -9."),
        "{warnings:?}"
    );
}

fn sine(rate: u32, freq_hz: f64, amplitude: f64, seconds: f64) -> Vec<f64> {
    let n = (f64::from(rate) * seconds).round() as usize;
    (0..n)
        .map(|i| amplitude * (TAU * freq_hz * i as f64 / f64::from(rate)).sin())
        .collect()
}

/// Writes interleaved samples in [-1, 1] as a WAV with hound.
fn write_wav(path: &Path, spec: hound::WavSpec, interleaved: &[f64]) {
    let mut w = hound::WavWriter::create(path, spec).expect("create wav");
    let top = f64::from(1u32 << (spec.bits_per_sample.min(31) - 1)); // 2^(bits-1)
    for &x in interleaved {
        match (spec.sample_format, spec.bits_per_sample) {
            (hound::SampleFormat::Float, _) => w.write_sample(x as f32).expect("write"),
            (_, 8) => w
                .write_sample((x * top).round().clamp(-128.0, 127.0) as i8)
                .expect("write"),
            (_, 16) => w
                .write_sample((x * top).round().clamp(-32768.0, 32767.0) as i16)
                .expect("write"),
            (_, 32) => w
                .write_sample(
                    (x * 2_147_483_648.0)
                        .round()
                        .clamp(-2_147_483_648.0, 2_147_483_647.0) as i32,
                )
                .expect("write"),
            _ => w
                .write_sample((x * top).round().clamp(-top, top - 1.0) as i32)
                .expect("write"),
        }
    }
    w.finalize().expect("finalize");
}

fn spec(channels: u16, rate: u32, bits: u16, float: bool) -> hound::WavSpec {
    hound::WavSpec {
        channels,
        sample_rate: rate,
        bits_per_sample: bits,
        sample_format: if float {
            hound::SampleFormat::Float
        } else {
            hound::SampleFormat::Int
        },
    }
}

/// Every WAV bit depth decodes, at the file's own rate, to the generating
/// sine within half a quantisation step (2^−bits of full scale, by the
/// definition of rounding to the nearest code).
#[test]
fn wav_bit_depths_decode_to_the_generating_signal() {
    let dir = tempfile::tempdir().expect("tempdir");
    let expected = sine(16_000, 440.0, 0.5, 1.0);
    for (bits, float) in [
        (8, false),
        (16, false),
        (24, false),
        (32, false),
        (32, true),
    ] {
        let path = dir.path().join(format!("sine-{bits}-{float}.wav"));
        write_wav(&path, spec(1, 16_000, bits, float), &expected);
        let audio = decode_file(&path, &NATIVE).expect("decode");
        assert_eq!(audio.sample_rate, 16_000);
        assert_eq!(audio.source_channels, 1);
        assert_eq!(audio.samples.len(), expected.len(), "{bits}-bit");
        // Half a quantisation step, but no finer than the f32 output keeps
        // (24-bit mantissa: 2^-25 for samples in ±0.5).
        let half_step = if float {
            1e-7
        } else {
            0.5f64.powi(i32::from(bits)).max(0.5f64.powi(25))
        };
        let worst = audio
            .samples
            .iter()
            .zip(&expected)
            .map(|(&a, &e)| (f64::from(a) - e).abs())
            .fold(0.0, f64::max);
        assert!(
            worst <= half_step * 1.01 + 1e-9,
            "{bits}-bit float={float}: worst error {worst} > half step {half_step}"
        );
        assert!((audio.duration_seconds - 1.0).abs() < 1e-9);
        assert_only_steady_tone_warning(&audio.report.warnings);
    }
}

/// Stereo and 6-channel files mix to the mean of their channels. hound
/// writes WAVE_FORMAT_EXTENSIBLE for more than two channels; the header's
/// format tag (bytes 20–21) is checked to prove this test covers it.
#[test]
fn channels_mix_to_their_mean_including_extensible_headers() {
    let dir = tempfile::tempdir().expect("tempdir");
    for channels in [2u16, 6] {
        let frames = 16_000;
        let per_channel: Vec<Vec<f64>> = (0..channels)
            .map(|c| {
                sine(
                    16_000,
                    220.0 * f64::from(c + 1),
                    0.1 + 0.1 * f64::from(c % 3),
                    1.0,
                )
            })
            .collect();
        let interleaved: Vec<f64> = (0..frames)
            .flat_map(|i| per_channel.iter().map(move |ch| ch[i]))
            .collect();
        let path = dir.path().join(format!("mix{channels}.wav"));
        write_wav(&path, spec(channels, 16_000, 24, false), &interleaved);
        let bytes = std::fs::read(&path).expect("read back");
        let tag = u16::from_le_bytes([bytes[20], bytes[21]]);
        if channels > 2 {
            assert_eq!(tag, 0xFFFE, "expected WAVE_FORMAT_EXTENSIBLE");
        }
        let audio = decode_file(&path, &NATIVE).expect("decode");
        assert_eq!(audio.source_channels, channels);
        for i in [0usize, 1234, 8000, 15_999] {
            let mean = per_channel.iter().map(|ch| ch[i]).sum::<f64>() / f64::from(channels);
            assert!(
                (f64::from(audio.samples[i]) - mean).abs() < 1e-6,
                "{channels} channels, frame {i}"
            );
        }
    }
}

/// The committed files (tests/data/audio/README.md says how each was made:
/// a 220 Hz sine at amplitude 0.5 for 1.5 s) decode, by content, to a 220 Hz
/// tone at the analysis rate with RMS −9.03 dBFS (RMS of a sine = A/√2).
///
/// Duration tolerance: lossless formats are exact to a sample. MP3 and AAC
/// encoders add priming delay and pad to whole frames (MP3: 1152-sample
/// frames plus the LAME encoder's 576+529-sample delay; AAC: 1024-sample
/// frames plus 1024 priming samples — both documented by the codecs and by
/// ffmpeg's encoders); gapless trimming removes them only when the container
/// records them, so we allow ±60 ms (about 2 frames at 44.1/48 kHz).
#[test]
fn each_committed_format_decodes_to_the_known_tone() {
    let cases = [
        ("tone220.wav", 16_000u32, 1u16, 1e-3, 0.05),
        ("tone220-mulaw.wav", 8_000, 1, 1e-3, 0.15),
        ("tone220.flac", 44_100, 1, 1e-3, 0.05),
        ("tone220.ogg", 44_100, 2, 0.06, 0.5),
        ("tone220.mp3", 44_100, 1, 0.06, 0.5),
        ("tone220.m4a", 48_000, 1, 0.06, 0.5),
    ];
    for (name, source_rate, channels, duration_tol, level_tol_db) in cases {
        let audio = decode_file(&data(name), &DecodeOptions::default())
            .unwrap_or_else(|e| panic!("{name}: {e}"));
        assert_eq!(audio.sample_rate, ANALYSIS_SAMPLE_RATE, "{name}");
        assert_eq!(audio.source_sample_rate, source_rate, "{name}");
        assert_eq!(audio.source_channels, channels, "{name}");
        assert!(
            (audio.duration_seconds - 1.5).abs() <= duration_tol,
            "{name}: duration {} s",
            audio.duration_seconds
        );
        let expected_len = 1.5 * f64::from(ANALYSIS_SAMPLE_RATE);
        assert!(
            (audio.samples.len() as f64 - expected_len).abs() <= duration_tol * 22_050.0 + 1.0,
            "{name}: {} samples",
            audio.samples.len()
        );
        let mid = middle(&audio.samples, audio.sample_rate, 0.2);
        let f = peak_frequency_hz(mid, audio.sample_rate);
        assert!((f - 220.0).abs() < 0.5, "{name}: peak at {f} Hz");
        let level = rms_db(mid);
        assert!(
            (level - -9.031).abs() < level_tol_db,
            "{name}: RMS {level} dBFS"
        );
        assert!(
            (audio.report.peak_db - -6.02).abs() < 1.0,
            "{name}: peak {}",
            audio.report.peak_db
        );
        assert_only_steady_tone_warning(&audio.report.warnings);
    }
}

/// Format detection is by content: a FLAC named `.mp3`, and one with no
/// extension at all, still decode to the same samples.
#[test]
fn format_is_detected_by_content_not_extension() {
    let dir = tempfile::tempdir().expect("tempdir");
    let reference = decode_file(&data("tone220.flac"), &NATIVE).expect("flac");
    for name in ["misnamed.mp3", "no-extension"] {
        let path = dir.path().join(name);
        std::fs::copy(data("tone220.flac"), &path).expect("copy");
        let audio = decode_file(&path, &NATIVE).expect(name);
        assert_eq!(audio.samples, reference.samples, "{name}");
    }
    // And a WAV named .flac goes to the WAV reader.
    let path = dir.path().join("really-a-wav.flac");
    std::fs::copy(data("tone220.wav"), &path).expect("copy");
    let audio = decode_file(&path, &NATIVE).expect("wav named flac");
    assert_eq!(audio.source_sample_rate, 16_000);
}

/// Resampling keeps a tone's frequency (FFT peak within 0.1 Hz) and level
/// (RMS within 0.05 dB of A/√2), down and up, for the rates phones and
/// laptops record at.
#[test]
fn resampling_keeps_frequency_and_amplitude() {
    let dir = tempfile::tempdir().expect("tempdir");
    // 9 kHz: the top of the passband we rely on (the fifth harmonic of an
    // f0 up to 1.8 kHz, and the 0–5 kHz timbre band with room to spare).
    for (rate, freq) in [
        (44_100u32, 440.0),
        (48_000, 1000.0),
        (8_000, 330.0),
        (96_000, 2000.0),
        (44_100, 9000.0),
        (48_000, 9000.0),
    ] {
        let path = dir.path().join(format!("r{rate}.wav"));
        write_wav(&path, spec(1, rate, 32, true), &sine(rate, freq, 0.5, 1.0));
        let audio = decode_file(&path, &DecodeOptions::default()).expect("decode");
        assert_eq!(audio.samples.len(), 22_050, "{rate} Hz: 1 s in, 1 s out");
        let mid = middle(&audio.samples, audio.sample_rate, 0.1);
        let f = peak_frequency_hz(mid, audio.sample_rate);
        assert!((f - freq).abs() < 0.1, "{rate} Hz: peak {f}");
        let level = rms_db(mid);
        assert!((level - -9.031).abs() < 0.05, "{rate} Hz: RMS {level}");
    }
}

/// A tone above the new Nyquist frequency (11 025 Hz at 22 050 Hz) must be
/// removed before decimation, or it folds back as an alias (the sampling
/// theorem: Shannon 1949). Our requirement is ≥ 40 dB of attenuation; the
/// resampler's anti-aliasing low-pass (rubato `Fft`, Blackman–Harris²
/// window) is designed for far more.
#[test]
fn tones_above_the_new_nyquist_are_attenuated_by_40_db() {
    let dir = tempfile::tempdir().expect("tempdir");
    for (rate, freq) in [
        (44_100u32, 15_000.0),
        (48_000, 12_000.0),
        (96_000, 30_000.0),
    ] {
        let path = dir.path().join(format!("hf{rate}.wav"));
        write_wav(&path, spec(1, rate, 32, true), &sine(rate, freq, 0.5, 1.0));
        let audio = decode_file(&path, &DecodeOptions::default()).expect("decode");
        let attenuation = -9.031 - rms_db(middle(&audio.samples, audio.sample_rate, 0.1));
        assert!(
            attenuation >= 40.0,
            "{rate} Hz, {freq} Hz tone: only {attenuation:.1} dB"
        );
    }
}

/// The streaming reader yields, chunk by chunk, exactly what decode_file
/// returns, in small chunks, and its report agrees.
#[test]
fn streaming_reader_matches_decode_file() {
    for name in ["tone220.flac", "tone220.m4a", "tone220.wav"] {
        let whole = decode_file(&data(name), &DecodeOptions::default()).expect("decode");
        let mut reader = audio::open(&data(name), &DecodeOptions::default()).expect("open");
        let mut joined = Vec::new();
        let mut chunks = 0;
        while let Some(chunk) = reader.next_chunk().expect("chunk") {
            assert!(!chunk.is_empty());
            joined.extend(chunk);
            chunks += 1;
        }
        assert!(chunks > 1, "{name}: expected several chunks");
        assert!(
            reader.largest_chunk_len() <= 8192,
            "{name}: {}",
            reader.largest_chunk_len()
        );
        let report = reader.finish().expect("report");
        assert_eq!(joined, whole.samples, "{name}");
        assert_eq!(report, whole.report, "{name}");
    }
}

/// Clipping, DC offset and noise are measured and warned about in plain
/// words. A sine driven to twice full scale and clipped: the share of
/// samples with |2·sin| ≥ 1 is 1 − (2/π)·asin(1/2) = 2/3 (geometry of the
/// sine), less the samples that land just under the top code.
#[test]
fn report_warns_about_clipping_dc_and_noise() {
    let dir = tempfile::tempdir().expect("tempdir");
    let clipped: Vec<f64> = sine(16_000, 200.0, 2.0, 1.0)
        .iter()
        .map(|x| x.clamp(-1.0, 1.0))
        .collect();
    let path = dir.path().join("clipped.wav");
    write_wav(&path, spec(1, 16_000, 16, false), &clipped);
    let r = decode_file(&path, &NATIVE).expect("decode").report;
    assert!(
        (r.clipped_share - 2.0 / 3.0).abs() < 0.01,
        "{}",
        r.clipped_share
    );
    assert!(
        r.warnings.iter().any(|w| w.contains("clipped")),
        "{:?}",
        r.warnings
    );

    let offset: Vec<f64> = sine(16_000, 200.0, 0.3, 1.0)
        .iter()
        .map(|x| x + 0.05)
        .collect();
    let path = dir.path().join("dc.wav");
    write_wav(&path, spec(1, 16_000, 16, false), &offset);
    let r = decode_file(&path, &NATIVE).expect("decode").report;
    assert!((r.dc_offset - 0.05).abs() < 0.001, "{}", r.dc_offset);
    assert!(
        r.warnings.iter().any(|w| w.contains("DC offset")),
        "{:?}",
        r.warnings
    );

    // Uniform noise in ±0.1 has RMS 0.1/√3 = −24.8 dBFS in every frame, so
    // the noise floor is about −24.8 dBFS, above the −40 dBFS warning line.
    let mut rng = ambit::synth::random::SplitMix64::new(12345u64);
    let noise: Vec<f64> = (0..16_000)
        .map(|_| {
            let state = rng.next_u64();
            ((state >> 11) as f64 / (1u64 << 53) as f64 * 2.0 - 1.0) * 0.1
        })
        .collect();
    let path = dir.path().join("noise.wav");
    write_wav(&path, spec(1, 16_000, 16, false), &noise);
    let r = decode_file(&path, &NATIVE).expect("decode").report;
    assert!(
        (r.noise_floor_db - -24.8).abs() < 0.5,
        "{}",
        r.noise_floor_db
    );
    assert!(
        r.warnings.iter().any(|w| w.contains("no quiet passage")),
        "{:?}",
        r.warnings
    );
}

/// Lossless decoding agrees with libsndfile (through the `soundfile` PyPI
/// package) sample for sample; Vorbis agrees within decoder rounding.
#[test]
fn decoding_agrees_with_libsndfile() {
    let Some(python) = common::reference_python("decoding_agrees_with_libsndfile") else {
        return;
    };
    for (name, tolerance) in [
        ("tone220.wav", 1e-6),
        ("tone220.flac", 1e-6),
        ("tone220.ogg", 1e-3),
    ] {
        let path = data(name);
        let json = common::run_reference(
            &python,
            "decode_audio.py",
            &[path.to_str().expect("utf-8 path")],
        );
        let reference: Vec<f64> = json["samples"]
            .as_array()
            .expect("samples")
            .iter()
            .map(|v| v.as_f64().expect("number"))
            .collect();
        let ours = decode_file(&path, &NATIVE).expect("decode");
        assert_eq!(
            json["sample_rate"].as_u64(),
            Some(u64::from(ours.sample_rate)),
            "{name}"
        );
        assert_eq!(ours.samples.len(), reference.len(), "{name}");
        let worst = ours
            .samples
            .iter()
            .zip(&reference)
            .map(|(&a, &b)| (f64::from(a) - b).abs())
            .fold(0.0, f64::max);
        assert!(worst <= tolerance, "{name}: largest difference {worst}");
    }
}
