//! A tiny SVG builder (rectangles, lines, polylines, paths, circles, text, embedded PNG
//! images, groups) that escapes every attribute value and text, and the [`Figure`] it
//! produces.

use base64::Engine;
use std::fmt::Write;

/// The typeface of every figure: plain and widely available.
pub const FONT_FAMILY: &str = "DejaVu Sans, Helvetica, Arial, sans-serif";

/// A finished SVG document and its size in CSS pixels.
#[derive(Debug, Clone, PartialEq)]
pub struct Figure {
    /// The SVG text (UTF-8, one `<svg>` root with `width`, `height` and `viewBox`).
    pub svg: String,
    /// Width (px).
    pub width: u32,
    /// Height (px).
    pub height: u32,
}

/// `text` with `&`, `<`, `>`, `"` and `'` replaced by XML entities, so it is safe as
/// element content and inside a double- or single-quoted attribute. Control characters
/// other than tab, line feed and carriage return, which XML 1.0 forbids, are dropped.
pub fn escape_xml(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            '\t' | '\n' | '\r' => out.push(c),
            c if (c as u32) < 0x20 => {}
            c => out.push(c),
        }
    }
    out
}

/// A coordinate or length with at most two decimals and no trailing zeros (SVG pixels;
/// a hundredth of a pixel is below what any screen shows). Non-finite numbers become 0
/// so the document stays valid.
pub fn num(v: f64) -> String {
    if !v.is_finite() {
        return "0".to_string();
    }
    let mut s = format!("{:.2}", v);
    if s.contains('.') {
        while s.ends_with('0') {
            s.pop();
        }
        if s.ends_with('.') {
            s.pop();
        }
    }
    if s == "-0" {
        s = "0".to_string();
    }
    s
}

/// Attributes of one element, in the order set. Values are escaped when written.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Attrs(Vec<(&'static str, String)>);

impl Attrs {
    /// No attributes.
    pub fn new() -> Self {
        Self(Vec::new())
    }

    /// Add `name="value"`.
    pub fn set(mut self, name: &'static str, value: impl ToString) -> Self {
        self.0.push((name, value.to_string()));
        self
    }

    /// `fill`.
    pub fn fill(self, colour: &str) -> Self {
        self.set("fill", colour)
    }

    /// `stroke` and `stroke-width` (px), no fill.
    pub fn stroke(self, colour: &str, width: f64) -> Self {
        self.set("fill", "none")
            .set("stroke", colour)
            .set("stroke-width", num(width))
    }

    /// `class` (used by the tests and by style sheets of the report).
    pub fn class(self, name: &str) -> Self {
        self.set("class", name)
    }

    fn write(&self, out: &mut String) {
        for (name, value) in &self.0 {
            let _ = write!(out, " {name}=\"{}\"", escape_xml(value));
        }
    }
}

/// An SVG document being built. Elements are appended in drawing order.
#[derive(Debug, Clone)]
pub struct Svg {
    width: u32,
    height: u32,
    body: String,
    open_groups: usize,
}

impl Svg {
    /// An empty document of `width` × `height` px with a `viewBox` of the same size.
    pub fn new(width: u32, height: u32) -> Self {
        Self {
            width,
            height,
            body: String::new(),
            open_groups: 0,
        }
    }

    fn element(&mut self, name: &str, geometry: &[(&str, f64)], attrs: &Attrs) {
        let _ = write!(self.body, "<{name}");
        for (key, value) in geometry {
            let _ = write!(self.body, " {key}=\"{}\"", num(*value));
        }
        attrs.write(&mut self.body);
        self.body.push_str("/>\n");
    }

    /// A rectangle with its top-left corner at (x, y).
    pub fn rect(&mut self, x: f64, y: f64, width: f64, height: f64, attrs: &Attrs) {
        self.element(
            "rect",
            &[
                ("x", x),
                ("y", y),
                ("width", width.max(0.0)),
                ("height", height.max(0.0)),
            ],
            attrs,
        );
    }

    /// A straight line.
    pub fn line(&mut self, x1: f64, y1: f64, x2: f64, y2: f64, attrs: &Attrs) {
        self.element(
            "line",
            &[("x1", x1), ("y1", y1), ("x2", x2), ("y2", y2)],
            attrs,
        );
    }

    /// A polyline through `points` (nothing is drawn for fewer than two points).
    pub fn polyline(&mut self, points: &[(f64, f64)], attrs: &Attrs) {
        if points.len() < 2 {
            return;
        }
        let list: Vec<String> = points
            .iter()
            .map(|&(x, y)| format!("{},{}", num(x), num(y)))
            .collect();
        self.element(
            "polyline",
            &[],
            &attrs.clone().set("points", list.join(" ")),
        );
    }

    /// A path with the path data `d` (built by the caller from [`num`]-formatted numbers).
    pub fn path(&mut self, d: &str, attrs: &Attrs) {
        self.element("path", &[], &attrs.clone().set("d", d));
    }

    /// A circle.
    pub fn circle(&mut self, cx: f64, cy: f64, r: f64, attrs: &Attrs) {
        self.element(
            "circle",
            &[("cx", cx), ("cy", cy), ("r", r.max(0.0))],
            attrs,
        );
    }

    /// Text with its anchor point at (x, y); `content` is escaped.
    pub fn text(&mut self, x: f64, y: f64, content: &str, attrs: &Attrs) {
        let _ = write!(self.body, "<text x=\"{}\" y=\"{}\"", num(x), num(y));
        attrs.write(&mut self.body);
        let _ = writeln!(self.body, ">{}</text>", escape_xml(content));
    }

    /// A PNG image inlined as a base64 `data:` URI, scaled to the given box.
    pub fn image_png(
        &mut self,
        x: f64,
        y: f64,
        width: f64,
        height: f64,
        png: &[u8],
        attrs: &Attrs,
    ) {
        let uri = format!(
            "data:image/png;base64,{}",
            base64::engine::general_purpose::STANDARD.encode(png)
        );
        self.element(
            "image",
            &[("x", x), ("y", y), ("width", width), ("height", height)],
            &attrs.clone().set("href", uri),
        );
    }

    /// Open a group `<g>`; close it with [`Svg::end_group`].
    pub fn begin_group(&mut self, attrs: &Attrs) {
        self.body.push_str("<g");
        attrs.write(&mut self.body);
        self.body.push_str(">\n");
        self.open_groups += 1;
    }

    /// Close the innermost open group (nothing happens when none is open).
    pub fn end_group(&mut self) {
        if self.open_groups > 0 {
            self.body.push_str("</g>\n");
            self.open_groups -= 1;
        }
    }

    /// The finished document; groups still open are closed. The root carries the
    /// default font family and size.
    pub fn finish(mut self) -> Figure {
        while self.open_groups > 0 {
            self.end_group();
        }
        let mut svg = String::with_capacity(self.body.len() + 300);
        let _ = writeln!(
            svg,
            "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{w}\" height=\"{h}\" \
             viewBox=\"0 0 {w} {h}\" font-family=\"{font}\" font-size=\"12\">",
            w = self.width,
            h = self.height,
            font = escape_xml(FONT_FAMILY),
        );
        svg.push_str(&self.body);
        svg.push_str("</svg>\n");
        Figure {
            svg,
            width: self.width,
            height: self.height,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn numbers_are_short_and_valid() {
        assert_eq!(num(1.0), "1");
        assert_eq!(num(1.2345), "1.23");
        assert_eq!(num(-0.001), "0");
        assert_eq!(num(f64::NAN), "0");
        assert_eq!(num(120.5), "120.5");
    }

    #[test]
    fn escapes_markup_characters() {
        assert_eq!(
            escape_xml("a<b & \"c\" 'd'>\u{1}"),
            "a&lt;b &amp; &quot;c&quot; &apos;d&apos;&gt;"
        );
    }
}
