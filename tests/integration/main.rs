//! candor's integration tests, in one test binary: each module was once a binary of its
//! own, and each linked the whole library with the typesetter (see DEVELOPERS.md,
//! "Tests"). Shared helpers (running the built `candor`, the repository's folders,
//! reading PDFs back) live in `support`.
//!
//! Run one module with `cargo test --test integration memo::`.

mod support;

mod archive;
mod check;
mod examples;
mod faults;
mod fuzz_regressions;
mod help;
mod limits;
mod lines;
mod memo;
mod new;
mod pack;
mod pipeline_props;
mod poppler;
mod rates;
mod roots;
mod schema;
mod sshsig;
mod trust;
mod watch;
