//! Every integration test of the `ambit` crate, in one binary (`autotests =
//! false` in Cargo.toml): one link of the crate instead of one per file.
//! Add a test file as a module here.

mod common;
mod library_support;
mod smf_builder;

mod audio;
mod bad_audio;
mod bad_midi;
mod bad_scores;
mod cli_fit;
mod cli_pipe;
mod demo_choir;
mod divisi_cli;
mod fit;
mod input_bounds;
mod library;
mod library_cli_flow;
mod library_crash;
mod library_hardening;
mod library_migrations;
mod midi;
mod midi_robustness;
mod music21_chorales;
mod music21_midi;
mod musicxml;
mod one_engine;
mod place_cli;
mod placement_programme;
mod placement_scipy;
mod pretty_midi_timing;
mod profile_bad_input;
mod profile_notes_pyin;
mod rehearsal;
mod report;
mod roster;
mod track;
mod track_accuracy;
mod track_cli;
