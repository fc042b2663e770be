//! Pipeline stage `head` (see docs/architecture.md).
