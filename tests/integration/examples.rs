//! Every deal in `example-deals/` must load and validate, so the shipped examples
//! can never rot; new examples are covered by being placed in the folder. And the
//! repository stands alone: no tracked file points outside it.

use crate::support::{example, examples};
use candor::files::load::load_deal;
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
    &["diag", "limits"],
    &["input"],
    &["model"],
    &["engine", "screen"],
    &["present", "chart", "diff"],
    &["report"],
    &["pdf"],
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

/// Tracked files that still carry an old citation and are being rewritten elsewhere:
/// each must exist and still hold a mention (the test says when one can go), so the
/// list only shrinks. Empty: every file cites the repository's own docs.
const PENDING: &[&str] = &[];

/// What a tracked file outside `docs/` must not mention, each with a reason.
fn outside_mentions(text: &[u8]) -> Vec<&'static str> {
    // Spelled in pieces so that this file passes its own check.
    let names: [(&[u8], &str); 3] = [
        (
            concat!("DESIGN", ".md").as_bytes(),
            "cites design notes outside the repository (use docs/design.md)",
        ),
        (
            concat!("FIELD", ".md").as_bytes(),
            "cites method notes outside the repository (use docs/methods.md)",
        ),
        (
            concat!("..", "/shared").as_bytes(),
            "names a folder beside the repository",
        ),
    ];
    let mut found: Vec<&'static str> = names
        .iter()
        .filter(|(name, _)| text.windows(name.len()).any(|w| w == *name))
        .map(|(_, why)| *why)
        .collect();
    // An absolute path under the machine's work or home folder: the folder's name with
    // its leading slash, not continuing a word, a relative path or a URL, and not the
    // start of a longer name.
    for folder in [concat!("/", "work"), concat!("/", "home")] {
        let folder = folder.as_bytes();
        let absolute = (0..text.len().saturating_sub(folder.len() - 1)).any(|i| {
            let before = i.checked_sub(1).map(|j| text[j]);
            let after = text.get(i + folder.len()).copied();
            text[i..].starts_with(folder)
                && !before.is_some_and(|b| b.is_ascii_alphanumeric() || b"._-~/".contains(&b))
                && !after.is_some_and(|b| b.is_ascii_alphanumeric() || b"._-".contains(&b))
        });
        if absolute {
            found.push("names an absolute path on a developer's machine");
        }
    }
    found
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
    let mut problems = Vec::new();
    for file in &files {
        if file.starts_with("docs/") {
            continue;
        }
        let text = match std::fs::read(root.join(file)) {
            Ok(t) => t,
            // Deleted in the working tree, not yet in the index: nothing to read.
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => continue,
            Err(e) => panic!("{file}: {e}"),
        };
        let found = outside_mentions(&text);
        if PENDING.contains(&file.as_str()) {
            if found.is_empty() {
                problems.push(format!("{file}: clean now; remove it from PENDING"));
            }
            continue;
        }
        problems.extend(found.into_iter().map(|why| format!("{file}: {why}")));
    }
    for pending in PENDING {
        if !files.iter().any(|f| f == pending) {
            problems.push(format!(
                "{pending}: no longer tracked; remove it from PENDING"
            ));
        }
    }
    assert!(problems.is_empty(), "{}", problems.join("\n"));
}

#[test]
fn the_outside_check_finds_what_it_looks_for() {
    // Each kind of mention is found, and relative paths and URLs are not mistaken for
    // absolute ones.
    let hit = |t: &str| !outside_mentions(t.as_bytes()).is_empty();
    assert!(hit(concat!("see ", "DESIGN", ".md")));
    assert!(hit(concat!("per ", "FIELD", ".md [computed]")));
    assert!(hit(concat!("cat ", "..", "/shared/notes")));
    assert!(hit(concat!("the values of `", "/", "work", "/notes/x`")));
    assert!(hit(concat!("\"", "/", "home", "/someone/deal.yaml\"")));
    assert!(hit(concat!("cd ", "/", "work")));
    assert!(!hit("docs/design.md and docs/methods.md"));
    assert!(!hit(
        "tests/work/x, ~/home, https://example.org/home/ and /homes or /workshop"
    ));
}
