//! `candor rates`: every real IRR and the committee figures, per scenario, as a
//! terminal report, as JSON, or as batch screening of many series.

use super::{fail, EXIT_INTERNAL, EXIT_INVALID, EXIT_OK};
use crate::cli::RatesArgs;
use crate::engine;
use crate::files::load::load_deal;
use crate::present;
use std::io::Write as _;

/// Runs the command.
pub fn run(args: &RatesArgs) -> u8 {
    if let Some(batch) = &args.batch {
        return run_batch(batch);
    }
    let Some(path) = &args.file else {
        eprintln!("error: name a deal file or --batch FILE.jsonl");
        return EXIT_INVALID;
    };
    let loaded = match load_deal(path) {
        Ok(l) => l,
        Err(failure) => return fail(&failure),
    };
    let analysis = engine::analyse(&loaded.deal);
    let text = if args.json {
        match present::json::analysis_text(&analysis) {
            Ok(t) => t,
            Err(e) => {
                eprintln!("error[internal]: could not write the analysis as JSON: {e}");
                return EXIT_INTERNAL;
            }
        }
    } else {
        present::terminal::report(&analysis)
    };
    let mut out = std::io::stdout().lock();
    if out.write_all(text.as_bytes()).is_err() {
        return EXIT_INTERNAL;
    }
    EXIT_OK
}

fn run_batch(path: &std::path::Path) -> u8 {
    let mut input = match std::fs::File::open(path) {
        Ok(f) => f,
        Err(e) => {
            eprintln!("error[read-failed]: cannot read {}: {e}", path.display());
            return EXIT_INVALID;
        }
    };
    let mut out = std::io::BufWriter::new(std::io::stdout().lock());
    match crate::screen::screen_stream(&mut input, &mut out) {
        Ok(()) => {}
        Err(crate::screen::StreamError::Read(e)) => {
            let _ = out.flush();
            eprintln!("error[read-failed]: cannot read {}: {e}", path.display());
            return EXIT_INVALID;
        }
        Err(crate::screen::StreamError::Write(_)) => return EXIT_INTERNAL,
    }
    if out.flush().is_err() {
        return EXIT_INTERNAL;
    }
    EXIT_OK
}
