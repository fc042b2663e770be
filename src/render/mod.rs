//! Pictures and the report: topographic maps, cortex views, charts and the
//! self-contained HTML page. Everything renders on the CPU into plain bytes
//! (PNG, SVG, HTML); writing them to files is the caller's business.

pub mod report;
pub mod report_figures;
pub mod report_html;
pub mod report_style;
