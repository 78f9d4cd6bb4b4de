//! `candor memo --watch` end to end: the binary runs as a child process on a copy of an
//! example deal; an invalid save prints diagnostics and the watch goes on, a valid save
//! rebuilds the PDF. Polls with generous timeouts: a functional test, not a timing one.

use crate::support::{command, example};
use std::io::Read;
use std::path::Path;
use std::process::{Child, Stdio};
use std::sync::{Arc, Mutex};
use std::time::{Duration, Instant, SystemTime};

const TIMEOUT: Duration = Duration::from_secs(60);

/// Kills the child even when an assertion fails.
struct Killed(Child);

impl Drop for Killed {
    fn drop(&mut self) {
        let _ = self.0.kill();
        let _ = self.0.wait();
    }
}

fn wait_for(what: &str, mut done: impl FnMut() -> bool) {
    let start = Instant::now();
    while !done() {
        assert!(start.elapsed() < TIMEOUT, "timed out waiting for {what}");
        std::thread::sleep(Duration::from_millis(50));
    }
}

fn modified(path: &Path) -> Option<SystemTime> {
    std::fs::metadata(path).and_then(|m| m.modified()).ok()
}

#[test]
fn watch_reports_bad_saves_and_rebuilds_on_good_ones() {
    let dir = tempfile::tempdir().expect("tempdir");
    let original = std::fs::read_to_string(example("brannock-mill-hydro.yaml")).expect("example");
    let deal = dir.path().join("deal.yaml");
    let pdf = dir.path().join("memo.pdf");
    std::fs::write(&deal, &original).expect("write");
    let mut child = command()
        .args(["memo", "--watch", "-o"])
        .arg(&pdf)
        .arg(&deal)
        .stderr(Stdio::piped())
        .stdout(Stdio::null())
        .spawn()
        .expect("start candor");
    let mut stderr = child.stderr.take().expect("stderr");
    let _child = Killed(child);
    let log = Arc::new(Mutex::new(String::new()));
    let sink = Arc::clone(&log);
    std::thread::spawn(move || {
        let mut buf = [0u8; 4096];
        while let Ok(n) = stderr.read(&mut buf) {
            if n == 0 {
                break;
            }
            if let Ok(mut l) = sink.lock() {
                l.push_str(&String::from_utf8_lossy(&buf[..n]));
            }
        }
    });
    let logged = |needle: &str| log.lock().map(|l| l.contains(needle)).unwrap_or(false);

    wait_for("the first build", || logged("watching"));
    let first = modified(&pdf).expect("the first build wrote the memo");

    // An invalid save: a misspelt top-level key. The watch reports it and goes on.
    std::fs::write(&deal, original.replacen("name:", "nmae:", 1)).expect("write");
    wait_for("the diagnostic", || logged("nmae"));
    assert_eq!(
        modified(&pdf),
        Some(first),
        "a bad save must not touch the memo"
    );

    // A valid save with a different name rebuilds the memo.
    std::fs::write(
        &deal,
        original.replacen("name: ", "name: Watched copy of ", 1),
    )
    .expect("write");
    wait_for("the rebuilt memo", || {
        modified(&pdf).is_some_and(|t| t != first)
    });
}
