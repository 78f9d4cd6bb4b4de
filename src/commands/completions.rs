//! `candor completions` and `candor manpage`: shell completion scripts and a roff
//! man page, both generated from the clap definitions in [`crate::cli`] so they can
//! never drift from the real options.

use super::{EXIT_INTERNAL, EXIT_OK};
use crate::cli::{Cli, CompletionsArgs};
use clap::CommandFactory;
use std::io::Write;

/// Writes the completion script for the chosen shell to stdout.
pub fn run(args: &CompletionsArgs) -> u8 {
    let mut cmd = Cli::command();
    let mut script = Vec::new();
    clap_complete::generate(args.shell, &mut cmd, "candor", &mut script);
    finish(&script, "completion script")
}

/// Writes the man page (roff) to stdout: one page that holds every subcommand, since
/// candor installs no separate page per subcommand for clap_mangen's cross-references.
pub(crate) fn manpage() -> u8 {
    match render_manpage() {
        Ok(page) => finish(&page, "man page"),
        Err(e) => {
            eprintln!("error: cannot render the man page: {e}");
            EXIT_INTERNAL
        }
    }
}

/// The whole man page: candor's own sections, then one section per subcommand with
/// its synopsis, description and options.
pub(crate) fn render_manpage() -> std::io::Result<Vec<u8>> {
    let mut cmd = Cli::command();
    cmd.build();
    let top = clap_mangen::Man::new(cmd.clone());
    let mut page = Vec::new();
    top.render_title(&mut page)?;
    top.render_name_section(&mut page)?;
    top.render_synopsis_section(&mut page)?;
    top.render_description_section(&mut page)?;
    top.render_options_section(&mut page)?;
    for sub in cmd.get_subcommands().filter(|s| !s.is_hide_set()) {
        let name = format!("candor {}", sub.get_name());
        let man = clap_mangen::Man::new(sub.clone().bin_name(name.clone()));
        let mut part = Vec::new();
        man.render_synopsis_section(&mut part)?;
        man.render_description_section(&mut part)?;
        man.render_options_section(&mut part)?;
        // Each subcommand becomes a section of this page, its parts subsections.
        let part = String::from_utf8_lossy(&part)
            .replacen(
                ".SH SYNOPSIS",
                &format!(".SH \"{}\"", name.to_uppercase()),
                1,
            )
            .replace(".SH DESCRIPTION\n", ".PP\n")
            .replace(".SH OPTIONS", ".SS Options");
        page.extend_from_slice(part.as_bytes());
    }
    top.render_version_section(&mut page)?;
    // roff's writer starts every rendered part with the same two-line preamble that
    // defines the apostrophe string; keep only the first.
    let text = String::from_utf8_lossy(&page);
    let preamble = ".ie \\n(.g .ds Aq \\(aq\n.el .ds Aq '\n";
    let mut out = String::from(preamble);
    out.push_str(&text.replace(preamble, ""));
    Ok(out.into_bytes())
}

fn finish(bytes: &[u8], what: &str) -> u8 {
    let mut out = std::io::stdout().lock();
    match out.write_all(bytes).and_then(|()| out.flush()) {
        Ok(()) => EXIT_OK,
        Err(e) => {
            eprintln!("error: cannot write the {what}: {e}");
            EXIT_INTERNAL
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use clap::ValueEnum;

    const SUBCOMMANDS: &[&str] = &["check", "rates", "memo", "verify", "diff", "new"];

    #[test]
    fn every_shell_gets_a_script_naming_the_subcommands() {
        for shell in clap_complete::Shell::value_variants() {
            let mut script = Vec::new();
            clap_complete::generate(*shell, &mut Cli::command(), "candor", &mut script);
            let text = String::from_utf8(script).unwrap();
            assert!(text.len() > 1000, "{shell}: {} bytes", text.len());
            for sub in SUBCOMMANDS {
                assert!(text.contains(sub), "{shell} script lacks `{sub}`");
            }
            assert!(
                text.contains("dated"),
                "{shell} script lacks the `--dated` option"
            );
        }
    }

    #[test]
    fn man_page_holds_every_subcommand() {
        let page = String::from_utf8(render_manpage().unwrap()).unwrap();
        assert!(page.contains(".TH candor 1"));
        for sub in SUBCOMMANDS {
            let heading = format!(".SH \"CANDOR {}\"", sub.to_uppercase());
            assert!(page.contains(&heading), "no section {heading}");
        }
        // One preamble, and no references to per-subcommand pages that are not installed.
        assert_eq!(page.matches(".ds Aq").count(), 2);
        assert!(!page.contains("candor\\-check(1)"));
    }
}
