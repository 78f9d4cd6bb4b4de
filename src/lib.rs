//! candor turns a deal described in YAML into a committee memo that states every real
//! rate of return of its cash flows, with a certified count.
//!
//! The pipeline, one module per stage, each a plain function from one owned type to the
//! next (nothing reaches back to an earlier stage):
//!
//! | stage | entry point | output |
//! | --- | --- | --- |
//! | [`input`] | [`input::parse`] | [`input::RawDeal`]: the YAML as written, with positions |
//! | [`model`] | [`model::validate`] | [`model::Deal`]: exact money, resolved flows per scenario |
//! | [`engine`] | [`engine::analyse`] | [`engine::Analysis`]: roots, figures, cautions (plain data) |
//! | [`chart`] | [`chart::render`] | SVG strings |
//! | [`report`] | [`report::render`] | Typst markup |
//! | [`pdf`] | [`pdf::typeset`] | PDF/A-3b bytes with the deal file attached |
//! | [`archive`] | [`archive::file`] | a filed version: PDF, inputs, figures, manifest ([`diff`] compares two) |
//!
//! [`diag`] holds the one diagnostic type every stage reports problems with. Only the
//! command-line layer ([`cli`], [`commands`]) touches the file system for user paths.

pub mod archive;
pub mod chart;
pub mod cli;
pub mod commands;
pub mod diag;
pub mod diff;
pub mod engine;
pub mod format;
pub mod input;
pub mod model;
pub mod pdf;
pub mod report;
pub mod schema;
pub mod screen;
