//! Tests of validation: resolved flows, netting, scenarios, CSV and diagnostics.

use super::*;
use crate::input::parse;
use rust_decimal::Decimal;
use std::str::FromStr;

pub(super) fn d(s: &str) -> Decimal {
    Decimal::from_str(s).unwrap()
}

fn date(y: i32, m: u32, day: u32) -> NaiveDate {
    NaiveDate::from_ymd_opt(y, m, day).unwrap()
}

pub(super) fn check_with(
    text: &str,
    files: &[(&str, &str)],
) -> Result<Deal, Vec<crate::diag::Diagnostic>> {
    let raw = parse(text)?;
    let mut read = |name: &str| {
        files
            .iter()
            .find(|(n, _)| *n == name)
            .map(|(_, t)| t.to_string())
            .ok_or_else(|| "no such file".to_string())
    };
    validate(&raw, &mut read)
}

pub(super) fn check(text: &str) -> Result<Deal, Vec<crate::diag::Diagnostic>> {
    check_with(text, &[])
}

pub(super) fn codes(text: &str) -> Vec<String> {
    check(text)
        .unwrap_err()
        .into_iter()
        .map(|d| d.code)
        .collect()
}

const HEAD: &str =
    "candor: 1\ndeal: { name: Test, currency: EUR, as_of: 2027-01-01 }\nhurdle_rate: 9%\n";

#[test]
fn periodic_deal_with_dates() {
    let deal = check(&format!(
        "{HEAD}finance_rate: 0.06\ncash_flows:\n  every: quarter\n  start: 2027-01-31\n  amounts: [-100, 0, 60, \"60.50\"]\n"
    ))
    .unwrap();
    assert_eq!(deal.rates.hurdle, d("0.09"));
    assert_eq!(deal.rates.finance, d("0.06"));
    assert_eq!(deal.rates.reinvestment, d("0.09"), "defaults to the hurdle");
    let base = &deal.scenarios[0];
    assert_eq!(base.name, "base");
    assert_eq!(base.flows.units_per_year, 4);
    assert_eq!(base.flows.periods_per_year, Some(4));
    let p = &base.flows.points;
    assert_eq!(p.len(), 4, "zero amounts stay in periodic lists");
    assert_eq!(p[3].amount, d("60.5"));
    assert_eq!(p[3].offset, 3);
    assert_eq!(p[3].period, Some(3));
    // Month arithmetic keeps the day of the month, clamped to the month's end.
    assert_eq!(p[1].date, Some(date(2027, 4, 30)));
    assert_eq!(p[2].date, Some(date(2027, 7, 31)));
}

#[test]
fn dated_flows_are_sorted_and_netted() {
    let deal = check(&format!(
        "{HEAD}cash_flows:\n  day_count: act/act-isda\n  dated:\n    - {{ date: 2028-01-01, amount: 70, note: rent }}\n    - {{ date: 2027-01-01, amount: -100, note: buy }}\n    - {{ date: 2028-01-01, amount: 5, note: fee back }}\n"
    ))
    .unwrap();
    let f = &deal.scenarios[0].flows;
    assert_eq!(f.units_per_year, 133590);
    assert_eq!(f.periods_per_year, None);
    assert_eq!(f.points.len(), 2);
    assert_eq!(f.points[0].offset, 0);
    assert_eq!(
        f.points[1].offset, 133590,
        "2027 is one whole ordinary year"
    );
    assert_eq!(f.points[1].amount, d("75"));
    assert_eq!(f.points[1].note.as_deref(), Some("rent; fee back"));
    assert_eq!(
        deal.clock,
        Clock::Dated {
            day_count: DayCount::ActActIsda
        }
    );
}

#[test]
fn scenarios_in_file_order() {
    let deal = check(&format!(
        "{HEAD}cash_flows: {{ every: year, amounts: [-100, 60, 60] }}\nscenarios:\n  zeta:\n    inflows_factor: 0.85\n    shift_inflows: 1\n  alpha:\n    outflows_factor: 1.1\n  swap:\n    cash_flows: {{ every: year, amounts: [-50, 70] }}\n"
    ))
    .unwrap();
    let names: Vec<_> = deal.scenarios.iter().map(|s| s.name.as_str()).collect();
    assert_eq!(names, ["base", "zeta", "alpha", "swap"]);
    let z = &deal.scenarios[1];
    assert_eq!(z.description, "inflows x 0.85; inflows 1 period later");
    let pts: Vec<_> = z
        .flows
        .points
        .iter()
        .map(|p| (p.offset, p.amount))
        .collect();
    assert_eq!(pts, [(0, d("-100")), (2, d("51")), (3, d("51"))]);
    assert_eq!(deal.scenarios[2].flows.points[0].amount, d("-110"));
    assert_eq!(deal.scenarios[3].flows.points.len(), 2);
}

#[test]
fn dated_shift_moves_inflows_by_days() {
    let deal = check(&format!(
        "{HEAD}cash_flows:\n  day_count: act/365f\n  dated:\n    - {{ date: 2027-01-01, amount: -100 }}\n    - {{ date: 2027-12-01, amount: 120 }}\nscenarios:\n  late: {{ shift_inflows: 31 }}\n"
    ))
    .unwrap();
    let late = &deal.scenarios[1];
    assert_eq!(late.description, "inflows 31 days later");
    assert_eq!(late.flows.points[1].date, Some(date(2028, 1, 1)));
    assert_eq!(late.flows.points[1].offset, 365);
}

#[test]
fn csv_flows_periodic_and_dated() {
    let deal = check_with(
        &format!("{HEAD}cash_flows: {{ csv: f.csv, every: month }}\n"),
        &[(
            "f.csv",
            "period,amount,note\n0,-100,start\n2,30,\n1,\"80.25\",x\n",
        )],
    )
    .unwrap();
    let p = &deal.scenarios[0].flows.points;
    assert_eq!(p.iter().map(|p| p.offset).collect::<Vec<_>>(), [0, 1, 2]);
    assert_eq!(p[1].amount, d("80.25"));
    assert_eq!(p[0].note.as_deref(), Some("start"));
    let deal = check_with(
        &format!("{HEAD}cash_flows: {{ csv: g.csv, day_count: act/360 }}\n"),
        &[("g.csv", "amount,date\n-100,2027-01-01\n110,2027-07-01\n")],
    )
    .unwrap();
    assert_eq!(deal.scenarios[0].flows.points[1].offset, 181);
    assert_eq!(deal.scenarios[0].flows.units_per_year, 360);
}

#[test]
fn csv_problems_name_the_csv_cell() {
    let errs = check_with(
        &format!("{HEAD}cash_flows: {{ csv: f.csv, every: year }}\n"),
        &[("f.csv", "period,amount\n0,-100\n1,lots\n")],
    )
    .unwrap_err();
    assert_eq!(errs.len(), 1);
    assert_eq!(errs[0].code, "csv-format");
    assert_eq!(errs[0].file.as_deref(), Some("f.csv"));
    assert_eq!(
        errs[0].position,
        Some(crate::diag::Position { line: 3, column: 3 })
    );
    let errs = check_with(
        &format!("{HEAD}cash_flows: {{ csv: missing.csv, every: year }}\n"),
        &[],
    )
    .unwrap_err();
    assert_eq!(errs[0].code, "csv-missing");
}

#[test]
fn every_problem_is_reported_with_its_path() {
    let errs = check(
        "candor: 1\ndeal: { nmae: X, currency: eur, as_of: 2027-02-30 }\nhurdle_rate: -100%\ncash_flows: { every: fortnight, amounts: [-1, x] }\n",
    )
    .unwrap_err();
    let got: Vec<_> = errs
        .iter()
        .map(|d| (d.code.as_str(), d.field.clone().unwrap_or_default()))
        .collect();
    assert_eq!(
        got,
        [
            ("unknown-field", "deal.nmae".to_string()),
            ("missing-field", "deal.name".to_string()),
            ("bad-currency", "deal.currency".to_string()),
            ("bad-date", "deal.as_of".to_string()),
            ("rate-range", "hurdle_rate".to_string()),
            ("unknown-value", "cash_flows.every".to_string()),
            ("bad-number", "cash_flows.amounts[1]".to_string()),
        ]
    );
    assert_eq!(errs[0].hint.as_deref(), Some("did you mean `name`?"));
    assert_eq!(
        errs[0].position,
        Some(crate::diag::Position { line: 2, column: 9 })
    );
}

#[test]
fn conflicts_and_empty_series() {
    assert_eq!(
        codes(&format!(
            "{HEAD}cash_flows: {{ every: year, amounts: [-1, 2], dated: [] }}\n"
        )),
        ["flows-conflict"]
    );
    assert_eq!(
        codes(&format!(
            "{HEAD}cash_flows: {{ every: year, amounts: [] }}\n"
        )),
        ["empty-flows"]
    );
    assert_eq!(
        codes(&format!(
            "{HEAD}cash_flows: {{ every: year, amounts: [0, 0.0] }}\n"
        )),
        ["all-zero-flows"]
    );
    assert_eq!(codes("candor: 3\nwhatever: 1\n"), ["unknown-version"]);
    assert_eq!(codes(""), ["empty-file"]);
    assert_eq!(codes("- 1\n"), ["wrong-type"]);
}

#[test]
fn scenario_errors() {
    let c = codes(&format!(
        "{HEAD}cash_flows: {{ every: year, amounts: [-100, 60, 60] }}\nscenarios:\n  a: {{ inflow_factor: 0.9 }}\n  b: {{ shift_inflows: -2 }}\n  base: {{ inflows_factor: 1 }}\n  d: {{ cash_flows: {{ every: month, amounts: [-1, 2] }} }}\n  e: {{ inflows_factor: -1 }}\n"
    ));
    assert_eq!(
        c,
        [
            "unknown-field",
            "shift-range",
            "reserved-name",
            "clock-mismatch",
            "number-range"
        ]
    );
}

#[test]
fn memo_and_signoff() {
    let deal = check(&format!(
        "{HEAD}cash_flows: {{ every: year, amounts: [-100, 120] }}\nmemo:\n  summary: Short.\n  risks: [a, b]\n  sections:\n    - {{ title: Market, text: Good. }}\nsignoff: {{ prepared_by: A. Person, decision: approved, date: 2027-02-01 }}\n"
    ))
    .unwrap();
    assert_eq!(deal.memo.risks, ["a", "b"]);
    assert_eq!(deal.memo.sections[0].title, "Market");
    let s = deal.signoff.unwrap();
    assert_eq!(s.decision, SignoffDecision::Approved);
    assert_eq!(s.date, Some(date(2027, 2, 1)));
    assert_eq!(
        codes(&format!("{HEAD}cash_flows: {{ every: year, amounts: [-100, 120] }}\nsignoff: {{ decision: aproved }}\n")),
        ["unknown-value"]
    );
}

#[test]
fn too_many_flows() {
    let amounts = vec!["1"; MAX_FLOWS + 1].join(", ");
    assert_eq!(
        codes(&format!(
            "{HEAD}cash_flows: {{ every: day, amounts: [-1, {amounts}] }}\n"
        )),
        ["too-many-flows"]
    );
}
