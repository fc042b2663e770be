//! Pipeline stage `solver` (see docs/architecture.md).
