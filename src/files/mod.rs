//! The file system for user paths: reading a deal file and the files it names
//! ([`load`]), writing output files atomically ([`output`]), and reading inside an
//! archive without following links or waiting on pipes ([`strict`]). Every command and the
//! archive read and write through here.

pub mod load;
pub mod output;
pub mod strict;
