//! `candor check`: validates deal files and reports every problem at once.
//!
//! Exit codes: 0 when every file is valid, 1 when any file is invalid or cannot be
//! read (a problem with the input), 2 when candor cannot write its report.

use super::{EXIT_INTERNAL, EXIT_INVALID, EXIT_OK};
use crate::cli::CheckArgs;
use crate::diag::Diagnostic;
use crate::files::load::load_deal_with_fonts;
use serde::Serialize;
use std::io::Write;

/// One file's result, as printed by `--json`.
#[derive(Debug, Serialize)]
struct FileReport {
    file: String,
    ok: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    deal: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    flows: Option<usize>,
    #[serde(skip_serializing_if = "Option::is_none")]
    scenarios: Option<Vec<String>>,
    diagnostics: Vec<Diagnostic>,
}

/// Runs the command and returns its exit code.
pub fn run(args: &CheckArgs) -> u8 {
    let style = match &args.templates {
        Some(dir) => match crate::memo::read_house_style(dir) {
            Ok(style) => style,
            Err(failure) => return super::fail(&failure),
        },
        None => crate::memo::HouseStyle::default(),
    };
    let mut reports = Vec::with_capacity(args.files.len());
    let mut human_out = String::new();
    let mut human_err = String::new();
    for path in &args.files {
        let shown = path.display().to_string();
        match load_deal_with_fonts(path, &style.fonts) {
            Ok(loaded) => {
                let deal = &loaded.deal;
                let flows = deal.scenarios.first().map_or(0, |s| s.flows.points.len());
                let others = deal.scenarios.len().saturating_sub(1);
                let plural = if others == 1 { "" } else { "s" };
                human_out.push_str(&format!(
                    "ok  {}  {}: {flows} flows, base case + {others} scenario{plural}\n",
                    crate::diag::terminal_safe(&shown),
                    crate::diag::terminal_safe(&deal.name)
                ));
                reports.push(FileReport {
                    file: shown,
                    ok: true,
                    deal: Some(deal.name.clone()),
                    flows: Some(flows),
                    scenarios: Some(deal.scenarios.iter().map(|s| s.name.clone()).collect()),
                    diagnostics: Vec::new(),
                });
            }
            Err(failure) => {
                let n = failure.diagnostics.len();
                human_err.push_str(&failure.render());
                let plural = if n == 1 { "" } else { "s" };
                human_err.push_str(&format!(
                    "\n\n{n} problem{plural} in {}\n\n",
                    crate::diag::terminal_safe(&shown)
                ));
                reports.push(FileReport {
                    file: shown,
                    ok: false,
                    deal: None,
                    flows: None,
                    scenarios: None,
                    diagnostics: failure.diagnostics,
                });
            }
        }
    }
    let all_ok = reports.iter().all(|r| r.ok);
    let written = if args.json {
        match serde_json::to_string_pretty(&reports) {
            Ok(json) => writeln!(std::io::stdout(), "{json}"),
            Err(e) => Err(std::io::Error::other(e)),
        }
    } else {
        write!(std::io::stdout(), "{human_out}")
            .and_then(|()| write!(std::io::stderr(), "{human_err}"))
    };
    match written {
        Err(e) => {
            let _ = writeln!(std::io::stderr(), "error: cannot write the report: {e}");
            EXIT_INTERNAL
        }
        Ok(()) if all_ok => EXIT_OK,
        Ok(()) => EXIT_INVALID,
    }
}
