//! The HTML report and `ambit demo`, end to end: the demo writes a report
//! naming every singer, section and caution with its charts; the heatmap's
//! palette is matplotlib's viridis; names from a roster are escaped; a
//! placement that cannot be made writes no report.

use crate::common;

use std::path::Path;

use ambit::cautions::cautions;
use ambit::demo::DEMO_CHOIR;
use ambit::demo::run::demo_programme;
use ambit::plan::{PlanConstraints, ProgrammeConfig, plan_programme};
use ambit::report::palette::{VIRIDIS_CONTROL_POINTS, contrast_ratio, text_colour_on, viridis};
use ambit::report::{ReportDocument, render_html};
use ambit::roster::{parse_roster_csv, read_roster};
use ambit::sections::Layout;

/// Undoes HTML character references (`&#60;`, `&lt;`, `&amp;` …) so a
/// check can look for the text a reader sees, however the template escaped it.
fn visible_text(html: &str) -> String {
    let mut out = String::with_capacity(html.len());
    let mut rest = html;
    while let Some(start) = rest.find('&') {
        out.push_str(&rest[..start]);
        rest = &rest[start..];
        let decoded = rest.find(';').and_then(|end| {
            let entity = &rest[1..end];
            let character = match entity {
                "amp" => Some('&'),
                "lt" => Some('<'),
                "gt" => Some('>'),
                "quot" => Some('"'),
                "apos" => Some('\''),
                _ => entity
                    .strip_prefix('#')
                    .and_then(|number| number.parse::<u32>().ok())
                    .and_then(char::from_u32),
            }?;
            Some((character, end + 1))
        });
        match decoded {
            Some((character, length)) => {
                out.push(character);
                rest = &rest[length..];
            }
            None => {
                out.push('&');
                rest = &rest[1..];
            }
        }
    }
    out.push_str(rest);
    out
}

/// Worked example: the demo choir (24 invented singers) and the four sample
/// scores. The report must name every singer and every SSAATTBB section,
/// carry the one wording of the cautions (src/cautions.rs), and draw its
/// charts as inline SVG with no script and no network reference.
#[test]
fn ambit_demo_writes_a_report_roster_and_recordings() {
    let out = tempfile::tempdir().expect("a temporary folder");
    let folder = out.path().join("demo");
    let folder_text = folder.to_string_lossy().into_owned();
    let (success, stdout, stderr) = common::run_ambit(&["demo", "--out", &folder_text]);
    assert!(success, "ambit demo failed: {stderr}");
    assert!(stdout.contains("report:"), "{stdout}");
    // The summary shows the cautions too.
    assert!(stdout.contains(ambit::cautions::NOT_MEDICAL), "{stdout}");

    let html = std::fs::read_to_string(folder.join("report.html")).expect("report.html");
    let text = visible_text(&html);
    for singer in &DEMO_CHOIR {
        assert!(text.contains(singer.name), "report misses {}", singer.name);
    }
    for section in ["S1", "S2", "A1", "A2", "T1", "T2", "B1", "B2"] {
        assert!(
            text.contains(&format!(">{section}<")),
            "report misses section {section}"
        );
    }
    for caution in cautions() {
        assert!(
            text.contains(&caution),
            "report misses the caution {caution}"
        );
    }
    assert!(html.contains("<svg"), "no inline SVG");
    // Self-contained: no scripts, nothing fetched from elsewhere.
    assert!(!html.contains("<script"), "the report has a script");
    // (The SVG namespace is a name, not a fetch.)
    let without_namespace = html.replace("http://www.w3.org/2000/svg", "");
    for remote in ["http://", "https://", "<link", "@import", "url("] {
        assert!(
            !without_namespace.contains(remote),
            "the report refers to {remote}"
        );
    }
    // Hot spots are given by bar number.
    assert!(text.contains("bars "), "no hot spots by bar");

    // roster.csv reads back with the one roster reader: one row per singer.
    let roster = read_roster(&folder.join("roster.csv")).expect("roster.csv reads back");
    assert_eq!(roster.singers.len(), DEMO_CHOIR.len());
    assert!(roster.singers.iter().all(|singer| singer.section.is_some()));

    // rehearsal.json: the demo's 90-minute rehearsal, every block within
    // the 90 minutes, with the rehearsal cautions.
    let rehearsal: serde_json::Value = serde_json::from_str(
        &std::fs::read_to_string(folder.join("rehearsal.json")).expect("rehearsal.json"),
    )
    .expect("rehearsal.json is JSON");
    assert_eq!(rehearsal["minutes"].as_f64(), Some(90.0));
    let blocks = rehearsal["items"].as_array().expect("run sheet");
    assert!(blocks.iter().all(|b| {
        b["start_minute"].as_f64().unwrap_or(f64::MAX) + b["minutes"].as_f64().unwrap_or(0.0)
            <= 90.0 + 1e-9
    }));
    assert!(rehearsal["cautions"].to_string().contains("laryngitis"));

    // Five 16-bit WAV recordings per singer, in a folder named after them.
    let glide = folder.join("auditions/teodor-marsh-ivey/glide.wav");
    let reader = hound::WavReader::open(&glide).expect("a WAV file");
    assert_eq!(reader.spec().bits_per_sample, 16);
    assert_eq!(reader.spec().channels, 1);
    let wav_count = walk_count(&folder.join("auditions"), "wav");
    assert_eq!(wav_count, DEMO_CHOIR.len() * 5);
    // Written whole: no temporary file is left behind.
    let leftovers: Vec<_> = std::fs::read_dir(&folder)
        .expect("the folder")
        .filter_map(Result::ok)
        .filter(|entry| entry.file_name().to_string_lossy().ends_with(".tmp"))
        .collect();
    assert!(leftovers.is_empty(), "{leftovers:?}");
}

fn walk_count(folder: &Path, extension: &str) -> usize {
    std::fs::read_dir(folder)
        .map(|entries| {
            entries
                .filter_map(Result::ok)
                .map(|entry| {
                    let path = entry.path();
                    if path.is_dir() {
                        walk_count(&path, extension)
                    } else {
                        usize::from(path.extension().is_some_and(|found| found == extension))
                    }
                })
                .sum()
        })
        .unwrap_or(0)
}

/// The heatmap palette against matplotlib's own viridis table, live: the
/// 256 colours of `matplotlib.colormaps["viridis"].colors` (matplotlib,
/// pinned in tests/reference/requirements.txt).
#[test]
fn heatmap_colours_are_matplotlibs_viridis() {
    let Some(python) = common::reference_python("heatmap_colours_are_matplotlibs_viridis") else {
        return;
    };
    let reference = common::run_reference(&python, "viridis.py", &[]);
    let table: Vec<[f64; 3]> = reference["colors"]
        .as_array()
        .expect("a list of colours")
        .iter()
        .map(|colour| {
            let channel = |index: usize| colour[index].as_f64().expect("a number");
            [channel(0), channel(1), channel(2)]
        })
        .collect();
    assert_eq!(table.len(), 256, "viridis is defined by 256 colours");
    // Our control points are entries of that table, to the 6 decimals printed.
    for (index, point) in VIRIDIS_CONTROL_POINTS {
        let entry = table[usize::from(index)];
        for channel in 0..3 {
            assert!(
                (entry[channel] - point[channel]).abs() < 5e-7,
                "control point {index}: {point:?} vs matplotlib {entry:?}"
            );
        }
    }
    // Between them, every entry of the table within 2/255 per channel.
    for (index, entry) in table.iter().enumerate() {
        let ours = viridis(index as f64 / 255.0);
        let ours = [ours.0, ours.1, ours.2];
        for channel in 0..3 {
            let theirs = entry[channel] * 255.0;
            assert!(
                (f64::from(ours[channel]) - theirs).abs() <= 2.0,
                "entry {index}: ours {ours:?}, matplotlib {:?}",
                entry.map(|c| c * 255.0)
            );
        }
    }
}

/// WCAG 2.1 (SC 1.4.3): numbers on coloured cells need 4.5:1 contrast.
#[test]
fn text_on_every_heatmap_colour_reads_at_wcag_aa() {
    for fit in 0..=100 {
        let background = viridis(f64::from(fit) / 100.0);
        let ratio = contrast_ratio(background, text_colour_on(background));
        assert!(
            ratio >= 4.5,
            "fit {fit}: {} only {ratio:.2}",
            background.hex()
        );
    }
}

const HOSTILE_ROSTER: &str = "\
name,range_low,range_high,comfort_low,comfort_high
\"<script>alert('x')</script>\",C4,A5,F4,E5
Ada & <b>Bold</b>,F3,D5,A3,C5
\"Quote \"\"Q\"\" O'Neil\",C3,A4,E3,F4
Basil,E2,E4,G2,C4
";

fn hostile_plan() -> ambit::plan::ProgrammePlan {
    let roster = parse_roster_csv(Path::new("hostile.csv"), HOSTILE_ROSTER.as_bytes())
        .expect("the roster reads");
    let programme = demo_programme().expect("the sample scores read");
    let lanterns = programme.into_iter().take(1).collect::<Vec<_>>();
    let layout = Layout::parse("SATB").expect("SATB");
    plan_programme(
        &roster,
        &lanterns,
        &layout,
        &PlanConstraints::default(),
        &ProgrammeConfig::default(),
    )
    .expect("a plan")
}

/// Names come from users' rosters: markup in them is shown as text, never
/// interpreted (OWASP XSS prevention: escape & < > " ' in HTML content and
/// attributes).
#[test]
fn names_from_a_roster_are_escaped() {
    let plan = hostile_plan();
    let html = render_html(&ReportDocument {
        title: "Plan for <i>us</i>",
        source: "Roster \"hostile.csv\".",
        plan: &plan,
    })
    .expect("renders");
    assert!(!html.contains("<script>alert"), "a name was not escaped");
    assert!(!html.contains("<b>Bold</b>"), "a name was not escaped");
    assert!(!html.contains("<i>us</i>"), "the title was not escaped");
    assert!(!html.contains("\"Q\""), "a quote was not escaped");
    let text = visible_text(&html);
    for shown in [
        "<script>alert('x')</script>",
        "Ada & <b>Bold</b>",
        "Quote \"Q\" O'Neil",
        "Plan for <i>us</i>",
    ] {
        assert!(text.contains(shown), "the reader should see {shown}");
    }
}

/// `ambit place` on the hostile roster and the first sample score, SATB,
/// with `extra` options, writing `--report REPORT`.
fn place_with_report(folder: &Path, report: &Path, extra: &[&str]) -> (bool, String, String) {
    let roster = folder.join("roster.csv");
    std::fs::write(&roster, HOSTILE_ROSTER).expect("write the roster");
    let score = common::project_root().join("sample-scores/lanterns-on-the-quay.musicxml");
    let (roster, score, report) = (
        roster.to_string_lossy().into_owned(),
        score.to_string_lossy().into_owned(),
        report.to_string_lossy().into_owned(),
    );
    let mut arguments = vec!["place", "--roster", &roster, "--layout", "SATB"];
    arguments.extend_from_slice(extra);
    arguments.extend([score.as_str(), "--report", &report]);
    common::run_ambit(&arguments)
}

/// `ambit place --report`: the same renderer from the CLI, and the same
/// escaping.
#[test]
fn place_writes_a_report_with_report_option() {
    let folder = tempfile::tempdir().expect("a temporary folder");
    let report = folder.path().join("plan.html");
    let (success, stdout, stderr) = place_with_report(folder.path(), &report, &[]);
    assert!(success, "{stderr}");
    assert!(stdout.contains("Basil"), "{stdout}");
    let html = std::fs::read_to_string(&report).expect("the report");
    assert!(html.contains("<svg"));
    assert!(!html.contains("<script>alert"));
    assert!(visible_text(&html).contains("<script>alert('x')</script>"));
}

/// A placement that cannot be made (four singers, but the soprano section
/// must hold five) is an error naming the constraint, and leaves no report,
/// not even a partial or temporary one.
#[test]
fn an_infeasible_placement_writes_no_report() {
    let folder = tempfile::tempdir().expect("a temporary folder");
    let report = folder.path().join("plan.html");
    let (success, stdout, stderr) = place_with_report(folder.path(), &report, &["--size", "S=5"]);
    assert!(!success, "five sopranos from four singers: {stdout}");
    assert!(
        stderr.contains("no placement meets every constraint"),
        "{stderr}"
    );
    assert!(!report.exists(), "a report was written");
    let names: Vec<String> = std::fs::read_dir(folder.path())
        .expect("the folder")
        .filter_map(Result::ok)
        .map(|entry| entry.file_name().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names, vec!["roster.csv".to_string()]);
}

/// A report into a folder that does not exist is an error naming the file.
#[test]
fn a_report_into_a_missing_folder_names_the_path() {
    let plan = hostile_plan();
    let folder = tempfile::tempdir().expect("a temporary folder");
    let path = folder.path().join("no-such-folder/plan.html");
    let error = ambit::report::write_report(
        &path,
        &ReportDocument {
            title: "t",
            source: "s",
            plan: &plan,
        },
    )
    .expect_err("the folder is missing");
    assert!(
        error.to_string().contains("no-such-folder/plan.html"),
        "{error}"
    );
    assert!(!path.exists());
}
