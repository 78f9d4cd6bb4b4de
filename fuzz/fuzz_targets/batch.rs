//! Arbitrary bytes as the JSONL input of `candor rates --batch`, one line at a time:
//! nothing may panic and every line must give an object naming its series. The steps
//! live in `../steps.rs`, shared with the regression test that replays saved inputs.
#![no_main]

use libfuzzer_sys::fuzz_target;

// Each target uses its own half of the shared steps.
#[allow(dead_code)]
#[path = "../steps.rs"]
mod steps;

fuzz_target!(|data: &[u8]| {
    let _ = steps::batch(data);
});
