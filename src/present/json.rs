//! The JSON contract of `rates --json` (docs/design.md): the engine's analysis as it
//! serialises, with the facts that the contract states in words (the certificate of
//! each count, `irr.method`, and each caution's `title` and `text`) written out here.

use super::{caution_text_list, certificate};
use crate::engine::Analysis;
use serde_json::Value;

/// The analysis as the JSON contract states it.
pub fn analysis(a: &Analysis) -> Result<Value, serde_json::Error> {
    let mut value = serde_json::to_value(a)?;
    let scenarios = value
        .get_mut("scenarios")
        .and_then(Value::as_array_mut)
        .into_iter()
        .flatten();
    for (json, s) in scenarios.zip(&a.scenarios) {
        // (The keys keep their places: serde_json keeps insertion order, and these
        // replace values in place.)
        if let Some(irr) = json.get_mut("irr") {
            irr["method"] = Value::String(certificate::sentence(&s.irr.certificate));
        }
        json["cautions"] = serde_json::to_value(caution_text_list(s, &a.currency))?;
    }
    Ok(value)
}

/// [`analysis`] as the command prints it: pretty, with a final newline.
pub fn analysis_text(a: &Analysis) -> Result<String, serde_json::Error> {
    Ok(serde_json::to_string_pretty(&analysis(a)?)? + "\n")
}
