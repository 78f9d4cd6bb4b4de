//! Tests of deal format version 2: lines resolved to net flows, every kind of scenario
//! change, the horizon rule, units and basis. Amounts are worked out by hand in the
//! comments (common practice: arithmetic).

use super::lines::{self, Prices, Units};
use super::tests::{check, check_with, codes, d};
use super::*;
use rust_decimal::Decimal;

/// A version-2 deal on a yearly clock: HEAD, then `lines:` and scenarios.
const HEAD: &str = "candor: 2\ndeal: { name: Test, currency: EUR, as_of: 2027-01-01 }\nhurdle_rate: 9%\ntiming: { every: year, start: 2027-01-01 }\n";

/// Build 1,000 at period 0; tolls 300 a year in periods 1 to 4, growing 10% a year;
/// upkeep 20 a year in periods 1 to 4.
const LINES: &str = "lines:\n  build: { label: Build, amounts: [-1000] }\n  tolls: { label: Tolls, stream: { first: 300, start: 1, periods: 4, growth: 10% } }\n  upkeep: { label: Upkeep, note: Roads, amounts: [-20, -20, -20, -20], from: 1 }\n";

fn amounts(f: &Flows) -> Vec<(i64, Decimal)> {
    f.points.iter().map(|p| (p.offset, p.amount)).collect()
}

fn scenario<'a>(deal: &'a Deal, name: &str) -> &'a Scenario {
    deal.scenarios.iter().find(|s| s.name == name).unwrap()
}

/// Every scenario's components add up, time by time, to its flows.
fn assert_sums(deal: &Deal) {
    for s in &deal.scenarios {
        let total = lines::sum(
            &s.components,
            s.flows.units_per_year,
            s.flows.periods_per_year,
        );
        assert_eq!(
            amounts(&total),
            amounts(&s.flows.normalised()),
            "scenario {}",
            s.name
        );
    }
}

#[test]
fn lines_sum_to_the_net_flows() {
    let deal = check(&format!("{HEAD}{LINES}")).unwrap();
    assert_eq!(deal.version, 2);
    let base = &deal.scenarios[0];
    // Tolls: 300, 330, 363, 399.30 (300 × 1.1^k); net = tolls - 20.
    assert_eq!(
        amounts(&base.flows),
        vec![
            (0, d("-1000")),
            (1, d("280")),
            (2, d("310")),
            (3, d("343")),
            (4, d("379.30"))
        ]
    );
    let keys: Vec<&str> = base.components.iter().map(|c| c.key.as_str()).collect();
    assert_eq!(keys, ["build", "tolls", "upkeep"]);
    assert_eq!(base.components[2].note.as_deref(), Some("Roads"));
    assert_eq!(base.components[1].label, "Tolls");
    assert_sums(&deal);
}

#[test]
fn version_one_components_are_inflows_and_outflows() {
    let deal = check("candor: 1\ndeal: { name: T, currency: EUR, as_of: 2027-01-01 }\nhurdle_rate: 9%\ncash_flows: { every: year, amounts: [-100, 60, -5, 70] }\nscenarios:\n  s: { inflows_factor: 0.5 }\n").unwrap();
    let keys: Vec<&str> = deal.scenarios[0]
        .components
        .iter()
        .map(|c| c.key.as_str())
        .collect();
    assert_eq!(keys, ["inflows", "outflows"]);
    assert_sums(&deal);
}

#[test]
fn units_scale_every_amount_exactly() {
    // 1.234567 thousands = 1,234.567; -2.5 millions = -2,500,000.
    let k = check(&format!(
        "{}lines:\n  a: {{ amounts: [-2.5, 1.234567] }}\n",
        HEAD.replace(
            "as_of: 2027-01-01 }",
            "as_of: 2027-01-01, units: millions }"
        )
    ))
    .unwrap();
    assert_eq!(k.units, Units::Millions);
    assert_eq!(
        amounts(&k.scenarios[0].flows),
        vec![(0, d("-2500000")), (1, d("1234567"))]
    );
    let t = check(&format!(
        "{}lines:\n  a: {{ amounts: [-15533.12, 1.234567] }}\n",
        HEAD.replace(
            "as_of: 2027-01-01 }",
            "as_of: 2027-01-01, units: thousands }"
        )
    ))
    .unwrap();
    assert_eq!(
        amounts(&t.scenarios[0].flows),
        vec![(0, d("-15533120")), (1, d("1234.567"))]
    );
}

#[test]
fn rates_change_in_a_scenario() {
    let deal = check(&format!(
        "{HEAD}finance_rate: 6%\n{LINES}scenarios:\n  dear: {{ hurdle_rate: 11% }}\n  cheap: {{ finance_rate: 5%, reinvestment_rate: 4% }}\n"
    ))
    .unwrap();
    let dear = scenario(&deal, "dear");
    assert_eq!(dear.rates.hurdle, d("0.11"));
    assert_eq!(dear.rates.finance, d("0.06"), "the deal's own finance rate");
    assert_eq!(
        dear.rates.reinvestment,
        d("0.11"),
        "defaults to the scenario's hurdle"
    );
    let cheap = scenario(&deal, "cheap");
    assert_eq!(cheap.rates.hurdle, d("0.09"));
    assert_eq!(cheap.rates.finance, d("0.05"));
    assert_eq!(cheap.rates.reinvestment, d("0.04"));
    assert_eq!(deal.scenarios[0].rates.reinvestment, d("0.09"));
}

#[test]
fn factors_on_one_line_and_on_several() {
    let deal = check(&format!(
        "{HEAD}{LINES}scenarios:\n  one: {{ factors: {{ build: 1.3 }} }}\n  two: {{ factors: {{ tolls: 0.5, upkeep: 2 }} }}\n"
    ))
    .unwrap();
    // build × 1.3 = -1300; the rest unchanged.
    assert_eq!(amounts(&scenario(&deal, "one").flows)[0], (0, d("-1300")));
    assert_eq!(amounts(&scenario(&deal, "one").flows)[1], (1, d("280")));
    // Period 1: 300 × 0.5 - 20 × 2 = 110; period 4: 399.30 × 0.5 - 40 = 159.65.
    let two = amounts(&scenario(&deal, "two").flows);
    assert_eq!(two[1], (1, d("110")));
    assert_eq!(two[4], (4, d("159.65")));
    assert_sums(&deal);
}

#[test]
fn a_line_shifts_within_the_horizon_or_with_leave() {
    let text = format!(
        "{HEAD}{LINES}scenarios:\n  early: {{ shift: {{ upkeep: -1 }} }}\n  late: {{ shift: {{ tolls: 1 }}, extend_horizon: true }}\n"
    );
    let deal = check(&text).unwrap();
    // Upkeep one period earlier: periods 0-3, so period 0 is -1,020 and period 4 is
    // tolls alone, 399.30.
    let early = amounts(&scenario(&deal, "early").flows);
    assert_eq!(early[0], (0, d("-1020")));
    assert_eq!(early[4], (4, d("399.30")));
    // Tolls one period later: period 1 is upkeep alone (-20), period 5 is 399.30.
    let late = amounts(&scenario(&deal, "late").flows);
    assert_eq!(late[1], (1, d("-20")));
    assert_eq!(late[5], (5, d("399.30")));
    // Without `extend_horizon`, the same shift is an error naming the line.
    let errs = check(&text.replace(", extend_horizon: true", "")).unwrap_err();
    assert_eq!(errs[0].code, "past-horizon");
    assert!(
        errs[0].message.contains("line `tolls`"),
        "{}",
        errs[0].message
    );
    assert_eq!(errs[0].field.as_deref(), Some("scenarios.late.shift.tolls"));
}

#[test]
fn the_horizon_may_be_stated() {
    // Stated at period 6: a shift of 2 stays inside it.
    let deal = check(&format!(
        "{HEAD}horizon: 6\n{LINES}scenarios:\n  late: {{ shift: {{ tolls: 2 }} }}\n"
    ))
    .unwrap();
    assert_eq!(
        amounts(&scenario(&deal, "late").flows).last(),
        Some(&(6, d("399.30")))
    );
    assert_eq!(
        codes(&format!(
            "{HEAD}horizon: 6\n{LINES}scenarios:\n  later: {{ shift: {{ tolls: 3 }} }}\n"
        )),
        ["past-horizon"]
    );
    // The global shift of version 1 obeys the rule too.
    assert_eq!(
        codes(&format!(
            "{HEAD}{LINES}scenarios:\n  late: {{ shift_inflows: 1 }}\n"
        )),
        ["past-horizon"]
    );
}

#[test]
fn a_line_changes_its_amounts_or_its_drivers() {
    let deal = check(&format!(
        "{HEAD}{LINES}scenarios:\n  slow: {{ change: {{ tolls: {{ stream: {{ growth: 0%, ramp: [50%] }} }} }} }}\n  list: {{ change: {{ tolls: {{ amounts: [100, 100], from: 2 }} }} }}\n"
    ))
    .unwrap();
    // Growth 0 and a 50% first year: 150, 300, 300, 300; less upkeep 20.
    let slow = amounts(&scenario(&deal, "slow").flows);
    assert_eq!(
        slow[1..].to_vec(),
        vec![(1, d("130")), (2, d("280")), (3, d("280")), (4, d("280"))]
    );
    // Tolls replaced by a list at periods 2 and 3.
    let list = amounts(&scenario(&deal, "list").flows);
    assert_eq!(
        list[1..].to_vec(),
        vec![(1, d("-20")), (2, d("80")), (3, d("80")), (4, d("-20"))]
    );
    assert!(scenario(&deal, "slow")
        .description
        .contains("tolls: growth, ramp changed"));
    assert_sums(&deal);
}

#[test]
fn lines_are_added_and_dropped() {
    let deal = check(&format!(
        "{HEAD}{LINES}scenarios:\n  grant: {{ add: {{ grant: {{ label: Grant, amounts: [250] }} }}, drop: [upkeep] }}\n"
    ))
    .unwrap();
    let s = scenario(&deal, "grant");
    let keys: Vec<&str> = s.components.iter().map(|c| c.key.as_str()).collect();
    assert_eq!(keys, ["build", "tolls", "grant"]);
    // Period 0: -1,000 + 250; period 1: 300 (no upkeep).
    assert_eq!(
        amounts(&s.flows)[..2].to_vec(),
        vec![(0, d("-750")), (1, d("300"))]
    );
    assert_eq!(s.description, "upkeep dropped; grant added");
    assert_sums(&deal);
}

#[test]
fn global_factors_of_version_one_apply_to_each_line() {
    let deal = check(&format!(
        "{HEAD}{LINES}scenarios:\n  dear: {{ outflows_factor: 1.5, label: Dearer }}\n"
    ))
    .unwrap();
    let s = scenario(&deal, "dear");
    assert_eq!(s.label.as_deref(), Some("Dearer"));
    // Each line's negative amounts × 1.5, before netting: -1,500; 300 - 30 = 270.
    assert_eq!(
        amounts(&s.flows)[..2].to_vec(),
        vec![(0, d("-1500")), (1, d("270"))]
    );
}

#[test]
fn unknown_lines_are_named_with_a_suggestion() {
    let errs = check(&format!(
        "{HEAD}{LINES}scenarios:\n  s: {{ factors: {{ toll: 0.5 }}, shift: {{ upkep: 1 }} }}\n"
    ))
    .unwrap_err();
    let codes: Vec<&str> = errs.iter().map(|e| e.code.as_str()).collect();
    assert_eq!(codes, ["unknown-line", "unknown-line"]);
    assert!(errs[0]
        .hint
        .as_deref()
        .unwrap()
        .starts_with("did you mean `tolls`?"));
    assert!(errs[1]
        .hint
        .as_deref()
        .unwrap()
        .starts_with("did you mean `upkeep`?"));
}

#[test]
fn a_terminal_value_and_its_narrow_spread() {
    // 110 / (0.09 - 0.08) = 11,000 at period 4; the spread of one point is narrow.
    let deal = check(&format!(
        "{HEAD}{LINES}  exit: {{ label: Exit, terminal: {{ at: 4, next_flow: 110, growth: 8%, discount: 9% }} }}\nscenarios:\n  wide: {{ change: {{ exit: {{ terminal: {{ discount: 12% }} }} }} }}\n"
    ))
    .unwrap();
    let base = &deal.scenarios[0];
    assert_eq!(amounts(&base.flows)[4], (4, d("11379.30")));
    assert_eq!(base.narrow_terminals.len(), 1);
    assert_eq!(base.narrow_terminals[0].value, d("11000"));
    // At 12%: 110 / 0.04 = 2,750, four points apart: no caution.
    let wide = scenario(&deal, "wide");
    assert_eq!(amounts(&wide.flows)[4], (4, d("3129.30")));
    assert!(wide.narrow_terminals.is_empty());
}

#[test]
fn dated_lines_share_one_origin() {
    let deal = check("candor: 2\ndeal: { name: T, currency: EUR, as_of: 2027-01-01 }\nhurdle_rate: 9%\ntiming: { day_count: act/365f }\nlines:\n  build: { dated: [{ date: 2027-01-01, amount: -1000 }] }\n  rent: { stream: { first: 100, start: 2027-07-01, every: half-year, end: 2028-07-01 } }\n").unwrap();
    let base = &deal.scenarios[0];
    // Rent on 2027-07-01 (181 days), 2028-01-01 (365), 2028-07-01 (547).
    assert_eq!(
        amounts(&base.components[1].flows),
        vec![(181, d("100")), (365, d("100")), (547, d("100"))]
    );
    assert_eq!(amounts(&base.flows)[3], (547, d("100")));
    assert_sums(&deal);
}

#[test]
fn csv_columns_feed_lines() {
    let csv = "period,tolls,upkeep,note\n1,600,-50,first year\n2,610,-55,\n";
    let deal = check_with(
        &format!("{HEAD}lines:\n  build: {{ amounts: [-1000] }}\n  tolls: {{ csv: f.csv, column: Tolls }}\n  upkeep: {{ csv: f.csv, column: upkeep }}\n"),
        &[("f.csv", csv)],
    )
    .unwrap();
    let base = &deal.scenarios[0];
    assert_eq!(
        amounts(&base.flows),
        vec![(0, d("-1000")), (1, d("550")), (2, d("555"))]
    );
    assert_eq!(
        base.components[1].flows.points[0].note.as_deref(),
        Some("first year")
    );
}

#[test]
fn basis_is_read_and_the_version_is_kept() {
    let deal = check(&format!(
        "{}{LINES}",
        HEAD.replace(
            "as_of: 2027-01-01 }",
            "as_of: 2027-01-01, basis: { prices: real, tax: after } }"
        )
    ))
    .unwrap();
    let b = deal.basis.unwrap();
    assert_eq!(b.prices, Some(Prices::Real));
    assert!(b.real_amounts_nominal_rates());
    assert_eq!(
        codes(&format!(
            "{}{LINES}",
            HEAD.replace(
                "as_of: 2027-01-01 }",
                "as_of: 2027-01-01, basis: { prices: rael } }"
            )
        )),
        ["unknown-value"]
    );
}

#[test]
fn malformed_lines_report_every_problem() {
    let c = codes(&format!(
        "{HEAD}lines:\n  a: {{ amounts: [-1], stream: {{ first: 1, start: 0, periods: 1 }} }}\n  b: {{ label: B }}\n  c d: {{ amounts: [1] }}\n  e: {{ terminal: {{ at: 1, next_flow: 5, growth: 5%, discount: 5% }} }}\n  f: {{ stream: {{ first: 1, start: 0, periods: 2, end: 3 }} }}\n"
    ));
    assert_eq!(
        c,
        [
            "bad-key",
            "flows-conflict",
            "missing-field",
            "rate-range",
            "flows-conflict"
        ]
    );
}

#[test]
fn line_amounts_are_bounded_over_every_scenario() {
    // Nine daily streams of 100,000 amounts (900,000) fit the base case; the first
    // scenario resolves them again and passes the 1,000,000 amounts read in all, so
    // the file is refused once, at the line that reached the bound.
    let lines: String = (0..9)
        .map(|i| format!("  l{i}: {{ stream: {{ first: 1, start: 0, periods: 100000 }} }}\n"))
        .collect();
    let text = format!(
        "candor: 2\ndeal: {{ name: T, currency: EUR, as_of: 2027-01-01 }}\nhurdle_rate: 9%\ntiming: {{ every: day }}\nlines:\n  b: {{ amounts: [-1000] }}\n{lines}scenarios:\n  s1: {{ hurdle_rate: 10% }}\n  s2: {{ hurdle_rate: 11% }}\n"
    );
    assert_eq!(codes(&text), ["too-many-flows"]);
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig::with_cases(64))]

    /// Lines of every form that falls on a periodic clock (lists from a period, streams
    /// with growth and a ramp, a terminal value), in any unit, with a scenario that
    /// scales and shifts one of them: in every scenario the lines add up, time by time,
    /// to the flows, and the net flows' total is the lines' total (common practice:
    /// addition is exact on decimals).
    #[test]
    fn lines_always_sum_to_the_flows(
        lists in proptest::collection::vec(
            (0i64..6, proptest::collection::vec(-5_000i64..5_000, 1..6)),
            1..4,
        ),
        stream in (1i64..2_000, 0i64..4, 1u32..12, -20i64..40, proptest::bool::ANY),
        unit in 0usize..3,
        factor in 0u32..300,
        shift in 0i64..3,
    ) {
        let mut text = format!(
            "candor: 2\ndeal: {{ name: T, currency: EUR, as_of: 2027-01-01, units: {} }}\nhurdle_rate: 9%\ntiming: {{ every: quarter }}\nlines:\n",
            Units::WORDS[unit]
        );
        for (i, (from, amounts)) in lists.iter().enumerate() {
            let list: Vec<String> = amounts.iter().map(|a| format!("{}.5", a)).collect();
            text.push_str(&format!("  list{i}: {{ amounts: [{}], from: {from} }}\n", list.join(", ")));
        }
        let (first, start, periods, growth, per_period) = stream;
        text.push_str(&format!(
            "  stream: {{ stream: {{ first: {first}, start: {start}, periods: {periods}, growth: {growth}.5%, growth_per: {}, ramp: [30%, 70%] }} }}\n",
            if per_period { "period" } else { "year" }
        ));
        text.push_str("  exit: { terminal: { at: 20, next_flow: 10, growth: 1%, discount: 8% } }\n");
        text.push_str(&format!(
            "scenarios:\n  s: {{ factors: {{ list0: {}.{:02} }}, shift: {{ stream: {shift} }}, extend_horizon: true }}\n",
            factor / 100,
            factor % 100
        ));
        let deal = match check(&text) {
            Ok(d) => d,
            // Lines that cancel at every time are refused (`all-zero-flows`): nothing
            // to sum.
            Err(e) => {
                proptest::prop_assert!(e.iter().all(|d| d.code == "all-zero-flows"), "{e:?}");
                return Ok(());
            }
        };
        assert_sums(&deal);
        for s in &deal.scenarios {
            let lines: Decimal = s
                .components
                .iter()
                .map(|c| c.inflows() + c.outflows())
                .sum();
            let flows: Decimal = s.flows.points.iter().map(|p| p.amount).sum();
            proptest::prop_assert_eq!(lines, flows);
        }
    }
}
