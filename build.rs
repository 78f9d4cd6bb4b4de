//! Build script: link options for the command-line binary.

fn main() {
    // A position-dependent executable needs no start-up relocation of its ~100,000
    // pointers in read-only data (the typesetter's tables): `candor --version` takes
    // about 1.7 ms instead of 3.9 ms, which matters for batch screening and scripts.
    if std::env::var("CARGO_CFG_TARGET_OS").as_deref() == Ok("linux") {
        println!("cargo:rustc-link-arg-bins=-no-pie");
    }
}
