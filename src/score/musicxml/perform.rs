//! From written measures to a performance: repeats and endings unrolled,
//! one conductor tempo map for all parts, seconds for every note.
//!
//! Measure structure (repeats, endings, jumps) is the union of what all parts
//! mark at the same measure index; a measure lasts as long as its longest
//! part. Tempo marks from every part go on one time line (the first part in
//! score order wins when two disagree at the same instant), so all parts
//! share one quarter→seconds map.
//!
//! Invariant: unrolling only ever reorders whole measures; the notes inside a
//! measure are never changed by it.

use std::path::Path;

use super::measures::{Navigation, Written, WrittenMeasure};
use crate::score::{Location, Measure, Note, Part, Piece, ReadOptions, ScoreError};

/// Most measures a performance may unroll to (a long oratorio has a few
/// thousand); bounds memory against hostile repeat counts.
pub const MAX_PERFORMED_MEASURES: usize = 200_000;
/// Most notes a performance may hold, all parts together.
pub const MAX_PERFORMED_NOTES: usize = 20_000_000;
/// Most part-measures (parts × performed measures) laid out: 100 parts of
/// 200 000 measures, far beyond any choral score.
pub const MAX_PART_MEASURES: usize = 20_000_000;
/// Tempo assumed when a score gives none: 120 quarter notes per minute
/// (the MusicXML and Standard MIDI File default).
pub const DEFAULT_QUARTERS_PER_MINUTE: f64 = 120.0;

/// The merged structure of one written measure across all parts.
struct Structure {
    number: String,
    length_quarters: f64,
    marks: WrittenMeasure,
}

pub fn perform(file: &Path, written: Written, options: &ReadOptions) -> Result<Piece, ScoreError> {
    let mut warnings = Vec::new();
    let structure = merge_structure(&written);
    let order = if options.unroll_repeats {
        unroll(&structure, &mut warnings).map_err(|message| ScoreError::Unsupported {
            file: file.to_path_buf(),
            location: Location::Whole,
            message,
        })?
    } else {
        for measure in &structure {
            let navigation = &measure.marks.navigation;
            if navigation.dacapo || navigation.dalsegno.is_some() {
                warnings.push(format!(
                    "measure {}: {} read as written (repeats not unrolled)",
                    measure.number,
                    jump_name(navigation)
                ));
            }
        }
        (0..structure.len()).collect()
    };
    for measure in &structure {
        let navigation = &measure.marks.navigation;
        if !navigation.printed.is_empty() && !navigation.has_jump_data() {
            warnings.push(format!(
                "measure {}: {} printed without playback marks; not unrolled",
                measure.number,
                navigation.printed.join(", ")
            ));
        }
    }

    // Laying out costs parts × performed measures; bound it against files
    // with very many (empty) parts.
    let work = written.parts.len().saturating_mul(order.len());
    if work > MAX_PART_MEASURES {
        return Err(ScoreError::TooLarge {
            file: file.to_path_buf(),
            message: format!(
                "{} parts × {} performed measures is beyond {MAX_PART_MEASURES}",
                written.parts.len(),
                order.len()
            ),
        });
    }

    // Performance onsets of the measures, in quarter notes.
    let mut onsets_quarters = Vec::with_capacity(order.len());
    let mut total_quarters = 0.0;
    for &index in &order {
        onsets_quarters.push(total_quarters);
        total_quarters += structure[index].length_quarters;
    }

    let tempo_map = TempoMap::build(
        &written,
        &structure,
        &order,
        &onsets_quarters,
        &mut warnings,
    );

    let measures: Vec<Measure> = order
        .iter()
        .zip(&onsets_quarters)
        .map(|(&index, &onset_quarters)| Measure {
            number: structure[index].number.clone(),
            onset_seconds: tempo_map.seconds(onset_quarters),
            onset_quarters,
            duration_quarters: structure[index].length_quarters,
        })
        .collect();

    let mut parts = Vec::with_capacity(written.parts.len());
    let mut note_count = 0usize;
    for part in &written.parts {
        let mut notes = Vec::new();
        let mut dynamics: Vec<(f64, &str)> = Vec::new();
        for (performed_index, (&index, &measure_onset)) in
            order.iter().zip(&onsets_quarters).enumerate()
        {
            let Some(measure) = part.measures.get(index) else {
                continue;
            };
            note_count += measure.notes.len();
            if note_count > MAX_PERFORMED_NOTES {
                return Err(ScoreError::TooLarge {
                    file: file.to_path_buf(),
                    message: format!("the performance holds more than {MAX_PERFORMED_NOTES} notes"),
                });
            }
            dynamics.extend(
                measure
                    .dynamics
                    .iter()
                    .map(|(offset, mark)| (measure_onset + offset, mark.as_str())),
            );
            for note in &measure.notes {
                let onset_quarters = measure_onset + note.offset_quarters;
                let end_quarters = onset_quarters + note.duration_quarters;
                let onset_seconds = tempo_map.seconds(onset_quarters);
                notes.push(Note {
                    onset_seconds,
                    duration_seconds: tempo_map.seconds(end_quarters) - onset_seconds,
                    onset_quarters,
                    duration_quarters: note.duration_quarters,
                    midi: note.midi,
                    measure_index: performed_index,
                    measure: structure[index].number.clone(),
                    voice: note.voice,
                    staff: note.staff,
                    dynamic: None,
                    velocity: None,
                    tied_from_previous: note.tied_from_previous,
                    grace: note.grace,
                });
            }
        }
        notes.sort_by(|a, b| {
            a.onset_quarters
                .total_cmp(&b.onset_quarters)
                .then(a.midi.total_cmp(&b.midi))
        });
        // The dynamic in force at a note is the last mark at or before its onset.
        dynamics.sort_by(|a, b| a.0.total_cmp(&b.0));
        let mut next_mark = 0;
        let mut in_force: Option<&str> = None;
        for note in &mut notes {
            while let Some((position, mark)) = dynamics.get(next_mark) {
                if *position > note.onset_quarters + 1e-9 {
                    break;
                }
                in_force = Some(mark);
                next_mark += 1;
            }
            note.dynamic = in_force.map(str::to_string);
        }
        parts.push(Part {
            name: part.name.clone(),
            id: part.id.clone(),
            kind: part.kind,
            notes,
        });
    }
    Ok(Piece {
        title: written.title,
        parts,
        measures,
        key: written.key,
        warnings,
    })
}

fn merge_structure(written: &Written) -> Vec<Structure> {
    let count = written
        .parts
        .iter()
        .map(|part| part.measures.len())
        .max()
        .unwrap_or(0);
    (0..count)
        .map(|index| {
            let mut marks = WrittenMeasure::default();
            let mut number = None;
            let mut length_quarters = 0.0_f64;
            let mut time_signature = None;
            for measure in written
                .parts
                .iter()
                .filter_map(|part| part.measures.get(index))
            {
                number.get_or_insert_with(|| measure.number.clone());
                length_quarters = length_quarters.max(measure.length_quarters);
                time_signature = time_signature.or(measure.time_signature_quarters);
                marks.merge_structure(measure);
            }
            // A measure nobody wrote anything in lasts its time signature.
            if length_quarters <= 0.0 {
                length_quarters = time_signature.unwrap_or(0.0);
            }
            Structure {
                number: number.unwrap_or_else(|| (index + 1).to_string()),
                length_quarters,
                marks,
            }
        })
        .collect()
}

fn jump_name(navigation: &Navigation) -> &'static str {
    if navigation.dacapo {
        "da capo (D.C.)"
    } else {
        "dal segno (D.S.)"
    }
}

/// An ending (volta bracket): the passes it is played on and its measures.
#[derive(Debug, Clone)]
struct Ending {
    numbers: Vec<u32>,
    end: usize,
    /// The highest pass number of this ending and the endings that directly
    /// follow or precede it: how many times the section is played.
    group_max: u32,
    last_of_group: bool,
}

fn ending_spans(structure: &[Structure]) -> Vec<Option<Ending>> {
    let mut spans: Vec<(usize, usize, Vec<u32>)> = Vec::new();
    let mut open: Option<(usize, Vec<u32>)> = None;
    for (index, measure) in structure.iter().enumerate() {
        if let Some(numbers) = &measure.marks.ending_start {
            if let Some((start, numbers)) = open.take() {
                spans.push((start, index - 1, numbers));
            }
            open = Some((index, numbers.clone()));
        }
        let next_starts = structure
            .get(index + 1)
            .is_some_and(|next| next.marks.ending_start.is_some() || next.marks.repeat_forward);
        let closes = measure.marks.ending_stop
            || measure.marks.repeat_backward.is_some()
            || next_starts
            || index + 1 == structure.len();
        if closes && let Some((start, numbers)) = open.take() {
            spans.push((start, index, numbers));
        }
    }
    let mut endings = vec![None; structure.len()];
    let mut group_start = 0;
    for span in 0..spans.len() {
        let continues = span + 1 < spans.len() && spans[span + 1].0 == spans[span].1 + 1;
        if !continues {
            let group = &spans[group_start..=span];
            let group_max = group
                .iter()
                .flat_map(|(_, _, numbers)| numbers.iter().copied())
                .max()
                .unwrap_or(1);
            for (position, (start, end, numbers)) in group.iter().enumerate() {
                let ending = Ending {
                    numbers: numbers.clone(),
                    end: *end,
                    group_max,
                    last_of_group: position + 1 == group.len(),
                };
                for slot in &mut endings[*start..=*end] {
                    *slot = Some(ending.clone());
                }
            }
            group_start = span + 1;
        }
    }
    endings
}

/// Performance order of the written measures.
///
/// Common practice, as printed scores are read:
/// - a backward repeat sends the player back to the last forward repeat (or
///   to the start, or to just after the previous completed repeat), `times`
///   passes in all (2 by default);
/// - an ending is played only on the passes its number lists; a section with
///   endings is played as many times as its highest ending number;
/// - D.C. (`<sound dacapo="yes">`) and D.S. (`<sound dalsegno>`) jump once, at
///   the end of their measure, to the start or the segno; after the jump
///   repeats are not taken again and only the last ending is played; the
///   performance stops at Fine (`<sound fine>`) and jumps from To Coda
///   (`<sound tocoda>`) to the coda (`<sound coda>`).
fn unroll(structure: &[Structure], warnings: &mut Vec<String>) -> Result<Vec<usize>, String> {
    let endings = ending_spans(structure);
    let find = |wanted: &Option<String>, pick: fn(&Navigation) -> &Option<String>| {
        let marked: Vec<usize> = (0..structure.len())
            .filter(|&index| pick(&structure[index].marks.navigation).is_some())
            .collect();
        marked
            .iter()
            .copied()
            .find(|&index| pick(&structure[index].marks.navigation) == wanted)
            .or_else(|| (marked.len() == 1).then(|| marked[0]))
    };
    let mut order = Vec::new();
    let mut index = 0;
    let mut section_start = 0;
    let mut pass = 1u32;
    let mut after_jump = false;
    while let Some(measure) = structure.get(index) {
        if order.len() >= MAX_PERFORMED_MEASURES {
            return Err(format!(
                "the repeats unroll to more than {MAX_PERFORMED_MEASURES} measures"
            ));
        }
        let marks = &measure.marks;
        if marks.repeat_forward && section_start != index && !after_jump {
            section_start = index;
            pass = 1;
        }
        let ending = endings[index].as_ref();
        if let Some(ending) = ending {
            let wanted = if after_jump { ending.group_max } else { pass };
            if !ending.numbers.contains(&wanted) {
                index = ending.end + 1;
                continue;
            }
        }
        order.push(index);
        let navigation = &marks.navigation;
        if after_jump && navigation.fine {
            break;
        }
        if after_jump && navigation.tocoda.is_some() {
            match find(&navigation.tocoda, |navigation| &navigation.coda) {
                Some(target) if target > index => {
                    index = target;
                    continue;
                }
                _ => warnings.push(format!(
                    "measure {}: To Coda without a coda to jump to; playing on",
                    measure.number
                )),
            }
        }
        if let Some(times) = marks.repeat_backward
            && !after_jump
        {
            let total = times.max(ending.map_or(0, |ending| ending.group_max));
            if pass < total {
                pass += 1;
                index = section_start;
                continue;
            }
            pass = 1;
            section_start = index + 1;
        } else if let Some(ending) = ending
            && ending.end == index
            && ending.last_of_group
            && !after_jump
        {
            pass = 1;
            section_start = index + 1;
        }
        if !after_jump && (navigation.dacapo || navigation.dalsegno.is_some()) {
            let target = if navigation.dacapo {
                Some(0)
            } else {
                find(&navigation.dalsegno, |navigation| &navigation.segno)
            };
            match target {
                Some(target) => {
                    warnings.push(format!(
                        "measure {}: {} unrolled (repeats not taken again after the jump)",
                        measure.number,
                        jump_name(navigation)
                    ));
                    after_jump = true;
                    index = target;
                    continue;
                }
                None => warnings.push(format!(
                    "measure {}: D.S. without a segno to jump to; not unrolled",
                    measure.number
                )),
            }
        }
        index += 1;
    }
    Ok(order)
}

/// Piecewise-constant tempo over performance quarters: seconds at any point
/// are the sum over earlier segments of quarters · 60 / tempo.
struct TempoMap {
    /// (start in quarters, start in seconds, quarter notes per minute)
    segments: Vec<(f64, f64, f64)>,
}

impl TempoMap {
    fn build(
        written: &Written,
        structure: &[Structure],
        order: &[usize],
        onsets_quarters: &[f64],
        warnings: &mut Vec<String>,
    ) -> TempoMap {
        // (position in quarters, part index, quarter notes per minute)
        let mut marks: Vec<(f64, usize, f64)> = Vec::new();
        for (part_index, part) in written.parts.iter().enumerate() {
            for (&index, &onset) in order.iter().zip(onsets_quarters) {
                if let Some(measure) = part.measures.get(index) {
                    marks.extend(
                        measure
                            .tempos
                            .iter()
                            .map(|(offset, tempo)| (onset + offset, part_index, *tempo)),
                    );
                }
            }
        }
        marks.sort_by(|a, b| a.0.total_cmp(&b.0).then(a.1.cmp(&b.1)));
        let mut segments: Vec<(f64, f64, f64)> = Vec::new();
        match marks.first() {
            None => warnings.push(format!(
                "no tempo mark; {DEFAULT_QUARTERS_PER_MINUTE} quarter notes per minute assumed"
            )),
            Some((position, _, _)) if *position > 1e-9 => {
                let measure = order
                    .get(
                        onsets_quarters
                            .partition_point(|onset| *onset <= *position)
                            .saturating_sub(1),
                    )
                    .and_then(|&index| structure.get(index))
                    .map_or("?", |measure| measure.number.as_str());
                warnings.push(format!(
                    "no tempo mark before measure {measure}; {DEFAULT_QUARTERS_PER_MINUTE} quarter notes per minute assumed until then"
                ));
            }
            Some(_) => {}
        }
        segments.push((0.0, 0.0, DEFAULT_QUARTERS_PER_MINUTE));
        let mut default_in_use = true;
        for (position, _, tempo) in marks {
            let Some(last) = segments.last_mut() else {
                continue;
            };
            let (start_quarters, start_seconds, current) = *last;
            if (position - start_quarters).abs() <= 1e-9 {
                // Same instant: the earlier part in score order already set
                // it, unless only the assumed default stands there.
                if default_in_use {
                    last.2 = tempo;
                }
                default_in_use = false;
                continue;
            }
            default_in_use = false;
            let seconds = start_seconds + (position - start_quarters) * 60.0 / current;
            segments.push((position, seconds, tempo));
        }
        TempoMap { segments }
    }

    fn seconds(&self, quarters: f64) -> f64 {
        let index = self
            .segments
            .partition_point(|segment| segment.0 <= quarters)
            .saturating_sub(1);
        self.segments
            .get(index)
            .map_or(0.0, |(start_quarters, start_seconds, tempo)| {
                start_seconds + (quarters - start_quarters) * 60.0 / tempo
            })
    }
}
