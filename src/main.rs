//! The `candor` binary: everything happens in [`candor::cli`].

fn main() -> std::process::ExitCode {
    // A child started to typeset a house style within a budget (see `candor::worker`).
    if let Some(code) = candor::worker::serve_if_asked() {
        return code;
    }
    candor::cli::run()
}
