//! The whole pipeline on generated deals: YAML text -> `input::parse` ->
//! `model::validate` -> `engine::analyse` -> the memo's markup and PDF. Deals are
//! periodic or dated, 2 to 60 flows, 0 to 4 sign changes, amounts with up to two
//! decimals, and a hurdle rate.
//!
//! Oracle: the engine itself. These properties do not check the engine's numbers (the
//! root finder is checked against outside references in `tests/roots.rs`,
//! `tests/rates.rs` and the cross-checks); they check that the memo prints exactly what
//! the engine reported: every root, formatted as the memo formats rates
//! (`present::root_rate` with `present::scenario_rate_decimals`), the NPV at the hurdle
//! (`present::money`), the root count, and "no real IRR" when there is none.
//!
//! Typesetting takes a fraction of a second per memo, so the PDF property runs 24 cases
//! and reads the text back with `support::pdf`, a reader independent of the typesetter; the
//! markup property, which needs no typesetting, runs 256.

use crate::support::pdf::Pdf;
use candor::chart;
use candor::engine::{self, Analysis, ScenarioAnalysis};
use candor::memo::{build_memo, sha256_hex, MemoInputs};
use candor::model::Deal;
use candor::report::{self, MemoContext};
use proptest::prelude::*;
use proptest::sample::subsequence;
use std::collections::BTreeMap;

const DAY_COUNTS: [&str; 6] = [
    "act/365f",
    "act/360",
    "act/act-isda",
    "30/360",
    "30e/360",
    "30e/360-isda",
];
const EVERY: [&str; 6] = ["year", "half-year", "quarter", "month", "week", "day"];

/// One generated deal and what was asked of the generator.
#[derive(Debug, Clone)]
struct Generated {
    yaml: String,
    sign_changes: usize,
}

/// An amount's text: `units` with `scale` (0 to 2) decimals, with the given sign.
fn amount_text(negative: bool, cents: u64, scale: u8) -> String {
    let digits = match scale {
        0 => (cents / 100).max(1).to_string(),
        1 => {
            let tenths = (cents / 10).max(1);
            format!("{}.{}", tenths / 10, tenths % 10)
        }
        _ => format!("{}.{:02}", cents / 100, cents % 100),
    };
    if negative {
        format!("-{digits}")
    } else {
        digits
    }
}

fn deal_strategy() -> impl Strategy<Value = Generated> {
    (2usize..=60)
        .prop_flat_map(|n| (Just(n), 0..=4usize.min(n - 1)))
        .prop_flat_map(|(n, changes)| {
            (
                Just(n),
                // Where the sign flips: `changes` distinct places among the n-1 gaps.
                subsequence((1..n).collect::<Vec<_>>(), changes),
                any::<bool>(),
                prop::collection::vec((1u64..=2_000_000_000, 0u8..=2), n),
                prop::collection::vec(1u32..=400, n),
                any::<bool>(),
                0usize..6,
                0u32..=3000,
            )
        })
        .prop_map(
            |(n, flips, start_negative, sizes, gaps, dated, kind, hurdle_bp)| {
                let mut negative = start_negative;
                let mut amounts = Vec::with_capacity(n);
                for (i, (cents, scale)) in sizes.iter().enumerate() {
                    if flips.contains(&i) {
                        negative = !negative;
                    }
                    amounts.push(amount_text(negative, *cents, *scale));
                }
                // A hurdle rate with up to two decimals of a percent: 0.00% to 30.00%.
                let hurdle = format!("{}.{:02}%", hurdle_bp / 100, hurdle_bp % 100);
                let flows = if dated {
                    let start = chrono::NaiveDate::from_ymd_opt(2027, 1, 4).expect("date");
                    let mut day = 0i64;
                    let mut lines = String::new();
                    for (a, gap) in amounts.iter().zip(&gaps) {
                        let date = start + chrono::Duration::days(day);
                        lines.push_str(&format!("    - {{ date: {date}, amount: {a} }}\n"));
                        day += i64::from(*gap);
                    }
                    format!("  day_count: {}\n  dated:\n{lines}", DAY_COUNTS[kind])
                } else {
                    format!(
                        "  every: {}\n  amounts: [{}]\n",
                        EVERY[kind],
                        amounts.join(", ")
                    )
                };
                Generated {
                    yaml: format!(
                        "candor: 1\ndeal:\n  name: Generated deal\n  currency: EUR\n  \
                         as_of: 2027-01-01\nhurdle_rate: {hurdle}\ncash_flows:\n{flows}"
                    ),
                    sign_changes: flips.len(),
                }
            },
        )
}

/// The generated YAML through the reader and the validator, as `load_deal` runs them.
fn validated(g: &Generated) -> Deal {
    let raw = candor::input::parse(&g.yaml)
        .unwrap_or_else(|d| panic!("generated YAML does not parse: {d:?}\n{}", g.yaml));
    let mut no_companions = |name: &str| Err(format!("no file {name} in this test"));
    candor::model::validate(&raw, &mut no_companions)
        .unwrap_or_else(|d| panic!("generated deal is invalid: {d:?}\n{}", g.yaml))
}

/// One figure the memo must print, formatted by the memo's own formatters from the
/// engine's report.
#[derive(Debug)]
enum Figure {
    /// The `n`-th root's annual rate.
    Root(usize, String),
    /// The sentence giving the count: "no real IRR", "one real IRR", "3 real IRRs".
    Count(String),
    /// The NPV at the hurdle, money as the memo prints it.
    Npv(String),
}

impl Figure {
    /// As it reads on the page.
    fn printed(&self) -> String {
        match self {
            Figure::Root(n, rate) => format!("IRR {n}: {rate}"),
            Figure::Count(phrase) => format!("These flows have {phrase}"),
            Figure::Npv(money) => format!("EUR {money}"),
        }
    }

    /// As it stands in the markup: values escaped, inside the template's own markup.
    fn in_markup(&self) -> String {
        match self {
            Figure::Root(n, rate) => format!("IRR {n}: {}", report::escape_markup(rate)),
            Figure::Count(phrase) => format!("These flows have *{phrase}*"),
            Figure::Npv(money) => format!("[EUR {}]", report::escape_markup(money)),
        }
    }
}

fn expected_figures(s: &ScenarioAnalysis) -> Vec<Figure> {
    let decimals = candor::present::scenario_rate_decimals(s);
    let mut out: Vec<Figure> = s
        .irr
        .roots
        .iter()
        .enumerate()
        .map(|(i, r)| {
            Figure::Root(
                i + 1,
                candor::present::root_rate(r, decimals, candor::present::Style::Print),
            )
        })
        .collect();
    // The memo counts distinct IRRs in its sentence (a double root is one IRR, "a
    // double root"); the appendix gives the count with multiplicity.
    out.push(Figure::Count(match s.irr.roots.len() {
        0 => "no real IRR".to_string(),
        1 => "one real IRR".to_string(),
        n => format!("{n} real IRRs"),
    }));
    out.push(Figure::Npv(candor::present::scenario_npv(
        s,
        candor::present::Style::Print,
    )));
    out
}

fn markup_of(analysis: &Analysis, deal: &Deal, source: &[u8]) -> String {
    let charts = chart::render_all(analysis).expect("charts");
    let ctx = MemoContext {
        source_name: "generated.yaml".to_string(),
        source_sha256: sha256_hex(source),
        companions: Vec::new(),
        created: chrono::NaiveDate::from_ymd_opt(2027, 1, 1)
            .and_then(|d| d.and_hms_opt(0, 0, 0))
            .expect("time"),
        charts,
        templates: BTreeMap::new(),
        changes: None,
        filed_version: None,
    };
    report::render(analysis, deal, &ctx).expect("markup")
}

/// The words of the PDF: line breaks and layout spacing are the typesetter's.
fn pdf_text(pdf: &[u8]) -> String {
    Pdf::parse(pdf).text()
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    /// The markup (the rendered template text, Typst source) holds every figure the
    /// engine reported, escaped as the template escapes every value.
    #[test]
    fn the_markup_prints_what_the_engine_found(g in deal_strategy()) {
        let deal = validated(&g);
        let analysis = engine::analyse(&deal);
        prop_assert_eq!(analysis.scenarios.len(), 1);
        let s = &analysis.scenarios[0];
        // The sign changes generated are the sign changes the engine bounds the count by
        // (Descartes' rule of signs, common practice): no more roots than that.
        prop_assert!(s.irr.bounds.descartes as usize <= g.sign_changes);
        prop_assert!(s.irr.count as usize <= g.sign_changes);
        let markup = markup_of(&analysis, &deal, g.yaml.as_bytes());
        for figure in expected_figures(s) {
            prop_assert!(
                markup.contains(&figure.in_markup()),
                "the markup lacks {:?} as `{}`\n{}",
                figure,
                figure.in_markup(),
                g.yaml
            );
        }
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(24))]

    /// The typeset PDF, read back, shows every root, the NPV at the hurdle
    /// and the root count, and says "no real IRR" exactly when the engine found none.
    #[test]
    fn the_pdf_prints_what_the_engine_found(g in deal_strategy()) {
        let deal = validated(&g);
        let analysis = engine::analyse(&deal);
        let s = &analysis.scenarios[0];
        let inputs = MemoInputs {
            source: g.yaml.as_bytes(),
            source_name: "generated.yaml",
            companions: &[],
            templates: BTreeMap::new(),
            fonts: Default::default(),
            created: chrono::NaiveDate::from_ymd_opt(2027, 1, 1)
                .and_then(|d| d.and_hms_opt(0, 0, 0))
                .expect("time"),
        };
        let memo = build_memo(&analysis, &deal, inputs)
            .map_err(|f| f.render())
            .expect("the memo is made");
        let text = pdf_text(&memo.pdf);
        for figure in expected_figures(s) {
            prop_assert!(
                text.contains(&figure.printed()),
                "the PDF lacks {:?} as `{}`\n{}\n{}",
                figure,
                figure.printed(),
                g.yaml,
                text
            );
        }
        prop_assert_eq!(
            text.contains("no real IRR"),
            s.irr.count == 0,
            "`no real IRR` appears exactly when the engine found none\n{}",
            g.yaml
        );
    }
}
