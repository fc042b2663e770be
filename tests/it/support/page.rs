//! Reading a report page in tests: parse it as XML, collect its pictures, and check each embedded PNG and inline SVG against its stated size.

use base64::Engine;
use quick_xml::events::{BytesStart, Event};

pub fn attr(e: &BytesStart<'_>, name: &str) -> Option<String> {
    e.attributes()
        .map(|a| a.unwrap())
        .find(|a| a.key.as_ref() == name.as_bytes())
        .map(|a| a.unescape_value().unwrap().into_owned())
}

/// What the test reads off a page.
#[derive(Default)]
pub struct Page {
    /// (src, width, height) of every `<img>`.
    pub images: Vec<(String, String, String)>,
    /// Source text of every outermost `<svg>` element.
    pub svgs: Vec<String>,
    /// Every element name.
    pub elements: Vec<String>,
    /// Every attribute value.
    pub attribute_values: Vec<String>,
    /// Every `id` attribute.
    pub ids: Vec<String>,
    /// All text content, unescaped.
    pub text: String,
}

/// Parse the page as XML (it is written as well-formed XML; a parse error
/// fails the test) and collect images, inline SVGs and text.
pub fn parse(html: &str) -> Page {
    let mut reader = quick_xml::Reader::from_str(html);
    let mut page = Page::default();
    let mut svg_depth = 0usize;
    let mut svg_start = 0usize;
    loop {
        let before = reader.buffer_position() as usize;
        let event = reader
            .read_event()
            .unwrap_or_else(|e| panic!("page is not well-formed at byte {before}: {e}"));
        match &event {
            Event::Start(e) | Event::Empty(e) => {
                let name = String::from_utf8(e.name().as_ref().to_vec()).unwrap();
                for a in e.attributes().map(|a| a.unwrap()) {
                    // A namespace name (xmlns) identifies, it is never fetched
                    // (Namespaces in XML 1.0, W3C 2009, section 2.2).
                    if !a.key.as_ref().starts_with(b"xmlns") {
                        page.attribute_values
                            .push(a.unescape_value().unwrap().into_owned());
                    }
                }
                if let Some(id) = attr(e, "id") {
                    page.ids.push(id);
                }
                // <image> inside an inline SVG states its size the same way.
                if name == "image" {
                    page.images.push((
                        attr(e, "href").unwrap_or_default(),
                        attr(e, "width").unwrap_or_default(),
                        attr(e, "height").unwrap_or_default(),
                    ));
                }
                if name == "img" {
                    page.images.push((
                        attr(e, "src").unwrap_or_default(),
                        attr(e, "width").unwrap_or_default(),
                        attr(e, "height").unwrap_or_default(),
                    ));
                }
                if name == "svg" && matches!(event, Event::Start(_)) {
                    if svg_depth == 0 {
                        svg_start = before;
                    }
                    svg_depth += 1;
                }
                page.elements.push(name);
            }
            Event::End(e) if e.name().as_ref() == b"svg" => {
                svg_depth -= 1;
                if svg_depth == 0 {
                    let end = reader.buffer_position() as usize;
                    page.svgs.push(html[svg_start..end].to_string());
                }
            }
            Event::Text(t) => page.text.push_str(&t.decode().unwrap()),
            Event::GeneralRef(r) => {
                // Character and predefined entity references inside text.
                let name = r.decode().unwrap();
                let ch = match name.as_ref() {
                    "amp" => "&".to_string(),
                    "lt" => "<".to_string(),
                    "gt" => ">".to_string(),
                    "quot" => "\"".to_string(),
                    "apos" => "'".to_string(),
                    other => other
                        .strip_prefix('#')
                        .and_then(|n| n.parse::<u32>().ok())
                        .and_then(char::from_u32)
                        .map(|c| c.to_string())
                        .unwrap_or_else(|| panic!("unknown entity &{other};")),
                };
                page.text.push_str(&ch);
            }
            Event::Eof => break,
            _ => {}
        }
    }
    page
}

/// A positive number from an attribute value (an optional `px` suffix).
pub fn number(text: &str, what: &str) -> f64 {
    let v: f64 = text
        .trim_end_matches("px")
        .parse()
        .unwrap_or_else(|_| panic!("{what} = {text:?}: expected a number"));
    assert!(
        v.is_finite() && v > 0.0,
        "{what} = {v}: expected a positive size"
    );
    v
}

/// Check every picture of `page`: each image is a PNG data URI whose IHDR
/// size is the tag's width and height, or an enlargement
/// of it with the same aspect ratio to one pixel (a picture drawn at print
/// resolution and shown at page size; PNG, ISO/IEC 15948:2004), and each
/// inline SVG parses and has a viewBox of its width and height to 1e-9 (SVG
/// 1.1, W3C 2011, section 7.2; the reports draw in user units). Returns
/// (PNGs, SVGs) checked.
pub fn check_pictures(page: &Page) -> (usize, usize) {
    for (i, (src, width, height)) in page.images.iter().enumerate() {
        let (pw, ph) = png_size(src, i);
        let (tw, th) = (number(width, "image width"), number(height, "image height"));
        assert!(
            pw >= tw && ph >= th,
            "image {i}: drawn at {pw} x {ph}, shown at {tw} x {th} (drawn smaller than shown)"
        );
        // Same aspect ratio: the drawn height is the shown height scaled
        // like the width, to one pixel.
        assert!(
            (ph - th * pw / tw).abs() <= 1.0,
            "image {i}: drawn at {pw} x {ph}, shown at {tw} x {th} (aspect ratio differs)"
        );
    }
    for (i, svg) in page.svgs.iter().enumerate() {
        let mut reader = quick_xml::Reader::from_str(svg);
        let mut root = None;
        loop {
            match reader
                .read_event()
                .unwrap_or_else(|e| panic!("svg {i} does not parse: {e}"))
            {
                Event::Start(e) if root.is_none() => {
                    root = Some((
                        attr(&e, "width").unwrap_or_default(),
                        attr(&e, "height").unwrap_or_default(),
                        attr(&e, "viewBox").unwrap_or_default(),
                    ))
                }
                Event::Eof => break,
                _ => {}
            }
        }
        let (w, h, view_box) = root.unwrap();
        let (w, h) = (number(&w, "svg width"), number(&h, "svg height"));
        let vb: Vec<f64> = view_box
            .split([' ', ','])
            .filter(|s| !s.is_empty())
            .map(|s| s.parse().unwrap())
            .collect();
        assert_eq!(vb.len(), 4, "svg {i}: viewBox {view_box:?}");
        assert!(
            (vb[2] - w).abs() <= 1e-9 && (vb[3] - h).abs() <= 1e-9,
            "svg {i}: viewBox {view_box:?} vs {w} x {h}"
        );
    }
    (page.images.len(), page.svgs.len())
}

/// Assert that `html` is self-contained (common practice, no source): no
/// attribute points outside the page, no script, no external style sheet,
/// no url() in the style except data: or a fragment, and the content
/// security policy that forbids fetches.
pub fn assert_self_contained(html: &str) {
    let lower = html.to_lowercase();
    for bad in [
        "src=\"http",
        "href=\"http",
        "url(http",
        "src='http",
        "href='http",
        "@import",
    ] {
        assert!(!lower.contains(bad), "page contains {bad:?}");
    }
    let page = parse(html);
    for el in ["script", "link", "iframe", "object", "embed", "base"] {
        assert!(
            !page.elements.iter().any(|e| e == el),
            "page has a <{el}> element"
        );
    }
    for v in page.attribute_values.iter().map(|v| v.to_lowercase()) {
        assert!(
            !v.starts_with("http:")
                && !v.starts_with("https:")
                && !v.starts_with("file:")
                && !v.starts_with("//"),
            "attribute value {v:?} points outside the page"
        );
    }
    for (i, (src, _, _)) in page.images.iter().enumerate() {
        assert!(src.starts_with("data:"), "image {i} is not embedded");
    }
    for (i, part) in lower.split("url(").enumerate().skip(1) {
        assert!(
            part.starts_with('#')
                || part.starts_with("data:")
                || part.starts_with("'#")
                || part.starts_with("\"#"),
            "url( number {i} is not a fragment or data URI"
        );
    }
    // The page also forbids fetches to the browser itself.
    assert!(html.contains("Content-Security-Policy"));
    assert!(html.contains("default-src 'none'"));
}

/// The width and height (px) in the IHDR of image `i`'s PNG data URI, after
/// decoding the whole image.
pub fn png_size(src: &str, i: usize) -> (f64, f64) {
    let data = src
        .strip_prefix("data:image/png;base64,")
        .unwrap_or_else(|| panic!("image {i}: src is not a PNG data URI"));
    let bytes = base64::engine::general_purpose::STANDARD
        .decode(data)
        .unwrap_or_else(|e| panic!("image {i}: base64: {e}"));
    let decoder = png::Decoder::new(std::io::Cursor::new(bytes));
    let mut reader = decoder.read_info().unwrap();
    let mut buf = vec![0u8; reader.output_buffer_size().unwrap()];
    let frame = reader.next_frame(&mut buf).unwrap();
    (f64::from(frame.width), f64::from(frame.height))
}
