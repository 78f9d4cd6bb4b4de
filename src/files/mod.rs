//! The file system for user paths: reading a deal file and the files it names
//! ([`load`]), and writing output files atomically ([`output`]). Every command and the
//! archive read and write through here.

pub mod load;
pub mod output;
