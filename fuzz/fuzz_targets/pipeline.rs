//! Arbitrary bytes through parsing, validation and the engine: nothing may panic.
#![no_main]

use libfuzzer_sys::fuzz_target;

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else {
        return;
    };
    let Ok(raw) = candor::input::parse(text) else {
        return;
    };
    // CSV companions come from the same bytes, so the CSV reader is fuzzed too.
    let mut read = |_: &str| -> Result<String, String> { Ok(text.to_string()) };
    if let Ok(deal) = candor::model::validate(&raw, &mut read) {
        let analysis = candor::engine::analyse(&deal);
        let _ = serde_json::to_string(&analysis);
    }
});
