//! The deal-file JSON Schema: checked by an independent draft 2020-12 implementation
//! (the `jsonschema` crate) against the example deals, the starters `candor new`
//! writes, the malformed fixtures, and the validator's own verdict on variants.

use crate::support::{candor, examples, root};

fn schema() -> jsonschema::Validator {
    let schema = candor::schema::deal_schema();
    jsonschema::draft202012::meta::validate(&schema).expect("the schema is a valid 2020-12 schema");
    jsonschema::draft202012::new(&schema).expect("the schema compiles")
}

/// A deal file as a YAML editor's language server sees it: YAML read into JSON.
fn as_json(yaml: &str) -> serde_json::Value {
    let value: serde_yaml::Value = serde_yaml::from_str(yaml).expect("YAML parses");
    serde_json::to_value(value).expect("YAML converts to JSON")
}

fn errors(v: &jsonschema::Validator, yaml: &str) -> Vec<String> {
    let instance = as_json(yaml);
    v.iter_errors(&instance)
        .map(|e| format!("{} at {}", e, e.instance_path))
        .collect()
}

/// The validator's verdict on a deal file's text (CSV companions are not read here).
fn validator_accepts(yaml: &str) -> bool {
    let Ok(raw) = candor::input::parse(yaml) else {
        return false;
    };
    let mut no_csv = |_: &str| Err("no CSV files in this test".to_string());
    candor::model::validate(&raw, &mut no_csv).is_ok()
}

#[test]
fn committed_schema_file_is_the_command_output() {
    let out = candor(&["schema"]);
    assert_eq!(out.status.code(), Some(0));
    let printed = String::from_utf8(out.stdout).unwrap();
    let committed = std::fs::read_to_string(root().join("deal.schema.json"))
        .expect("deal.schema.json is committed");
    // Compared without printing both texts: they are long.
    assert!(
        printed == committed,
        "deal.schema.json is stale: run `cargo run -- schema > deal.schema.json`"
    );
    let parsed: serde_json::Value = serde_json::from_str(&printed).unwrap();
    assert_eq!(
        parsed["$schema"],
        "https://json-schema.org/draft/2020-12/schema"
    );
}

#[test]
fn every_example_deal_validates() {
    let v = schema();
    let dir = examples();
    let mut seen = 0;
    for entry in std::fs::read_dir(&dir).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().and_then(|e| e.to_str()) != Some("yaml") {
            continue;
        }
        let text = std::fs::read_to_string(&path).unwrap();
        // The modeline that points YAML editors at the committed schema.
        assert!(
            text.starts_with("# yaml-language-server: $schema=../deal.schema.json\n"),
            "{} lacks the schema modeline",
            path.display()
        );
        let errs = errors(&v, &text);
        assert!(errs.is_empty(), "{}: {errs:#?}", path.display());
        seen += 1;
    }
    assert!(seen >= 5, "only {seen} example deals found");
}

#[test]
fn starters_from_candor_new_validate() {
    let v = schema();
    for dated in [false, true] {
        let text = candor::commands::new::starter("Ash Court", dated, "ash-court.yaml");
        let errs = errors(&v, &text);
        assert!(errs.is_empty(), "dated={dated}: {errs:#?}");
    }
}

#[test]
fn malformed_fixtures_are_rejected() {
    let v = schema();
    let dir = root().join("tests/fixtures/malformed");
    // Mistakes of shape (types, unknown or missing fields, words, forms), which a
    // schema can see; number ranges and calendar checks are the validator's alone.
    for name in [
        "unknown-field--typo",
        "unknown-field--scenario-key",
        "wrong-type--amounts-not-a-list",
        "wrong-type--top-level-list",
        "missing-field--deal-name",
        "missing-field--hurdle",
        "missing-field--no-version",
        "missing-field--dated-amount",
        "unknown-value--frequency",
        "unknown-value--day-count",
        "unknown-value--signoff-decision",
        "unknown-version--three",
        "bad-currency--euro",
        "bad-number--rate-as-text",
        "flows-conflict--periodic-and-dated",
        "flows-conflict--csv-and-amounts",
        "reserved-name--scenario-base",
        "empty-flows--no-amounts",
        "several--five-mistakes",
        "bad-key--line-key-with-space",
        "flows-conflict--line-two-forms",
        "missing-field--line-without-amounts",
        "unknown-value--units",
        "unknown-field--line-field-typo",
    ] {
        let text = std::fs::read_to_string(dir.join(format!("{name}.yaml"))).unwrap();
        assert!(!errors(&v, &text).is_empty(), "{name} passes the schema");
        assert!(!validator_accepts(&text), "{name} passes the validator");
    }
}

/// The schema and the validator give the same verdict on variants of one deal that
/// touch each word list, each optional block and each kind of value.
#[test]
fn schema_and_validator_agree_on_variants() {
    let v = schema();
    let base = "candor: 1\ndeal:\n  name: Agreement deal\n  currency: EUR\n  as_of: 2027-01-01\nhurdle_rate: 9%\n";
    let periodic = "cash_flows:\n  every: year\n  amounts: [-1000, 600, 600]\n";
    let cases: Vec<(String, bool)> = vec![
        // (file, what both must say)
        (format!("{base}{periodic}"), true),
        (format!("{base}cash_flows:\n  every: Half-Year\n  amounts: [-1000, 600, 600]\n"), true),
        (format!("{base}cash_flows:\n  every: fortnight\n  amounts: [-1000, 600, 600]\n"), false),
        (format!("{base}cash_flows:\n  every: year\n  start: 2027-03-01\n  amounts: [-1000, \"600.50\", 600]\n"), true),
        (format!("{base}cash_flows:\n  every: year\n  amounts: [-1000, 1.2.3, 600]\n"), false),
        (format!("{base}cash_flows:\n  every: year\n  amounts: []\n"), false),
        (format!("{base}cash_flows:\n  day_count: ACT/360\n  dated:\n    - {{ date: 2027-01-01, amount: -1000 }}\n    - {{ date: 2028-01-01, amount: 1100, note: sale }}\n"), true),
        (format!("{base}cash_flows:\n  day_count: act/365\n  dated:\n    - {{ date: 2027-01-01, amount: -1000 }}\n"), false),
        (format!("{base}cash_flows:\n  day_count: 30/360\n  dated:\n    - {{ date: 2027-01-01, amount: -1000, memo: x }}\n"), false),
        (format!("{base}finance_rate: 0.05\nreinvestment_rate: \"6.5%\"\n{periodic}"), true),
        (format!("{base}finance_rate: five\n{periodic}"), false),
        // A bare rate of 1 or more reads as 100% or more and needs the percent sign
        // (the validator reports `rate-range`); a bare fraction below 1 does not.
        (format!("candor: 1\ndeal:\n  name: X\n  currency: EUR\n  as_of: 2027-01-01\nhurdle_rate: 9\n{periodic}"), false),
        (format!("{base}finance_rate: \"1.5\"\n{periodic}"), false),
        (format!("{base}finance_rate: -0.25\nreinvestment_rate: \"0.999\"\n{periodic}"), true),
        (format!("{base}finance_rate: 150%\n{periodic}"), true),
        (format!("{base}finance_rate:\n{periodic}"), true),
        (format!("{base}{periodic}scenarios:\n  low:\n    inflows_factor: 0.8\n    shift_inflows: 1\n    description: lower and later\n"), true),
        (format!("{base}{periodic}scenarios:\n  low:\n    inflows_factor: [0.8]\n"), false),
        (format!("{base}{periodic}scenarios:\n  low:\n    shift_inflows: 1.5\n"), false),
        (format!("{base}{periodic}scenarios:\n  low:\n    outflows_factor: -1\n"), false),
        (format!("{base}{periodic}scenarios:\n  other:\n    cash_flows:\n      every: year\n      amounts: [-900, 500, 500]\n"), true),
        (format!("{base}{periodic}memo:\n  recommendation: Approve.\n  risks: [one, two]\n  sections:\n    - {{ title: Market, text: Steady. }}\n"), true),
        (format!("{base}{periodic}memo:\n  risks: just one\n"), false),
        (format!("{base}{periodic}memo:\n  sections:\n    - {{ title: Market }}\n"), false),
        (format!("{base}{periodic}memo:\n  conclusion: yes\n"), false),
        (format!("{base}{periodic}signoff:\n  prepared_by: A. Analyst\n  decision: Approved\n  date: 2027-02-01\n"), true),
        (format!("{base}{periodic}signoff:\n  decision: maybe\n"), false),
        (format!("{base}{periodic}signoff:\n  date: [2027-02-01]\n"), false),
        (format!("candor: 1\ndeal:\n  name: X\n  currency: usd\n  as_of: 2027-01-01\nhurdle_rate: 9%\n{periodic}"), false),
        (format!("candor: 1\ndeal:\n  name: X\n  currency: CHF\n  as_of: 2027-01-01\n  sector: energy\nhurdle_rate: 9%\n{periodic}"), false),
    ];
    for (text, expected) in cases {
        let errs = errors(&v, &text);
        assert_eq!(errs.is_empty(), expected, "schema on:\n{text}\n{errs:#?}");
        assert_eq!(validator_accepts(&text), expected, "validator on:\n{text}");
    }
}

/// The same agreement on deals of format version 2: lines in each form, units and
/// basis, and each kind of scenario change.
#[test]
fn schema_and_validator_agree_on_version_two() {
    let v = schema();
    let head = "candor: 2\ndeal:\n  name: Lines deal\n  currency: EUR\n  as_of: 2027-01-01\nhurdle_rate: 9%\ntiming: { every: year }\n";
    let lines = "lines:\n  build: { label: Build, amounts: [-1000] }\n  rent: { stream: { first: 300, start: 1, periods: 5, growth: 2% } }\n";
    let cases: Vec<(String, bool)> = vec![
        (format!("{head}{lines}"), true),
        (format!("{}{lines}", head.replace("as_of: 2027-01-01\n", "as_of: 2027-01-01\n  units: Thousands\n  basis: { prices: real, tax: after, rates: real }\n")), true),
        (format!("{}{lines}", head.replace("as_of: 2027-01-01\n", "as_of: 2027-01-01\n  units: dozens\n")), false),
        (format!("{}{lines}", head.replace("as_of: 2027-01-01\n", "as_of: 2027-01-01\n  basis: { prices: current }\n")), false),
        (format!("{head}horizon: 8\n{lines}"), true),
        (format!("{head}lines:\n  build: {{ amounts: [-1000] }}\n  exit: {{ terminal: {{ at: 5, next_flow: 80, growth: 1%, discount: 9% }} }}\n"), true),
        (format!("{head}lines:\n  build: {{ amounts: [-1000] }}\n  rent: {{ amounts: [300, 300], from: 1, stream: {{ first: 1, start: 0, periods: 1 }} }}\n"), false),
        (format!("{head}lines:\n  build: {{ amounts: [-1000] }}\n  rent: {{ label: Rent }}\n"), false),
        (format!("{head}lines:\n  build: {{ amounts: [-1000] }}\n  rent: {{ stream: {{ first: 300, start: 1, periods: 5, speed: 2 }} }}\n"), false),
        (format!("{head}lines:\n  build it: {{ amounts: [-1000, 600, 600] }}\n"), false),
        (format!("{head}lines: {{}}\n"), false),
        (format!("{head}{lines}scenarios:\n  s:\n    label: Stressed\n    hurdle_rate: 10%\n    factors: {{ build: 1.2, rent: 0.9 }}\n    shift: {{ rent: 1 }}\n    extend_horizon: true\n"), true),
        (format!("{head}{lines}scenarios:\n  s:\n    change: {{ rent: {{ stream: {{ growth: 0% }} }} }}\n    add: {{ grant: {{ amounts: [100] }} }}\n    drop: [build]\n"), true),
        (format!("{head}{lines}scenarios:\n  s:\n    factors: {{ rent: -1 }}\n"), false),
        (format!("{head}{lines}scenarios:\n  s:\n    cash_flows: {{ every: year, amounts: [1] }}\n"), false),
        (format!("{head}{lines}scenarios:\n  s:\n    extend_horizon: maybe\n"), false),
    ];
    for (text, expected) in cases {
        let errs = errors(&v, &text);
        assert_eq!(errs.is_empty(), expected, "schema on:\n{text}\n{errs:#?}");
        assert_eq!(validator_accepts(&text), expected, "validator on:\n{text}");
    }
}
