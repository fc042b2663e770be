//! Small pieces for writing the report's HTML: escaping, a string builder
//! for elements and tables, number formats and PNG data URIs.
//!
//! The page is written as well-formed XML (every element closed, attributes
//! quoted, void elements self-closed), which HTML5 parsers accept as it is,
//! so tests can parse the whole page with an XML reader.

use base64::Engine;

/// Escape text for use in element content or a double- or single-quoted
/// attribute value: `&`, `<`, `>`, `"` and `'` become character references.
/// Control characters other than tab, newline and carriage return are
/// dropped because XML 1.0 does not allow them at all.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + text.len() / 8);
    for ch in text.chars() {
        match ch {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            '\t' | '\n' | '\r' => out.push(ch),
            c if c.is_control() => {}
            c => out.push(c),
        }
    }
    out
}

/// A PNG as a `data:` URI (base64), so the page needs no other file.
pub fn png_data_uri(png: &[u8]) -> String {
    let mut uri = String::from("data:image/png;base64,");
    base64::engine::general_purpose::STANDARD.encode_string(png, &mut uri);
    uri
}

/// An `<img>` element showing a PNG inline, its size stated in pixels.
pub fn png_img(png: &[u8], width: u32, height: u32, alt: &str) -> String {
    format!(
        "<img src=\"{}\" width=\"{width}\" height=\"{height}\" alt=\"{}\"/>",
        png_data_uri(png),
        escape(alt)
    )
}

/// A number with `digits` decimals, or an en dash when it is not finite
/// (NaN marks "not computed" throughout the result file).
pub fn fixed(value: f64, digits: usize) -> String {
    crate::io::table::format_fixed(value, digits, "\u{2013}")
}

/// A fraction as a percentage with `digits` decimals (en dash when not finite).
pub fn percent(fraction: f64, digits: usize) -> String {
    if fraction.is_finite() {
        format!("{:.digits$}\u{2009}%", 100.0 * fraction)
    } else {
        "\u{2013}".to_string()
    }
}

/// A number in scientific notation with `digits` significant decimals, the
/// exponent written as a power of ten with a superscript (e.g. 1.6×10⁻⁹).
pub fn scientific(value: f64, digits: usize) -> String {
    if !value.is_finite() {
        return "\u{2013}".to_string();
    }
    if value == 0.0 {
        return "0".to_string();
    }
    let text = format!("{value:.digits$e}");
    match text.split_once('e') {
        Some((mantissa, exponent)) if exponent != "0" => {
            format!(
                "{mantissa}\u{00d7}10<sup>{}</sup>",
                exponent.replace('-', "\u{2212}")
            )
        }
        Some((mantissa, _)) => mantissa.to_string(),
        None => text,
    }
}

/// A growing HTML document with helpers for the few constructs the report
/// uses. All text passed to `text`, `cell` and the attribute helpers is
/// escaped; `raw` takes markup the report made itself.
#[derive(Debug, Default, Clone)]
pub struct Html {
    buf: String,
}

impl Html {
    /// An empty document.
    pub fn new() -> Html {
        Html {
            buf: String::with_capacity(1 << 16),
        }
    }

    /// Append markup made by the report itself (not escaped).
    pub fn raw(&mut self, markup: &str) -> &mut Html {
        self.buf.push_str(markup);
        self
    }

    /// Append escaped text.
    pub fn text(&mut self, text: &str) -> &mut Html {
        self.buf.push_str(&escape(text));
        self
    }

    /// Open `<tag class="class">` (no class attribute when `class` is empty).
    pub fn open(&mut self, tag: &str, class: &str) -> &mut Html {
        if class.is_empty() {
            self.buf.push_str(&format!("<{tag}>"));
        } else {
            self.buf
                .push_str(&format!("<{tag} class=\"{}\">", escape(class)));
        }
        self
    }

    /// Close `</tag>`.
    pub fn close(&mut self, tag: &str) -> &mut Html {
        self.buf.push_str(&format!("</{tag}>"));
        self.buf.push('\n');
        self
    }

    /// A whole element holding escaped text.
    pub fn element(&mut self, tag: &str, class: &str, text: &str) -> &mut Html {
        self.open(tag, class);
        self.text(text);
        self.close(tag)
    }

    /// A table row of cells: the first a header cell (`th`) when
    /// `row_header` is set. Each cell is (markup, class); the markup is
    /// inserted as it is, so callers escape file strings with [`escape`].
    pub fn row(&mut self, cells: &[(String, &str)], row_header: bool) -> &mut Html {
        self.buf.push_str("<tr>");
        for (i, (markup, class)) in cells.iter().enumerate() {
            let tag = if row_header && i == 0 { "th" } else { "td" };
            if class.is_empty() {
                self.buf.push_str(&format!("<{tag}>{markup}</{tag}>"));
            } else {
                self.buf
                    .push_str(&format!("<{tag} class=\"{class}\">{markup}</{tag}>"));
            }
        }
        self.buf.push_str("</tr>\n");
        self
    }

    /// A table head row of escaped column names, each with a class.
    pub fn head_row(&mut self, columns: &[(&str, &str)]) -> &mut Html {
        self.buf.push_str("<thead><tr>");
        for (name, class) in columns {
            if class.is_empty() {
                self.buf.push_str(&format!("<th>{}</th>", escape(name)));
            } else {
                self.buf
                    .push_str(&format!("<th class=\"{class}\">{}</th>", escape(name)));
            }
        }
        self.buf.push_str("</tr></thead>\n");
        self
    }

    /// The document so far.
    pub fn as_str(&self) -> &str {
        &self.buf
    }

    /// The finished document.
    pub fn finish(self) -> String {
        self.buf
    }
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    // The five characters that XML 1.0 (W3C 2008, section 2.4 and 4.6)
    // reserves in content and attribute values, and their predefined
    // entity or character references.
    #[test]
    fn escapes_the_xml_special_characters() {
        assert_eq!(
            escape(r#"<a href="x">Tom & 'Jerry'</a>"#),
            "&lt;a href=&quot;x&quot;&gt;Tom &amp; &#39;Jerry&#39;&lt;/a&gt;"
        );
        assert_eq!(escape("bell\u{7}\ttab"), "bell\ttab");
    }

    // RFC 4648 (Josefsson 2006), section 10 test vector: BASE64("foobar") = "Zm9vYmFy".
    #[test]
    fn data_uri_is_base64_of_the_bytes() {
        assert_eq!(png_data_uri(b"foobar"), "data:image/png;base64,Zm9vYmFy");
    }

    #[test]
    fn numbers_read_as_written() {
        assert_eq!(fixed(0.12345, 3), "0.123");
        assert_eq!(fixed(f64::NAN, 3), "\u{2013}");
        assert_eq!(percent(0.6909, 1), "69.1\u{2009}%");
        assert_eq!(scientific(1.63e-9, 1), "1.6\u{00d7}10<sup>\u{2212}9</sup>");
        assert_eq!(scientific(2.5, 1), "2.5");
        assert_eq!(scientific(0.0, 1), "0");
    }
}
