//! The memo's view model and its Typst markup: every figure and word comes from
//! [`crate::present`] in print style, every string from the deal file is escaped here,
//! and the minijinja templates (built in, or a house style that replaces some of them)
//! turn the view into markup.
//!
//! User text never becomes markup: the template environment escapes every value it
//! prints unless the value was produced by one of our own filters, which build Typst
//! string literals or escaped text themselves.

use crate::chart::{ChartKind, ScenarioCharts};
use crate::diag::Diagnostic;
use crate::engine::{Analysis, BalanceRow, FlowRow, Root, ScenarioAnalysis};
use crate::model::{Deal, SignoffDecision};
use crate::present::{self, summary, words, Style};
use chrono::{Datelike, NaiveDateTime, Timelike};
use minijinja::{Environment, Error as TemplateError, ErrorKind, UndefinedBehavior, Value};
use serde::Serialize;
use std::collections::BTreeMap;

/// Figures in the memo are written for print.
const PRINT: Style = Style::Print;

mod sensitivity;

/// The name of the main template, the one rendered first.
pub(crate) const MAIN_TEMPLATE: &str = "memo.typ.j2";

/// The built-in house style: (template name, source), embedded in the binary.
pub const BUILTIN_TEMPLATES: &[(&str, &str)] = &[
    (MAIN_TEMPLATE, include_str!("../templates/memo.typ.j2")),
    ("style.typ.j2", include_str!("../templates/style.typ.j2")),
    (
        "scenario.typ.j2",
        include_str!("../templates/scenario.typ.j2"),
    ),
    ("checks.typ.j2", include_str!("../templates/checks.typ.j2")),
    ("lines.typ.j2", include_str!("../templates/lines.typ.j2")),
    (
        "sensitivity.typ.j2",
        include_str!("../templates/sensitivity.typ.j2"),
    ),
];

/// Balance paths longer than this are shown as their first and last rows.
pub(crate) const LONG_PATH_ROWS: usize = 30;
/// Rows shown from the start of a long balance path.
const HEAD_ROWS: usize = 8;
/// Rows shown from the end of a long balance path.
const TAIL_ROWS: usize = 5;
/// At most this many more rows of a long path: changes of sign and new notes.
const MAX_TURN_ROWS: usize = 16;

/// Where the attached deal file's bytes are found by the typesetter.
pub(crate) const SOURCE_FILE: &str = "/candor/source";

/// Where the typesetter finds the bytes of the deal's `i`-th companion (CSV) file.
pub(crate) fn companion_file(i: usize) -> String {
    format!("/candor/companion-{i}")
}

/// The SHA-256 of a memo's inputs together: the deal file's own SHA-256 when it reads
/// no other file; else the SHA-256 of the lines `sha256sum` prints for the deal file
/// and then each companion file (`<hex>  <name>`, each ending in a line feed), so that
/// `sha256sum deal.yaml flows.csv | sha256sum` gives the same value.
pub(crate) fn input_hash(
    source_name: &str,
    source_sha256: &str,
    companions: &[(String, String)],
) -> String {
    if companions.is_empty() {
        return source_sha256.to_string();
    }
    let mut lines = format!("{source_sha256}  {source_name}\n");
    for (name, sha) in companions {
        lines.push_str(&format!("{sha}  {name}\n"));
    }
    use sha2::Digest as _;
    sha2::Sha256::digest(lines.as_bytes())
        .iter()
        .map(|b| format!("{b:02x}"))
        .collect()
}

/// Everything the memo needs besides the analysis and the deal.
#[derive(Debug, Clone)]
pub struct MemoContext {
    /// The deal file's name as the PDF attachment will carry it.
    pub source_name: String,
    /// SHA-256 of the exact deal file bytes, lower-case hex.
    pub source_sha256: String,
    /// The other files the deal file reads (CSV flows), attached to the PDF and covered
    /// by the input hash, as (path relative to the deal file, SHA-256), in the order
    /// read; the bytes are found at [`companion_file`].
    pub companions: Vec<(String, String)>,
    /// The document's creation time (UTC), fixed so that output is reproducible.
    pub created: NaiveDateTime,
    /// The charts drawn for each scenario, in the analysis' order.
    pub charts: Vec<ScenarioCharts>,
    /// Templates that replace built-in ones, by name (a house style).
    pub templates: BTreeMap<String, String>,
    /// What changed since the previous filed version of this deal; `None` outside the
    /// archive and for a deal's first version (the memo then has no such section).
    pub changes: Option<ChangesSince>,
    /// The archive version this memo is filed as (`003`); `None` outside the archive.
    pub filed_version: Option<String>,
}

/// The memo's account of what changed since the previous filed version of the deal.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct ChangesSince {
    /// The previous version's folder name (`001`, ...).
    pub version: String,
    /// One plain sentence per change, inputs first, then results; empty when the two
    /// versions differ only in bytes that change no field (comments, layout).
    pub lines: Vec<String>,
}

/// The companion files as attachments: plain attachment names, made distinct from the
/// deal file's and from each other by a number in front where they would meet.
fn companion_views(ctx: &MemoContext) -> Vec<CompanionView> {
    let mut taken = vec![attachment_name(&ctx.source_name)];
    ctx.companions
        .iter()
        .enumerate()
        .map(|(i, (name, hash))| {
            let mut attached = attachment_name(name);
            if taken.contains(&attached) {
                attached = format!("{}-{attached}", i + 1);
            }
            taken.push(attached.clone());
            CompanionView {
                name: name.clone(),
                attachment_name: attached,
                file: companion_file(i),
                hash: hash.clone(),
            }
        })
        .collect()
}

/// The first 12 hex digits of a SHA-256: short enough for a footer, long enough to
/// tell inputs apart in practice.
pub(crate) fn short_hash(sha256_hex: &str) -> String {
    sha256_hex.chars().take(12).collect()
}

/// Renders the memo's Typst markup.
pub fn render(analysis: &Analysis, deal: &Deal, ctx: &MemoContext) -> Result<String, Diagnostic> {
    render_view(&build_view(analysis, deal, ctx), ctx)
}

/// The memo template (built in, or the house style's) applied to a view.
fn render_view(view: &View, ctx: &MemoContext) -> Result<String, Diagnostic> {
    let env = environment(&ctx.templates)?;
    let template = env
        .get_template(MAIN_TEMPLATE)
        .map_err(template_diagnostic)?;
    render_bounded(&template, Value::from_serialize(view))
}

/// Steps (minijinja's fuel: about one per instruction) one rendering of the memo may
/// take. The built-in templates take under 4,000 for the example deals and do not loop
/// over flows (a deal of 100,000 flows takes under 1,000), so a house style has room
/// for a thousand times that; a loop that never ends, or nested loops over
/// `range(100000)`, runs out in about a second.
pub(crate) const TEMPLATE_FUEL: u64 = 10_000_000;

/// The largest markup a rendering may write, in bytes (64 MiB).
pub(crate) const MAX_MARKUP_BYTES: usize = 64 * 1024 * 1024;

/// Markup written up to a size bound, so that a house style cannot fill memory.
struct Bounded {
    bytes: Vec<u8>,
    full: bool,
}

impl std::io::Write for Bounded {
    fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
        if self.bytes.len() + buf.len() > MAX_MARKUP_BYTES {
            self.full = true;
            return Err(std::io::Error::other("the markup is too long"));
        }
        self.bytes.extend_from_slice(buf);
        Ok(buf.len())
    }

    fn flush(&mut self) -> std::io::Result<()> {
        Ok(())
    }
}

/// Renders a template within [`TEMPLATE_FUEL`] steps and [`MAX_MARKUP_BYTES`] bytes.
fn render_bounded(
    template: &minijinja::Template<'_, '_>,
    view: Value,
) -> Result<String, Diagnostic> {
    let mut out = Bounded {
        bytes: Vec::new(),
        full: false,
    };
    match template.render_captured_to(view, &mut out) {
        Ok(_) => String::from_utf8(out.bytes).map_err(|_| {
            Diagnostic::error("template", "the memo template wrote markup that is not UTF-8")
                .in_file(template.name().to_string())
        }),
        Err(_) if out.full => Err(Diagnostic::error(
            "template",
            format!(
                "the template `{}` wrote more than {} MiB of markup",
                template.name(),
                MAX_MARKUP_BYTES / (1024 * 1024)
            ),
        )
        .in_file(template.name().to_string())
        .with_hint("a house style should print each value a few times at most; look for a loop that never ends")),
        Err(e) => Err(template_diagnostic(e)),
    }
}

/// Renders the memo's content without its document-level settings, for a document
/// that gathers several memos (`candor pack`). Every file the markup reads (charts,
/// the attached deal file) is looked up under `prefix` (such as `/deals/1`), so that
/// the memos of one document do not share names.
pub fn render_body(
    analysis: &Analysis,
    deal: &Deal,
    ctx: &MemoContext,
    prefix: &str,
) -> Result<String, Diagnostic> {
    let mut view = build_view(analysis, deal, ctx);
    view.body_only = true;
    view.anchor = format!(
        "m{}",
        prefix
            .chars()
            .filter(char::is_ascii_alphanumeric)
            .collect::<String>()
    );
    view.source_file = format!("{prefix}{}", view.source_file);
    for c in &mut view.companions {
        c.file = format!("{prefix}{}", c.file);
    }
    for s in &mut view.scenarios {
        for path in [
            &mut s.charts.npv_profile,
            &mut s.charts.balance_paths,
            &mut s.charts.cash_flows,
        ]
        .into_iter()
        .flatten()
        {
            *path = format!("{prefix}{path}");
        }
        if let Some(v) = &mut s.sensitivity {
            for path in v
                .count_maps
                .iter_mut()
                .filter_map(|c| c.chart.as_mut())
                .chain(v.tornado_chart.as_mut())
            {
                *path = format!("{prefix}{path}");
            }
        }
    }
    render_view(&view, ctx)
}

/// Renders a template of candor's own that is not part of the house style (such as the
/// cover of a pack) with the memo's escaping rules: every printed value is escaped for
/// Typst markup, and `|str` makes a string literal.
pub(crate) fn render_template(
    name: &str,
    source: &str,
    view: &impl Serialize,
) -> Result<String, Diagnostic> {
    let mut env = environment(&BTreeMap::new())?;
    env.add_template_owned(name.to_string(), source.to_string())
        .map_err(template_diagnostic)?;
    let template = env.get_template(name).map_err(template_diagnostic)?;
    render_bounded(&template, Value::from_serialize(view))
}

fn template_diagnostic(err: TemplateError) -> Diagnostic {
    // An error inside an included template comes wrapped ("could not render include"):
    // the innermost error that names a template says where and why.
    let mut inner = &err;
    let mut next: Option<&(dyn std::error::Error + 'static)> = std::error::Error::source(&err);
    while let Some(e) = next {
        if let Some(t) = e.downcast_ref::<TemplateError>() {
            if t.name().is_some() {
                inner = t;
            }
        }
        next = e.source();
    }
    let name = inner.name().map(str::to_string);
    let mut message = match (&name, inner.line()) {
        (Some(n), Some(l)) => format!("the template `{n}` failed at line {l}: "),
        (Some(n), None) => format!("the template `{n}` failed: "),
        _ => "the memo template failed: ".to_string(),
    };
    if inner.kind() == ErrorKind::OutOfFuel {
        message.push_str(&format!(
            "it took more than {TEMPLATE_FUEL} steps (a loop that never ends, or far too much work)"
        ));
    } else {
        message.push_str(&inner.kind().to_string());
        if let Some(detail) = inner.detail() {
            message.push_str(": ");
            message.push_str(detail);
        }
    }
    if !std::ptr::eq(inner, &err) {
        if let (Some(outer), Some(line)) = (err.name(), err.line()) {
            message.push_str(&format!(" (included from `{outer}` line {line})"));
        }
    }
    let mut diag = Diagnostic::error("template", message);
    if let Some(name) = name {
        diag = diag.in_file(name);
        if let Some(line) = inner.line() {
            diag = diag.at(line, 1);
        }
    }
    diag
}

/// The template environment: built-in templates, then the overrides, printing every
/// value escaped for Typst markup.
fn environment(overrides: &BTreeMap<String, String>) -> Result<Environment<'static>, Diagnostic> {
    let mut env = Environment::new();
    env.set_fuel(Some(TEMPLATE_FUEL));
    env.set_undefined_behavior(UndefinedBehavior::Strict);
    env.set_trim_blocks(true);
    env.set_lstrip_blocks(true);
    env.set_keep_trailing_newline(true);
    for (name, source) in BUILTIN_TEMPLATES {
        if !overrides.contains_key(*name) {
            env.add_template_owned(name.to_string(), source.to_string())
                .map_err(template_diagnostic)?;
        }
    }
    for (name, source) in overrides {
        env.add_template_owned(name.clone(), source.clone())
            .map_err(template_diagnostic)?;
    }
    env.set_formatter(|out, _state, value| {
        if value.is_undefined() || value.is_none() {
            return Err(TemplateError::new(
                ErrorKind::InvalidOperation,
                "a missing value would be printed; test it with `if` first",
            ));
        }
        let text = if value.is_safe() {
            value.to_string()
        } else if let Some(s) = value.as_str() {
            escape_markup(s)
        } else {
            escape_markup(&value.to_string())
        };
        out.write_str(&text)
            .map_err(|_| TemplateError::new(ErrorKind::WriteFailure, "cannot write markup"))
    });
    // `str`: a Typst string literal, for arguments in code (`title: {{ x|str }}`).
    env.add_filter("str", |s: String| Value::from_safe_string(typst_string(&s)));
    Ok(env)
}

/// Escapes text for Typst markup so that it prints literally: every character with a
/// meaning in markup gets a backslash (Typst accepts an escape before any character),
/// line breaks become spaces and control characters are dropped.
pub fn escape_markup(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + text.len() / 4);
    for c in text.chars() {
        match c {
            '\\' | '#' | '*' | '_' | '`' | '$' | '<' | '>' | '@' | '[' | ']' | '=' | '-' | '+'
            | '/' | '~' | '"' | '\'' | '.' | ':' => {
                out.push('\\');
                out.push(c);
            }
            '\n' | '\r' | '\t' => out.push(' '),
            c if c.is_control() => {}
            c => out.push(c),
        }
    }
    out
}

/// A Typst string literal holding `text` exactly (for code arguments such as a title).
pub(crate) fn typst_string(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + 2);
    out.push('"');
    for c in text.chars() {
        match c {
            '\\' => out.push_str("\\\\"),
            '"' => out.push_str("\\\""),
            '\n' => out.push_str("\\n"),
            '\r' => out.push_str("\\r"),
            '\t' => out.push_str("\\t"),
            c if c.is_control() => out.push_str(&format!("\\u{{{:x}}}", c as u32)),
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

fn paragraphs(text: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut current = String::new();
    for line in text.lines() {
        if line.trim().is_empty() {
            if !current.is_empty() {
                out.push(std::mem::take(&mut current));
            }
        } else {
            if !current.is_empty() {
                current.push(' ');
            }
            current.push_str(line.trim());
        }
    }
    if !current.is_empty() {
        out.push(current);
    }
    out
}

/// A file name the attachment can carry: letters, digits, dot, dash and underscore.
pub(crate) fn attachment_name(name: &str) -> String {
    let cleaned: String = name
        .chars()
        .map(|c| {
            if c.is_ascii_alphanumeric() || matches!(c, '.' | '-' | '_') {
                c
            } else {
                '_'
            }
        })
        .collect();
    let cleaned = cleaned.trim_start_matches('.').to_string();
    if cleaned.is_empty() {
        "deal.yaml".to_string()
    } else {
        cleaned
    }
}

/// A companion file as the memo attaches and names it.
#[derive(Debug, Serialize)]
struct CompanionView {
    name: String,
    attachment_name: String,
    file: String,
    hash: String,
}

#[derive(Debug, Serialize)]
struct View {
    title: String,
    currency: String,
    as_of: String,
    /// How the amounts were entered (deal format version 2).
    amounts: Option<String>,
    /// The deal's basis (deal format version 2).
    basis: Option<String>,
    draft: bool,
    status: String,
    hash: String,
    hash_short: String,
    source_name: String,
    attachment_name: String,
    source_file: String,
    companions: Vec<CompanionView>,
    input_hash: String,
    input_hash_short: String,
    created: CreatedView,
    author: Option<String>,
    recommendation: Vec<String>,
    summary: Vec<String>,
    risks: Vec<String>,
    sections: Vec<SectionView>,
    signoff: SignoffView,
    has_cautions: bool,
    scenarios: Vec<ScenarioView>,
    version: String,
    changes: Option<ChangesSince>,
    /// The archive version this memo is filed as, when filed.
    filed_version: Option<String>,
    /// The deal's basis and units as the title block states them; today the currency
    /// alone (a deal file that states units or a basis extends it).
    units_text: String,
    /// The unit of the rounded amounts on the decision page (`GBP million`).
    summary_unit: String,
    /// The committee's decision in words, with its date.
    committee: String,
    /// Notes that the recommendation or the committee's decision goes against the
    /// figures (first page; they never block anything).
    against: Vec<NoteView>,
    /// The largest swings and nearest break-evens of a sensitivity analysis, when one
    /// was run (empty otherwise; the decision page then leaves them out).
    sensitivity_headlines: Vec<String>,
    /// Each caution code raised in any scenario, once, with its plain sentence.
    caution_summary: Vec<CautionSummaryView>,
    /// A prefix that keeps this memo's cross-reference labels apart from another
    /// memo's in the same document.
    anchor: String,
    /// True when the memo is part of a larger document, which owns the document-level
    /// settings.
    body_only: bool,
}

/// A creation time split into the fields of Typst's `datetime(...)`.
#[derive(Debug, Serialize)]
pub(crate) struct CreatedView {
    year: i32,
    month: u32,
    day: u32,
    hour: u32,
    minute: u32,
    second: u32,
}

impl CreatedView {
    /// The fields of `t`.
    pub fn of(t: NaiveDateTime) -> Self {
        Self {
            year: t.year(),
            month: t.month(),
            day: t.day(),
            hour: t.hour(),
            minute: t.minute(),
            second: t.second(),
        }
    }
}

#[derive(Debug, Serialize)]
struct NoteView {
    title: String,
    text: String,
}

#[derive(Debug, Serialize)]
struct CautionSummaryView {
    title: String,
    headline: String,
    /// The scenarios that raise it, by label.
    scenarios: String,
    /// The label of the first full text (`{anchor}-c-{scenario}-{n}`).
    target: String,
}

#[derive(Debug, Serialize)]
struct SectionView {
    title: String,
    paragraphs: Vec<String>,
}

#[derive(Debug, Serialize)]
struct SignoffView {
    prepared_by: Option<String>,
    reviewed_by: Option<String>,
    decision: String,
    date: Option<String>,
}

#[derive(Debug, Serialize)]
struct ScenarioView {
    index: usize,
    name: String,
    label: String,
    description: String,
    hurdle: String,
    finance: String,
    reinvestment: String,
    irr_count: u32,
    irr_upper_bound: u32,
    certified: bool,
    method: String,
    irr_summary: String,
    roots: Vec<RootView>,
    unresolved: Vec<String>,
    complex: Option<ComplexView>,
    npv: String,
    npv_with_code: String,
    decision: String,
    mirr: Option<String>,
    roic: Option<String>,
    money_multiple: Option<String>,
    profitability_index: Option<String>,
    payback_simple: Option<String>,
    payback_discounted: Option<String>,
    payback_turns_negative: bool,
    inflows: String,
    outflows: String,
    net: String,
    horizon: String,
    flow_count: usize,
    dated: bool,
    cautions: Vec<CautionView>,
    charts: ChartPaths,
    profile_range: Option<String>,
    roots_outside: Vec<String>,
    /// Decision-page figures, rounded to the deal's scale where they are amounts.
    npv_summary: String,
    npv_rule: String,
    irr_set: String,
    hurdle_band: String,
    peak_exposure: String,
    peak_exposure_full: String,
    payback: String,
    payback_discounted_words: String,
    payback_method: String,
    /// True when the simple payback is reached (its method is then stated).
    payback_reached: bool,
    valuation: String,
    /// The flow table: every flow with its note and its balance at each IRR; long
    /// series keep their first and last rows, every change of sign and every note.
    flow_rows: Vec<FlowTableRow>,
    flow_hidden: usize,
    has_notes: bool,
    balance_heads: Vec<String>,
    /// The definition of each balance kind the IRRs show, once.
    kind_definitions: Vec<String>,
    /// True when the flows are the base case's (only rates changed): the flow table
    /// is then the base case's and is not repeated.
    same_flows_as_base: bool,
    /// The deal's lines in this scenario (version 2; empty otherwise). A scenario after
    /// the base case keeps only the lines whose totals differ from the base case's.
    lines: Vec<LineView>,
    /// How many lines a scenario after the base case leaves as they are in the base case.
    lines_unchanged: usize,
    /// Peak exposure in words (version 2).
    exposure: Option<String>,
    /// Committed outflows (version 2).
    committed: Option<String>,
    /// The sensitivity (`templates/sensitivity.typ.j2`).
    sensitivity: Option<sensitivity::SensitivityView>,
}

#[derive(Debug, Serialize)]
struct FlowTableRow {
    when: String,
    flow: String,
    note: String,
    balances: Vec<String>,
    /// Rows left out just before this one.
    gap_before: usize,
}

/// One line of a scenario, for its table.
#[derive(Debug, Serialize, PartialEq)]
struct LineView {
    label: String,
    note: Option<String>,
    count: usize,
    inflows: String,
    outflows: String,
    net: String,
}

#[derive(Debug, Serialize)]
struct ChartPaths {
    npv_profile: Option<String>,
    balance_paths: Option<String>,
    cash_flows: Option<String>,
}

#[derive(Debug, Serialize)]
struct ComplexView {
    real: String,
    imaginary: String,
    stance: String,
    decision: String,
}

#[derive(Debug, Serialize)]
struct CautionView {
    code: String,
    title: String,
    text: String,
}

#[derive(Debug, Serialize)]
struct RootView {
    number: usize,
    rate: String,
    periodic_rate: Option<String>,
    multiplicity: String,
    interval: String,
    balance_kind: String,
    /// The balance kind in two words (`mixed balance`); its definition is printed once
    /// under the table.
    kind: String,
    stance: String,
    decision: String,
    extreme: bool,
    head: Vec<BalanceRowView>,
    tail: Vec<BalanceRowView>,
    hidden: usize,
    total_rows: usize,
}

#[derive(Debug, Clone, Serialize)]
struct BalanceRowView {
    when: String,
    flow: String,
    balance: String,
}

fn when(flow: Option<&FlowRow>, years: f64) -> String {
    match flow {
        Some(FlowRow { date: Some(d), .. }) => d.clone(),
        Some(FlowRow {
            period: Some(p), ..
        }) => format!("period {p}"),
        _ => format!("{years:.2} y"),
    }
}

fn balance_rows(rows: &[BalanceRow], flows: &[FlowRow]) -> Vec<BalanceRowView> {
    rows.iter()
        .enumerate()
        .map(|(i, r)| {
            // The engine gives one balance row per flow; fall back to the time when not.
            let flow = flows.get(i).filter(|_| rows.len() == flows.len());
            BalanceRowView {
                when: when(flow, r.years),
                flow: present::money(r.flow, PRINT),
                balance: present::money(r.balance, PRINT),
            }
        })
        .collect()
}

/// A certified interval as the memo shows it: the lower end rounded down and the upper
/// end up at `decimals` places of a percent, so that the interval shown still contains
/// the root (rounding each end to nearest could cut the root off). A lower end just
/// above -100% gets more places rather than round onto -100%.
fn root_view(
    number: usize,
    root: &Root,
    decimals: usize,
    flows: &[FlowRow],
    period: Option<&str>,
) -> RootView {
    let all = balance_rows(&root.balance_path, flows);
    let total_rows = all.len();
    let (head, tail, hidden) = if total_rows > LONG_PATH_ROWS {
        let tail = all[total_rows - TAIL_ROWS..].to_vec();
        let head = all[..HEAD_ROWS].to_vec();
        (head, tail, total_rows - HEAD_ROWS - TAIL_ROWS)
    } else {
        (all, Vec::new(), 0)
    };
    let interval_decimals = decimals + 3;
    RootView {
        number,
        rate: present::root_rate(root, decimals, PRINT),
        periodic_rate: period.and_then(|word| {
            root.periodic_rate
                .map(|r| format!("{} {word}", present::percent(r, decimals + 2, PRINT)))
        }),
        multiplicity: words::multiplicity(root.multiplicity),
        interval: match root.interval {
            Some([lo, hi]) => present::rate_interval(lo, hi, interval_decimals, PRINT),
            None => format!(
                "1 + rate between 10^{:.6} and 10^{:.6}",
                root.log10_interval[0], root.log10_interval[1]
            ),
        },
        balance_kind: words::balance_kind_explained(root.balance_kind).to_string(),
        kind: words::balance_kind(root.balance_kind).to_string(),
        stance: words::stance_explained(root.stance).to_string(),
        decision: words::decision(root.decision).to_string(),
        extreme: root.extreme,
        head,
        tail,
        hidden,
        total_rows,
    }
}

/// The rows of a scenario's flow table: all of them for a short series; for a long one
/// the first [`HEAD_ROWS`] and last [`TAIL_ROWS`], every flow whose sign differs from
/// the flow before, and every flow with a note (at most [`LONG_PATH_ROWS`] of those).
fn flow_table_rows(flows: &[FlowRow]) -> Vec<usize> {
    let n = flows.len();
    if n <= LONG_PATH_ROWS {
        return (0..n).collect();
    }
    let mut keep: std::collections::BTreeSet<usize> = (0..HEAD_ROWS).collect();
    keep.extend(n - TAIL_ROWS..n);
    let mut extra = 0;
    for i in 1..n {
        let turns = flows[i].amount.is_sign_negative() != flows[i - 1].amount.is_sign_negative();
        // A note repeated from the flow before (a line's note on each of its flows)
        // adds nothing; a new note is kept.
        let new_note = flows[i].note.is_some() && flows[i].note != flows[i - 1].note;
        if (turns || new_note) && !keep.contains(&i) && extra < MAX_TURN_ROWS {
            keep.insert(i);
            extra += 1;
        }
    }
    keep.into_iter().collect()
}

fn flow_table(s: &ScenarioAnalysis, roots: &[&Root]) -> (Vec<FlowTableRow>, usize) {
    let rows = flow_table_rows(&s.flows);
    let mut out = Vec::with_capacity(rows.len());
    let mut last: Option<usize> = None;
    for &i in &rows {
        let f = &s.flows[i];
        let gap_before = match last {
            Some(l) => i - l - 1,
            None => i,
        };
        last = Some(i);
        out.push(FlowTableRow {
            when: when(Some(f), f.years),
            flow: present::money(f.amount, PRINT),
            note: f.note.clone().unwrap_or_default(),
            balances: roots
                .iter()
                .map(|r| {
                    r.balance_path
                        .get(i)
                        .filter(|_| r.balance_path.len() == s.flows.len())
                        .map(|b| present::money(b.balance, PRINT))
                        .unwrap_or_default()
                })
                .collect(),
            gap_before,
        });
    }
    let shown = out.len();
    (out, s.flows.len() - shown)
}

/// True when a scenario's flows, and so its IRRs and balances, are the base case's.
fn same_flows(s: &ScenarioAnalysis, base: &ScenarioAnalysis) -> bool {
    s.flows.len() == base.flows.len()
        && s.flows
            .iter()
            .zip(&base.flows)
            .all(|(a, b)| a.amount == b.amount && a.period == b.period && a.date == b.date)
        && s.irr.roots.len() == base.irr.roots.len()
}

fn scenario_view(
    index: usize,
    s: &ScenarioAnalysis,
    deal: &Deal,
    currency: &str,
    charts: Option<&ScenarioCharts>,
    scale: summary::Scale,
    same_flows_as_base: bool,
) -> ScenarioView {
    let decimals = present::scenario_rate_decimals(s);
    let period = words::per_period(s.periods_per_year);
    let roots: Vec<RootView> = s
        .irr
        .roots
        .iter()
        .enumerate()
        .map(|(i, r)| root_view(i + 1, r, decimals, &s.flows, period))
        .collect();
    let irr_summary = if s.irr.roots.is_empty() {
        "none".to_string()
    } else {
        s.irr
            .roots
            .iter()
            .map(|r| {
                let mut t = present::root_rate(r, decimals, PRINT);
                if r.multiplicity > 1 {
                    t.push_str(&format!(" ({})", words::multiplicity(r.multiplicity)));
                }
                t
            })
            .collect::<Vec<_>>()
            .join(", ")
    };
    let model = deal.scenarios.iter().find(|d| d.name == s.name);
    let description = model.map(|d| d.description.clone()).unwrap_or_default();
    let label = words::scenario_title(model.and_then(|d| d.label.as_deref()), &s.name);
    // Balance columns for the IRRs whose paths the table can show.
    let table_roots: Vec<&Root> = s
        .irr
        .roots
        .iter()
        .filter(|r| !r.extreme && r.balance_path.len() == s.flows.len())
        .collect();
    let balance_heads = table_roots
        .iter()
        .map(|r| format!("at {}", present::root_rate(r, decimals, PRINT)))
        .collect();
    // A scenario that changes only rates has the base case's flows, and so its flow
    // table and balances: it points there instead of repeating them.
    let (flow_rows, flow_hidden) = if same_flows_as_base {
        (Vec::new(), 0)
    } else {
        flow_table(s, &table_roots)
    };
    let mut kinds: Vec<crate::engine::BalanceKind> = Vec::new();
    for r in &s.irr.roots {
        if !kinds.contains(&r.balance_kind) {
            kinds.push(r.balance_kind);
        }
    }
    let kind_definitions = kinds
        .into_iter()
        .map(|k| words::balance_kind_explained(k).to_string())
        .collect();
    let periodic_start = match deal.clock {
        crate::model::Clock::Periodic { start, .. } => start,
        _ => None,
    };
    let peak = summary::peak_exposure(&s.flows);
    let range = charts.and_then(|c| c.profile_range);
    let roots_outside = match range {
        Some((lo, hi)) => s
            .irr
            .roots
            .iter()
            .filter(|r| r.annual_rate.is_none_or(|a| a < lo || a > hi))
            .map(|r| present::root_rate(r, decimals, PRINT))
            .collect(),
        None => Vec::new(),
    };
    let path_of = |kind: ChartKind| {
        charts
            .filter(|c| c.get(kind).is_some())
            .map(|_| crate::chart::file_name(index, kind))
    };
    ScenarioView {
        index,
        name: s.name.clone(),
        label,
        description,
        hurdle: present::percent(s.hurdle_rate, 2, PRINT),
        finance: present::percent(s.finance_rate, 2, PRINT),
        reinvestment: present::percent(s.reinvestment_rate, 2, PRINT),
        irr_count: s.irr.count,
        irr_upper_bound: s.irr.upper_bound,
        certified: s.irr.certified,
        method: present::certificate::sentence(&s.irr.certificate),
        irr_summary,
        roots,
        unresolved: s
            .irr
            .unresolved
            .iter()
            .map(|[a, b]| {
                format!(
                    "{} to {}",
                    present::percent(*a, 2, PRINT),
                    present::percent(*b, 2, PRINT)
                )
            })
            .collect(),
        complex: s.irr.complex_reading.as_ref().map(|c| ComplexView {
            real: present::percent(c.real_rate, 2, PRINT),
            imaginary: present::percent(c.imaginary_rate, 2, PRINT),
            stance: words::stance_explained(c.stance).to_string(),
            decision: words::decision(c.decision).to_string(),
        }),
        npv: present::scenario_npv(s, PRINT),
        npv_with_code: present::scenario_npv_in(s, currency, PRINT),
        decision: words::decision(s.decision).to_string(),
        mirr: s.mirr.map(|r| present::percent(r, 2, PRINT)),
        roic: s
            .return_on_invested_capital
            .map(|r| present::percent(r, 2, PRINT)),
        money_multiple: s
            .money_multiple
            .map(|m| format!("{}\u{00d7}", present::decimal_ratio(m, PRINT))),
        profitability_index: s.profitability_index.map(|v| present::ratio(v, 2, PRINT)),
        payback_simple: s.payback.simple_years.map(present::years),
        payback_discounted: s.payback.discounted_years.map(present::years),
        payback_turns_negative: s.payback.turns_negative_again,
        inflows: present::money(s.totals.inflows, PRINT),
        outflows: present::money(s.totals.outflows, PRINT),
        net: present::money(s.totals.net, PRINT),
        horizon: present::years(s.totals.horizon_years),
        flow_count: s.flows.len(),
        dated: s.periods_per_year.is_none(),
        cautions: present::caution_text_list(s, currency)
            .into_iter()
            .map(|c| CautionView {
                code: c.code.to_string(),
                title: c.title.to_string(),
                text: present::print_minus(&c.text),
            })
            .collect(),
        charts: ChartPaths {
            npv_profile: path_of(ChartKind::NpvProfile),
            balance_paths: path_of(ChartKind::BalancePaths),
            cash_flows: path_of(ChartKind::CashFlows),
        },
        profile_range: range.map(|(lo, hi)| {
            format!(
                "{} to {}",
                present::percent(lo, 0, PRINT),
                present::percent(hi, 0, PRINT)
            )
        }),
        roots_outside,
        npv_summary: match s.npv_at_hurdle {
            Some(v) => summary::scaled(v, scale, PRINT),
            None => present::scenario_npv(s, PRINT),
        },
        npv_rule: summary::npv_rule(s.decision).to_string(),
        irr_set: summary::irr_set(s, PRINT),
        hurdle_band: summary::hurdle_band(s, PRINT),
        peak_exposure: match peak {
            Some((v, i)) => format!(
                "{} ({})",
                summary::scaled(v.abs(), scale, PRINT),
                summary::when(&s.flows[i])
            ),
            None => "none".to_string(),
        },
        peak_exposure_full: match peak {
            Some((v, i)) => format!(
                "{currency} {}, after the flow of {}",
                present::money(v.abs(), PRINT),
                summary::when(&s.flows[i])
            ),
            None => "none: the running total of the flows is never below zero".to_string(),
        },
        payback: summary::payback_words(s, false),
        payback_discounted_words: summary::payback_words(s, true),
        payback_method: summary::payback_method(s.payback.method).to_string(),
        payback_reached: s.payback.status == crate::engine::PaybackStatus::Reached,
        valuation: summary::valuation_point(s, periodic_start),
        has_notes: s.flows.iter().any(|f| f.note.is_some()),
        flow_rows,
        flow_hidden,
        balance_heads,
        kind_definitions,
        same_flows_as_base,
        lines: s
            .lines
            .iter()
            .flatten()
            .map(|l| LineView {
                label: l.label.clone(),
                note: l.note.clone(),
                count: l.flows.len(),
                inflows: present::money(l.inflows, PRINT),
                outflows: present::money(l.outflows, PRINT),
                net: present::money(l.net, PRINT),
            })
            .collect(),
        lines_unchanged: 0,
        exposure: s
            .peak_exposure
            .as_ref()
            .map(|e| present::lines::exposure_words(e, currency, PRINT)),
        committed: s.committed_outflows.map(|c| present::money(c, PRINT)),
        sensitivity: sensitivity::view(index, s, currency, charts),
    }
}

fn build_view(analysis: &Analysis, deal: &Deal, ctx: &MemoContext) -> View {
    let decision = deal.signoff.as_ref().map(|s| s.decision);
    let draft = decision != Some(SignoffDecision::Approved);
    let status = words::signoff_status(decision);
    let decision_text = words::signoff(decision);
    let scale = summary::Scale::of(analysis);
    let mut scenarios: Vec<ScenarioView> = analysis
        .scenarios
        .iter()
        .enumerate()
        .map(|(i, s)| {
            let same_flows = i > 0 && same_flows(s, &analysis.scenarios[0]);
            scenario_view(
                i,
                s,
                deal,
                &analysis.currency,
                ctx.charts.get(i),
                scale,
                same_flows,
            )
        })
        .collect();
    // The lines table is the base case's in full; a later scenario shows only the
    // lines it changes.
    if let Some((base, rest)) = scenarios.split_first_mut() {
        for s in rest {
            let before = s.lines.len();
            s.lines.retain(|l| !base.lines.contains(l));
            s.lines_unchanged = before - s.lines.len();
        }
    }
    // The base case's sensitivity findings lead the decision page.
    let sensitivity_headlines = scenarios
        .first()
        .and_then(|s| s.sensitivity.as_ref())
        .map(|v| v.headlines.clone())
        .unwrap_or_default();
    let anchor = "m".to_string();
    // Each caution code once, in the catalogue's order, with the scenarios raising it.
    let caution_summary = crate::engine::cautions::CODES
        .iter()
        .filter_map(|code| {
            let raised: Vec<&ScenarioView> = scenarios
                .iter()
                .filter(|s| s.cautions.iter().any(|c| c.code == *code))
                .collect();
            let first = raised.first()?;
            let n = first.cautions.iter().position(|c| c.code == *code)?;
            Some(CautionSummaryView {
                title: first.cautions[n].title.clone(),
                headline: summary::caution_headline(code).to_string(),
                scenarios: summary::join_and(
                    &raised.iter().map(|s| s.label.clone()).collect::<Vec<_>>(),
                ),
                target: format!("c{}n{}", first.index, n),
            })
        })
        .collect();
    let against = summary::against_figures(
        deal.memo.recommendation.as_deref(),
        decision,
        analysis,
        PRINT,
    )
    .into_iter()
    .map(|(title, text)| NoteView { title, text })
    .collect();
    let signoff_date = deal
        .signoff
        .as_ref()
        .and_then(|s| s.date)
        .map(present::date_long);
    let c = ctx.created;
    View {
        title: deal.name.clone(),
        currency: deal.currency.clone(),
        as_of: present::date_long(deal.as_of),
        amounts: analysis
            .units
            .map(|u| present::lines::units_words(u, &deal.currency)),
        basis: analysis.basis.as_ref().map(present::lines::basis_words),
        draft,
        status: status.to_string(),
        hash: ctx.source_sha256.clone(),
        hash_short: short_hash(&ctx.source_sha256),
        source_name: ctx.source_name.clone(),
        attachment_name: attachment_name(&ctx.source_name),
        source_file: SOURCE_FILE.to_string(),
        companions: companion_views(ctx),
        input_hash: input_hash(&ctx.source_name, &ctx.source_sha256, &ctx.companions),
        input_hash_short: short_hash(&input_hash(
            &ctx.source_name,
            &ctx.source_sha256,
            &ctx.companions,
        )),
        created: CreatedView::of(c),
        author: deal.signoff.as_ref().and_then(|s| s.prepared_by.clone()),
        recommendation: deal
            .memo
            .recommendation
            .as_deref()
            .map(paragraphs)
            .unwrap_or_default(),
        summary: deal
            .memo
            .summary
            .as_deref()
            .map(paragraphs)
            .unwrap_or_default(),
        risks: deal.memo.risks.clone(),
        sections: deal
            .memo
            .sections
            .iter()
            .map(|s| SectionView {
                title: s.title.clone(),
                paragraphs: paragraphs(&s.text),
            })
            .collect(),
        signoff: SignoffView {
            prepared_by: deal.signoff.as_ref().and_then(|s| s.prepared_by.clone()),
            reviewed_by: deal.signoff.as_ref().and_then(|s| s.reviewed_by.clone()),
            decision: decision_text.to_string(),
            date: signoff_date.clone(),
        },
        has_cautions: scenarios.iter().any(|s| !s.cautions.is_empty()),
        scenarios,
        version: crate::release::version(),
        changes: ctx.changes.clone(),
        filed_version: ctx.filed_version.clone(),
        units_text: deal.currency.clone(),
        summary_unit: scale.unit(&deal.currency),
        committee: match signoff_date {
            Some(d) => format!("{decision_text}, {d}"),
            None => decision_text.to_string(),
        },
        against,
        sensitivity_headlines,
        caution_summary,
        anchor,
        body_only: false,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Every character with a meaning in Typst markup (Typst reference, "Syntax":
    /// markup mode, plus the shorthands `~`, `--`, `---`, `...`, `-?` and smart quotes).
    const MARKUP_CHARS: &[char] = &[
        '\\', '#', '*', '_', '`', '$', '<', '>', '@', '[', ']', '=', '-', '+', '/', '~', '"', '\'',
        '.', ':',
    ];

    #[test]
    fn every_markup_character_is_escaped() {
        for &c in MARKUP_CHARS {
            let escaped = escape_markup(&c.to_string());
            assert_eq!(escaped, format!("\\{c}"), "character {c:?}");
        }
        assert_eq!(escape_markup("plain words 123"), "plain words 123");
    }

    #[test]
    fn line_starts_and_breaks_cannot_start_markup() {
        // A heading, list, enumeration and term marker only count at a line start;
        // escaping them and turning breaks into spaces leaves no line start at all.
        let text = "a\n= heading\n- item\n+ enum\n/ term: x\n1. first";
        let escaped = escape_markup(text);
        assert!(!escaped.contains('\n'));
        assert_eq!(
            escaped,
            "a \\= heading \\- item \\+ enum \\/ term\\: x 1\\. first"
        );
    }

    #[test]
    fn the_hostile_name_parses_as_plain_text() {
        // Typst's own parser must see only text, spaces and escapes: no code, no
        // strong/emphasis, no math, no label, no reference, no content block.
        let name = "#read(\"/etc/hostname\") *x* $y$ <z> @w ][";
        let root = typst::syntax::parse(&escape_markup(name));
        assert!(root.errors_and_warnings().0.is_empty(), "{root:?}");
        for child in root.children() {
            use typst::syntax::SyntaxKind as K;
            assert!(
                matches!(child.kind(), K::Text | K::Space | K::Escape),
                "unexpected {:?} in {root:?}",
                child.kind()
            );
        }
    }

    #[test]
    fn string_literals_round_trip() {
        let text = "quote \" backslash \\ newline \n tab \t end";
        let lit = typst_string(text);
        let root = typst::syntax::parse_code(&lit);
        assert!(root.errors_and_warnings().0.is_empty(), "{lit}");
        assert_eq!(lit, "\"quote \\\" backslash \\\\ newline \\n tab \\t end\"");
    }

    #[test]
    fn narrative_splits_into_paragraphs() {
        assert_eq!(
            paragraphs("one\ntwo\n\n\nthree\n"),
            vec!["one two".to_string(), "three".to_string()]
        );
    }

    #[test]
    fn attachment_names_are_plain() {
        assert_eq!(
            attachment_name("ridgeline quarry.yaml"),
            "ridgeline_quarry.yaml"
        );
        assert_eq!(attachment_name("../../x.yaml"), "_.._x.yaml");
        assert_eq!(attachment_name(""), "deal.yaml");
    }
}
