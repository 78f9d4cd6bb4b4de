//! `candor new`: writes a commented starter deal file, periodic or dated, that
//! `candor check` accepts as it stands, so an analyst edits figures rather than syntax.
//!
//! The file is never written over an existing one: it goes to a temporary file in the
//! target folder and is moved into place only if the name is still free.

use super::{EXIT_INTERNAL, EXIT_INVALID, EXIT_OK};
use crate::cli::NewArgs;
use std::io::Write;
use std::path::{Path, PathBuf};

/// The opening of the starter with yearly flows; in every part `{NAME}` becomes the
/// deal's name as a quoted YAML string and `{FILE}` the file's name.
const PERIODIC_HEAD: &str = r#"# A starter deal file written by `candor new`. The figures below are an invented
# example: replace them with the deal's own forecast, then run
"#;

/// The lines both starters share, from the commands to run down to `timing:`.
const COMMON: &str = r#"#   candor check {FILE}
#   candor rates {FILE}
# Every field is described in candor's README, section "The deal file". This file
# uses format version 2: the forecast in named lines, as a model is organised.
candor: 2                        # format version: this candor reads versions 1 and 2

deal:
  name: {NAME}
  currency: EUR                  # ISO 4217 code in capitals, such as GBP or USD
  as_of: 2027-01-15              # the date the forecast was made, YYYY-MM-DD
  units: ones                    # ones, thousands or millions: the unit of every amount below
  basis:                         # optional, printed in the memo
    prices: nominal              # nominal or real
    tax: after                   # before or after tax
    rates: nominal               # whether the rates below are nominal or real

hurdle_rate: 9%                  # the annual return the committee requires
finance_rate: 6%                 # optional (MIRR): cost of money borrowed; default the hurdle
reinvestment_rate: 7%            # optional (MIRR): return on money paid back early; default the hurdle

timing:
"#;

/// The periodic starter's lines, scenarios, memo and sign-off.
const PERIODIC_BODY: &str = r#"  every: year                    # year, half-year, quarter, month, week or day
  start: 2027-04-01              # optional: the date of period 0

lines:                           # the parts of the forecast; the net flow of a period is their sum
  purchase:                      # a key of your choosing, used by scenarios
    label: Purchase and fit-out  # the line's name in the memo
    amounts: [-2400000]          # a list from period 0 (negative = paid by the investor)
  income:
    label: Net operating income
    note: Rents less running costs
    stream:                      # amounts generated from their drivers, one a period
      first: 480000              # the full first amount
      start: 1                   # its period
      periods: 10                # how many (or `end:` the period of the last)
      growth: 2%                 # a year (`growth_per: period` to grow every period)
      ramp: [65%, 85%]           # optional: the first periods at part of the full amount
  resale:
    label: Resale value
    terminal:                    # the growing perpetuity: next_flow / (discount - growth)
      at: 10                     # the period it is counted in
      next_flow: 150000          # the flow a year after
      growth: 1%                 # its growth a year, for ever
      discount: 9%               # the rate it is discounted at

scenarios:                       # optional: named changes to the base case
  weak_demand:
    label: Income 20% lower      # optional: a short name for print
    factors: { income: 0.8 }     # a factor on one line, or on several
  cost_overrun:
    label: Fit-out 15% dearer
    factors: { purchase: 1.15 }
  slow_start:
    label: Income a year late
    shift: { income: 1 }         # a line moved one period later
    extend_horizon: true         # needed to move a line past the base case's last period
  flat_income:
    label: No growth in income
    change: { income: { stream: { growth: 0% } } }   # any field of a line
  dearer_money:
    label: Hurdle rate 11%
    hurdle_rate: 11%             # rates may change too

memo:                            # optional: the memo's narrative
  recommendation: State the recommendation to the committee in a sentence or two.
  summary: >-
    Describe what the money buys, who runs it and where the income comes from.
  risks:
    - Name each risk that could change the figures, one item each.
  sections:
    - title: Background
      text: Any further headed section of the memo.

signoff:                         # optional
  prepared_by: Your name, your role
  decision: pending              # pending, approved, declined or deferred
"#;

/// The opening of the starter with dated flows.
const DATED_HEAD: &str = r#"# A starter deal file written by `candor new --dated`. The figures below are an
# invented example: replace them with the deal's own forecast, then run
"#;

/// The dated starter's lines, scenarios, memo and sign-off.
const DATED_BODY: &str = r#"  day_count: act/365f            # act/365f, act/360, act/act-isda, 30/360, 30e/360 or 30e/360-isda

lines:                           # the parts of the forecast; amounts on one date are added together
  purchase:
    label: Purchase and fit-out
    dated:                       # any order; `note` is optional
      - { date: 2027-03-01, amount: -1800000, note: purchase and fit-out }
  rent:
    label: Rent
    stream:                      # amounts generated from their drivers
      first: 165000
      start: 2027-09-30          # the date of the first amount
      every: half-year           # on dated timing a stream says its own period
      end: 2030-09-30            # the date of the last amount (or `periods: 7`)
      growth: 2%                 # a year
  roof:
    label: Roof repair
    dated:
      - { date: 2029-09-30, amount: -260000 }
  sale:
    label: Sale of the building
    dated:
      - { date: 2030-12-31, amount: 1650000 }

scenarios:                       # optional: named changes to the base case
  lower_rents:
    label: Rents 15% lower       # optional: a short name for print
    factors: { rent: 0.85 }      # a factor on one line, or on several
  late_sale:
    label: Sale 90 days late
    shift: { sale: 90 }          # dated timing: days
    extend_horizon: true         # needed to move a line past the base case's last date
  no_repair:
    label: Roof lasts
    drop: [roof]                 # lines may be dropped, or added with `add:`

memo:                            # optional: the memo's narrative
  recommendation: State the recommendation to the committee in a sentence or two.
  summary: >-
    Describe what the money buys, who runs it and where the income comes from.
  risks:
    - Name each risk that could change the figures, one item each.

signoff:                         # optional
  prepared_by: Your name, your role
  decision: pending              # pending, approved, declined or deferred
"#;

/// A file name from a deal's name: letters and digits (of any script) in lower case,
/// every other run of characters one hyphen. Empty when the name has no letter or digit.
pub fn slug(name: &str) -> String {
    let mut out = String::with_capacity(name.len());
    let mut gap = false;
    for c in name.chars() {
        if c.is_alphanumeric() {
            if gap && !out.is_empty() {
                out.push('-');
            }
            gap = false;
            out.extend(c.to_lowercase());
        } else {
            gap = true;
        }
    }
    out
}

/// The starter text for a deal called `name`, written to a file shown as `file`.
pub fn starter(name: &str, dated: bool, file: &str) -> String {
    // A JSON string is a valid YAML double-quoted scalar, so any name (colons, `#`,
    // quotes, control characters) reads back exactly as given.
    let quoted = serde_json::Value::String(name.trim().to_string()).to_string();
    // Shell-quote the file name in the comment only when it needs it.
    let shown = if file
        .chars()
        .all(|c| c.is_ascii_alphanumeric() || "-_./".contains(c))
    {
        file.to_string()
    } else {
        format!("'{}'", file.replace('\'', "'\\''"))
    };
    let shown: String = shown.chars().filter(|c| !c.is_control()).collect();
    let (head, body) = if dated {
        (DATED_HEAD, DATED_BODY)
    } else {
        (PERIODIC_HEAD, PERIODIC_BODY)
    };
    let template = [head, COMMON, body].concat();
    template
        .replace("{FILE}", &shown)
        .replace("{NAME}", &quoted)
}

fn write_new(path: &Path, text: &str) -> std::io::Result<()> {
    let folder = match path.parent() {
        Some(p) if !p.as_os_str().is_empty() => p.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let mut builder = tempfile::Builder::new();
    builder.prefix(".candor-new-").suffix(".tmp");
    // A temporary file is private (0600) by default; a deal file is an ordinary document,
    // created as an editor would: 0666 less the user's umask (0644 under the usual 022).
    #[cfg(unix)]
    {
        use std::os::unix::fs::PermissionsExt as _;
        builder.permissions(std::fs::Permissions::from_mode(0o666));
    }
    let mut tmp = builder.tempfile_in(&folder)?;
    tmp.write_all(text.as_bytes())?;
    tmp.as_file().sync_all()?;
    // `persist_noclobber` fails rather than replace a file that appeared meanwhile.
    tmp.persist_noclobber(path).map_err(|e| e.error)?;
    Ok(())
}

/// Runs the command and returns its exit code.
pub fn run(args: &NewArgs) -> u8 {
    let name = args.name.trim();
    if name.is_empty() {
        eprintln!(
            "error: the deal's name is empty; give it as `candor new \"Harbour Row offices\"`"
        );
        return EXIT_INVALID;
    }
    let path = match &args.output {
        Some(p) => p.clone(),
        None => {
            let s = slug(name);
            if s.is_empty() {
                eprintln!(
                    "error: `{name}` has no letters or digits to name a file after; choose one with `-o FILE.yaml`"
                );
                return EXIT_INVALID;
            }
            PathBuf::from(format!("{s}.yaml"))
        }
    };
    let shown = path.display().to_string();
    if path.exists() || path.is_symlink() {
        eprintln!("error: {shown} already exists; candor new never writes over a file (choose another with `-o FILE.yaml`)");
        return EXIT_INVALID;
    }
    match write_new(&path, &starter(name, args.dated, &shown)) {
        Ok(()) => {
            println!("wrote {shown}");
            EXIT_OK
        }
        Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => {
            eprintln!("error: {shown} already exists; candor new never writes over a file");
            EXIT_INVALID
        }
        Err(e) if e.kind() == std::io::ErrorKind::NotFound => {
            // The folder named in `-o` does not exist: a mistake in the input.
            let folder = crate::files::output::folder_of(&path);
            eprintln!(
                "error: cannot write {shown}: its folder does not exist; create it first \
                 (`mkdir -p {}`) or choose another path with `-o FILE.yaml`",
                folder.display()
            );
            EXIT_INVALID
        }
        Err(e) => {
            eprintln!("error: cannot write {shown}: {e}");
            EXIT_INTERNAL
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn slugs() {
        assert_eq!(slug("Harbour Row Offices"), "harbour-row-offices");
        assert_eq!(slug("  A&B: phase 2!  "), "a-b-phase-2");
        assert_eq!(slug("Café Müller"), "café-müller");
        assert_eq!(slug("Ωmega/Δelta"), "ωmega-δelta");
        assert_eq!(slug("—"), "");
    }
}
