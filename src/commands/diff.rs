//! `candor diff`: load two deals (deal files or filed version folders), analyse both
//! and print what changed ([`crate::diff`]).

use super::{fail, EXIT_INTERNAL, EXIT_INVALID, EXIT_OK};
use crate::archive;
use crate::cli::DiffArgs;
use crate::diag::{Diagnostic, Failure};
use crate::files::load::{load_deal, LoadedDeal};
use std::io::Write as _;
use std::path::{Path, PathBuf};

/// The deal file a path names: itself, or the filed deal file of a version folder.
fn deal_file(path: &Path) -> Result<PathBuf, Diagnostic> {
    if !path.is_dir() {
        return Ok(path.to_path_buf());
    }
    archive::filed_deal_file(path).map_err(|why| {
        Diagnostic::error(
            "archive",
            format!("a folder must be a filed version, but {why}"),
        )
        .in_file(path.join(archive::MANIFEST).display().to_string())
    })
}

fn load(path: &Path) -> Result<LoadedDeal, ()> {
    let file = deal_file(path).map_err(|d| {
        fail(&Failure::invalid(d));
    })?;
    load_deal(&file).map_err(|failure| {
        fail(&failure);
    })
}

/// Runs the command: exit 0 whether or not anything changed.
pub fn run(args: &DiffArgs) -> u8 {
    let (old, new) = (load(&args.old), load(&args.new));
    let (Ok(old), Ok(new)) = (old, new) else {
        return EXIT_INVALID;
    };
    let (oa, na) = (
        crate::engine::analyse(&old.deal),
        crate::engine::analyse(&new.deal),
    );
    let d = crate::diff::diff((&old.deal, &oa), (&new.deal, &na));
    let text = if args.json {
        match serde_json::to_string_pretty(&d) {
            Ok(text) => text + "\n",
            Err(e) => {
                eprintln!("error: cannot write the diff as JSON: {e}");
                return EXIT_INTERNAL;
            }
        }
    } else {
        crate::diff::render_text(&d)
    };
    // A reader that stops early (`| head`) is not an error worth a panic.
    let _ = std::io::stdout().lock().write_all(text.as_bytes());
    EXIT_OK
}
