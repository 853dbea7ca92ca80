//! `ambit … | head`: when the reader of its output goes away, a command ends
//! quietly, as Unix tools do (POSIX: a write to a pipe with no reader raises
//! SIGPIPE, whose default action ends the process), instead of panicking.

#![cfg(unix)]

use std::io::Read;
use std::os::unix::process::ExitStatusExt;
use std::process::{Command, Stdio};

#[test]
fn a_closed_pipe_ends_a_command_without_a_panic() {
    let scores: Vec<String> = std::fs::read_dir("sample-scores")
        .unwrap()
        .flatten()
        .map(|entry| entry.path())
        .filter(|path| path.extension().is_some_and(|ext| ext == "musicxml"))
        .map(|path| path.display().to_string())
        .collect();
    assert!(!scores.is_empty());
    // Far more output than a pipe buffer holds: the JSON of every score, many times.
    let mut arguments = vec!["parts".to_string(), "--json".to_string()];
    for _ in 0..40 {
        arguments.extend(scores.iter().cloned());
    }
    let mut child = Command::new(env!("CARGO_BIN_EXE_ambit"))
        .args(&arguments)
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    // Read one byte, then close the pipe, as `head -c 1` would.
    let mut stdout = child.stdout.take().unwrap();
    let mut first = [0u8; 1];
    stdout.read_exact(&mut first).unwrap();
    drop(stdout);
    let output = child.wait_with_output().unwrap();
    let stderr = String::from_utf8_lossy(&output.stderr);
    assert!(!stderr.contains("panicked"), "{stderr}");
    // Ended by SIGPIPE (signal 13 on Linux), or finished before it noticed.
    assert!(
        output.status.success() || output.status.signal() == Some(libc::SIGPIPE),
        "{:?}: {stderr}",
        output.status
    );
}
