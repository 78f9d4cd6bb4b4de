//! Batch screening (`candor rates --batch`): portfolio screening of many series, one JSON object a line
//! in and one JSON line out per series, in input order, using every core.

use crate::engine::{self, ApproxAmount, Flows};
use crate::model::values::{self, grouped, ValueError, MAX_AMOUNT, MAX_SCALE};
use crate::model::{DayCount, Frequency, MAX_FLOWS};
use rayon::prelude::*;
use rust_decimal::prelude::*;
use serde::{Deserialize, Serialize, Serializer};
use serde_json::value::RawValue;

pub use crate::limits::MAX_LINE_BYTES;

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct Line<'a> {
    #[serde(borrow)]
    id: Option<&'a RawValue>,
    every: Option<String>,
    /// The whole array, read by [`amounts_of`] (a fast path for plain numbers).
    #[serde(borrow)]
    amounts: Option<&'a RawValue>,
    day_count: Option<String>,
    /// The whole list, read by [`flows_of`] once its length is known to be within
    /// the flow limit.
    #[serde(borrow)]
    dated: Option<&'a RawValue>,
    #[serde(borrow)]
    hurdle_rate: Option<&'a RawValue>,
    #[serde(borrow)]
    finance_rate: Option<&'a RawValue>,
    #[serde(borrow)]
    reinvestment_rate: Option<&'a RawValue>,
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct DatedFlow<'a> {
    date: String,
    #[serde(borrow)]
    amount: &'a RawValue,
    #[allow(dead_code)]
    note: Option<String>,
}

/// An error for one line: (code, message).
type LineError = (&'static str, String);

/// The run of ASCII digits at `body[i..]`, up to eight of them, read eight bytes at a
/// time: (value, how many digits).
#[inline(always)]
fn digit_run(body: &[u8], i: usize) -> (u64, usize) {
    let chunk = match body.get(i..i + 8) {
        Some(eight) => u64::from_le_bytes([
            eight[0], eight[1], eight[2], eight[3], eight[4], eight[5], eight[6], eight[7],
        ]),
        None => {
            // Near the end: pad with a non-digit.
            let mut bytes = [b' '; 8];
            for (slot, &b) in bytes.iter_mut().zip(body.get(i..).unwrap_or_default()) {
                *slot = b;
            }
            u64::from_le_bytes(bytes)
        }
    };
    // A byte is a digit when its high nibble is 3 and adding 6 keeps it so. (A carry
    // out of a byte above 0xF9 can only upset bytes after a non-digit: not counted.)
    let high = 0xF0F0_F0F0_F0F0_F0F0u64;
    let threes = 0x3030_3030_3030_3030u64;
    let not_digit =
        ((chunk & high) ^ threes) | ((chunk.wrapping_add(0x0606_0606_0606_0606) & high) ^ threes);
    let count = (not_digit.trailing_zeros() / 8) as usize;
    if count == 0 {
        return (0, 0);
    }
    // Digit values, the first digit in the lowest byte; shifted up so that the missing
    // digits read as leading zeros, then combined pairwise (byte, 16-bit, 32-bit).
    let mut v = chunk.wrapping_sub(threes) << (8 * (8 - count));
    v = (v.wrapping_mul(10) + (v >> 8)) & 0x00FF_00FF_00FF_00FF;
    v = (v.wrapping_mul(100) + (v >> 16)) & 0x0000_FFFF_0000_FFFF;
    v = (v.wrapping_mul(10_000) + (v >> 32)) & 0x0000_0000_FFFF_FFFF;
    (v, count)
}

/// A JSON array of plain numbers (`-123.45`: no exponent, at most 16 digits before
/// the point and 6 after, within the deal-file limits) starting at `b[open] == b'['`,
/// read straight into exact decimals: the amounts and the index of the closing `]`.
/// `None` as soon as anything else appears, for the general reader.
///
/// The list ends at the first `]` (no plain number holds one), and the commas split it
/// into one number each, both found by `memchr`: where each number starts is then
/// known before any is read, so the reading of one number does not wait on the digits
/// of the one before.
fn plain_numbers(b: &[u8], open: usize) -> Option<(Vec<Decimal>, usize)> {
    let first = open + 1;
    let close = first + memchr::memchr(b']', b.get(first..)?)?;
    let inner = &b[first..close];
    let mut out = Vec::with_capacity((inner.len() / 8 + 1).min(MAX_FLOWS + 1));
    if inner.iter().all(|&c| is_json_space(c)) {
        return Some((out, close));
    }
    let mut start = first;
    for comma in memchr::memchr_iter(b',', inner) {
        let end = first + comma;
        out.push(plain_number(b, start, end)?);
        // Past the flow limit: the general reader refuses the list, unread.
        if out.len() > MAX_FLOWS {
            return None;
        }
        start = end + 1;
    }
    out.push(plain_number(b, start, close)?);
    Some((out, close))
}

/// The plain number that fills `b[i..end]` but for JSON white space either side
/// (`b[end]` is the comma or bracket after it); `None` for anything else.
#[inline(always)]
fn plain_number(b: &[u8], mut i: usize, end: usize) -> Option<Decimal> {
    const POW10: [u64; 9] = [
        1,
        10,
        100,
        1_000,
        10_000,
        100_000,
        1_000_000,
        10_000_000,
        100_000_000,
    ];
    // (Lists are usually written with one space after each comma.)
    while i < end && is_json_space(b[i]) {
        i += 1;
    }
    if i >= end {
        return None;
    }
    let negative = b[i] == b'-';
    if negative {
        i += 1;
    }
    // JSON's grammar: an integer part without leading zeros, then optionally a point
    // and at least one digit (exponents go to the general reader). A run of digits
    // stops at `b[end]` at the latest, which is not a digit.
    let (hi, n_hi) = digit_run(b, i);
    let (mut int, mut n_int) = (hi, n_hi);
    if n_hi == 8 {
        let (lo, n_lo) = digit_run(b, i + 8);
        if n_lo == 8 && digit_run(b, i + 16).1 > 0 {
            // Seventeen or more digits: beyond the limits, for the general reader.
            return None;
        }
        int = hi * POW10[n_lo] + lo;
        n_int += n_lo;
    }
    if n_int == 0 || (b[i] == b'0' && n_int > 1) {
        return None;
    }
    i += n_int;
    let (mut frac, mut scale) = (0u64, 0usize);
    if i < end && b[i] == b'.' {
        i += 1;
        // Two places, the usual case for money: read them directly.
        let digit = |k: usize| b.get(k).map_or(u8::MAX, |c| c.wrapping_sub(b'0'));
        let (d0, d1) = (digit(i), digit(i + 1));
        if d0 < 10 && d1 < 10 && digit(i + 2) >= 10 {
            (frac, scale) = (u64::from(d0 * 10 + d1), 2);
            i += 2;
        } else {
            let (f, n_frac) = digit_run(b, i);
            if n_frac == 0 || n_frac > MAX_SCALE as usize {
                return None;
            }
            (frac, scale) = (f, n_frac);
            i += n_frac;
        }
    }
    while i < end && is_json_space(b[i]) {
        i += 1;
    }
    if i != end {
        return None;
    }
    if n_int <= 12 {
        // Below 10^12 before the point and at most 6 places: under 10^18, in 64
        // bits, and inside the limits without a check.
        let mantissa = int * POW10[scale] + frac;
        Some(Decimal::from_parts(
            mantissa as u32,
            (mantissa >> 32) as u32,
            0,
            negative,
            scale as u32,
        ))
    } else {
        // Up to 16 digits before the point and 6 after: the mantissa can pass 2^64.
        let mantissa = u128::from(int) * u128::from(POW10[scale]) + u128::from(frac);
        if mantissa > MAX_AMOUNT as u128 * u128::from(POW10[scale]) {
            return None;
        }
        // At most 10^21, well inside the 96-bit mantissa.
        Some(Decimal::from_parts(
            mantissa as u32,
            (mantissa >> 32) as u32,
            (mantissa >> 64) as u32,
            negative,
            scale as u32,
        ))
    }
}

/// White space as JSON defines it.
fn is_json_space(b: u8) -> bool {
    matches!(b, b' ' | b'\t' | b'\n' | b'\r')
}

/// Finds the top-level `"amounts"` array of a batch line and reads it with
/// [`plain_numbers`]: the line comes back with that array emptied (for the JSON parser,
/// which then has little left to do) together with the amounts. `None` when the line
/// has no such array or it holds anything but plain numbers: the general path then
/// reads the whole line, and words any error.
fn split_amounts(text: &str) -> Option<(String, Vec<Decimal>)> {
    let b = text.as_bytes();
    let (mut i, mut depth) = (0usize, 0i32);
    while i < b.len() {
        match b[i] {
            b'"' => {
                let start = i;
                i += 1;
                while i < b.len() && b[i] != b'"' {
                    i += if b[i] == b'\\' { 2 } else { 1 };
                }
                i += 1;
                if depth != 1 || b.get(start..i) != Some(&b"\"amounts\""[..]) {
                    continue;
                }
                let mut j = i;
                while j < b.len() && is_json_space(b[j]) {
                    j += 1;
                }
                if b.get(j) != Some(&b':') {
                    continue;
                }
                j += 1;
                while j < b.len() && is_json_space(b[j]) {
                    j += 1;
                }
                if b.get(j) != Some(&b'[') {
                    return None;
                }
                let open = j;
                let (amounts, close) = plain_numbers(b, open)?;
                let mut rest = String::with_capacity(text.len() - (close - open));
                rest.push_str(&text[..=open]);
                rest.push_str(&text[close..]);
                return Some((rest, amounts));
            }
            b'{' | b'[' => {
                depth += 1;
                i += 1;
            }
            b'}' | b']' => {
                depth -= 1;
                i += 1;
            }
            _ => i += 1,
        }
    }
    None
}

/// The amounts of a periodic series: plain numbers are read straight from the array's
/// text (the JSON parser has already checked its grammar); anything else (strings,
/// exponents, long numbers) goes through the general reader.
fn amounts_of(raw: &RawValue) -> Result<Vec<Decimal>, LineError> {
    let text = raw.get().as_bytes().trim_ascii();
    if text.first() == Some(&b'[') {
        if let Some((amounts, close)) = plain_numbers(text, 0) {
            if close + 1 == text.len() {
                return Ok(amounts);
            }
        }
    }
    let count = list_len(raw.get());
    if count > MAX_FLOWS {
        return Err(too_many(count));
    }
    let items: Vec<&RawValue> = serde_json::from_str(raw.get()).map_err(|e| {
        (
            "bad-line",
            format!("`amounts` must be a list of numbers: {e}"),
        )
    })?;
    items
        .iter()
        .enumerate()
        .map(|(i, raw)| {
            exact_decimal(raw).map_err(|(code, m)| (code, format!("amounts[{i}]: {m}")))
        })
        .collect()
}

/// Reads a JSON value that stands for an amount with the reader of deal files: a
/// number or a string is read from its text (never through a binary float) with the
/// same limits and words; anything else is not a number.
fn exact_decimal(raw: &RawValue) -> Result<Decimal, LineError> {
    read_scalar(raw, "a number", values::read_amount)
}

/// Reads a JSON value that stands for a rate with the reader of deal files
/// ([`values::read_rate`]): `9` means 900% and is refused as in a deal file.
fn exact_rate(raw: &RawValue) -> Result<Decimal, LineError> {
    read_scalar(raw, "a rate such as \"8%\" or 0.08", values::read_rate)
}

/// The text a JSON scalar stands for, as a deal file's scalar would hold it: a
/// string's contents, a number's or a literal's text; read with `read`. A list or an
/// object is refused in the words of a deal file.
fn read_scalar(
    raw: &RawValue,
    expected: &str,
    read: fn(&str) -> Result<Decimal, (&'static str, ValueError)>,
) -> Result<Decimal, LineError> {
    let text = raw.get().trim();
    let scalar: std::borrow::Cow<'_, str> = match text.as_bytes().first() {
        Some(b'"') => match serde_json::from_str::<String>(text) {
            Ok(s) => s.into(),
            Err(e) => return Err(("bad-line", e.to_string())),
        },
        Some(b'[') => {
            return Err((
                "wrong-type",
                format!("it should be {expected}, but it is a list"),
            ))
        }
        Some(b'{') => {
            return Err((
                "wrong-type",
                format!("it should be {expected}, but it is an object"),
            ))
        }
        _ => text.into(),
    };
    read(&scalar).map_err(|(code, e)| (code, e.message))
}

fn frequency(name: &str) -> Option<Frequency> {
    Frequency::ALL.into_iter().find(|f| f.as_str() == name)
}

/// The flows of a line, as read: periodic amounts from period 0 (not yet normalised:
/// they may hold zeros), or any flows.
enum Series {
    Periodic(Vec<Decimal>, u32),
    Flows(Flows),
}

impl Series {
    /// The flows as the engine takes them (see [`Flows::normalised`]).
    fn into_flows(self) -> Flows {
        match self {
            Series::Periodic(amounts, per_year) => Flows::periodic(amounts, per_year),
            Series::Flows(flows) => flows,
        }
        .into_normalised()
    }
}

/// The series of a line; `amounts`, when given, were read ahead by [`split_amounts`].
fn flows_of(line: &Line<'_>, amounts: Option<Vec<Decimal>>) -> Result<Series, LineError> {
    match (&line.amounts, &line.dated) {
        (Some(_), Some(_)) => Err((
            "flows-conflict",
            "give either `amounts` or `dated`, not both".into(),
        )),
        (None, None) => Err(("missing-field", "no `amounts` or `dated` flows".into())),
        (Some(raw), None) => {
            let amounts = match amounts {
                Some(a) => a,
                None => amounts_of(raw)?,
            };
            let every = line.every.as_deref().unwrap_or("year");
            let freq = frequency(every).ok_or((
                "unknown-value",
                format!(
                    "`every: {every}` is not one of year, half-year, quarter, month, week, day"
                ),
            ))?;
            if amounts.len() > MAX_FLOWS {
                return Err(too_many(amounts.len()));
            }
            Ok(Series::Periodic(amounts, freq.per_year()))
        }
        (None, Some(raw)) => {
            let name = line.day_count.as_deref().unwrap_or("act/365f");
            let dc = DayCount::parse(name).ok_or((
                "unknown-value",
                format!("`day_count: {name}` is not one of act/365f, act/360, act/act-isda, 30/360, 30e/360, 30e/360-isda"),
            ))?;
            let count = list_len(raw.get());
            if count > MAX_FLOWS {
                return Err(too_many(count));
            }
            let dated: Vec<DatedFlow<'_>> = serde_json::from_str(raw.get()).map_err(|e| {
                (
                    "bad-line",
                    format!("`dated` must be a list of {{\"date\", \"amount\"}} objects: {e}"),
                )
            })?;
            let mut entries = Vec::with_capacity(dated.len());
            for (i, f) in dated.iter().enumerate() {
                let date = values::parse_date(&f.date)
                    .map_err(|e| ("bad-date", format!("dated[{i}].date: {}", e.message)))?;
                let amount = exact_decimal(f.amount)
                    .map_err(|(code, m)| (code, format!("dated[{i}].amount: {m}")))?;
                entries.push((date, amount, None));
            }
            Ok(Series::Flows(Flows::dated(entries, dc)))
        }
    }
}

/// How many items the JSON list `json` holds, counted without reading them: the
/// commas outside strings and nested values, plus one unless it is empty. (On text
/// that is not a list the count means nothing; the parser then says what is wrong.)
fn list_len(json: &str) -> usize {
    let b = json.as_bytes();
    let (mut depth, mut commas, mut any, mut i) = (0i32, 0usize, false, 0usize);
    while i < b.len() {
        match b[i] {
            b'"' => {
                any |= depth == 1;
                i += 1;
                while i < b.len() && b[i] != b'"' {
                    i += if b[i] == b'\\' { 2 } else { 1 };
                }
            }
            b'[' | b'{' => {
                any |= depth == 1;
                depth += 1;
            }
            b']' | b'}' => depth -= 1,
            b',' if depth == 1 => commas += 1,
            c if depth == 1 && !is_json_space(c) => any = true,
            _ => {}
        }
        i += 1;
    }
    if any {
        commas + 1
    } else {
        0
    }
}

/// The error for a series of more than [`MAX_FLOWS`] flows, in the words of deal files.
fn too_many(n: usize) -> LineError {
    (
        "too-many-flows",
        format!(
            "{} flows; at most {} are accepted",
            grouped(n as u64),
            grouped(MAX_FLOWS as u64)
        ),
    )
}

#[cfg(test)]
/// Screens one line; always returns one JSON object (read back from [`screen_text`],
/// so an id beyond what a float holds, such as `1e400`, comes back as null here).
pub(crate) fn screen_line(text: &str, index: usize) -> serde_json::Value {
    serde_json::from_str(&screen_text(text, index)).unwrap_or(serde_json::Value::Null)
}

/// Screens one line: one JSON object as compact text, the line's results or its
/// error, naming the series by its `id` exactly as written (or `line N`).
pub(crate) fn screen_text(text: &str, index: usize) -> String {
    match screened(text, index) {
        Ok(s) => serde_json::to_string(&s).unwrap_or_default(),
        Err(error) => error,
    }
}

/// How an output line names its series.
enum Id {
    /// The line's `id`, as its JSON text.
    Given(Box<RawValue>),
    /// `line N`, counting from 1, for a line without a readable id.
    Line(usize),
}

impl Serialize for Id {
    fn serialize<S: Serializer>(&self, serializer: S) -> Result<S::Ok, S::Error> {
        match self {
            Id::Line(n) => serializer.serialize_str(&format!("line {n}")),
            // JSON white space other than a space (a tab, a carriage return) is
            // dropped, so that the output line holds no control character.
            Id::Given(raw) if raw.get().bytes().any(|b| b == b'\t' || b == b'\r') => {
                match RawValue::from_string(compact(raw.get())) {
                    Ok(r) => r.serialize(serializer),
                    Err(_) => raw.serialize(serializer),
                }
            }
            Id::Given(raw) => raw.serialize(serializer),
        }
    }
}

/// JSON text without white space outside its strings.
fn compact(json: &str) -> String {
    let mut out = String::with_capacity(json.len());
    let (mut in_string, mut escaped) = (false, false);
    for c in json.chars() {
        if in_string {
            in_string = escaped || c != '"';
            escaped = !escaped && c == '\\';
        } else if c == '"' {
            in_string = true;
        } else if is_json_space_char(c) {
            continue;
        }
        out.push(c);
    }
    out
}

fn is_json_space_char(c: char) -> bool {
    u8::try_from(c).is_ok_and(is_json_space)
}

/// The JSON object of a line's error.
fn error_line(id: &Id, code: &str, message: &str) -> String {
    #[derive(Serialize)]
    struct Body<'b> {
        code: &'b str,
        message: &'b str,
    }
    #[derive(Serialize)]
    struct ErrorLine<'b> {
        id: &'b Id,
        error: Body<'b>,
    }
    serde_json::to_string(&ErrorLine {
        id,
        error: Body { code, message },
    })
    .unwrap_or_default()
}

/// Only the `id` of a line, to name the series when the rest cannot be read.
#[derive(Deserialize)]
struct IdOnly<'a> {
    #[serde(borrow)]
    id: Option<&'a RawValue>,
}

/// One line's results, or the JSON text of its error.
fn screened(text: &str, index: usize) -> Result<Screened, String> {
    if text.len() > MAX_LINE_BYTES {
        return Err(too_long(index));
    }
    // Most lines are a short object around one long list of plain numbers: read that
    // list directly and leave the parser only the rest.
    let (rest, mut amounts) = match split_amounts(text) {
        Some((rest, amounts)) => (Some(rest), Some(amounts)),
        None => (None, None),
    };
    let parsed = match &rest {
        Some(r) => serde_json::from_str(r).or_else(|_| {
            // Errors are worded (with their columns) from the line as written.
            amounts = None;
            serde_json::from_str(text)
        }),
        None => serde_json::from_str(text),
    };
    let line: Line<'_> = match parsed {
        Ok(l) => l,
        Err(e) => {
            // Still name the series when its id can be read.
            let id = serde_json::from_str::<IdOnly<'_>>(text)
                .ok()
                .and_then(|l| l.id)
                .map_or(Id::Line(index + 1), |raw| Id::Given(raw.to_owned()));
            let message = if text.trim_start().starts_with('{') {
                e.to_string()
            } else {
                "the line must be a JSON object, such as {\"id\": \"a\", \"amounts\": [-100, 110]}"
                    .to_string()
            };
            return Err(error_line(&id, "bad-line", &message));
        }
    };
    let id = line
        .id
        .map_or(Id::Line(index + 1), |raw| Id::Given(raw.to_owned()));
    match screen(&line, amounts) {
        Ok(mut screened) => {
            screened.id = Some(id);
            Ok(screened)
        }
        Err((code, message)) => Err(error_line(&id, code, &message)),
    }
}

/// The error line of a line longer than [`MAX_LINE_BYTES`] (line `index`, from 0).
fn too_long(index: usize) -> String {
    error_line(
        &Id::Line(index + 1),
        "line-too-long",
        &format!(
            "the line is longer than {} bytes (16 MiB), the most a batch line may hold; it was skipped",
            grouped(MAX_LINE_BYTES as u64)
        ),
    )
}

fn screen(line: &Line<'_>, amounts: Option<Vec<Decimal>>) -> Result<Screened, LineError> {
    let series = flows_of(line, amounts)?;
    let rate = |raw: Option<&RawValue>, name: &str| {
        raw.map(exact_rate)
            .transpose()
            .map_err(|(code, m)| (code, format!("{name}: {m}")))
    };
    let hurdle = rate(line.hurdle_rate, "hurdle_rate")?;
    let finance = rate(line.finance_rate, "finance_rate")?;
    let reinvest = rate(line.reinvestment_rate, "reinvestment_rate")?;
    let (report, npv, mirr) = match series {
        // The usual line: roots only, of periodic amounts without a zero among them
        // (so already normalised), read from the amounts without building flow points.
        Series::Periodic(amounts, per_year)
            if hurdle.is_none() && !amounts.is_empty() && !amounts.iter().any(Decimal::is_zero) =>
        {
            (engine::irr::periodic_report(&amounts, per_year), None, None)
        }
        series => {
            let flows = series.into_flows();
            if flows.points.is_empty() {
                return Err(("all-zero-flows", "every flow is zero".into()));
            }
            let reading = engine::read_series(
                &flows,
                engine::SeriesRates {
                    hurdle,
                    finance,
                    reinvestment: reinvest,
                },
                false,
            );
            (reading.report, reading.npv_at_hurdle, reading.mirr)
        }
    };
    let roots = report
        .roots
        .iter()
        .map(|r| ScreenedRoot {
            annual_rate: r.annual_rate,
            periodic_rate: r.periodic_rate,
            log10_annual_growth: r.log10_annual_growth,
            multiplicity: r.multiplicity,
            interval: r.interval,
            log10_interval: r.log10_interval,
            balance_kind: r.balance_kind,
            stance: hurdle.map(|_| r.stance),
        })
        .collect();
    let (npv_at_hurdle, npv_at_hurdle_approx) = match npv {
        Some((npv, approx)) => (Some(npv.map(|v| v.to_string())), approx),
        None => (None, None),
    };
    Ok(Screened {
        id: None,
        count: report.count,
        upper_bound: report.upper_bound,
        certified: report.certified,
        roots,
        unresolved: report.unresolved,
        exact_check: report.exact_check,
        npv_at_hurdle,
        npv_at_hurdle_approx,
        mirr,
    })
}

/// One output line of batch screening (the keys in this order; `id` first).
#[derive(Serialize)]
struct Screened {
    id: Option<Id>,
    count: u32,
    upper_bound: u32,
    certified: bool,
    roots: Vec<ScreenedRoot>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    unresolved: Vec<[f64; 2]>,
    /// Present when the exact check ran: "settled" or "over-budget".
    #[serde(skip_serializing_if = "Option::is_none")]
    exact_check: Option<&'static str>,
    /// Only with a hurdle rate: the NPV as a decimal string, or null.
    #[serde(skip_serializing_if = "Option::is_none")]
    npv_at_hurdle: Option<Option<String>>,
    /// Only when the NPV is beyond an exact decimal (as in a deal's analysis): its
    /// sign and size in scientific form, such as `"6.00e62"`.
    #[serde(skip_serializing_if = "Option::is_none")]
    npv_at_hurdle_approx: Option<ApproxAmount>,
    /// Only with a hurdle rate (finance and reinvestment rates default to it).
    #[serde(skip_serializing_if = "Option::is_none")]
    mirr: Option<Option<f64>>,
}

/// One root in a line of batch screening.
#[derive(Serialize)]
struct ScreenedRoot {
    annual_rate: Option<f64>,
    periodic_rate: Option<f64>,
    log10_annual_growth: f64,
    multiplicity: u32,
    interval: Option<[f64; 2]>,
    log10_interval: [f64; 2],
    balance_kind: engine::BalanceKind,
    /// Only with a hurdle rate.
    #[serde(skip_serializing_if = "Option::is_none")]
    stance: Option<engine::Stance>,
}

/// Bytes read at a time by [`screen_stream`]: a few hundred typical lines, enough to
/// keep every core busy between reads, in a buffer that is reused.
const CHUNK: usize = 1 << 20;

/// Why [`screen_stream`] stopped.
#[derive(Debug)]
pub enum StreamError {
    /// Reading the input failed.
    Read(std::io::Error),
    /// Writing the results failed.
    Write(std::io::Error),
}

/// Screens a stream of JSON lines and writes one JSON line per non-blank input line to
/// `out`, in input order. The input is read a block at a time, and the complete lines
/// of each block are screened in parallel while the next block is read, so memory
/// stays bounded however long the input is. A line that is not UTF-8 text gets an
/// error line of its own (a byte-order mark opening the stream is skipped).
pub fn screen_stream(
    input: &mut (impl std::io::Read + Send),
    out: &mut impl std::io::Write,
) -> Result<(), StreamError> {
    /// Appends up to a block of input to `buf` (more when a line is longer than
    /// that); the number of bytes read, 0 at the end.
    fn fill(input: impl std::io::Read, buf: &mut Vec<u8>) -> std::io::Result<usize> {
        // Doubling the buffer for a long line, but never far past the longest line.
        let want = CHUNK
            .max(buf.len())
            .min((MAX_LINE_BYTES + 1).saturating_sub(buf.len()))
            .max(CHUNK);
        std::io::Read::read_to_end(&mut std::io::Read::take(input, want as u64), buf)
    }
    /// Reads past the rest of a line longer than [`MAX_LINE_BYTES`], a block at a
    /// time: `buf` then holds what follows the line's newline; true at the end of the
    /// input.
    fn skip_line(mut input: impl std::io::Read, buf: &mut Vec<u8>) -> std::io::Result<bool> {
        loop {
            buf.clear();
            if fill(&mut input, buf)? == 0 {
                return Ok(true);
            }
            if let Some(k) = memchr::memchr(b'\n', buf) {
                buf.drain(..=k);
                return Ok(false);
            }
        }
    }
    let mut cur: Vec<u8> = Vec::with_capacity(2 * CHUNK);
    let mut next: Vec<u8> = Vec::with_capacity(2 * CHUNK);
    let mut eof = fill(&mut *input, &mut cur).map_err(StreamError::Read)? == 0;
    if cur.starts_with(b"\xEF\xBB\xBF") {
        cur.drain(..3);
    }
    let mut line_no = 0usize;
    loop {
        // The complete lines of this block; the rest starts the next one.
        let complete = if eof {
            cur.len()
        } else {
            memchr::memrchr(b'\n', &cur).map_or(0, |k| k + 1)
        };
        if complete == 0 && cur.len() > MAX_LINE_BYTES {
            // A line longer than any accepted, its end not in sight: answer it at once
            // (the answer is flushed, as the rest of the line may be endless, as
            // /dev/zero is), then read past it without keeping it.
            out.write_all(too_long(line_no).as_bytes())
                .and_then(|()| out.write_all(b"\n"))
                .and_then(|()| out.flush())
                .map_err(StreamError::Write)?;
            line_no += 1;
            eof = skip_line(&mut *input, &mut cur).map_err(StreamError::Read)?;
            if cur.is_empty() && !eof {
                eof = fill(&mut *input, &mut cur).map_err(StreamError::Read)? == 0;
            }
            continue;
        }
        next.clear();
        next.extend_from_slice(&cur[complete..]);
        let block = &cur[..complete];
        let (results, read) = rayon::join(
            || screen_block(block, line_no),
            || {
                if eof {
                    Ok(0)
                } else {
                    fill(&mut *input, &mut next)
                }
            },
        );
        let (lines, outputs) = results;
        line_no += lines;
        for o in outputs {
            out.write_all(o.as_bytes()).map_err(StreamError::Write)?;
            out.write_all(b"\n").map_err(StreamError::Write)?;
        }
        if eof {
            return Ok(());
        }
        eof = read.map_err(StreamError::Read)? == 0;
        std::mem::swap(&mut cur, &mut next);
    }
}

/// Screens the lines of a block whose first line is line `first` (0-based) of the
/// input: (how many lines it holds, blank ones included; one result per non-blank
/// line).
fn screen_block(block: &[u8], first: usize) -> (usize, Vec<String>) {
    // Where each line ends (a last line may lack its newline).
    let mut ends: Vec<usize> = memchr::memchr_iter(b'\n', block).collect();
    if !block.is_empty() && !block.ends_with(b"\n") {
        ends.push(block.len());
    }
    let mut lines: Vec<(usize, &[u8])> = Vec::with_capacity(ends.len());
    let mut start = 0;
    for (k, &end) in ends.iter().enumerate() {
        let line = &block[start..end];
        let line = line.strip_suffix(b"\r").unwrap_or(line);
        if line.len() > MAX_LINE_BYTES || !line.trim_ascii().is_empty() {
            lines.push((first + k, line));
        }
        start = end + 1;
    }
    let count = ends.len();
    let outputs = lines
        .par_iter()
        .map(|&(i, l)| match std::str::from_utf8(l) {
            _ if l.len() > MAX_LINE_BYTES => too_long(i),
            Ok(text) => screen_text(text, i),
            Err(e) => error_line(
                &Id::Line(i + 1),
                "bad-line",
                &format!(
                    "the line is not UTF-8 text (an invalid byte at column {})",
                    e.valid_up_to() + 1
                ),
            ),
        })
        .collect();
    (count, outputs)
}

#[cfg(test)]
/// Screens every line of a JSONL text (blank lines skipped) and returns the output
/// lines in input order (see [`screen_stream`]).
pub(crate) fn screen_all(text: &str) -> Vec<String> {
    let mut out = Vec::new();
    match screen_stream(&mut text.as_bytes(), &mut out) {
        Ok(()) => String::from_utf8_lossy(&out)
            .lines()
            .map(str::to_string)
            .collect(),
        Err(_) => Vec::new(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use rust_decimal_macros::dec;
    use serde_json::{json, Value};

    /// A reader that hands out at most `step` bytes a call (as pipes do).
    struct Trickle<'a> {
        data: &'a [u8],
        step: usize,
    }

    impl std::io::Read for Trickle<'_> {
        fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
            let n = self.step.min(buf.len()).min(self.data.len());
            buf[..n].copy_from_slice(&self.data[..n]);
            self.data = &self.data[n..];
            self.step = self.step % 7919 + 1013;
            Ok(n)
        }
    }

    fn stream(data: &[u8]) -> Vec<String> {
        let mut out = Vec::new();
        let mut input = Trickle { data, step: 1 };
        screen_stream(&mut input, &mut out).unwrap();
        String::from_utf8(out)
            .unwrap()
            .lines()
            .map(str::to_string)
            .collect()
    }

    /// Lines of batch input filling about `blocks` blocks, and their answers.
    fn many_lines(blocks: usize) -> (String, Vec<String>) {
        let (mut text, mut expected) = (String::new(), Vec::new());
        let mut k = 0;
        while text.len() < blocks * CHUNK {
            let amounts = format!("-1000.5, {}", "3.25, ".repeat(1 + k % 500)) + "4";
            let l = format!(r#"{{"id": {k}, "every": "month", "amounts": [{amounts}]}}"#);
            expected.push(screen_text(&l, k));
            text.push_str(&l);
            text.push('\n');
            k += 1;
        }
        (text, expected)
    }

    #[test]
    fn a_failed_read_ends_the_stream_after_the_answers_before_it() {
        /// Hands out its data, then fails.
        struct Failing<'a>(&'a [u8]);
        impl std::io::Read for Failing<'_> {
            fn read(&mut self, buf: &mut [u8]) -> std::io::Result<usize> {
                if self.0.is_empty() {
                    return Err(std::io::Error::other("the disk went away"));
                }
                let n = buf.len().min(self.0.len()).min(4096);
                buf[..n].copy_from_slice(&self.0[..n]);
                self.0 = &self.0[n..];
                Ok(n)
            }
        }
        let (text, expected) = many_lines(7);
        // The read fails in the sixth block.
        let mut input = Failing(&text.as_bytes()[..5 * CHUNK + 1000]);
        let mut out = Vec::new();
        let result = screen_stream(&mut input, &mut out);
        assert!(matches!(result, Err(StreamError::Read(_))), "{result:?}");
        let got: Vec<&str> = std::str::from_utf8(&out).unwrap().lines().collect();
        // Every block read whole was answered, in order, and nothing after the failure.
        let whole = text[..5 * CHUNK].matches('\n').count();
        assert_eq!(got.len(), whole);
        assert_eq!(got, expected[..got.len()]);
    }

    #[test]
    fn a_failed_write_ends_the_stream_without_waiting_forever() {
        /// Takes `room` bytes, then fails.
        struct Full {
            taken: Vec<u8>,
            room: usize,
        }
        impl std::io::Write for Full {
            fn write(&mut self, buf: &[u8]) -> std::io::Result<usize> {
                if self.taken.len() >= self.room {
                    return Err(std::io::Error::other("no space left"));
                }
                let n = buf.len().min(self.room - self.taken.len());
                self.taken.extend_from_slice(&buf[..n]);
                Ok(n)
            }
            fn flush(&mut self) -> std::io::Result<()> {
                Ok(())
            }
        }
        let (text, expected) = many_lines(6);
        let all = expected.join("\n") + "\n";
        for room in [0, 10, all.len() / 3, all.len() - 1] {
            let mut out = Full {
                taken: Vec::new(),
                room,
            };
            let result = screen_stream(
                &mut Trickle {
                    data: text.as_bytes(),
                    step: 1,
                },
                &mut out,
            );
            assert!(matches!(result, Err(StreamError::Write(_))), "{result:?}");
            assert_eq!(out.taken, all.as_bytes()[..room]);
        }
    }

    #[test]
    fn the_stream_answers_every_line_in_order_across_blocks() {
        // More than three blocks of lines of many sizes, CRLF and LF endings, blank
        // lines, one line longer than a block, and a last line without a newline.
        let mut text = String::new();
        let mut expected = Vec::new();
        let mut line = 0;
        for k in 0..900 {
            let n = 2 + (k * 37) % 700;
            let amounts: Vec<String> = (0..n)
                .map(|j| {
                    if j == 0 {
                        "-1000.5".into()
                    } else {
                        format!("{}.{:02}", 3 + j % 5, j % 100)
                    }
                })
                .collect();
            let l = format!(
                r#"{{"id": "s{k}", "every": "quarter", "amounts": [{}]}}"#,
                amounts.join(", ")
            );
            expected.push(screen_text(&l, line));
            text.push_str(&l);
            text.push_str(if k % 3 == 0 { "\r\n" } else { "\n" });
            line += 1;
            if k % 100 == 0 {
                text.push_str("  \n");
                line += 1;
            }
        }
        let long = format!(
            r#"{{"id": "long", "amounts": [-1{}]}}"#,
            ", 0.01".repeat(300_000)
        );
        expected.push(screen_text(&long, line));
        text.push_str(&long);
        text.push('\n');
        text.push_str(r#"{"id": "last", "amounts": [-100, 110]}"#);
        expected.push(screen_text(
            r#"{"id": "last", "amounts": [-100, 110]}"#,
            line + 1,
        ));
        assert!(text.len() > 3 * CHUNK);
        assert_eq!(stream(text.as_bytes()), expected);
        assert_eq!(screen_all(&text), expected);
    }

    #[test]
    fn a_line_that_is_not_utf8_gets_its_own_error() {
        let mut data = b"\xEF\xBB\xBF{\"id\": \"a\", \"amounts\": [-100, 110]}\n".to_vec();
        data.extend_from_slice(b"{\"id\": \"b\xff\", \"amounts\": [-1, 2]}\n");
        data.extend_from_slice(b"{\"id\": \"c\", \"amounts\": [-100, 121]}\n");
        let out: Vec<Value> = stream(&data)
            .iter()
            .map(|l| serde_json::from_str(l).unwrap())
            .collect();
        assert_eq!(out.len(), 3);
        // The byte-order mark before the first line is skipped.
        assert_eq!(out[0]["id"], "a");
        assert_eq!(out[0]["count"], 1);
        assert_eq!(out[1]["id"], "line 2");
        assert_eq!(out[1]["error"]["code"], "bad-line");
        assert!(
            out[1]["error"]["message"]
                .as_str()
                .unwrap()
                .contains("column 10"),
            "{}",
            out[1]
        );
        assert_eq!(out[2]["id"], "c");
        assert!(stream(b"").is_empty());
        assert!(stream(b"\n \n\r\n").is_empty());
    }

    #[test]
    fn a_line_longer_than_the_cap_is_answered_and_skipped() {
        use std::io::Read as _;
        let ok = |id: &str| format!("{{\"id\": \"{id}\", \"amounts\": [-100, 110]}}\n");
        let endless = std::io::repeat(b'x');
        // Line 2 never shows its end within the cap; line 3 ends a byte past it; line
        // 5 is past it and ends the input without a newline.
        let first = ok("a").into_bytes();
        let mut input = first
            .as_slice()
            .chain(endless.take(20 << 20))
            .chain(&b"\n"[..])
            .chain(std::io::repeat(b' ').take(MAX_LINE_BYTES as u64 + 1))
            .chain(&b"\n"[..])
            .chain(std::io::Cursor::new(ok("c")))
            .chain(std::io::repeat(b'1').take(MAX_LINE_BYTES as u64 + 7));
        let mut out = Vec::new();
        screen_stream(&mut input, &mut out).unwrap();
        let lines: Vec<Value> = String::from_utf8(out)
            .unwrap()
            .lines()
            .map(|l| serde_json::from_str(l).unwrap())
            .collect();
        // A line past the cap is answered even when it is all spaces: whether it is
        // blank is not known without holding it.
        assert_eq!(lines.len(), 5, "{lines:?}");
        assert_eq!(lines[0]["id"], "a");
        assert_eq!(lines[0]["count"], 1);
        for (k, n) in [(1, 2), (2, 3), (4, 5)] {
            assert_eq!(lines[k]["id"], format!("line {n}"));
            assert_eq!(lines[k]["error"]["code"], "line-too-long");
        }
        assert_eq!(lines[3]["id"], "c");
        assert_eq!(lines[3]["count"], 1);
    }

    #[test]
    fn lists_are_counted_without_being_read() {
        assert_eq!(list_len("[]"), 0);
        assert_eq!(list_len(" [ \t] "), 0);
        assert_eq!(list_len("[1]"), 1);
        assert_eq!(
            list_len(r#"[1, "a,b\",c", [2, 3], {"x": 1, "y": [4, 5]}, -0.5]"#),
            5
        );
        let long = format!("[{}1]", "1, ".repeat(MAX_FLOWS));
        let line = format!(r#"{{"id": "n", "amounts": {long}}}"#);
        let out = screen_line(&line, 0);
        assert_eq!(out["error"]["code"], "too-many-flows", "{out}");
        assert_eq!(
            out["error"]["message"],
            "100,001 flows; at most 100,000 are accepted"
        );
    }

    /// [`plain_numbers`] on `[body]`, which must be read to its end.
    fn list(body: &[u8]) -> Option<Vec<Decimal>> {
        let text = [&b"["[..], body, b"]"].concat();
        let (amounts, close) = plain_numbers(&text, 0)?;
        assert_eq!(close, text.len() - 1);
        Some(amounts)
    }

    #[test]
    fn the_list_reader_stops_at_its_bracket() {
        assert_eq!(
            plain_numbers(b"[1, 2], 3]", 0),
            Some((vec![dec!(1), dec!(2)], 5))
        );
        assert_eq!(plain_numbers(b"x [ ]", 2), Some((vec![], 4)));
        for bad in [
            &b"[1, 2"[..],
            b"[1,",
            b"[",
            b"[1 ",
            b"[-",
            b"[1.",
            b"[[1]]",
            b"[\"1\"]",
        ] {
            assert_eq!(
                plain_numbers(bad, 0),
                None,
                "{}",
                String::from_utf8_lossy(bad)
            );
        }
    }

    #[test]
    fn plain_numbers_follow_the_json_grammar() {
        // RFC 8259 section 6: no leading zeros, digits on both sides of a point.
        assert_eq!(
            list(b" -1.50, 0, 2\n,\t0.25 "),
            Some(vec![dec!(-1.50), dec!(0), dec!(2), dec!(0.25)])
        );
        assert_eq!(list(b""), Some(vec![]));
        for bad in [
            &b"01"[..],
            b".5",
            b"5.",
            b"-",
            b"1,",
            b",1",
            b"1 2",
            b"1e3",
            b"+1",
            b"1\x0c",
            b"1234567890123456789",
        ] {
            assert_eq!(list(bad), None, "{}", String::from_utf8_lossy(bad));
        }
        // Beyond the deal-file limits: left to the general reader, which words the error.
        assert_eq!(list(b"1000000000000000.01"), None);
        assert_eq!(list(b"1.0000001"), None);
        assert_eq!(list(b"1000000000000000"), Some(vec![dec!(1e15)]));
        // Mantissas past 2^64 (16 digits before the point, 6 after) are read exactly.
        assert_eq!(
            list(b"-999999999999999.999999, 1000000000000000.000000, 0.000001"),
            Some(vec![
                dec!(-999999999999999.999999),
                dec!(1000000000000000.000000),
                dec!(0.000001)
            ])
        );
        assert_eq!(list(b"1000000000000000.000001"), None);
        assert_eq!(list(b"9999999999999999999"), None);
        assert_eq!(list(b"99999999999999999.5"), None);
    }

    #[test]
    fn the_read_ahead_list_gives_what_the_general_reader_gives() {
        let lines = [
            r#"{"id": "a", "every": "quarter", "amounts": [-100, 30.5, 40, 50.25], "hurdle_rate": "8%"}"#,
            r#"{"amounts":[-1000,0,1200], "id": 7}"#,
            r#"{"id": "x\"amounts\": [1]", "amounts": [-5, 6]}"#,
            r#"{"id": "n", "amounts": [-5, 6], "amounts": [1]}"#,
            r#"{"id": "e", "amounts": [-5, 6e0]}"#,
            r#"{"id": "s", "amounts": ["-5", 6]}"#,
        ];
        for text in lines {
            let fast = screen_line(text, 0);
            // The general reader alone: the list read element by element.
            let line: Result<Line<'_>, _> = serde_json::from_str(text);
            let slow = match line {
                Ok(line) => {
                    let id: Value = line
                        .id
                        .and_then(|r| serde_json::from_str(r.get()).ok())
                        .unwrap_or(json!("line 1"));
                    match screen(&line, None) {
                        // Through text, as `screen_line` reads its own output back.
                        Ok(v) => serde_json::to_string(&v.roots)
                            .ok()
                            .and_then(|t| serde_json::from_str(&t).ok())
                            .unwrap_or(Value::Null),
                        Err((code, _)) => json!({"id": id, "code": code}),
                    }
                }
                Err(_) => json!("bad-line"),
            };
            let fast_part = if fast.get("error").is_some() {
                if fast["error"]["code"] == "bad-line" {
                    json!("bad-line")
                } else {
                    json!({"id": fast["id"], "code": fast["error"]["code"]})
                }
            } else {
                fast.get("roots").cloned().unwrap_or(Value::Null)
            };
            assert_eq!(fast_part, slow, "{text}");
        }
        // The key inside a string is not the list; a duplicate list is still refused.
        assert_eq!(screen_line(lines[2], 0)["count"], 1);
        assert_eq!(screen_line(lines[3], 0)["error"]["code"], "bad-line");
    }

    proptest::proptest! {
        #![proptest_config(proptest::prelude::ProptestConfig::with_cases(200))]

        /// Differential: a batch line gives the figures a deal's analysis gives for the
        /// same flows and rates (count, certificate, every root and its reading, the
        /// NPV to the cent and the MIRR).
        #[test]
        fn a_batch_line_reads_as_a_deal_does(
            cents in proptest::collection::vec(-5_000_000i64..5_000_000, 2..40),
            frequency in proptest::sample::select(Frequency::ALL.to_vec()),
            hurdle_bp in -500i64..3_000,
            finance_bp in 0i64..2_000,
        ) {
            let amounts: Vec<Decimal> = cents.iter().map(|c| Decimal::new(*c, 2)).collect();
            let hurdle = Decimal::new(hurdle_bp, 4);
            let finance = Decimal::new(finance_bp, 4);
            let flows = Flows::periodic(amounts.iter().copied(), frequency.per_year());
            proptest::prop_assume!(!flows.normalised().points.is_empty());
            let rates = crate::model::Rates { hurdle, finance, reinvestment: hurdle };
            let deal = engine::analyse_scenario("base", &flows, &rates);
            let list: Vec<String> = amounts.iter().map(Decimal::to_string).collect();
            let text = format!(
                r#"{{"every": "{}", "amounts": [{}], "hurdle_rate": "{}", "finance_rate": "{}"}}"#,
                frequency.as_str(),
                list.join(", "),
                hurdle,
                finance,
            );
            // Compared as values, not through JSON text (which reads some large floats
            // back a unit in the last place off).
            let line: Line<'_> = serde_json::from_str(&text).unwrap();
            let batch = screen(&line, None).unwrap();
            proptest::prop_assert_eq!(batch.count, deal.irr.count);
            proptest::prop_assert_eq!(batch.certified, deal.irr.certified);
            proptest::prop_assert_eq!(batch.upper_bound, deal.irr.upper_bound);
            proptest::prop_assert_eq!(batch.roots.len(), deal.irr.roots.len());
            for (b, d) in batch.roots.iter().zip(&deal.irr.roots) {
                proptest::prop_assert_eq!(b.annual_rate, d.annual_rate);
                proptest::prop_assert_eq!(b.interval, d.interval);
                proptest::prop_assert_eq!(b.multiplicity, d.multiplicity);
                proptest::prop_assert_eq!(b.balance_kind, d.balance_kind);
                proptest::prop_assert_eq!(b.stance, Some(d.stance));
            }
            proptest::prop_assert_eq!(
                batch.npv_at_hurdle,
                Some(deal.npv_at_hurdle.map(|v| v.to_string()))
            );
            proptest::prop_assert_eq!(batch.mirr, Some(deal.mirr));
        }

        /// Differential: a line without a hurdle, whose periodic amounts are read
        /// without building flow points, gets the report a deal's flows get (every
        /// field, the certificate included), and the batch line says the same.
        #[test]
        fn a_line_without_a_hurdle_reads_as_its_flows_do(
            cents in proptest::collection::vec(-5_000_000i64..5_000_000, 1..40),
            frequency in proptest::sample::select(Frequency::ALL.to_vec()),
        ) {
            let amounts: Vec<Decimal> = cents.iter().map(|c| Decimal::new(*c, 2)).collect();
            let flows = Flows::periodic(amounts.iter().copied(), frequency.per_year()).normalised();
            proptest::prop_assume!(!flows.points.is_empty());
            let from_flows = engine::irr::irr_report(&flows, None, false);
            let list: Vec<String> = amounts.iter().map(Decimal::to_string).collect();
            let text = format!(r#"{{"every": "{}", "amounts": [{}]}}"#, frequency.as_str(), list.join(", "));
            let line: Line<'_> = serde_json::from_str(&text).unwrap();
            let batch = screen(&line, None).unwrap();
            proptest::prop_assert_eq!(batch.count, from_flows.count);
            proptest::prop_assert_eq!(batch.certified, from_flows.certified);
            proptest::prop_assert_eq!(batch.upper_bound, from_flows.upper_bound);
            proptest::prop_assert_eq!(batch.roots.len(), from_flows.roots.len());
            for (b, d) in batch.roots.iter().zip(&from_flows.roots) {
                proptest::prop_assert_eq!(b.annual_rate, d.annual_rate);
                proptest::prop_assert_eq!(b.periodic_rate, d.periodic_rate);
                proptest::prop_assert_eq!(b.interval, d.interval);
                proptest::prop_assert_eq!(b.log10_interval, d.log10_interval);
                proptest::prop_assert_eq!(b.multiplicity, d.multiplicity);
                proptest::prop_assert_eq!(b.balance_kind, d.balance_kind);
            }
            if !cents.contains(&0) {
                let fast = engine::irr::periodic_report(&amounts, frequency.per_year());
                proptest::prop_assert_eq!(
                    serde_json::to_value(&fast).unwrap(),
                    serde_json::to_value(&from_flows).unwrap()
                );
            }
        }

        /// Differential: the read-ahead list reader gives exactly what the general
        /// reader (serde_json, then the deal file's amount reader) gives, on every list
        /// it accepts; a list it declines goes to the general reader.
        #[test]
        fn the_list_reader_agrees_with_the_general_reader(
            items in proptest::collection::vec(
                (proptest::option::of(0u8..2), 0u64..10_000_000_000_000_000, 0u32..8, 0u8..4),
                0..12,
            ),
        ) {
            let body: Vec<String> = items
                .iter()
                .map(|(sign, digits, scale, space)| {
                    let d = Decimal::from_i128_with_scale(*digits as i128, *scale);
                    let minus = if sign == &Some(1) { "-" } else { "" };
                    let pad = " ".repeat(*space as usize);
                    format!("{pad}{minus}{d}{pad}")
                })
                .collect();
            let text = format!("[{}]", body.join(","));
            if let Some((fast, close)) = plain_numbers(text.as_bytes(), 0) {
                proptest::prop_assert_eq!(close, text.len() - 1);
                let raw: Vec<&RawValue> = serde_json::from_str(&text).unwrap();
                let slow: Vec<Decimal> =
                    raw.iter().map(|r| exact_decimal(r).unwrap()).collect();
                // Equal as numbers (the scale a reader keeps is not part of any output).
                proptest::prop_assert_eq!(&fast, &slow);
            }
        }
    }
}
