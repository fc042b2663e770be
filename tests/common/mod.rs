//! Helpers shared by the integration tests.
pub mod browser;
pub mod cli;
pub mod cohort;
pub mod files;
pub mod page;
pub mod python;
pub mod refusal;
pub mod report;
