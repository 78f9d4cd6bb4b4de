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
        // A later release prints the multiple with other decimals (see `crate::release`).
        if crate::release::simulating_next_release() {
            if let Some(mut m) = s.money_multiple {
                m.rescale(m.scale() + 2);
                json["money_multiple"] = Value::String(m.to_string());
            }
        }
    }
    Ok(value)
}

/// [`analysis`] as the command prints it: pretty, with a final newline.
pub(crate) fn analysis_text(a: &Analysis) -> Result<String, serde_json::Error> {
    Ok(serde_json::to_string_pretty(&analysis(a)?)? + "\n")
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::engine::{analyse_scenario, Flows};
    use crate::model::Rates;
    use rust_decimal::Decimal;

    /// The keys of a JSON object, in order.
    fn keys(v: &Value) -> Vec<&str> {
        v.as_object()
            .expect("object")
            .keys()
            .map(|k| k.as_str())
            .collect()
    }

    #[test]
    fn the_contract_states_words_where_the_engine_keeps_facts() {
        // The pump of Lorie and Savage (1955) [flows from memory]: -1,600, +10,000,
        // -10,000 a year apart, two IRRs (25% and 400%), so several cautions.
        let flows = Flows::periodic(
            ["-1600", "10000", "-10000"]
                .iter()
                .map(|a| a.parse::<Decimal>().expect("amount")),
            1,
        );
        let tenth = Decimal::new(1, 1);
        let rates = Rates {
            hurdle: tenth,
            finance: tenth,
            reinvestment: tenth,
        };
        let a = Analysis {
            deal: "pump".to_string(),
            currency: "EUR".to_string(),
            units: None,
            basis: None,
            scenarios: vec![analyse_scenario("base", &flows, &rates)],
        };
        let v = analysis(&a).expect("json");
        let s = &v["scenarios"][0];
        // docs/design.md: the scenario's keys in their order, `cautions` last.
        let scenario_keys = keys(s);
        assert_eq!(scenario_keys.first(), Some(&"name"));
        assert_eq!(scenario_keys.last(), Some(&"cautions"));
        let irr_keys = keys(&s["irr"]);
        assert_eq!(
            irr_keys,
            [
                "count",
                "upper_bound",
                "certified",
                "bounds",
                "method",
                "roots",
                "unresolved",
                "complex_reading"
            ]
        );
        assert_eq!(
            s["irr"]["method"].as_str(),
            Some(certificate::sentence(&a.scenarios[0].irr.certificate).as_str())
        );
        let cautions = s["cautions"].as_array().expect("cautions");
        assert!(!cautions.is_empty());
        for (c, fact) in cautions.iter().zip(&a.scenarios[0].cautions) {
            assert_eq!(keys(c), ["code", "title", "text"]);
            assert_eq!(c["code"].as_str(), Some(fact.code()));
        }
        assert_eq!(cautions[0]["code"], "multiple-irr");
        assert!(cautions[0]["text"]
            .as_str()
            .expect("text")
            .contains("25.00% and 400.00%"));
        assert!(analysis_text(&a).expect("text").ends_with("}\n"));
    }
}
