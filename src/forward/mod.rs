//! Pipeline stage `forward` (see docs/architecture.md).
