//! Pipeline stage `patterns` (see docs/architecture.md).
