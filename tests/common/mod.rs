//! Helpers shared by the integration tests.
pub mod cli;
pub mod python;
pub mod report;
