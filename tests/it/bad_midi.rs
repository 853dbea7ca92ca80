//! Bad MIDI input: one test per file in `tests/data/bad-scores/midi-*.mid`.
//! Each must give an `Err` whose message names the file and the place (byte
//! offset, track, tick), never a panic, hang or unbounded memory.
//!
//! Byte offsets are worked out from the SMF 1.0 layout (MIDI Manufacturers
//! Association): the header chunk is 14 bytes (`MThd`, length 6, format at
//! byte 8, track count at byte 10, division at byte 12), so the first track
//! chunk starts at byte 14 and its data at byte 22. Most files hold one track
//! whose data begins with a C4 of 480 ticks: `00 90 3C 50` then `83 60 80 3C
//! 40` (9 bytes), so the next event starts at byte 31.

use crate::common;

use std::path::Path;

use ambit::score::{ReadOptions, ScoreError, read_score_bytes};

/// Reads a corpus file, requires an error, and checks that its message names
/// the file and contains every `place` fragment.
fn expect_error(name: &str, places: &[&str]) -> ScoreError {
    common::bad_score_error(name, places)
}

#[test]
fn truncated_header() {
    // 10 of the 14 header bytes: "MThd", length 6, format 1, then nothing.
    let error = expect_error(
        "midi-truncated-header.mid",
        &["byte 10", "10 of its 14 bytes"],
    );
    assert!(matches!(error, ScoreError::Malformed { .. }));
}

#[test]
fn truncated_track() {
    // The track chunk (byte 14) declares 100 bytes; 13 follow.
    expect_error(
        "midi-truncated-track.mid",
        &["byte 14", "track 1", "100 bytes", "13 remain"],
    );
}

#[test]
fn garbage_after_header() {
    // Byte 14 should start "MTrk"; it holds DE AD BE EF.
    expect_error(
        "midi-garbage-after-header.mid",
        &["byte 14", "track 1", "DE AD BE EF"],
    );
}

#[test]
fn format_2() {
    // The format field (byte 8) says 2: independent sequences, not one piece.
    let error = expect_error("midi-format-2.mid", &["byte 8", "format 2"]);
    assert!(matches!(error, ScoreError::Unsupported { .. }));
}

#[test]
fn zero_tempo() {
    // FF 51 03 00 00 00 after the C4, at tick 480, byte 31.
    expect_error(
        "midi-zero-tempo.mid",
        &["track 1", "tick 480", "byte 31", "0 µs per quarter"],
    );
}

#[test]
fn absurd_track_length() {
    // The track chunk declares 0xFFFFFFF0 = 4 294 967 280 bytes; 13 follow.
    expect_error(
        "midi-absurd-track-length.mid",
        &["byte 14", "track 1", "4294967280 bytes"],
    );
}

#[test]
fn absurd_header_length() {
    // The header length field (byte 4) says 0xFFFFFFFF.
    expect_error(
        "midi-absurd-header-length.mid",
        &["byte 4", "4294967295 bytes"],
    );
}

#[test]
fn huge_declared_track_count() {
    // The track count (byte 10) says 65 535; the file holds one track.
    expect_error(
        "midi-huge-track-count.mid",
        &["byte 10", "65535 tracks", "holds 1"],
    );
}

#[test]
fn truncated_event() {
    // The chunk length is honest, but its last event is `00 90 3E`: a
    // note-on without its velocity byte, at byte 31, after tick 480.
    expect_error(
        "midi-truncated-event.mid",
        &["track 1", "byte 31", "after tick 480"],
    );
}

#[test]
fn data_without_status() {
    // The first event is `00 3C 50`: data bytes with no status byte and no
    // running status to borrow (SMF 1.0 "Running Status"), at byte 22.
    expect_error(
        "midi-data-without-status.mid",
        &["track 1", "byte 22", "status byte"],
    );
}

#[test]
fn far_future_note() {
    // PPQ 1 and a note-off delta of 0x0FFFFFFF = 268 435 455 ticks: a bar of
    // 4/4 every 4 ticks would need 67 million measures. Refused before any
    // memory is spent on them.
    let error = expect_error(
        "midi-far-future-note.mid",
        &["200000 measures", "track 1", "tick 268435455"],
    );
    assert!(matches!(error, ScoreError::TooLarge { .. }));
}

#[test]
fn too_many_events_are_refused() {
    // Built in memory rather than kept in the corpus (15 MB): 5 000 001
    // control changes `00 07 64` under running status after one `00 B0 07 64`.
    let count = ambit::score::midi::MAX_MIDI_EVENTS + 1;
    let mut data = vec![0x00, 0xB0, 0x07, 0x64];
    for _ in 1..count {
        data.extend_from_slice(&[0x00, 0x07, 0x64]);
    }
    let mut bytes = b"MThd\0\0\0\x06\0\0\0\x01\x01\xE0MTrk".to_vec();
    bytes.extend((data.len() as u32).to_be_bytes());
    bytes.extend(data);
    let error = read_score_bytes(Path::new("crowded.mid"), &bytes, &ReadOptions::default())
        .expect_err("too many events");
    let message = error.to_string();
    assert!(matches!(error, ScoreError::TooLarge { .. }), "{message}");
    assert!(message.contains("crowded.mid"), "{message}");
    assert!(message.contains("track 1"), "{message}");
    assert!(message.contains("5000000 events"), "{message}");
}

#[test]
fn impossible_smpte_frame_rate() {
    // Division 0x8028: the high byte 0x80 is −128 frames per second, which no
    // SMPTE rate is (SMF 1.0 allows −24, −25, −29, −30). Byte 12.
    expect_error(
        "midi-bad-smpte-rate.mid",
        &["byte 12", "128 frames per second"],
    );
}

#[test]
fn rmid_data_chunk_longer_than_the_file() {
    // RIFF "RMID" wrapper whose "data" chunk (at byte 12) declares
    // 0xFFFFFFFF bytes (RIFF sizes are little-endian).
    expect_error(
        "midi-rmid-truncated-data.mid",
        &["byte 12", "RMID data chunk", "4294967295 bytes"],
    );
}
