//! Writes the pitch-tracker evaluation set: one WAV and one ground-truth CSV
//! (`time_seconds,f0_hz`, 0 = unvoiced) per voice type × condition, plus
//! `manifest.csv` (file, condition, voice type, sample rate, seconds).
//!
//! ```sh
//! cargo run --release --example make_eval_set -- OUT_DIR [--small]
//! ```
//! Then `scripts/evaluate_tracker.py` scores `ambit track` and librosa.pyin
//! on it with mir_eval.

mod conditions;

use std::path::PathBuf;

use anyhow::Context;

fn main() -> anyhow::Result<()> {
    let mut out_dir: Option<PathBuf> = None;
    let mut small = false;
    for argument in std::env::args().skip(1) {
        match argument.as_str() {
            "--small" => small = true,
            other if other.starts_with('-') => anyhow::bail!("unknown option {other}"),
            other => out_dir = Some(PathBuf::from(other)),
        }
    }
    let out_dir = out_dir.context("usage: make_eval_set OUT_DIR [--small]")?;
    std::fs::create_dir_all(&out_dir)
        .with_context(|| format!("cannot create {}", out_dir.display()))?;
    let mut manifest =
        String::from("name,wav,truth,condition,voice_type,clean_singing,sample_rate,seconds\n");
    for case in conditions::cases(small) {
        let synthesis = ambit::synth::synthesize(&case.voice, &case.segments, &case.config)
            .with_context(|| format!("synthesising {}", case.name))?;
        let wav = format!("{}.wav", case.name);
        let truth = format!("{}.f0.csv", case.name);
        ambit::synth::write_wav(&out_dir.join(&wav), &synthesis)?;
        ambit::synth::write_truth_csv(&out_dir.join(&truth), &synthesis)?;
        let seconds = synthesis.samples.len() as f64 / f64::from(synthesis.sample_rate);
        manifest.push_str(&format!(
            "{},{wav},{truth},{},{},{},{},{seconds:.3}\n",
            case.name,
            case.condition.label(),
            case.voice_type.name,
            case.condition.is_clean_singing(),
            synthesis.sample_rate
        ));
        eprintln!("{}: {seconds:.1} s", case.name);
    }
    let manifest_path = out_dir.join("manifest.csv");
    std::fs::write(&manifest_path, manifest)
        .with_context(|| format!("cannot write {}", manifest_path.display()))?;
    Ok(())
}
