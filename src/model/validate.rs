//! Turns the positioned YAML tree into a [`Deal`], collecting every problem on the
//! way rather than stopping at the first, each with its field path, position, a
//! stable code and a hint where one helps.

use super::flows::{FlowPoint, Flows};
use super::values::{self, ValueError};
use super::{
    Clock, DayCount, Deal, Frequency, Memo, MemoSection, Rates, Scenario, SensitivitySettings,
    Signoff, SignoffDecision,
};
use crate::diag::{Diagnostic, Position};
use crate::input::{csv, Node, RawDeal, Value};
use chrono::{Datelike, Days, Months, NaiveDate};
use rust_decimal::Decimal;

mod v2;

/// Largest shift accepted, in periods or days.
const MAX_SHIFT: i64 = 100_000;
pub(crate) use crate::limits::{
    MAX_BLOCK_CHARS, MAX_DIAGNOSTICS, MAX_ITEMS, MAX_MEMO_CHARS, MAX_NAME_CHARS, MAX_NOTE_CHARS,
    MAX_SCENARIOS, MAX_WORD_CHARS,
};
pub use crate::limits::{MAX_FLOWS, MAX_TOTAL_FLOWS};

const TOP: &[&str] = &[
    "sensitivity",
    "candor",
    "deal",
    "hurdle_rate",
    "finance_rate",
    "reinvestment_rate",
    "cash_flows",
    "scenarios",
    "memo",
    "signoff",
];
const DEAL: &[&str] = &["name", "currency", "as_of", "id"];
const CASH_FLOWS: &[&str] = &["every", "start", "amounts", "day_count", "dated", "csv"];
const DATED: &[&str] = &["date", "amount", "note"];
const SCENARIO: &[&str] = &[
    "label",
    "description",
    "inflows_factor",
    "outflows_factor",
    "shift_inflows",
    "cash_flows",
];
const MEMO: &[&str] = &["recommendation", "summary", "risks", "sections"];
const SECTION: &[&str] = &["title", "text"];
const SIGNOFF: &[&str] = &["prepared_by", "reviewed_by", "decision", "date"];
/// What a text field may hold: one line of at most so many characters, or a block of
/// text (line breaks and tabs allowed) of at most [`MAX_BLOCK_CHARS`].
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Text {
    Line(usize),
    Block,
}

/// The first problem with a text for a field of the given kind, as (message, hint);
/// the work is linear in the text's length.
fn text_problem(text: &str, what: &str, kind: Text) -> Option<(String, String)> {
    let max = match kind {
        Text::Line(n) => n,
        Text::Block => MAX_BLOCK_CHARS,
    };
    let (mut chars, mut word, mut longest) = (0usize, 0usize, 0usize);
    for c in text.chars() {
        chars += 1;
        if c.is_whitespace() {
            word = 0;
        } else {
            word += 1;
            longest = longest.max(word);
        }
        if kind != Text::Block && (c == '\n' || c == '\t') {
            let kind_of = if c == '\n' { "a line break" } else { "a tab" };
            return Some((
                format!("{what} holds {kind_of}; it is one line of text"),
                "write it on one line; only blocks of text (`memo.recommendation`, `memo.summary`, `memo.risks`, a section's `text`) run over several lines".to_string(),
            ));
        }
    }
    if chars > max {
        let hint = match kind {
            Text::Line(n) if n == MAX_NAME_CHARS => {
                "a name or title is a short line; put the rest in `memo.summary` or a section"
            }
            Text::Line(_) => "shorten it; longer text belongs in `memo.summary` or a section",
            Text::Block => "split it into several sections (`memo.sections`), or shorten it",
        };
        return Some((
            format!(
                "{what} is {} characters long; at most {} are accepted",
                values::grouped(chars as u64),
                values::grouped(max as u64)
            ),
            hint.to_string(),
        ));
    }
    if longest > MAX_WORD_CHARS {
        return Some((
            format!(
                "{what} holds a word of {} characters; words of at most {MAX_WORD_CHARS} are accepted",
                values::grouped(longest as u64)
            ),
            "a word that long cannot be broken across the lines of the memo: add spaces, or shorten it".to_string(),
        ));
    }
    None
}

const FREQUENCIES: &[&str] = &["year", "half-year", "quarter", "month", "week", "day"];
const DECISIONS: &[&str] = &["pending", "approved", "declined", "deferred"];

/// One flow before it is placed on the clock: a period number or a date.
#[derive(Debug, Clone)]
struct RawFlow<T> {
    at: T,
    amount: Decimal,
    note: Option<String>,
}

/// Flows as a deal file states them, before scenarios change them.
#[derive(Debug, Clone)]
enum ReadFlows {
    Periodic {
        every: Frequency,
        start: Option<NaiveDate>,
        flows: Vec<RawFlow<i64>>,
    },
    Dated {
        day_count: DayCount,
        flows: Vec<RawFlow<NaiveDate>>,
    },
}

impl ReadFlows {
    fn clock(&self) -> Clock {
        match self {
            ReadFlows::Periodic { every, start, .. } => Clock::Periodic {
                every: *every,
                start: *start,
            },
            ReadFlows::Dated { day_count, .. } => Clock::Dated {
                day_count: *day_count,
            },
        }
    }
}

/// Reads the text of a file named in the deal (a CSV of flows), relative to the deal
/// file; returns the text or a message saying why it cannot be read.
pub(crate) type ReadCompanion<'a> = dyn FnMut(&str) -> Result<String, String> + 'a;

/// A mapping's fields after the unknown and duplicate keys have been reported.
struct Fields<'a> {
    entries: Vec<(&'a str, &'a Node, &'a Node)>,
    position: Position,
}

impl<'a> Fields<'a> {
    /// The value of a key, treating an empty value as absent.
    fn get(&self, key: &str) -> Option<&'a Node> {
        self.entries
            .iter()
            .find(|(k, _, v)| *k == key && !v.is_null())
            .map(|(_, _, v)| *v)
    }

    /// The key node itself, for pointing at a key that conflicts with another.
    fn key(&self, key: &str) -> Option<&'a Node> {
        self.entries
            .iter()
            .find(|(k, _, v)| *k == key && !v.is_null())
            .map(|(_, k, _)| *k)
    }

    fn has(&self, key: &str) -> bool {
        self.get(key).is_some()
    }
}

fn join(path: &str, key: &str) -> String {
    if path.is_empty() {
        key.to_string()
    } else {
        format!("{path}.{key}")
    }
}

fn nearest<'k>(word: &str, candidates: &[&'k str]) -> Option<&'k str> {
    // The similarity measures take time in proportion to the product of the lengths
    // (or to the square of the longer): a very long key is no typing slip anyway.
    if word.len() > 64 {
        return None;
    }
    let lower = word.to_ascii_lowercase();
    candidates
        .iter()
        .map(|c| (strsim::jaro_winkler(&lower, c), *c))
        .filter(|(score, c)| *score >= 0.8 || strsim::levenshtein(&lower, c) <= 2)
        .max_by(|a, b| a.0.total_cmp(&b.0))
        .map(|(_, c)| c)
}

fn choices(candidates: &[&str]) -> String {
    candidates
        .iter()
        .map(|c| format!("`{c}`"))
        .collect::<Vec<_>>()
        .join(", ")
}

struct Validator<'r, 'a> {
    diags: Vec<Diagnostic>,
    /// Problems found past the first [`MAX_DIAGNOSTICS`] + 1, counted but not kept, so
    /// that a file of a million mistakes does not hold a million messages.
    dropped: usize,
    /// Where a problem that is not kept is written (its hint may still be set).
    spare: Diagnostic,
    read: &'r mut ReadCompanion<'a>,
}

impl Validator<'_, '_> {
    /// Records a problem: kept while there are few, counted beyond.
    fn push(&mut self, d: Diagnostic) -> &mut Diagnostic {
        if self.diags.len() > MAX_DIAGNOSTICS {
            self.dropped += 1;
            self.spare = d;
            return &mut self.spare;
        }
        self.diags.push(d);
        let last = self.diags.len() - 1;
        &mut self.diags[last]
    }

    /// How many problems have been found.
    fn count(&self) -> usize {
        self.diags.len() + self.dropped
    }

    fn report(
        &mut self,
        code: &str,
        message: impl Into<String>,
        path: &str,
        at: Position,
    ) -> &mut Diagnostic {
        let mut d = Diagnostic::error(code, message).at(at.line, at.column);
        if !path.is_empty() {
            d = d.at_field(path);
        }
        self.push(d)
    }

    fn hint(
        &mut self,
        code: &str,
        message: impl Into<String>,
        path: &str,
        at: Position,
        hint: impl Into<String>,
    ) {
        let d = self.report(code, message, path, at);
        d.hint = Some(hint.into());
    }

    fn value_error(&mut self, code: &str, e: ValueError, path: &str, at: Position) {
        let d = self.report(code, e.message, path, at);
        d.hint = e.hint;
    }

    fn wrong_type(&mut self, node: &Node, path: &str, expected: &str) {
        let found = node.kind();
        let what = if path.is_empty() {
            "the file".to_string()
        } else {
            format!("`{path}`")
        };
        self.report(
            "wrong-type",
            format!("{what} should be {expected}, but it is {found}"),
            path,
            node.position,
        );
    }

    /// Checks that `node` is a mapping whose keys are all known and unique.
    fn fields<'n>(&mut self, node: &'n Node, path: &str, known: &[&str]) -> Option<Fields<'n>> {
        let Value::Mapping(entries) = &node.value else {
            self.wrong_type(node, path, "a mapping of fields");
            return None;
        };
        let mut out: Vec<(&str, &Node, &Node)> = Vec::new();
        for (k, v) in entries {
            let Some(name) = k.scalar() else {
                self.report(
                    "wrong-type",
                    format!("a key {} is {}, not a name", display_path(path), k.kind()),
                    path,
                    k.position,
                );
                continue;
            };
            let field = join(path, name);
            if out.iter().any(|(n, _, _)| *n == name) {
                self.hint(
                    "duplicate-key",
                    format!("`{field}` is given more than once"),
                    &field,
                    k.position,
                    "keep one of them: a key may appear once in a mapping",
                );
                continue;
            }
            if !known.contains(&name) {
                let hint = match nearest(name, known) {
                    _ if name == "<<" => format!(
                        "candor does not apply YAML merge keys (`<<`); write the fields out here: {}",
                        choices(known)
                    ),
                    Some(n) => format!("did you mean `{n}`?"),
                    None => format!("the fields here are {}", choices(known)),
                };
                self.hint(
                    "unknown-field",
                    format!("unknown field `{name}` {}", display_path(path)),
                    &field,
                    k.position,
                    hint,
                );
                continue;
            }
            out.push((name, k, v));
        }
        Some(Fields {
            entries: out,
            position: node.position,
        })
    }

    fn required<'n>(
        &mut self,
        f: &Fields<'n>,
        path: &str,
        key: &str,
        example: &str,
    ) -> Option<&'n Node> {
        let node = f.get(key);
        if node.is_none() {
            let field = join(path, key);
            self.hint(
                "missing-field",
                format!("`{field}` is required"),
                &field,
                f.position,
                format!("add it, for example `{key}: {example}`"),
            );
        }
        node
    }

    fn text(&mut self, node: &Node, path: &str, kind: Text) -> Option<String> {
        let Some(t) = node.scalar() else {
            self.wrong_type(node, path, "text");
            return None;
        };
        if let Some((message, hint)) = text_problem(t, &format!("`{path}`"), kind) {
            let code = if message.contains("characters") {
                "text-too-long"
            } else {
                "control-character"
            };
            self.hint(code, message, path, node.position, hint);
            return None;
        }
        Some(t.to_string())
    }

    fn scalar<'n>(&mut self, node: &'n Node, path: &str, expected: &str) -> Option<&'n str> {
        let s = node.scalar();
        if s.is_none() {
            self.wrong_type(node, path, expected);
        }
        s
    }

    fn date(&mut self, node: &Node, path: &str) -> Option<NaiveDate> {
        let text = self.scalar(node, path, "a date (YYYY-MM-DD)")?;
        values::parse_date(text)
            .map_err(|e| self.value_error("bad-date", e, path, node.position))
            .ok()
    }

    fn rate(&mut self, node: &Node, path: &str) -> Option<Decimal> {
        let text = self.scalar(node, path, "a rate such as 8% or 0.08")?;
        values::read_rate(text)
            .map_err(|(code, e)| self.value_error(code, e, path, node.position))
            .ok()
    }

    fn decimal(&mut self, node: &Node, path: &str) -> Option<Decimal> {
        let text = self.scalar(node, path, "a number")?;
        values::read_amount(text)
            .map_err(|(code, e)| self.value_error(code, e, path, node.position))
            .ok()
    }

    fn integer(&mut self, node: &Node, path: &str) -> Option<i64> {
        let text = self.scalar(node, path, "a whole number")?;
        match text.trim().parse::<i64>() {
            Ok(n) if n.abs() <= MAX_SHIFT => Some(n),
            Ok(_) => {
                self.report(
                    "number-range",
                    format!(
                        "a shift of {} is more than the {} periods or days accepted",
                        text.trim(),
                        values::grouped(MAX_SHIFT.unsigned_abs())
                    ),
                    path,
                    node.position,
                );
                None
            }
            Err(_) => {
                self.hint(
                    "bad-number",
                    format!("`{}` is not a whole number", text.trim()),
                    path,
                    node.position,
                    "write a whole number of periods (or days for dated flows), such as 1 or -2",
                );
                None
            }
        }
    }

    fn choice<'c>(&mut self, node: &Node, path: &str, accepted: &[&'c str]) -> Option<&'c str> {
        let text = self.scalar(node, path, "one word")?;
        let lower = text.trim().to_ascii_lowercase();
        if let Some(c) = accepted.iter().find(|c| **c == lower) {
            return Some(c);
        }
        let hint = match nearest(&lower, accepted) {
            Some(n) => format!("did you mean `{n}`? accepted values: {}", choices(accepted)),
            None => format!("accepted values: {}", choices(accepted)),
        };
        self.hint(
            "unknown-value",
            format!("`{}` is not an accepted value of `{path}`", text.trim()),
            path,
            node.position,
            hint,
        );
        None
    }

    fn text_list(&mut self, node: &Node, path: &str) -> Vec<String> {
        let Value::Sequence(items) = &node.value else {
            self.wrong_type(node, path, "a list of text items");
            return Vec::new();
        };
        if !self.few_items(items.len(), path, node.position) {
            return Vec::new();
        }
        items
            .iter()
            .enumerate()
            .filter_map(|(i, n)| self.text(n, &format!("{path}[{i}]"), Text::Block))
            .collect()
    }

    /// Reports a list of more than [`MAX_ITEMS`] items; true when the count is fine.
    fn few_items(&mut self, count: usize, path: &str, at: Position) -> bool {
        if count <= MAX_ITEMS {
            return true;
        }
        self.beyond(
            "too-many-items",
            (&format!("`{path}` holds "), " items"),
            (count, MAX_ITEMS),
            path,
            at,
            "a memo is read by a committee: keep the items that matter",
        );
        false
    }

    /// Reports a count beyond its limit: `{before}{count}{after}; at most {max} are
    /// accepted`, the numbers grouped by thousands.
    fn beyond(
        &mut self,
        code: &str,
        (before, after): (&str, &str),
        (count, max): (usize, usize),
        path: &str,
        at: Position,
        hint: &str,
    ) {
        self.hint(
            code,
            format!(
                "{before}{}{after}; at most {} are accepted",
                values::grouped(count as u64),
                values::grouped(max as u64)
            ),
            path,
            at,
            hint,
        );
    }

    fn sequence<'n>(&mut self, node: &'n Node, path: &str, expected: &str) -> Option<&'n [Node]> {
        match &node.value {
            Value::Sequence(items) => {
                if items.len() > MAX_FLOWS {
                    self.hint(
                        "too-many-flows",
                        format!(
                            "`{path}` holds {} flows; at most {} are accepted",
                            values::grouped(items.len() as u64),
                            values::grouped(MAX_FLOWS as u64)
                        ),
                        path,
                        node.position,
                        "aggregate the flows to a coarser period",
                    );
                    return None;
                }
                Some(items)
            }
            _ => {
                self.wrong_type(node, path, expected);
                None
            }
        }
    }

    /// Reads a `cash_flows` block in any of its three forms.
    fn cash_flows(&mut self, node: &Node, path: &str) -> Option<ReadFlows> {
        let f = self.fields(node, path, CASH_FLOWS)?;
        let periodic_key = ["amounts", "every", "start"].into_iter().find(|k| f.has(k));
        let dated_key = ["dated", "day_count"].into_iter().find(|k| f.has(k));
        if f.has("csv") {
            for key in ["amounts", "dated"] {
                if let Some(k) = f.key(key) {
                    self.hint(
                        "flows-conflict",
                        format!("`{path}` names a CSV file and also lists `{key}`"),
                        &join(path, key),
                        k.position,
                        "give the flows once: either in the CSV file or in the deal file",
                    );
                    return None;
                }
            }
            return self.csv_flows(&f, path);
        }
        match (periodic_key, dated_key) {
            (Some(p), Some(d)) => {
                let at = f.key(d).map_or(f.position, |k| k.position);
                self.hint(
                    "flows-conflict",
                    format!("`{path}` mixes periodic (`{p}`) and dated (`{d}`) flows"),
                    &join(path, d),
                    at,
                    "use either `every` + `amounts` (periodic) or `day_count` + `dated` (dated), not both",
                );
                None
            }
            (Some(_), None) => {
                let every = self.required(&f, path, "every", "year");
                let amounts = self.required(&f, path, "amounts", "[-1000, 600, 600]");
                let start = f
                    .get("start")
                    .and_then(|n| self.date(n, &join(path, "start")));
                let every = every.and_then(|n| self.frequency(n, &join(path, "every")));
                let list_path = join(path, "amounts");
                let items = self.sequence(amounts?, &list_path, "a list of amounts")?;
                let mut flows = Vec::with_capacity(items.len());
                let mut ok = true;
                for (i, n) in items.iter().enumerate() {
                    match self.decimal(n, &format!("{list_path}[{i}]")) {
                        Some(amount) => flows.push(RawFlow {
                            at: i as i64,
                            amount,
                            note: None,
                        }),
                        None => ok = false,
                    }
                }
                let every = every?;
                if !ok || !self.nonempty(flows.iter().map(|f| f.amount), amounts?, &list_path) {
                    return None;
                }
                Some(ReadFlows::Periodic {
                    every,
                    start,
                    flows,
                })
            }
            (None, Some(_)) => {
                let day_count = self.required(&f, path, "day_count", "act/365f");
                let dated =
                    self.required(&f, path, "dated", "[{ date: 2027-01-15, amount: -1000 }]");
                let day_count = day_count.and_then(|n| self.day_count(n, &join(path, "day_count")));
                let list_path = join(path, "dated");
                let items = self.sequence(dated?, &list_path, "a list of dated flows")?;
                let mut flows = Vec::with_capacity(items.len());
                let mut ok = true;
                for (i, n) in items.iter().enumerate() {
                    match self.dated_flow(n, &format!("{list_path}[{i}]")) {
                        Some(flow) => flows.push(flow),
                        None => ok = false,
                    }
                }
                let day_count = day_count?;
                if !ok || !self.nonempty(flows.iter().map(|f| f.amount), dated?, &list_path) {
                    return None;
                }
                Some(ReadFlows::Dated { day_count, flows })
            }
            (None, None) => {
                self.hint(
                    "missing-field",
                    format!("`{path}` gives no flows"),
                    path,
                    f.position,
                    "give `every` + `amounts` (periodic), `day_count` + `dated` (dated), or `csv` with `every` or `day_count`",
                );
                None
            }
        }
    }

    /// Reports an empty or all-zero list; true when the amounts are usable.
    fn nonempty(
        &mut self,
        mut amounts: impl Iterator<Item = Decimal>,
        node: &Node,
        path: &str,
    ) -> bool {
        let mut any = false;
        let mut nonzero = false;
        for a in amounts.by_ref() {
            any = true;
            nonzero |= !a.is_zero();
        }
        if !any {
            self.hint(
                "empty-flows",
                format!("`{path}` holds no flows"),
                path,
                node.position,
                "a deal needs at least one outflow and one inflow",
            );
        } else if !nonzero {
            self.hint(
                "all-zero-flows",
                format!("every flow in `{path}` is zero"),
                path,
                node.position,
                "a deal needs at least one flow that is not zero",
            );
        }
        nonzero
    }

    fn frequency(&mut self, node: &Node, path: &str) -> Option<Frequency> {
        Some(match self.choice(node, path, FREQUENCIES)? {
            "year" => Frequency::Year,
            "half-year" => Frequency::HalfYear,
            "quarter" => Frequency::Quarter,
            "month" => Frequency::Month,
            "week" => Frequency::Week,
            _ => Frequency::Day,
        })
    }

    fn day_count(&mut self, node: &Node, path: &str) -> Option<DayCount> {
        let names: Vec<&str> = DayCount::ALL.iter().map(|d| d.as_str()).collect();
        let name = self.choice(node, path, &names)?;
        DayCount::parse(name)
    }

    fn dated_flow(&mut self, node: &Node, path: &str) -> Option<RawFlow<NaiveDate>> {
        // `- 2027-01-15: -1000` reads as a mapping keyed by the date: say so once,
        // rather than as an unknown field and two missing ones.
        if let Value::Mapping(entries) = &node.value {
            if let [(k, v)] = entries.as_slice() {
                let key = k.scalar().unwrap_or_default();
                if key.starts_with(|c: char| c.is_ascii_digit()) {
                    let amount = v.scalar().unwrap_or("-1000");
                    self.hint(
                        "wrong-type",
                        format!("`{path}` gives its date as a key, not as `date:`"),
                        path,
                        k.position,
                        format!("write the flow as `- {{ date: {key}, amount: {amount} }}`"),
                    );
                    return None;
                }
            }
        }
        let f = self.fields(node, path, DATED)?;
        let date = self.required(&f, path, "date", "2027-01-15");
        let amount = self.required(&f, path, "amount", "-1000");
        let date = date.and_then(|n| self.date(n, &join(path, "date")));
        let amount = amount.and_then(|n| self.decimal(n, &join(path, "amount")));
        let note = f
            .get("note")
            .and_then(|n| self.text(n, &join(path, "note"), Text::Line(MAX_NOTE_CHARS)));
        Some(RawFlow {
            at: date?,
            amount: amount?,
            note,
        })
    }

    /// Reads flows from a CSV file named by `cash_flows.csv`.
    fn csv_flows(&mut self, f: &Fields<'_>, path: &str) -> Option<ReadFlows> {
        let csv_node = f.get("csv")?;
        let csv_path = join(path, "csv");
        let name = self.text(csv_node, &csv_path, Text::Line(MAX_NOTE_CHARS))?;
        let every_node = f.get("every");
        let day_count_node = f.get("day_count");
        let start = f
            .get("start")
            .and_then(|n| self.date(n, &join(path, "start")));
        let clock = match (every_node, day_count_node) {
            (Some(_), Some(d)) => {
                self.hint(
                    "flows-conflict",
                    format!("`{path}` gives both `every` and `day_count`"),
                    &join(path, "day_count"),
                    d.position,
                    "use `every` for a CSV with a `period` column, `day_count` for one with a `date` column",
                );
                return None;
            }
            (Some(e), None) => Err(self.frequency(e, &join(path, "every"))?),
            (None, Some(d)) => Ok(self.day_count(d, &join(path, "day_count"))?),
            (None, None) => {
                self.hint(
                    "missing-field",
                    format!("`{path}` names a CSV file but not how its flows are timed"),
                    path,
                    f.position,
                    "add `every: year` (CSV columns period,amount) or `day_count: act/365f` (CSV columns date,amount)",
                );
                return None;
            }
        };
        let text = self.companion(&name, &csv_path, csv_node)?;
        self.csv_series(&name, &text, clock, start, (&csv_path, csv_node), None)
    }

    /// The text of a companion file named at `path` (`node`), or a `csv-missing`
    /// problem saying why it cannot be read.
    fn companion(&mut self, name: &str, path: &str, node: &Node) -> Option<String> {
        match (self.read)(name) {
            Ok(t) => Some(t),
            Err(why) => {
                let d = self.report(
                    "csv-missing",
                    format!("cannot read the CSV file `{name}`: {why}"),
                    path,
                    node.position,
                );
                // Other reasons (size, encoding) carry their own advice.
                if why == "no such file" {
                    d.hint = Some("the path is relative to the deal file's folder".to_string());
                }
                None
            }
        }
    }

    /// The flows of a CSV file's text on a clock (`Err(every)` for a `period` column,
    /// `Ok(day_count)` for a `date` column), named at `csv_path` (`csv_node`); the
    /// amounts are read from the column `amount`, or from `column` (other columns
    /// then allowed, as several lines share one file).
    fn csv_series(
        &mut self,
        name: &str,
        text: &str,
        clock: Result<DayCount, Frequency>,
        start: Option<NaiveDate>,
        (csv_path, csv_node): (&str, &Node),
        column: Option<&str>,
    ) -> Option<ReadFlows> {
        let first_column = if clock.is_err() { "period" } else { "date" };
        let before = self.count();
        let rows = self.csv_rows(name, text, first_column, column)?;
        if rows.len() > MAX_FLOWS {
            self.hint(
                "too-many-flows",
                format!(
                    "`{name}` holds {} flows; at most {} are accepted",
                    values::grouped(rows.len() as u64),
                    values::grouped(MAX_FLOWS as u64)
                ),
                csv_path,
                csv_node.position,
                "aggregate the flows to a coarser period",
            );
            return None;
        }
        let mut ok = self.count() == before;
        let mut amounts = Vec::with_capacity(rows.len());
        let mut periodic = Vec::new();
        let mut dated = Vec::new();
        for (first, amount, note) in rows {
            let cell_err = |ctx: &mut Self, code: &str, e: ValueError, at: Position| {
                let mut d = Diagnostic::error(code, e.message)
                    .in_file(name)
                    .at(at.line, at.column);
                d.hint = e.hint;
                ctx.push(d);
            };
            let value = match values::parse_decimal(&amount.text) {
                Ok(v) => Some(v),
                Err(e) => {
                    cell_err(self, "csv-format", e, amount.position);
                    None
                }
            };
            match clock {
                Err(_) => match first.text.trim().parse::<u32>() {
                    Ok(p) if (p as usize) <= MAX_FLOWS => {
                        if let Some(v) = value {
                            periodic.push(RawFlow {
                                at: i64::from(p),
                                amount: v,
                                note,
                            });
                        }
                    }
                    _ => {
                        let e = ValueError {
                            message: format!("`{}` is not a period number", first.text.trim()),
                            hint: Some(format!("periods are whole numbers from 0 to {MAX_FLOWS}")),
                        };
                        cell_err(self, "csv-format", e, first.position);
                        ok = false;
                    }
                },
                Ok(_) => match values::parse_date(&first.text) {
                    Ok(d) => {
                        if let Some(v) = value {
                            dated.push(RawFlow {
                                at: d,
                                amount: v,
                                note,
                            });
                        }
                    }
                    Err(e) => {
                        cell_err(self, "csv-format", e, first.position);
                        ok = false;
                    }
                },
            }
            ok &= value.is_some();
            amounts.extend(value);
        }
        if !ok || !self.nonempty(amounts.into_iter(), csv_node, csv_path) {
            return None;
        }
        Some(match clock {
            Err(every) => ReadFlows::Periodic {
                every,
                start,
                flows: periodic,
            },
            Ok(day_count) => ReadFlows::Dated {
                day_count,
                flows: dated,
            },
        })
    }

    /// Splits a CSV file into (first column, amount, note) rows, checking the header.
    fn csv_rows(
        &mut self,
        name: &str,
        text: &str,
        first_column: &str,
        column: Option<&str>,
    ) -> Option<Vec<(csv::Cell, csv::Cell, Option<String>)>> {
        let in_csv = |code: &str, message: String, at: Position, hint: Option<String>| {
            let mut d = Diagnostic::error(code, message)
                .in_file(name)
                .at(at.line, at.column);
            d.hint = hint;
            d
        };
        let rows = match csv::read(text) {
            Ok(r) => r,
            Err(e) => {
                self.push(in_csv("csv-format", e.message, e.position, None));
                return None;
            }
        };
        let start = Position { line: 1, column: 1 };
        let amount = column.unwrap_or("amount");
        let expected = match column {
            None => format!("{first_column},amount[,note]"),
            Some(c) => format!("{first_column},{c}[,other columns][,note]"),
        };
        let Some((header, body)) = rows.split_first() else {
            self.push(in_csv(
                "csv-format",
                format!("`{name}` is empty"),
                start,
                Some(format!("the first row names the columns: {expected}")),
            ));
            return None;
        };
        let names: Vec<String> = header
            .iter()
            .map(|c| c.text.trim().to_ascii_lowercase())
            .collect();
        let known = [first_column, amount, "note"];
        let mut bad = false;
        for (i, n) in names.iter().enumerate() {
            let unknown = column.is_none() && !known.contains(&n.as_str());
            if unknown || names[..i].contains(n) {
                bad = true;
                let hint = nearest(n, &known).map_or_else(
                    || format!("the header row names the columns: {expected}"),
                    |k| format!("did you mean `{k}`? the columns are {expected}"),
                );
                self.push(in_csv(
                    "csv-format",
                    format!(
                        "unexpected column `{}` in the header row",
                        header[i].text.trim()
                    ),
                    header[i].position,
                    Some(hint),
                ));
            }
        }
        let index = |col: &str| names.iter().position(|n| n == col);
        let (Some(fi), Some(ai)) = (index(first_column), index(amount)) else {
            let missing = if index(first_column).is_none() {
                first_column
            } else {
                amount
            };
            let others: Vec<&str> = names.iter().map(String::as_str).collect();
            let hint = match nearest(missing, &others) {
                Some(n) if column.is_some() => {
                    format!("did you mean `{n}`? the first row names the columns: {expected}")
                }
                _ => format!("the first row names the columns: {expected}"),
            };
            self.push(in_csv(
                "csv-format",
                format!("`{name}` has no `{missing}` column"),
                start,
                Some(hint),
            ));
            return None;
        };
        if bad {
            return None;
        }
        let ni = index("note");
        let mut out = Vec::with_capacity(body.len());
        for row in body {
            if row.len() != header.len() {
                let at = row.first().map_or(start, |c| c.position);
                let cells = if row.len() == 1 { "cell" } else { "cells" };
                self.push(in_csv(
                    "csv-format",
                    format!(
                        "this row has {} {cells} but the header names {} columns",
                        row.len(),
                        header.len()
                    ),
                    at,
                    Some(format!(
                        "give every row the columns {}, in that order; an empty note is a trailing comma",
                        names.join(",")
                    )),
                ));
                continue;
            }
            let note = ni
                .map(|i| row[i].text.trim().to_string())
                .filter(|n| !n.is_empty());
            let problem = note
                .as_deref()
                .and_then(|n| text_problem(n, "the note", Text::Line(MAX_NOTE_CHARS)));
            if let (Some((message, hint)), Some(i)) = (problem, ni) {
                self.push(in_csv("csv-format", message, row[i].position, Some(hint)));
                continue;
            }
            out.push((row[fi].clone(), row[ai].clone(), note));
        }
        Some(out)
    }

    fn scenario(
        &mut self,
        name: &str,
        node: &Node,
        base: Option<&ReadFlows>,
    ) -> Option<(ReadFlows, String, Option<String>)> {
        let path = format!("scenarios.{name}");
        let f = self.fields(node, &path, SCENARIO)?;
        let label = self.label(&f, &path);
        let description = f
            .get("description")
            .and_then(|n| self.text(n, &join(&path, "description"), Text::Line(MAX_NOTE_CHARS)));
        let inflows = f
            .get("inflows_factor")
            .and_then(|n| self.factor(n, &join(&path, "inflows_factor")));
        let outflows = f
            .get("outflows_factor")
            .and_then(|n| self.factor(n, &join(&path, "outflows_factor")));
        let shift_node = f.get("shift_inflows");
        let shift = shift_node.and_then(|n| self.integer(n, &join(&path, "shift_inflows")));
        let replaced = match f.get("cash_flows") {
            Some(n) => Some(self.cash_flows(n, &join(&path, "cash_flows"))?),
            None => None,
        };
        let fails = ["inflows_factor", "outflows_factor", "shift_inflows"]
            .iter()
            .zip([inflows.is_some(), outflows.is_some(), shift.is_some()])
            .any(|(k, ok)| f.has(k) && !ok);
        if fails {
            return None;
        }
        let base = base?;
        if let Some(r) = &replaced {
            if r.clock() != base.clock() && !same_kind(r, base) {
                let at = f.get("cash_flows").map_or(f.position, |n| n.position);
                self.hint(
                    "clock-mismatch",
                    format!("`{path}.cash_flows` times its flows differently from the base case"),
                    &join(&path, "cash_flows"),
                    at,
                    "a scenario's flows use the same `every` or `day_count` as the base case",
                );
                return None;
            }
        }
        let mut series = replaced.clone().unwrap_or_else(|| base.clone());
        let mut words = Vec::new();
        if replaced.is_some() {
            words.push("cash flows replaced".to_string());
        }
        let one = Decimal::ONE;
        let (inflows, outflows) = (inflows.unwrap_or(one), outflows.unwrap_or(one));
        if inflows != one {
            words.push(format!("inflows x {inflows}"));
        }
        if outflows != one {
            words.push(format!("outflows x {outflows}"));
        }
        let scale = |a: Decimal| {
            if a > Decimal::ZERO {
                a * inflows
            } else {
                a * outflows
            }
        };
        let shift = shift.unwrap_or(0);
        let shift_at = shift_node.map_or(f.position, |n| n.position);
        match &mut series {
            ReadFlows::Periodic { flows, .. } => {
                for fl in flows.iter_mut() {
                    if fl.amount > Decimal::ZERO {
                        fl.at += shift;
                    }
                    fl.amount = scale(fl.amount);
                }
                if flows.iter().any(|fl| fl.at < 0) {
                    self.hint(
                        "shift-range",
                        format!("`{path}.shift_inflows` moves inflows before period 0"),
                        &join(&path, "shift_inflows"),
                        shift_at,
                        "shift inflows later (a positive number), or replace the flows with `cash_flows`",
                    );
                    return None;
                }
                if shift != 0 {
                    words.push(shift_words(shift, "period"));
                }
            }
            ReadFlows::Dated { flows, .. } => {
                for fl in flows.iter_mut() {
                    if fl.amount > Decimal::ZERO {
                        let moved = if shift >= 0 {
                            fl.at.checked_add_days(Days::new(shift.unsigned_abs()))
                        } else {
                            fl.at.checked_sub_days(Days::new(shift.unsigned_abs()))
                        };
                        let moved = moved
                            .filter(|d| (values::MIN_YEAR..=values::MAX_YEAR).contains(&d.year()));
                        let Some(moved) = moved else {
                            self.report(
                                "shift-range",
                                format!(
                                    "`{path}.shift_inflows` moves a flow outside the years {} to {} that candor accepts",
                                    values::MIN_YEAR,
                                    values::MAX_YEAR
                                ),
                                &join(&path, "shift_inflows"),
                                shift_at,
                            );
                            return None;
                        };
                        fl.at = moved;
                    }
                    fl.amount = scale(fl.amount);
                }
                if shift != 0 {
                    words.push(shift_words(shift, "day"));
                }
            }
        }
        let description = description.unwrap_or_else(|| {
            if words.is_empty() {
                "same flows as the base case".to_string()
            } else {
                words.join("; ")
            }
        });
        Some((series, description, label))
    }

    /// A scenario's optional `label`: a short line for print, not blank.
    fn label(&mut self, f: &Fields<'_>, path: &str) -> Option<String> {
        let node = f.get("label")?;
        let field = join(path, "label");
        let text = self.text(node, &field, Text::Line(MAX_NAME_CHARS))?;
        if text.trim().is_empty() {
            self.report(
                "missing-field",
                format!("`{field}` is empty"),
                &field,
                node.position,
            );
            return None;
        }
        Some(text.trim().to_string())
    }

    fn factor(&mut self, node: &Node, path: &str) -> Option<Decimal> {
        let v = self.decimal(node, path)?;
        if v.is_sign_negative() {
            self.hint(
                "number-range",
                format!("`{path}` is negative"),
                path,
                node.position,
                "a factor multiplies flows: 0.85 means 15% less; it cannot be below 0",
            );
            return None;
        }
        Some(v)
    }

    /// Places a series on its clock: sorted, netted by period or date, offsets set.
    fn resolve(&mut self, series: &ReadFlows, path: &str, at: Position) -> Option<Flows> {
        match series {
            ReadFlows::Periodic {
                every,
                start,
                flows,
            } => {
                let mut sorted = flows.clone();
                sorted.sort_by_key(|f| f.at);
                let merged = net(sorted);
                let mut points = Vec::with_capacity(merged.len());
                for f in merged {
                    let period = u32::try_from(f.at).ok()?;
                    let date = match start {
                        Some(s) => {
                            let d = period_date(*s, *every, period).filter(|d| {
                                (values::MIN_YEAR..=values::MAX_YEAR).contains(&d.year())
                            });
                            if d.is_none() {
                                self.hint(
                                    "bad-date",
                                    format!(
                                        "period {period} falls after the year {} that candor accepts",
                                        values::MAX_YEAR
                                    ),
                                    &join(path, "start"),
                                    at,
                                    "check `start` and `every`: dates run from 1900 to 2399",
                                );
                                return None;
                            }
                            d
                        }
                        None => None,
                    };
                    points.push(FlowPoint {
                        offset: f.at,
                        amount: f.amount,
                        date,
                        period: Some(period),
                        note: f.note,
                    });
                }
                Some(Flows {
                    points,
                    units_per_year: u64::from(every.per_year()),
                    periods_per_year: Some(every.per_year()),
                })
            }
            ReadFlows::Dated { day_count, flows } => {
                let mut sorted = flows.clone();
                sorted.sort_by_key(|f| f.at);
                let merged = net(sorted);
                if merged.is_empty() {
                    return None;
                }
                Some(Flows::dated(
                    merged
                        .into_iter()
                        .map(|f| (f.at, f.amount, f.note))
                        .collect(),
                    *day_count,
                ))
            }
        }
    }
}

fn same_kind(a: &ReadFlows, b: &ReadFlows) -> bool {
    match (a, b) {
        (ReadFlows::Periodic { every: x, .. }, ReadFlows::Periodic { every: y, .. }) => x == y,
        (ReadFlows::Dated { day_count: x, .. }, ReadFlows::Dated { day_count: y, .. }) => x == y,
        _ => false,
    }
}

fn shift_words(shift: i64, unit: &str) -> String {
    let n = shift.unsigned_abs();
    let plural = if n == 1 { "" } else { "s" };
    let way = if shift > 0 { "later" } else { "earlier" };
    format!("inflows {n} {unit}{plural} {way}")
}

/// Nets flows that fall at the same time (input sorted), joining their notes.
fn net<T: PartialEq + Copy>(sorted: Vec<RawFlow<T>>) -> Vec<RawFlow<T>> {
    let mut out: Vec<RawFlow<T>> = Vec::with_capacity(sorted.len());
    for f in sorted {
        match out.last_mut() {
            Some(last) if last.at == f.at => {
                last.amount += f.amount;
                last.note = match (last.note.take(), f.note) {
                    (Some(a), Some(b)) => Some(format!("{a}; {b}")),
                    (a, b) => a.or(b),
                };
            }
            _ => out.push(f),
        }
    }
    out
}

/// The date of period `n` after `start`: whole months keep the day of the month,
/// clamped to the month's end (common practice).
fn period_date(start: NaiveDate, every: Frequency, n: u32) -> Option<NaiveDate> {
    let months = |k: u32| start.checked_add_months(Months::new(n.checked_mul(k)?));
    match every {
        Frequency::Year => months(12),
        Frequency::HalfYear => months(6),
        Frequency::Quarter => months(3),
        Frequency::Month => months(1),
        Frequency::Week => start.checked_add_days(Days::new(u64::from(n) * 7)),
        Frequency::Day => start.checked_add_days(Days::new(u64::from(n))),
    }
}

/// Where a key sits, in words: "at the top level" or "in `deal`".
fn display_path(path: &str) -> String {
    if path.is_empty() {
        "at the top level".to_string()
    } else {
        format!("in `{path}`")
    }
}

/// Validates a raw deal into a [`Deal`], or returns every problem found. `read`
/// supplies the text of any CSV file the deal names. Diagnostics about the deal file
/// carry no file name (the caller adds it); those about a CSV file name it as written.
pub fn validate(raw: &RawDeal, read: &mut ReadCompanion<'_>) -> Result<Deal, Vec<Diagnostic>> {
    let mut ctx = Validator {
        diags: Vec::new(),
        dropped: 0,
        spare: Diagnostic::error("", ""),
        read,
    };
    let deal = build(&mut ctx, raw);
    let dropped = ctx.dropped;
    let mut diags = ctx.diags;
    match deal {
        Some(d) if diags.is_empty() => Ok(d),
        _ => {
            if diags.is_empty() {
                // Defensive: a refusal without a reason must still say something.
                diags.push(Diagnostic::error(
                    "invalid",
                    "the deal file could not be read",
                ));
            }
            if diags.len() > MAX_DIAGNOSTICS {
                let more = diags.len() - MAX_DIAGNOSTICS + dropped;
                diags.truncate(MAX_DIAGNOSTICS);
                diags.push(Diagnostic::error(
                    "too-many-problems",
                    format!("{more} more problems are not shown"),
                ));
            }
            Err(diags)
        }
    }
}

fn build(ctx: &mut Validator<'_, '_>, raw: &RawDeal) -> Option<Deal> {
    let origin = Position { line: 1, column: 1 };
    let Some(root) = &raw.root else {
        ctx.hint(
            "empty-file",
            "the deal file is empty",
            "",
            origin,
            "start with `candor: 1`; see example-deals/ for complete files",
        );
        return None;
    };
    // The version comes first: under another version the other fields may mean
    // something else, so nothing more is said.
    if let Value::Mapping(entries) = &root.value {
        let version = entries
            .iter()
            .find(|(k, v)| k.scalar() == Some("candor") && !v.is_null());
        if let Some((_, v)) = version {
            match v.scalar().map(str::trim) {
                Some("1") => {}
                Some("2") => return v2::build(ctx, root),
                other => {
                    let shown = other.unwrap_or("a structure");
                    ctx.hint(
                        "unknown-version",
                        format!("this candor reads deal files of version 1 or 2, not `{shown}`"),
                        "candor",
                        v.position,
                        "write `candor: 2` (or `candor: 1`) and follow that version's format",
                    );
                    return None;
                }
            }
        }
    }
    let top = ctx.fields(root, "", TOP)?;
    ctx.required(&top, "", "candor", "1");

    let (header, id) = match deal_header(ctx, &top, DEAL) {
        Some((h, f)) => (h, f.get("id").and_then(|n| deal_id(ctx, n))),
        None => (None, None),
    };
    let rates = stated_rates(ctx, &top, "");

    let flows_node = ctx.required(
        &top,
        "",
        "cash_flows",
        "{ every: year, amounts: [-1000, 600, 600] }",
    );
    let base = flows_node.and_then(|n| ctx.cash_flows(n, "cash_flows"));

    let mut scenarios = Vec::new();
    if let Some(base) = &base {
        let at = flows_node.map_or(origin, |n| n.position);
        if let Some(flows) = ctx.resolve(base, "cash_flows", at) {
            scenarios.push(version_one_scenario("base", None, String::new(), flows));
        }
    }
    if let Some(s) = top.get("scenarios") {
        let mut total: usize = scenarios.iter().map(|s| s.flows.points.len()).sum();
        let fields = "`inflows_factor`, `outflows_factor`, `shift_inflows`, `cash_flows`";
        each_scenario(ctx, s, fields, |ctx, name, k, v| {
            let path = format!("scenarios.{name}");
            let Some((series, description, label)) = ctx.scenario(name, v, base.as_ref()) else {
                return true;
            };
            let Some(flows) = ctx.resolve(&series, &path, v.position) else {
                return true;
            };
            total = total.saturating_add(flows.points.len());
            if !ctx.total_flows(total, name, &path, k.position) {
                return false;
            }
            if flows.points.iter().all(|p| p.amount.is_zero()) {
                ctx.report(
                    "all-zero-flows",
                    format!("every flow of scenario `{name}` is zero"),
                    &path,
                    v.position,
                );
                return true;
            }
            scenarios.push(version_one_scenario(name, label, description, flows));
            true
        });
    }

    let (memo, signoff) = narrative(ctx, &top)?;
    let sensitivity = sensitivity_settings(ctx, &top, &["inflows", "outflows"])?;

    let (name, currency, as_of) = header?;
    let rates = rates?.resolved();
    for s in &mut scenarios {
        s.rates = rates;
    }
    let clock = base?.clock();
    Some(Deal {
        version: 1,
        units: super::Units::Ones,
        basis: None,
        name,
        id,
        currency,
        as_of,
        rates,
        clock,
        scenarios,
        memo: memo?,
        signoff,
        sensitivity,
    })
}

/// Reports `key` as no line of the deal (`unknown-line`), with the nearest key.
fn unknown_line(ctx: &mut Validator<'_, '_>, key: &str, known: &[&str], path: &str, at: Position) {
    let hint = match nearest(key, known) {
        Some(n) => format!("did you mean `{n}`? the lines are {}", choices(known)),
        None => format!("the lines are {}", choices(known)),
    };
    ctx.hint(
        "unknown-line",
        format!("there is no line `{key}`"),
        path,
        at,
        hint,
    );
}

/// The fields of the `sensitivity` block.
const SENSITIVITY: &[&str] = &["steps", "factor_range", "table_line"];
/// At most this many steps.
const MAX_STEPS: usize = 12;

/// The optional `sensitivity` block: `steps` (moves such as -20% and 10%, none zero,
/// each above -100% and at most +1,000%), `factor_range` (two factors, lowest first,
/// from 0 to 100) and `table_line` (a line of the deal, `lines` naming them). `None`
/// when the block is wrong (its problems reported).
fn sensitivity_settings(
    ctx: &mut Validator<'_, '_>,
    top: &Fields<'_>,
    lines: &[&str],
) -> Option<SensitivitySettings> {
    let Some(node) = top.get("sensitivity") else {
        return Some(SensitivitySettings::default());
    };
    let f = ctx.fields(node, "sensitivity", SENSITIVITY)?;
    let mut ok = true;
    let mut out = SensitivitySettings::default();
    if let Some(n) = f.get("steps") {
        match &n.value {
            Value::Sequence(items) if !items.is_empty() && items.len() <= MAX_STEPS => {
                let mut steps = Vec::new();
                for (i, item) in items.iter().enumerate() {
                    let path = format!("sensitivity.steps[{i}]");
                    match ctx.rate(item, &path) {
                        // (`rate` has refused -100% and below already.)
                        Some(r) if r.is_zero() || r > Decimal::TEN => {
                            ctx.hint(
                                "number-range",
                                format!("`{path}` moves by {}%", r * Decimal::ONE_HUNDRED),
                                &path,
                                item.position,
                                "a step moves a line by a share of itself: not 0, above -100%, at most 1000%",
                            );
                            ok = false;
                        }
                        Some(r) => steps.push(r),
                        None => ok = false,
                    }
                }
                steps.sort();
                steps.dedup();
                out.steps = Some(steps);
            }
            _ => {
                ctx.hint(
                    "wrong-type",
                    format!("`sensitivity.steps` must be a list of 1 to {MAX_STEPS} moves"),
                    "sensitivity.steps",
                    n.position,
                    "such as [-20%, -10%, 10%, 20%]",
                );
                ok = false;
            }
        }
    }
    if let Some(n) = f.get("factor_range") {
        let pair = match &n.value {
            Value::Sequence(items) if items.len() == 2 => {
                let lo = ctx.factor(&items[0], "sensitivity.factor_range[0]");
                let hi = ctx.factor(&items[1], "sensitivity.factor_range[1]");
                lo.zip(hi)
            }
            _ => {
                ctx.hint(
                    "wrong-type",
                    "`sensitivity.factor_range` must be two factors, lowest first",
                    "sensitivity.factor_range",
                    n.position,
                    "such as [0, 3]",
                );
                None
            }
        };
        match pair {
            Some((lo, hi)) if lo < hi && hi <= Decimal::ONE_HUNDRED => {
                out.factor_range = Some((lo, hi))
            }
            Some(_) => {
                ctx.hint(
                    "number-range",
                    "`sensitivity.factor_range` must go from a lower factor to a higher one, at most 100",
                    "sensitivity.factor_range",
                    n.position,
                    "such as [0, 3]",
                );
                ok = false;
            }
            None => ok = false,
        }
    }
    if let Some(n) = f.get("table_line") {
        match ctx.scalar(n, "sensitivity.table_line", "the key of a line") {
            Some(key) if lines.contains(&key.trim()) => {
                out.table_line = Some(key.trim().to_string())
            }
            Some(key) => {
                let key = key.trim().to_string();
                unknown_line(ctx, &key, lines, "sensitivity.table_line", n.position);
                ok = false;
            }
            None => ok = false,
        }
    }
    ok.then_some(out)
}

/// The optional `memo` and `signoff` blocks; `None` when the sign-off is wrong (the
/// memo's problems are reported and leave it `None` inside).
fn narrative(
    ctx: &mut Validator<'_, '_>,
    top: &Fields<'_>,
) -> Option<(Option<Memo>, Option<Signoff>)> {
    let memo = match top.get("memo") {
        Some(n) => memo(ctx, n),
        None => Some(Memo::default()),
    };
    let signoff = match top.get("signoff") {
        Some(n) => Some(signoff(ctx, n)?),
        None => None,
    };
    Some((memo, signoff))
}

/// A scenario of a version-1 deal: its components are its inflows and outflows, and
/// its rates (set once the deal's are read) the deal's.
fn version_one_scenario(
    name: &str,
    label: Option<String>,
    description: String,
    flows: Flows,
) -> Scenario {
    let zero = Decimal::ZERO;
    Scenario {
        name: name.to_string(),
        label,
        description,
        rates: Rates {
            hurdle: zero,
            finance: zero,
            reinvestment: zero,
        },
        components: super::lines::split_by_sign(&flows),
        flows,
        narrow_terminals: Vec::new(),
    }
}

/// The deal's header (`deal.name`, `currency`, `as_of`) and the fields of `deal`,
/// whose other keys (`known`) a version may read. The header is `None` when one of
/// its fields is missing or wrong (each reported).
#[allow(clippy::type_complexity)]
fn deal_header<'n>(
    ctx: &mut Validator<'_, '_>,
    top: &Fields<'n>,
    known: &[&str],
) -> Option<(Option<(String, String, NaiveDate)>, Fields<'n>)> {
    let d = ctx.required(
        top,
        "",
        "deal",
        "{ name: ..., currency: EUR, as_of: 2027-01-01 }",
    )?;
    let f = ctx.fields(d, "deal", known)?;
    let name = ctx.required(&f, "deal", "name", "Ridgeline quarry extension");
    let currency = ctx.required(&f, "deal", "currency", "EUR");
    let as_of = ctx.required(&f, "deal", "as_of", "2027-01-01");
    let name = name.and_then(|n| ctx.text(n, "deal.name", Text::Line(MAX_NAME_CHARS)));
    let name = match name {
        Some(n) if n.trim().is_empty() => {
            let at = f.get("name").map_or(f.position, |n| n.position);
            ctx.report("missing-field", "`deal.name` is empty", "deal.name", at);
            None
        }
        other => other.map(|n| n.trim().to_string()),
    };
    let currency = currency.and_then(|n| {
        let text = ctx.scalar(n, "deal.currency", "a currency code such as EUR")?;
        values::check_currency(text)
            .map_err(|e| ctx.value_error("bad-currency", e, "deal.currency", n.position))
            .ok()
    });
    let as_of = as_of.and_then(|n| ctx.date(n, "deal.as_of"));
    let header = match (name, currency, as_of) {
        (Some(n), Some(c), Some(a)) => Some((n, c, a)),
        _ => None,
    };
    Some((header, f))
}

/// The rates as a deal states them: the hurdle, and the finance and reinvestment
/// rates when given (they default to the hurdle).
#[derive(Debug, Clone, Copy)]
struct StatedRates {
    hurdle: Decimal,
    finance: Option<Decimal>,
    reinvestment: Option<Decimal>,
}

impl StatedRates {
    fn resolved(self) -> Rates {
        Rates {
            hurdle: self.hurdle,
            finance: self.finance.unwrap_or(self.hurdle),
            reinvestment: self.reinvestment.unwrap_or(self.hurdle),
        }
    }
}

/// Reads the required `hurdle_rate` and the optional `finance_rate` and
/// `reinvestment_rate` of the top level; `None` when one is wrong (reported).
fn stated_rates(ctx: &mut Validator<'_, '_>, top: &Fields<'_>, path: &str) -> Option<StatedRates> {
    let hurdle = ctx
        .required(top, path, "hurdle_rate", "9%")
        .and_then(|n| ctx.rate(n, &join(path, "hurdle_rate")));
    let finance = top
        .get("finance_rate")
        .map(|n| ctx.rate(n, &join(path, "finance_rate")));
    let reinvest = top
        .get("reinvestment_rate")
        .map(|n| ctx.rate(n, &join(path, "reinvestment_rate")));
    Some(StatedRates {
        hurdle: hurdle?,
        finance: finance.map_or(Some(None), |r| r.map(Some))?,
        reinvestment: reinvest.map_or(Some(None), |r| r.map(Some))?,
    })
}

/// Reads the entries of `scenarios` in file order, calling `read` with (name, key
/// node, value node) for each that may be read, after reporting too many scenarios,
/// names that are not text, too long, reserved or repeated, and scenarios that change
/// nothing (`fields` lists what they may change). `read` returns false to stop.
fn each_scenario<'n>(
    ctx: &mut Validator<'_, '_>,
    s: &'n Node,
    fields: &str,
    mut read: impl FnMut(&mut Validator<'_, '_>, &'n str, &'n Node, &'n Node) -> bool,
) {
    match &s.value {
        Value::Mapping(entries) if entries.len() > MAX_SCENARIOS => {
            ctx.hint(
                "too-many-scenarios",
                format!(
                    "`scenarios` holds {} scenarios; at most {MAX_SCENARIOS} are accepted",
                    values::grouped(entries.len() as u64)
                ),
                "scenarios",
                s.position,
                "keep the scenarios the committee needs, and analyse the others in files of their own",
            );
        }
        Value::Mapping(entries) => {
            let mut seen: Vec<&str> = Vec::new();
            for (k, v) in entries {
                let Some(name) = k.scalar() else {
                    ctx.wrong_type(k, "scenarios", "a scenario name");
                    continue;
                };
                let path = format!("scenarios.{name}");
                if let Some((message, hint)) =
                    text_problem(name, "a scenario name", Text::Line(MAX_NAME_CHARS))
                {
                    let code = if message.contains("characters") {
                        "text-too-long"
                    } else {
                        "control-character"
                    };
                    ctx.hint(code, message, "scenarios", k.position, hint);
                    continue;
                }
                if name == "base" || name.trim().is_empty() {
                    ctx.hint(
                        "reserved-name",
                        format!("a scenario cannot be called `{name}`"),
                        &path,
                        k.position,
                        "`base` is the deal's own flows; choose another name",
                    );
                    continue;
                }
                if seen.contains(&name) {
                    ctx.hint(
                        "duplicate-key",
                        format!("scenario `{name}` is given more than once"),
                        &path,
                        k.position,
                        "give each scenario a name of its own",
                    );
                    continue;
                }
                seen.push(name);
                if v.is_null() {
                    ctx.hint(
                        "wrong-type",
                        format!("scenario `{name}` changes nothing"),
                        &path,
                        v.position,
                        format!("give at least one of {fields}"),
                    );
                    continue;
                }
                if !read(ctx, name, k, v) {
                    break;
                }
            }
        }
        _ => ctx.wrong_type(s, "scenarios", "a mapping from scenario names to changes"),
    }
}

impl Validator<'_, '_> {
    /// Reports the flows over the base case and the scenarios up to `name` passing
    /// [`MAX_TOTAL_FLOWS`]; true while they do not.
    fn total_flows(&mut self, total: usize, name: &str, path: &str, at: Position) -> bool {
        if total <= MAX_TOTAL_FLOWS {
            return true;
        }
        self.hint(
            "too-many-flows",
            format!(
                "the base case and the scenarios up to `{name}` hold more than {} flows in all",
                values::grouped(MAX_TOTAL_FLOWS as u64)
            ),
            path,
            at,
            "aggregate the flows to a coarser period, or keep fewer scenarios",
        );
        false
    }
}

/// Longest `deal.id`, in characters.
const MAX_ID_CHARS: usize = 64;

/// `deal.id`: the deal's stable name for its archive folder: letters (of any script)
/// and digits, with `-`, `_` or `.` between them, at most 64 characters.
fn deal_id(ctx: &mut Validator<'_, '_>, node: &Node) -> Option<String> {
    let text = ctx.text(node, "deal.id", Text::Line(MAX_ID_CHARS))?;
    let id = text.trim();
    let plain = |c: char| c.is_alphanumeric() || matches!(c, '-' | '_' | '.');
    let ends = id.chars().next().is_some_and(char::is_alphanumeric)
        && id.chars().last().is_some_and(char::is_alphanumeric);
    if ends && id.chars().all(plain) {
        return Some(id.to_string());
    }
    ctx.hint(
        "bad-id",
        format!("`deal.id` `{id}` is not a plain name"),
        "deal.id",
        node.position,
        "use letters (of any script) and digits, with `-`, `_` or `.` between them, such as `north-quay-2027`",
    );
    None
}

fn memo(ctx: &mut Validator<'_, '_>, node: &Node) -> Option<Memo> {
    let f = ctx.fields(node, "memo", MEMO)?;
    let recommendation = f
        .get("recommendation")
        .and_then(|n| ctx.text(n, "memo.recommendation", Text::Block));
    let summary = f
        .get("summary")
        .and_then(|n| ctx.text(n, "memo.summary", Text::Block));
    let risks = f
        .get("risks")
        .map_or_else(Vec::new, |n| ctx.text_list(n, "memo.risks"));
    let mut sections = Vec::new();
    if let Some(n) = f.get("sections") {
        match &n.value {
            Value::Sequence(items) if !ctx.few_items(items.len(), "memo.sections", n.position) => {}
            Value::Sequence(items) => {
                for (i, item) in items.iter().enumerate() {
                    let path = format!("memo.sections[{i}]");
                    let Some(sf) = ctx.fields(item, &path, SECTION) else {
                        continue;
                    };
                    let title = ctx.required(&sf, &path, "title", "Market");
                    let text = ctx.required(&sf, &path, "text", "...");
                    let title = title.and_then(|n| {
                        ctx.text(n, &join(&path, "title"), Text::Line(MAX_NAME_CHARS))
                    });
                    let text = text.and_then(|n| ctx.text(n, &join(&path, "text"), Text::Block));
                    if let (Some(title), Some(text)) = (title, text) {
                        sections.push(MemoSection { title, text });
                    }
                }
            }
            _ => ctx.wrong_type(n, "memo.sections", "a list of { title, text } sections"),
        }
    }
    let total: usize = [&recommendation, &summary]
        .into_iter()
        .flatten()
        .chain(&risks)
        .chain(sections.iter().flat_map(|s| [&s.title, &s.text]))
        .map(|t| t.chars().count())
        .sum();
    if total > MAX_MEMO_CHARS {
        ctx.beyond(
            "text-too-long",
            ("the memo's text is ", " characters long in all"),
            (total, MAX_MEMO_CHARS),
            "memo",
            node.position,
            "a committee memo is read in one sitting: shorten the narrative, or attach the detail as a document of its own",
        );
        return None;
    }
    Some(Memo {
        recommendation,
        summary,
        risks,
        sections,
    })
}

fn signoff(ctx: &mut Validator<'_, '_>, node: &Node) -> Option<Signoff> {
    let f = ctx.fields(node, "signoff", SIGNOFF)?;
    let prepared_by = f
        .get("prepared_by")
        .and_then(|n| ctx.text(n, "signoff.prepared_by", Text::Line(MAX_NAME_CHARS)));
    let reviewed_by = f
        .get("reviewed_by")
        .and_then(|n| ctx.text(n, "signoff.reviewed_by", Text::Line(MAX_NAME_CHARS)));
    let date = f.get("date").map(|n| ctx.date(n, "signoff.date"));
    let decision = match f.get("decision") {
        Some(n) => match ctx.choice(n, "signoff.decision", DECISIONS)? {
            "approved" => SignoffDecision::Approved,
            "declined" => SignoffDecision::Declined,
            "deferred" => SignoffDecision::Deferred,
            _ => SignoffDecision::Pending,
        },
        None => SignoffDecision::Pending,
    };
    Some(Signoff {
        prepared_by,
        reviewed_by,
        decision,
        date: date.flatten(),
    })
}
