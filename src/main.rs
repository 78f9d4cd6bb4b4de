//! The `candor` binary: everything happens in [`candor::cli`].

fn main() -> std::process::ExitCode {
    candor::cli::run()
}
