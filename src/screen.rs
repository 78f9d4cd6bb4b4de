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
    #[serde(borrow)]
    amounts: Option<Vec<&'a RawValue>>,
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
    [
        Frequency::Year,
        Frequency::HalfYear,
        Frequency::Quarter,
        Frequency::Month,
        Frequency::Week,
        Frequency::Day,
    ]
    .into_iter()
    .find(|f| f.as_str() == name)
}

fn flows_of(line: &Line<'_>) -> Result<Flows, LineError> {
    match (&line.amounts, &line.dated) {
        (Some(_), Some(_)) => Err((
            "flows-conflict",
            "give either `amounts` or `dated`, not both".into(),
        )),
        (None, None) => Err(("missing-field", "no `amounts` or `dated` flows".into())),
        (Some(amounts), None) => {
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
            let points = amounts
                .iter()
                .enumerate()
                .map(|(i, raw)| {
                    Ok(FlowPoint {
                        offset: i as i64,
                        amount: exact_decimal(raw)
                            .map_err(|m| ("bad-number", format!("amounts[{i}]: {m}")))?,
                        date: None,
                        period: Some(i as u32),
                        note: None,
                    })
                })
                .collect::<Result<Vec<_>, LineError>>()?;
            Ok(Flows {
                points,
                units_per_year: freq.per_year() as u64,
                periods_per_year: Some(freq.per_year()),
            })
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
    let line: Line<'_> = match serde_json::from_str(text) {
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
    match screen(&line) {
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

fn screen(line: &Line<'_>) -> Result<Value, LineError> {
    let flows = flows_of(line)?.normalised();
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
