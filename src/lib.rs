//! candor turns a deal described in YAML into a committee memo that states every real
//! rate of return of its cash flows, with a certified count.
//!
//! The pipeline, one module per stage, each a plain function from one owned type to the
//! next. Every module only uses the modules above it in this table (a test reads the
//! sources and holds the library to it):
//!
//! | layer | module | entry point | output |
//! | --- | --- | --- | --- |
//! | diagnostics | [`diag`], [`limits`], [`release`] | [`diag::Diagnostic`], [`diag::Failure`], [`release::version`] | problems, with their files' text and exit class; the one set of limits on inputs; which candor this is |
//! | input | [`input`] | [`input::parse`] | [`input::RawDeal`]: the YAML as written, with positions |
//! | model | [`model`] | [`model::validate`] | [`model::Deal`]: exact money, resolved flows per scenario |
//! | engine | [`engine`] | [`engine::analyse`] | [`engine::Analysis`]: roots, figures, cautions as facts (no words) |
//! | engine | [`screen`] | [`screen::screen_stream`] | `rates --batch`: one JSON line per series |
//! | presentation | [`present`], [`chart`], [`diff`] | [`present::terminal::report`], [`present::json::analysis`], [`chart::render`], [`diff::diff`] | every word and number (terminal, print), the JSON contract, SVG charts, differences |
//! | markup | [`report`] | [`report::render`] | Typst markup |
//! | typesetting | [`pdf`], [`worker`] | [`pdf::typeset`], [`worker::typeset_within`] | PDF/A-3b bytes with the deal file attached; a house style's typesetting in a child process within a budget of time and memory |
//! | files | [`files`] | [`files::load::load_deal`], [`files::output::write_output`] | a deal read from disk; output written atomically |
//! | building | [`memo`], [`pack`] | [`memo::build_memo`], [`pack::prepare`], [`pack::Pack::write`] | a memo, a pack of memos |
//! | archive | [`archive`] | [`archive::file_memo`], [`archive::verify`] | filed versions, and their verification |
//! | commands | [`cli`], [`commands`] | [`cli::run`] | arguments parsed, the library called, the outcome printed, an exit code |
//!
//! [`files`] is the one module that reads and writes user paths; [`memo`], [`pack`]
//! and [`archive`] go through it, and [`commands`] calls them. Nothing in the library
//! names [`commands`] or [`cli`].

pub mod archive;
pub mod chart;
pub mod cli;
pub mod commands;
pub mod diag;
pub mod diff;
pub mod engine;
pub mod files;

pub mod input;
pub(crate) mod join;
pub mod limits;
pub mod memo;
pub mod model;
pub mod pack;
pub mod pdf;
pub mod present;
pub mod release;
pub mod report;
pub mod schema;
pub mod screen;
pub mod worker;
