//! Which candor this is: the version written into filed versions, PDFs and analysis
//! files, and the test-only switch that makes this build behave as a later release.
//!
//! A filed memo must still verify years and several releases later, when the caution
//! paragraphs have been reworded and numbers are printed with other decimals. To test
//! that without keeping an old build, the environment variable [`NEXT_RELEASE_HOOK`]
//! (not an option and not documented for users, like the pause hook of
//! `files::output`) makes this build report the version `<version>+next`, word every
//! caution paragraph differently and print the money multiple with two more decimals
//! in its JSON. Nothing else reads it.

use std::sync::OnceLock;

/// The environment variable of the test-only switch (any non-empty value turns it on).
pub const NEXT_RELEASE_HOOK: &str = "CANDOR_TEST_NEXT_RELEASE";

/// True when the test-only switch is on (read once per process).
pub(crate) fn simulating_next_release() -> bool {
    static ON: OnceLock<bool> = OnceLock::new();
    *ON.get_or_init(|| std::env::var_os(NEXT_RELEASE_HOOK).is_some_and(|v| !v.is_empty()))
}

/// The version of candor running, as filed versions and PDFs record it.
pub fn version() -> String {
    let base = env!("CARGO_PKG_VERSION");
    if simulating_next_release() {
        format!("{base}+next")
    } else {
        base.to_string()
    }
}
