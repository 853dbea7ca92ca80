//! Choir library: open a library of 2,000 singers × 5 auditions and list the
//! roster (each singer's current range from the newest typed-in range or
//! measured profile). Target: < 200 ms.
//!
//! `cargo bench --bench library`

use std::hint::black_box;

use ambit::library::{AuditionInput, Library};
use ambit::voice::Profile;
use criterion::{Criterion, criterion_group, criterion_main};

#[path = "../tests/it/library_support/mod.rs"]
mod library_support;

const SINGERS: usize = 2_000;
const AUDITIONS: usize = 5;

/// A stored profile whose range and comfort zone move with `shift`
/// semitones (the same hand-built profile as the library tests).
fn profile(shift: f64) -> Profile {
    library_support::profile((45.0 + shift, 69.0 + shift), (48.0 + shift, 65.0 + shift))
}

fn bench_library(c: &mut Criterion) {
    let dir = tempfile::tempdir().unwrap();
    let folder = dir.path().join("lib");
    {
        let mut library = Library::create(&folder).unwrap();
        // Building the fixture only: skip the per-commit fsync.
        library
            .connection()
            .execute_batch("PRAGMA synchronous = OFF")
            .unwrap();
        for singer in 0..SINGERS {
            for audition in 0..AUDITIONS {
                library
                    .add_audition(&AuditionInput {
                        singer: format!("Bench Singer {singer:04}"),
                        held_on: format!("202{audition}-09-01"),
                        recordings: Vec::new(),
                        profile: profile((singer % 12) as f64 + audition as f64 * 0.25),
                    })
                    .unwrap();
            }
        }
    }
    c.bench_function("library open + list 2000 singers x 5 auditions", |b| {
        b.iter(|| {
            let library = Library::open(black_box(&folder)).unwrap();
            let singers = library.singers(false).unwrap();
            assert_eq!(singers.len(), SINGERS);
            black_box(singers)
        })
    });
}

criterion_group! {
    name = benches;
    config = Criterion::default().sample_size(20);
    targets = bench_library
}
criterion_main!(benches);
