//! Fuzz target: any bytes through the score reader's front door. MusicXML
//! and `.mxl` are what this target is seeded with (see fuzz/README.md), but
//! the format is sniffed from the bytes, so every reader is reachable. The
//! reader must return `Ok` or `Err`, never panic, hang or exhaust memory.
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;

fuzz_target!(|bytes: &[u8]| {
    for unroll_repeats in [true, false] {
        let options = ambit::score::ReadOptions { unroll_repeats };
        let _ = ambit::score::read_score_bytes(Path::new("fuzz.musicxml"), bytes, &options);
    }
});
