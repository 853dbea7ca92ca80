//! Writes one demo singer's five audition tasks as WAV files, named
//! `<task>.wav`, into a folder: the desktop app's end-to-end suite imports
//! them as a new singer's audition.
//!
//! `cargo run --example demo_audition_wavs -- OUT_DIR [VOICE_TYPE]`
//! (VOICE_TYPE defaults to `tenor`; the first demo singer of that type whose
//! glide breaks audibly is used).

use std::path::PathBuf;

use ambit::demo::{DEMO_CHOIR, synthesise_task};
use ambit::synth::write_wav;
use ambit::voice::Task;

fn main() -> anyhow::Result<()> {
    let mut arguments = std::env::args().skip(1);
    let folder = PathBuf::from(
        arguments
            .next()
            .ok_or_else(|| anyhow::anyhow!("usage: demo_audition_wavs OUT_DIR [VOICE_TYPE]"))?,
    );
    let voice_type = arguments.next().unwrap_or_else(|| "tenor".into());
    let singer = DEMO_CHOIR
        .iter()
        .find(|singer| singer.voice_type.label() == voice_type && singer.glide_breaks)
        .or_else(|| {
            DEMO_CHOIR
                .iter()
                .find(|singer| singer.voice_type.label() == voice_type)
        })
        .ok_or_else(|| anyhow::anyhow!("no demo singer of type {voice_type}"))?;
    std::fs::create_dir_all(&folder)?;
    for (index, task) in Task::ALL.into_iter().enumerate() {
        let synthesis = synthesise_task(singer, task, 4242 + index as u64)?;
        let path = folder.join(format!("{}.wav", task.label()));
        write_wav(&path, &synthesis)?;
        println!("{}", path.display());
    }
    Ok(())
}
