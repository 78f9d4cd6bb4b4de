//! Comparing two analysed deals: what changed in the inputs (fields, rates, scenarios,
//! flows, narrative, sign-off) and in the results (IRRs that appeared, disappeared or
//! moved, NPV, MIRR, decisions, cautions). A pure function of two (deal, analysis) pairs;
//! `candor diff` only loads and prints.

use crate::engine::{Analysis, Decision, Root, ScenarioAnalysis};
use crate::model::{Clock, Deal, Scenario, SignoffDecision};
use crate::present::{self, words, Style};
use rust_decimal::Decimal;
use serde::Serialize;

/// One field whose value changed; `None` stands for "not given".
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Change {
    /// The field, as a deal-file path (`hurdle_rate`, `memo.summary`, `signoff.decision`).
    pub field: String,
    /// The old value, as text.
    pub old: Option<String>,
    /// The new value, as text.
    pub new: Option<String>,
}

/// One cash flow added, removed or changed in one scenario.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FlowChange {
    /// `base` or the scenario's name.
    pub scenario: String,
    /// The flow's date, or `period N` for periodic flows without a start date.
    pub when: String,
    /// The old amount; `None` when the flow was added.
    pub old: Option<Decimal>,
    /// The new amount; `None` when the flow was removed.
    pub new: Option<Decimal>,
}

/// One IRR as the diff shows it.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RootText {
    /// Annual effective rate (`None` when too large for a binary float).
    pub annual_rate: Option<f64>,
    /// log10(1 + annual rate).
    pub log10_annual_growth: f64,
    /// The rate as a percentage.
    pub text: String,
}

/// An IRR present in both analyses that moved.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RootMove {
    /// Where it was.
    pub old: RootText,
    /// Where it is.
    pub new: RootText,
}

/// What changed in one scenario's results.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ScenarioResults {
    /// `base` or the scenario's name.
    pub scenario: String,
    /// IRRs of the new analysis with no counterpart in the old.
    pub irr_appeared: Vec<RootText>,
    /// IRRs of the old analysis with no counterpart in the new.
    pub irr_disappeared: Vec<RootText>,
    /// IRRs matched between the two whose printed rate changed.
    pub irr_moved: Vec<RootMove>,
    /// Other figures: IRR count, certification, NPV at the hurdle, decision, MIRR.
    pub figures: Vec<Change>,
    /// Caution codes raised now and not before.
    pub cautions_added: Vec<String>,
    /// Caution codes raised before and not now.
    pub cautions_removed: Vec<String>,
}

impl ScenarioResults {
    fn is_empty(&self) -> bool {
        self.irr_appeared.is_empty()
            && self.irr_disappeared.is_empty()
            && self.irr_moved.is_empty()
            && self.figures.is_empty()
            && self.cautions_added.is_empty()
            && self.cautions_removed.is_empty()
    }
}

/// Everything that changed from one deal to another.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Diff {
    /// Changed fields of the deal file (deal, rates, clock, narrative, sign-off,
    /// scenario descriptions).
    pub inputs: Vec<Change>,
    /// Scenarios only in the new deal.
    pub scenarios_added: Vec<String>,
    /// Scenarios only in the old deal.
    pub scenarios_removed: Vec<String>,
    /// Flows added, removed or changed, per scenario present in both.
    pub flows: Vec<FlowChange>,
    /// Changed results, per scenario present in both (scenarios without changes left out).
    pub results: Vec<ScenarioResults>,
}

/// How to read one of a deal's rates.
type RateOf = fn(&crate::model::Rates) -> Decimal;

/// The three rates as the deal file names them, each with how to read it.
const RATE_FIELDS: [(&str, RateOf); 3] = [
    ("hurdle_rate", |r| r.hurdle),
    ("finance_rate", |r| r.finance),
    ("reinvestment_rate", |r| r.reinvestment),
];

impl Diff {
    /// True when nothing changed at all.
    pub fn is_empty(&self) -> bool {
        self.inputs.is_empty()
            && self.scenarios_added.is_empty()
            && self.scenarios_removed.is_empty()
            && self.flows.is_empty()
            && self.results.is_empty()
    }
}

fn change<T: PartialEq>(
    out: &mut Vec<Change>,
    field: &str,
    old: Option<T>,
    new: Option<T>,
    show: impl Fn(T) -> String,
) {
    if old != new {
        out.push(Change {
            field: field.to_string(),
            old: old.map(&show),
            new: new.map(&show),
        });
    }
}

fn clock_words(clock: &Clock) -> String {
    match clock {
        Clock::Periodic { every, start } => match start {
            Some(d) => format!("every {} from {d}", every.as_str()),
            None => format!("every {}", every.as_str()),
        },
        Clock::Dated { day_count } => format!("dated, day count {day_count:?}"),
    }
}

/// Changes to the deal's lines (format version 2): units, basis, and per line of the
/// base case the line added or removed, each field written differently, and its
/// amounts.
fn line_changes(out: &mut Vec<Change>, old: &Deal, new: &Deal, a: &Scenario, b: &Scenario) {
    change(
        out,
        "deal.units",
        Some(old.units.as_str()),
        Some(new.units.as_str()),
        str::to_string,
    );
    change(
        out,
        "deal.basis",
        old.basis.map(|x| present::lines::basis_words(&x)),
        new.basis.map(|x| present::lines::basis_words(&x)),
        |x| x,
    );
    if old.version < 2 && new.version < 2 {
        return;
    }
    for l in &a.components {
        let path = format!("lines.{}", l.key);
        let Some(m) = b.components.iter().find(|m| m.key == l.key) else {
            change(out, &path, Some(&l.label), None, String::clone);
            continue;
        };
        let names = l
            .fields
            .iter()
            .chain(&m.fields)
            .map(|(k, _)| k.as_str())
            .fold(Vec::new(), |mut v: Vec<&str>, k| {
                if !v.contains(&k) {
                    v.push(k);
                }
                v
            });
        for name in names {
            let get = |c: &crate::model::Component| {
                c.fields
                    .iter()
                    .find(|(k, _)| k == name)
                    .map(|(_, v)| v.clone())
            };
            change(out, &format!("{path}.{name}"), get(l), get(m), |x| x);
        }
        let amounts = |c: &crate::model::Component| -> Vec<(i64, Decimal)> {
            c.flows
                .points
                .iter()
                .map(|p| (p.offset, p.amount))
                .collect()
        };
        if amounts(l) != amounts(m) {
            let total = |c: &crate::model::Component| {
                format!(
                    "{} amounts, net {}",
                    c.flows.points.len(),
                    present::money(c.inflows() + c.outflows(), Style::Print)
                )
            };
            change(
                out,
                &format!("{path} (amounts)"),
                Some(total(l)),
                Some(total(m)),
                |x| x,
            );
        }
    }
    for m in &b.components {
        if !a.components.iter().any(|l| l.key == m.key) {
            change(
                out,
                &format!("lines.{}", m.key),
                None,
                Some(&m.label),
                String::clone,
            );
        }
    }
}

fn input_changes(old: &Deal, new: &Deal) -> Vec<Change> {
    let mut out = Vec::new();
    let s = |x: &String| x.clone();
    change(&mut out, "deal.name", Some(&old.name), Some(&new.name), s);
    change(
        &mut out,
        "deal.currency",
        Some(&old.currency),
        Some(&new.currency),
        s,
    );
    change(
        &mut out,
        "deal.as_of",
        Some(old.as_of),
        Some(new.as_of),
        |d| d.to_string(),
    );
    for (field, rate) in RATE_FIELDS {
        change(
            &mut out,
            field,
            Some(rate(&old.rates)),
            Some(rate(&new.rates)),
            present::exact_percent,
        );
    }
    change(
        &mut out,
        "cash_flows (clock)",
        Some(clock_words(&old.clock)),
        Some(clock_words(&new.clock)),
        |x| x,
    );
    for a in &old.scenarios {
        if let Some(b) = new.scenarios.iter().find(|b| b.name == a.name) {
            if a.name != "base" {
                let field = format!("scenarios.{}.description", a.name);
                change(
                    &mut out,
                    &field,
                    Some(&a.description),
                    Some(&b.description),
                    s,
                );
            }
        }
    }
    if let (Some(a), Some(b)) = (old.scenarios.first(), new.scenarios.first()) {
        line_changes(&mut out, old, new, a, b);
    }
    for a in old.scenarios.iter().skip(1) {
        if let Some(b) = new.scenarios.iter().find(|b| b.name == a.name) {
            let path = format!("scenarios.{}", a.name);
            change(
                &mut out,
                &format!("{path}.label"),
                a.label.as_ref(),
                b.label.as_ref(),
                s,
            );
            for (field, rate) in RATE_FIELDS {
                // A scenario's rate is a change of its own only when it differs from
                // the deal's (the deal's own change is reported above).
                let mine = |r: &crate::model::Rates, deal: &crate::model::Rates| {
                    (rate(r) != rate(deal)).then_some(rate(r))
                };
                change(
                    &mut out,
                    &format!("{path}.{field}"),
                    mine(&a.rates, &old.rates),
                    mine(&b.rates, &new.rates),
                    present::exact_percent,
                );
            }
        }
    }
    let (m, n) = (&old.memo, &new.memo);
    change(
        &mut out,
        "memo.recommendation",
        m.recommendation.as_ref(),
        n.recommendation.as_ref(),
        s,
    );
    change(
        &mut out,
        "memo.summary",
        m.summary.as_ref(),
        n.summary.as_ref(),
        s,
    );
    for r in &m.risks {
        if !n.risks.contains(r) {
            change(&mut out, "memo.risks", Some(r), None, s);
        }
    }
    for r in &n.risks {
        if !m.risks.contains(r) {
            change(&mut out, "memo.risks", None, Some(r), s);
        }
    }
    for sec in &m.sections {
        let field = format!("memo.sections.{}", sec.title);
        let other = n.sections.iter().find(|x| x.title == sec.title);
        change(&mut out, &field, Some(&sec.text), other.map(|x| &x.text), s);
    }
    for sec in &n.sections {
        if !m.sections.iter().any(|x| x.title == sec.title) {
            let field = format!("memo.sections.{}", sec.title);
            change(&mut out, &field, None, Some(&sec.text), s);
        }
    }
    let (a, b) = (old.signoff.as_ref(), new.signoff.as_ref());
    change(
        &mut out,
        "signoff.decision",
        Some(a.map_or(SignoffDecision::Pending, |x| x.decision)),
        Some(b.map_or(SignoffDecision::Pending, |x| x.decision)),
        |d| words::signoff(Some(d)).to_string(),
    );
    change(
        &mut out,
        "signoff.prepared_by",
        a.and_then(|x| x.prepared_by.as_ref()),
        b.and_then(|x| x.prepared_by.as_ref()),
        s,
    );
    change(
        &mut out,
        "signoff.reviewed_by",
        a.and_then(|x| x.reviewed_by.as_ref()),
        b.and_then(|x| x.reviewed_by.as_ref()),
        s,
    );
    change(
        &mut out,
        "signoff.date",
        a.and_then(|x| x.date),
        b.and_then(|x| x.date),
        |d| d.to_string(),
    );
    out
}

/// Where a flow sits: its date, else its period, else its clock offset.
fn flow_key(p: &crate::engine::FlowPoint) -> String {
    match (p.date, p.period) {
        (Some(d), _) => d.to_string(),
        (None, Some(n)) => format!("period {n}"),
        (None, None) => format!("offset {}", p.offset),
    }
}

fn flow_changes(old: &Scenario, new: &Scenario) -> Vec<FlowChange> {
    let a = old.flows.normalised();
    let b = new.flows.normalised();
    let keyed = |f: &crate::engine::Flows| -> Vec<(String, Decimal)> {
        f.points.iter().map(|p| (flow_key(p), p.amount)).collect()
    };
    let (a, b) = (keyed(&a), keyed(&b));
    let mut out = Vec::new();
    for (k, x) in &a {
        match b.iter().find(|(kb, _)| kb == k) {
            Some((_, y)) if y == x => {}
            found => out.push(FlowChange {
                scenario: old.name.clone(),
                when: k.clone(),
                old: Some(*x),
                new: found.map(|(_, y)| *y),
            }),
        }
    }
    for (k, y) in &b {
        if !a.iter().any(|(ka, _)| ka == k) {
            out.push(FlowChange {
                scenario: old.name.clone(),
                when: k.clone(),
                old: None,
                new: Some(*y),
            });
        }
    }
    out
}

fn root_text(r: &Root) -> RootText {
    RootText {
        annual_rate: r.annual_rate,
        log10_annual_growth: r.log10_annual_growth,
        text: match r.annual_rate {
            Some(a) => present::percent(a, 2, Style::Print),
            None => format!("growth of 10^{:.1} a year", r.log10_annual_growth),
        },
    }
}

/// Pairs two sorted lists of roots, given by log10(1 + rate), order-preservingly:
/// as many pairs as the shorter list holds, with the least total distance; returns
/// the pairs as (index in old, index in new).
fn match_roots(old: &[f64], new: &[f64]) -> Vec<(usize, usize)> {
    let swap = old.len() < new.len();
    let (long, short) = if swap { (new, old) } else { (old, new) };
    let (n, m) = (long.len(), short.len());
    let dist = |i: usize, j: usize| (long[i] - short[j]).abs();
    // cost[i][j]: best cost pairing all of short[..j] within long[..i].
    let mut cost = vec![vec![f64::INFINITY; m + 1]; n + 1];
    for row in cost.iter_mut() {
        row[0] = 0.0;
    }
    for i in 1..=n {
        for j in 1..=m.min(i) {
            let skip = cost[i - 1][j];
            let take = cost[i - 1][j - 1] + dist(i - 1, j - 1);
            cost[i][j] = skip.min(take);
        }
    }
    let mut pairs = Vec::new();
    let (mut i, mut j) = (n, m);
    while j > 0 && i > 0 {
        let take = cost[i - 1][j - 1] + dist(i - 1, j - 1);
        if cost[i][j] == take {
            pairs.push((i - 1, j - 1));
            j -= 1;
        }
        i -= 1;
    }
    pairs.reverse();
    if swap {
        pairs.into_iter().map(|(l, s)| (s, l)).collect()
    } else {
        pairs
    }
}

fn result_changes(a: &ScenarioAnalysis, b: &ScenarioAnalysis, currency: &str) -> ScenarioResults {
    let growth = |s: &ScenarioAnalysis| -> Vec<f64> {
        s.irr.roots.iter().map(|r| r.log10_annual_growth).collect()
    };
    let pairs = match_roots(&growth(a), &growth(b));
    let irr_disappeared = (0..a.irr.roots.len())
        .filter(|i| !pairs.iter().any(|(x, _)| x == i))
        .map(|i| root_text(&a.irr.roots[i]))
        .collect();
    let irr_appeared = (0..b.irr.roots.len())
        .filter(|j| !pairs.iter().any(|(_, y)| y == j))
        .map(|j| root_text(&b.irr.roots[j]))
        .collect();
    let irr_moved = pairs
        .iter()
        .map(|&(i, j)| RootMove {
            old: root_text(&a.irr.roots[i]),
            new: root_text(&b.irr.roots[j]),
        })
        .filter(|m| m.old.text != m.new.text)
        .collect();
    let mut figures = Vec::new();
    change(
        &mut figures,
        "IRR count",
        Some(a.irr.count),
        Some(b.irr.count),
        |c| c.to_string(),
    );
    change(
        &mut figures,
        "certified",
        Some(a.irr.certified),
        Some(b.irr.certified),
        |c| if c { "yes" } else { "no" }.to_string(),
    );
    change(
        &mut figures,
        "NPV at hurdle",
        Some(present::scenario_npv_in(a, currency, Style::Print)),
        Some(present::scenario_npv_in(b, currency, Style::Print)),
        |v| v,
    );
    change(
        &mut figures,
        "NPV rule at hurdle",
        Some(a.decision),
        Some(b.decision),
        |d: Decision| words::decision(d).to_string(),
    );
    change(
        &mut figures,
        "MIRR",
        a.mirr.map(|r| present::percent(r, 2, Style::Print)),
        b.mirr.map(|r| present::percent(r, 2, Style::Print)),
        |x| x,
    );
    let codes = |s: &ScenarioAnalysis| -> Vec<String> {
        let mut c: Vec<String> = s.cautions.iter().map(|c| c.code().to_string()).collect();
        c.sort();
        c.dedup();
        c
    };
    let (ca, cb) = (codes(a), codes(b));
    ScenarioResults {
        scenario: a.name.clone(),
        irr_appeared,
        irr_disappeared,
        irr_moved,
        figures,
        cautions_added: cb.iter().filter(|c| !ca.contains(c)).cloned().collect(),
        cautions_removed: ca.iter().filter(|c| !cb.contains(c)).cloned().collect(),
    }
}

/// Compares an old and a new (deal, analysis) pair.
pub fn diff(old: (&Deal, &Analysis), new: (&Deal, &Analysis)) -> Diff {
    let (od, oa) = old;
    let (nd, na) = new;
    let names = |d: &Deal| -> Vec<String> { d.scenarios.iter().map(|s| s.name.clone()).collect() };
    let (on, nn) = (names(od), names(nd));
    let mut flows = Vec::new();
    for a in &od.scenarios {
        if let Some(b) = nd.scenarios.iter().find(|b| b.name == a.name) {
            flows.extend(flow_changes(a, b));
        }
    }
    let mut results = Vec::new();
    for a in &oa.scenarios {
        if let Some(b) = na.scenarios.iter().find(|b| b.name == a.name) {
            let r = result_changes(a, b, &na.currency);
            if !r.is_empty() {
                results.push(r);
            }
        }
    }
    Diff {
        inputs: input_changes(od, nd),
        scenarios_added: nn.iter().filter(|n| !on.contains(n)).cloned().collect(),
        scenarios_removed: on.iter().filter(|n| !nn.contains(n)).cloned().collect(),
        flows,
        results,
    }
}

fn label(scenario: &str) -> String {
    if scenario == "base" {
        "base case".to_string()
    } else {
        // The key in words, as the memo prints it (`weak_demand`: "Weak demand").
        format!("scenario {}", words::scenario_label(scenario))
    }
}

/// Long narrative is shown by its start only; the JSON form carries it whole.
fn clip(text: &str) -> String {
    let one_line: String = text.split_whitespace().collect::<Vec<_>>().join(" ");
    if one_line.chars().count() > 70 {
        format!("\"{}...\"", one_line.chars().take(67).collect::<String>())
    } else {
        format!("\"{one_line}\"")
    }
}

fn change_line(c: &Change, quote: bool) -> String {
    let show = |v: &str| if quote { clip(v) } else { v.to_string() };
    match (&c.old, &c.new) {
        (Some(a), Some(b)) => format!("{}: {} → {}", c.field, show(a), show(b)),
        (None, Some(b)) => format!("{}: added {}", c.field, show(b)),
        (Some(a), None) => format!("{}: removed {}", c.field, show(a)),
        (None, None) => c.field.clone(),
    }
}

/// The diff as a readable report, one change a line, inputs first, then results.
pub(crate) fn render_text(d: &Diff) -> String {
    let mut out = String::new();
    out.push_str("Inputs\n");
    let before = out.len();
    for c in &d.inputs {
        let quote = c.field.starts_with("memo.") || c.field.contains(".description");
        push_line(&mut out, change_line(c, quote));
    }
    for s in &d.scenarios_added {
        push_line(&mut out, format!("scenario {s} added"));
    }
    for s in &d.scenarios_removed {
        push_line(&mut out, format!("scenario {s} removed"));
    }
    for f in &d.flows {
        let what = match (f.old, f.new) {
            (Some(a), Some(b)) => format!(
                "{} → {}",
                present::money(a, Style::Print),
                present::money(b, Style::Print)
            ),
            (None, Some(b)) => format!("added, {}", present::money(b, Style::Print)),
            (Some(a), None) => format!("removed, was {}", present::money(a, Style::Print)),
            (None, None) => String::new(),
        };
        push_line(
            &mut out,
            format!("flow at {}, {}: {what}", f.when, label(&f.scenario)),
        );
    }
    if out.len() == before {
        out.push_str("  no changes\n");
    }
    out.push_str("Results\n");
    if d.results.is_empty() {
        out.push_str("  no changes\n");
    }
    for r in &d.results {
        let who = label(&r.scenario);
        for x in &r.irr_disappeared {
            push_line(&mut out, format!("{who}: IRR {} disappeared", x.text));
        }
        for x in &r.irr_appeared {
            push_line(&mut out, format!("{who}: IRR {} appeared", x.text));
        }
        for m in &r.irr_moved {
            push_line(
                &mut out,
                format!("{who}: IRR {} → {}", m.old.text, m.new.text),
            );
        }
        for c in &r.figures {
            push_line(&mut out, format!("{who}: {}", change_line(c, false)));
        }
        for c in &r.cautions_added {
            push_line(&mut out, format!("{who}: new caution {c}"));
        }
        for c in &r.cautions_removed {
            push_line(&mut out, format!("{who}: caution {c} no longer raised"));
        }
    }
    out
}

/// Writes one line of the text report, indented, with user text made terminal-safe
/// (a memo text may hold line breaks; a name, in an older filing, anything).
fn push_line(out: &mut String, line: String) {
    out.push_str("  ");
    out.push_str(&crate::diag::terminal_safe(&line));
    out.push('\n');
}

/// A deal-file field or result figure in words, for the memo.
fn field_words(field: &str) -> String {
    let fixed = match field {
        "deal.name" => Some("Deal name"),
        "deal.currency" => Some("Currency"),
        "deal.as_of" => Some("As-of date"),
        "hurdle_rate" => Some("Hurdle rate"),
        "finance_rate" => Some("Finance rate"),
        "reinvestment_rate" => Some("Reinvestment rate"),
        "cash_flows (clock)" => Some("Cash-flow timing"),
        "memo.recommendation" => Some("Recommendation"),
        "memo.summary" => Some("Summary"),
        "memo.risks" => Some("A risk"),
        "signoff.decision" => Some("Committee decision"),
        "signoff.prepared_by" => Some("Prepared by"),
        "signoff.reviewed_by" => Some("Reviewed by"),
        "signoff.date" => Some("Decision date"),
        "IRR count" => Some("number of real IRRs"),
        "certified" => Some("IRR count certified"),
        _ => None,
    };
    if let Some(words) = fixed {
        return words.to_string();
    }
    if let Some(rest) = field.strip_prefix("memo.sections.") {
        return format!("Narrative section \"{rest}\"");
    }
    if let Some(name) = field
        .strip_prefix("scenarios.")
        .and_then(|r| r.strip_suffix(".description"))
    {
        return format!("Description of scenario {name}");
    }
    field.to_string()
}

fn change_sentence(c: &Change, subject: &str, quote: bool) -> String {
    let show = |v: &str| if quote { clip(v) } else { v.to_string() };
    match (&c.old, &c.new) {
        (Some(a), Some(b)) => format!("{subject} changed from {} to {}.", show(a), show(b)),
        (None, Some(b)) => format!("{subject} added: {}.", show(b)),
        (Some(a), None) => format!("{subject} removed (was {}).", show(a)),
        (None, None) => format!("{subject} changed."),
    }
}

/// Capitalises the first letter, for a scenario label that opens a sentence.
fn opening(text: &str) -> String {
    let mut chars = text.chars();
    match chars.next() {
        Some(c) => c.to_uppercase().chain(chars).collect(),
        None => String::new(),
    }
}

/// The diff as plain sentences for a memo, one change each, inputs first, then results;
/// empty when nothing changed. Amounts are shown without a currency code, as the memo's
/// header names the currency.
pub(crate) fn plain_lines(d: &Diff) -> Vec<String> {
    let mut out = Vec::new();
    for c in &d.inputs {
        let quote = c.field.starts_with("memo.") || c.field.contains(".description");
        out.push(change_sentence(c, &field_words(&c.field), quote));
    }
    for s in &d.scenarios_added {
        out.push(format!("Scenario {} added.", words::scenario_label(s)));
    }
    for s in &d.scenarios_removed {
        out.push(format!("Scenario {} removed.", words::scenario_label(s)));
    }
    for f in &d.flows {
        let who = opening(&label(&f.scenario));
        out.push(match (f.old, f.new) {
            (Some(a), Some(b)) => format!(
                "{who}: the flow at {} changed from {} to {}.",
                f.when,
                present::money(a, Style::Print),
                present::money(b, Style::Print)
            ),
            (None, Some(b)) => format!(
                "{who}: a flow of {} added at {}.",
                present::money(b, Style::Print),
                f.when
            ),
            (Some(a), None) => format!(
                "{who}: the flow of {} at {} removed.",
                present::money(a, Style::Print),
                f.when
            ),
            (None, None) => format!("{who}: the flow at {} changed.", f.when),
        });
    }
    for r in &d.results {
        let who = opening(&label(&r.scenario));
        for x in &r.irr_disappeared {
            out.push(format!("{who}: the IRR of {} disappeared.", x.text));
        }
        for x in &r.irr_appeared {
            out.push(format!("{who}: a new IRR of {} appeared.", x.text));
        }
        for m in &r.irr_moved {
            out.push(format!(
                "{who}: an IRR moved from {} to {}.",
                m.old.text, m.new.text
            ));
        }
        for c in &r.figures {
            out.push(change_sentence(
                c,
                &format!("{who}: {}", field_words(&c.field)),
                false,
            ));
        }
        for c in &r.cautions_added {
            out.push(format!("{who}: new caution ({c})."));
        }
        for c in &r.cautions_removed {
            out.push(format!("{who}: caution ({c}) no longer raised."));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn roots_pair_with_their_nearest_and_the_rest_appear_or_vanish() {
        // Roots given as log10(1 + rate): 5.6% and 15.6% become one root near 15%.
        let g = |r: f64| (1.0 + r).log10();
        assert_eq!(match_roots(&[g(0.056), g(0.156)], &[g(0.15)]), vec![(1, 0)]);
        assert_eq!(match_roots(&[g(0.15)], &[g(0.056), g(0.156)]), vec![(0, 1)]);
        assert_eq!(match_roots(&[g(0.056), g(0.156)], &[g(0.06)]), vec![(0, 0)]);
        assert_eq!(
            match_roots(&[g(0.1), g(0.2)], &[g(0.11), g(0.19)]),
            vec![(0, 0), (1, 1)]
        );
        assert!(match_roots(&[g(0.1)], &[]).is_empty());
    }

    #[test]
    fn memo_sentences_name_fields_in_words() {
        let d = Diff {
            inputs: vec![
                Change {
                    field: "hurdle_rate".to_string(),
                    old: Some("9%".to_string()),
                    new: Some("10%".to_string()),
                },
                Change {
                    field: "memo.sections.Site".to_string(),
                    old: None,
                    new: Some("New text".to_string()),
                },
            ],
            scenarios_added: vec!["delay".to_string()],
            scenarios_removed: Vec::new(),
            flows: vec![FlowChange {
                scenario: "base".to_string(),
                when: "period 3".to_string(),
                old: Some(Decimal::from(100)),
                new: None,
            }],
            results: Vec::new(),
        };
        assert_eq!(
            plain_lines(&d),
            vec![
                "Hurdle rate changed from 9% to 10%.",
                "Narrative section \"Site\" added: \"New text\".",
                "Scenario Delay added.",
                "Base case: the flow of 100.00 at period 3 removed.",
            ]
        );
        assert!(plain_lines(&Diff {
            inputs: Vec::new(),
            scenarios_added: Vec::new(),
            scenarios_removed: Vec::new(),
            flows: Vec::new(),
            results: Vec::new(),
        })
        .is_empty());
    }

    #[test]
    fn the_text_report_never_prints_a_control_character() {
        let d = Diff {
            inputs: vec![Change {
                field: "deal.name".to_string(),
                old: Some("Old\r\u{1b}[2K".to_string()),
                new: Some("New\nerror: forged".to_string()),
            }],
            scenarios_added: vec!["\u{1b}]0;title\u{7}".to_string()],
            scenarios_removed: Vec::new(),
            flows: Vec::new(),
            results: Vec::new(),
        };
        let text = render_text(&d);
        assert!(
            !text.chars().any(|c| c.is_control() && c != '\n'),
            "{text:?}"
        );
        assert!(!text.lines().any(|l| l.starts_with("error")), "{text}");
        assert!(
            text.contains("scenario \\u{1b}]0;title\\u{7} added"),
            "{text}"
        );
    }

    #[test]
    fn clipped_narrative_keeps_its_start() {
        assert_eq!(clip("short\ntext"), "\"short text\"");
        let long = "x".repeat(100);
        assert_eq!(clip(&long).chars().count(), 67 + 5);
    }
}
