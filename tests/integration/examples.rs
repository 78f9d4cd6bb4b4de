//! Every deal in `example-deals/` must load and validate, so the shipped examples
//! can never rot; new examples are covered by being placed in the folder.

use crate::support::{example, examples};
use candor::commands::load::load_deal;

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
                panic!("{}", candor::commands::check::render_failure(&f, &shown));
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
