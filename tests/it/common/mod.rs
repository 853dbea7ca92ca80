//! Helpers shared by the integration tests.
//!
//! Reference comparisons run Python scripts from `tests/reference/` with the
//! interpreter of the reference venv that `scripts/test-all.sh` builds. Under
//! that script or CI a missing reference is a failure; under a plain
//! `cargo test` the comparison is skipped with a printed notice.
#![allow(dead_code)]

use std::path::{Path, PathBuf};
use std::process::Command;

/// The project root (where Cargo.toml is).
pub fn project_root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The `ambit` binary built for this test run.
pub fn ambit_binary() -> PathBuf {
    PathBuf::from(env!("CARGO_BIN_EXE_ambit"))
}

fn references_required() -> bool {
    let set = |name: &str| {
        std::env::var(name).is_ok_and(|value| !value.is_empty() && value != "0" && value != "false")
    };
    set("AMBIT_REQUIRE_REFERENCES") || set("CI")
}

/// The reference Python interpreter, or `None` (with a notice) when it is
/// absent and the references are not required. Panics when they are required.
pub fn reference_python(test: &str) -> Option<PathBuf> {
    match std::env::var_os("AMBIT_PYTHON") {
        Some(python) if Path::new(&python).exists() => Some(PathBuf::from(python)),
        Some(python) => panic!(
            "{test}: AMBIT_PYTHON points at {}, which does not exist",
            Path::new(&python).display()
        ),
        None if references_required() => panic!(
            "{test}: the Python reference libraries are required here but AMBIT_PYTHON is not set; \
             run scripts/test-all.sh"
        ),
        None => {
            eprintln!(
                "NOTICE: {test} skipped: no reference Python (run scripts/test-all.sh, \
                 or set AMBIT_PYTHON to a venv with tests/reference/requirements.txt)"
            );
            None
        }
    }
}

/// Runs `tests/reference/<script>` with `arguments` and parses its stdout as JSON.
/// Panics with the script's stderr when it fails.
pub fn run_reference(python: &Path, script: &str, arguments: &[&str]) -> serde_json::Value {
    let script_path = project_root().join("tests/reference").join(script);
    let output = Command::new(python)
        .arg(&script_path)
        .args(arguments)
        .output()
        .unwrap_or_else(|error| panic!("cannot run {}: {error}", script_path.display()));
    assert!(
        output.status.success(),
        "{} failed ({}):\n{}",
        script_path.display(),
        output.status,
        String::from_utf8_lossy(&output.stderr)
    );
    serde_json::from_slice(&output.stdout).unwrap_or_else(|error| {
        panic!(
            "{} printed something that is not JSON ({error}):\n{}",
            script_path.display(),
            String::from_utf8_lossy(&output.stdout)
        )
    })
}

/// Runs the `ambit` binary and returns (exit success, stdout, stderr).
pub fn run_ambit(arguments: &[&str]) -> (bool, String, String) {
    let output = Command::new(ambit_binary())
        .args(arguments)
        .output()
        .expect("the ambit binary runs");
    (
        output.status.success(),
        String::from_utf8_lossy(&output.stdout).into_owned(),
        String::from_utf8_lossy(&output.stderr).into_owned(),
    )
}

/// A deflated zip archive of (name, bytes) entries, built in memory: for
/// `.mxl` examples and zip bombs that are not worth committing.
pub fn zip_archive(entries: &[(&str, &[u8])]) -> Vec<u8> {
    use std::io::Write;
    let mut writer = zip::ZipWriter::new(std::io::Cursor::new(Vec::new()));
    let options = zip::write::SimpleFileOptions::default()
        .compression_method(zip::CompressionMethod::Deflated)
        .large_file(true);
    for (name, bytes) in entries {
        writer.start_file(*name, options).expect("zip entry");
        writer.write_all(bytes).expect("zip write");
    }
    writer.finish().expect("zip finish").into_inner()
}

/// Reads a file of the bad-score corpus (`tests/data/bad-scores/`), requires
/// an error, and checks that its message names the file and contains every
/// `place` fragment (a byte offset, a track, a measure…).
pub fn bad_score_error(name: &str, places: &[&str]) -> ambit::score::ScoreError {
    let path = project_root().join("tests/data/bad-scores").join(name);
    let error = match ambit::score::read_score(&path, &ambit::score::ReadOptions::default()) {
        Ok(piece) => panic!(
            "{name}: expected an error, read {} parts",
            piece.parts.len()
        ),
        Err(error) => error,
    };
    let message = error.to_string();
    assert!(
        message.contains(name),
        "{name}: message does not name the file: {message}"
    );
    for place in places {
        assert!(
            message.contains(place),
            "{name}: expected {place:?} in: {message}"
        );
    }
    error
}

/// Whether this process should run the body of `test` (its full path in
/// the `it` binary, e.g. `bad_audio::two_hour_file_streams_in_bounded_memory`).
/// In the shared test process it runs the test again, alone, in a child
/// process of this binary, asserts that it passed, and returns `false`; in
/// that child it returns `true`. For checks of this process's own resource
/// use (resident memory), which other tests running at the same time in one
/// binary would disturb.
pub fn in_own_process(test: &str) -> bool {
    const VARIABLE: &str = "AMBIT_TEST_ALONE";
    if std::env::var(VARIABLE).as_deref() == Ok(test) {
        return true;
    }
    let status = Command::new(std::env::current_exe().expect("the test binary"))
        .args([test, "--exact", "--nocapture", "--test-threads=1"])
        .env(VARIABLE, test)
        .status()
        .expect("the test binary runs");
    assert!(status.success(), "{test} failed in its own process");
    false
}

/// What one measured run of the `ambit` binary gave.
pub struct MeasuredRun {
    pub success: bool,
    pub stdout: String,
    pub stderr: String,
    /// The child's peak resident memory (`ru_maxrss` from `wait4`), KiB.
    pub peak_rss_kib: u64,
}

/// Runs the `ambit` binary and reads its own peak resident memory from the
/// kernel when it exits (`wait4`'s `rusage` covers that child alone, unlike
/// `getrusage(RUSAGE_CHILDREN)`, which would mix in the children of tests
/// running alongside). A benchmark-style bound, not a timing. The figure
/// starts from this process's own high-water mark (the kernel records the
/// old address space's peak at exec), so callers run alone in a fresh test
/// process (`in_own_process`) where that mark is a few MiB.
#[cfg(target_os = "linux")]
pub fn run_ambit_measured(arguments: &[&str]) -> MeasuredRun {
    use std::io::Read;
    use std::process::Stdio;
    let mut child = Command::new(ambit_binary())
        .args(arguments)
        .stdin(Stdio::null())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the ambit binary runs");
    let drain = |mut pipe: Box<dyn Read + Send>| {
        std::thread::spawn(move || {
            let mut text = Vec::new();
            let _ = pipe.read_to_end(&mut text);
            String::from_utf8_lossy(&text).into_owned()
        })
    };
    let stdout = drain(Box::new(child.stdout.take().expect("stdout")));
    let stderr = drain(Box::new(child.stderr.take().expect("stderr")));
    let pid = child.id() as libc::pid_t;
    let mut status = 0;
    // SAFETY: rusage is plain data, zeroed is a valid value; wait4 fills it.
    let mut usage: libc::rusage = unsafe { std::mem::zeroed() };
    // SAFETY: `pid` is our own child, not yet waited for (std's Child is
    // never waited on afterwards; dropping it does not wait).
    let waited = unsafe { libc::wait4(pid, &mut status, 0, &mut usage) };
    assert_eq!(waited, pid, "wait4 on the ambit child");
    drop(child);
    MeasuredRun {
        success: libc::WIFEXITED(status) && libc::WEXITSTATUS(status) == 0,
        stdout: stdout.join().expect("stdout reader"),
        stderr: stderr.join().expect("stderr reader"),
        // Linux reports ru_maxrss in KiB.
        peak_rss_kib: u64::try_from(usage.ru_maxrss).unwrap_or(0),
    }
}
