//! `candor sign`: sign a filed version's manifest with the reviewer's SSH key (see
//! [`crate::archive::sign_version`]).

use super::{fail, EXIT_OK};
use crate::archive;
use crate::cli::SignArgs;
use crate::diag::Failure;

/// Runs the command.
pub fn run(args: &SignArgs) -> u8 {
    match archive::sign_version(&args.folder, &args.key) {
        Ok(fingerprint) => {
            println!("{}", args.folder.join(archive::SIGNATURE).display());
            eprintln!("signed with the key {fingerprint}");
            EXIT_OK
        }
        Err(d) => fail(&Failure::invalid(d)),
    }
}
