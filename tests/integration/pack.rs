//! `candor pack` end to end: the binary packs example deals into one PDF, read back with
//! `support::pdf` (a PDF reader independent of candor's typesetter).

use crate::support::pdf::Pdf;
use crate::support::{candor, example, s};
use std::path::{Path, PathBuf};
use std::process::Output;

fn pages(pdf: &Path) -> usize {
    Pdf::open(pdf).pages()
}

fn text(pdf: &Path) -> String {
    Pdf::open(pdf).text()
}

/// Packs the example deal files named into `out` with the title given; panics when
/// candor fails.
fn pack_examples(deals: &[&str], out: &Path, title: &str) {
    let files: Vec<PathBuf> = deals.iter().map(|f| example(f)).collect();
    let mut args: Vec<&str> = vec!["pack"];
    args.extend(files.iter().map(|f| s(f)));
    args.extend(["-o", s(out), "--title", title]);
    let run = candor(&args);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
}

const DEALS: [(&str, &str); 3] = [
    ("brannock-mill-hydro.yaml", "Brannock Mill hydro scheme"),
    ("corrie-vale-quarry.yaml", "Corrie Vale quarry"),
    ("tollgate-depot.yaml", "Tollgate Road bus depot"),
];

/// Three deals make one PDF: cover with the summary, contents, then the memos in the
/// order given, longer than any single memo.
#[test]
fn three_deals_make_one_pack() {
    let dir = tempfile::tempdir().expect("tempdir");
    let out = dir.path().join("pack.pdf");
    let deals: Vec<&str> = DEALS.iter().map(|(f, _)| *f).collect();
    pack_examples(&deals, &out, "December committee");
    let t = text(&out);
    assert!(t.contains("December committee"));
    assert!(t.contains("Summary of the deals"));
    assert!(t.contains("Real IRRs"));
    assert!(t.contains("Contents"));
    // SOURCE_DATE_EPOCH (support::EPOCH) is 2026-12-31T00:00:00Z.
    assert!(t.contains("31 December 2026"), "cover date");
    // Each deal appears in the summary, the contents, then as a memo, in order.
    let memos = t
        .find("INVESTMENT COMMIT")
        .expect("the first memo's heading");
    let mut at = memos;
    for (_, name) in DEALS {
        assert!(
            t[..memos].contains(name),
            "{name} missing from the front matter"
        );
        let found = t[at..]
            .find(name)
            .unwrap_or_else(|| panic!("{name} missing or out of order"));
        at += found + name.len();
    }
    // The cover: one row per deal with caution titles, never codes, the NPV rule apart
    // from the committee's status, and the basis of the NPVs stated.
    let cover = &t[..memos];
    for needle in [
        "Several IRRs",
        "The balance changes sign",
        "NPV rule",
        "Committee",
        "deferred",
        "own currency, rounded",
        "NPVs as at",
    ] {
        assert!(
            cover.contains(needle),
            "{needle:?} not on the cover: {cover}"
        );
    }
    for code in ["multiple-irr", "mixed-balance", "mirr-assumptions"] {
        assert!(!cover.contains(code), "the code {code} is on the cover");
    }
    let pack_pages = pages(&out);
    for (f, _) in DEALS {
        let memo = dir.path().join(format!("{f}.pdf"));
        let ex = example(f).to_string_lossy().to_string();
        let run = candor(&["memo", &ex, "-o", &memo.to_string_lossy()]);
        assert!(run.status.success());
        assert!(pack_pages > pages(&memo), "{f}");
    }
    // Every deal file and every CSV file a deal reads is attached, byte for byte.
    let attached = Pdf::open(&out).attachments();
    for f in DEALS
        .iter()
        .map(|(f, _)| *f)
        .chain(["tollgate-depot-flows.csv"])
    {
        let bytes = std::fs::read(example(f)).expect("example");
        assert!(
            attached.iter().any(|(name, b)| name == f && *b == bytes),
            "{f} not attached: {:?}",
            attached.iter().map(|a| &a.0).collect::<Vec<_>>()
        );
    }
    assert_eq!(attached.len(), DEALS.len() + 1);
}

/// The memos are typeset one by one and joined: the joined file still reads as one
/// document, with page numbers running from the cover to the last memo ("page N of
/// TOTAL" on every page), one bookmark per deal at its memo's first page, the contents
/// linking to those pages, and one output intent and one metadata stream for the
/// whole file (PDF/A-3b, ISO 19005-3: one of each in the catalog), every attachment in
/// the catalog's AF array with its relationship.
#[test]
fn a_joined_pack_reads_as_one_document() {
    let dir = tempfile::tempdir().expect("tempdir");
    let out = dir.path().join("pack.pdf");
    // A deal twice: the same memo must still get its own pages and bookmark.
    let deals: Vec<&str> = DEALS.iter().map(|(f, _)| *f).chain([DEALS[0].0]).collect();
    pack_examples(&deals, &out, "Joined");
    let pdf = Pdf::open(&out);
    pdf.check_structure();
    let total = pdf.pages();
    for p in 1..=total {
        let words = pdf.page_text(p);
        assert!(
            words.contains(&format!("page {p} of {total}")),
            "page {p} does not say so: {words}"
        );
    }
    // Where each memo starts, from its own first page.
    let starts: Vec<usize> = (1..=total)
        .filter(|&p| pdf.page_text(p).contains("INVESTMENT COMMITTEE MEMO"))
        .collect();
    assert_eq!(starts.len(), 4, "{starts:?}");
    let names: Vec<&str> = DEALS.iter().map(|(_, n)| *n).chain([DEALS[0].1]).collect();
    for (&start, name) in starts.iter().zip(&names) {
        assert!(
            pdf.page_text(start).contains(name),
            "{name} at page {start}"
        );
    }
    let deal_marks: Vec<(String, Option<usize>)> = pdf
        .outline()
        .into_iter()
        .filter(|(title, _)| names.contains(&title.as_str()))
        .collect();
    assert_eq!(
        deal_marks,
        names
            .iter()
            .zip(&starts)
            .map(|(n, &p)| (n.to_string(), Some(p)))
            .collect::<Vec<_>>()
    );
    let contents = (1..starts[0])
        .find(|&p| pdf.page_text(p).contains("Contents"))
        .expect("a contents page");
    let lines = pdf.page_text(contents);
    for (k, (name, start)) in names.iter().zip(&starts).enumerate() {
        let line = format!("{}. {name}", k + 1);
        assert!(
            lines.contains(&line),
            "{line:?} not in the contents: {lines}"
        );
        assert!(lines.contains(&format!(" {start}")), "{start}: {lines}");
    }
    // Typst writes one annotation per piece of a link's line (name, dots, number).
    let mut links = pdf.links(contents);
    links.dedup();
    assert_eq!(links, starts.iter().map(|&p| Some(p)).collect::<Vec<_>>());
    assert_eq!(pdf.catalog_array("OutputIntents").0, 1);
    let (af, related) = pdf.catalog_array("AF");
    assert_eq!(af, pdf.attachments().len());
    assert!(related, "an attachment without AFRelationship");
    let xmp = pdf.xmp();
    assert!(xmp.contains("Joined"), "{xmp}");
    assert!(xmp.contains("pdfaid:part") && xmp.contains('3'), "{xmp}");
}

fn broken_copy(dir: &Path) -> PathBuf {
    let text = std::fs::read_to_string(example("tollgate-depot.yaml")).expect("read");
    let path = dir.join("broken-deal.yaml");
    std::fs::write(&path, text.replacen("name:", "nmae:", 1)).expect("write");
    path
}

/// Packs the example `good` and a broken copy of another deal into `dir/pack.pdf`.
fn pack_with_a_broken_deal(dir: &Path, good: &str, more: &[&str]) -> (Output, PathBuf) {
    let broken = broken_copy(dir);
    let out = dir.join("pack.pdf");
    let good = example(good);
    let mut args = vec!["pack", s(&good), s(&broken), "-o", s(&out)];
    args.extend(more);
    (candor(&args), out)
}

/// With an invalid deal and no `--skip-invalid`, nothing is written and the exit is 1.
#[test]
fn an_invalid_deal_stops_the_pack() {
    let dir = tempfile::tempdir().expect("tempdir");
    let (run, out) = pack_with_a_broken_deal(dir.path(), DEALS[0].0, &[]);
    assert_eq!(run.status.code(), Some(1));
    assert!(!out.exists());
    let err = String::from_utf8_lossy(&run.stderr);
    assert!(err.contains("broken-deal.yaml"), "{err}");
    // Nothing else is left in the folder either (no temporary file).
    let left: Vec<_> = std::fs::read_dir(dir.path()).expect("dir").collect();
    assert_eq!(left.len(), 1);
}

/// `--skip-invalid` packs the valid deals and names the skipped file on the cover.
#[test]
fn skip_invalid_names_the_skipped_file() {
    let dir = tempfile::tempdir().expect("tempdir");
    let (run, out) = pack_with_a_broken_deal(dir.path(), DEALS[1].0, &["--skip-invalid"]);
    assert!(
        run.status.success(),
        "{}",
        String::from_utf8_lossy(&run.stderr)
    );
    let t = text(&out);
    assert!(t.contains("Left out of this pack"), "{t}");
    assert!(t.contains("broken-deal.yaml"));
    assert!(t.contains(DEALS[1].1));
}
