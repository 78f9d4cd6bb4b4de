//! Arbitrary bytes through parsing, validation, the engine, the charts and the memo's
//! markup: nothing may panic. The steps live in `../steps.rs`, shared with the
//! regression test that replays saved inputs.
#![no_main]

use libfuzzer_sys::fuzz_target;

// Each target uses its own half of the shared steps.
#[allow(dead_code)]
#[path = "../steps.rs"]
mod steps;

fuzz_target!(|data: &[u8]| {
    let _ = steps::pipeline(data);
});
