//! Reads back the SVG figures of the render tests: parses them as XML with quick-xml
//! (a failure is a malformed document) and lists the elements with their attributes
//! and text.

use quick_xml::events::Event;
use quick_xml::Reader;
use std::collections::HashMap;

/// One element of a parsed document.
#[derive(Debug, Clone)]
pub struct Element {
    /// Tag name.
    pub name: String,
    /// Attributes, unescaped.
    pub attrs: HashMap<String, String>,
    /// Text directly inside, unescaped.
    pub text: String,
}

impl Element {
    /// A numeric attribute.
    pub fn num(&self, key: &str) -> f64 {
        self.attrs
            .get(key)
            .unwrap_or_else(|| panic!("<{}> has no {key}", self.name))
            .parse()
            .unwrap()
    }

    /// True when the element has this class.
    pub fn has_class(&self, class: &str) -> bool {
        self.attrs
            .get("class")
            .is_some_and(|c| c.split_whitespace().any(|x| x == class))
    }
}

/// Every element of `svg` in document order; panics if the text is not well-formed XML
/// or its root is not an `<svg>` of the given width and height.
pub fn parse_svg(svg: &str, width: u32, height: u32) -> Vec<Element> {
    let mut reader = Reader::from_str(svg);
    let mut elements: Vec<Element> = Vec::new();
    let mut stack: Vec<usize> = Vec::new();
    loop {
        match reader.read_event().unwrap() {
            Event::Start(e) => {
                elements.push(element(&e));
                stack.push(elements.len() - 1);
            }
            Event::Empty(e) => elements.push(element(&e)),
            Event::End(_) => {
                stack.pop().expect("unbalanced end tag");
            }
            Event::Text(t) => {
                if let Some(&i) = stack.last() {
                    elements[i].text.push_str(&t.decode().unwrap());
                }
            }
            Event::GeneralRef(r) => {
                let c = match r.resolve_char_ref().unwrap() {
                    Some(c) => c,
                    None => match r.decode().unwrap().as_ref() {
                        "amp" => '&',
                        "lt" => '<',
                        "gt" => '>',
                        "quot" => '"',
                        "apos" => '\'',
                        other => panic!("unknown entity &{other};"),
                    },
                };
                if let Some(&i) = stack.last() {
                    elements[i].text.push(c);
                }
            }
            Event::Eof => break,
            _ => {}
        }
    }
    assert!(stack.is_empty(), "unclosed elements");
    let root = &elements[0];
    assert_eq!(root.name, "svg");
    assert_eq!(root.num("width"), f64::from(width));
    assert_eq!(root.num("height"), f64::from(height));
    assert_eq!(
        root.attrs["viewBox"],
        format!("0 0 {width} {height}"),
        "viewBox matches the size"
    );
    elements
}

fn element(e: &quick_xml::events::BytesStart<'_>) -> Element {
    let name = String::from_utf8(e.name().as_ref().to_vec()).unwrap();
    let mut attrs = HashMap::new();
    for a in e.attributes() {
        let a = a.unwrap();
        let key = String::from_utf8(a.key.as_ref().to_vec()).unwrap();
        let value = a.unescape_value().unwrap().into_owned();
        assert!(
            attrs.insert(key.clone(), value).is_none(),
            "duplicate {key}"
        );
    }
    Element {
        name,
        attrs,
        text: String::new(),
    }
}

/// Write a figure under target/test-scratch/<dir>/ so a person can look at it.
pub fn keep(dir: &str, name: &str, svg: &str) {
    let dir = super::scratch_root().join(dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join(name), svg).unwrap();
}
