//! `candor memo`: load the deal, check every destination, build the memo
//! ([`crate::memo`]) and write it atomically, or file it in an archive.

use super::{fail, EXIT_OK};
use crate::archive::{self, Filed};
use crate::cli::MemoArgs;
use crate::diag::{Diagnostic, Failure};
use crate::files::load::load_deal_with_fonts;
use crate::files::output;
use crate::memo::{self, MemoInputs};
use crate::{engine, pdf, report};
use std::path::{Path, PathBuf};

/// Runs the command.
pub fn run(args: &MemoArgs) -> u8 {
    // Ctrl-C removes the unfinished files instead of leaving them behind.
    output::clean_up_on_interrupt();
    if args.watch {
        return super::watch::run(args);
    }
    match make(args) {
        Ok(()) => EXIT_OK,
        Err(f) => fail(&f),
    }
}

fn make(args: &MemoArgs) -> Result<(), Failure> {
    let emit_typst = match args.emit.as_deref() {
        None => None,
        Some([kind, file]) if kind == "typst" => Some(PathBuf::from(file)),
        Some(other) => {
            let kind = other.first().map(String::as_str).unwrap_or("");
            return Err(Failure::invalid(
                Diagnostic::error("emit", format!("`--emit {kind}` is not a known form"))
                    .with_hint("the one form is `--emit typst FILE`"),
            ));
        }
    };
    let style = match &args.templates {
        Some(dir) => memo::read_house_style(dir)?,
        None => memo::HouseStyle::default(),
    };
    if args.archive.is_some() && !style.fonts.is_empty() {
        // `verify` rebuilds a filed memo from the version's own files, and a version
        // keeps the house style's templates but not its fonts.
        return Err(Failure::invalid(
            Diagnostic::error(
                "templates",
                "a memo whose house style adds font files cannot be filed: the archive keeps \
                 a house style's templates, not its fonts, so the filed memo could not be rebuilt",
            )
            .with_hint("file it with a house style of templates only, or without `--archive`"),
        ));
    }
    let loaded = load_deal_with_fonts(&args.file, &style.fonts)?;
    // Every file this run reads; none of them may be a destination.
    let mut inputs = loaded.files();
    if let Some(dir) = &args.templates {
        inputs.extend(style.file_names().iter().map(|name| dir.join(name)));
    }
    // Every destination is checked before the memo is made, which takes a while.
    let out = match (&args.output, &args.archive) {
        (Some(o), _) => Some(o.clone()),
        (None, None) => Some(memo::default_output(&args.file, &loaded.deal.name)),
        (None, Some(_)) => None,
    };
    let mut destinations: Vec<(&Path, &str, &str)> = Vec::new();
    if let Some(o) = &out {
        destinations.push((o, "memo", "-o FILE.pdf"));
    }
    if let Some(e) = &emit_typst {
        destinations.push((e, "markup", "--emit typst FILE"));
    }
    for (path, what, option) in destinations {
        output::check_destination(path, what, option, &inputs)?;
        for note in output::sweep_leftovers(&output::folder_of(path)) {
            eprintln!("note: {note}");
        }
    }
    if let Some(dir) = &args.archive {
        if let Some(note) = archive::prepare_archive(dir)? {
            eprintln!("{note}");
        }
    }
    let epoch = std::env::var("SOURCE_DATE_EPOCH").ok();
    let created =
        pdf::creation_time(loaded.deal.as_of, epoch.as_deref()).map_err(Failure::invalid)?;
    let analysis = engine::analyse(&loaded.deal);
    let source_name = args
        .file
        .file_name()
        .map(|n| n.to_string_lossy().to_string())
        .unwrap_or_else(|| "deal.yaml".to_string());
    let inputs = MemoInputs {
        source: &loaded.source,
        source_name: &source_name,
        companions: &loaded.companions,
        templates: style.templates,
        fonts: style.fonts,
        created,
    };
    let charts = memo::draw_charts(&analysis)?;
    // The memo is made once, or under `--archive` once per filing attempt, since its
    // section on changes depends on the version it will follow.
    let make_pdf = |changes: Option<report::ChangesSince>| -> Result<Vec<u8>, Failure> {
        // A filed memo's title block names the version it becomes: the one after the
        // version its section on changes compares with, or the first.
        let filed_as = args
            .archive
            .as_ref()
            .map(|_| version_after(changes.as_ref().map(|c| c.version.as_str())));
        let markup = memo::render_markup(
            &analysis,
            &loaded.deal,
            &inputs,
            &charts,
            changes,
            filed_as.as_deref(),
        )?;
        // The markup is written before typesetting so that a failing house style can be
        // inspected.
        if let Some(path) = &emit_typst {
            output::write_output(
                path,
                markup.as_bytes(),
                "markup",
                "--emit typst FILE",
                &mut output::Disk,
            )?;
        }
        memo::typeset_markup(&markup, &charts, &inputs)
    };
    // With `--archive` the memo goes into the archive, and next to the deal only when
    // `--output` asks for a copy.
    let pdf = match &args.archive {
        Some(dir) => {
            let filed =
                archive::file_memo(dir, &loaded, &analysis, &inputs, &make_pdf, args.rename)?;
            for note in &filed.notes {
                eprintln!("note: {note}");
            }
            match &filed.outcome {
                Filed::New { version, path } => {
                    eprintln!("filed version {version}");
                    println!("{}", path.display());
                }
                Filed::Unchanged { version, path } => {
                    eprintln!(
                        "unchanged: version {version} holds exactly these inputs; nothing new \
                         was filed"
                    );
                    println!("{}", path.display());
                }
                Filed::Overtaken { .. } | Filed::RenameRefused { .. } => {}
            }
            if args.output.is_none() {
                return Ok(());
            }
            filed.pdf
        }
        None => make_pdf(None)?,
    };
    let Some(out) = out else {
        return Ok(());
    };
    memo::write_memo(&out, &pdf, &mut output::Disk)?;
    eprintln!("wrote {}", out.display());
    Ok(())
}

/// The archive version that follows `previous` (`002` after `001`), or `001`. Versions
/// are numbered without gaps, and a filing compares with the version just before the
/// one it becomes.
fn version_after(previous: Option<&str>) -> String {
    let next = previous
        .and_then(|v| v.parse::<u32>().ok())
        .map_or(1, |n| n.saturating_add(1));
    format!("{next:03}")
}

#[cfg(test)]
mod tests {
    use super::version_after;

    #[test]
    fn versions_follow_in_order() {
        assert_eq!(version_after(None), "001");
        assert_eq!(version_after(Some("001")), "002");
        assert_eq!(version_after(Some("099")), "100");
    }
}
