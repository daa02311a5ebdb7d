//! Names as they may be shown on a terminal. Class names and paths come from user files, so
//! before they reach a terminal their control characters (ESC, CR, backspace, newlines, ...)
//! are written as visible escapes, which keeps a name from moving the cursor, recolouring the
//! screen or breaking a table's rows, and very long names are cut so a table stays a table.

/// A class name as a terminal table shows it: escaped, and cut to 60 characters so one long
/// name cannot widen every row.
pub fn table_name(name: &str) -> String {
    display_name(name, 60)
}

/// `name` with control characters escaped (`\e`, `\r`, `\n`, `\t`, `\u{7f}`, ...) and cut to
/// at most `max` characters (a cut name ends in `…`).
pub fn display_name(name: &str, max: usize) -> String {
    let max = max.max(2);
    let mut out = String::new();
    let mut count = 0usize;
    for ch in name.chars() {
        let piece: String = match ch {
            '\n' => "\\n".into(),
            '\r' => "\\r".into(),
            '\t' => "\\t".into(),
            '\u{1b}' => "\\e".into(),
            '\0' => "\\0".into(),
            c if c.is_control() || is_bidi_override(c) => format!("\\u{{{:x}}}", c as u32),
            c => c.to_string(),
        };
        count += piece.chars().count();
        out.push_str(&piece);
        // Stop early on huge names: only the first `max` characters can be shown.
        if count > max {
            break;
        }
    }
    if count <= max {
        return out;
    }
    let mut cut: String = out.chars().take(max - 1).collect();
    cut.push('…');
    cut
}

/// A multi-line message for a terminal: each line as [`display_name`] shows a name, cut to
/// `max_line` characters, and at most `max_lines` lines (the rest summarised), so a message
/// quoting a hostile file can neither drive the terminal nor fill it.
pub fn display_text(text: &str, max_line: usize, max_lines: usize) -> String {
    let lines: Vec<&str> = text.lines().collect();
    let mut out: Vec<String> = lines
        .iter()
        .take(max_lines)
        .map(|l| display_name(l, max_line))
        .collect();
    if lines.len() > max_lines {
        out.push(format!("… ({} more lines)", lines.len() - max_lines));
    }
    out.join("\n")
}

/// Unicode's explicit direction overrides and isolates, which can reorder what a terminal
/// shows.
fn is_bidi_override(c: char) -> bool {
    matches!(c, '\u{202a}'..='\u{202e}' | '\u{2066}'..='\u{2069}')
}

#[cfg(test)]
mod tests {
    use super::{display_name, display_text};

    #[test]
    fn escapes_controls_and_cuts_long_names() {
        // ECMA-48 control characters (common practice, no source).
        assert_eq!(display_name("a\u{1b}[31mb\r\n", 80), "a\\e[31mb\\r\\n");
        assert_eq!(display_name("plain é", 80), "plain é");
        let long = "x".repeat(70_000);
        let d = display_name(&long, 40);
        assert_eq!(d.chars().count(), 40);
        assert!(d.ends_with('…'));
        assert_eq!(display_name("abcd", 4), "abcd");
        assert_eq!(display_name("abcde", 4), "abc…");
        assert_eq!(display_text("a\u{1b}\nb", 10, 5), "a\\e\nb");
    }
}
