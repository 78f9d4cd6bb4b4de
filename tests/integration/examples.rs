//! Every deal in `example-deals/` must load and validate, so the shipped examples
//! can never rot; new examples are covered by being placed in the folder. And the
//! repository stands alone: no tracked file points outside it.

use crate::support::{example, examples};
use candor::files::load::load_deal;
use std::collections::BTreeSet;
use std::path::Path;

#[test]
fn every_example_deal_is_valid() {
    let dir = examples();
    let mut count = 0;
    for entry in std::fs::read_dir(&dir).expect("example-deals folder") {
        let path = entry.expect("entry").path();
        if path.extension().and_then(|e| e.to_str()) != Some("yaml") {
            continue;
        }
        count += 1;
        match load_deal(&path) {
            Ok(loaded) => {
                let deal = &loaded.deal;
                assert_eq!(deal.scenarios[0].name, "base");
                assert!(!deal.scenarios[0].flows.points.is_empty());
                assert!(
                    deal.memo.summary.is_some(),
                    "{}: examples carry a memo",
                    path.display()
                );
                assert!(
                    deal.signoff.is_some(),
                    "{}: examples carry a sign-off",
                    path.display()
                );
            }
            Err(f) => {
                let shown = path.display().to_string();
                panic!("{shown}: {}", f.render());
            }
        }
    }
    assert!(
        count >= 4,
        "expected at least four example deals, found {count}"
    );
}

#[test]
fn the_csv_example_records_its_companion_file() {
    let path = example("tollgate-depot.yaml");
    let loaded = load_deal(&path).expect("valid");
    assert_eq!(loaded.companions.len(), 1);
    assert_eq!(loaded.companions[0].0, "tollgate-depot-flows.csv");
}

#[test]
fn the_quarry_example_has_two_sign_changes() {
    // The example exists to show two real IRRs; Descartes' rule needs two sign
    // changes for that (common practice).
    let path = example("corrie-vale-quarry.yaml");
    let loaded = load_deal(&path).expect("valid");
    let signs: Vec<bool> = loaded.deal.scenarios[0]
        .flows
        .points
        .iter()
        .map(|p| p.amount.is_sign_positive())
        .collect();
    assert_eq!(signs.windows(2).filter(|w| w[0] != w[1]).count(), 2);
}

/// The library's layers, lowest first, as `src/lib.rs` draws them: a module may use
/// the modules of its own layer and of the layers below, never one above. The command
/// layer (`cli`, `commands`, `main`) may use everything; nothing else may name it.
const LAYERS: &[&[&str]] = &[
    &["diag", "limits", "release"],
    &["input"],
    &["model"],
    &["engine", "screen"],
    &["present", "chart", "diff"],
    &["report"],
    &["pdf", "join", "worker"],
    &["files"],
    &["memo", "pack"],
    &["archive", "schema"],
    &["cli", "commands", "main"],
];

/// Uses that go against the layers today and the work that removes them; empty once
/// the presentation module owns every word and number.
const KNOWN_UPWARD: &[(&str, &str)] = &[];

/// The top-level module a file under `src/` belongs to.
fn module_of(path: &Path) -> String {
    let src = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let rel = path.strip_prefix(&src).expect("under src");
    let first = rel.components().next().expect("a component");
    first
        .as_os_str()
        .to_string_lossy()
        .trim_end_matches(".rs")
        .to_string()
}

fn rust_files(dir: &Path, out: &mut Vec<std::path::PathBuf>) {
    for entry in std::fs::read_dir(dir).expect("read src") {
        let path = entry.expect("entry").path();
        if path.is_dir() {
            rust_files(&path, out);
        } else if path.extension().is_some_and(|x| x == "rs") {
            out.push(path);
        }
    }
}

/// The crate modules a source text names: `crate::x` paths and `crate::{x, y}` groups.
fn named_modules(text: &str) -> std::collections::BTreeSet<String> {
    let mut out = std::collections::BTreeSet::new();
    let mut rest = text;
    while let Some(at) = rest.find("crate::") {
        rest = &rest[at + "crate::".len()..];
        let names: Vec<&str> = if let Some(group) = rest.strip_prefix('{') {
            let end = group.find('}').unwrap_or(group.len());
            group[..end].split(',').collect()
        } else {
            vec![rest]
        };
        for name in names {
            let ident: String = name
                .trim()
                .chars()
                .take_while(|c| c.is_ascii_alphanumeric() || *c == '_')
                .collect();
            if !ident.is_empty() {
                out.insert(ident);
            }
        }
    }
    out
}

#[test]
fn library_modules_only_use_their_own_layer_and_those_below() {
    let layer_of = |m: &str| LAYERS.iter().position(|l| l.contains(&m));
    let mut files = Vec::new();
    rust_files(
        &Path::new(env!("CARGO_MANIFEST_DIR")).join("src"),
        &mut files,
    );
    files.sort();
    let mut wrong = Vec::new();
    for file in &files {
        let me = module_of(file);
        if me == "lib" {
            continue;
        }
        let mine = layer_of(&me)
            .unwrap_or_else(|| panic!("{}: module `{me}` is missing from LAYERS", file.display()));
        let text = std::fs::read_to_string(file).expect("read");
        for used in named_modules(&text) {
            let Some(theirs) = layer_of(&used) else {
                continue;
            };
            if theirs > mine && !KNOWN_UPWARD.contains(&(me.as_str(), used.as_str())) {
                wrong.push(format!("{} ({me}) uses {used}", file.display()));
            }
        }
    }
    assert!(
        wrong.is_empty(),
        "uses against the layers:\n{}",
        wrong.join("\n")
    );
    // The test itself sees an upward use: the archive naming the command layer.
    assert!(named_modules("use crate::{commands::load, diag};").contains("commands"));
}

/// Why a tracked file's text reaches outside the repository, one sentence a finding.
/// Nothing outside is spelled here: the rules are about the repository itself.
/// `markdown` holds the names of the repository's own markdown files, `machine` the
/// absolute paths beside the checkout and of the user's files; `folder` is the
/// file's folder and `root` the repository's (both canonical).
fn outside_mentions(
    text: &str,
    folder: &Path,
    root: &Path,
    markdown: &BTreeSet<String>,
    machine: &[String],
) -> Vec<String> {
    let mut found = Vec::new();
    let is_path_char = |c: char| c.is_ascii_alphanumeric() || "._-/".contains(c);
    for token in text.split(|c: char| !is_path_char(c)) {
        // A markdown document that the repository does not hold (notes kept elsewhere).
        if let Some(stem) = token.strip_suffix(".md") {
            let name = format!("{}.md", stem.rsplit('/').next().unwrap_or(stem));
            if !stem.is_empty() && !markdown.contains(&name) {
                found.push(format!("names `{token}`, which is not in the repository"));
            }
        }
        // A relative path to something that exists outside the repository, counted
        // from the file's folder or from the root (paths made up for examples, such as
        // a hostile input's, exist nowhere and pass).
        let names_something = token
            .split('/')
            .any(|p| !p.is_empty() && p != "." && p != "..");
        if token.starts_with("../") && names_something {
            let outside = [folder, root].iter().any(|base| {
                base.join(token)
                    .canonicalize()
                    .is_ok_and(|p| !p.starts_with(root))
            });
            if outside {
                found.push(format!("names `{token}`, outside the repository"));
            }
        }
    }
    for folder in machine {
        if text.contains(folder.as_str()) {
            found.push("names an absolute path on this machine".to_string());
        }
    }
    found
}

/// The absolute paths a tracked file must never name: everything beside the checkout
/// in the folder that holds it, and the user's home folder.
fn machine_folders(root: &Path) -> Vec<String> {
    let mut out = Vec::new();
    if let (Some(parent), Some(me)) = (root.parent(), root.file_name()) {
        if parent.components().count() > 1 {
            for entry in std::fs::read_dir(parent).into_iter().flatten().flatten() {
                if entry.file_name() != me {
                    out.push(parent.join(entry.file_name()).display().to_string());
                }
            }
        }
    }
    if let Some(home) = std::env::var_os("HOME").filter(|h| Path::new(h).components().count() > 1) {
        out.push(format!("{}/", Path::new(&home).display()));
    }
    out
}

#[test]
fn the_repository_names_nothing_outside_itself() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let listed = std::process::Command::new("git")
        .args(["ls-files", "-z"])
        .current_dir(root)
        .output()
        .expect("this test lists the tracked files with git, which must be on the PATH");
    assert!(
        listed.status.success(),
        "git ls-files failed: {}",
        String::from_utf8_lossy(&listed.stderr)
    );
    let files: Vec<String> = listed
        .stdout
        .split(|&b| b == 0)
        .filter(|p| !p.is_empty())
        .map(|p| String::from_utf8_lossy(p).into_owned())
        .collect();
    assert!(
        files.len() > 100,
        "only {} tracked files listed",
        files.len()
    );
    let markdown: BTreeSet<String> = files
        .iter()
        .filter(|f| f.ends_with(".md"))
        .map(|f| f.rsplit('/').next().unwrap_or(f).to_string())
        .collect();
    let machine = machine_folders(root);
    let root = root.canonicalize().expect("the repository's folder");
    let mut problems = Vec::new();
    for file in &files {
        let bytes = match std::fs::read(root.join(file)) {
            Ok(t) => t,
            // Deleted in the working tree, not yet in the index: nothing to read.
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => continue,
            Err(e) => panic!("{file}: {e}"),
        };
        let text = String::from_utf8_lossy(&bytes);
        let folder = root
            .join(file)
            .parent()
            .map(Path::to_path_buf)
            .unwrap_or_default();
        problems.extend(
            outside_mentions(&text, &folder, &root, &markdown, &machine)
                .into_iter()
                .map(|why| format!("{file}: {why}")),
        );
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn the_outside_check_finds_what_it_looks_for() {
    // A made-up repository with a folder beside it.
    let place = tempfile::tempdir().expect("tempdir");
    let base = place.path().canonicalize().expect("canonical");
    let root = base.join("repo");
    std::fs::create_dir_all(root.join("src")).expect("repo");
    std::fs::create_dir_all(base.join("beside")).expect("beside");
    let folder = root.join("src");
    let markdown: BTreeSet<String> = ["methods.md".to_string()].into();
    let machine = vec![base.join("beside").display().to_string()];
    let hit = |t: &str| !outside_mentions(t, &folder, &root, &markdown, &machine).is_empty();
    // A markdown document the repository does not hold, and one it does.
    assert!(hit("see README.md for the values"));
    assert!(!hit("see docs/methods.md"));
    // A relative path to a folder beside the repository, from the root or the file.
    assert!(hit("read ../beside"));
    assert!(hit("read ../../beside"));
    assert!(!hit("a hostile `../../x` that exists nowhere"));
    // An absolute path to something beside the checkout.
    assert!(hit(&format!("{}/x", machine[0])));
    assert!(!hit("/etc/passwd is refused as a companion file"));
}
