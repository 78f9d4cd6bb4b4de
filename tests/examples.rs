//! Every deal in `example-deals/` must load and validate, so the shipped examples
//! can never rot; new examples are covered by being placed in the folder.

use candor::files::load::load_deal;
use std::path::Path;

#[test]
fn every_example_deal_is_valid() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("example-deals");
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
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("example-deals/tollgate-depot.yaml");
    let loaded = load_deal(&path).expect("valid");
    assert_eq!(loaded.companions.len(), 1);
    assert_eq!(loaded.companions[0].0, "tollgate-depot-flows.csv");
}

#[test]
fn the_quarry_example_has_two_sign_changes() {
    // The example exists to show two real IRRs; Descartes' rule needs two sign
    // changes for that (common practice).
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("example-deals/corrie-vale-quarry.yaml");
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
    &["diag"],
    &["input"],
    &["model"],
    &["engine", "screen"],
    &["format", "chart", "diff"],
    &["report"],
    &["pdf"],
    &["files"],
    &["memo", "pack"],
    &["archive", "schema"],
    &["cli", "commands", "main"],
];

/// Uses that go against the layers today and the work that removes them; empty once
/// the presentation module owns every word and number.
const KNOWN_UPWARD: &[(&str, &str)] = &[
    ("engine", "format"),
    ("chart", "report"),
    ("diff", "report"),
];

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
