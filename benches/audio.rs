//! Decode + resample throughput (docs/PERFORMANCE.md, "Audio decoding").
//!
//! Run: `cargo bench --bench audio`. Each benchmark decodes a whole file to
//! mono at the given rate through `audio::decode_file`; throughput is in
//! source samples per second, so real-time factor = throughput / source rate.

use std::hint::black_box;
use std::path::{Path, PathBuf};

use ambit::audio::{DecodeOptions, decode_file};
use criterion::{Criterion, Throughput, criterion_group, criterion_main};

fn write_tone_wav(path: &Path, rate: u32, channels: u16, seconds: u32) {
    let spec = hound::WavSpec {
        channels,
        sample_rate: rate,
        bits_per_sample: 16,
        sample_format: hound::SampleFormat::Int,
    };
    let mut w = hound::WavWriter::create(path, spec).expect("create");
    for i in 0..rate * seconds {
        let t = f64::from(i) / f64::from(rate);
        // A 220 Hz tone with a 5.5 Hz vibrato of ±50 cents: a sung note.
        let phase = std::f64::consts::TAU * 220.0 * t
            + (50.0 / 1200.0 * std::f64::consts::LN_2 * 220.0 / 5.5)
                * (std::f64::consts::TAU * 5.5 * t).sin();
        let x = (0.4 * phase.sin() * 32767.0) as i16;
        for _ in 0..channels {
            w.write_sample(x).expect("write");
        }
    }
    w.finalize().expect("finalize");
}

fn bench(c: &mut Criterion) {
    let dir = tempfile::tempdir().expect("tempdir");
    let wav44 = dir.path().join("tone44k.wav");
    write_tone_wav(&wav44, 44_100, 1, 10);
    let wav48 = dir.path().join("tone48k-stereo.wav");
    write_tone_wav(&wav48, 48_000, 2, 10);
    let data = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/data/audio");

    let mut group = c.benchmark_group("audio_decode");
    let cases: Vec<(&str, PathBuf, u64, Option<u32>)> = vec![
        ("wav_44k1_mono_10s_native", wav44.clone(), 441_000, None),
        (
            "wav_44k1_mono_10s_to_22050",
            wav44.clone(),
            441_000,
            Some(22_050),
        ),
        ("wav_44k1_mono_10s_to_16000", wav44, 441_000, Some(16_000)),
        (
            "wav_48k_stereo_10s_to_22050",
            wav48.clone(),
            480_000,
            Some(22_050),
        ),
        ("wav_48k_stereo_10s_to_16000", wav48, 480_000, Some(16_000)),
        (
            "flac_44k1_1.5s_to_22050",
            data.join("tone220.flac"),
            66_150,
            Some(22_050),
        ),
        (
            "ogg_44k1_1.5s_to_22050",
            data.join("tone220.ogg"),
            66_150,
            Some(22_050),
        ),
        (
            "mp3_44k1_1.5s_to_22050",
            data.join("tone220.mp3"),
            66_150,
            Some(22_050),
        ),
        (
            "m4a_48k_1.5s_to_22050",
            data.join("tone220.m4a"),
            72_000,
            Some(22_050),
        ),
    ];
    for (name, path, source_samples, rate) in cases {
        group.throughput(Throughput::Elements(source_samples));
        let options = DecodeOptions {
            target_sample_rate: rate,
            ..DecodeOptions::default()
        };
        group.bench_function(name, |b| {
            b.iter(|| black_box(decode_file(&path, &options).expect("decode")))
        });
    }
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
