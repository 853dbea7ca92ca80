//! Ambit: the engine behind a planner for choir directors and voice teachers.
//!
//! Data flows one way through one module per stage:
//!
//! ```text
//! audio ─► track ─► voice                  (auditions → singer profiles)
//! score ─► tessitura                       (pieces → per-part statistics)
//! roster/voice + tessitura ─► fit ─► placement
//! ```
//!
//! Each stage takes plain data in and gives plain data out; none knows about
//! the stages after it. See `docs/ARCHITECTURE.md` for the map.

pub mod audio;
pub mod cautions;
pub mod demo;
pub mod fit;
pub mod input;
pub mod library;
pub mod pitch;
pub mod placement;
pub mod plan;
pub mod rehearsal;
pub mod report;
pub mod roster;
pub mod score;
pub mod sections;
pub mod synth;
pub mod tessitura;
pub mod text;
pub mod track;
pub mod transpose;
pub mod usecases;
pub mod views;
pub mod voice;
