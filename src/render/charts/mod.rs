//! Charts as SVG: region shares with their intervals, the regularisation path, and
//! a labelled heatmap with a colour bar.
//!
//! One file per chart kind: [`shares`], [`path`] and [`heatmap`]; this file
//! holds what they share (size limits, margins) and names their public items.

mod heatmap;
mod path;
mod shares;

pub use heatmap::{heatmap_svg, HeatmapOptions, HeatmapScale};
pub use path::{regularisation_path_svg, PathChartOptions, PathSample};
pub use shares::{region_shares_svg, RegionBar, RegionSharesOptions};

use super::figure_error::FigureError;

/// Smallest and largest figure side accepted (px).
const SIDE_RANGE: (u32, u32) = (160, 8000);
/// Longest label shown in full (characters); longer ones end in an ellipsis.
const LABEL_CHARS: usize = 36;
/// Outer margin (px).
const MARGIN: f64 = 16.0;
/// Baseline of the title (px from the top).
const TITLE_BASELINE: f64 = 26.0;

fn check_side(field: &'static str, value: u32) -> Result<(), FigureError> {
    if (SIDE_RANGE.0..=SIDE_RANGE.1).contains(&value) {
        Ok(())
    } else {
        Err(FigureError::BadOption {
            field,
            value: value.to_string(),
            expected: "a size from 160 to 8000 px",
        })
    }
}
