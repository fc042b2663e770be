//! Pictures and the report: topographic maps, cortex views, charts and the
//! self-contained HTML page. Everything renders on the CPU into plain bytes
//! (PNG, SVG, HTML); writing them to files is the caller's business.

mod axes;
pub mod charts;
mod figure_error;
pub mod spline;
pub mod svg;
pub mod ticks;

pub use figure_error::FigureError;
