//! What the fuzz targets do with one input, kept in one file so that the regression
//! test (`tests/fuzz_regressions.rs`) replays a saved input through exactly the steps
//! the fuzzer ran. Both include it with `#[path]`; it uses only the library's public API.

use candor::diag::Diagnostic;

/// Separates the deal file from the text handed to it as its CSV companion, so that
/// one input can carry a deal and the flows file it names (`deal.yaml \0 flows.csv`).
pub const COMPANION_SEPARATOR: char = '\0';

/// How far one input got through the deal pipeline, with the sizes that must stay
/// bounded by the size of the input.
#[derive(Debug, Default, Clone, PartialEq, Eq)]
pub struct PipelineOutcome {
    /// The bytes were UTF-8 and the YAML parsed.
    pub parsed: bool,
    /// The deal passed validation.
    pub validated: bool,
    /// Diagnostics reported by parsing or validation (all rendered with source lines).
    pub diagnostics: usize,
    /// Length of the analysis as JSON.
    pub analysis_json: usize,
    /// Scenarios analysed.
    pub scenarios: usize,
    /// Length of the memo's Typst markup, when the templates rendered.
    pub memo_markup: Option<usize>,
    /// Length of the pack body's markup, when it rendered.
    pub body_markup: Option<usize>,
}

/// Arbitrary bytes as a deal file (plus an optional CSV companion after a NUL), through
/// parsing, validation, the engine, the charts and the memo's markup (without the
/// typesetter, which is too slow per input). Every diagnostic is rendered against its
/// source, since printing an error is as much a part of reading bad input as finding it.
pub fn pipeline(data: &[u8]) -> PipelineOutcome {
    let mut out = PipelineOutcome::default();
    let Ok(whole) = std::str::from_utf8(data) else {
        return out;
    };
    let (text, companion) = whole
        .split_once(COMPANION_SEPARATOR)
        .unwrap_or((whole, whole));
    let raw = match candor::input::parse(text) {
        Ok(raw) => raw,
        Err(diags) => {
            out.diagnostics = render_all(&diags, text);
            return out;
        }
    };
    out.parsed = true;
    let mut read = |_: &str| -> Result<String, String> { Ok(companion.to_string()) };
    let deal = match candor::model::validate(&raw, &mut read) {
        Ok(deal) => deal,
        Err(diags) => {
            out.diagnostics = render_all(&diags, text);
            return out;
        }
    };
    out.validated = true;
    let analysis = candor::engine::analyse(&deal);
    out.scenarios = analysis.scenarios.len();
    out.analysis_json = serde_json::to_string(&analysis).map_or(0, |j| j.len());
    // A chart that cannot be drawn is reported as a diagnostic by `candor memo`; the
    // markup is then never made, so the fuzzer stops there too.
    let Ok(charts) = candor::chart::render_all(&analysis) else {
        return out;
    };
    let ctx = candor::report::MemoContext {
        source_name: "deal.yaml".to_string(),
        source_sha256: candor::memo::sha256_hex(text.as_bytes()),
        // The companion text stands for any CSV file the deal reads.
        companions: vec![(
            "flows.csv".to_string(),
            candor::memo::sha256_hex(companion.as_bytes()),
        )],
        // As `candor memo` without SOURCE_DATE_EPOCH: midnight of the deal's as-of date.
        created: candor::pdf::creation_time(deal.as_of, None).unwrap_or_default(),
        charts,
        templates: Default::default(),
        changes: None,
        filed_version: None,
    };
    out.memo_markup = candor::report::render(&analysis, &deal, &ctx)
        .ok()
        .map(|m| m.len());
    out.body_markup = candor::report::render_body(&analysis, &deal, &ctx, "/deals/1")
        .ok()
        .map(|m| m.len());
    out
}

fn render_all(diags: &[Diagnostic], source: &str) -> usize {
    for d in diags {
        let _ = d.render(Some(source));
    }
    diags.len()
}

/// Arbitrary bytes as the input of `candor rates --batch`, through the same stream
/// reader the command uses (blocks, lines split at newlines, a byte-order mark at the
/// start skipped). Returns the output lines.
///
/// Panics (which the fuzzer reports) unless there is exactly one output line per
/// non-blank input line (see [`batch_lines`]), each a JSON object that names its
/// series, as the batch format promises.
pub fn batch(data: &[u8]) -> Vec<String> {
    let mut out = Vec::new();
    candor::screen::screen_stream(&mut &data[..], &mut out)
        .expect("memory never fails to take bytes");
    let text = String::from_utf8(out).expect("the output is UTF-8");
    let lines: Vec<String> = text.lines().map(str::to_string).collect();
    assert_eq!(
        lines.len(),
        batch_lines(data),
        "one output line per non-blank input line"
    );
    for (k, l) in lines.iter().enumerate() {
        // Read without converting numbers: an id is echoed exactly as written, and a
        // number such as 1e400 is JSON by its grammar though beyond a binary float.
        let v: std::collections::BTreeMap<String, Box<serde_json::value::RawValue>> =
            serde_json::from_str(l).expect("each output line is a JSON object");
        assert!(v.contains_key("id"), "output line {} has no id: {l}", k + 1);
    }
    lines
}

/// The input lines `rates --batch` answers: the pieces between newlines (after a
/// UTF-8 byte-order mark at the start, which is skipped) that hold more than ASCII
/// white space, or are longer than a batch line may be.
pub fn batch_lines(data: &[u8]) -> usize {
    let data = data.strip_prefix(b"\xEF\xBB\xBF").unwrap_or(data);
    data.split(|&b| b == b'\n')
        .filter(|l| l.len() > candor::screen::MAX_LINE_BYTES || !l.trim_ascii().is_empty())
        .count()
}
