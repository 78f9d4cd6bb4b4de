//! Typesetting a house style's markup in a child process, with a budget of time and
//! memory.
//!
//! Typst has no way to stop a compilation from outside, nor to bound its memory: a
//! house style's `#for i in range(1000000000) {}` runs for minutes, and one that builds a
//! huge array takes all the memory there is. So a memo in a house style is typeset by a
//! second copy of the candor program (the child), started with [`WORKER_VARIABLE`] set
//! to its memory budget in bytes. The child caps its own address space at that budget
//! (`setrlimit(RLIMIT_AS)`), reads one request on its standard input, typesets it with
//! [`pdf::typeset_with_fonts`] and writes the PDF on its standard output, or a
//! diagnostic as JSON on its standard error with exit code [`FAILED`]. The parent kills
//! the child when the deadline passes; a child that runs out of memory dies, and the
//! parent says so. Either way nothing of the child is left running.
//!
//! The request is a sequence of frames, each a little-endian `u64` length and that many
//! bytes: the markup, the identifier, the creation time (`%Y-%m-%dT%H:%M:%S`), the number
//! of files (as decimal text), then each file's name and bytes, the number of fonts, then
//! each font's name and bytes.

use crate::diag::Diagnostic;
use crate::pdf::{self, HouseFonts, TypesetOptions};
use std::io::{Read, Write};
use std::path::Path;
use std::process::{Command, ExitCode, Stdio};
use std::time::{Duration, Instant};

/// The environment variable that makes the candor program a typesetting child; its
/// value is the memory budget in bytes. Only [`typeset_within`] sets it.
pub(crate) const WORKER_VARIABLE: &str = "CANDOR_TYPESET_CHILD";

/// The child's exit code when typesetting failed and a diagnostic was written.
pub(crate) const FAILED: u8 = 3;

/// The time and memory a house style's typesetting may take.
#[derive(Debug, Clone, Copy)]
pub struct Budget {
    /// Wall-clock time, after which the child is killed.
    pub deadline: Duration,
    /// The child's address space in bytes (the program, its stacks and its heap).
    pub memory: u64,
}

impl Budget {
    /// The budget of a house style: 30 seconds (a memo of the example deals takes under
    /// one) and 2 GiB of address space (a memo of 100,000 daily flows in a copy of the
    /// built-in style took 9 s in a debug build and passed within it).
    pub(crate) const HOUSE_STYLE: Budget = Budget {
        deadline: Duration::from_secs(30),
        memory: 2 << 30,
    };
}

/// Typesets `markup` in a child process running `program` (the candor binary, see the
/// module comment) within `budget`. `templates` names the house style's files, for the
/// diagnostic when the budget runs out.
pub fn typeset_within(
    program: &Path,
    markup: &str,
    files: &[(String, Vec<u8>)],
    fonts: &HouseFonts,
    options: &TypesetOptions,
    budget: Budget,
    templates: &[String],
) -> Result<Vec<u8>, Diagnostic> {
    let request = encode(markup, files, fonts, options);
    let mut child = Command::new(program)
        .env(WORKER_VARIABLE, budget.memory.to_string())
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .map_err(|e| Diagnostic::error("typeset", format!("cannot start the typesetter: {e}")))?;
    let (Some(mut stdin), Some(mut stdout), Some(mut stderr)) =
        (child.stdin.take(), child.stdout.take(), child.stderr.take())
    else {
        let _ = child.kill();
        let _ = child.wait();
        return Err(Diagnostic::error(
            "typeset",
            "cannot talk to the typesetter",
        ));
    };
    // Each pipe has a thread of its own, so that neither side waits on a full pipe.
    let writer = std::thread::spawn(move || {
        // A child that died early closes the pipe: its exit status tells why.
        let _ = stdin.write_all(&request);
    });
    let reader = std::thread::spawn(move || {
        let mut out = Vec::new();
        let _ = stdout.read_to_end(&mut out);
        out
    });
    let errors = std::thread::spawn(move || {
        let mut out = Vec::new();
        // At most 1 MiB of the child's messages is kept.
        let _ = (&mut stderr).take(1 << 20).read_to_end(&mut out);
        let _ = std::io::copy(&mut stderr, &mut std::io::sink());
        out
    });
    let started = Instant::now();
    let status = loop {
        match child.try_wait() {
            Ok(Some(status)) => break Some(status),
            Ok(None) if started.elapsed() >= budget.deadline => {
                let _ = child.kill();
                let _ = child.wait();
                break None;
            }
            Ok(None) => std::thread::sleep(Duration::from_millis(5)),
            Err(e) => {
                let _ = child.kill();
                let _ = child.wait();
                return Err(Diagnostic::error(
                    "typeset",
                    format!("cannot wait for the typesetter: {e}"),
                ));
            }
        }
    };
    let _ = writer.join();
    let pdf = reader.join().unwrap_or_default();
    let messages = errors.join().unwrap_or_default();
    let names = templates
        .iter()
        .map(|n| format!("`{n}`"))
        .collect::<Vec<_>>()
        .join(", ");
    let blame = |d: Diagnostic| {
        d.in_file(
            templates
                .first()
                .cloned()
                .unwrap_or_else(|| pdf::MAIN_FILE.to_string()),
        )
    };
    let Some(status) = status else {
        return Err(blame(
            Diagnostic::error(
                "typeset",
                format!(
                    "typesetting the markup of the house style ({names}) took more than {} \
                     seconds, and was stopped",
                    budget.deadline.as_secs()
                ),
            )
            .with_hint(
                "look in the house style's Typst code for a loop that never ends or does far too much work",
            ),
        ));
    };
    if status.success() {
        return Ok(pdf);
    }
    if status.code() == Some(i32::from(FAILED)) {
        if let Ok(d) = serde_json::from_slice::<Diagnostic>(&messages) {
            return Err(d);
        }
    }
    // Anything else is a child that died: out of memory (an allocation refused under
    // the cap aborts the process) or killed from outside.
    let said = String::from_utf8_lossy(&messages);
    if said.contains("memory allocation") || said.contains("out of memory") {
        return Err(blame(
            Diagnostic::error(
                "typeset",
                format!(
                    "typesetting the markup of the house style ({names}) needed more than \
                     {} MiB of memory, and was stopped",
                    budget.memory >> 20
                ),
            )
            .with_hint(
                "look in the house style's Typst code for a loop or an array that grows far too large",
            ),
        ));
    }
    Err(Diagnostic::error(
        "typeset",
        format!("the typesetter stopped without an answer ({status})"),
    ))
}

/// The child's side: when [`WORKER_VARIABLE`] is set, caps the address space, serves one
/// request from standard input and returns the exit code; `None` otherwise (the program
/// goes on as the command line says).
pub fn serve_if_asked() -> Option<ExitCode> {
    let budget = std::env::var(WORKER_VARIABLE).ok()?;
    let Ok(memory) = budget.parse::<u64>() else {
        return Some(answer(Err(Diagnostic::error(
            "typeset",
            format!("{WORKER_VARIABLE} must be a number of bytes"),
        ))));
    };
    cap_memory(memory);
    let mut request = Vec::new();
    if let Err(e) = std::io::stdin().lock().read_to_end(&mut request) {
        return Some(answer(Err(Diagnostic::error(
            "typeset",
            format!("cannot read the request: {e}"),
        ))));
    }
    let result = decode(&request).and_then(|(markup, files, fonts, options)| {
        // Typst recurses deeply on deeply nested markup; the main thread has 8 MiB.
        std::thread::Builder::new()
            .name("typeset".to_string())
            .stack_size(64 * 1024 * 1024)
            .spawn(move || pdf::typeset_with_fonts(&markup, &files, &fonts, &options))
            .map_err(|e| Diagnostic::error("typeset", format!("cannot start: {e}")))?
            .join()
            .map_err(|_| Diagnostic::error("typeset", "the typesetter failed"))?
    });
    Some(answer(result))
}

/// Writes the child's answer and gives its exit code.
fn answer(result: Result<Vec<u8>, Diagnostic>) -> ExitCode {
    match result {
        Ok(pdf) => {
            let mut out = std::io::stdout().lock();
            if out.write_all(&pdf).and_then(|()| out.flush()).is_ok() {
                ExitCode::SUCCESS
            } else {
                ExitCode::from(FAILED + 1)
            }
        }
        Err(d) => {
            let text = serde_json::to_string(&d).unwrap_or_default();
            let _ = std::io::stderr().lock().write_all(text.as_bytes());
            ExitCode::from(FAILED)
        }
    }
}

/// Caps this process's address space at `bytes` (Unix, through the `rlimit` crate's
/// safe `setrlimit`); elsewhere a no-op. A failure leaves the limit as it was.
fn cap_memory(bytes: u64) {
    #[cfg(unix)]
    let _ = rlimit::setrlimit(rlimit::Resource::AS, bytes, bytes);
    #[cfg(not(unix))]
    let _ = bytes;
}

fn frame(out: &mut Vec<u8>, bytes: &[u8]) {
    out.extend_from_slice(&(bytes.len() as u64).to_le_bytes());
    out.extend_from_slice(bytes);
}

fn encode(
    markup: &str,
    files: &[(String, Vec<u8>)],
    fonts: &HouseFonts,
    options: &TypesetOptions,
) -> Vec<u8> {
    let mut out = Vec::new();
    frame(&mut out, markup.as_bytes());
    frame(&mut out, options.ident.as_bytes());
    let created = options.created.format("%Y-%m-%dT%H:%M:%S").to_string();
    frame(&mut out, created.as_bytes());
    frame(&mut out, files.len().to_string().as_bytes());
    for (name, bytes) in files {
        frame(&mut out, name.as_bytes());
        frame(&mut out, bytes);
    }
    let fonts: Vec<(&str, &[u8])> = fonts.files().collect();
    frame(&mut out, fonts.len().to_string().as_bytes());
    for (name, bytes) in fonts {
        frame(&mut out, name.as_bytes());
        frame(&mut out, bytes);
    }
    out
}

type Request = (String, Vec<(String, Vec<u8>)>, HouseFonts, TypesetOptions);

fn decode(bytes: &[u8]) -> Result<Request, Diagnostic> {
    let bad = || Diagnostic::error("typeset", "the typesetting request is malformed");
    let mut rest = bytes;
    let mut next = || -> Result<&[u8], Diagnostic> {
        let (len, tail) = rest.split_first_chunk::<8>().ok_or_else(bad)?;
        let len = usize::try_from(u64::from_le_bytes(*len)).map_err(|_| bad())?;
        if tail.len() < len {
            return Err(bad());
        }
        let (item, tail) = tail.split_at(len);
        rest = tail;
        Ok(item)
    };
    let text = |b: &[u8]| String::from_utf8(b.to_vec()).map_err(|_| bad());
    let markup = text(next()?)?;
    let ident = text(next()?)?;
    let created = chrono::NaiveDateTime::parse_from_str(&text(next()?)?, "%Y-%m-%dT%H:%M:%S")
        .map_err(|_| bad())?;
    let count: usize = text(next()?)?.parse().map_err(|_| bad())?;
    let mut files = Vec::new();
    for _ in 0..count {
        let name = text(next()?)?;
        files.push((name, next()?.to_vec()));
    }
    let count: usize = text(next()?)?.parse().map_err(|_| bad())?;
    let mut fonts = HouseFonts::default();
    for _ in 0..count {
        let name = text(next()?)?;
        fonts
            .add(&name, next()?.to_vec())
            .map_err(|why| Diagnostic::error("typeset", why))?;
    }
    Ok((markup, files, fonts, TypesetOptions { created, ident }))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_request_reads_back_as_written() {
        let created = chrono::NaiveDate::from_ymd_opt(2027, 3, 4)
            .and_then(|d| d.and_hms_opt(5, 6, 7))
            .unwrap();
        let options = TypesetOptions {
            created,
            ident: "abc".into(),
        };
        let files = vec![
            ("/charts/a.svg".to_string(), b"<svg/>".to_vec()),
            ("/deal.yaml".to_string(), vec![0, 255, 10]),
        ];
        let bytes = encode("Hello \u{e9}.", &files, &HouseFonts::default(), &options);
        let (markup, back, fonts, opts) = decode(&bytes).unwrap();
        assert_eq!(markup, "Hello \u{e9}.");
        assert_eq!(back, files);
        assert!(fonts.is_empty());
        assert_eq!((opts.created, opts.ident), (created, "abc".to_string()));
        // Cut anywhere, the request is refused, never read past its end.
        for cut in 0..bytes.len() {
            assert!(decode(&bytes[..cut]).is_err(), "cut at {cut}");
        }
    }
}
