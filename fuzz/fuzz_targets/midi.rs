//! cargo-fuzz target for the MIDI reader: any bytes must give a `Piece` or a
//! `ScoreError`, never a panic, hang or runaway allocation.
//! Run: `cargo +nightly fuzz run midi` from the project root.
#![no_main]

use std::path::Path;

use ambit::score::{ReadOptions, read_score_bytes};
use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    // Force the MIDI path whatever the first bytes are, as well as the
    // format sniffing path.
    let _ = ambit::score::midi::read_midi(Path::new("fuzz.mid"), data);
    let _ = read_score_bytes(Path::new("fuzz.mid"), data, &ReadOptions::default());
});
