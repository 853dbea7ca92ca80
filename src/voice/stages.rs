//! The stages of [`super::profile`], in the order it runs them. Each stage
//! reads the [`Intake`] (the recordings, their notes, which of them are
//! usable and how clean they are) and the stages before it, and returns a
//! value of its own; warnings go, in stage order, into the intake's list.
//!
//! 1. [`intake`]: recording quality, notes, tasks usable or left out;
//! 2. [`measure_range`]: the held range;
//! 3. [`glide_reach`]: the glides' extremes;
//! 4. [`comfort_zone`]: the comfort zone;
//! 5. [`speaking_f0`] and [`timbre`]: the speech and timbre evidence;
//! 6. [`classify_with_passaggi`]: glide breaks, passaggi and the voice type;
//! 7. [`sung_registers`]: the registers of the sung notes;
//! 8. [`suggest_section`]: the section and its runner-up.

use crate::pitch::{hz_to_midi, nearest_name};

use super::notes::{SungNote, segment_notes};
use super::registers::{
    MeasuredPassaggio, RegisterBounds, find_breaks, group_breaks, note_register,
};
use super::timbre::{SpectralMeasures, SpectrumAnalyser, median_measures};
use super::types::{Classification, Evidence, SectionChoice, VoiceType, classify, rank_sections};
use super::{
    Comfort, Passaggio, PassaggioKind, PassaggioSource, PitchSpan, ProfileConfig, Recording,
    RegisterSpan, Task, VoiceError, recording_quality, weighted_percentile,
};

/// One recording and the notes found in it.
pub(super) struct Analysed<'a> {
    pub recording: &'a Recording,
    pub notes: Vec<SungNote>,
}

/// Stage 1's result: every recording with its notes, the tasks that hold
/// usable voice, the quality factor of each recording, and the warnings.
pub(super) struct Intake<'a> {
    pub analysed: Vec<Analysed<'a>>,
    pub usable_tasks: Vec<Task>,
    pub qualities: Vec<(Task, f64)>,
    pub missing_tasks: Vec<Task>,
    pub warnings: Vec<String>,
    /// The file names of all recordings, for messages.
    pub files: Vec<&'a str>,
}

impl<'a> Intake<'a> {
    /// The usable recordings (with their notes) whose task passes `wanted`.
    pub fn usable(&self, wanted: impl Fn(Task) -> bool) -> impl Iterator<Item = &Analysed<'a>> {
        self.analysed.iter().filter(move |item| {
            self.usable_tasks.contains(&item.recording.task) && wanted(item.recording.task)
        })
    }

    /// The confidence factor of a figure read from `tasks`: that of its
    /// worst usable recording (clipping and noise: see `recording_quality`).
    pub fn quality_of(&self, tasks: &[Task]) -> f64 {
        self.qualities
            .iter()
            .filter(|(task, _)| tasks.contains(task) && self.usable_tasks.contains(task))
            .map(|(_, factor)| *factor)
            .fold(1.0_f64, f64::min)
    }

    /// The quality of the sung tasks.
    pub fn sung_quality(&self) -> f64 {
        self.quality_of(&[Task::Glide, Task::Scale, Task::Sustain, Task::Song])
    }
}

/// Stage 1: the recordings' quality and notes, and which tasks are usable.
/// A recording with almost no voice, or a sung task that holds no pitch
/// (speech or gliding where singing was asked), is left out with a warning.
pub(super) fn intake<'a>(recordings: &'a [Recording], config: &ProfileConfig) -> Intake<'a> {
    let mut warnings = Vec::new();
    let mut qualities: Vec<(Task, f64)> = Vec::new();
    for recording in recordings {
        for warning in &recording.warnings {
            warnings.push(format!(
                "{} ({}): {warning}",
                recording.file,
                recording.task.label()
            ));
        }
        let quality = recording_quality(recording);
        for problem in &quality.problems {
            warnings.push(format!(
                "{} ({}): {problem}",
                recording.file,
                recording.task.label()
            ));
        }
        qualities.push((recording.task, quality.factor));
    }

    let analysed: Vec<Analysed> = recordings
        .iter()
        .map(|recording| Analysed {
            recording,
            notes: segment_notes(&recording.track.frames, &config.tuning, &config.segment),
        })
        .collect();

    // Recordings that were meant to be sung but hold no singing.
    let mut usable_tasks = Vec::new();
    for item in &analysed {
        let recording = item.recording;
        let voiced_seconds = recording.track.frames.iter().filter(|f| f.voiced).count() as f64
            * recording.track.hop_seconds;
        // Sung notes are held; spoken syllables are short (4–6 a second,
        // about 0.2 s each: common practice, from memory) even where two
        // run together at one pitch. So a sung task must hold most of its
        // voiced time in notes of at least `sung_note_seconds`.
        let noted_seconds: f64 = item
            .notes
            .iter()
            .map(SungNote::seconds)
            .filter(|&seconds| seconds >= config.sung_note_seconds)
            .sum();
        let task = recording.task.label();
        if voiced_seconds < 0.3 {
            warnings.push(format!(
                "{} ({task}): no voice found (only {voiced_seconds:.1} s voiced); this recording was left out",
                recording.file
            ));
            continue;
        }
        if recording.task.is_sung()
            && recording.task != Task::Glide
            && noted_seconds < config.sung_share * voiced_seconds
        {
            warnings.push(format!(
                "{} ({task}): the voice seldom holds a pitch (only {noted_seconds:.1} of {voiced_seconds:.1} s voiced are notes held {:.1} s or longer); it sounds like speech or gliding, not singing, and was left out",
                recording.file, config.sung_note_seconds
            ));
            continue;
        }
        usable_tasks.push(recording.task);
    }
    let missing_tasks: Vec<Task> = Task::ALL
        .into_iter()
        .filter(|task| !usable_tasks.contains(task))
        .collect();
    if !missing_tasks.is_empty() {
        let names: Vec<&str> = missing_tasks.iter().map(|t| t.label()).collect();
        warnings.push(format!(
            "missing tasks: {}; the profile is less certain",
            names.join(", ")
        ));
    }
    Intake {
        analysed,
        usable_tasks,
        qualities,
        missing_tasks,
        warnings,
        files: recordings.iter().map(|r| r.file.as_str()).collect(),
    }
}

/// Stage 2's result.
pub(super) struct RangeStage {
    pub range: PitchSpan,
    /// Before the recordings' quality factor.
    pub confidence: f64,
    /// Below this pitch an irregular note is fry.
    pub fry_midi: f64,
}

/// Whether a note is vocal fry: low and irregular.
fn is_fry(note: &SungNote, fry_midi: f64, config: &ProfileConfig) -> bool {
    note.midi < fry_midi && note.irregularity_cents > config.fry_irregularity_cents
}

/// Stage 2: the range, from notes held ≥ `sustain_min_seconds` in any sung
/// task, fry excluded; from notes held 0.5 s (less sure) when none was.
pub(super) fn measure_range(
    intake: &mut Intake,
    config: &ProfileConfig,
) -> Result<RangeStage, VoiceError> {
    let fry_midi = hz_to_midi(config.fry_max_hz).unwrap_or(37.0);
    let sung_notes: Vec<&SungNote> = intake
        .usable(Task::is_sung)
        .flat_map(|item| item.notes.iter())
        .filter(|note| !is_fry(note, fry_midi, config) && note.midi >= 33.0)
        .collect();
    let mut held: Vec<&SungNote> = sung_notes
        .iter()
        .copied()
        .filter(|note| note.seconds() >= config.sustain_min_seconds)
        .collect();
    let mut confidence = 0.9;
    let mut fallback = None;
    if held.is_empty() {
        held = sung_notes
            .iter()
            .copied()
            .filter(|note| note.seconds() >= 0.5)
            .collect();
        confidence = 0.5;
        if !held.is_empty() {
            fallback = Some(format!(
                "no note was held for {:.1} s; the range comes from notes held at least 0.5 s",
                config.sustain_min_seconds
            ));
        }
    }
    let span = held.iter().fold(None, |span: Option<(f64, f64)>, note| {
        Some(span.map_or((note.midi, note.midi), |(l, h)| {
            (l.min(note.midi), h.max(note.midi))
        }))
    });
    intake.warnings.extend(fallback);
    let (low, high) = span.ok_or_else(|| {
        // Say why, per file and task: the warnings gathered so far name
        // recordings with no voice, or speech where singing was asked.
        let why = if intake.warnings.is_empty() {
            String::new()
        } else {
            format!(" ({})", intake.warnings.join("; "))
        };
        VoiceError::NoSinging(format!(
            "no held sung note was found in {}; the singer needs to hold notes (sustain, scale or song tasks){why}",
            intake.files.join(", ")
        ))
    })?;
    Ok(RangeStage {
        range: PitchSpan::new(low, high),
        confidence,
        fry_midi,
    })
}

/// Stage 3: the glides' extremes (reached, not sustained: the 1st and 99th
/// percentiles of their voiced frames), with a warning where they reach
/// well past the held range.
pub(super) fn glide_reach(
    intake: &mut Intake,
    config: &ProfileConfig,
    range: &PitchSpan,
) -> Option<PitchSpan> {
    let glide_points: Vec<f64> = intake
        .usable(|task| task == Task::Glide)
        .flat_map(|item| {
            item.recording
                .track
                .frames
                .iter()
                .filter(|f| f.voiced)
                .filter_map(|f| config.tuning.hz_to_midi(f.f0_hz?))
        })
        .collect();
    let reached = if glide_points.len() >= 20 {
        let weights: Vec<(f64, f64)> = glide_points.iter().map(|&m| (m, 1.0)).collect();
        let low = weighted_percentile(weights.clone(), 1.0);
        let high = weighted_percentile(weights, 99.0);
        low.zip(high).map(|(l, h)| PitchSpan::new(l, h))
    } else {
        None
    };
    if let Some(reach) = &reached {
        if reach.high_midi > range.high_midi + 7.0 {
            intake.warnings.push(format!(
                "the glide reached {} but no held note went above {}: the top may be unsecured, or the glide has tracking errors",
                reach.high, range.high
            ));
        }
        if reach.low_midi < range.low_midi - 7.0 {
            intake.warnings.push(format!(
                "the glide went down to {} but no held note went below {}",
                reach.low, range.low
            ));
        }
    }
    reached
}

/// Stage 4: the comfort zone, from the steady notes of scales and songs;
/// estimated inside the range (and said so) when there are none.
pub(super) fn comfort_zone(intake: &Intake, config: &ProfileConfig, range: &RangeStage) -> Comfort {
    let steady: Vec<(f64, f64)> = intake
        .usable(|task| matches!(task, Task::Scale | Task::Song))
        .flat_map(|item| item.notes.iter())
        .filter(|note| !is_fry(note, range.fry_midi, config))
        .filter(|note| {
            note.drift_cents <= config.steady_drift_cents
                && note.level_sd_db <= config.steady_level_sd_db
        })
        .map(|note| (note.midi, note.seconds()))
        .collect();
    let range = &range.range;
    let steady_seconds: f64 = steady.iter().map(|(_, s)| s).sum();
    if steady_seconds >= 2.0 {
        // The scale task walks the whole comfortable range, so its lowest
        // and highest steady notes bound the zone; the outer 1 % of steady
        // time is dropped so a stray mistracked note cannot widen it.
        let low = weighted_percentile(steady.clone(), 1.0).unwrap_or(range.low_midi);
        let high = weighted_percentile(steady, 99.0).unwrap_or(range.high_midi);
        // The comfort zone lies inside the sustained range; its top stays at
        // least a semitone under the highest held note (common practice).
        let high = high.min(range.high_midi - 1.0).max(range.low_midi);
        let low = low.max(range.low_midi).min(high);
        let has_scale = intake.usable_tasks.contains(&Task::Scale);
        let has_song = intake.usable_tasks.contains(&Task::Song);
        let confidence = (0.45
            + 0.3 * (steady_seconds / 15.0).min(1.0)
            + if has_scale { 0.1 } else { 0.0 }
            + if has_song { 0.1 } else { 0.0 })
            * intake.quality_of(&[Task::Scale, Task::Song]);
        Comfort {
            span: PitchSpan::new(low, high),
            confidence: confidence.min(0.95),
            basis: format!(
                "the middle 98 % of {steady_seconds:.1} s of steady notes in the scale and song tasks, kept inside the held range"
            ),
        }
    } else {
        // No scales or songs: a comfort zone a few semitones inside the
        // range (common practice, from memory: about a third below the top
        // and a minor third above the bottom).
        let low = (range.low_midi + 3.0).min(range.high_midi);
        let high = (range.high_midi - 4.0).max(low);
        Comfort {
            span: PitchSpan::new(low, high),
            confidence: 0.3 * intake.sung_quality(),
            basis: "no scale or song to measure it from: estimated as a minor third above the lowest and a major third below the highest held note".into(),
        }
    }
}

/// Stage 5a: the speaking f0, the median of the speech task's voiced frames.
pub(super) fn speaking_f0(intake: &Intake) -> Option<f64> {
    let mut speech: Vec<f64> = intake
        .usable(|task| task == Task::Speech)
        .flat_map(|item| {
            item.recording
                .track
                .frames
                .iter()
                .filter(|f| f.voiced)
                .filter_map(|f| f.f0_hz)
        })
        .collect();
    speech.sort_by(f64::total_cmp);
    speech.get(speech.len() / 2).copied()
}

/// Stage 5b: the timbre, median spectral measures over the sung voiced
/// frames every 50 ms (at most 2000 of them).
pub(super) fn timbre(intake: &Intake) -> Option<SpectralMeasures> {
    let mut measures = Vec::new();
    for item in intake.usable(|task| task.is_sung()) {
        let recording = item.recording;
        let mut analyser = SpectrumAnalyser::new(recording.sample_rate);
        let step = ((0.05 / recording.track.hop_seconds.max(1e-3)).round() as usize).max(1);
        for frame in recording.track.frames.iter().step_by(step) {
            if let (true, Some(f0)) = (frame.voiced, frame.f0_hz)
                && let Some(measure) = analyser.measure(&recording.samples, frame.time, f0)
            {
                measures.push(measure);
            }
            if measures.len() >= 2000 {
                break;
            }
        }
    }
    median_measures(&measures)
}

/// Stage 6's result.
pub(super) struct TypeStage {
    /// The glide breaks, grouped, strongest first.
    pub breaks: Vec<MeasuredPassaggio>,
    /// Measured passaggi, and typical ones where none was measured, low to high.
    pub passaggi: Vec<Passaggio>,
    pub classification: Classification,
    pub best: VoiceType,
    /// The best type's confidence after the recordings' quality factor.
    pub confidence: f64,
}

/// Stage 6: the glides' register breaks, labelled primo or secondo against
/// the likely type; the voice type from every piece of evidence; typical
/// passaggi of that type where none was measured.
pub(super) fn classify_with_passaggi(
    intake: &Intake,
    config: &ProfileConfig,
    range: &PitchSpan,
    comfort: &Comfort,
    speaking_f0_hz: Option<f64>,
    timbre: Option<&SpectralMeasures>,
) -> TypeStage {
    let found: Vec<_> = intake
        .usable(|task| task == Task::Glide)
        .flat_map(|item| {
            let r = item.recording;
            find_breaks(
                &r.track.frames,
                &r.samples,
                r.sample_rate,
                &config.tuning,
                &config.breaks,
            )
        })
        .collect();
    let breaks = group_breaks(&found, 3.0);

    // First pass: classify without passaggi, to know which table row to
    // label measured breaks against.
    let mut evidence = Evidence {
        range_low_midi: Some(range.low_midi),
        range_high_midi: Some(range.high_midi),
        comfort_low_midi: Some(comfort.span.low_midi),
        comfort_high_midi: Some(comfort.span.high_midi),
        primo_midi: None,
        secondo_midi: None,
        speaking_f0_hz,
        centroid_hz: timbre.map(|t| t.centroid_hz),
    };
    let first = classify(&evidence);
    let typical = first.ranked[0].voice_type.typical();
    let glide_quality = intake.quality_of(&[Task::Glide]);

    let mut passaggi: Vec<Passaggio> = Vec::new();
    for candidate in breaks.iter().take(3) {
        let kind = if (candidate.midi - typical.primo_midi).abs()
            <= (candidate.midi - typical.secondo_midi).abs()
        {
            PassaggioKind::Primo
        } else {
            PassaggioKind::Secondo
        };
        if passaggi.iter().any(|p| p.kind == kind) {
            continue;
        }
        passaggi.push(Passaggio {
            midi: candidate.midi,
            name: nearest_name(candidate.midi),
            kind,
            source: PassaggioSource::Measured,
            confidence: candidate.confidence * glide_quality,
            upward_midi: candidate.upward_midi,
            downward_midi: candidate.downward_midi,
        });
    }
    for passaggio in &passaggi {
        match passaggio.kind {
            PassaggioKind::Primo => evidence.primo_midi = Some(passaggio.midi),
            PassaggioKind::Secondo => evidence.secondo_midi = Some(passaggio.midi),
        }
    }
    let classification = classify(&evidence);
    let best = classification.ranked[0].voice_type;
    let best_typical = best.typical();
    let confidence = classification.ranked[0].confidence * intake.quality_of(&Task::ALL);
    for (kind, midi) in [
        (PassaggioKind::Primo, best_typical.primo_midi),
        (PassaggioKind::Secondo, best_typical.secondo_midi),
    ] {
        if !passaggi.iter().any(|p| p.kind == kind) {
            passaggi.push(Passaggio {
                midi,
                name: nearest_name(midi),
                kind,
                source: PassaggioSource::Typical,
                confidence: 0.5 * confidence,
                upward_midi: None,
                downward_midi: None,
            });
        }
    }
    passaggi.sort_by(|a, b| a.midi.total_cmp(&b.midi));
    TypeStage {
        breaks,
        passaggi,
        classification,
        best,
        confidence,
    }
}

/// Stage 7: the registers of the sung notes (glides left out: their turns
/// are reached, not sung). Fry and whistle by pitch (and fry's
/// irregularity); modal and falsetto either side of the strongest measured
/// glide break, the M1→M2 transition.
pub(super) fn sung_registers(
    intake: &Intake,
    config: &ProfileConfig,
    range: &RangeStage,
    breaks: &[MeasuredPassaggio],
) -> Vec<RegisterSpan> {
    let bounds = RegisterBounds {
        fry_max_midi: range.fry_midi,
        fry_irregularity_cents: config.fry_irregularity_cents,
        break_midi: breaks.first().map(|m| m.midi),
        whistle_min_midi: hz_to_midi(config.whistle_min_hz).unwrap_or(85.0),
    };
    let mut registers: Vec<RegisterSpan> = Vec::new();
    for note in intake
        .usable(|task| task.is_sung() && task != Task::Glide)
        .flat_map(|item| item.notes.iter())
    {
        let Some(register) = note_register(note.midi, note.irregularity_cents, &bounds) else {
            continue;
        };
        match registers.iter_mut().find(|r| r.register == register) {
            Some(existing) => {
                existing.span = PitchSpan::new(
                    existing.span.low_midi.min(note.midi),
                    existing.span.high_midi.max(note.midi),
                );
                existing.seconds += note.seconds();
            }
            None => registers.push(RegisterSpan {
                register,
                span: PitchSpan::new(note.midi, note.midi),
                seconds: note.seconds(),
            }),
        }
    }
    registers.sort_by_key(|r| r.register);
    registers
}

/// Stage 8's result: the sections a voice of this type sings in, ranked by
/// how their usual tessitura sits in the comfort zone.
pub(super) struct SectionStage {
    pub ranked: Vec<SectionChoice>,
}

impl SectionStage {
    /// The suggested section, "" when there is none.
    pub fn section(&self) -> String {
        self.ranked
            .first()
            .map_or_else(String::new, |c| c.section.clone())
    }

    /// The runner-up, "" when there is none.
    pub fn runner_up(&self) -> String {
        self.ranked
            .get(1)
            .map_or_else(String::new, |c| c.section.clone())
    }
}

/// Stage 8: the best of the sections a voice of this type sings in.
pub(super) fn suggest_section(best: VoiceType, comfort: &Comfort) -> SectionStage {
    let allowed: &[&str] = match best {
        VoiceType::Bass | VoiceType::Baritone => &["B1", "B2", "T2"],
        VoiceType::Tenor => &["T1", "T2", "B1"],
        VoiceType::Countertenor => &["A1", "A2", "T1"],
        VoiceType::Contralto | VoiceType::MezzoSoprano | VoiceType::Soprano => {
            &["S1", "S2", "A1", "A2"]
        }
    };
    SectionStage {
        ranked: rank_sections(comfort.span.low_midi, comfort.span.high_midi)
            .into_iter()
            .filter(|choice| allowed.contains(&choice.section.as_str()))
            .collect(),
    }
}
