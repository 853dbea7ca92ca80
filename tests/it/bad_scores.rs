//! Hostile and broken MusicXML: every file in `tests/data/bad-scores/`
//! (`*.xml`, `*.musicxml`, `*.mxl`) and a few generated ones must give an
//! `Err` whose message names the file and the place (byte offset, line and
//! column, measure, or archive entry) — never a panic, a hang or unbounded
//! memory. The MIDI side of the corpus is checked in tests/it/bad_midi.rs.

use crate::common;

use std::path::{Path, PathBuf};

use ambit::score::{MAX_SCORE_BYTES, ReadOptions, ScoreError, read_score, read_score_bytes};

fn corpus(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/bad-scores")
        .join(name)
}

/// Reads a corpus file and returns the error, checking that its message
/// names the file and contains `place`.
fn refused(name: &str, place: &str) -> ScoreError {
    common::bad_score_error(name, &[place])
}

#[test]
fn truncated_xml_is_reported_at_its_end() {
    // The file stops inside measure 2 on line 11.
    let error = refused("truncated.musicxml", "line 11");
    assert!(error.to_string().contains("truncated"), "{error}");
}

#[test]
fn garbage_after_a_less_than_sign_is_not_text() {
    // Byte 0 is '<'; the random bytes after it are not UTF-8 from byte 1.
    refused("garbage.xml", "byte 1");
}

#[test]
fn latin1_without_a_declaration_is_refused_at_the_first_bad_byte() {
    refused("not-utf8.musicxml", "byte ");
}

#[test]
fn zero_tempo_names_its_measure() {
    let error = refused("zero-tempo.musicxml", "measure 2");
    assert!(error.to_string().contains("tempo"), "{error}");
}

#[test]
fn missing_divisions_names_the_first_measure() {
    let error = refused("missing-divisions.musicxml", "measure 1");
    assert!(error.to_string().contains("divisions"), "{error}");
}

#[test]
fn zero_divisions_names_its_measure() {
    let error = refused("zero-divisions.musicxml", "measure 1");
    assert!(error.to_string().contains("divisions"), "{error}");
}

#[test]
fn an_unknown_root_element_is_named() {
    let error = refused("unknown-root.xml", "line 2, column 1");
    assert!(error.to_string().contains("<html>"), "{error}");
}

#[test]
fn deep_nesting_is_refused_before_parsing() {
    refused("deep-nesting.xml", "byte ");
}

#[test]
fn billion_laughs_entities_are_refused() {
    // The internal subset's '[' is byte 47 (after the 22-byte XML
    // declaration line and "<!DOCTYPE score-partwise ").
    let error = refused("billion-laughs.xml", "byte 47");
    assert!(error.to_string().contains("entities"), "{error}");
}

#[test]
fn external_entities_are_refused() {
    refused("external-entity.xml", "byte 47");
}

#[test]
fn an_impossible_note_letter_names_its_measure() {
    refused("bad-pitch.musicxml", "measure 1");
}

#[test]
fn a_note_without_duration_names_its_measure() {
    refused("no-duration.musicxml", "measure 2");
}

#[test]
fn a_truncated_archive_is_reported_at_its_end() {
    let length = std::fs::metadata(corpus("truncated.mxl"))
        .expect("corpus file")
        .len();
    refused("truncated.mxl", &format!("byte {length}"));
}

#[test]
fn a_container_naming_a_missing_root_file_is_reported() {
    refused(
        "missing-rootfile.mxl",
        "archive entry META-INF/container.xml",
    );
}

#[test]
fn a_broken_score_inside_an_archive_names_the_entry_and_line() {
    let error = refused("truncated-inside.mxl", "archive entry score.musicxml");
    assert!(error.to_string().contains("line 6"), "{error}");
}

#[test]
fn a_zip_bomb_stops_at_the_size_cap() {
    // 100 MiB of '<' deflates to about 100 KB; the reader must stop at its
    // 64 MiB budget instead of inflating it all.
    let bomb = vec![b'<'; 100 * 1024 * 1024];
    let archive = common::zip_archive(&[("bomb.musicxml", &bomb)]);
    let error = read_score_bytes(Path::new("bomb.mxl"), &archive, &ReadOptions::default())
        .expect_err("a zip bomb is refused");
    let message = error.to_string();
    assert!(matches!(error, ScoreError::TooLarge { .. }), "{message}");
    assert!(
        message.contains("bomb.mxl") && message.contains("bomb.musicxml"),
        "{message}"
    );
}

#[test]
fn an_entry_inflating_far_beyond_xml_ratios_is_refused() {
    // 8 MiB of one byte: under the size cap, but a ratio near deflate's
    // ceiling (about 1000:1) that no real MusicXML reaches.
    let bomb = vec![b' '; 8 * 1024 * 1024];
    let archive = common::zip_archive(&[("score.xml", &bomb)]);
    let error = read_score_bytes(Path::new("ratio.mxl"), &archive, &ReadOptions::default())
        .expect_err("a high-ratio entry is refused");
    let message = error.to_string();
    assert!(
        message.contains("ratio.mxl") && message.contains("ratio"),
        "{message}"
    );
    assert!(message.contains("score.xml"), "{message}");
}

#[test]
fn an_archive_with_thousands_of_entries_is_refused() {
    let names: Vec<String> = (0..1500).map(|index| format!("page{index}.png")).collect();
    let entries: Vec<(&str, &[u8])> = names.iter().map(|name| (name.as_str(), &b""[..])).collect();
    let archive = common::zip_archive(&entries);
    let error = read_score_bytes(Path::new("crowded.mxl"), &archive, &ReadOptions::default())
        .expect_err("too many entries is refused");
    let message = error.to_string();
    assert!(
        message.contains("crowded.mxl") && message.contains("1500 entries"),
        "{message}"
    );
}

#[test]
fn an_over_large_file_is_refused_before_it_is_read() {
    // A sparse file one byte over the cap: refused from its length alone.
    let directory = tempfile::tempdir().expect("temp dir");
    let path = directory.path().join("huge.musicxml");
    let file = std::fs::File::create(&path).expect("create");
    file.set_len(MAX_SCORE_BYTES + 1).expect("set_len");
    let error = read_score(&path, &ReadOptions::default()).expect_err("too large is refused");
    let message = error.to_string();
    assert!(matches!(error, ScoreError::TooLarge { .. }), "{message}");
    assert!(
        message.contains("huge.musicxml") && message.contains(&MAX_SCORE_BYTES.to_string()),
        "{message}"
    );
}

#[test]
fn repeats_that_unroll_without_end_are_capped() {
    // 4000 measures, each repeated 64 times (the cap on `times`), would
    // unroll to 256 000 measures: more than any real score; refused.
    let mut xml = String::from(
        r#"<score-partwise><part-list><score-part id="P1"><part-name>Alto</part-name></score-part></part-list><part id="P1">"#,
    );
    for number in 1..=4000 {
        xml.push_str(&format!(
            r#"<measure number="{number}"><attributes><divisions>1</divisions></attributes><note><rest/><duration>1</duration></note><barline><repeat direction="forward"/></barline><barline location="right"><repeat direction="backward" times="99"/></barline></measure>"#
        ));
    }
    xml.push_str("</part></score-partwise>");
    let error = read_score_bytes(
        Path::new("loops.musicxml"),
        xml.as_bytes(),
        &ReadOptions::default(),
    )
    .expect_err("an unbounded unroll is refused");
    let message = error.to_string();
    assert!(
        message.contains("loops.musicxml") && message.contains("measures"),
        "{message}"
    );
}

#[test]
fn an_archive_entry_with_unsupported_compression_is_named_as_such() {
    // A deflated archive whose method fields (local header byte 8, central
    // directory header byte 10; PKWARE APPNOTE 4.3.7 and 4.3.12) are
    // rewritten to 12, bzip2: the entry is refused as unsupported
    // compression, not as damaged or truncated.
    let mut archive = common::zip_archive(&[("score.musicxml", b"<score-partwise/>")]);
    let local = archive
        .windows(4)
        .position(|window| window == b"PK\x03\x04")
        .expect("a local header");
    let central = archive
        .windows(4)
        .position(|window| window == b"PK\x01\x02")
        .expect("a central directory header");
    archive[local + 8] = 12;
    archive[central + 10] = 12;
    let error = read_score_bytes(Path::new("bzip2.mxl"), &archive, &ReadOptions::default())
        .expect_err("bzip2 is not read");
    let message = error.to_string();
    assert!(matches!(error, ScoreError::Unsupported { .. }), "{message}");
    assert!(message.contains("bzip2.mxl"), "{message}");
    assert!(message.contains("compression"), "{message}");
    assert!(!message.contains("damaged"), "{message}");
}
