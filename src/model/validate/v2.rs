//! Deal files of format version 2 (docs/design.md, "Deal file, format version 2"):
//! named cash-flow lines on one timing, units and basis, a horizon, and scenarios that
//! change any assumption by name. Lines are resolved here, per scenario, into the
//! net [`Flows`] the engine takes and the [`Component`]s that sum to them.

use super::super::lines::{
    Basis, Component, GenerateError, GrowthStep, NarrowTerminal, Prices, Stream, Tax, Terminal,
    Units,
};
use super::*;
use crate::model::FlowPoint;

const TOP: &[&str] = &[
    "sensitivity",
    "candor",
    "deal",
    "hurdle_rate",
    "finance_rate",
    "reinvestment_rate",
    "timing",
    "horizon",
    "lines",
    "scenarios",
    "memo",
    "signoff",
    // Not a field of version 2: read only to say so plainly (see `build`).
    "cash_flows",
];
const DEAL: &[&str] = &["name", "currency", "as_of", "id", "units", "basis"];
const BASIS: &[&str] = &["prices", "tax", "rates"];
const TIMING: &[&str] = &["every", "start", "day_count"];
/// The fields of a line; the forms of its amounts are [`FORMS`].
const LINE: &[&str] = &[
    "label", "note", "amounts", "from", "dated", "csv", "column", "stream", "terminal",
];
/// The ways a line gives its amounts: exactly one per line.
const FORMS: &[&str] = &["amounts", "dated", "csv", "stream", "terminal"];
const STREAM: &[&str] = &[
    "first",
    "start",
    "periods",
    "end",
    "growth",
    "growth_per",
    "ramp",
    "every",
];
const TERMINAL: &[&str] = &["at", "next_flow", "growth", "discount"];
const SCENARIO: &[&str] = &[
    "label",
    "description",
    "hurdle_rate",
    "finance_rate",
    "reinvestment_rate",
    "factors",
    "shift",
    "change",
    "add",
    "drop",
    "inflows_factor",
    "outflows_factor",
    "shift_inflows",
    "extend_horizon",
];
const SCENARIO_CHANGES: &str = "`hurdle_rate`, `factors`, `shift`, `change`, `add`, `drop`, `inflows_factor`, `outflows_factor`, `shift_inflows`";

/// A time on the deal's timing: a period number or a date.
type At = Result<i64, NaiveDate>;

/// One field of a line as written: its name (`stream.growth` for a generator's
/// field), its value node and its field path. A scenario's `change` overlays its own
/// entries on the base line's, so each value keeps the place it was written.
#[derive(Clone)]
struct Entry<'n> {
    name: String,
    node: &'n Node,
    path: String,
}

/// A line as written, before its amounts are read.
#[derive(Clone)]
struct LineDef<'n> {
    key: String,
    /// Where the line is defined (`lines.sales`, `scenarios.x.add.grant`).
    path: String,
    at: Position,
    entries: Vec<Entry<'n>>,
}

impl<'n> LineDef<'n> {
    fn get(&self, name: &str) -> Option<&Entry<'n>> {
        self.entries.iter().find(|e| e.name == name)
    }

    fn form(&self) -> Option<&'static str> {
        FORMS.iter().copied().find(|f| self.get(f).is_some())
    }
}

/// One line's flows, resolved: amounts in currency units at times on the timing.
struct LineFlows {
    key: String,
    label: String,
    note: Option<String>,
    path: String,
    at: Position,
    flows: Vec<RawFlow<At>>,
    terminal: Option<(Terminal, Decimal)>,
    fields: Vec<(String, String)>,
}

/// Where a scenario moves a line: the line's key, and the position and field path
/// of the change that moves it.
type Move = (String, Position, String);

/// What every line of a deal shares: the timing, the unit of amounts, the horizon.
struct Setting {
    clock: Clock,
    units: Units,
    /// Line amounts that may still be read over the base case and every scenario
    /// ([`MAX_TOTAL_FLOWS`]): lines are resolved again for each scenario, so a short
    /// file of long streams and many scenarios is bounded in memory and time.
    budget: std::cell::Cell<usize>,
}

pub(super) fn build(ctx: &mut Validator<'_, '_>, root: &Node) -> Option<Deal> {
    let top = ctx.fields(root, "", TOP)?;
    if let Some(k) = top.key("cash_flows") {
        ctx.hint(
            "unknown-field",
            "`cash_flows` is a field of format version 1, not of version 2",
            "cash_flows",
            k.position,
            "in version 2 give `timing` and named `lines` (see `candor new`), or write `candor: 1` to keep `cash_flows`",
        );
    }
    let (header, deal_fields) = match deal_header(ctx, &top, DEAL) {
        Some((h, f)) => (h, Some(f)),
        None => (None, None),
    };
    let id = deal_fields
        .as_ref()
        .and_then(|f| f.get("id"))
        .and_then(|n| super::deal_id(ctx, n));
    let units = match deal_fields.as_ref().and_then(|f| f.get("units")) {
        Some(n) => ctx
            .choice(n, "deal.units", &Units::WORDS)
            .and_then(Units::from_word),
        None => Some(Units::Ones),
    };
    let basis = match deal_fields.as_ref().and_then(|f| f.get("basis")) {
        Some(n) => basis(ctx, n).map(Some),
        None => Some(None),
    };
    let rates = stated_rates(ctx, &top, "");
    let clock = ctx
        .required(&top, "", "timing", "{ every: year, start: 2027-01-01 }")
        .and_then(|n| timing(ctx, n));
    let lines_node = ctx.required(
        &top,
        "",
        "lines",
        "{ sales: { label: Sales, amounts: [0, 600, 600] } }",
    );
    let defs = lines_node.map_or_else(Vec::new, |n| line_defs(ctx, n, "lines"));
    let (Some(clock), Some(units)) = (clock, units) else {
        // Lines cannot be placed without their timing or unit; the narrative can
        // still be checked, so that every problem is reported at once.
        let _ = narrative(ctx, &top);
        return None;
    };
    let setting = Setting {
        clock,
        units,
        budget: std::cell::Cell::new(MAX_TOTAL_FLOWS),
    };
    let horizon = top
        .get("horizon")
        .map(|n| time(ctx, &setting.clock, n, "horizon"));

    let mut scenarios = Vec::new();
    let base_lines = resolve_lines(ctx, &setting, &defs);
    let horizon_at = match horizon {
        Some(Some(h)) => Some((h, true)),
        Some(None) => None,
        None => base_lines
            .as_ref()
            .and_then(|l| last_time(l))
            .map(|h| (h, false)),
    };
    if let (Some(lines), Some(rates)) = (&base_lines, rates) {
        if let Some(h) = horizon_at {
            ctx.within_horizon(lines, h, None);
        }
        if let Some(s) = assemble(
            ctx,
            &setting,
            lines,
            "lines",
            lines_node.map_or(top.position, |n| n.position),
        ) {
            scenarios.push(Scenario {
                name: "base".to_string(),
                label: None,
                description: String::new(),
                rates: rates.resolved(),
                ..s
            });
        }
    }
    if let Some(s) = top.get("scenarios") {
        let mut total: usize = scenarios.iter().map(|s| s.flows.points.len()).sum();
        each_scenario(ctx, s, SCENARIO_CHANGES, |ctx, name, k, v| {
            if setting.budget.get() == 0 {
                // Reported once, at the line that used the last of it.
                return false;
            }
            let path = format!("scenarios.{name}");
            let Some(sc) = scenario(ctx, &setting, name, v, &defs, rates, horizon_at) else {
                return true;
            };
            total = total.saturating_add(sc.flows.points.len());
            if !ctx.total_flows(total, name, &path, k.position) {
                return false;
            }
            scenarios.push(sc);
            true
        });
    }

    let (memo, signoff) = narrative(ctx, &top)?;
    let keys: Vec<&str> = defs.iter().map(|d| d.key.as_str()).collect();
    let sensitivity = sensitivity_settings(ctx, &top, &keys)?;
    let (name, currency, as_of) = header?;
    base_lines?;
    Some(Deal {
        version: 2,
        units: setting.units,
        basis: basis?,
        name,
        id,
        currency,
        as_of,
        rates: rates?.resolved(),
        clock: setting.clock,
        scenarios,
        memo: memo?,
        signoff,
        sensitivity,
    })
}

fn basis(ctx: &mut Validator<'_, '_>, node: &Node) -> Option<Basis> {
    let f = ctx.fields(node, "deal.basis", BASIS)?;
    let mut word = |key: &str, words: &[&'static str]| -> Option<Option<usize>> {
        match f.get(key) {
            Some(n) => {
                let w = ctx.choice(n, &format!("deal.basis.{key}"), words)?;
                Some(words.iter().position(|x| *x == w))
            }
            None => Some(None),
        }
    };
    let prices = word("prices", &Prices::WORDS);
    let tax = word("tax", &Tax::WORDS);
    let rates = word("rates", &Prices::WORDS);
    let price_of = |i: usize| [Prices::Nominal, Prices::Real][i];
    Some(Basis {
        prices: prices?.map(price_of),
        tax: tax?.map(|i| [Tax::Before, Tax::After][i]),
        rates: rates?.map(price_of),
    })
}

fn timing(ctx: &mut Validator<'_, '_>, node: &Node) -> Option<Clock> {
    let f = ctx.fields(node, "timing", TIMING)?;
    match (f.get("every"), f.get("day_count")) {
        (Some(_), Some(d)) => {
            ctx.hint(
                "flows-conflict",
                "`timing` gives both `every` and `day_count`",
                "timing.day_count",
                d.position,
                "use `every` (and `start`) for one amount a period, or `day_count` for dated amounts",
            );
            None
        }
        (Some(e), None) => {
            let every = ctx.frequency(e, "timing.every");
            let start = f.get("start").map(|n| ctx.date(n, "timing.start"));
            Some(Clock::Periodic {
                every: every?,
                start: start.map_or(Some(None), |s| s.map(Some))?,
            })
        }
        (None, Some(d)) => {
            if let Some(k) = f.key("start") {
                ctx.hint(
                    "flows-conflict",
                    "`timing.start` is for periodic timing; dated amounts carry their own dates",
                    "timing.start",
                    k.position,
                    "remove `start`, or time the deal with `every`",
                );
                return None;
            }
            Some(Clock::Dated {
                day_count: ctx.day_count(d, "timing.day_count")?,
            })
        }
        (None, None) => {
            ctx.hint(
                "missing-field",
                "`timing` says neither `every` nor `day_count`",
                "timing",
                f.position,
                "add `every: year` (one amount a period) or `day_count: act/365f` (dated amounts)",
            );
            None
        }
    }
}

/// A time on the deal's timing: a whole period from 0, or a date.
fn time(ctx: &mut Validator<'_, '_>, clock: &Clock, node: &Node, path: &str) -> Option<At> {
    match clock {
        Clock::Periodic { .. } => period(ctx, node, path).map(Ok),
        Clock::Dated { .. } => ctx.date(node, path).map(Err),
    }
}

fn period(ctx: &mut Validator<'_, '_>, node: &Node, path: &str) -> Option<i64> {
    let n = ctx.integer(node, path)?;
    if n < 0 {
        ctx.hint(
            "number-range",
            format!("`{path}` is a period before period 0"),
            path,
            node.position,
            "periods count from 0, the deal's first period",
        );
        return None;
    }
    Some(n)
}

/// The lines of a `lines` or `add` mapping, in file order.
fn line_defs<'n>(ctx: &mut Validator<'_, '_>, node: &'n Node, path: &str) -> Vec<LineDef<'n>> {
    let Value::Mapping(entries) = &node.value else {
        ctx.wrong_type(node, path, "a mapping from line keys to lines");
        return Vec::new();
    };
    if entries.is_empty() {
        ctx.hint(
            "empty-flows",
            format!("`{path}` holds no lines"),
            path,
            node.position,
            "give at least one line, such as `sales: { amounts: [0, 600, 600] }`",
        );
    }
    let mut out: Vec<LineDef<'n>> = Vec::new();
    for (k, v) in entries {
        let Some(key) = line_key(ctx, k, path) else {
            continue;
        };
        let line_path = join(path, key);
        if out.iter().any(|d| d.key == key) {
            ctx.hint(
                "duplicate-key",
                format!("line `{key}` is given more than once"),
                &line_path,
                k.position,
                "give each line a key of its own",
            );
            continue;
        }
        if let Some(def) = line_def(ctx, key, v, &line_path) {
            out.push(def);
        }
    }
    out
}

/// A line's key: text of at most 64 characters, letters, digits, `_` and `-`.
fn line_key<'n>(ctx: &mut Validator<'_, '_>, k: &'n Node, path: &str) -> Option<&'n str> {
    let Some(key) = k.scalar() else {
        ctx.wrong_type(k, path, "a line key");
        return None;
    };
    let fine = !key.is_empty()
        && key.chars().count() <= 64
        && key
            .chars()
            .all(|c| c.is_alphanumeric() || c == '_' || c == '-');
    if !fine {
        let shown = diag_safe(key);
        ctx.hint(
            "bad-key",
            format!("`{shown}` cannot be a line key"),
            path,
            k.position,
            "a line key is one word of letters, digits, `_` or `-` (at most 64 characters), such as `lifecycle_costs`; put the words for print in `label`",
        );
        return None;
    }
    Some(key)
}

/// A key as it may be quoted in a message: short, on one line.
fn diag_safe(key: &str) -> String {
    let short: String = key.chars().take(64).filter(|c| !c.is_control()).collect();
    if short.len() < key.len() {
        format!("{short}...")
    } else {
        short
    }
}

/// Reads a line's mapping into its entries (a generator's fields as `stream.first`).
fn line_def<'n>(
    ctx: &mut Validator<'_, '_>,
    key: &str,
    node: &'n Node,
    path: &str,
) -> Option<LineDef<'n>> {
    let entries = entries(ctx, node, path, LINE)?;
    Some(LineDef {
        key: key.to_string(),
        path: path.to_string(),
        at: node.position,
        entries,
    })
}

/// The entries of a line's mapping (or of a scenario's change to it).
fn entries<'n>(
    ctx: &mut Validator<'_, '_>,
    node: &'n Node,
    path: &str,
    known: &[&str],
) -> Option<Vec<Entry<'n>>> {
    let f = ctx.fields(node, path, known)?;
    let mut out = Vec::new();
    for (name, _, v) in &f.entries {
        if v.is_null() {
            continue;
        }
        let field = join(path, name);
        let sub = match *name {
            "stream" => Some(STREAM),
            "terminal" => Some(TERMINAL),
            _ => None,
        };
        out.push(Entry {
            name: name.to_string(),
            node: v,
            path: field.clone(),
        });
        if let Some(known) = sub {
            let g = ctx.fields(v, &field, known)?;
            for (sub_name, _, sv) in &g.entries {
                if !sv.is_null() {
                    out.push(Entry {
                        name: format!("{name}.{sub_name}"),
                        node: sv,
                        path: join(&field, sub_name),
                    });
                }
            }
        }
    }
    Some(out)
}

/// Resolves every line; `None` when one of them is wrong (each reported).
fn resolve_lines(
    ctx: &mut Validator<'_, '_>,
    setting: &Setting,
    defs: &[LineDef<'_>],
) -> Option<Vec<LineFlows>> {
    let mut out = Vec::with_capacity(defs.len());
    let mut ok = true;
    for def in defs {
        if setting.budget.get() == 0 {
            ctx.hint(
                "too-many-flows",
                format!(
                    "the lines of the base case and the scenarios up to line `{}` ({}) hold more than {} amounts in all",
                    def.key,
                    def.path,
                    values::grouped(MAX_TOTAL_FLOWS as u64)
                ),
                &def.path,
                def.at,
                "aggregate the amounts to a coarser period, or keep fewer scenarios",
            );
            return None;
        }
        match line_flows(ctx, setting, def) {
            Some(l) => {
                let left = setting.budget.get().saturating_sub(l.flows.len());
                setting.budget.set(left);
                out.push(l);
            }
            None => ok = false,
        }
    }
    (ok && !defs.is_empty()).then_some(out)
}

/// One line's amounts, in currency units, at their times.
fn line_flows(
    ctx: &mut Validator<'_, '_>,
    setting: &Setting,
    def: &LineDef<'_>,
) -> Option<LineFlows> {
    let label = match def.get("label") {
        Some(e) => {
            let t = ctx.text(e.node, &e.path, Text::Line(MAX_NAME_CHARS))?;
            if t.trim().is_empty() {
                ctx.report(
                    "missing-field",
                    format!("`{}` is empty", e.path),
                    &e.path,
                    e.node.position,
                );
                return None;
            }
            t.trim().to_string()
        }
        None => def.key.clone(),
    };
    let note = match def.get("note") {
        Some(e) => Some(ctx.text(e.node, &e.path, Text::Line(MAX_NOTE_CHARS))?),
        None => None,
    };
    let forms: Vec<&Entry<'_>> = FORMS.iter().filter_map(|f| def.get(f)).collect();
    let form = match forms.as_slice() {
        [one] => *one,
        [] => {
            ctx.hint(
                "missing-field",
                format!("line `{}` gives no amounts", def.key),
                &def.path,
                def.at,
                "give one of `amounts` (a list from period `from`), `dated`, `csv` with `column`, `stream` or `terminal`",
            );
            return None;
        }
        [a, b, ..] => {
            ctx.hint(
                "flows-conflict",
                format!(
                    "line `{}` gives its amounts as both `{}` and `{}`",
                    def.key, a.name, b.name
                ),
                &b.path,
                b.node.position,
                "a line gives its amounts once: keep one of them",
            );
            return None;
        }
    };
    for (modifier, owner) in [("from", "amounts"), ("column", "csv")] {
        if let Some(e) = def.get(modifier) {
            if form.name != owner {
                ctx.hint(
                    "unknown-field",
                    format!(
                        "`{}` goes with `{owner}`, which line `{}` does not give",
                        e.path, def.key
                    ),
                    &e.path,
                    e.node.position,
                    format!("remove `{modifier}`, or give the amounts as `{owner}`"),
                );
                return None;
            }
        }
    }
    let scale = setting.units.factor();
    let mut terminal = None;
    let mut flows: Vec<RawFlow<At>> = match form.name.as_str() {
        "amounts" => list(ctx, setting, def, form)?,
        "dated" => {
            if let Clock::Periodic { .. } = setting.clock {
                ctx.hint(
                    "clock-mismatch",
                    format!("line `{}` gives dated amounts but the deal is timed by period", def.key),
                    &form.path,
                    form.node.position,
                    "give the line as `amounts` (one a period), or time the deal with `timing: { day_count: act/365f }`",
                );
                return None;
            }
            let items = ctx.sequence(form.node, &form.path, "a list of dated amounts")?;
            let mut out = Vec::with_capacity(items.len());
            let mut ok = true;
            for (i, n) in items.iter().enumerate() {
                match ctx.dated_flow(n, &format!("{}[{i}]", form.path)) {
                    Some(f) => out.push(RawFlow {
                        at: Err(f.at),
                        amount: f.amount,
                        note: f.note,
                    }),
                    None => ok = false,
                }
            }
            if !ok {
                return None;
            }
            out
        }
        "csv" => csv_line(ctx, setting, def, form)?,
        "stream" => stream(ctx, setting, def)?,
        _ => {
            let (flow, t) = terminal_value(ctx, setting, def)?;
            terminal = Some(t);
            vec![flow]
        }
    };
    if form.name != "stream" && form.name != "terminal" {
        for f in &mut flows {
            match f
                .amount
                .checked_mul(scale)
                .filter(|a| a.abs() <= Decimal::from(crate::limits::MAX_AMOUNT))
            {
                Some(a) => f.amount = a,
                None => {
                    ctx.hint(
                        "number-range",
                        format!(
                            "an amount of line `{}` is beyond 10^15 currency units once in {}",
                            def.key,
                            setting.units.as_str()
                        ),
                        &form.path,
                        form.node.position,
                        "check `deal.units`: amounts are written in that unit",
                    );
                    return None;
                }
            }
        }
    }
    if flows.is_empty() {
        ctx.hint(
            "empty-flows",
            format!("line `{}` holds no amounts", def.key),
            &form.path,
            form.node.position,
            "give the line at least one amount, or drop it",
        );
        return None;
    }
    if flows.len() > MAX_FLOWS {
        ctx.hint(
            "too-many-flows",
            format!(
                "line `{}` holds {} amounts; at most {} are accepted",
                def.key,
                values::grouped(flows.len() as u64),
                values::grouped(MAX_FLOWS as u64)
            ),
            &form.path,
            form.node.position,
            "aggregate the amounts to a coarser period",
        );
        return None;
    }
    Some(LineFlows {
        key: def.key.clone(),
        label,
        note,
        path: def.path.clone(),
        at: def.at,
        flows,
        terminal,
        fields: def
            .entries
            .iter()
            .filter_map(|e| Some((e.name.clone(), field_text(e.node)?)))
            .collect(),
    })
}

/// A field's value as written, for `candor diff`: a scalar's text, or a list of
/// scalars joined with ", " in brackets; `None` for a mapping or a list of mappings
/// (their own fields, or the amounts, say what changed).
fn field_text(node: &Node) -> Option<String> {
    if let Some(s) = node.scalar() {
        return Some(s.trim().to_string());
    }
    match &node.value {
        Value::Sequence(items) if items.len() <= 50 => {
            let parts: Option<Vec<&str>> =
                items.iter().map(|n| n.scalar().map(str::trim)).collect();
            Some(format!("[{}]", parts?.join(", ")))
        }
        _ => None,
    }
}

/// `amounts` (and `from`): one amount a period from period `from` (default 0).
fn list(
    ctx: &mut Validator<'_, '_>,
    setting: &Setting,
    def: &LineDef<'_>,
    form: &Entry<'_>,
) -> Option<Vec<RawFlow<At>>> {
    if let Clock::Dated { .. } = setting.clock {
        ctx.hint(
            "clock-mismatch",
            format!(
                "line `{}` gives a list of amounts but the deal's amounts are dated",
                def.key
            ),
            &form.path,
            form.node.position,
            "give the line as `dated: [{ date: ..., amount: ... }]`, or as a `stream` with `every`",
        );
        return None;
    }
    let from = match def.get("from") {
        Some(e) => period(ctx, e.node, &e.path)?,
        None => 0,
    };
    let items = ctx.sequence(form.node, &form.path, "a list of amounts")?;
    let mut out = Vec::with_capacity(items.len());
    let mut ok = true;
    for (i, n) in items.iter().enumerate() {
        match ctx.decimal(n, &format!("{}[{i}]", form.path)) {
            Some(amount) => out.push(RawFlow {
                at: Ok(from + i as i64),
                amount,
                note: None,
            }),
            None => ok = false,
        }
    }
    ok.then_some(out)
}

/// `csv` and `column`: a column of a CSV file whose first column is `period` or `date`.
fn csv_line(
    ctx: &mut Validator<'_, '_>,
    setting: &Setting,
    def: &LineDef<'_>,
    form: &Entry<'_>,
) -> Option<Vec<RawFlow<At>>> {
    let name = ctx.text(form.node, &form.path, Text::Line(MAX_NOTE_CHARS))?;
    let Some(column) = def.get("column") else {
        ctx.hint(
            "missing-field",
            format!("line `{}` names a CSV file but not its column", def.key),
            &def.path,
            def.at,
            "add `column:` with the name of the column in the file's header row",
        );
        return None;
    };
    let column_name = ctx.text(column.node, &column.path, Text::Line(MAX_NAME_CHARS))?;
    let column_name = column_name.trim().to_ascii_lowercase();
    let text = ctx.companion(&name, &form.path, form.node)?;
    let clock = match setting.clock {
        Clock::Periodic { every, .. } => Err(every),
        Clock::Dated { day_count } => Ok(day_count),
    };
    let read = ctx.csv_series(
        &name,
        &text,
        clock,
        None,
        (&form.path, form.node),
        Some(&column_name),
    )?;
    Some(match read {
        ReadFlows::Periodic { flows, .. } => flows
            .into_iter()
            .map(|f| RawFlow {
                at: Ok(f.at),
                amount: f.amount,
                note: f.note,
            })
            .collect(),
        ReadFlows::Dated { flows, .. } => flows
            .into_iter()
            .map(|f| RawFlow {
                at: Err(f.at),
                amount: f.amount,
                note: f.note,
            })
            .collect(),
    })
}

/// A generated stream (`stream`): `first`, `start`, `periods` or `end`, `growth`,
/// `growth_per`, `ramp`, and `every` on dated timing.
fn stream(
    ctx: &mut Validator<'_, '_>,
    setting: &Setting,
    def: &LineDef<'_>,
) -> Option<Vec<RawFlow<At>>> {
    let path = join(&def.path, "stream");
    let at = def.get("stream").map_or(def.at, |e| e.node.position);
    let field = |name: &str| def.get(&format!("stream.{name}"));
    let missing = |ctx: &mut Validator<'_, '_>, key: &str, example: &str| {
        let f = join(&path, key);
        ctx.hint(
            "missing-field",
            format!("`{f}` is required"),
            &f,
            at,
            format!("add it, for example `{key}: {example}`"),
        );
    };
    let first = match field("first") {
        Some(e) => ctx.decimal(e.node, &e.path),
        None => {
            missing(ctx, "first", "1200");
            None
        }
    };
    let start = match field("start") {
        Some(e) => time(ctx, &setting.clock, e.node, &e.path),
        None => {
            missing(
                ctx,
                "start",
                if matches!(setting.clock, Clock::Dated { .. }) {
                    "2027-03-31"
                } else {
                    "1"
                },
            );
            None
        }
    };
    let growth = match field("growth") {
        Some(e) => ctx.rate(e.node, &e.path),
        None => Some(Decimal::ZERO),
    };
    let step = match field("growth_per") {
        Some(e) => ctx.choice(e.node, &e.path, &GrowthStep::WORDS).map(|w| {
            if w == "period" {
                GrowthStep::Period
            } else {
                GrowthStep::Year
            }
        }),
        None => Some(GrowthStep::Year),
    };
    let every = match (&setting.clock, field("every")) {
        (Clock::Periodic { every, .. }, None) => Some(*every),
        (Clock::Periodic { .. }, Some(e)) => {
            ctx.hint(
                "unknown-field",
                format!(
                    "`{}` is for dated timing; this deal's periods are its own",
                    e.path
                ),
                &e.path,
                e.node.position,
                "remove `every`: the stream has one amount a period of the deal's `timing`",
            );
            None
        }
        (Clock::Dated { .. }, Some(e)) => ctx.frequency(e.node, &e.path),
        (Clock::Dated { .. }, None) => {
            missing(ctx, "every", "month");
            None
        }
    };
    let ramp = match field("ramp") {
        Some(e) => {
            let items = ctx.sequence(e.node, &e.path, "a list of fractions such as [25%, 60%]")?;
            let mut out = Vec::with_capacity(items.len());
            for (i, n) in items.iter().enumerate() {
                let p = format!("{}[{i}]", e.path);
                let text = ctx.scalar(n, &p, "a fraction such as 60% or 0.6")?;
                match values::parse_rate(text) {
                    Ok(r) if !r.is_sign_negative() && r.scale() <= 8 => out.push(r),
                    _ => {
                        ctx.hint("number-range", format!("`{}` is not a ramp fraction", text.trim()), &p, n.position, "write each step of a ramp as a fraction of the full amount from 0%, such as 25% or 0.25");
                        return None;
                    }
                }
            }
            Some(out)
        }
        None => Some(Vec::new()),
    };
    let end = field("end").map(|e| (time(ctx, &setting.clock, e.node, &e.path), e));
    let count = match (field("periods"), &end) {
        (Some(_), Some((_, e))) => {
            ctx.hint(
                "flows-conflict",
                format!("`{path}` gives both `periods` and `end`"),
                &e.path,
                e.node.position,
                "give the number of amounts (`periods`) or the time of the last (`end`), not both",
            );
            None
        }
        (Some(e), None) => {
            let n = ctx.integer(e.node, &e.path)?;
            if !(1..=MAX_FLOWS as i64).contains(&n) {
                ctx.hint(
                    "number-range",
                    format!(
                        "`{}` must be from 1 to {}",
                        e.path,
                        values::grouped(MAX_FLOWS as u64)
                    ),
                    &e.path,
                    e.node.position,
                    "a stream holds at least one amount",
                );
                return None;
            }
            Some(Some(n as u32))
        }
        (None, Some((t, _))) => t.map(|_| None),
        (None, None) => {
            missing(ctx, "periods", "20");
            None
        }
    };
    let (first, start, growth, step, every, ramp, count) =
        (first?, start?, growth?, step?, every?, ramp?, count?);
    // The times of the stream: period start + k, or the k-th period's date from start.
    let time_of = |k: u32| -> Option<At> {
        match start {
            Ok(p) => Some(Ok(p + i64::from(k))),
            Err(d) => period_date(d, every, k)
                .filter(|d| (values::MIN_YEAR..=values::MAX_YEAR).contains(&d.year()))
                .map(Err),
        }
    };
    let count = match (count, end) {
        (Some(n), _) => n,
        (None, Some((Some(last), e))) => {
            // The amounts at or before the end: whole periods from the start.
            let mut n: i64 = 0;
            while n <= MAX_FLOWS as i64 {
                match time_of(n as u32) {
                    Some(t) if later(&t, &last) != std::cmp::Ordering::Greater => n += 1,
                    _ => break,
                }
            }
            if n < 1 || n > MAX_FLOWS as i64 {
                ctx.hint(
                    "number-range",
                    format!(
                        "`{}` leaves the stream with {} amounts; from 1 to {} are accepted",
                        e.path,
                        values::grouped(n as u64),
                        values::grouped(MAX_FLOWS as u64)
                    ),
                    &e.path,
                    e.node.position,
                    "the end is the time of the last amount, at or after `start`",
                );
                return None;
            }
            n as u32
        }
        _ => return None,
    };
    let s = Stream {
        first,
        count,
        growth,
        step,
        periods_per_year: every.per_year(),
        ramp,
    };
    let amounts = match s.amounts(setting.units.factor()) {
        Ok(a) => a,
        Err(_) => {
            ctx.hint(
                "number-range",
                format!("line `{}` grows beyond 10^15 currency units", def.key),
                &path,
                at,
                "check `first`, `growth` and `deal.units`",
            );
            return None;
        }
    };
    let mut out = Vec::with_capacity(amounts.len());
    for (k, amount) in amounts.into_iter().enumerate() {
        let Some(t) = time_of(k as u32) else {
            ctx.hint(
                "bad-date",
                format!("line `{}` runs past the year {}", def.key, values::MAX_YEAR),
                &path,
                at,
                "dates run from 1900 to 2399",
            );
            return None;
        };
        out.push(RawFlow {
            at: t,
            amount,
            note: None,
        });
    }
    Some(out)
}

/// A terminal value (`terminal`): `at`, `next_flow`, `growth`, `discount`.
fn terminal_value(
    ctx: &mut Validator<'_, '_>,
    setting: &Setting,
    def: &LineDef<'_>,
) -> Option<(RawFlow<At>, (Terminal, Decimal))> {
    let path = join(&def.path, "terminal");
    let at = def.get("terminal").map_or(def.at, |e| e.node.position);
    let mut get = |name: &str, example: &str| -> Option<Entry<'_>> {
        let e = def.get(&format!("terminal.{name}")).cloned();
        if e.is_none() {
            let f = join(&path, name);
            ctx.hint(
                "missing-field",
                format!("`{f}` is required"),
                &f,
                at,
                format!("add it, for example `{name}: {example}`"),
            );
        }
        e
    };
    let when = get("at", "24");
    let next = get("next_flow", "1300");
    let growth = get("growth", "2%");
    let discount = get("discount", "9%");
    let when = when.and_then(|e| time(ctx, &setting.clock, e.node, &e.path));
    let next = next.and_then(|e| ctx.decimal(e.node, &e.path));
    let growth_v = growth.as_ref().and_then(|e| ctx.rate(e.node, &e.path));
    let discount_v = discount.as_ref().and_then(|e| ctx.rate(e.node, &e.path));
    let t = Terminal {
        next_flow: next?,
        growth: growth_v?,
        discount: discount_v?,
    };
    let value = match t.value(setting.units.factor()) {
        Ok(v) => v,
        Err(GenerateError::DiscountNotAboveGrowth) => {
            let e = discount?;
            ctx.hint(
                "rate-range",
                format!("the terminal value of line `{}` needs a discount rate above its growth rate", def.key),
                &e.path,
                e.node.position,
                "a flow growing for ever at or above the discount rate has no finite value: lower `growth` or raise `discount`",
            );
            return None;
        }
        Err(GenerateError::TooLarge { .. }) => {
            ctx.hint(
                "number-range",
                format!(
                    "the terminal value of line `{}` is beyond 10^15 currency units",
                    def.key
                ),
                &path,
                at,
                "check `next_flow`, the two rates and `deal.units`",
            );
            return None;
        }
    };
    Some((
        RawFlow {
            at: when?,
            amount: value,
            note: None,
        },
        (t, value),
    ))
}

/// The latest time of any line's non-zero amount.
fn last_time(lines: &[LineFlows]) -> Option<At> {
    lines
        .iter()
        .flat_map(|l| l.flows.iter())
        .filter(|f| !f.amount.is_zero())
        .map(|f| f.at)
        .max_by(later)
}

fn later(a: &At, b: &At) -> std::cmp::Ordering {
    match (a, b) {
        (Ok(x), Ok(y)) => x.cmp(y),
        (Err(x), Err(y)) => x.cmp(y),
        _ => std::cmp::Ordering::Equal,
    }
}

fn time_words(t: &At) -> String {
    match t {
        Ok(p) => format!("period {p}"),
        Err(d) => d.to_string(),
    }
}

impl Validator<'_, '_> {
    /// Reports each line with an amount after the horizon (`horizon`: the time, where it
    /// is stated or found, and whether the deal states it); true when none has.
    /// `scenario` names the scenario whose changes moved the amounts, where each
    /// line's move is written (its `shift`) and where the scenario is.
    fn within_horizon(
        &mut self,
        lines: &[LineFlows],
        (horizon, stated): (At, bool),
        scenario: Option<(&str, &[Move], Position)>,
    ) -> bool {
        let mut ok = true;
        for l in lines {
            let past = l
                .flows
                .iter()
                .filter(|f| !f.amount.is_zero())
                .map(|f| f.at)
                .filter(|t| later(t, &horizon) == std::cmp::Ordering::Greater)
                .max_by(later);
            let Some(past) = past else { continue };
            ok = false;
            let end = if stated {
                "the deal's horizon"
            } else {
                "the base case's last flow"
            };
            match scenario {
                Some((name, moves, pos)) => {
                    let (at, field) = moves
                        .iter()
                        .find(|(k, _, _)| *k == l.key)
                        .map_or((pos, format!("scenarios.{name}")), |(_, at, f)| {
                            (*at, f.clone())
                        });
                    self.hint(
                    "past-horizon",
                    format!(
                        "scenario `{name}` puts an amount of line `{}` at {}, past {end} ({})",
                        l.key,
                        time_words(&past),
                        time_words(&horizon)
                    ),
                    &field,
                    at,
                    "change the scenario, or add `extend_horizon: true` to it if the deal really runs longer",
                    )
                }
                None => self.hint(
                    "past-horizon",
                    format!(
                        "line `{}` has an amount at {}, past the deal's horizon ({})",
                        l.key,
                        time_words(&past),
                        time_words(&horizon)
                    ),
                    &l.path,
                    l.at,
                    "move `horizon` to the deal's real end, or end the line by then",
                ),
            }
        }
        ok
    }
}

/// Net flows and components of resolved lines: the lines' amounts added time by time
/// (notes joined, as in version 1), placed on the timing.
fn assemble(
    ctx: &mut Validator<'_, '_>,
    setting: &Setting,
    lines: &[LineFlows],
    path: &str,
    at: Position,
) -> Option<Scenario> {
    let all = lines.iter().flat_map(|l| l.flows.iter().cloned());
    let (flows, components) = match setting.clock {
        Clock::Periodic { every, start } => {
            let raw: Vec<RawFlow<i64>> = all
                .map(|f| RawFlow {
                    at: f.at.unwrap_or(0),
                    amount: f.amount,
                    note: f.note,
                })
                .collect();
            let series = ReadFlows::Periodic {
                every,
                start,
                flows: raw,
            };
            let flows = ctx.resolve(&series, path, at)?;
            let mut components = Vec::with_capacity(lines.len());
            for l in lines {
                let raw = l
                    .flows
                    .iter()
                    .map(|f| RawFlow {
                        at: f.at.unwrap_or(0),
                        amount: f.amount,
                        note: f.note.clone(),
                    })
                    .collect();
                let series = ReadFlows::Periodic {
                    every,
                    start,
                    flows: raw,
                };
                components.push(component(l, ctx.resolve(&series, path, at)?));
            }
            (flows, components)
        }
        Clock::Dated { day_count } => {
            let mut raw: Vec<RawFlow<NaiveDate>> = all
                .map(|f| RawFlow {
                    at: date_of(f.at),
                    amount: f.amount,
                    note: f.note,
                })
                .collect();
            raw.sort_by_key(|f| f.at);
            let merged = net(raw);
            let first = merged.first()?.at;
            let last = merged.last().map(|f| f.at);
            let flows = Flows::dated(
                merged
                    .into_iter()
                    .map(|f| (f.at, f.amount, f.note))
                    .collect(),
                day_count,
            );
            let components = lines
                .iter()
                .map(|l| {
                    let mut raw: Vec<RawFlow<NaiveDate>> = l
                        .flows
                        .iter()
                        .map(|f| RawFlow {
                            at: date_of(f.at),
                            amount: f.amount,
                            note: f.note.clone(),
                        })
                        .collect();
                    raw.sort_by_key(|f| f.at);
                    let points = net(raw)
                        .into_iter()
                        .map(|f| FlowPoint {
                            offset: day_count.units_in_series(first, f.at, last),
                            amount: f.amount,
                            date: Some(f.at),
                            period: None,
                            note: f.note,
                        })
                        .collect();
                    component(
                        l,
                        Flows {
                            points,
                            units_per_year: day_count.units_per_year(),
                            periods_per_year: None,
                        },
                    )
                })
                .collect();
            (flows, components)
        }
    };
    if flows.points.iter().all(|p| p.amount.is_zero()) {
        ctx.hint(
            "all-zero-flows",
            format!("the lines of `{path}` add up to zero at every time"),
            path,
            at,
            "a deal needs at least one flow that is not zero",
        );
        return None;
    }
    if flows.points.len() > MAX_FLOWS {
        ctx.hint(
            "too-many-flows",
            format!(
                "the lines of `{path}` fall at {} times; at most {} are accepted",
                values::grouped(flows.points.len() as u64),
                values::grouped(MAX_FLOWS as u64)
            ),
            path,
            at,
            "aggregate the amounts to a coarser period",
        );
        return None;
    }
    let zero = Decimal::ZERO;
    Some(Scenario {
        name: String::new(),
        label: None,
        description: String::new(),
        rates: Rates {
            hurdle: zero,
            finance: zero,
            reinvestment: zero,
        },
        flows,
        components,
        narrow_terminals: lines
            .iter()
            .filter_map(|l| {
                let (t, value) = l.terminal?;
                t.spread_is_narrow().then(|| NarrowTerminal {
                    line: l.key.clone(),
                    label: l.label.clone(),
                    discount: t.discount,
                    growth: t.growth,
                    value,
                })
            })
            .collect(),
    })
}

/// The date of a time on dated timing (every time there is a date).
fn date_of(at: At) -> NaiveDate {
    at.err().unwrap_or(NaiveDate::MIN)
}

fn component(l: &LineFlows, flows: Flows) -> Component {
    Component {
        key: l.key.clone(),
        label: l.label.clone(),
        note: l.note.clone(),
        fields: l.fields.clone(),
        flows,
    }
}

/// The keys of a scenario mapping that name lines (`factors`, `shift`, `change`),
/// checked against the lines there are: an unknown key is `unknown-line`, with the
/// nearest key as a hint.
fn keyed<'n>(
    ctx: &mut Validator<'_, '_>,
    node: &'n Node,
    path: &str,
    known: &[&str],
    what: &str,
) -> Vec<(&'n str, &'n Node, String)> {
    let Value::Mapping(entries) = &node.value else {
        ctx.wrong_type(node, path, &format!("a mapping from line keys to {what}"));
        return Vec::new();
    };
    let mut out: Vec<(&'n str, &'n Node, String)> = Vec::new();
    for (k, v) in entries {
        let Some(key) = line_key(ctx, k, path) else {
            continue;
        };
        let field = join(path, key);
        if !known.contains(&key) {
            unknown_line(ctx, key, known, &field, k.position);
            continue;
        }
        if out.iter().any(|(x, _, _)| *x == key) {
            ctx.hint(
                "duplicate-key",
                format!("`{field}` is given more than once"),
                &field,
                k.position,
                "name each line once here",
            );
            continue;
        }
        out.push((key, v, field));
    }
    out
}

/// Applies a scenario's changes to the base lines and resolves it.
#[allow(clippy::too_many_arguments)]
fn scenario(
    ctx: &mut Validator<'_, '_>,
    setting: &Setting,
    name: &str,
    node: &Node,
    base: &[LineDef<'_>],
    rates: Option<StatedRates>,
    horizon: Option<(At, bool)>,
) -> Option<Scenario> {
    let path = format!("scenarios.{name}");
    let f = ctx.fields(node, &path, SCENARIO)?;
    let label = ctx.label(&f, &path);
    let label_ok = !f.has("label") || label.is_some();
    let description = f
        .get("description")
        .map(|n| ctx.text(n, &join(&path, "description"), Text::Line(MAX_NOTE_CHARS)));
    let mut words: Vec<String> = Vec::new();
    // Rates: the scenario's own, else the deal's (finance and reinvestment default to
    // the scenario's hurdle where the deal leaves them to default).
    let hurdle = f
        .get("hurdle_rate")
        .map(|n| ctx.rate(n, &join(&path, "hurdle_rate")));
    let finance = f
        .get("finance_rate")
        .map(|n| ctx.rate(n, &join(&path, "finance_rate")));
    let reinvest = f
        .get("reinvestment_rate")
        .map(|n| ctx.rate(n, &join(&path, "reinvestment_rate")));
    for (key, v, w) in [
        ("hurdle", &hurdle, "hurdle"),
        ("finance", &finance, "finance rate"),
        ("reinvestment", &reinvest, "reinvestment rate"),
    ] {
        let _ = key;
        if let Some(Some(r)) = v {
            words.push(format!("{w} {}%", (r * Decimal::ONE_HUNDRED).normalize()));
        }
    }
    let mut defs: Vec<LineDef<'_>> = base.to_vec();
    let keys: Vec<String> = defs.iter().map(|d| d.key.clone()).collect();
    let known: Vec<&str> = keys.iter().map(String::as_str).collect();
    let mut ok = true;
    // drop
    let mut dropped: Vec<String> = Vec::new();
    if let Some(n) = f.get("drop") {
        let p = join(&path, "drop");
        match &n.value {
            Value::Sequence(items) => {
                for (i, item) in items.iter().enumerate() {
                    let ip = format!("{p}[{i}]");
                    let Some(key) = ctx.scalar(item, &ip, "a line key") else {
                        ok = false;
                        continue;
                    };
                    if !known.contains(&key) {
                        unknown_line(ctx, key, &known, &ip, item.position);
                        ok = false;
                    } else if !dropped.iter().any(|d| d == key) {
                        dropped.push(key.to_string());
                    }
                }
            }
            _ => {
                ctx.wrong_type(n, &p, "a list of line keys");
                ok = false;
            }
        }
    }
    defs.retain(|d| !dropped.contains(&d.key));
    for d in &dropped {
        words.push(format!("{d} dropped"));
    }
    // change
    if let Some(n) = f.get("change") {
        let p = join(&path, "change");
        for (key, v, field) in keyed(ctx, n, &p, &known, "changed fields") {
            if dropped.iter().any(|d| d == key) {
                ctx.hint(
                    "flows-conflict",
                    format!("line `{key}` is both dropped and changed"),
                    &field,
                    v.position,
                    "drop the line or change it, not both",
                );
                ok = false;
                continue;
            }
            let Some(changes) = entries(ctx, v, &field, LINE) else {
                ok = false;
                continue;
            };
            let Some(def) = defs.iter_mut().find(|d| d.key == key) else {
                continue;
            };
            let mut changed: Vec<String> = Vec::new();
            overlay(def, changes, &mut changed);
            words.push(format!("{key}: {} changed", changed.join(", ")));
        }
    }
    // add
    if let Some(n) = f.get("add") {
        let p = join(&path, "add");
        for def in line_defs(ctx, n, &p) {
            if known.contains(&def.key.as_str()) && !dropped.contains(&def.key) {
                ctx.hint("duplicate-key", format!("line `{}` already exists", def.key), &def.path, def.at, "use `change` to change an existing line, or give the new line a key of its own");
                ok = false;
                continue;
            }
            words.push(format!("{} added", def.key));
            defs.retain(|d| d.key != def.key);
            defs.push(def);
        }
    }
    let present: Vec<String> = defs.iter().map(|d| d.key.clone()).collect();
    let present_keys: Vec<&str> = present.iter().map(String::as_str).collect();
    // factors and shifts, on the lines there now are
    let mut factors: Vec<(String, Decimal)> = Vec::new();
    if let Some(n) = f.get("factors") {
        let p = join(&path, "factors");
        for (key, v, field) in keyed(ctx, n, &p, &present_keys, "factors") {
            match ctx.factor(v, &field) {
                Some(x) => {
                    words.push(format!("{key} x {x}"));
                    factors.push((key.to_string(), x));
                }
                None => ok = false,
            }
        }
    }
    let mut shifts: Vec<(String, i64, Position, String)> = Vec::new();
    if let Some(n) = f.get("shift") {
        let p = join(&path, "shift");
        let unit = if matches!(setting.clock, Clock::Dated { .. }) {
            "day"
        } else {
            "period"
        };
        for (key, v, field) in keyed(ctx, n, &p, &present_keys, "shifts") {
            match ctx.integer(v, &field) {
                Some(x) => {
                    if x != 0 {
                        words.push(format!("{key} {}", moved_words(x, unit)));
                    }
                    shifts.push((key.to_string(), x, v.position, field));
                }
                None => ok = false,
            }
        }
    }
    let inflows = f
        .get("inflows_factor")
        .map(|n| ctx.factor(n, &join(&path, "inflows_factor")));
    let outflows = f
        .get("outflows_factor")
        .map(|n| ctx.factor(n, &join(&path, "outflows_factor")));
    let shift_node = f.get("shift_inflows");
    let shift_inflows = shift_node.map(|n| ctx.integer(n, &join(&path, "shift_inflows")));
    let extend = match f.get("extend_horizon") {
        Some(n) => match n.scalar().map(|s| s.trim().to_ascii_lowercase()) {
            Some(s) if s == "true" => true,
            Some(s) if s == "false" => false,
            _ => {
                ctx.wrong_type(n, &join(&path, "extend_horizon"), "`true` or `false`");
                ok = false;
                false
            }
        },
        None => false,
    };
    if [&hurdle, &finance, &reinvest, &inflows, &outflows]
        .iter()
        .any(|v| matches!(v, Some(None)))
        || matches!(shift_inflows, Some(None))
        || matches!(description, Some(None))
        || !label_ok
    {
        ok = false;
    }
    if !ok {
        return None;
    }
    if defs.is_empty() {
        ctx.hint(
            "empty-flows",
            format!("scenario `{name}` drops every line"),
            &path,
            node.position,
            "keep at least one line",
        );
        return None;
    }
    let mut lines = resolve_lines(ctx, setting, &defs)?;
    let one = Decimal::ONE;
    let (inflows, outflows) = (
        inflows.flatten().unwrap_or(one),
        outflows.flatten().unwrap_or(one),
    );
    if inflows != one {
        words.push(format!("inflows x {inflows}"));
    }
    if outflows != one {
        words.push(format!("outflows x {outflows}"));
    }
    let shift_inflows = shift_inflows.flatten().unwrap_or(0);
    if shift_inflows != 0 {
        let unit = if matches!(setting.clock, Clock::Dated { .. }) {
            "day"
        } else {
            "period"
        };
        words.push(shift_words(shift_inflows, unit));
    }
    // Where each line's move is written: its own `shift`, else `shift_inflows`.
    let moves: Vec<Move> = shifts
        .iter()
        .map(|(k, _, at, field)| (k.clone(), *at, field.clone()))
        .chain(lines.iter().filter_map(|l| {
            let n = shift_node?;
            Some((l.key.clone(), n.position, join(&path, "shift_inflows")))
        }))
        .collect();
    for l in &mut lines {
        let factor = factors
            .iter()
            .find(|(k, _)| *k == l.key)
            .map_or(one, |(_, x)| *x);
        let shift = shifts
            .iter()
            .find(|(k, _, _, _)| *k == l.key)
            .map(|(_, s, _, _)| *s);
        for fl in &mut l.flows {
            fl.amount *= factor;
            let mut by = shift.unwrap_or(0);
            if fl.amount > Decimal::ZERO {
                by += shift_inflows;
                fl.amount *= inflows;
            } else {
                fl.amount *= outflows;
            }
            let moved = match fl.at {
                Ok(p) => Some(Ok(p + by)).filter(|t| matches!(t, Ok(p) if *p >= 0)),
                Err(d) => {
                    let m = if by >= 0 {
                        d.checked_add_days(Days::new(by.unsigned_abs()))
                    } else {
                        d.checked_sub_days(Days::new(by.unsigned_abs()))
                    };
                    m.filter(|d| (values::MIN_YEAR..=values::MAX_YEAR).contains(&d.year()))
                        .map(Err)
                }
            };
            let Some(moved) = moved else {
                let (at, field) = moves
                    .iter()
                    .find(|(k, _, _)| *k == l.key)
                    .map_or((node.position, path.clone()), |(_, at, f)| (*at, f.clone()));
                let before = if matches!(setting.clock, Clock::Dated { .. }) {
                    format!(
                        "outside the years {} to {} that candor accepts",
                        values::MIN_YEAR,
                        values::MAX_YEAR
                    )
                } else {
                    "before period 0".to_string()
                };
                ctx.hint(
                    "shift-range",
                    format!("scenario `{name}` moves line `{}` {before}", l.key),
                    &field,
                    at,
                    "shift the line by less, or change its amounts with `change`",
                );
                return None;
            };
            fl.at = moved;
        }
    }
    if let Some(h) = horizon {
        if !extend && !ctx.within_horizon(&lines, h, Some((name, &moves, node.position))) {
            return None;
        }
    }
    let s = assemble(ctx, setting, &lines, &path, node.position)?;
    let stated = rates?;
    let own = StatedRates {
        hurdle: hurdle.flatten().unwrap_or(stated.hurdle),
        finance: finance.flatten().or(stated.finance),
        reinvestment: reinvest.flatten().or(stated.reinvestment),
    };
    let description = description.flatten().unwrap_or_else(|| {
        if words.is_empty() {
            "same lines as the base case".to_string()
        } else {
            words.join("; ")
        }
    });
    Some(Scenario {
        name: name.to_string(),
        label,
        description,
        rates: own.resolved(),
        ..s
    })
}

/// Overlays a scenario's `change` entries on a line: a generator's fields one by one
/// when the line keeps its form, the whole form when the change gives another.
fn overlay<'n>(def: &mut LineDef<'n>, changes: Vec<Entry<'n>>, changed: &mut Vec<String>) {
    let new_form = FORMS
        .iter()
        .copied()
        .find(|f| changes.iter().any(|e| e.name == *f));
    if let Some(form) = new_form {
        let keeps = def.form() == Some(form) && (form == "stream" || form == "terminal");
        if !keeps {
            let prefixes = [
                "amounts", "from", "dated", "csv", "column", "stream", "terminal",
            ];
            def.entries.retain(|e| {
                let head = e.name.split('.').next().unwrap_or("");
                !prefixes.contains(&head)
            });
        }
    }
    for e in changes {
        if (e.name == "stream" || e.name == "terminal") && def.get(&e.name).is_some() {
            continue;
        }
        changed.push(e.name.rsplit('.').next().unwrap_or(&e.name).to_string());
        def.entries.retain(|x| x.name != e.name);
        def.entries.push(e);
    }
}

fn moved_words(shift: i64, unit: &str) -> String {
    let n = shift.unsigned_abs();
    let plural = if n == 1 { "" } else { "s" };
    let way = if shift > 0 { "later" } else { "earlier" };
    format!("{n} {unit}{plural} {way}")
}
