//! cargo-fuzz target for audio decoding: any bytes, written to a file (the
//! decoders read files), through `ambit::audio::decode_file`, which routes
//! RIFF/WAVE to the WAV scan and hound and anything else to symphonia's
//! probe (FLAC, OGG/Vorbis, MP3, m4a/AAC). It must return `Ok` or `Err`,
//! never panic, hang or exhaust memory. The duration limit is one minute, so
//! a tiny file whose header promises hours is refused, not decoded.
//! Run: `cargo +nightly fuzz run audio` from fuzz/.
#![no_main]

use ambit::audio::{DecodeOptions, decode_file};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let path = std::env::temp_dir().join(format!("ambit-fuzz-audio-{}", std::process::id()));
    if std::fs::write(&path, data).is_err() {
        return;
    }
    let options = DecodeOptions {
        max_duration_seconds: Some(60.0),
        ..DecodeOptions::default()
    };
    let _ = decode_file(&path, &options);
});
