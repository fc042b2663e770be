//! Pictures and the report: topographic maps, cortex views, charts and the
//! self-contained HTML page. Everything renders on the CPU into plain bytes
//! (PNG, SVG, HTML); writing them to files is the caller's business.

mod axes;
pub mod camera;
pub mod charts;
pub mod colormap;
pub mod compare_report;
mod contour;
pub mod cortex;
mod cortex_panel;
pub mod error;
mod figure_error;
pub mod figure_export;
pub mod image;
mod page;
pub mod raster;
pub mod report;
pub mod report_dipoles;
pub mod report_figures;
pub mod report_gain;
pub mod report_html;
pub mod report_style;
pub mod report_time;
pub mod sheet;
pub mod spline;
pub mod svg;
pub mod ticks;
pub mod topomap;

pub use camera::View;
pub use cortex::{render_view, render_views, ColourSpec, Scale, Shading, ViewOptions};
pub use error::RenderError;
pub use figure_error::FigureError;
pub use image::Image;
pub use sheet::contact_sheet;
