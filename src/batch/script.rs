//! The raw TOML of a job script, parsed strictly (unknown keys are errors),
//! and the translation of byte spans into line:column.

use serde::Deserialize;
use toml::Spanned;

use crate::job::AttributeParams;

/// The keys a `[defaults]` or `[[job]]` table may set besides `name` and
/// `decoder`: every parameter of `attribute` (the keys of
/// [`AttributeParams`], its flags with `_` for `-`) except its decoder and
/// bare-pattern inputs, and `no_report`. Sorted.
pub fn option_keys() -> Vec<String> {
    let mut keys: Vec<String> = match serde_json::to_value(AttributeParams::default()) {
        Ok(serde_json::Value::Object(map)) => map.keys().cloned().collect(),
        _ => Vec::new(),
    };
    keys.retain(|k| k != "decoder" && k != "patterns");
    keys.push(NO_REPORT.to_string());
    keys.sort();
    keys
}

/// The one option of a job that is not `attribute`'s: no report.html.
pub const NO_REPORT: &str = "no_report";

/// The `[compare]` table as written.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawCompare {
    pub out: String,
    pub pair: Option<Vec<String>>,
}

/// The whole script as written: `[defaults]` and each `[[job]]` as plain
/// tables, checked key by key against [`option_keys`] and read into
/// `AttributeParams` by the plan.
#[derive(Debug, Clone, Deserialize)]
#[serde(deny_unknown_fields)]
pub(crate) struct RawScript {
    pub defaults: Option<Spanned<toml::Table>>,
    #[serde(default)]
    pub job: Vec<Spanned<toml::Table>>,
    pub compare: Option<Spanned<RawCompare>>,
}

/// A lenient reading used only to say which job an error's line is in.
#[derive(Debug, Deserialize)]
pub(crate) struct LenientScript {
    #[serde(default)]
    pub job: Vec<Spanned<toml::Table>>,
}

/// 1-based line and column (in characters) of byte `offset` in `text`.
pub(crate) fn line_column(text: &str, offset: usize) -> (usize, usize) {
    let offset = offset.min(text.len());
    let before = text.get(..offset).unwrap_or(text);
    let line = before.matches('\n').count() + 1;
    let line_start = before.rfind('\n').map_or(0, |i| i + 1);
    let column = before[line_start..].chars().count() + 1;
    (line, column)
}

#[cfg(test)]
mod tests {
    #![allow(clippy::unwrap_used)]
    use super::*;

    #[test]
    fn line_column_counts_from_one() {
        let text = "a = 1\nbé = 2\n";
        assert_eq!(line_column(text, 0), (1, 1));
        assert_eq!(line_column(text, 6), (2, 1));
        // "bé" is three bytes; the column counts characters.
        assert_eq!(line_column(text, 9), (2, 3));
    }
}
