//! A byte-level pass over an XML document before it is parsed, enforcing the
//! limits the tree parser does not: element nesting depth and entity
//! declarations.
//!
//! roxmltree builds its tree without recursion and guards entity expansion
//! with a depth/count detector, but it puts no bound on element nesting, and
//! our own walks over the tree must stay shallow. MusicXML never needs more
//! than about a dozen levels, and never declares entities (its DOCTYPE only
//! names the public DTD), so both are refused here, before any tree exists.
//!
//! A DOCTYPE with an internal subset (`<!DOCTYPE x [ … ]>`) is refused whole,
//! whatever it holds. Looking inside it for `<!ENTITY` is not enough: the
//! subset's grammar (processing instructions, comments, parameter-entity
//! references, quoted literals) can hide a declaration from any scan short of
//! a full DTD parser, e.g. between two processing instructions whose quotes
//! pair up, and MusicXML files have no use for a subset.
//!
//! Invariant: the scan is linear in the input and allocates nothing; it never
//! decides well-formedness (the parser does that), only the two limits.

/// Deepest element nesting accepted. MusicXML's deepest paths
/// (`score-partwise/part/measure/note/notations/technical/…`) stay under 12.
pub const MAX_NESTING_DEPTH: usize = 64;

/// Why the scan refused a document, with the byte offset of the offending tag.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum PrescanError {
    TooDeep {
        offset: usize,
    },
    EntityDeclaration {
        offset: usize,
    },
    /// `offset` is the `[` that opens the subset.
    InternalSubset {
        offset: usize,
    },
}

/// Checks nesting depth and entity declarations. Malformed markup is left
/// for the parser to report.
pub fn prescan(text: &[u8]) -> Result<(), PrescanError> {
    let mut depth = 0usize;
    let mut index = 0usize;
    while let Some(step) = text.get(index..).and_then(|rest| memchr(b'<', rest)) {
        let start = index + step;
        let rest = &text[start..];
        if rest.starts_with(b"<!--") {
            index = skip_past(text, start + 4, b"-->");
        } else if rest.starts_with(b"<![CDATA[") {
            index = skip_past(text, start + 9, b"]]>");
        } else if rest.starts_with(b"<?") {
            index = skip_past(text, start + 2, b"?>");
        } else if rest.starts_with(b"<!") {
            index = skip_declaration(text, start)?;
        } else if rest.starts_with(b"</") {
            depth = depth.saturating_sub(1);
            index = skip_tag(text, start + 2).0;
        } else {
            let (end, self_closing) = skip_tag(text, start + 1);
            if !self_closing {
                depth += 1;
                if depth > MAX_NESTING_DEPTH {
                    return Err(PrescanError::TooDeep { offset: start });
                }
            }
            index = end;
        }
    }
    Ok(())
}

fn memchr(needle: u8, haystack: &[u8]) -> Option<usize> {
    haystack.iter().position(|&byte| byte == needle)
}

/// Index just past the next `terminator` at or after `from` (or the end).
fn skip_past(text: &[u8], from: usize, terminator: &[u8]) -> usize {
    text.get(from..)
        .and_then(|rest| {
            rest.windows(terminator.len())
                .position(|window| window == terminator)
        })
        .map_or(text.len(), |position| from + position + terminator.len())
}

/// Skips a start or end tag, honouring quoted attribute values; returns the
/// index past `>` and whether the tag closed itself (`/>`).
fn skip_tag(text: &[u8], from: usize) -> (usize, bool) {
    let mut quote: Option<u8> = None;
    let mut previous = 0u8;
    for (offset, &byte) in text.get(from..).unwrap_or_default().iter().enumerate() {
        match quote {
            Some(open) if byte == open => quote = None,
            Some(_) => {}
            None if byte == b'"' || byte == b'\'' => quote = Some(byte),
            None if byte == b'>' => return (from + offset + 1, previous == b'/'),
            None => {}
        }
        previous = byte;
    }
    (text.len(), false)
}

/// Skips `<!DOCTYPE …>` or any other `<!…>` declaration, honouring the
/// quoted public and system literals. An internal subset (`[` outside a
/// literal) is refused, and so is a top-level `<!ENTITY`.
fn skip_declaration(text: &[u8], start: usize) -> Result<usize, PrescanError> {
    if text
        .get(start..)
        .is_some_and(|rest| rest.starts_with(b"<!ENTITY"))
    {
        return Err(PrescanError::EntityDeclaration { offset: start });
    }
    let mut quote: Option<u8> = None;
    let mut index = start + 2;
    while let Some(&byte) = text.get(index) {
        match quote {
            Some(open) if byte == open => quote = None,
            Some(_) => {}
            None => match byte {
                b'"' | b'\'' => quote = Some(byte),
                b'[' => return Err(PrescanError::InternalSubset { offset: index }),
                b'>' => return Ok(index + 1),
                _ => {}
            },
        }
        index += 1;
    }
    Ok(text.len())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn counts_nesting_but_not_empty_elements_comments_or_attributes() {
        let text = b"<a><b x='>'/><!-- <c><c><c> --><c></c></a>";
        assert_eq!(prescan(text), Ok(()));
        let deep = "<a>".repeat(MAX_NESTING_DEPTH + 1);
        assert_eq!(
            prescan(deep.as_bytes()),
            Err(PrescanError::TooDeep {
                offset: 3 * MAX_NESTING_DEPTH
            })
        );
    }

    #[test]
    fn public_doctype_passes_and_entity_declarations_do_not() {
        let public = br#"<!DOCTYPE score-partwise PUBLIC "-//Recordare//DTD MusicXML 4.0 Partwise//EN" "http://www.musicxml.org/dtds/partwise.dtd"><score-partwise/>"#;
        assert_eq!(prescan(public), Ok(()));
        let entity = br#"<!DOCTYPE s [<!ENTITY lol "lol">]><s>&lol;</s>"#;
        assert_eq!(
            prescan(entity),
            Err(PrescanError::InternalSubset { offset: 12 })
        );
        assert_eq!(
            prescan(b"<!ENTITY lol 'lol'><s/>"),
            Err(PrescanError::EntityDeclaration { offset: 0 })
        );
    }

    #[test]
    fn an_entity_hidden_between_processing_instructions_is_refused() {
        // The quotes of the two processing instructions pair up, so a scan
        // that treats them as literals never sees the declaration between
        // them (issue 17); the subset itself is refused at its `[`.
        let hidden = br#"<!DOCTYPE s [<?a '?><!ENTITY x "xxxxxxxx"><?b '?>]><s>&x;</s>"#;
        assert_eq!(
            prescan(hidden),
            Err(PrescanError::InternalSubset { offset: 12 })
        );
        // An empty subset is refused too: there is no safe subset to allow.
        assert_eq!(
            prescan(b"<!DOCTYPE s []><s/>"),
            Err(PrescanError::InternalSubset { offset: 12 })
        );
        // A '[' inside the system literal is part of the literal.
        assert_eq!(prescan(br#"<!DOCTYPE s SYSTEM "dtd[1].dtd"><s/>"#), Ok(()));
    }
}
