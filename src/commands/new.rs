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

/// The lines both starters share, from the commands to run down to `cash_flows:`.
const COMMON: &str = r#"#   candor check {FILE}
#   candor rates {FILE}
# Every field is described in candor's README, section "The deal file".
candor: 1                        # format version: this candor reads version 1

deal:
  name: {NAME}
  currency: EUR                  # ISO 4217 code in capitals, such as GBP or USD
  as_of: 2027-01-15              # the date the forecast was made, YYYY-MM-DD

hurdle_rate: 9%                  # the annual return the committee requires
finance_rate: 6%                 # optional (MIRR): cost of money borrowed; default the hurdle
reinvestment_rate: 7%            # optional (MIRR): return on money paid back early; default the hurdle

cash_flows:
"#;

/// The periodic starter's flows, scenarios, memo and sign-off.
const PERIODIC_BODY: &str = r#"  every: year                    # year, half-year, quarter, month, week or day
  start: 2027-04-01              # optional: the date of period 0
  amounts: [-2400000,            # period 0: the investment (negative = paid by the investor)
            310000, 420000,      # periods 1-2: ramping up
            480000, 480000, 480000, 480000,
            480000, 480000, 480000,
            650000]              # period 10: the last year's income plus the resale value

scenarios:                       # optional: named changes to the base case
  weak_demand:
    label: Weak demand (income 20% lower)   # optional: the name the memo prints
    inflows_factor: 0.8          # every inflow 20% lower
  cost_overrun:
    outflows_factor: 1.15        # every outflow 15% higher
  slow_start:
    shift_inflows: 1             # every inflow one period later

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

/// The dated starter's flows, scenarios, memo and sign-off.
const DATED_BODY: &str = r#"  day_count: act/365f            # act/365f, act/360, act/act-isda, 30/360, 30e/360 or 30e/360-isda
  dated:                         # any order; flows on one date are added together
    - { date: 2027-03-01, amount: -1800000, note: purchase and fit-out }
    - { date: 2027-09-30, amount: 140000 }
    - { date: 2028-03-31, amount: 165000 }
    - { date: 2028-09-30, amount: 170000 }
    - { date: 2029-03-31, amount: 175000 }
    - { date: 2029-09-30, amount: -90000, note: roof repair net of income }
    - { date: 2030-03-31, amount: 180000 }
    - { date: 2030-12-31, amount: 1650000, note: sale }

scenarios:                       # optional: named changes to the base case
  lower_rents:
    label: Rents 15% lower       # optional: the name the memo prints (else the key in words)
    inflows_factor: 0.85         # every inflow 15% lower
  late_sale:
    shift_inflows: 90            # every inflow 90 days later

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
