//! Pictures and the report: topographic maps, cortex views, charts and the
//! self-contained HTML page. Everything renders on the CPU into plain bytes
//! (PNG, SVG, HTML); writing them to files is the caller's business.

mod axes;
pub mod charts;
pub mod colormap;
mod contour;
pub mod error;
mod figure_error;
pub mod image;
pub mod spline;
pub mod svg;
pub mod ticks;
pub mod topomap;

pub use error::RenderError;
pub use figure_error::FigureError;
pub use image::Image;
