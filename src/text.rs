//! User text at the edges: names checked at input, CSV cells made safe for
//! spreadsheets, and text made safe for a terminal. One function for each,
//! used by every writer (roster export, profile rows, seating list, demo
//! roster) and every front end.
//!
//! Architecture invariant: pure functions of a string; no I/O.

use std::borrow::Cow;

/// Longest name Ambit accepts for a singer, piece, programme or scenario, in
/// characters (Unicode scalar values). Chosen here: far above any real name
/// and short enough that a table column stays printable.
pub const MAX_NAME_CHARS: usize = 200;

/// Widest column a text table pads to, in characters. A longer cell (a name
/// stored before the limit, a long track name from a score) is printed whole
/// and the column is not widened beyond this.
pub const MAX_COLUMN_CHARS: usize = MAX_NAME_CHARS;

/// Checks a name typed or imported by the user: not empty, at most
/// [`MAX_NAME_CHARS`] characters, and free of control characters (which
/// could rewrite a terminal or split a CSV row). `what` names the thing, e.g.
/// "the singer's name". The message is meant to be shown as it is.
pub fn check_name(what: &str, name: &str) -> Result<(), String> {
    let trimmed = name.trim();
    if trimmed.is_empty() {
        return Err(format!("{what} is empty"));
    }
    let chars = trimmed.chars().count();
    if chars > MAX_NAME_CHARS {
        return Err(format!(
            "{what} is {chars} characters long; names are at most {MAX_NAME_CHARS} characters"
        ));
    }
    if let Some(position) = trimmed.chars().position(is_unsafe_for_terminal) {
        return Err(format!(
            "{what} holds a control character at character {} ({}); names are plain text",
            position + 1,
            terminal_safe(&trimmed.chars().skip(position).take(1).collect::<String>())
        ));
    }
    Ok(())
}

/// Characters a terminal may act on rather than show: every C0 and C1
/// control (ESC starts ANSI sequences, CR and BS overwrite what was shown),
/// DEL, and the Unicode bidirectional overrides and isolates (which can
/// make text read differently from what it is; Unicode TR #9).
fn is_unsafe_for_terminal(c: char) -> bool {
    c.is_control() || matches!(c, '\u{202A}'..='\u{202E}' | '\u{2066}'..='\u{2069}')
}

/// Text made safe to print to a terminal: every control character except
/// line feed and tab, and every bidirectional override, is replaced by a
/// visible escape (`\x1b`, `\u{202e}`), so user data (names, track names,
/// notes, file names) can never move the cursor, change colours or retitle
/// the window. Text without such characters is returned unchanged.
pub fn terminal_safe(text: &str) -> Cow<'_, str> {
    let unsafe_char = |c: char| c != '\n' && c != '\t' && is_unsafe_for_terminal(c);
    if !text.chars().any(unsafe_char) {
        return Cow::Borrowed(text);
    }
    let mut safe = String::with_capacity(text.len() + 8);
    for c in text.chars() {
        if !unsafe_char(c) {
            safe.push(c);
        } else if (c as u32) < 0x100 {
            safe.push_str(&format!("\\x{:02x}", c as u32));
        } else {
            safe.push_str(&format!("\\u{{{:x}}}", c as u32));
        }
    }
    Cow::Owned(safe)
}

/// Pads `text` with spaces to `width` characters (no padding when it is
/// already as wide). Written out rather than with `{:<width$}`, whose width
/// must fit in 16 bits: a 65,536-character name must not end the program.
pub fn pad_right(text: &str, width: usize) -> String {
    let chars = text.chars().count();
    let mut padded = String::with_capacity(text.len() + width.saturating_sub(chars));
    padded.push_str(text);
    padded.extend(std::iter::repeat_n(' ', width.saturating_sub(chars)));
    padded
}

/// The width of a text column holding `cells`: the widest cell in
/// characters, at least `minimum`, at most [`MAX_COLUMN_CHARS`].
pub fn column_width<'a>(cells: impl IntoIterator<Item = &'a str>, minimum: usize) -> usize {
    cells
        .into_iter()
        .map(|cell| cell.chars().count())
        .max()
        .unwrap_or(0)
        .max(minimum)
        .min(MAX_COLUMN_CHARS.max(minimum))
}

/// The first characters a spreadsheet takes as the start of a formula or a
/// command (OWASP, "CSV Injection": `=`, `+`, `-`, `@`, tab, carriage return).
const FORMULA_STARTS: [char; 6] = ['=', '+', '-', '@', '\t', '\r'];

/// Neutralising prefix (OWASP, "CSV Injection": prepend a single quote so a
/// spreadsheet shows the cell as text).
const QUOTE: char = '\'';

/// A CSV cell made safe for spreadsheets, following the OWASP guidance on
/// CSV injection: a cell that starts with `=`, `+`, `-`, `@`, tab or
/// carriage return gets a leading single quote, so a spreadsheet shows it as
/// text instead of running it. Plain numbers (`-3`, `-0.25`) are data, not
/// formulas, and stay as they are. A cell that already starts with a single
/// quote gets one more, so [`csv_cell_read`] gives back exactly what was
/// written. The CSV writer's own quoting handles commas and quotes.
pub fn csv_cell(text: &str) -> Cow<'_, str> {
    let needs_quote = match text.chars().next() {
        Some(QUOTE) => true,
        Some(first) if FORMULA_STARTS.contains(&first) => !is_plain_number(text),
        _ => false,
    };
    if needs_quote {
        Cow::Owned(format!("{QUOTE}{text}"))
    } else {
        Cow::Borrowed(text)
    }
}

/// A cell as read back: undoes [`csv_cell`] (a leading single quote before
/// a formula character or another single quote is removed). Any other text
/// is returned as it is.
pub fn csv_cell_read(text: &str) -> &str {
    match text.strip_prefix(QUOTE) {
        Some(rest)
            if rest
                .chars()
                .next()
                .is_some_and(|c| c == QUOTE || FORMULA_STARTS.contains(&c)) =>
        {
            rest
        }
        _ => text,
    }
}

/// `-12`, `+3.5`, `-0.25`: an optional sign, digits, an optional decimal
/// part. Nothing a spreadsheet would evaluate as a formula.
fn is_plain_number(text: &str) -> bool {
    let unsigned = text.strip_prefix(['-', '+']).unwrap_or(text);
    let (whole, fraction) = unsigned.split_once('.').unwrap_or((unsigned, "0"));
    !whole.is_empty()
        && !fraction.is_empty()
        && whole.bytes().all(|b| b.is_ascii_digit())
        && fraction.bytes().all(|b| b.is_ascii_digit())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn formula_cells_get_a_quote_per_owasp() {
        // OWASP "CSV Injection": cells starting with = + - @ tab CR are prefixed with '.
        for cell in [
            "=HYPERLINK(\"x\")",
            "+1+1",
            "-2+3",
            "@SUM(A1)",
            "\tx",
            "\rx",
        ] {
            let safe = csv_cell(cell);
            assert_eq!(safe, format!("'{cell}"));
            assert_eq!(csv_cell_read(&safe), cell);
        }
    }

    #[test]
    fn numbers_names_and_pitches_are_left_alone() {
        // Pitch cells are note names in scientific pitch notation (C#4) or
        // MIDI numbers; fits are non-negative decimals.
        for cell in [
            "-3",
            "-0.25",
            "+4",
            "63.50",
            "C#4",
            "Bb2",
            "Ilse Marwick",
            "",
        ] {
            assert_eq!(csv_cell(cell), cell);
            assert_eq!(csv_cell_read(cell), cell);
        }
        // Not numbers: a spreadsheet would evaluate these.
        assert_eq!(csv_cell("-1e5"), "'-1e5");
        assert_eq!(csv_cell("-.5"), "'-.5");
        assert_eq!(csv_cell("-"), "'-");
    }

    #[test]
    fn a_leading_quote_round_trips() {
        for cell in ["'Ann", "''=x", "'"] {
            assert_eq!(csv_cell_read(&csv_cell(cell)), cell);
        }
    }

    #[test]
    fn terminal_text_escapes_controls_but_keeps_lines() {
        assert_eq!(terminal_safe("Maren\u{1b}[2J"), "Maren\\x1b[2J");
        assert_eq!(terminal_safe("a\rb\u{7f}"), "a\\x0db\\x7f");
        assert_eq!(terminal_safe("\u{9b}31m"), "\\x9b31m");
        assert_eq!(terminal_safe("abc\u{202e}def"), "abc\\u{202e}def");
        assert!(matches!(terminal_safe("two\nlines\tok"), Cow::Borrowed(_)));
    }

    #[test]
    fn names_are_checked() {
        assert!(check_name("the name", "Ilse Marwick").is_ok());
        assert!(check_name("the name", &"é".repeat(MAX_NAME_CHARS)).is_ok());
        let long = check_name("the name", &"x".repeat(MAX_NAME_CHARS + 1)).unwrap_err();
        assert!(long.contains("201 characters"), "{long}");
        let control = check_name("the name", "Ann\u{1b}[31m").unwrap_err();
        assert!(control.contains("character 4 (\\x1b)"), "{control}");
        assert!(check_name("the name", "  ").is_err());
    }

    #[test]
    fn padding_and_widths_never_overflow() {
        let long = "x".repeat(70_000);
        assert_eq!(column_width([long.as_str(), "ab"], 4), MAX_COLUMN_CHARS);
        assert_eq!(pad_right(&long, MAX_COLUMN_CHARS).len(), 70_000);
        assert_eq!(pad_right("ab", 4), "ab  ");
        assert_eq!(column_width(["ab"], 6), 6);
    }
}
