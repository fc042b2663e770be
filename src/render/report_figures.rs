//! The pictures of one component for the report: sensor maps, cortex views
//! and charts, each as inline markup (SVG, or a PNG data URI) with a caption.

use super::report::ReportError;
use crate::io::result_file::ResultFile;

/// One picture: its markup (an inline `<svg>` or an `<img>` with a data URI)
/// and a caption.
#[derive(Debug, Clone, Default)]
pub struct Figure {
    /// Inline markup of the picture.
    pub markup: String,
    /// Caption text (escaped by the page).
    pub caption: String,
}

/// Pictures shown side by side under one heading.
#[derive(Debug, Clone, Default)]
pub struct FigureGroup {
    /// Heading of the group.
    pub title: String,
    /// The pictures.
    pub figures: Vec<Figure>,
    /// A note under the group (escaped by the page); empty for none.
    pub note: String,
}

/// All pictures of one component, in page order; groups that cannot be
/// drawn from what the result holds are simply absent.
#[derive(Debug, Clone, Default)]
pub struct ComponentFigures {
    /// The groups.
    pub groups: Vec<FigureGroup>,
}

/// Draw the pictures of component `c`.
pub fn component_figures(_result: &ResultFile, _c: usize) -> Result<ComponentFigures, ReportError> {
    Ok(ComponentFigures::default())
}
