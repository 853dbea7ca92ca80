//! The first-start library: the engine's demo seeding (the invented demo
//! choir's synthesised auditions, profiled, and the sample scores as one
//! programme), so a new user sees real content at once.

use ambit::demo::seed::seed_library;
use ambit::library::Library;

/// Seeds an empty library with the demo choir and the sample scores;
/// `progress(done, total, label)` after each stored item.
pub fn seed_demo(
    library: &mut Library,
    progress: &mut dyn FnMut(usize, usize, &str),
) -> Result<(), String> {
    // A scratch folder for the generated WAV and score files on their way
    // in; seed_library removes it.
    let staging = library.folder().join("demo-staging");
    seed_library(library, &staging, progress)
        .map(|_| ())
        .map_err(|error| error.to_string())
}
