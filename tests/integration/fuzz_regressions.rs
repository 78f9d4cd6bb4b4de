//! Inputs the fuzzer found troublesome, replayed through exactly the steps of the fuzz
//! targets (`fuzz/steps.rs`, shared by `#[path]`): each must end, without a panic, with
//! output whose size is bounded. Also checks that the fuzzer's seed corpus
//! (`fuzz/seeds/`) really reaches the stages it is meant to exercise, since a harness
//! that stops at the parser would fuzz nothing further.
//!
//! Saved inputs live in `tests/fixtures/fuzz/<target>/`; a new file is picked up by
//! being placed there.

#[path = "../../fuzz/steps.rs"]
mod steps;

use crate::support::root;
use std::path::{Path, PathBuf};
use std::sync::mpsc;
use std::time::Duration;

/// A hang is one of the bugs these inputs once showed, and a test run must not stall on
/// one: an input still running after this long fails its test. The limit is far above
/// what any input needs (the fuzzer itself allowed 10 s with optimisations), so it
/// guards against a hang coming back, and measures nothing.
const HANG_LIMIT: Duration = Duration::from_secs(120);

/// The memo's markup may grow with the input, but not without bound: a few hundred
/// bytes of layout per byte of deal file is already far more than any real memo uses.
const MARKUP_PER_INPUT_BYTE: usize = 400;
/// Markup every memo has regardless of the input (styles, headings, charts' frames).
const MARKUP_BASE: usize = 256 * 1024;

/// The files of a folder, sorted by name; an absent folder has none.
fn files_in(dir: &Path) -> Vec<PathBuf> {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return Vec::new();
    };
    let mut paths: Vec<PathBuf> = entries
        .filter_map(|e| e.ok())
        .map(|e| e.path())
        .filter(|p| p.is_file())
        .collect();
    paths.sort();
    paths
}

fn name(path: &Path) -> String {
    path.file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default()
}

/// Runs `f` on another thread and returns its result, failing when it panics or does
/// not end within [`HANG_LIMIT`].
fn finishes<T: Send + 'static>(what: &str, f: impl FnOnce() -> T + Send + 'static) -> T {
    let (tx, rx) = mpsc::channel();
    let handle = std::thread::spawn(move || {
        let _ = tx.send(f());
    });
    match rx.recv_timeout(HANG_LIMIT) {
        Ok(v) => v,
        Err(mpsc::RecvTimeoutError::Timeout) => {
            panic!("{what}: still running after {HANG_LIMIT:?}")
        }
        Err(mpsc::RecvTimeoutError::Disconnected) => {
            let cause = handle.join().err().map(|p| {
                p.downcast_ref::<String>()
                    .cloned()
                    .or_else(|| p.downcast_ref::<&str>().map(|s| s.to_string()))
                    .unwrap_or_default()
            });
            panic!("{what}: panicked: {}", cause.unwrap_or_default())
        }
    }
}

fn run_pipeline(path: &Path) -> steps::PipelineOutcome {
    let bytes = std::fs::read(path).expect("a saved input is readable");
    let len = bytes.len();
    let what = name(path);
    let out = finishes(&what, move || steps::pipeline(&bytes));
    let limit = MARKUP_BASE + MARKUP_PER_INPUT_BYTE * len;
    for (kind, size) in [("memo", out.memo_markup), ("pack body", out.body_markup)] {
        if let Some(size) = size {
            assert!(
                size <= limit,
                "{what}: {kind} markup of {size} bytes from {len} input bytes"
            );
        }
    }
    out
}

fn run_batch(path: &Path) -> (usize, Vec<String>) {
    let bytes = std::fs::read(path).expect("a saved input is readable");
    let lines = steps::batch_lines(&bytes);
    let what = name(path);
    let out = finishes(&what, move || steps::batch(&bytes));
    (lines, out)
}

/// The saved findings, and the seeds, whose markup must also stay within the bound.
#[test]
fn saved_pipeline_inputs_end_without_panic_and_bounded() {
    let mut paths = files_in(&root().join("tests/fixtures/fuzz/pipeline"));
    paths.extend(files_in(&root().join("fuzz/seeds/pipeline")));
    assert!(!paths.is_empty());
    for path in paths {
        run_pipeline(&path);
    }
}

#[test]
fn saved_batch_inputs_give_one_object_per_line() {
    let paths = files_in(&root().join("tests/fixtures/fuzz/batch"));
    assert!(!paths.is_empty());
    for path in paths {
        let (lines, out) = run_batch(&path);
        assert_eq!(out.len(), lines, "{}", name(&path));
    }
}

/// The example deals are valid, so the fuzzer starts from inputs that reach the charts
/// and both markups; the malformed fixtures each hold a mistake (their file names
/// start with its code), so they stop with diagnostics.
#[test]
fn pipeline_seeds_reach_the_stage_their_kind_allows() {
    let seeds = files_in(&root().join("fuzz/seeds/pipeline"));
    let examples: Vec<String> = files_in(&root().join("example-deals"))
        .iter()
        .map(|p| name(p))
        .filter(|n| n.ends_with(".yaml"))
        .collect();
    assert!(!examples.is_empty());
    let mut valid = 0;
    for path in &seeds {
        let seed = name(path);
        let out = run_pipeline(path);
        if examples.contains(&seed) || seed.ends_with("-with-csv.bin") {
            assert!(out.validated, "{seed}: {out:?}");
            assert!(out.scenarios >= 1, "{seed}: {out:?}");
            assert!(out.memo_markup.is_some_and(|n| n > 0), "{seed}: {out:?}");
            assert!(out.body_markup.is_some_and(|n| n > 0), "{seed}: {out:?}");
            valid += 1;
        } else if seed.contains("--") {
            assert!(!out.validated, "{seed}: {out:?}");
            assert!(out.diagnostics >= 1, "{seed}: {out:?}");
        }
    }
    // Every example deal is in the seed corpus; the one that names a CSV file is there
    // only with its companion after the separator, since alone it cannot validate.
    assert!(valid >= examples.len(), "{valid} valid seeds of {seeds:?}");
}

/// Every line of the batch seeds is screened and named; the series with several real
/// IRRs gives them all, so the seeds reach the root finder and not only the reader.
#[test]
fn batch_seeds_name_every_line_and_reach_the_root_finder() {
    let seeds = files_in(&root().join("fuzz/seeds/batch"));
    assert!(!seeds.is_empty());
    let mut roots_seen = 0;
    for path in &seeds {
        let (lines, out) = run_batch(path);
        assert_eq!(out.len(), lines, "{}", name(path));
        for line in &out {
            let v: serde_json::Value = serde_json::from_str(line).expect("one JSON object");
            if let Some(n) = v.get("count").and_then(|c| c.as_u64()) {
                roots_seen += n;
            }
        }
    }
    // The series (x - 1.1)(x - 1.2)(x - 1.3) in sign-changes.jsonl alone has three real
    // IRRs (10%, 20%, 30%; common practice: a cubic built from chosen roots).
    assert!(roots_seen >= 3, "{roots_seen} roots in all the seeds");
}

/// The batch target's findings against the fast number reader for amount lists
/// (`screen::plain_numbers`): it multiplied integers before checking their bounds.
/// Against 02d2fda (i64), a 19-digit amount and any amount with four to six decimals
/// (the limit 10^15 scaled by 10^4 or more) overflowed; against b1b6c59 (u64), amounts
/// with five or six decimals still did; 6232e3b (u128) reads them all. Where overflow
/// checks are on (debug builds, tests) that was a panic; release builds threw the
/// wrapped value away and fell back to the general reader. These lines must give what
/// the general reader gives.
#[test]
fn batch_amounts_near_the_fast_readers_limits_read_as_the_general_reader_reads() {
    let dir = root().join("tests/fixtures/fuzz/batch");
    let line = |file: &str| -> serde_json::Value {
        let (lines, out) = run_batch(&dir.join(file));
        assert_eq!((lines, out.len()), (1, 1), "{file}");
        serde_json::from_str(&out[0]).expect("one JSON object")
    };
    // 9555555555555555550 is above the limit on amounts that deal files have too
    // (MAX_AMOUNT, 10^15): the general reader's error for the first amount, with the
    // code a deal file gives it.
    let big = line("mul-overflow--nineteen-digit-amount.jsonl");
    assert_eq!(big["error"]["code"], "number-range", "{big}");
    assert!(
        big["error"]["message"]
            .as_str()
            .is_some_and(|m| m.starts_with("amounts[0]")),
        "{big}"
    );
    // 7.2400 and 0.02900 are valid amounts (four and five decimals, within the six
    // allowed); a single inflow has no sign change and so no IRR (common practice).
    let small = line("mul-overflow--four-decimals.jsonl");
    assert!(small.get("error").is_none(), "{small}");
    assert_eq!(small["count"], 0, "{small}");
    let five = line("mul-overflow--five-decimals.jsonl");
    assert!(five.get("error").is_none(), "{five}");
    assert_eq!(five["count"], 0, "{five}");
}
