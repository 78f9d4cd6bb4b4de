//! Command-line definitions: arguments become options, options go to [`crate::commands`].
//! No logic lives here.

use clap::{Args, Parser, Subcommand};
use std::path::PathBuf;
use std::process::ExitCode;

/// Every real rate of return of a deal, certified, typeset into a committee memo.
#[derive(Debug, Parser)]
#[command(name = "candor", version, about, long_about = None, propagate_version = true)]
pub(crate) struct Cli {
    /// What to do.
    #[command(subcommand)]
    pub command: Command,
}

/// The subcommands.
#[derive(Debug, Subcommand)]
pub enum Command {
    /// Validate deal files and report every problem at once.
    Check(CheckArgs),
    /// Find every real IRR and the committee figures, per scenario.
    Rates(RatesArgs),
    /// Typeset the committee memo as an archival PDF.
    Memo(MemoArgs),
    /// Gather the memos of several deals into one PDF for a committee meeting.
    Pack(PackArgs),
    /// Check filed memos: hashes, chain, recomputed figures, rebuilt PDFs, signatures.
    Verify(VerifyArgs),
    /// Sign a filed version's manifest with the reviewer's SSH key.
    Sign(SignArgs),
    /// List the archive's deals, versions, decisions and signatures.
    Ledger(LedgerArgs),
    /// Show what changed between two deals or two filed versions.
    Diff(DiffArgs),
    /// Write a commented starter deal file that passes `candor check`.
    New(NewArgs),
    /// Print a shell completion script (bash, zsh, fish, elvish, powershell).
    Completions(CompletionsArgs),
    /// Print the man page (roff) on stdout.
    Manpage,
    /// Print the JSON Schema of deal files, for YAML editors.
    Schema,
}

/// Options of `candor check`.
#[derive(Debug, Args)]
pub struct CheckArgs {
    /// Deal files to validate.
    #[arg(required = true, value_name = "DEAL.yaml")]
    pub files: Vec<PathBuf>,
    /// Print the diagnostics as JSON on stdout.
    #[arg(long)]
    pub json: bool,
    /// Check against a house style's fonts as well as the bundled ones (the folder
    /// `memo --templates` takes).
    #[arg(long, value_name = "DIR")]
    pub templates: Option<PathBuf>,
}

/// Options of `candor rates`.
#[derive(Debug, Args)]
pub struct RatesArgs {
    /// The deal file to analyse.
    #[arg(
        value_name = "DEAL.yaml",
        required_unless_present = "batch",
        conflicts_with = "batch"
    )]
    pub file: Option<PathBuf>,
    /// Print the analysis as one JSON object on stdout.
    #[arg(long)]
    pub json: bool,
    /// Screen many series: one JSON object a line in, one JSON line out per series.
    #[arg(long, value_name = "FILE.jsonl")]
    pub batch: Option<PathBuf>,
}

/// Options of `candor memo`.
#[derive(Debug, Args)]
pub struct MemoArgs {
    /// The deal file.
    #[arg(value_name = "DEAL.yaml")]
    pub file: PathBuf,
    /// Where to write the PDF (default: the deal's name with `.pdf`, next to the deal file).
    #[arg(short, long, value_name = "FILE.pdf")]
    pub output: Option<PathBuf>,
    /// A house-style folder: templates (`*.j2`) that replace built-in ones, and font
    /// files (`*.ttf`, `*.otf`) added to the bundled fonts.
    #[arg(long, value_name = "DIR")]
    pub templates: Option<PathBuf>,
    /// Also write an intermediate form: `--emit typst FILE` writes the generated markup.
    #[arg(long, num_args = 2, value_names = ["KIND", "FILE"])]
    pub emit: Option<Vec<String>>,
    /// File the memo, its inputs and figures as a new version in this archive folder.
    #[arg(long, value_name = "DIR")]
    pub archive: Option<PathBuf>,
    /// Keep running: rebuild the memo whenever the deal file or its CSV files change.
    #[arg(long, conflicts_with = "archive")]
    pub watch: bool,
    /// With `--archive`: the deal's name or currency changed since its latest filed
    /// version; file it in the same folder and record the rename.
    #[arg(long, requires = "archive")]
    pub rename: bool,
}

/// Options of `candor pack`.
#[derive(Debug, Args)]
pub struct PackArgs {
    /// The deal files, in the order the pack presents them.
    #[arg(required = true, value_name = "DEAL.yaml")]
    pub files: Vec<PathBuf>,
    /// Where to write the pack.
    #[arg(short, long, value_name = "FILE.pdf")]
    pub output: PathBuf,
    /// The meeting's title, printed on the cover.
    #[arg(long, value_name = "TEXT", default_value = "Investment committee pack")]
    pub title: String,
    /// Leave out invalid deals (named on the cover) instead of writing nothing.
    #[arg(long)]
    pub skip_invalid: bool,
}

/// Options of `candor verify`.
#[derive(Debug, Args)]
pub struct VerifyArgs {
    /// A filed version folder, a deal's folder of versions, or a whole archive.
    #[arg(value_name = "PATH")]
    pub path: PathBuf,
    /// Check signatures against this allowed-signers file (OpenSSH's format).
    #[arg(long, value_name = "FILE")]
    pub allowed_signers: Option<PathBuf>,
    /// A chain head recorded earlier (a manifest's SHA-256) that must still be there.
    #[arg(long, value_name = "SHA256")]
    pub head: Vec<String>,
}

/// Options of `candor sign`.
#[derive(Debug, Args)]
pub struct SignArgs {
    /// The filed version folder whose manifest is signed.
    #[arg(value_name = "VERSION")]
    pub folder: PathBuf,
    /// The reviewer's SSH private key (Ed25519, OpenSSH format, without a passphrase).
    #[arg(long, value_name = "FILE")]
    pub key: PathBuf,
}

/// Options of `candor ledger`.
#[derive(Debug, Args)]
pub struct LedgerArgs {
    /// The archive folder.
    #[arg(value_name = "DIR")]
    pub archive: PathBuf,
    /// Print the listing as one JSON object on stdout.
    #[arg(long)]
    pub json: bool,
    /// Name the signers from this allowed-signers file (OpenSSH's format).
    #[arg(long, value_name = "FILE")]
    pub allowed_signers: Option<PathBuf>,
}

/// Options of `candor diff`.
#[derive(Debug, Args)]
pub struct DiffArgs {
    /// The earlier deal file or filed version folder.
    #[arg(value_name = "OLD")]
    pub old: PathBuf,
    /// The later deal file or filed version folder.
    #[arg(value_name = "NEW")]
    pub new: PathBuf,
    /// Print the changes as one JSON object on stdout.
    #[arg(long)]
    pub json: bool,
}

/// Options of `candor new`.
#[derive(Debug, Args)]
pub struct NewArgs {
    /// The deal's name; the file is named after it (`Harbour Row` -> `harbour-row.yaml`).
    #[arg(value_name = "NAME")]
    pub name: String,
    /// Start from dated flows (a day count and dates) instead of yearly periods.
    #[arg(long)]
    pub dated: bool,
    /// Where to write the deal file (default: NAME in lower case with hyphens, `.yaml`).
    #[arg(short, long, value_name = "FILE.yaml")]
    pub output: Option<PathBuf>,
}

/// Options of `candor completions`.
#[derive(Debug, Args)]
pub struct CompletionsArgs {
    /// The shell to complete for.
    #[arg(value_name = "SHELL")]
    pub shell: clap_complete::Shell,
}

/// Parses the arguments, runs the command and returns the exit code:
/// 0 success, 1 invalid input, 2 internal error.
pub fn run() -> ExitCode {
    let cli = Cli::parse();
    let code = match cli.command {
        Command::Check(args) => crate::commands::check::run(&args),
        Command::Rates(args) => crate::commands::rates::run(&args),
        Command::Memo(args) => crate::commands::memo::run(&args),
        Command::Pack(args) => crate::commands::pack::run(&args),
        Command::Verify(args) => crate::commands::verify::run(&args),
        Command::Sign(args) => crate::commands::sign::run(&args),
        Command::Ledger(args) => crate::commands::ledger::run(&args),
        Command::Diff(args) => crate::commands::diff::run(&args),
        Command::New(args) => crate::commands::new::run(&args),
        Command::Completions(args) => crate::commands::completions::run(&args),
        Command::Manpage => crate::commands::completions::manpage(),
        Command::Schema => crate::commands::schema::run(),
    };
    ExitCode::from(code)
}
