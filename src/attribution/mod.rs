//! Pipeline stage `attribution` (see docs/architecture.md).
