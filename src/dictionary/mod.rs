//! Pipeline stage `dictionary` (see docs/architecture.md).
