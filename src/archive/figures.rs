//! Comparing a filed analysis with the analysis recomputed today, figure by figure, so
//! that a filed version still verifies after releases that reword a caution or print a
//! number with other decimals:
//!
//! - each IRR must lie inside the interval filed for it, and the filed IRR inside the
//!   interval recomputed (the intervals are proven to hold the root);
//! - money (amounts, totals, balances, the NPV) is equal to the cent, and the money
//!   multiple equal as a number (`1.25` and `1.2500` agree);
//! - other rates and figures agree to nine significant digits;
//! - counts, classifications, decisions, names, dates and caution codes are equal;
//! - sentences (`irr.method`, each caution's `title` and `text`), the NPV profile's
//!   drawing points and keys only one side has are wording and layout: a difference
//!   there is a note, not a problem.

use rust_decimal::Decimal;
use serde_json::{Map, Value};
use std::str::FromStr as _;

/// What comparing a filed analysis with a recomputed one found.
#[derive(Debug, Clone, Default, PartialEq, Eq)]
pub(crate) struct FigureComparison {
    /// Figures that differ: one sentence each, by JSON path.
    pub problems: Vec<String>,
    /// Wording and layout that differ, by JSON path.
    pub wording: Vec<String>,
}

/// Keys holding sentences: a different wording is not a different figure.
const WORDING: &[&str] = &["method", "title", "text"];
/// Keys holding money as decimal strings, compared to the cent.
const MONEY: &[&str] = &[
    "amount",
    "inflows",
    "outflows",
    "net",
    "flow",
    "balance",
    "npv_at_hurdle",
];
/// Keys whose values only draw a chart.
const DRAWING: &[&str] = &["npv_profile"];
/// Keys of a root that the interval check covers.
const ROOT_RATES: &[&str] = &[
    "annual_rate",
    "periodic_rate",
    "log10_annual_growth",
    "interval",
    "log10_interval",
];
/// Relative agreement asked of figures kept as binary floats.
const FLOAT_AGREEMENT: f64 = 1e-9;

/// Compares the filed analysis (its header keys already removed) with the recomputed
/// one, both in the JSON contract's form.
pub(crate) fn compare_figures(filed: &Value, fresh: &Value) -> FigureComparison {
    let mut out = FigureComparison::default();
    compare(String::new(), "", filed, fresh, &mut out);
    out
}

fn join(path: &str, key: &str) -> String {
    if path.is_empty() {
        key.to_string()
    } else {
        format!("{path}.{key}")
    }
}

fn shown(v: &Value) -> String {
    let t = v.to_string();
    if t.chars().count() > 80 {
        format!("{}...", t.chars().take(77).collect::<String>())
    } else {
        t
    }
}

fn differ(out: &mut FigureComparison, path: &str, a: &Value, b: &Value) {
    out.problems.push(format!(
        "{path} is {} in the file, {} when recomputed",
        shown(a),
        shown(b)
    ));
}

fn compare(path: String, key: &str, a: &Value, b: &Value, out: &mut FigureComparison) {
    if WORDING.contains(&key) {
        if a != b {
            out.wording.push(path);
        }
        return;
    }
    if DRAWING.contains(&key) {
        if !drawing_agrees(a, b) {
            out.wording.push(path);
        }
        return;
    }
    if MONEY.contains(&key) || key == "money_multiple" {
        let cents = key != "money_multiple";
        if !decimals_agree(a, b, cents) {
            differ(out, &path, a, b);
        }
        return;
    }
    match (a, b) {
        (Value::Object(x), Value::Object(y)) => objects(&path, x, y, out),
        (Value::Array(x), Value::Array(y)) => {
            if x.len() != y.len() {
                out.problems.push(format!(
                    "{path} holds {} entries in the file, {} when recomputed",
                    x.len(),
                    y.len()
                ));
                return;
            }
            if key == "cautions" {
                let codes = |v: &Vec<Value>| -> Vec<Value> {
                    v.iter()
                        .map(|c| c.get("code").cloned().unwrap_or(Value::Null))
                        .collect()
                };
                if codes(x) != codes(y) {
                    differ(out, &path, &Value::Array(codes(x)), &Value::Array(codes(y)));
                    return;
                }
            }
            for (i, (va, vb)) in x.iter().zip(y).enumerate() {
                compare(format!("{path}[{i}]"), key, va, vb, out);
            }
        }
        (Value::Number(x), Value::Number(y)) => {
            let agree = match (x.as_i64(), y.as_i64()) {
                (Some(i), Some(j)) => i == j,
                _ => floats_agree(x.as_f64(), y.as_f64()),
            };
            if !agree {
                differ(out, &path, a, b);
            }
        }
        _ if a == b => {}
        _ => differ(out, &path, a, b),
    }
}

fn objects(path: &str, x: &Map<String, Value>, y: &Map<String, Value>, out: &mut FigureComparison) {
    let is_root = x.contains_key("log10_interval") && y.contains_key("log10_interval");
    if is_root {
        root_inside_intervals(path, x, y, out);
    }
    for (k, va) in x {
        if is_root && ROOT_RATES.contains(&k.as_str()) {
            continue;
        }
        match y.get(k) {
            Some(vb) => compare(join(path, k), k, va, vb, out),
            None => out
                .wording
                .push(format!("{} (only in the file)", join(path, k))),
        }
    }
    for k in y.keys().filter(|k| !x.contains_key(*k)) {
        out.wording
            .push(format!("{} (only when recomputed)", join(path, k)));
    }
}

/// A root's rate checked against the proven intervals both ways: the annual rate when
/// both sides have it and its interval, else log10(1 + rate), which is always there.
fn root_inside_intervals(
    path: &str,
    x: &Map<String, Value>,
    y: &Map<String, Value>,
    out: &mut FigureComparison,
) {
    let pair = |m: &Map<String, Value>, rate: &str, interval: &str| {
        let r = m.get(rate).and_then(Value::as_f64)?;
        let iv = m.get(interval).and_then(Value::as_array)?;
        let lo = iv.first().and_then(Value::as_f64)?;
        let hi = iv.get(1).and_then(Value::as_f64)?;
        Some((r, lo, hi))
    };
    let (rate, interval) = match (
        pair(x, "annual_rate", "interval"),
        pair(y, "annual_rate", "interval"),
    ) {
        (Some(_), Some(_)) => ("annual_rate", "interval"),
        _ => ("log10_annual_growth", "log10_interval"),
    };
    match (pair(x, rate, interval), pair(y, rate, interval)) {
        (Some((r_old, lo_old, hi_old)), Some((r_new, lo_new, hi_new))) => {
            let inside = |r: f64, lo: f64, hi: f64| {
                let slack = FLOAT_AGREEMENT * r.abs().max(1e-300);
                lo - slack <= r && r <= hi + slack
            };
            if !inside(r_new, lo_old, hi_old) {
                out.problems.push(format!(
                    "{}: the recomputed IRR {r_new} lies outside the interval [{lo_old}, {hi_old}] \
                     filed for it",
                    join(path, rate)
                ));
            } else if !inside(r_old, lo_new, hi_new) {
                out.problems.push(format!(
                    "{}: the filed IRR {r_old} lies outside the interval [{lo_new}, {hi_new}] \
                     recomputed for it",
                    join(path, rate)
                ));
            }
        }
        _ => out.problems.push(format!(
            "{}: the IRR or its interval is missing or not a number",
            join(path, rate)
        )),
    }
}

fn floats_agree(a: Option<f64>, b: Option<f64>) -> bool {
    match (a, b) {
        (Some(a), Some(b)) => {
            a == b || (a - b).abs() <= FLOAT_AGREEMENT * a.abs().max(b.abs()).max(f64::MIN_POSITIVE)
        }
        _ => false,
    }
}

fn decimal_of(v: &Value) -> Option<Decimal> {
    match v {
        Value::String(s) => Decimal::from_str(s).ok(),
        Value::Number(n) => Decimal::from_str(&n.to_string()).ok(),
        _ => None,
    }
}

fn decimals_agree(a: &Value, b: &Value, cents: bool) -> bool {
    if a.is_null() || b.is_null() {
        return a == b;
    }
    match (decimal_of(a), decimal_of(b)) {
        (Some(x), Some(y)) if cents => x.round_dp(2) == y.round_dp(2),
        (Some(x), Some(y)) => x == y,
        _ => a == b,
    }
}

fn drawing_agrees(a: &Value, b: &Value) -> bool {
    match (a, b) {
        (Value::Array(x), Value::Array(y)) => {
            x.len() == y.len() && x.iter().zip(y).all(|(p, q)| drawing_agrees(p, q))
        }
        (Value::Object(x), Value::Object(y)) => {
            x.len() == y.len()
                && x.iter()
                    .all(|(k, v)| y.get(k).is_some_and(|w| drawing_agrees(v, w)))
        }
        (Value::Number(x), Value::Number(y)) => floats_agree(x.as_f64(), y.as_f64()),
        _ => a == b,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use serde_json::json;

    fn scenario(rate: f64, interval: [f64; 2], npv: &str, text: &str) -> Value {
        json!({"scenarios": [{
            "name": "base",
            "irr": {"count": 1, "method": "m", "roots": [{
                "annual_rate": rate, "periodic_rate": rate, "log10_annual_growth": 0.01,
                "multiplicity": 1, "interval": interval, "log10_interval": [0.0, 0.1],
                "balance_kind": "pure-investment",
                "balance_path": [{"years": 1.0, "flow": "-100", "balance": "-100.001"}]
            }]},
            "npv_at_hurdle": npv,
            "money_multiple": "1.25",
            "cautions": [{"code": "one-sign", "title": "t", "text": text}]
        }]})
    }

    #[test]
    fn wording_and_decimals_are_notes_and_figures_are_problems() {
        let filed = scenario(0.1, [0.0999, 0.1001], "10.00", "old words");
        let mut later = scenario(0.10000001, [0.09995, 0.10005], "10.000", "new words");
        later["scenarios"][0]["money_multiple"] = json!("1.250000");
        later["scenarios"][0]["irr"]["roots"][0]["balance_path"][0]["balance"] = json!("-100.00");
        let c = compare_figures(&filed, &later);
        assert!(c.problems.is_empty(), "{:?}", c.problems);
        assert_eq!(c.wording, vec!["scenarios[0].cautions[0].text".to_string()]);

        let moved = scenario(0.2, [0.1999, 0.2001], "10.00", "old words");
        let c = compare_figures(&filed, &moved);
        assert_eq!(c.problems.len(), 1, "{:?}", c.problems);
        assert!(c.problems[0].contains("lies outside the interval"));

        let cent = scenario(0.1, [0.0999, 0.1001], "10.01", "old words");
        let c = compare_figures(&filed, &cent);
        assert_eq!(
            c.problems,
            vec!["scenarios[0].npv_at_hurdle is \"10.00\" in the file, \"10.01\" when recomputed"]
        );

        let mut codes = filed.clone();
        codes["scenarios"][0]["cautions"][0]["code"] = json!("no-irr");
        assert_eq!(compare_figures(&filed, &codes).problems.len(), 1);
    }
}
