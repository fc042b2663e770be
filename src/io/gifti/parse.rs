//! Walking a GIFTI document's XML: the DataArray elements, their
//! attributes, metadata and label tables.

use std::collections::BTreeMap;
use std::path::Path;

use quick_xml::events::Event;

use super::decode::{decode_array, RawArray};
use super::Gifti;
use crate::io::error::IoError;

pub(super) fn parse(path: &Path, text: &str) -> Result<Gifti, IoError> {
    let xml_err = |pos: u64, e: &dyn std::fmt::Display| {
        IoError::format(
            path,
            format!("byte {pos}"),
            format!("not well-formed XML: {e}"),
        )
    };
    let mut reader = quick_xml::Reader::from_str(text);
    let mut stack: Vec<String> = Vec::new();
    let mut raw_arrays: Vec<RawArray> = Vec::new();
    let mut labels = BTreeMap::new();
    let mut label_key: Option<i64> = None;
    let mut label_text = String::new();
    let mut saw_root = false;
    loop {
        let pos = reader.buffer_position();
        let event = reader.read_event().map_err(|e| xml_err(pos, &e))?;
        // Text is collected only inside <Data> of a DataArray and inside <Label>.
        let in_data = stack.last().is_some_and(|s| s == "Data")
            && stack.iter().rev().nth(1).is_some_and(|s| s == "DataArray");
        let in_label = stack.last().is_some_and(|s| s == "Label");
        match event {
            Event::Start(e) => {
                let name = String::from_utf8_lossy(e.name().as_ref()).into_owned();
                if stack.is_empty() {
                    if name != "GIFTI" {
                        return Err(IoError::format(
                            path,
                            "root element",
                            format!("found <{name}>, expected <GIFTI>"),
                        ));
                    }
                    saw_root = true;
                }
                handle_open(
                    path,
                    &name,
                    &e,
                    &mut raw_arrays,
                    &mut label_key,
                    &mut label_text,
                )?;
                stack.push(name);
            }
            Event::Empty(e) => {
                let name = String::from_utf8_lossy(e.name().as_ref()).into_owned();
                if stack.is_empty() {
                    return Err(IoError::format(path, "root element", "expected <GIFTI>"));
                }
                handle_open(
                    path,
                    &name,
                    &e,
                    &mut raw_arrays,
                    &mut label_key,
                    &mut label_text,
                )?;
                if name == "Label" {
                    if let Some(k) = label_key.take() {
                        labels.insert(k, String::new());
                    }
                }
            }
            Event::End(_) => {
                if let Some(name) = stack.pop() {
                    if name == "Label" {
                        if let Some(k) = label_key.take() {
                            labels.insert(k, label_text.trim().to_string());
                        }
                    }
                }
            }
            Event::Text(t) => {
                let s = t.decode().map_err(|e| xml_err(pos, &e))?;
                append_text(&s, in_data, in_label, &mut raw_arrays, &mut label_text);
            }
            Event::CData(t) => {
                let s = t.decode().map_err(|e| xml_err(pos, &e))?;
                append_text(&s, in_data, in_label, &mut raw_arrays, &mut label_text);
            }
            Event::GeneralRef(r) => {
                let resolved = match r.resolve_char_ref().map_err(|e| xml_err(pos, &e))? {
                    Some(c) => c.to_string(),
                    None => {
                        let name = r.decode().map_err(|e| xml_err(pos, &e))?;
                        match name.as_ref() {
                            "lt" => "<".to_string(),
                            "gt" => ">".to_string(),
                            "amp" => "&".to_string(),
                            "quot" => "\"".to_string(),
                            "apos" => "'".to_string(),
                            other => {
                                return Err(xml_err(pos, &format!("unknown entity &{other};")))
                            }
                        }
                    }
                };
                if in_label {
                    label_text.push_str(&resolved);
                } else if in_data {
                    if let Some(a) = raw_arrays.last_mut() {
                        a.data.push_str(&resolved);
                    }
                }
            }
            Event::Eof => break,
            _ => {}
        }
    }
    if !saw_root || !stack.is_empty() {
        return Err(IoError::format(
            path,
            "file",
            "not a complete GIFTI XML document (expected <GIFTI> ... </GIFTI>)",
        ));
    }
    let arrays = raw_arrays
        .iter()
        .enumerate()
        .map(|(i, raw)| decode_array(path, i, raw))
        .collect::<Result<Vec<_>, _>>()?;
    Ok(Gifti { arrays, labels })
}

fn handle_open(
    path: &Path,
    name: &str,
    e: &quick_xml::events::BytesStart<'_>,
    raw_arrays: &mut Vec<RawArray>,
    label_key: &mut Option<i64>,
    label_text: &mut String,
) -> Result<(), IoError> {
    let mut attrs = BTreeMap::new();
    for a in e.attributes() {
        let a = a.map_err(|err| {
            IoError::format(path, format!("<{name}>"), format!("bad attribute: {err}"))
        })?;
        let key = String::from_utf8_lossy(a.key.as_ref()).into_owned();
        let value = a
            .unescape_value()
            .map_err(|err| {
                IoError::format(
                    path,
                    format!("<{name}>"),
                    format!("bad attribute {key}: {err}"),
                )
            })?
            .into_owned();
        attrs.insert(key, value);
    }
    match name {
        "DataArray" => raw_arrays.push(RawArray {
            attrs,
            data: String::new(),
        }),
        "Label" => {
            let key = attrs.get("Key").or_else(|| attrs.get("Index"));
            let key = key
                .and_then(|k| k.trim().parse::<i64>().ok())
                .ok_or_else(|| {
                    IoError::format(
                        path,
                        "LabelTable",
                        "a <Label> lacks an integer Key attribute",
                    )
                })?;
            *label_key = Some(key);
            label_text.clear();
        }
        _ => {}
    }
    Ok(())
}

/// Character data goes to the open DataArray's text or to the open label.
fn append_text(
    s: &str,
    in_data: bool,
    in_label: bool,
    raw_arrays: &mut [RawArray],
    label_text: &mut String,
) {
    if in_data {
        if let Some(a) = raw_arrays.last_mut() {
            a.data.push_str(s);
        }
    } else if in_label {
        label_text.push_str(s);
    }
}
