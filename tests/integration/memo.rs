//! The committee memo: markup, escaping, PDF/A-3b with the deal attached, fonts,
//! reproducible bytes, and (once the engine is in) every example deal end to end.
//!
//! The PDF checks read the files back with `support::pdf` (the `lopdf` crate, a PDF
//! reader independent of the typesetter that wrote them); `.ci/run` also checks the
//! example memos with poppler-utils and `qpdf` (`poppler` module).

use crate::support::pdf::Pdf;
use crate::support::{example_deals, words as normalise};
use candor::engine::{
    Analysis, BalanceKind, BalanceRow, Caution, Certificate, Decision, FlowRow, Flows, IrrReport,
    Payback, PaybackMethod, PaybackStatus, ProfilePoint, Root, ScenarioAnalysis, SignBounds,
    Stance, Totals,
};
use candor::memo::{build_memo, build_memo_with_changes, sha256_hex, MemoInputs, MemoOutput};
use candor::model::lines::split_by_sign;
use candor::model::{
    Clock, Deal, Frequency, Memo, MemoSection, Rates, Scenario, Signoff, SignoffDecision, Units,
};
use chrono::NaiveDate;
use rust_decimal::Decimal;
use std::collections::BTreeMap;
use std::path::Path;
use std::process::Command;

/// A deal name made of every Typst markup character; it must print literally.
const HOSTILE: &str = "#read(\"/etc/hostname\") *x* $y$ <z> @w ][";

fn dec(s: &str) -> Decimal {
    s.parse().expect("test decimal")
}

/// The pump problem of Lorie and Savage (1955): flows −1,600, +10,000, −10,000 a year
/// apart have IRRs of 25% and 400%. The balance paths, the NPV at 10% (−773.55), the
/// MIRR at 10%/10% (5.60%) and the other figures below were worked by hand from
/// those flows; this is test data for the memo stage, not engine output.
fn pump_scenario(name: &str, cautions: Vec<Caution>) -> ScenarioAnalysis {
    let amounts = ["-1600", "10000", "-10000"];
    let flows: Vec<FlowRow> = amounts
        .iter()
        .enumerate()
        .map(|(i, a)| FlowRow {
            period: Some(i as u32),
            date: Some(format!("{}-01-01", 2027 + i)),
            years: i as f64,
            amount: dec(a),
            note: None,
        })
        .collect();
    let path = |balances: [&str; 3]| -> Vec<BalanceRow> {
        balances
            .iter()
            .zip(amounts)
            .enumerate()
            .map(|(i, (b, a))| BalanceRow {
                years: i as f64,
                flow: dec(a),
                balance: dec(b),
            })
            .collect()
    };
    let root = |rate: f64, balances, interval: [f64; 2]| Root {
        annual_rate: Some(rate),
        periodic_rate: Some(rate),
        log10_annual_growth: (1.0 + rate).log10(),
        multiplicity: 1,
        interval: Some(interval),
        log10_interval: [(1.0 + interval[0]).log10(), (1.0 + interval[1]).log10()],
        balance_kind: BalanceKind::Mixed,
        stance: Stance::Borrowing,
        decision: Decision::Reject,
        extreme: false,
        balance_path: path(balances),
    };
    ScenarioAnalysis {
        name: name.to_string(),
        label: None,
        lines: None,
        peak_exposure: None,
        committed_outflows: None,
        hurdle_rate: 0.10,
        finance_rate: 0.10,
        reinvestment_rate: 0.10,
        periods_per_year: Some(1),
        flows,
        totals: Totals {
            inflows: dec("10000"),
            outflows: dec("-11600"),
            net: dec("-1600"),
            horizon_years: 2.0,
        },
        irr: IrrReport {
            count: 2,
            upper_bound: 2,
            certified: true,
            bounds: SignBounds {
                descartes: 2,
                above_zero: Some(2),
                below_zero: Some(0),
            },
            certificate: Certificate::Enclosures {
                count: 2,
                descartes: 2,
                cumulative: Some((2, 0)),
            },
            roots: vec![
                root(0.25, ["-1600", "8000", "0"], [0.2499999, 0.2500001]),
                root(4.0, ["-1600", "2000", "0"], [3.9999999, 4.0000001]),
            ],
            unresolved: vec![],
            exact_check: None,
            complex_reading: None,
        },
        npv_at_hurdle: Some(dec("-773.55")),
        npv_at_hurdle_approx: None,
        decision: Decision::Reject,
        mirr: Some(0.05599),
        return_on_invested_capital: None,
        money_multiple: Some(dec("0.86")),
        profitability_index: Some(0.9216),
        // -1,600, +10,000, -10,000: the running total ends at -1,600, so the money is
        // not paid back within the forecast, although it is recovered for a year.
        payback: Payback {
            simple_years: None,
            discounted_years: None,
            turns_negative_again: true,
            status: PaybackStatus::NotReached,
            discounted_status: PaybackStatus::NotReached,
            method: PaybackMethod::WithinPeriod,
            simple_date: None,
            discounted_date: None,
        },
        npv_profile: (0..=50)
            .map(|i| {
                let r = -0.2 + 0.1 * i as f64;
                ProfilePoint {
                    rate: r,
                    npv: -1600.0 + 10000.0 / (1.0 + r) - 10000.0 / ((1.0 + r) * (1.0 + r)),
                }
            })
            .collect(),
        cautions,
        sensitivity: None,
    }
}

fn sample(name: &str, decision: SignoffDecision) -> (Analysis, Deal) {
    let base = pump_scenario("base", vec![Caution::MultipleIrr]);
    let hostile_scenario = pump_scenario(HOSTILE, vec![Caution::MultipleIrr]);
    let analysis = Analysis {
        deal: name.to_string(),
        currency: "EUR".to_string(),
        units: None,
        basis: None,
        scenarios: vec![base, hostile_scenario],
    };
    let flows = Flows::periodic(["-1600", "10000", "-10000"].iter().map(|a| dec(a)), 1);
    let rates = Rates {
        hurdle: dec("0.10"),
        finance: dec("0.10"),
        reinvestment: dec("0.10"),
    };
    let deal = Deal {
        version: 1,
        units: Units::Ones,
        basis: None,
        name: name.to_string(),
        id: None,
        currency: "EUR".to_string(),
        as_of: NaiveDate::from_ymd_opt(2026, 11, 30).expect("date"),
        rates: Rates {
            hurdle: dec("0.10"),
            finance: dec("0.10"),
            reinvestment: dec("0.10"),
        },
        clock: Clock::Periodic {
            every: Frequency::Year,
            start: NaiveDate::from_ymd_opt(2027, 1, 1),
        },
        scenarios: vec![
            Scenario {
                name: "base".to_string(),
                label: None,
                description: String::new(),
                rates,
                components: split_by_sign(&flows),
                flows: flows.clone(),
                narrow_terminals: vec![],
            },
            Scenario {
                name: HOSTILE.to_string(),
                label: None,
                description: "inflows \u{00d7} 1 (unchanged, for the test)".to_string(),
                rates,
                components: split_by_sign(&flows),
                flows,
                narrow_terminals: vec![],
            },
        ],
        memo: Memo {
            recommendation: Some(format!("Decline. {HOSTILE}")),
            summary: Some(
                "A pump replaced early: money in, money out.\n\nSecond paragraph.".to_string(),
            ),
            risks: vec![format!("Risk with markup: {HOSTILE}")],
            sections: vec![MemoSection {
                title: format!("Section {HOSTILE}"),
                text: "Body of a further section.".to_string(),
            }],
        },
        signoff: Some(Signoff {
            prepared_by: Some("A. Analyst".to_string()),
            reviewed_by: None,
            decision,
            date: NaiveDate::from_ymd_opt(2026, 12, 15),
        }),
        sensitivity: Default::default(),
    };
    (analysis, deal)
}

const SOURCE: &[u8] =
    b"candor: 1\ndeal:\n  name: test\n# bytes only; the attachment must equal them\n";

fn memo_of(analysis: &Analysis, deal: &Deal) -> MemoOutput {
    build_memo(
        analysis,
        deal,
        MemoInputs {
            source: SOURCE,
            source_name: "pump.yaml",
            companions: &[],
            templates: BTreeMap::new(),
            fonts: Default::default(),
            created: deal.as_of.and_hms_opt(0, 0, 0).expect("time"),
        },
    )
    .unwrap_or_else(|f| panic!("memo failed: {}", f.render()))
}

#[test]
fn hostile_text_prints_literally() {
    let (analysis, deal) = sample(HOSTILE, SignoffDecision::Pending);
    let memo = memo_of(&analysis, &deal);
    let pdf = Pdf::parse(&memo.pdf);
    let text = pdf.text();
    // The name appears in the title block, the headline table and the scenario
    // heading; each must be the literal characters. (Caution paragraphs are written by
    // the program from the figures and carry no text of the deal file.)
    assert!(
        text.matches(HOSTILE).count() >= 3,
        "hostile name not literal in:\n{text}"
    );
    // Metadata title is the name too (the document information dictionary).
    assert_eq!(pdf.info("Title").as_deref(), Some(HOSTILE));
    assert_eq!(pdf.info("Author").as_deref(), Some("A. Analyst"));
}

#[test]
fn pdf_is_archival_with_the_deal_attached() {
    let (analysis, deal) = sample("Pump replacement", SignoffDecision::Pending);
    let memo = memo_of(&analysis, &deal);
    let pdf = Pdf::parse(&memo.pdf);
    // PDF/A-3b is declared in the XMP metadata (ISO 19005-3: pdfaid:part 3, conformance B).
    let meta = pdf.xmp();
    assert!(meta.contains("<pdfaid:part>3</pdfaid:part>"), "{meta}");
    assert!(
        meta.contains("<pdfaid:conformance>B</pdfaid:conformance>"),
        "{meta}"
    );
    // The attachment is the exact input.
    assert_eq!(
        pdf.attachments(),
        [("pump.yaml".to_string(), SOURCE.to_vec())]
    );
    // Every font is embedded, as a subset (ISO 19005-3, 6.2.11.4: fonts embedded).
    let fonts = pdf.fonts();
    assert!(!fonts.is_empty());
    for font in &fonts {
        assert!(font.embedded, "font not embedded: {font:?}");
        assert!(font.subset(), "font not subset: {font:?}");
    }
    pdf.check_structure();
    // The footer: page x of y with the short hash, on every page.
    let pages = pdf.pages();
    let short = &sha256_hex(SOURCE)[..12];
    for p in 1..=pages {
        let page = pdf.page_text(p);
        assert!(
            page.contains(&format!("page {p} of {pages}")),
            "page {p}: {page}"
        );
        assert!(page.contains(short), "page {p} lacks the hash: {page}");
        assert!(page.contains("DRAFT"), "page {p} lacks the draft mark");
    }
}

#[test]
fn approved_memo_has_no_draft_mark() {
    let (analysis, deal) = sample("Pump replacement", SignoffDecision::Approved);
    let memo = memo_of(&analysis, &deal);
    let text = Pdf::parse(&memo.pdf).text();
    assert!(!text.contains("DRAFT"), "{text}");
    assert!(text.contains("Approved"));
}

#[test]
fn memo_states_the_figures() {
    let (analysis, deal) = sample("Pump replacement", SignoffDecision::Pending);
    let memo = memo_of(&analysis, &deal);
    let text = Pdf::parse(&memo.pdf).text();
    // Hand-worked figures of the pump problem (see `pump_scenario`).
    for needle in [
        "25.00%",
        "400.00%",
        "\u{2212}773.55",
        "5.60%",
        "0.86\u{00d7}",
        "8,000.00",
        "2,000.00",
        "Several IRRs",
        "This deal has 2 IRRs: 25.00% and 400.00%.",
        "not investment advice",
    ] {
        assert!(text.contains(needle), "missing {needle:?} in:\n{text}");
    }
}

#[test]
fn same_input_gives_the_same_bytes() {
    let (analysis, deal) = sample("Pump replacement", SignoffDecision::Pending);
    let a = memo_of(&analysis, &deal);
    let b = memo_of(&analysis, &deal);
    assert_eq!(a.markup, b.markup);
    assert!(a.pdf == b.pdf, "two builds of one input differ");
}

#[test]
fn markup_snapshot() {
    let (analysis, deal) = sample("Pump replacement", SignoffDecision::Pending);
    let memo = memo_of(&analysis, &deal);
    insta::assert_snapshot!("pump_markup", memo.markup);
}

#[test]
fn every_markup_character_survives_typesetting() {
    // Each character with a meaning in Typst markup, alone and in the combinations
    // that form shorthands (`--`, `---`, `...`, `-?`, `~`) and line-start markers.
    let hostile = "\\ # * _ ` $ < > @ [ ] = - + / ~ \" ' . : -- --- ... -? // /* */ 1. http://x.y";
    let markup = format!(
        "#set text(font: \"Libertinus Serif\")\n{}\n\n= {}\n",
        candor::report::escape_markup(hostile),
        candor::report::escape_markup("- + = / 2. heading-like")
    );
    let options = candor::pdf::TypesetOptions {
        created: NaiveDate::from_ymd_opt(2026, 1, 2)
            .and_then(|d| d.and_hms_opt(3, 4, 5))
            .expect("time"),
        ident: "escape-test".to_string(),
    };
    let pdf = candor::pdf::typeset(&markup, &[], &options)
        .unwrap_or_else(|d| panic!("{}", d.render(Some(&markup))));
    let text = Pdf::parse(&pdf).text();
    assert!(text.contains(hostile), "{text}");
    assert!(text.contains("- + = / 2. heading-like"), "{text}");
}

#[test]
fn typst_errors_are_diagnostics() {
    let options = candor::pdf::TypesetOptions {
        created: NaiveDate::from_ymd_opt(2026, 1, 2)
            .and_then(|d| d.and_hms_opt(0, 0, 0))
            .expect("time"),
        ident: "error-test".to_string(),
    };
    let err = candor::pdf::typeset("#let x = \n#unknown-function()", &[], &options)
        .expect_err("bad markup must fail");
    assert_eq!(err.code, "typeset");
    let err = candor::pdf::typeset("#image(\"/missing.svg\")", &[], &options)
        .expect_err("a missing file must fail");
    assert_eq!(err.code, "typeset");
}

#[test]
fn charts_are_svg_that_typst_can_read() {
    let scenario = pump_scenario("base", vec![]);
    let charts = candor::chart::render(&scenario, "EUR").expect("charts");
    let files = charts.files(0);
    assert_eq!(files.len(), 3, "profile, balance paths and cash flows");
    for (name, svg) in &files {
        let text = String::from_utf8(svg.clone()).expect("utf-8");
        assert!(
            text.starts_with("<svg") && text.trim_end().ends_with("</svg>"),
            "{name}"
        );
        // Text asks for a face the memo bundles, not a generic family.
        assert!(text.contains("Libertinus Serif"), "{name}");
        assert!(!text.contains("sans-serif"), "{name}");
    }
    // The curve is drawn in Okabe–Ito blue, #0072B2 (Okabe and Ito 2008 palette).
    assert!(String::from_utf8_lossy(&files[0].1)
        .to_uppercase()
        .contains("#0072B2"));
    // The profile spans 0%, the hurdle and the IRRs of economic meaning (25%); the IRR
    // of 400% is left off the chart and listed beside it by the memo.
    let profile = String::from_utf8_lossy(&files[0].1).to_string();
    assert!(profile.contains("IRR 1: 25.00%"), "{profile}");
    assert!(!profile.contains("IRR 2"), "{profile}");
    assert!(profile.contains("hurdle 10.00%"));
    let (lo, hi) = charts.profile_range.expect("range");
    assert!(lo < 0.0 && hi > 0.25 && hi < 4.0, "{lo} {hi}");
    assert_eq!(candor::chart::profile_span(&scenario), (lo, hi));
    // Typst (usvg) parses each SVG: a page per chart typesets without error.
    let markup: String = files
        .iter()
        .map(|(n, _)| format!("#image(\"{n}\", width: 100%)\n"))
        .collect();
    let options = candor::pdf::TypesetOptions {
        created: NaiveDate::from_ymd_opt(2026, 1, 2)
            .and_then(|d| d.and_hms_opt(0, 0, 0))
            .expect("time"),
        ident: "chart-test".to_string(),
    };
    let pdf = candor::pdf::typeset(&markup, &files, &options)
        .unwrap_or_else(|d| panic!("{}", d.render(None)));
    assert!(pdf.starts_with(b"%PDF-"));
}

/// The rectangles of an SVG as (fill in capitals, width, height).
fn svg_rects(svg: &str) -> Vec<(String, f64, f64)> {
    let attr = |tag: &str, name: &str| -> Option<String> {
        let start = tag.find(&format!(" {name}=\""))? + name.len() + 3;
        let len = tag[start..].find('"')?;
        Some(tag[start..start + len].to_string())
    };
    svg.split("<rect")
        .skip(1)
        .filter_map(|rest| {
            let tag = &rest[..rest.find('>')?];
            let number = |n: &str| attr(tag, n).and_then(|v| v.parse::<f64>().ok());
            Some((
                attr(tag, "fill")?.to_uppercase(),
                number("width")?,
                number("height")?,
            ))
        })
        .collect()
}

/// Every flow of every example deal is drawn in its scenario's cash-flow chart: one
/// bar a flow, green for an inflow and vermillion for an outflow, at least a pixel wide
/// and tall (a bar narrower than a pixel used to round to nothing, and an outflow of
/// 433,750.80 among 361 monthly flows vanished).
#[test]
fn every_flow_is_drawn_in_the_cash_flow_chart() {
    // Okabe–Ito green and vermillion (Okabe and Ito 2008 palette).
    const GREEN: &str = "#009E73";
    const VERMILLION: &str = "#D55E00";
    for path in example_deals() {
        let loaded = candor::files::load::load_deal(&path).expect("loads");
        let analysis = candor::engine::analyse(&loaded.deal);
        for s in &analysis.scenarios {
            let charts = candor::chart::render(s, &analysis.currency).expect("charts");
            let svg = charts.cash_flows.expect("a cash-flow chart");
            let bars: Vec<(String, f64, f64)> = svg_rects(&svg)
                .into_iter()
                .filter(|(fill, _, _)| fill == GREEN || fill == VERMILLION)
                .collect();
            let inflows = s.flows.iter().filter(|f| f.amount > Decimal::ZERO).count();
            let outflows = s.flows.iter().filter(|f| f.amount < Decimal::ZERO).count();
            let name = format!("{}, {}", path.display(), s.name);
            assert_eq!(
                bars.iter().filter(|b| b.0 == GREEN).count(),
                inflows,
                "{name}: inflow bars"
            );
            assert_eq!(
                bars.iter().filter(|b| b.0 == VERMILLION).count(),
                outflows,
                "{name}: outflow bars"
            );
            for (fill, w, h) in &bars {
                assert!(*w >= 1.0 && *h >= 1.0, "{name}: a {fill} bar of {w} by {h}");
            }
        }
    }
}

/// The most pages a memo of `scenarios` scenarios may take: four for a base case
/// alone, sensitivity section included, and at most one and a half more for each
/// further scenario (docs/design.md "Memo and archive").
fn page_limit(scenarios: usize) -> usize {
    4 + (3 * scenarios.saturating_sub(1)) / 2
}

fn example_memo(path: &Path, base_only: bool) -> (Analysis, MemoOutput) {
    let mut loaded = candor::files::load::load_deal(path)
        .unwrap_or_else(|f| panic!("{}: {:?}", path.display(), f.diagnostics));
    if base_only {
        loaded.deal.scenarios.truncate(1);
    }
    let analysis = candor::engine::analyse(&loaded.deal);
    let name = path
        .file_name()
        .expect("name")
        .to_string_lossy()
        .to_string();
    let memo = build_memo(
        &analysis,
        &loaded.deal,
        MemoInputs {
            source: &loaded.source,
            source_name: &name,
            companions: &loaded.companions,
            templates: BTreeMap::new(),
            fonts: Default::default(),
            created: loaded.deal.as_of.and_hms_opt(0, 0, 0).expect("time"),
        },
    )
    .unwrap_or_else(|f| panic!("{name}: {}", f.render()));
    (analysis, memo)
}

/// Each example deal with its base case alone fits in four pages, its sensitivity
/// section included.
#[test]
fn a_base_case_alone_fits_in_four_pages() {
    for path in example_deals() {
        let (_, memo) = example_memo(&path, true);
        let pages = Pdf::parse(&memo.pdf).pages();
        assert!(pages <= page_limit(1), "{}: {pages} pages", path.display());
    }
}

/// A memo that is not approved carries the DRAFT mark drawn, not set as text: the
/// extracted text holds the word only where the header, the footer and the status
/// line print it, and no stray letters of the mark.
#[test]
fn the_draft_mark_leaves_no_text() {
    let (analysis, deal) = sample("Pump replacement", SignoffDecision::Pending);
    let memo = memo_of(&analysis, &deal);
    let pdf = Pdf::parse(&memo.pdf);
    let pages = pdf.pages();
    for p in 1..=pages {
        let text = pdf.page_text(p);
        // The footer on every page, and the status line on page 1 or the header on
        // every later page.
        assert_eq!(text.matches("DRAFT").count(), 2, "page {p}: {text}");
        let rest = text.replace("DRAFT", " ");
        for token in rest.split_whitespace() {
            assert!(
                !matches!(token, "D" | "R" | "F" | "T" | "DR" | "AFT"),
                "page {p}: stray {token:?} in {text}"
            );
        }
    }
}

/// A committee decision or a recommendation against the figures gets a note on the
/// first page, which says that it does not block it.
#[test]
fn a_decision_against_the_figures_is_noted_on_the_first_page() {
    // The pump's NPV at 10% is -773.55 in both scenarios (see `pump_scenario`).
    let (analysis, mut deal) = sample("Pump replacement", SignoffDecision::Approved);
    deal.memo.recommendation = Some("Approve.".to_string());
    let memo = memo_of(&analysis, &deal);
    let first = Pdf::parse(&memo.pdf).page_text(1);
    let first = normalise(&first);
    for needle in [
        "The recommendation goes against the figures.",
        "The committee's decision goes against the figures.",
        "does not block it",
        "NPV rule says",
        "Committee decision",
    ] {
        assert!(
            first.contains(needle),
            "missing {needle:?} on page 1:\n{first}"
        );
    }
    assert!(!first.contains("The analysis raised no caution"), "{first}");
    // Declining the same deal agrees with the figures: no note.
    let (analysis, deal) = sample("Pump replacement", SignoffDecision::Declined);
    let memo = memo_of(&analysis, &deal);
    let first = normalise(&Pdf::parse(&memo.pdf).page_text(1));
    assert!(!first.contains("goes against the figures"), "{first}");
}

/// Every shipped example deal becomes a memo whose text states each IRR, the NPV at
/// the hurdle, the MIRR and every caution, as the engine computed them, within its
/// page limit; its first page is the decision page.
#[test]
fn every_example_deal_builds_a_memo() {
    use candor::present::{percent, root_rate, scenario_npv, scenario_rate_decimals, Style};
    for path in example_deals() {
        let loaded = candor::files::load::load_deal(&path).expect("loads");
        let name = path
            .file_name()
            .expect("name")
            .to_string_lossy()
            .to_string();
        let (analysis, memo) = example_memo(&path, false);
        let pdf = Pdf::parse(&memo.pdf);
        let text = pdf.text();
        let first = normalise(&pdf.page_text(1));
        assert!(first.contains("NPV rule says"), "{name}: {first}");
        for s in &analysis.scenarios {
            let decimals = scenario_rate_decimals(s);
            let mut needles: Vec<String> = s
                .irr
                .roots
                .iter()
                .map(|r| root_rate(r, decimals, Style::Print))
                .collect();
            needles.push(scenario_npv(s, Style::Print));
            if let Some(m) = s.mirr {
                needles.push(percent(m, 2, Style::Print));
            }
            for c in candor::present::caution_text_list(s, &analysis.currency) {
                needles.push(normalise(c.title));
                // Set for print: a number's sign is the minus sign, as in the tables.
                needles.push(normalise(&candor::present::print_minus(&c.text)));
                // The caution's plain sentence, on the decision page.
                assert!(
                    first.contains(&normalise(candor::present::summary::caution_headline(
                        c.code
                    ))),
                    "{name}: page 1 lacks the sentence of {}",
                    c.code
                );
            }
            for n in needles {
                assert!(text.contains(&n), "{name}, {}: missing {n:?}", s.name);
            }
            // No raw scenario key as a heading: the label is printed, in words.
            if s.name.contains('_') {
                assert!(
                    !text.contains(&s.name),
                    "{name}: the key {} is printed",
                    s.name
                );
            }
        }
        let pages = pdf.pages();
        let limit = page_limit(analysis.scenarios.len());
        assert!(pages <= limit, "{name}: {pages} pages, at most {limit}");
        // The deal file and every CSV file it reads are attached, byte for byte.
        let attached = pdf.attachments();
        assert_eq!(attached.len(), 1 + loaded.companions.len(), "{name}");
        let bytes_of = |n: &str| {
            attached
                .iter()
                .find(|(a, _)| a == n)
                .map(|(_, b)| b.clone())
                .unwrap_or_else(|| panic!("{name}: no attachment {n}"))
        };
        assert_eq!(bytes_of(&name), loaded.source, "{name}");
        for (csv, bytes) in &loaded.companions {
            assert_eq!(&bytes_of(csv), bytes, "{name}: {csv}");
        }
        pdf.check_structure();
    }
}

/// The "changes since" section of a filed version prints its sentences literally, even
/// when a changed narrative field is made of markup characters, and sits after the
/// headline figures.
#[test]
fn changes_since_a_version_print_literally() {
    let (analysis, deal) = sample("Pump", SignoffDecision::Pending);
    let line = format!("Summary changed from \"old\" to \"{HOSTILE}\".");
    let changes = candor::report::ChangesSince {
        version: "007".to_string(),
        lines: vec![line.clone()],
    };
    let memo = build_memo_with_changes(
        &analysis,
        &deal,
        MemoInputs {
            source: SOURCE,
            source_name: "pump.yaml",
            companions: &[],
            templates: BTreeMap::new(),
            fonts: Default::default(),
            created: deal.as_of.and_hms_opt(0, 0, 0).expect("time"),
        },
        Some(changes),
        Some("008"),
    )
    .unwrap_or_else(|f| panic!("memo failed: {}", f.render()));
    assert!(!memo.markup.contains(HOSTILE), "unescaped in the markup");
    let text = Pdf::parse(&memo.pdf).text();
    assert!(text.contains(&line), "{line} not literal in:\n{text}");
    let figures = text.find("The figures").expect("figures");
    let changes = text
        .find("Changes since version 007")
        .expect("section title");
    assert!(figures < changes);
    // The title block names the version the memo is filed as.
    assert!(text.contains("version 008 in the archive"), "{text}");
    // Without the section, the memo has no such heading.
    let plain = memo_of(&analysis, &deal);
    assert!(!plain.markup.contains("Changes since version"));
}

/// `candor memo` against the given house-style folder: (exit code, stderr).
fn memo_with_templates(dir: &Path, templates: &Path) -> (Option<i32>, String) {
    let deal = dir.join("deal.yaml");
    std::fs::write(
        &deal,
        "candor: 1\ndeal: { name: Style test, currency: EUR, as_of: 2027-01-01 }\n\
         hurdle_rate: 8%\ncash_flows:\n  every: year\n  amounts: [-100, 60, 60]\n",
    )
    .unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_candor"))
        .args(["memo", "deal.yaml", "-o", "m.pdf", "--templates"])
        .arg(templates)
        .current_dir(dir)
        .env("SOURCE_DATE_EPOCH", "1798675200")
        .output()
        .unwrap();
    (
        out.status.code(),
        String::from_utf8_lossy(&out.stderr).into_owned(),
    )
}

/// A house style can add font files: a deal whose name holds a Thai letter and a CJK
/// ideograph, which no bundled font shows, fails `check` and `memo` alone, passes
/// `check --templates` with a folder holding a font that has them, and makes a memo
/// whose text holds them. A file that only looks like a font is refused by name.
#[test]
fn a_house_style_adds_fonts_for_characters_the_bundled_fonts_lack() {
    let dir = tempfile::tempdir().unwrap();
    let style = dir.path().join("style");
    std::fs::create_dir(&style).unwrap();
    // A font of our own, built by tests/fixtures/house-fonts/make_font.py.
    std::fs::copy(
        crate::support::root().join("tests/fixtures/house-fonts/candor-test-glyphs.ttf"),
        style.join("glyphs.ttf"),
    )
    .unwrap();
    std::fs::write(
        dir.path().join("deal.yaml"),
        "candor: 1\ndeal: { name: Mill \u{0E01}\u{4E00}, currency: EUR, as_of: 2027-01-01 }\n\
         hurdle_rate: 8%\ncash_flows:\n  every: year\n  amounts: [-100, 60, 60]\n",
    )
    .unwrap();
    let run = |args: &[&str]| {
        let out = crate::support::candor_in(dir.path(), args);
        (out.status.code(), crate::support::text(&out.stderr))
    };
    let (code, err) = run(&["check", "deal.yaml"]);
    assert_eq!(code, Some(1), "{err}");
    assert!(
        err.contains("unshowable-character") && err.contains("U+0E01"),
        "{err}"
    );
    let (code, err) = run(&["check", "deal.yaml", "--templates", "style"]);
    assert_eq!(code, Some(0), "{err}");
    let (code, err) = run(&["memo", "deal.yaml", "-o", "m.pdf"]);
    assert_eq!(code, Some(1), "{err}");
    assert!(!dir.path().join("m.pdf").exists());
    let (code, err) = run(&["memo", "deal.yaml", "-o", "m.pdf", "--templates", "style"]);
    assert_eq!(code, Some(0), "{err}");
    let pdf = crate::support::pdf::Pdf::open(&dir.path().join("m.pdf"));
    assert!(
        pdf.text().contains("Mill \u{0E01}\u{4E00}"),
        "{}",
        pdf.text()
    );
    assert!(
        pdf.fonts()
            .iter()
            .any(|f| f.name.contains("Candor") && f.embedded),
        "{:?}",
        pdf.fonts()
    );

    std::fs::write(style.join("broken.otf"), "not a font").unwrap();
    let (code, err) = run(&["memo", "deal.yaml", "-o", "m2.pdf", "--templates", "style"]);
    assert_eq!(code, Some(1), "{err}");
    assert!(
        err.contains("broken.otf") && err.contains("not a font file"),
        "{err}"
    );
    assert!(!dir.path().join("m2.pdf").exists());
}

/// A misspelt template name is an error listing the names a house style can use, and
/// a template that is a link to `/dev/zero`, a FIFO or a link out of the folder is
/// refused without being read (the rules of companion CSV files).
#[cfg(unix)]
#[test]
fn house_style_files_are_named_and_read_by_the_rules() {
    let dir = tempfile::tempdir().unwrap();
    let style = dir.path().join("style");
    std::fs::create_dir(&style).unwrap();
    std::fs::write(style.join("styel.typ.j2"), "#set page(paper: \"a4\")").unwrap();
    let (code, err) = memo_with_templates(dir.path(), &style);
    assert_eq!(code, Some(1), "{err}");
    assert!(
        err.contains("`styel.typ.j2` is not the name of a template"),
        "{err}"
    );
    for (name, _) in candor::report::BUILTIN_TEMPLATES {
        assert!(err.contains(name), "{err}");
    }
    std::fs::remove_file(style.join("styel.typ.j2")).unwrap();

    std::os::unix::fs::symlink("/dev/zero", style.join("style.typ.j2")).unwrap();
    let (code, err) = memo_with_templates(dir.path(), &style);
    assert_eq!(code, Some(1), "{err}");
    assert!(
        err.contains("style.typ.j2") && err.contains("outside the folder"),
        "{err}"
    );
    std::fs::remove_file(style.join("style.typ.j2")).unwrap();

    if Command::new("mkfifo")
        .arg(style.join("scenario.typ.j2"))
        .status()
        .is_ok_and(|s| s.success())
    {
        let (code, err) = memo_with_templates(dir.path(), &style);
        assert_eq!(code, Some(1), "{err}");
        assert!(err.contains("not a regular file"), "{err}");
    }
    assert!(!dir.path().join("m.pdf").exists());
}

/// A house style whose Typst code loops ten billion times is stopped at the deadline,
/// and one that builds an array of a hundred million numbers at the memory budget,
/// each with a diagnostic naming the house style's templates; markup that ends is
/// typeset as by `typeset`. The child process is the built candor program. (One
/// iteration takes well over a nanosecond, so ten billion cannot end within the two
/// seconds given, and the inner arrays are small; the array of pairs needs several GiB,
/// far past 512 MiB.)
#[test]
fn typesetting_a_house_style_has_a_budget_of_time_and_memory() {
    use candor::worker::{typeset_within, Budget};
    let program = Path::new(env!("CARGO_BIN_EXE_candor"));
    let options = candor::pdf::TypesetOptions {
        created: NaiveDate::from_ymd_opt(2026, 1, 2)
            .and_then(|d| d.and_hms_opt(0, 0, 0))
            .expect("time"),
        ident: "budget-test".to_string(),
    };
    let names = vec!["style.typ.j2".to_string()];
    let budget = Budget {
        deadline: std::time::Duration::from_secs(2),
        memory: 512 << 20,
    };
    let fonts = Default::default();
    let typeset =
        |markup: &str| typeset_within(program, markup, &[], &fonts, &options, budget, &names);
    let started = std::time::Instant::now();
    let err = typeset("#for i in range(100000) { for j in range(100000) {} }\nEnd.")
        .expect_err("ten billion iterations cannot finish in two seconds");
    assert!(started.elapsed() < std::time::Duration::from_secs(10));
    assert_eq!(err.code, "typeset");
    assert!(err.message.contains("`style.typ.j2`"), "{}", err.message);
    assert!(
        err.message.contains("more than 2 seconds"),
        "{}",
        err.message
    );

    let big = Budget {
        deadline: std::time::Duration::from_secs(60),
        ..budget
    };
    let err = typeset_within(
        program,
        "#let a = range(100000000).map(i => (i, i))\n#a.len()",
        &[],
        &fonts,
        &options,
        big,
        &names,
    )
    .expect_err("an array of several GiB cannot be built in 512 MiB");
    assert_eq!(err.code, "typeset");
    assert!(err.message.contains("more than 512 MiB"), "{}", err.message);
    assert_eq!(err.file.as_deref(), Some("style.typ.j2"));

    // A Typst error comes back as the diagnostic typesetting in-process gives.
    let broken = typeset("#nope").expect_err("an unknown variable");
    assert_eq!(
        broken,
        candor::pdf::typeset("#nope", &[], &options).unwrap_err()
    );
    let quick = typeset("Hello.").expect("a short document is typeset");
    assert_eq!(
        quick,
        candor::pdf::typeset("Hello.", &[], &options).unwrap(),
        "the same bytes as in-process"
    );
}

/// A house style's minijinja loops run out of fuel within seconds, and an error in an
/// included template names that template, its line and the cause, not only the line
/// of the `include` in `memo.typ.j2`.
#[test]
fn house_style_templates_are_bounded_and_their_errors_located() {
    let dir = tempfile::tempdir().unwrap();
    let style = dir.path().join("style");
    std::fs::create_dir(&style).unwrap();
    std::fs::write(
        style.join("style.typ.j2"),
        "{% for i in range(100000) %}{% for j in range(100000) %}{% endfor %}{% endfor %}\n",
    )
    .unwrap();
    let started = std::time::Instant::now();
    let (code, err) = memo_with_templates(dir.path(), &style);
    assert!(started.elapsed() < std::time::Duration::from_secs(30));
    assert_eq!(code, Some(1), "{err}");
    assert!(
        err.contains("`style.typ.j2`") && err.contains("steps"),
        "{err}"
    );

    std::fs::write(
        style.join("style.typ.j2"),
        "#set page(paper: \"a4\")\n\n{{ no_such_value }}\n",
    )
    .unwrap();
    let (code, err) = memo_with_templates(dir.path(), &style);
    assert_eq!(code, Some(1), "{err}");
    assert!(err.contains("`style.typ.j2` failed at line 3"), "{err}");
    assert!(err.contains("undefined value"), "{err}");
    assert!(err.contains("included from `memo.typ.j2`"), "{err}");
}

/// Without `-o`, the memo is named after the deal file (`kestrel.yaml` gives
/// `kestrel.pdf`), so two deal files of one deal name in one folder write two memos.
#[test]
fn the_default_memo_is_named_after_the_deal_file() {
    let dir = tempfile::tempdir().expect("temp dir");
    let source =
        std::fs::read(crate::support::example("kestrel-bay-cold-store.yaml")).expect("example");
    for name in ["kestrel-high.yaml", "kestrel-low.yaml"] {
        std::fs::write(dir.path().join(name), &source).expect("copy");
        let out = crate::support::candor_in(dir.path(), &["memo", name]);
        assert_eq!(
            out.status.code(),
            Some(0),
            "{}",
            crate::support::text(&out.stderr)
        );
    }
    for pdf in ["kestrel-high.pdf", "kestrel-low.pdf"] {
        assert!(dir.path().join(pdf).is_file(), "{pdf} missing");
    }
    assert!(!dir.path().join("kestrel-bay-cold-store.pdf").exists());
}
