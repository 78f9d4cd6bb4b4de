//! A JSON Schema (draft 2020-12) of deal files, for YAML editors that complete and
//! check fields as the analyst types.
//!
//! The schema is written by hand as a `serde_json` value rather than derived from
//! types: the validator in [`crate::model::validate`] walks a positioned YAML tree, not
//! serde types, so there is nothing to derive it from. To keep the two in step, the
//! word lists come from the model where it exports them (currencies, day counts,
//! frequencies) and the tests check the schema against the validator's verdict on the
//! example deals and the malformed fixtures.
//!
//! The validator stays the judge: the schema describes the shape of a file after a YAML
//! reader turns it into JSON (a date or `8%` is a string, `0.08` a number), so it
//! cannot see limits such as six decimal places or an amount's size.

use crate::model::values::{CURRENCIES, MAX_RATE};
use crate::model::{DayCount, Frequency, MAX_FLOWS};
use serde_json::{json, Value};

/// Decisions a sign-off may record, as the validator accepts them.
pub(crate) const DECISIONS: &[&str] = &["pending", "approved", "declined", "deferred"];

/// Largest shift of inflows accepted, in periods or days.
const MAX_SHIFT: i64 = 100_000;

/// A word the validator accepts in any letter case, surrounding spaces ignored: the
/// canonical spellings are offered for completion, the pattern accepts the rest.
fn word(words: &[&str], description: &str) -> Value {
    let alternatives: Vec<String> = words
        .iter()
        .map(|w| {
            w.chars()
                .map(|c| {
                    if c.is_ascii_alphabetic() {
                        format!("[{}{}]", c.to_ascii_lowercase(), c.to_ascii_uppercase())
                    } else if c.is_ascii_alphanumeric() {
                        c.to_string()
                    } else {
                        format!("\\{c}")
                    }
                })
                .collect()
        })
        .collect();
    json!({
        "description": description,
        "anyOf": [
            { "enum": words },
            { "type": "string", "pattern": format!("^\\s*(?:{})\\s*$", alternatives.join("|")) }
        ]
    })
}

/// An optional field: an empty value (`key:` with nothing after it) counts as absent.
fn optional(schema: Value) -> Value {
    json!({ "anyOf": [schema, { "type": "null" }] })
}

/// The JSON Schema of a deal file: version 1 or version 2, each under `$defs`.
pub fn deal_schema() -> Value {
    let mut one = version_one();
    let defs = one
        .as_object_mut()
        .and_then(|o| o.remove("$defs"))
        .unwrap_or_else(|| json!({}));
    if let Some(o) = one.as_object_mut() {
        o.remove("$schema");
    }
    let two = version_two(&one);
    let mut defs = defs;
    defs["version_1"] = one;
    defs["version_2"] = two;
    for (name, def) in lines_defs() {
        defs[name] = def;
    }
    json!({
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "title": "candor deal file, version 1 or 2",
        "description": "A deal's cash-flow forecast for candor. `candor check` is the final word on validity.",
        "type": "object",
        "oneOf": [
            { "$ref": "#/$defs/version_1" },
            { "$ref": "#/$defs/version_2" }
        ],
        "$defs": defs
    })
}

/// The schema of a version 1 deal file (its `$defs` shared with version 2).
fn version_one() -> Value {
    let frequencies: Vec<&str> = Frequency::ALL.iter().map(|f| f.as_str()).collect();
    let day_counts: Vec<&str> = DayCount::ALL.iter().map(|d| d.as_str()).collect();
    let decimal = "^\\s*[+-]?[0-9]+(\\.[0-9]+)?\\s*$";
    json!({
        "$schema": "https://json-schema.org/draft/2020-12/schema",
        "title": "candor deal file, version 1",
        "description": "A deal's cash-flow forecast for candor. `candor check` is the final word on validity.",
        "type": "object",
        "required": ["candor", "deal", "hurdle_rate", "cash_flows"],
        "additionalProperties": false,
        "properties": {
            "candor": {
                "description": "Format version; must be 1.",
                "enum": [1, "1"]
            },
            "deal": {
                "type": "object",
                "required": ["name", "currency", "as_of"],
                "additionalProperties": false,
                "properties": {
                    "name": {
                        "description": "The deal's name, shown on the memo.",
                        "anyOf": [
                            { "type": "string", "pattern": "\\S" },
                            { "type": ["number", "boolean"] }
                        ]
                    },
                    "currency": {
                        "description": "Current ISO 4217 code, in capitals.",
                        "enum": CURRENCIES
                    },
                    "as_of": { "$ref": "#/$defs/date", "description": "The date of the forecast." },
                    "id": {
                        "description": "Optional stable name of the deal's archive folder (default: the deal file's name): letters and digits, with - _ . between them.",
                        "type": "string",
                        "minLength": 1,
                        "maxLength": 64
                    }
                }
            },
            "hurdle_rate": { "$ref": "#/$defs/rate", "description": "Annual rate the committee requires." },
            "finance_rate": optional(json!({ "$ref": "#/$defs/rate", "description": "Annual cost of money borrowed (MIRR); default: hurdle_rate." })),
            "reinvestment_rate": optional(json!({ "$ref": "#/$defs/rate", "description": "Annual return on money paid back early (MIRR); default: hurdle_rate." })),
            "cash_flows": { "$ref": "#/$defs/cash_flows" },
            "scenarios": optional(json!({
                "description": "Named changes to the base case, kept in file order.",
                "type": "object",
                "propertyNames": { "not": { "const": "base" }, "pattern": "\\S" },
                "additionalProperties": { "$ref": "#/$defs/scenario" }
            })),
            "memo": optional(json!({
                "type": "object",
                "additionalProperties": false,
                "properties": {
                    "recommendation": optional(json!({ "$ref": "#/$defs/text" })),
                    "summary": optional(json!({ "$ref": "#/$defs/text" })),
                    "risks": optional(json!({ "type": "array", "items": { "$ref": "#/$defs/text" } })),
                    "sections": optional(json!({
                        "type": "array",
                        "items": {
                            "type": "object",
                            "required": ["title", "text"],
                            "additionalProperties": false,
                            "properties": {
                                "title": { "$ref": "#/$defs/text" },
                                "text": { "$ref": "#/$defs/text" }
                            }
                        }
                    }))
                }
            })),
            "sensitivity": optional(json!({
                "description": "How the sensitivity is studied; each setting left out takes its default.",
                "type": "object",
                "additionalProperties": false,
                "properties": {
                    "steps": optional(json!({
                        "description": "Moves of each line and of the hurdle rate, such as [-20%, -10%, 10%, 20%] (the default): 1 to 12, none zero, above -100%, at most 1000%.",
                        "type": "array",
                        "minItems": 1,
                        "maxItems": 12,
                        "items": { "$ref": "#/$defs/rate" }
                    })),
                    "factor_range": optional(json!({
                        "description": "The factors over which the number of IRRs is mapped, lowest first; default [0, 3].",
                        "type": "array",
                        "minItems": 2,
                        "maxItems": 2,
                        "items": { "type": ["number", "string"] }
                    })),
                    "table_line": optional(json!({
                        "description": "The line of the two-way table (`inflows` or `outflows` in version 1); default the line with the largest swing.",
                        "type": "string"
                    }))
                }
            })),
            "signoff": optional(json!({
                "type": "object",
                "additionalProperties": false,
                "properties": {
                    "prepared_by": optional(json!({ "$ref": "#/$defs/text" })),
                    "reviewed_by": optional(json!({ "$ref": "#/$defs/text" })),
                    "decision": optional(word(DECISIONS, "Default: pending.")),
                    "date": optional(json!({ "$ref": "#/$defs/date" }))
                }
            }))
        },
        "$defs": {
            "text": {
                "description": "Text; quote it when it contains `: ` or ` #`.",
                "type": ["string", "number", "boolean"]
            },
            "date": {
                "description": "A calendar date, YYYY-MM-DD.",
                "type": "string",
                "pattern": "^\\s*[0-9]{4}-[0-9]{2}-[0-9]{2}\\s*$"
            },
            "rate": {
                "description": format!("Annual effective rate: 8%, \"8.25%\" or 0.08; above -100% and at most {}%. A rate of 100% or more needs the percent sign (9 would mean 900%).", MAX_RATE * 100),
                "anyOf": [
                    { "type": "number", "exclusiveMinimum": -1, "exclusiveMaximum": 1 },
                    { "type": "string", "pattern": "^\\s*[+-]?[0-9]+(\\.[0-9]+)?\\s*%\\s*$" },
                    { "type": "string", "pattern": "^\\s*[+-]?0+(\\.[0-9]+)?\\s*$" }
                ]
            },
            "amount": {
                "description": "Exact decimal, negative when paid by the investor; at most 6 decimal places.",
                "anyOf": [
                    { "type": "number" },
                    { "type": "string", "pattern": decimal }
                ]
            },
            "factor": {
                "description": "A multiplier of 0 or more: 0.85 is 15% less.",
                "anyOf": [
                    { "type": "number", "minimum": 0 },
                    { "type": "string", "pattern": "^\\s*\\+?[0-9]+(\\.[0-9]+)?\\s*$" }
                ]
            },
            "shift": {
                "description": "Whole number of periods (dated flows: days); negative moves earlier.",
                "anyOf": [
                    { "type": "integer", "minimum": -MAX_SHIFT, "maximum": MAX_SHIFT },
                    { "type": "string", "pattern": "^\\s*[+-]?[0-9]+\\s*$" }
                ]
            },
            "every": word(&frequencies, "Period length of periodic flows."),
            "day_count": word(&day_counts, "ISDA 2006 day count that turns dates into years."),
            "cash_flows": cash_flows_schema(),
            "scenario": {
                "description": "Changes to the base case.",
                "type": "object",
                "additionalProperties": false,
                "properties": {
                    "label": optional(json!({ "$ref": "#/$defs/text", "description": "A short name for print." })),
                    "description": optional(json!({ "$ref": "#/$defs/text" })),
                    "inflows_factor": optional(json!({ "$ref": "#/$defs/factor", "description": "Multiplies every positive flow; default 1." })),
                    "outflows_factor": optional(json!({ "$ref": "#/$defs/factor", "description": "Multiplies every negative flow; default 1." })),
                    "shift_inflows": optional(json!({ "$ref": "#/$defs/shift", "description": "Moves every positive flow later; default 0." })),
                    "cash_flows": optional(json!({ "$ref": "#/$defs/cash_flows", "description": "Replaces the flows; same every or day_count as the base case." }))
                }
            }
        }
    })
}

/// The schema of a version 2 deal file: the version 1 header, rates, memo and
/// sign-off, with `timing`, `horizon` and `lines` in place of `cash_flows`.
fn version_two(one: &Value) -> Value {
    let p = &one["properties"];
    let mut deal = p["deal"].clone();
    deal["properties"]["units"] = optional(word(
        &crate::model::Units::WORDS,
        "The unit of every amount in the file; default ones.",
    ));
    deal["properties"]["basis"] = optional(json!({
        "description": "The basis of the amounts and rates, printed in the memo.",
        "type": "object",
        "additionalProperties": false,
        "properties": {
            "prices": optional(word(&crate::model::lines::Prices::WORDS, "Nominal or real amounts.")),
            "tax": optional(word(&crate::model::lines::Tax::WORDS, "Amounts before or after tax.")),
            "rates": optional(word(&crate::model::lines::Prices::WORDS, "Whether the rates are nominal or real."))
        }
    }));
    json!({
        "title": "version 2: named cash-flow lines",
        "type": "object",
        "required": ["candor", "deal", "hurdle_rate", "timing", "lines"],
        "additionalProperties": false,
        "properties": {
            "candor": { "description": "Format version 2.", "enum": [2, "2"] },
            "deal": deal,
            "hurdle_rate": p["hurdle_rate"].clone(),
            "finance_rate": p["finance_rate"].clone(),
            "reinvestment_rate": p["reinvestment_rate"].clone(),
            "timing": {
                "description": "One amount a period (`every`, optional `start`) or dated amounts (`day_count`).",
                "type": "object",
                "additionalProperties": false,
                "properties": {
                    "every": { "$ref": "#/$defs/every" },
                    "start": optional(json!({ "$ref": "#/$defs/date" })),
                    "day_count": { "$ref": "#/$defs/day_count" }
                },
                "oneOf": [
                    { "required": ["every"], "not": { "required": ["day_count"] } },
                    { "required": ["day_count"], "not": { "anyOf": [{ "required": ["every"] }, { "required": ["start"] }] } }
                ]
            },
            "horizon": optional(json!({
                "description": "The deal's last period (or date, on dated timing); default: the base case's last flow.",
                "anyOf": [{ "$ref": "#/$defs/period" }, { "$ref": "#/$defs/date" }]
            })),
            "lines": {
                "description": "Named cash-flow lines; the net flow at each time is their sum.",
                "type": "object",
                "minProperties": 1,
                "propertyNames": { "$ref": "#/$defs/line_key" },
                "additionalProperties": { "$ref": "#/$defs/line" }
            },
            "scenarios": optional(json!({
                "description": "Named changes to the base case, kept in file order.",
                "type": "object",
                "propertyNames": { "not": { "const": "base" }, "pattern": "\\S" },
                "additionalProperties": { "$ref": "#/$defs/line_scenario" }
            })),
            "memo": p["memo"].clone(),
            "signoff": p["signoff"].clone(),
            "sensitivity": p["sensitivity"].clone()
        }
    })
}

/// The `$defs` of version 2's lines and scenarios.
fn lines_defs() -> Vec<(&'static str, Value)> {
    let time = json!({ "anyOf": [{ "$ref": "#/$defs/period" }, { "$ref": "#/$defs/date" }] });
    let keyed = |what: &str, of: Value| {
        json!({
            "description": what,
            "type": "object",
            "propertyNames": { "$ref": "#/$defs/line_key" },
            "additionalProperties": of
        })
    };
    vec![
        (
            "period",
            json!({
                "description": "A period number from 0.",
                "anyOf": [
                    { "type": "integer", "minimum": 0, "maximum": MAX_SHIFT },
                    { "type": "string", "pattern": "^\\s*\\+?[0-9]+\\s*$" }
                ]
            }),
        ),
        (
            "line_key",
            json!({
                "description": "A line's key: letters, digits, `_` or `-`.",
                "type": "string",
                "pattern": "^[\\p{L}\\p{N}_-]{1,64}$"
            }),
        ),
        (
            "line",
            json!({
                "description": "A cash-flow line: a label, an optional note, and its amounts in one form.",
                "type": "object",
                "additionalProperties": false,
                "properties": {
                    "label": optional(json!({ "$ref": "#/$defs/text", "description": "For print; default: the key." })),
                    "note": optional(json!({ "$ref": "#/$defs/text" })),
                    "amounts": { "type": "array", "minItems": 1, "maxItems": MAX_FLOWS, "items": { "$ref": "#/$defs/amount" }, "description": "One amount a period from period `from`." },
                    "from": optional(json!({ "$ref": "#/$defs/period", "description": "The period of the first amount; default 0." })),
                    "dated": { "$ref": "#/$defs/cash_flows/properties/dated" },
                    "csv": { "$ref": "#/$defs/text", "description": "CSV file whose first column is `period` or `date`." },
                    "column": { "$ref": "#/$defs/text", "description": "The CSV column holding this line's amounts." },
                    "stream": { "$ref": "#/$defs/stream" },
                    "terminal": { "$ref": "#/$defs/terminal" }
                },
                "oneOf": [
                    { "required": ["amounts"] },
                    { "required": ["dated"] },
                    { "required": ["csv", "column"] },
                    { "required": ["stream"] },
                    { "required": ["terminal"] }
                ]
            }),
        ),
        (
            "stream",
            json!({
                "description": "Amounts generated from their drivers, one a period.",
                "type": "object",
                "additionalProperties": false,
                "properties": {
                    "first": { "$ref": "#/$defs/amount" },
                    "start": time.clone(),
                    "periods": { "type": "integer", "minimum": 1, "maximum": MAX_FLOWS },
                    "end": time.clone(),
                    "growth": optional(json!({ "$ref": "#/$defs/rate" })),
                    "growth_per": optional(word(&crate::model::lines::GrowthStep::WORDS, "When growth applies; default year.")),
                    "ramp": optional(json!({ "type": "array", "items": { "$ref": "#/$defs/rate" }, "description": "Fractions of the first amounts, such as [25%, 60%]." })),
                    "every": { "$ref": "#/$defs/every" }
                }
            }),
        ),
        (
            "terminal",
            json!({
                "description": "A terminal value: next_flow / (discount - growth), at period or date `at`.",
                "type": "object",
                "additionalProperties": false,
                "properties": {
                    "at": time,
                    "next_flow": { "$ref": "#/$defs/amount" },
                    "growth": { "$ref": "#/$defs/rate" },
                    "discount": { "$ref": "#/$defs/rate" }
                }
            }),
        ),
        (
            "line_change",
            json!({
                "description": "Fields of a line that a scenario replaces.",
                "type": "object",
                "additionalProperties": false,
                "properties": {
                    "label": optional(json!({ "$ref": "#/$defs/text" })),
                    "note": optional(json!({ "$ref": "#/$defs/text" })),
                    "amounts": { "type": "array", "items": { "$ref": "#/$defs/amount" } },
                    "from": { "$ref": "#/$defs/period" },
                    "dated": { "$ref": "#/$defs/cash_flows/properties/dated" },
                    "csv": { "$ref": "#/$defs/text" },
                    "column": { "$ref": "#/$defs/text" },
                    "stream": { "type": "object" },
                    "terminal": { "type": "object" }
                }
            }),
        ),
        (
            "line_scenario",
            json!({
                "description": "Changes to the base case, any assumption by name.",
                "type": "object",
                "additionalProperties": false,
                "properties": {
                    "label": optional(json!({ "$ref": "#/$defs/text" })),
                    "description": optional(json!({ "$ref": "#/$defs/text" })),
                    "hurdle_rate": optional(json!({ "$ref": "#/$defs/rate" })),
                    "finance_rate": optional(json!({ "$ref": "#/$defs/rate" })),
                    "reinvestment_rate": optional(json!({ "$ref": "#/$defs/rate" })),
                    "factors": optional(keyed("A factor on one line or several.", json!({ "$ref": "#/$defs/factor" }))),
                    "shift": optional(keyed("Moves a line by whole periods (dated timing: days).", json!({ "$ref": "#/$defs/shift" }))),
                    "change": optional(keyed("Replaces fields of a line.", json!({ "$ref": "#/$defs/line_change" }))),
                    "add": optional(keyed("New lines.", json!({ "$ref": "#/$defs/line" }))),
                    "drop": optional(json!({ "type": "array", "items": { "$ref": "#/$defs/line_key" } })),
                    "inflows_factor": optional(json!({ "$ref": "#/$defs/factor" })),
                    "outflows_factor": optional(json!({ "$ref": "#/$defs/factor" })),
                    "shift_inflows": optional(json!({ "$ref": "#/$defs/shift" })),
                    "extend_horizon": optional(json!({ "type": "boolean", "description": "Lets the scenario's lines run past the horizon." }))
                }
            }),
        ),
    ]
}

/// The `cash_flows` block in its four forms: periodic, dated, and either from a CSV file.
fn cash_flows_schema() -> Value {
    json!({
        "description": "Periodic (every + amounts), dated (day_count + dated), or from a CSV file (csv + every or day_count).",
        "type": "object",
        "additionalProperties": false,
        "properties": {
            "every": { "$ref": "#/$defs/every" },
            "start": optional(json!({ "$ref": "#/$defs/date", "description": "The date of period 0." })),
            "amounts": {
                "description": "One amount per period, from period 0.",
                "type": "array",
                "minItems": 1,
                "maxItems": MAX_FLOWS,
                "items": { "$ref": "#/$defs/amount" }
            },
            "day_count": { "$ref": "#/$defs/day_count" },
            "dated": {
                "description": "Flows in any order; flows on one date are netted.",
                "type": "array",
                "minItems": 1,
                "maxItems": MAX_FLOWS,
                "items": {
                    "type": "object",
                    "required": ["date", "amount"],
                    "additionalProperties": false,
                    "properties": {
                        "date": { "$ref": "#/$defs/date" },
                        "amount": { "$ref": "#/$defs/amount" },
                        "note": optional(json!({ "$ref": "#/$defs/text" }))
                    }
                }
            },
            "csv": {
                "$ref": "#/$defs/text",
                "description": "CSV file of flows, relative to the deal file's folder."
            }
        },
        "oneOf": [
            {
                "title": "periodic",
                "required": ["every", "amounts"],
                "not": { "anyOf": [
                    { "required": ["day_count"] }, { "required": ["dated"] }, { "required": ["csv"] }
                ] }
            },
            {
                "title": "dated",
                "required": ["day_count", "dated"],
                "not": { "anyOf": [
                    { "required": ["every"] }, { "required": ["amounts"] },
                    { "required": ["start"] }, { "required": ["csv"] }
                ] }
            },
            {
                "title": "periodic, from a CSV file with columns period,amount[,note]",
                "required": ["csv", "every"],
                "not": { "anyOf": [
                    { "required": ["day_count"] }, { "required": ["amounts"] }, { "required": ["dated"] }
                ] }
            },
            {
                "title": "dated, from a CSV file with columns date,amount[,note]",
                "required": ["csv", "day_count"],
                "not": { "anyOf": [
                    { "required": ["every"] }, { "required": ["amounts"] }, { "required": ["dated"] }
                ] }
            }
        ]
    })
}

/// The schema as the text `candor schema` prints and `deal.schema.json` holds.
pub(crate) fn deal_schema_text() -> String {
    // serde_json keeps insertion order here (the crate's `preserve_order` feature), so
    // the text is the same from run to run.
    let mut text = serde_json::to_string_pretty(&deal_schema())
        .expect("a JSON value built in code always serialises");
    text.push('\n');
    text
}
