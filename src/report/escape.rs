//! Escaping text for HTML and SVG. Class names, paths and sentences come from user data, so
//! every piece of text that reaches markup goes through [`escape`]; that keeps a class called
//! `<b>&` from changing the page's structure.

/// Escape the five characters that are special in HTML/XML text and attribute values.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for ch in text.chars() {
        match ch {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::escape;

    #[test]
    fn escapes_markup_characters() {
        // The HTML spec's special characters in text and attributes (common practice, no source).
        assert_eq!(escape(r#"<b>&"'"#), "&lt;b&gt;&amp;&quot;&#39;");
        assert_eq!(escape("plain é"), "plain é");
    }
}
