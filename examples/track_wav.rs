//! Tracks a WAV file read with hound (no resampling) and prints the
//! `ambit track --json` shape. A tool for timing and tuning the tracker
//! alone, without the audio module's decoders.
//!
//! `cargo run --release --example track_wav -- FILE.wav [--yin] [--no-gate]
//!  [--octave P] [--trust C] [--lag SECONDS] [--periods P] [--bins N] [--beam NATS]
//!  [--lowpass HZ] [--no-lowpass]`

use ambit::track::{self, TrackConfig, TrackMethod};

fn main() -> Result<(), Box<dyn std::error::Error>> {
    let arguments: Vec<String> = std::env::args().skip(1).collect();
    let path = arguments
        .first()
        .ok_or("usage: track_wav FILE.wav [options]")?;
    let mut config = TrackConfig::default();
    let mut index = 1;
    while index < arguments.len() {
        let value = || -> Result<f64, Box<dyn std::error::Error>> {
            Ok(arguments.get(index + 1).ok_or("missing value")?.parse()?)
        };
        match arguments[index].as_str() {
            "--yin" => config.method = TrackMethod::Yin,
            "--no-gate" => config.voicing_gate_db = None,
            "--octave" => {
                config.octave_jump_probability = value()?;
                index += 1;
            }
            "--trust" => {
                config.candidate_trust = value()?;
                index += 1;
            }
            "--lag" => {
                config.viterbi_lag_seconds = value()?;
                index += 1;
            }
            "--periods" => {
                config.integration_periods = value()?;
                index += 1;
            }
            "--beam" => {
                config.viterbi_beam_nats = Some(value()?);
                index += 1;
            }
            "--lowpass" => {
                config.lowpass_hz = Some(value()?);
                index += 1;
            }
            "--no-lowpass" => config.lowpass_hz = None,
            "--bins" => {
                config.bins_per_semitone = value()? as u32;
                index += 1;
            }
            other => return Err(format!("unknown option {other}").into()),
        }
        index += 1;
    }
    let mut reader = hound::WavReader::open(path)?;
    let spec = reader.spec();
    let channels = usize::from(spec.channels.max(1));
    let interleaved: Vec<f32> = match spec.sample_format {
        hound::SampleFormat::Float => reader.samples::<f32>().collect::<Result<_, _>>()?,
        hound::SampleFormat::Int => {
            let scale = 1.0 / (1u64 << (spec.bits_per_sample - 1)) as f32;
            reader
                .samples::<i32>()
                .map(|sample| sample.map(|value| value as f32 * scale))
                .collect::<Result<_, _>>()?
        }
    };
    let mono: Vec<f32> = interleaved
        .chunks(channels)
        .map(|frame| frame.iter().sum::<f32>() / channels as f32)
        .collect();
    let tracked = track::track_samples(&mono, spec.sample_rate, &config)?;
    let json = serde_json::json!({
        "file": path,
        "sample_rate": tracked.sample_rate,
        "hop_seconds": tracked.hop_seconds,
        "frames": tracked.frames,
    });
    println!("{json}");
    Ok(())
}
