//! Profiles every demo singer from synthesised auditions and compares with
//! the singer's true figures. `cargo run --release --example demo_profiles`.
use ambit::demo::{DEMO_CHOIR, break_midi, choir_auditions};
use ambit::voice::{PassaggioSource, ProfileConfig, profile};

fn main() {
    let mut range_ok = 0;
    let mut type_ok = 0;
    let mut pass_ok = 0;
    let mut pass_n = 0;
    for (singer, auditions) in choir_auditions() {
        let recordings = match auditions {
            Ok(r) => r,
            Err(e) => {
                println!("{}: {e}", singer.name);
                continue;
            }
        };
        let p = match profile(&recordings, &ProfileConfig::default()) {
            Ok(p) => p,
            Err(e) => {
                println!("{}: {e}", singer.name);
                continue;
            }
        };
        let r = (p.range.low_midi - singer.range_low_midi).abs() <= 1.0
            && (p.range.high_midi - singer.range_high_midi).abs() <= 1.0;
        range_ok += r as usize;
        let t = p.voice_type.label == singer.voice_type.label();
        type_ok += t as usize;
        let measured: Vec<f64> = p
            .passaggi
            .iter()
            .filter(|x| x.source == PassaggioSource::Measured)
            .map(|x| x.midi)
            .collect();
        if singer.glide_breaks {
            pass_n += 1;
            if measured
                .iter()
                .any(|m| (m - break_midi(singer)).abs() <= 1.0)
            {
                pass_ok += 1;
            }
        }
        println!(
            "{:<20} {:<14} → {:<14} {:.0}% range {:.1}–{:.1} (true {}–{}) comfort {:.1}–{:.1} (true {}–{}) measured {:?} (true {}) sect {}",
            singer.name,
            singer.voice_type.label(),
            p.voice_type.label,
            p.voice_type.confidence * 100.0,
            p.range.low_midi,
            p.range.high_midi,
            singer.range_low_midi,
            singer.range_high_midi,
            p.comfort.span.low_midi,
            p.comfort.span.high_midi,
            singer.comfort_low_midi,
            singer.comfort_high_midi,
            measured,
            break_midi(singer),
            p.section
        );
    }
    println!(
        "range ok {range_ok}/{}  type ok {type_ok}/{}  passaggio ok {pass_ok}/{pass_n}",
        DEMO_CHOIR.len(),
        DEMO_CHOIR.len()
    );
}
