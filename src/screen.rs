//! Batch screening (`candor rates --batch`): portfolio screening of many series, one JSON object a line
//! in and one JSON line out per series, in input order, using every core.

use crate::engine::{self, FlowPoint, Flows};
use crate::model::values::{parse_decimal, parse_rate, MAX_AMOUNT, MAX_SCALE};
use crate::model::{DayCount, Frequency};
use rayon::prelude::*;
use rust_decimal::prelude::*;
use serde::Deserialize;
use serde_json::value::RawValue;
use serde_json::{json, Value};

/// Most flows accepted in one series (as for deal files).
const MAX_FLOWS: usize = 100_000;

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
    #[serde(borrow)]
    dated: Option<Vec<DatedFlow<'a>>>,
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

/// Plain JSON numbers (`-123.45`: no exponent, at most 16 digits before the point and
/// 6 after, within the deal-file limits) separated by commas, read in one pass
/// straight into exact decimals; `None` as soon as anything else appears, for the
/// general reader.
fn plain_numbers(body: &[u8]) -> Option<Vec<Decimal>> {
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
    let mut out = Vec::with_capacity(body.len() / 8 + 1);
    let mut i = 0;
    let len = body.len();
    let skip_space = |i: &mut usize| {
        while *i < len && is_json_space(body[*i]) {
            *i += 1;
        }
    };
    skip_space(&mut i);
    if i == len {
        return Some(out);
    }
    loop {
        let negative = body[i] == b'-';
        if negative {
            i += 1;
        }
        // JSON's grammar: an integer part without leading zeros, then optionally a
        // point and at least one digit (exponents go to the general reader).
        let (hi, n_hi) = digit_run(body, i);
        let (mut int, mut n_int) = (hi, n_hi);
        if n_hi == 8 {
            let (lo, n_lo) = digit_run(body, i + 8);
            if n_lo == 8 && digit_run(body, i + 16).1 > 0 {
                // Seventeen or more digits: beyond the limits, for the general reader.
                return None;
            }
            int = hi * POW10[n_lo] + lo;
            n_int += n_lo;
        }
        if n_int == 0 || (body[i] == b'0' && n_int > 1) {
            return None;
        }
        i += n_int;
        // Up to 16 digits before the point and 6 after: the mantissa can pass 2^64.
        let (mut mantissa, mut scale) = (u128::from(int), 0u32);
        if i < len && body[i] == b'.' {
            i += 1;
            let (frac, n_frac) = digit_run(body, i);
            if n_frac == 0 || n_frac > MAX_SCALE as usize {
                return None;
            }
            mantissa = mantissa * u128::from(POW10[n_frac]) + u128::from(frac);
            scale = n_frac as u32;
            i += n_frac;
        }
        if mantissa > MAX_AMOUNT as u128 * u128::from(POW10[scale as usize]) {
            return None;
        }
        // At most 10^21, well inside the 96-bit mantissa.
        out.push(Decimal::from_parts(
            mantissa as u32,
            (mantissa >> 32) as u32,
            (mantissa >> 64) as u32,
            negative,
            scale,
        ));
        skip_space(&mut i);
        if i == len {
            return Some(out);
        }
        if body[i] != b',' {
            return None;
        }
        i += 1;
        skip_space(&mut i);
        if i == len {
            return None;
        }
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
                let close = open + b[open..].iter().position(|&c| c == b']')?;
                // A nested list, an object or a string (which might hide a `]`) stops
                // the number reader before the cut could matter.
                let body = &b[open + 1..close];
                let amounts = plain_numbers(body)?;
                let mut rest = String::with_capacity(text.len() - body.len());
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
    if let Some(body) = text.strip_prefix(b"[").and_then(|t| t.strip_suffix(b"]")) {
        if let Some(amounts) = plain_numbers(body) {
            return Ok(amounts);
        }
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
            exact_decimal(raw).map_err(|m| ("bad-number", format!("amounts[{i}]: {m}")))
        })
        .collect()
}

/// Reads a JSON number or a decimal string exactly (the text, never a binary float).
fn exact_decimal(raw: &RawValue) -> Result<Decimal, String> {
    let text = raw.get().trim();
    let inner = if let Some(s) = text.strip_prefix('"').and_then(|t| t.strip_suffix('"')) {
        s
    } else if text.contains(['e', 'E']) {
        return Decimal::from_scientific(text).map_err(|_| format!("`{text}` is out of range"));
    } else {
        // A JSON number (the parser has checked its grammar): read it directly, with
        // the same limits as deal files.
        let value =
            Decimal::from_str_exact(text).map_err(|_| format!("`{text}` is out of range"))?;
        if value.abs() > Decimal::from(MAX_AMOUNT) || value.scale() > MAX_SCALE {
            return parse_decimal(text).map_err(|e| e.message);
        }
        return Ok(value);
    };
    parse_decimal(inner).map_err(|e| e.message)
}

fn exact_rate(raw: &RawValue) -> Result<Decimal, String> {
    let text = raw.get().trim();
    let inner = text
        .strip_prefix('"')
        .and_then(|t| t.strip_suffix('"'))
        .unwrap_or(text);
    let r = parse_rate(inner).map_err(|e| e.message)?;
    if r <= -Decimal::ONE {
        return Err(format!("`{inner}` is not above -100%"));
    }
    Ok(r)
}

fn frequency(name: &str) -> Option<Frequency> {
    Frequency::ALL.into_iter().find(|f| f.as_str() == name)
}

/// The series of a line; `amounts`, when given, were read ahead by [`split_amounts`].
fn flows_of(line: &Line<'_>, amounts: Option<Vec<Decimal>>) -> Result<Flows, LineError> {
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
                return Err((
                    "too-many-flows",
                    format!("{} flows; at most {MAX_FLOWS}", amounts.len()),
                ));
            }
            Ok(Flows::periodic(amounts, freq.per_year()))
        }
        (None, Some(dated)) => {
            let name = line.day_count.as_deref().unwrap_or("act/365f");
            let dc = DayCount::parse(name).ok_or((
                "unknown-value",
                format!("`day_count: {name}` is not one of act/365f, act/360, act/act-isda, 30/360, 30e/360, 30e/360-isda"),
            ))?;
            if dated.len() > MAX_FLOWS {
                return Err((
                    "too-many-flows",
                    format!("{} flows; at most {MAX_FLOWS}", dated.len()),
                ));
            }
            let mut entries = Vec::with_capacity(dated.len());
            for (i, f) in dated.iter().enumerate() {
                let date =
                    chrono::NaiveDate::parse_from_str(&f.date, "%Y-%m-%d").map_err(|_| {
                        (
                            "bad-date",
                            format!("dated[{i}].date: `{}` is not a date (YYYY-MM-DD)", f.date),
                        )
                    })?;
                let amount = exact_decimal(f.amount)
                    .map_err(|m| ("bad-number", format!("dated[{i}].amount: {m}")))?;
                entries.push((date, amount));
            }
            let first = entries.iter().map(|e| e.0).min();
            let last = entries.iter().map(|e| e.0).max();
            let points = entries
                .into_iter()
                .map(|(date, amount)| FlowPoint {
                    offset: first.map_or(0, |f| dc.units_in_series(f, date, last)),
                    amount,
                    date: Some(date),
                    period: None,
                    note: None,
                })
                .collect();
            Ok(Flows {
                points,
                units_per_year: dc.units_per_year(),
                periods_per_year: None,
            })
        }
    }
}

/// Screens one line; always returns one JSON object.
pub fn screen_line(text: &str, index: usize) -> Value {
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
            let id = serde_json::from_str::<Value>(text)
                .ok()
                .and_then(|v| v.get("id").cloned())
                .unwrap_or(json!(format!("line {}", index + 1)));
            return json!({"id": id, "error": {"code": "bad-line", "message": e.to_string()}});
        }
    };
    let id: Value = line
        .id
        .and_then(|r| serde_json::from_str(r.get()).ok())
        .unwrap_or(json!(format!("line {}", index + 1)));
    match screen(&line, amounts) {
        Ok(mut v) => {
            if let Value::Object(map) = &mut v {
                map.insert("id".into(), id);
                // Keep `id` first for readers of the raw lines.
                let mut ordered = serde_json::Map::new();
                ordered.insert("id".into(), map.remove("id").unwrap_or(Value::Null));
                ordered.extend(std::mem::take(map));
                return Value::Object(ordered);
            }
            v
        }
        Err((code, message)) => json!({"id": id, "error": {"code": code, "message": message}}),
    }
}

fn screen(line: &Line<'_>, amounts: Option<Vec<Decimal>>) -> Result<Value, LineError> {
    let flows = flows_of(line, amounts)?.into_normalised();
    let hurdle = line
        .hurdle_rate
        .map(exact_rate)
        .transpose()
        .map_err(|m| ("rate-range", format!("hurdle_rate: {m}")))?;
    let finance = line
        .finance_rate
        .map(exact_rate)
        .transpose()
        .map_err(|m| ("rate-range", format!("finance_rate: {m}")))?
        .or(hurdle);
    let reinvest = line
        .reinvestment_rate
        .map(exact_rate)
        .transpose()
        .map_err(|m| ("rate-range", format!("reinvestment_rate: {m}")))?
        .or(hurdle);
    if flows.points.is_empty() {
        return Err(("all-zero-flows", "every flow is zero".into()));
    }
    let report = engine::irr::irr_report(&flows, hurdle.and_then(|h| h.to_f64()), false);
    let roots: Vec<Value> = report
        .roots
        .iter()
        .map(|r| {
            let mut o = json!({
                "annual_rate": r.annual_rate,
                "periodic_rate": r.periodic_rate,
                "log10_annual_growth": r.log10_annual_growth,
                "multiplicity": r.multiplicity,
                "interval": r.interval,
                "log10_interval": r.log10_interval,
                "balance_kind": r.balance_kind,
            });
            if hurdle.is_some() {
                o["stance"] = json!(r.stance);
            }
            o
        })
        .collect();
    let mut out = json!({
        "count": report.count,
        "upper_bound": report.upper_bound,
        "certified": report.certified,
        "roots": roots,
    });
    if !report.unresolved.is_empty() {
        out["unresolved"] = json!(report.unresolved);
    }
    if let Some(h) = hurdle {
        out["npv_at_hurdle"] = json!(engine::figures::npv_exact(&flows, h).map(|v| v.to_string()));
        let (f, g) = (
            finance.and_then(|x| x.to_f64()),
            reinvest.and_then(|x| x.to_f64()),
        );
        out["mirr"] = json!(match (f, g) {
            (Some(f), Some(g)) => engine::figures::mirr(&flows, f, g),
            _ => None,
        });
    }
    Ok(out)
}

/// Screens every line of a JSONL text (blank lines skipped) in parallel and returns
/// the output lines in input order.
pub fn screen_all(text: &str) -> Vec<String> {
    let lines: Vec<(usize, &str)> = text
        .lines()
        .enumerate()
        .filter(|(_, l)| !l.trim().is_empty())
        .collect();
    lines
        .par_iter()
        .map(|(i, l)| screen_line(l, *i).to_string())
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use rust_decimal_macros::dec;

    #[test]
    fn plain_numbers_follow_the_json_grammar() {
        // RFC 8259 section 6: no leading zeros, digits on both sides of a point.
        assert_eq!(
            plain_numbers(b" -1.50, 0, 2\n,\t0.25 "),
            Some(vec![dec!(-1.50), dec!(0), dec!(2), dec!(0.25)])
        );
        assert_eq!(plain_numbers(b""), Some(vec![]));
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
            assert_eq!(plain_numbers(bad), None, "{}", String::from_utf8_lossy(bad));
        }
        // Beyond the deal-file limits: left to the general reader, which words the error.
        assert_eq!(plain_numbers(b"1000000000000000.01"), None);
        assert_eq!(plain_numbers(b"1.0000001"), None);
        assert_eq!(plain_numbers(b"1000000000000000"), Some(vec![dec!(1e15)]));
        // Mantissas past 2^64 (16 digits before the point, 6 after) are read exactly.
        assert_eq!(
            plain_numbers(b"-999999999999999.999999, 1000000000000000.000000, 0.000001"),
            Some(vec![
                dec!(-999999999999999.999999),
                dec!(1000000000000000.000000),
                dec!(0.000001)
            ])
        );
        assert_eq!(plain_numbers(b"1000000000000000.000001"), None);
        assert_eq!(plain_numbers(b"9999999999999999999"), None);
        assert_eq!(plain_numbers(b"99999999999999999.5"), None);
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
                        Ok(v) => v.get("roots").cloned().unwrap_or(Value::Null),
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
}
