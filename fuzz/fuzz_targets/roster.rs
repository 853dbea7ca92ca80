//! cargo-fuzz target for the roster reader: any bytes (CSV or JSON, chosen
//! by the first character) must give a `Roster` or a `RosterError`, never a
//! panic, hang or runaway allocation.
//! Run: `cargo +nightly fuzz run roster` from fuzz/.
#![no_main]

use std::path::Path;

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let _ = ambit::roster::parse_roster(Path::new("fuzz.csv"), data);
});
