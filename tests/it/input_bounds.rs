//! Hostile input files against the `ambit` binary, each under a stated
//! ceiling on the child's peak resident memory (read from the kernel with
//! `wait4` when it exits; a benchmark-style bound, never a timing). Every
//! measured test runs alone in a child of the test binary: a spawned child's
//! `ru_maxrss` starts from its parent's high-water mark (the kernel records
//! the old address space's peak at exec), and the parent here is a test
//! binary whose other tests may have held hundreds of MiB. Every
//! file is generated here, sparse where it is large; none is committed.
//!
//! The cases are those of issue 17, where the same files took gigabytes:
//! entity declarations hidden in a DOCTYPE's internal subset (1.9–2 GB for
//! 1 MB), `/dev/zero` as a score (17 GB), a MIDI file with a million tracks
//! (3.7 GB), a 12-hour WAV and a ten-hour FLAC of under a megabyte (3.3–3.6
//! GB in `track` or `profile`).
#![cfg(target_os = "linux")]

use crate::common;

use std::io::Write;
use std::path::Path;

use common::run_ambit_measured;

const MIB: u64 = 1024;

/// Asserts a refused run: non-zero exit, every fragment in stderr, peak
/// resident memory under `ceiling_mib`. Prints the figure for the record.
fn assert_refused(arguments: &[&str], fragments: &[&str], ceiling_mib: u64) {
    let run = run_ambit_measured(arguments);
    eprintln!(
        "ambit {}: peak RSS {:.1} MiB (ceiling {ceiling_mib} MiB)",
        arguments.join(" "),
        run.peak_rss_kib as f64 / 1024.0
    );
    assert!(
        !run.success,
        "ambit {arguments:?} succeeded: {}",
        run.stdout
    );
    for fragment in fragments {
        assert!(
            run.stderr.contains(fragment),
            "{fragment:?} not in the message: {}",
            run.stderr
        );
    }
    assert!(
        !run.stderr.contains("panicked"),
        "ambit {arguments:?} panicked: {}",
        run.stderr
    );
    assert!(
        run.peak_rss_kib < ceiling_mib * MIB,
        "ambit {arguments:?}: peak resident memory {} KiB, over the {ceiling_mib} MiB ceiling",
        run.peak_rss_kib
    );
}

fn text(path: &Path) -> &str {
    path.to_str().expect("a UTF-8 temporary path")
}

#[test]
fn entities_hidden_between_processing_instructions_are_refused_in_little_memory() {
    if !common::in_own_process(
        "input_bounds::entities_hidden_between_processing_instructions_are_refused_in_little_memory",
    ) {
        return;
    }
    // A billion-laughs chain (ten levels of ten references: 10^10 bytes
    // when expanded) between two processing instructions whose quotes pair
    // up, padded to 1 MB with a comment.
    let mut document = String::from("<?xml version=\"1.0\"?>\n<!DOCTYPE score-partwise [<?a '?>");
    document.push_str("<!ENTITY e0 \"lol\">");
    for level in 1..=10 {
        document.push_str(&format!(
            "<!ENTITY e{level} \"{}\">",
            format!("&e{};", level - 1).repeat(10)
        ));
    }
    document.push_str("<?b '?>]>\n<!-- ");
    document.push_str(&"pad ".repeat(250_000));
    document.push_str(
        "-->\n<score-partwise><work><work-title>&e10;</work-title></work></score-partwise>\n",
    );
    let directory = tempfile::tempdir().expect("temp dir");
    let path = directory.path().join("hidden-entities.musicxml");
    std::fs::write(&path, &document).expect("write");
    // The subset's '[' is byte 47: the 22-byte XML declaration line, then
    // "<!DOCTYPE score-partwise ".
    assert_refused(
        &["parts", text(&path)],
        &["hidden-entities.musicxml", "byte 47", "internal subset"],
        64,
    );
}

#[test]
fn a_device_that_never_ends_is_refused_as_a_score_at_the_byte_budget() {
    if !common::in_own_process(
        "input_bounds::a_device_that_never_ends_is_refused_as_a_score_at_the_byte_budget",
    ) {
        return;
    }
    // /dev/zero reports a length of 0 and never ends; the score budget is
    // 64 MiB (ambit::score::MAX_SCORE_BYTES), so the reader holds at most
    // that much before refusing.
    assert_eq!(ambit::score::MAX_SCORE_BYTES, 64 << 20);
    assert_refused(
        &["parts", "/dev/zero"],
        &["/dev/zero", "too large", "67108864 bytes"],
        160,
    );
}

#[test]
fn a_device_that_never_ends_is_refused_as_a_roster() {
    let error = ambit::roster::read_roster(Path::new("/dev/zero")).expect_err("endless");
    let message = error.to_string();
    assert!(message.starts_with("/dev/zero: too large"), "{message}");
}

#[test]
fn a_million_midi_tracks_are_refused_at_the_track_cap() {
    if !common::in_own_process("input_bounds::a_million_midi_tracks_are_refused_at_the_track_cap") {
        return;
    }
    // The header declares 65 535 tracks (the most it can); the file holds a
    // million empty ones (12 MB): each chunk is MTrk, length 4, End of Track.
    let mut bytes = b"MThd\0\0\0\x06\0\x01\xff\xff\x01\xe0".to_vec();
    for _ in 0..1_000_000 {
        bytes.extend_from_slice(b"MTrk\0\0\0\x04\x00\xff\x2f\x00");
    }
    let directory = tempfile::tempdir().expect("temp dir");
    let path = directory.path().join("million-tracks.mid");
    std::fs::write(&path, &bytes).expect("write");
    let limit = ambit::score::midi::MAX_MIDI_TRACKS;
    assert_refused(
        &["parts", text(&path)],
        &[
            "million-tracks.mid",
            &format!("more than {limit} tracks"),
            &format!("track {}", limit + 1),
        ],
        96,
    );
}

/// A 16-bit mono 44.1 kHz WAV header promising `seconds` of audio, on a
/// sparse file of that size (a hole reads as silence; no disk is used).
fn sparse_wav(path: &Path, seconds: u64) {
    let data_bytes = u32::try_from(seconds * 44_100 * 2).expect("under 4 GiB");
    let mut header = Vec::new();
    header.extend_from_slice(b"RIFF");
    header.extend_from_slice(&(36 + data_bytes).to_le_bytes());
    header.extend_from_slice(b"WAVEfmt ");
    header.extend_from_slice(&16u32.to_le_bytes());
    header.extend_from_slice(&1u16.to_le_bytes()); // PCM
    header.extend_from_slice(&1u16.to_le_bytes()); // mono
    header.extend_from_slice(&44_100u32.to_le_bytes());
    header.extend_from_slice(&(44_100u32 * 2).to_le_bytes());
    header.extend_from_slice(&2u16.to_le_bytes());
    header.extend_from_slice(&16u16.to_le_bytes());
    header.extend_from_slice(b"data");
    header.extend_from_slice(&data_bytes.to_le_bytes());
    let mut file = std::fs::File::create(path).expect("create");
    file.write_all(&header).expect("header");
    file.set_len(44 + u64::from(data_bytes))
        .expect("sparse length");
}

#[test]
fn a_twelve_hour_wav_is_refused_from_its_header_by_track_and_profile() {
    if !common::in_own_process(
        "input_bounds::a_twelve_hour_wav_is_refused_from_its_header_by_track_and_profile",
    ) {
        return;
    }
    let directory = tempfile::tempdir().expect("temp dir");
    let path = directory.path().join("twelve-hours.wav");
    sparse_wav(&path, 12 * 3600);
    // track: 4 h (ambit::track::MAX_TRACK_FILE_SECONDS).
    assert_eq!(ambit::track::MAX_TRACK_FILE_SECONDS, 4.0 * 3600.0);
    assert_refused(
        &["track", text(&path)],
        &["twelve-hours.wav", "longer than 4 h", "12 h 00 min"],
        64,
    );
    // profile: 30 min per task (ambit::voice::MAX_TASK_SECONDS).
    assert_eq!(ambit::voice::MAX_TASK_SECONDS, 30.0 * 60.0);
    assert_refused(
        &["profile", "--song", text(&path)],
        &["twelve-hours.wav", "song", "longer than 30 min"],
        64,
    );
}

/// CRC-8 of a FLAC frame header: polynomial x^8 + x^2 + x + 1, initial 0
/// (FLAC format specification, "FRAME_HEADER").
fn crc8(bytes: &[u8]) -> u8 {
    let mut crc = 0u8;
    for &byte in bytes {
        crc ^= byte;
        for _ in 0..8 {
            crc = if crc & 0x80 != 0 {
                (crc << 1) ^ 0x07
            } else {
                crc << 1
            };
        }
    }
    crc
}

/// CRC-16 of a FLAC frame: polynomial x^16 + x^15 + x^2 + 1, initial 0
/// (FLAC format specification, "FRAME_FOOTER").
fn crc16(bytes: &[u8]) -> u16 {
    let mut crc = 0u16;
    for &byte in bytes {
        crc ^= u16::from(byte) << 8;
        for _ in 0..8 {
            crc = if crc & 0x8000 != 0 {
                (crc << 1) ^ 0x8005
            } else {
                crc << 1
            };
        }
    }
    crc
}

/// The frame number in FLAC's UTF-8-like coding (up to 2^21 − 1 here).
fn coded_number(number: u32) -> Vec<u8> {
    match number {
        0..=0x7F => vec![number as u8],
        0x80..=0x7FF => vec![0xC0 | (number >> 6) as u8, 0x80 | (number & 0x3F) as u8],
        0x800..=0xFFFF => vec![
            0xE0 | (number >> 12) as u8,
            0x80 | ((number >> 6) & 0x3F) as u8,
            0x80 | (number & 0x3F) as u8,
        ],
        _ => vec![
            0xF0 | (number >> 18) as u8,
            0x80 | ((number >> 12) & 0x3F) as u8,
            0x80 | ((number >> 6) & 0x3F) as u8,
            0x80 | (number & 0x3F) as u8,
        ],
    }
}

/// A 16-bit mono 44.1 kHz FLAC of `seconds` of one constant value, with
/// the total sample count left unknown (0) in STREAMINFO, so only decoding
/// finds its length. CONSTANT subframes of 32 768 samples make ten hours
/// about 0.6 MB (FLAC format specification: STREAMINFO, FRAME, SUBFRAME_CONSTANT).
fn constant_flac(seconds: u64) -> Vec<u8> {
    const BLOCK: u32 = 32_768;
    let mut bytes = b"fLaC".to_vec();
    bytes.extend_from_slice(&[0x80, 0, 0, 34]); // last metadata block, STREAMINFO, 34 bytes
    bytes.extend_from_slice(&(BLOCK as u16).to_be_bytes()); // min block size
    bytes.extend_from_slice(&(BLOCK as u16).to_be_bytes()); // max block size
    bytes.extend_from_slice(&[0; 6]); // min and max frame size unknown
    // 20 bits rate, 3 bits channels − 1, 5 bits bits-per-sample − 1, 36 bits total (0: unknown).
    let packed: u64 = (44_100u64 << 44) | (15u64 << 36);
    bytes.extend_from_slice(&packed.to_be_bytes());
    bytes.extend_from_slice(&[0; 16]); // MD5 unknown
    let frames = (seconds * 44_100).div_ceil(u64::from(BLOCK)) as u32;
    for number in 0..frames {
        let start = bytes.len();
        // Sync and fixed blocking; block size from a 16-bit field at the end
        // of the header (0b0111), 44.1 kHz (0b1001); mono, 16 bits.
        bytes.extend_from_slice(&[0xFF, 0xF8, 0x79, 0x08]);
        bytes.extend_from_slice(&coded_number(number));
        bytes.extend_from_slice(&((BLOCK - 1) as u16).to_be_bytes());
        let header_crc = crc8(&bytes[start..]);
        bytes.push(header_crc);
        bytes.push(0x00); // SUBFRAME_CONSTANT, no wasted bits
        bytes.extend_from_slice(&1000i16.to_be_bytes());
        let frame_crc = crc16(&bytes[start..]);
        bytes.extend_from_slice(&frame_crc.to_be_bytes());
    }
    bytes
}

#[test]
fn a_ten_hour_flac_of_unknown_length_is_refused_as_decoding_passes_the_task_limit() {
    if !common::in_own_process(
        "input_bounds::a_ten_hour_flac_of_unknown_length_is_refused_as_decoding_passes_the_task_limit",
    ) {
        return;
    }
    let directory = tempfile::tempdir().expect("temp dir");
    let path = directory.path().join("ten-hours.flac");
    let flac = constant_flac(10 * 3600);
    assert!(flac.len() < 1 << 20, "{} bytes", flac.len());
    std::fs::write(&path, &flac).expect("write");
    // 30 minutes at 22 050 Hz is 159 MB of f32 samples, held at most once
    // with the growth of its buffer: the ceiling is 512 MiB, against the
    // 3.3–3.6 GB the whole file took.
    assert_refused(
        &["profile", "--song", text(&path)],
        &[
            "ten-hours.flac",
            "longer than 30 min",
            "found while decoding",
        ],
        512,
    );
}
