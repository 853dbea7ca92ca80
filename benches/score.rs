//! Parse + analysis speed for a chorale-sized MusicXML score: four voices,
//! 24 measures of 4/4 with quarters and eighth pairs, a repeated first
//! phrase, a tempo mark, lyrics and dynamics — about the size of a Bach
//! chorale in music21's corpus. The score is generated here so the bench
//! needs no files.
//!
//! Run: `cargo bench --bench score`.

use std::fmt::Write;
use std::hint::black_box;
use std::path::Path;

use ambit::score::{ReadOptions, read_score_bytes};
use ambit::tessitura::{TessituraConfig, analyse_piece};
use criterion::{Criterion, criterion_group, criterion_main};

const STEPS: [&str; 7] = ["C", "D", "E", "F", "G", "A", "B"];

fn note(xml: &mut String, degree: i32, base_octave: i32, duration: u32, lyric: bool) {
    let step = STEPS[degree.rem_euclid(7) as usize];
    let octave = base_octave + degree.div_euclid(7);
    let _ = write!(
        xml,
        "<note><pitch><step>{step}</step><octave>{octave}</octave></pitch><duration>{duration}</duration><voice>1</voice>"
    );
    if lyric {
        xml.push_str("<lyric><syllabic>single</syllabic><text>la</text></lyric>");
    }
    xml.push_str("</note>");
}

/// A chorale-like score: each voice moves by step around its own centre.
fn chorale() -> String {
    let voices = [
        ("Soprano", 4, 2),
        ("Alto", 4, 0),
        ("Tenor", 3, 3),
        ("Bass", 2, 4),
    ];
    let mut xml = String::from(
        r#"<?xml version="1.0" encoding="UTF-8"?><score-partwise version="4.0"><work><work-title>Bench chorale</work-title></work><part-list>"#,
    );
    for (index, (name, _, _)) in voices.iter().enumerate() {
        let _ = write!(
            xml,
            r#"<score-part id="P{index}"><part-name>{name}</part-name></score-part>"#
        );
    }
    xml.push_str("</part-list>");
    for (index, (_, octave, centre)) in voices.iter().enumerate() {
        let _ = write!(xml, r#"<part id="P{index}">"#);
        for measure in 1..=24 {
            let _ = write!(xml, r#"<measure number="{measure}">"#);
            if measure == 1 {
                xml.push_str(
                    "<attributes><divisions>2</divisions><key><fifths>0</fifths><mode>major</mode></key>\
                     <time><beats>4</beats><beat-type>4</beat-type></time></attributes>\
                     <direction><direction-type><dynamics><mf/></dynamics></direction-type><sound tempo=\"72\"/></direction>",
                );
            }
            for beat in 0..4 {
                let degree = centre + ((measure * 3 + beat * 5 + index as i32) % 5) - 2;
                if (measure + beat) % 3 == 0 {
                    note(&mut xml, degree, *octave, 1, true);
                    note(&mut xml, degree + 1, *octave, 1, false);
                } else {
                    note(&mut xml, degree, *octave, 2, true);
                }
            }
            if measure == 8 {
                xml.push_str(
                    r#"<barline location="right"><repeat direction="backward"/></barline>"#,
                );
            }
            xml.push_str("</measure>");
        }
        xml.push_str("</part>");
    }
    xml.push_str("</score-partwise>");
    xml
}

fn bench(criterion: &mut Criterion) {
    let xml = chorale();
    let path = Path::new("bench.musicxml");
    let options = ReadOptions::default();
    let config = TessituraConfig::default();
    criterion.bench_function("musicxml_parse_chorale", |bencher| {
        bencher.iter(|| read_score_bytes(path, black_box(xml.as_bytes()), &options))
    });
    criterion.bench_function("musicxml_parse_and_analyse_chorale", |bencher| {
        bencher.iter(|| {
            let piece = read_score_bytes(path, black_box(xml.as_bytes()), &options)
                .expect("the bench score reads");
            analyse_piece(&piece, &config)
        })
    });
}

criterion_group!(benches, bench);
criterion_main!(benches);
