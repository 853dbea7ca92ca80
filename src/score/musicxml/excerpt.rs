//! Notation excerpts: some bars of one part of a MusicXML score, as a
//! MusicXML document of their own, for a notation renderer (the app shows
//! the bars of a hot spot).
//!
//! The excerpt copies the source's own text of the part's `<score-part>`
//! and of each selected `<measure>`, and puts the clef, key, time and
//! divisions in force at the first selected bar at its start, so that the
//! excerpt reads the same as the bars did in place. Nothing is re-encoded.

use std::path::Path;

use super::super::{Location, ScoreError};

fn child<'a, 'input>(
    node: roxmltree::Node<'a, 'input>,
    name: &str,
) -> Option<roxmltree::Node<'a, 'input>> {
    node.children()
        .find(|candidate| candidate.has_tag_name(name))
}

fn text_of<'a>(node: Option<roxmltree::Node<'a, '_>>) -> Option<&'a str> {
    node.and_then(|node| node.text()).map(str::trim)
}

/// Bars `first_bar`…`last_bar` (printed numbers, inclusive) of the part
/// named or identified `part`, from a `score-partwise` document's text.
pub fn excerpt_of(
    path: &Path,
    text: &str,
    document: &roxmltree::Document<'_>,
    part: &str,
    first_bar: &str,
    last_bar: &str,
) -> Result<String, ScoreError> {
    let unsupported = |message: String| ScoreError::Unsupported {
        file: path.to_path_buf(),
        location: Location::Whole,
        message,
    };
    let root = document.root_element();
    if !root.has_tag_name("score-partwise") {
        return Err(unsupported(format!(
            "excerpts are made from score-partwise documents, not <{}>",
            root.tag_name().name()
        )));
    }
    let wanted = part.trim();
    let score_part = child(root, "part-list")
        .into_iter()
        .flat_map(|list| {
            list.children()
                .filter(|node| node.has_tag_name("score-part"))
        })
        .find(|node| {
            node.attribute("id") == Some(wanted)
                || text_of(child(*node, "part-name")) == Some(wanted)
        })
        .ok_or_else(|| unsupported(format!("no part called \"{wanted}\"")))?;
    let id = score_part.attribute("id").unwrap_or(wanted);
    let part_node = root
        .children()
        .find(|node| node.has_tag_name("part") && node.attribute("id") == Some(id))
        .ok_or_else(|| unsupported(format!("part \"{wanted}\" has no music")))?;
    // Attributes in force: the latest of each kind before the first bar.
    let mut in_force: Vec<(&str, roxmltree::Node<'_, '_>)> = Vec::new();
    let mut selected = Vec::new();
    let mut inside = false;
    for measure in part_node
        .children()
        .filter(|node| node.has_tag_name("measure"))
    {
        let number = measure.attribute("number").unwrap_or("").trim();
        if !inside && number == first_bar.trim() {
            inside = true;
        }
        if !inside {
            for attributes in measure
                .children()
                .filter(|node| node.has_tag_name("attributes"))
            {
                for item in attributes.children().filter(|node| node.is_element()) {
                    let kind = item.tag_name().name();
                    if matches!(kind, "divisions" | "key" | "time" | "staves" | "clef") {
                        in_force.retain(|(seen, _)| *seen != kind || kind == "clef");
                        if kind == "clef" {
                            let staff = item.attribute("number");
                            in_force.retain(|(seen, node)| {
                                *seen != "clef" || node.attribute("number") != staff
                            });
                        }
                        in_force.push((kind, item));
                    }
                }
            }
            continue;
        }
        selected.push(measure);
        if number == last_bar.trim() {
            break;
        }
    }
    if selected.is_empty() {
        return Err(unsupported(format!(
            "part \"{wanted}\" has no bar numbered {first_bar}"
        )));
    }
    let slice = |node: roxmltree::Node<'_, '_>| text.get(node.range()).unwrap_or("");
    let mut out = String::from(
        "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<score-partwise version=\"4.0\">\n<part-list>",
    );
    out.push_str(slice(score_part));
    out.push_str("</part-list>\n<part id=\"");
    out.push_str(&id.replace('&', "&amp;").replace('"', "&quot;"));
    out.push_str("\">\n");
    for (index, measure) in selected.iter().enumerate() {
        let whole = slice(*measure);
        let body_start = measure
            .first_child()
            .map(|first| first.range().start.saturating_sub(measure.range().start));
        match (index, body_start) {
            (0, Some(start)) if !in_force.is_empty() => {
                let (head, rest) = whole.split_at(start.min(whole.len()));
                out.push_str(head);
                out.push_str("<attributes>");
                // MusicXML's order inside <attributes>: divisions, key, time, staves, clef.
                for kind in ["divisions", "key", "time", "staves", "clef"] {
                    for (_, node) in in_force.iter().filter(|(seen, _)| *seen == kind) {
                        out.push_str(slice(*node));
                    }
                }
                out.push_str("</attributes>");
                out.push_str(rest);
            }
            _ => out.push_str(whole),
        }
        out.push('\n');
    }
    out.push_str("</part>\n</score-partwise>\n");
    Ok(out)
}
