//! `candor pack`: the memos of several deals in one PDF ([`crate::pack`]), written
//! atomically.

use super::{fail, EXIT_OK};
use crate::cli::PackArgs;
use crate::diag::Failure;
use crate::files::output;
use std::io::IsTerminal as _;

/// Runs the command.
pub fn run(args: &PackArgs) -> u8 {
    output::clean_up_on_interrupt();
    match make(args) {
        Ok(()) => EXIT_OK,
        Err(f) => fail(&f),
    }
}

fn make(args: &PackArgs) -> Result<(), Failure> {
    // Checked first: a pack of many deals takes a while to make.
    output::check_destination(&args.output, "pack", "-o FILE.pdf", &args.files)?;
    for note in output::sweep_leftovers(&output::folder_of(&args.output)) {
        eprintln!("note: {note}");
    }
    let progress = std::io::stderr().is_terminal();
    if progress {
        eprintln!("candor pack: analysing {} deals", args.files.len());
    }
    let epoch = std::env::var("SOURCE_DATE_EPOCH").ok();
    let created = crate::archive::filing_time(epoch.as_deref()).map_err(Failure::invalid)?;
    let pack = crate::pack::prepare(&args.files, args.skip_invalid)?;
    for (_, failure) in &pack.skipped {
        eprintln!("{}\n", failure.render());
    }
    // The CSV files are known only now that the deals are read.
    output::refuse_inputs(&args.output, "pack", "-o FILE.pdf", &pack.inputs)?;
    // Written as the memos are joined, through a temporary file renamed at the end.
    output::write_output_with(&args.output, "pack", "-o FILE.pdf", &mut |file| {
        let out = std::io::BufWriter::with_capacity(1 << 20, file);
        let mut out = pack.write(&args.title, created, out)?;
        std::io::Write::flush(&mut out).map_err(|e| {
            Failure::internal(crate::diag::Diagnostic::error(
                "write",
                format!("cannot write the pack: {}", output::cause(&e)),
            ))
        })
    })?;
    for (name, _) in &pack.skipped {
        eprintln!("skipped {name}");
    }
    eprintln!("wrote {} ({} deals)", args.output.display(), pack.deals());
    Ok(())
}
