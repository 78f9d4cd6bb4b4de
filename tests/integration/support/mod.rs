//! What the test modules share: running the built binary, reading its output, the
//! repository's folders, and reading PDFs back (`pdf`).

pub mod pdf;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// `SOURCE_DATE_EPOCH` for every run: 1798675200 is 2026-12-31T00:00:00Z (Unix time,
/// common practice), so memo dates and archive stamps are the same on every run.
pub const EPOCH: &str = "1798675200";

/// The environment variable that makes the binary pause mid-write (`faults`); unset
/// for every other run so that an outer setting cannot stall a test.
const PAUSE_HOOK: &str = candor::files::output::PAUSE_HOOK;

/// The repository's root folder.
pub fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// The shipped example deals' folder.
pub fn examples() -> PathBuf {
    root().join("example-deals")
}

/// One shipped example deal.
pub fn example(name: &str) -> PathBuf {
    examples().join(name)
}

/// The built `candor` binary, run from the repository's root with the fixed
/// `SOURCE_DATE_EPOCH` and no pause hook.
pub fn command() -> Command {
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_candor"));
    cmd.env("SOURCE_DATE_EPOCH", EPOCH)
        .env_remove(PAUSE_HOOK)
        .current_dir(root());
    cmd
}

/// The shipped example deal files, sorted by name.
pub fn example_deals() -> Vec<PathBuf> {
    let mut deals: Vec<PathBuf> = std::fs::read_dir(examples())
        .expect("example-deals")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.extension().is_some_and(|x| x == "yaml"))
        .collect();
    deals.sort();
    assert!(!deals.is_empty());
    deals
}

/// The names in a folder, sorted; none when it is missing.
pub fn names(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .map(|rd| {
            rd.filter_map(Result::ok)
                .map(|e| e.file_name().to_string_lossy().into_owned())
                .collect()
        })
        .unwrap_or_default();
    v.sort();
    v
}

/// Runs the binary with `args` (see [`command`]) and waits for it.
pub fn candor(args: &[&str]) -> Output {
    command()
        .args(args)
        .output()
        .expect("the candor binary runs")
}

/// Runs the binary with `args` in the folder `dir`.
pub fn candor_in(dir: &Path, args: &[&str]) -> Output {
    command()
        .args(args)
        .current_dir(dir)
        .output()
        .expect("the candor binary runs")
}

/// Output bytes as text (lossy: a test about bytes compares bytes).
pub fn text(bytes: &[u8]) -> String {
    String::from_utf8_lossy(bytes).into_owned()
}

/// The last line of a command's output, without its line break (`verify` ends with
/// its verdict, after a line per version and per deal).
pub fn last_line(bytes: &[u8]) -> String {
    text(bytes).lines().last().unwrap_or("").to_string()
}

/// A path as the `&str` argument of a command (temporary folders are UTF-8).
pub fn s(p: &Path) -> &str {
    p.to_str().expect("UTF-8 temp path")
}

/// Whether the tests run as root, which file permissions do not stop.
pub fn is_root() -> bool {
    Command::new("id")
        .arg("-u")
        .output()
        .map(|o| text(&o.stdout).trim() == "0")
        .unwrap_or(false)
}

/// Every run of whitespace made one space: line breaks are the typesetter's.
pub fn words(text: &str) -> String {
    text.split_whitespace().collect::<Vec<_>>().join(" ")
}

/// Whether util-linux `setpriv` is installed, to run the binary as another user.
pub fn setpriv_available() -> bool {
    Command::new("setpriv")
        .arg("--version")
        .output()
        .is_ok_and(|o| o.status.success())
}

/// The built binary as [`command`] sets it up, but run as the unprivileged user 65534
/// through `setpriv`: permission bits stop that user where they do not stop root.
pub fn command_as_nobody() -> Command {
    let mut cmd = Command::new("setpriv");
    cmd.args([
        "--reuid=65534",
        "--regid=65534",
        "--clear-groups",
        "--",
        env!("CARGO_BIN_EXE_candor"),
    ])
    .env("SOURCE_DATE_EPOCH", EPOCH)
    .env_remove(PAUSE_HOOK)
    .current_dir(root());
    cmd
}
