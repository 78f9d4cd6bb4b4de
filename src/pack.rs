//! `candor pack`: the memos of several deals in one PDF for a committee meeting: a
//! cover with a summary table of every deal, a linked table of contents, then each
//! deal's memo, with continuous page numbers and every deal file attached.
//!
//! The deals are loaded, analysed and charted in parallel. The memos are then typeset
//! one at a time on each core and joined into one PDF as they come (`join`), so that
//! memory follows a few memos and not the whole pack. Page numbers run across the pack:
//! a first pass counts each memo's pages (typesetting without making the PDF, its charts
//! left blank at their size), then
//! each memo is typeset with its first page number and the pack's page count, and the
//! cover last, with the contents' page numbers and links. Only the deals as read and
//! their summary rows are kept between the passes; each memo's analysis and charts are
//! made again when it is typeset.

use crate::diag::{Diagnostic, Failure, FailureClass};
use crate::engine::{self, Analysis};
use crate::files::load::{load_deal, LoadedDeal};
use crate::memo::sha256_hex;
use crate::present::{self, words, Style};
use crate::{chart, pdf, report};
use chrono::NaiveDateTime;
use rayon::prelude::*;
use serde::Serialize;
use std::collections::BTreeMap;
use std::path::PathBuf;

/// The pack's cover and summary template.
pub(crate) const PACK_TEMPLATE: (&str, &str) =
    ("pack.typ.j2", include_str!("../templates/pack.typ.j2"));

/// One deal ready to be typeset into the pack. Its analysis and charts are made again
/// for each typesetting (they are quick to make beside the typesetting, and a pack of a
/// thousand deals need not hold a thousand analyses and their charts).
#[derive(Debug, Clone)]
pub(crate) struct PackedDeal {
    /// The deal as loaded.
    pub loaded: LoadedDeal,
    /// Its row of the cover's summary.
    row: RowView,
    /// The deal file's name as the pack shows and attaches it.
    pub source_name: String,
}

/// One piece of the cover (see `templates/pack.typ.j2`).
#[derive(Debug, Serialize)]
struct PackView<'a> {
    title: &'a str,
    date: String,
    created: report::CreatedView,
    deal_count: usize,
    skipped: &'a [String],
    version: String,
    /// The number of the piece's first page in the pack.
    first_page: usize,
    /// The pack's page count.
    total: usize,
    /// The piece that opens the pack: the title, the left-out files and the summary's
    /// heading.
    first: bool,
    /// The summary's rows in this piece, a table of at most [`SUMMARY_ROWS`] at a time.
    groups: Vec<&'a [RowView]>,
    /// The piece that ends the summary: its notes.
    notes: bool,
    /// The piece that opens the contents: its heading.
    contents_heading: bool,
    /// The contents' lines in this piece, each followed by a blank stand-in page that
    /// the join points at the memo's first page.
    contents: Vec<ContentsLine>,
}

/// What one piece of the cover holds.
#[derive(Debug, Clone)]
enum Piece {
    /// The summary's rows of these deals (and the title when it starts at 0).
    Summary(std::ops::Range<usize>),
    /// The contents' lines of these deals.
    Contents(std::ops::Range<usize>),
}

/// The most deals in one piece of the cover: the cover is typeset in pieces so that a
/// pack of a thousand deals never holds the layout of its whole summary at once.
const COVER_DEALS: usize = 100;

/// The most deals in one table of the summary (the table's header repeats).
const SUMMARY_ROWS: usize = 20;

/// The pieces of the cover of a pack of `deals` deals, in order.
fn cover_pieces(deals: usize) -> Vec<Piece> {
    let ranges: Vec<std::ops::Range<usize>> = (0..deals.max(1))
        .step_by(COVER_DEALS)
        .map(|start| start..(start + COVER_DEALS).min(deals))
        .collect();
    ranges
        .iter()
        .cloned()
        .map(Piece::Summary)
        .chain(ranges.iter().cloned().map(Piece::Contents))
        .collect()
}

#[derive(Debug, Serialize)]
struct ContentsLine {
    number: usize,
    deal: String,
    /// The number printed: the memo's first page.
    page: usize,
    /// The page the line links to: the memo's stand-in page in the cover.
    link: usize,
}

#[derive(Debug, Clone, Serialize)]
struct RowView {
    number: usize,
    deal: String,
    /// Currency and the unit of the rounded amounts, with the valuation date.
    basis: String,
    hurdle: String,
    peak_exposure: String,
    /// One line per scenario: label, NPV at the hurdle and what the NPV rule says.
    scenarios: Vec<ScenarioLine>,
    recommendation: String,
    committee: String,
    /// The titles of the cautions raised in any scenario, each once.
    cautions: Vec<String>,
}

#[derive(Debug, Clone, Serialize)]
struct ScenarioLine {
    label: String,
    npv: String,
    rule: String,
}

fn summary_row(number: usize, deal: &crate::model::Deal, a: &Analysis) -> RowView {
    let scale = present::summary::Scale::of(a);
    let base = a.scenarios.first();
    let periodic_start = match deal.clock {
        crate::model::Clock::Periodic { start, .. } => start,
        _ => None,
    };
    let mut cautions: Vec<String> = Vec::new();
    for s in &a.scenarios {
        for c in present::caution_text_list(s, &a.currency) {
            if !cautions.iter().any(|t| t == c.title) {
                cautions.push(c.title.to_string());
            }
        }
    }
    let signoff = deal.signoff.as_ref();
    let decision = signoff.map(|s| s.decision);
    RowView {
        number,
        deal: deal.name.clone(),
        basis: format!(
            "{}; NPVs as at {}",
            scale.unit(&a.currency),
            base.map(|b| present::summary::valuation_point(b, periodic_start))
                .unwrap_or_default()
        ),
        hurdle: base
            .map(|b| present::percent(b.hurdle_rate, 2, Style::Print))
            .unwrap_or_default(),
        peak_exposure: base
            .and_then(|b| present::summary::peak_exposure(&b.flows))
            .map(|(v, _)| present::summary::scaled(v.abs(), scale, Style::Print))
            .unwrap_or_else(|| "none".to_string()),
        scenarios: a
            .scenarios
            .iter()
            .map(|s| {
                let label = deal
                    .scenarios
                    .iter()
                    .find(|m| m.name == s.name)
                    .and_then(|m| m.label.as_deref());
                ScenarioLine {
                    label: words::scenario_title(label, &s.name),
                    npv: match s.npv_at_hurdle {
                        Some(v) => present::summary::scaled(v, scale, Style::Print),
                        None => present::scenario_npv(s, Style::Print),
                    },
                    rule: words::decision(s.decision).to_string(),
                }
            })
            .collect(),
        recommendation: deal
            .memo
            .recommendation
            .clone()
            .unwrap_or_else(|| "none given".to_string()),
        committee: match signoff.and_then(|s| s.date) {
            Some(date) => format!("{}, {}", words::signoff(decision), present::date_long(date)),
            None => words::signoff(decision).to_string(),
        },
        cautions,
    }
}

/// Files the typesetter can read, as (virtual path, bytes).
pub type Files = Vec<(String, Vec<u8>)>;

/// The markup of one piece of the cover: its pages numbered from `first_page`, each
/// memo's first page number from `first_pages` (the contents' line of memo `i` links
/// to page `kept + 1 + (i - start)` of the piece, its stand-in, where `kept` is the
/// number of the piece's own pages), then one page that sets the page counter to
/// `total`. No file system access.
fn cover_markup(
    cover: &Cover<'_>,
    piece: &Piece,
    first_page: usize,
    total: usize,
    first_pages: &[usize],
    kept: usize,
) -> Result<String, Diagnostic> {
    let deals = cover.deals;
    let mut view = PackView {
        title: cover.title,
        date: present::date_long(cover.created.date()),
        created: report::CreatedView::of(cover.created),
        deal_count: deals.len(),
        skipped: cover.skipped,
        version: crate::release::version(),
        first_page,
        total,
        first: false,
        groups: Vec::new(),
        notes: false,
        contents_heading: false,
        contents: Vec::new(),
    };
    match piece {
        Piece::Summary(range) => {
            view.first = range.start == 0;
            view.notes = range.end == deals.len();
            view.groups = cover.rows[range.clone()].chunks(SUMMARY_ROWS).collect();
        }
        Piece::Contents(range) => {
            view.contents_heading = range.start == 0;
            view.contents = range
                .clone()
                .map(|i| ContentsLine {
                    number: i + 1,
                    deal: deals[i].loaded.deal.name.clone(),
                    page: first_pages[i],
                    link: kept + 1 + (i - range.start),
                })
                .collect();
        }
    }
    report::render_template(PACK_TEMPLATE.0, PACK_TEMPLATE.1, &view)
}

/// What every piece of the cover draws on.
struct Cover<'a> {
    title: &'a str,
    created: NaiveDateTime,
    deals: &'a [PackedDeal],
    skipped: &'a [String],
    /// The summary's rows, numbered.
    rows: Vec<RowView>,
}

impl Piece {
    /// The memos whose stand-in pages the piece carries.
    fn stand_ins(&self) -> std::ops::Range<usize> {
        match self {
            Piece::Summary(_) => 0..0,
            Piece::Contents(range) => range.clone(),
        }
    }
}

/// The markup of the `i`-th deal's memo as a part of the pack, with the files it reads:
/// its pages numbered from `first_page`, then one blank page that only sets the page
/// counter to `total`, the pack's page count, which the memo's footer prints (`join`
/// leaves that page out). No file system access.
fn memo_part(
    deals: &[PackedDeal],
    i: usize,
    created: NaiveDateTime,
    first_page: usize,
    total: usize,
) -> Result<(String, Files), Diagnostic> {
    let d = &deals[i];
    let analysis = engine::analyse(&d.loaded.deal);
    let charts = chart::render_all(&analysis)?;
    // Two deal files of one name (from different folders) must still be told apart in
    // the attachment list.
    let name = if deals[..i]
        .iter()
        .any(|e| report::attachment_name(&e.source_name) == report::attachment_name(&d.source_name))
    {
        format!("{}-{}", i + 1, d.source_name)
    } else {
        d.source_name.clone()
    };
    let ctx = report::MemoContext {
        source_name: name,
        source_sha256: sha256_hex(&d.loaded.source),
        companions: pack_companions(deals, i),
        created,
        charts: charts.clone(),
        templates: BTreeMap::new(),
        changes: None,
        filed_version: None,
    };
    let p = prefix(i);
    let body = report::render_body(&analysis, &d.loaded.deal, &ctx, &p)?;
    let mut files: Files = charts
        .iter()
        .enumerate()
        .flat_map(|(k, c)| c.files(k))
        .map(|(n, b)| (format!("{p}{n}"), b))
        .collect();
    files.push((
        format!("{p}{}", report::SOURCE_FILE),
        d.loaded.source.clone(),
    ));
    for (k, (_, bytes)) in d.loaded.companions.iter().enumerate() {
        files.push((format!("{p}{}", report::companion_file(k)), bytes.clone()));
    }
    // The memo's settings (page style, helpers) stay inside its own content block.
    let markup = format!(
        "#counter(page).update({first_page})\n#[\n{body}\n]\n\
         #page(header: none, footer: none, background: none)[#counter(page).update({total})]\n"
    );
    Ok((markup, files))
}

/// The stack of each typesetting thread: typst recurses deeply on nested markup.
const TYPESET_STACK: usize = 64 * 1024 * 1024;

/// Runs `typeset(i)` for every `i` below `count` on `threads` threads, taking the
/// indices in order, and hands each result to `take` in index order as soon as it and
/// every result before it are in. At most a few results wait at any time (the channel
/// holds two per thread, and a thread takes the next index only after handing its last
/// result over), so memory follows the number of threads, not `count`. Stops at the
/// first error, from either side.
fn in_order<T: Send>(
    count: usize,
    threads: usize,
    typeset: &(dyn Fn(usize) -> Result<T, Diagnostic> + Sync),
    take: &mut dyn FnMut(usize, T) -> Result<(), Diagnostic>,
) -> Result<(), Diagnostic> {
    use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};
    let next = AtomicUsize::new(0);
    let stop = AtomicBool::new(false);
    let threads = threads.clamp(1, count.max(1));
    let (sender, receiver) = std::sync::mpsc::sync_channel(2 * threads);
    std::thread::scope(|scope| {
        for _ in 0..threads {
            let sender = sender.clone();
            let (next, stop) = (&next, &stop);
            let spawned = std::thread::Builder::new()
                .name("typeset".to_string())
                .stack_size(TYPESET_STACK)
                .spawn_scoped(scope, move || {
                    while !stop.load(Ordering::Relaxed) {
                        let i = next.fetch_add(1, Ordering::Relaxed);
                        if i >= count {
                            break;
                        }
                        let result = typeset(i);
                        let failed = result.is_err();
                        if sender.send((i, result)).is_err() || failed {
                            break;
                        }
                    }
                });
            if let Err(e) = spawned {
                stop.store(true, Ordering::Relaxed);
                return Err(Diagnostic::error(
                    "typeset",
                    format!("cannot start a typesetting thread: {e}"),
                ));
            }
        }
        drop(sender);
        let mut waiting = std::collections::BTreeMap::new();
        let mut wanted = 0;
        let mut outcome = Ok(());
        for (i, result) in receiver.iter() {
            waiting.insert(i, result);
            while let Some(result) = waiting.remove(&wanted) {
                outcome = result.and_then(|r| take(wanted, r));
                wanted += 1;
                if outcome.is_err() {
                    break;
                }
            }
            if outcome.is_err() {
                stop.store(true, Ordering::Relaxed);
                break;
            }
        }
        // The threads stop at their next index; what they still send is dropped.
        drop(receiver);
        if outcome.is_ok() && wanted < count {
            outcome = Err(Diagnostic::error(
                "typeset",
                "a typesetting thread stopped without an answer",
            ));
        }
        outcome
    })
}

/// Typesets the pack: see the module comment. `ident` identifies the whole pack.
fn typeset_pack<W: std::io::Write>(
    cover: &Cover<'_>,
    ident: &str,
    out: W,
) -> Result<W, Diagnostic> {
    let (deals, created) = (cover.deals, cover.created);
    let options = |i: usize| pdf::TypesetOptions {
        created,
        ident: format!("{ident}/{}", i + 1),
    };
    let threads = rayon::current_num_threads();
    // First pass: the pages of each memo. The first page numbered 2 shows the header
    // as it will in the pack, and the count has as many digits as a pack's could.
    let mut counts: Vec<usize> = Vec::with_capacity(deals.len());
    in_order(
        deals.len(),
        threads,
        &|i| {
            let (markup, files) = memo_part(deals, i, created, 2, 99_999)?;
            let files: Files = files
                .into_iter()
                .map(|(name, bytes)| {
                    let bytes = blank_chart(&name, &bytes).unwrap_or(bytes);
                    (name, bytes)
                })
                .collect();
            Ok(pdf::page_count(&markup, &files, &options(i))?.saturating_sub(1))
        },
        &mut |_, pages| {
            counts.push(pages);
            Ok(())
        },
    )?;
    // And of each piece of the cover: all but its stand-ins and last page.
    let pieces = cover_pieces(deals.len());
    let placeholder = vec![99_999; deals.len()];
    let mut kept: Vec<usize> = Vec::with_capacity(pieces.len());
    in_order(
        pieces.len(),
        threads,
        &|k| {
            let markup = cover_markup(cover, &pieces[k], 1, 99_999, &placeholder, 1)?;
            let pages = pdf::page_count(&markup, &[], &options(usize::MAX - 1 - k))?;
            Ok(pages.saturating_sub(pieces[k].stand_ins().len() + 1))
        },
        &mut |_, pages| {
            kept.push(pages);
            Ok(())
        },
    )?;
    let mut next = 1;
    let mut piece_pages = Vec::with_capacity(pieces.len());
    for pages in &kept {
        piece_pages.push(next);
        next += pages;
    }
    let mut first_pages = Vec::with_capacity(deals.len());
    for count in &counts {
        first_pages.push(next);
        next += count;
    }
    let total = next - 1;
    let changed = |what: String| {
        Diagnostic::error(
            "typeset",
            format!("{what} changed its number of pages between two typesettings"),
        )
    };
    // The cover's pieces, kept (they are small) until the memos are joined.
    let mut fronts = Vec::with_capacity(pieces.len());
    in_order(
        pieces.len(),
        threads,
        &|k| {
            let piece = &pieces[k];
            let markup = cover_markup(cover, piece, piece_pages[k], total, &first_pages, kept[k])?;
            // The first piece's metadata is the pack's: its identifier is the pack's.
            let options = pdf::TypesetOptions {
                created,
                ident: if k == 0 {
                    ident.to_string()
                } else {
                    format!("{ident}/cover/{k}")
                },
            };
            let (pdf, pages) = pdf::typeset_part(&markup, &[], &options)?;
            if pages != kept[k] + piece.stand_ins().len() + 1 {
                return Err(changed("the cover".to_string()));
            }
            Ok(pdf)
        },
        &mut |k, pdf| {
            fronts.push((pdf, kept[k], pieces[k].stand_ins()));
            Ok(())
        },
    )?;
    let mut joiner = crate::join::Joiner::new(out);
    // The memos typeset on every core; the join runs beside them.
    in_order(
        deals.len(),
        threads,
        &|i| {
            let (markup, files) = memo_part(deals, i, created, first_pages[i], total)?;
            let (pdf, pages) = pdf::typeset_part(&markup, &files, &options(i))?;
            if pages != counts[i] + 1 {
                return Err(changed(format!("the memo of {}", deals[i].source_name)));
            }
            Ok(pdf)
        },
        &mut |i, pdf: Vec<u8>| joiner.add(&pdf, counts[i]),
    )?;
    joiner.finish(&fronts)
}

/// For the counting pass: a chart (an SVG file of candor's charts, whose root element
/// gives its width, height and view box) as an empty picture of the same size, which
/// takes the same room on the page and is laid out without drawing the chart. `None`
/// for any other file, which is given as it is.
fn blank_chart(name: &str, bytes: &[u8]) -> Option<Vec<u8>> {
    if !name.ends_with(".svg") || !bytes.starts_with(b"<svg ") {
        return None;
    }
    let end = bytes.iter().position(|&b| b == b'>')?;
    let root = &bytes[..=end];
    if root.ends_with(b"/>") {
        return None;
    }
    Some([root, b"</svg>".as_slice()].concat())
}

/// The CSV files of the `i`-th deal as its memo names and attaches them: a name an
/// earlier deal of the pack already attached gets the deal's number in front.
fn pack_companions(deals: &[PackedDeal], i: usize) -> Vec<(String, String)> {
    let taken = |name: &str| {
        let attached = report::attachment_name(name);
        deals[..i].iter().any(|e| {
            report::attachment_name(&e.source_name) == attached
                || e.loaded
                    .companions
                    .iter()
                    .any(|(m, _)| report::attachment_name(m) == attached)
        })
    };
    deals[i]
        .loaded
        .companions
        .iter()
        .map(|(name, bytes)| {
            let shown = if taken(name) {
                format!("{}-{name}", i + 1)
            } else {
                name.clone()
            };
            (shown, sha256_hex(bytes))
        })
        .collect()
}

fn prefix(i: usize) -> String {
    format!("/deals/{}", i + 1)
}

fn analyse(loaded: LoadedDeal, source_name: String) -> PackedDeal {
    let analysis = engine::analyse(&loaded.deal);
    // Numbered once the invalid deals are left out.
    let row = summary_row(0, &loaded.deal, &analysis);
    PackedDeal {
        loaded,
        row,
        source_name,
    }
}

/// The deals of a pack, read and checked, ready to be typeset.
#[derive(Debug)]
pub struct Pack {
    deals: Vec<PackedDeal>,
    /// The deal files left out because they are invalid, each with why.
    pub skipped: Vec<(String, Failure)>,
    /// Every file read for the packed deals (deal files and their CSV files).
    pub inputs: Vec<PathBuf>,
}

/// Loads and analyses every deal (in parallel). Invalid deal files are left out when
/// `skip_invalid` holds; otherwise any invalid file fails the pack, with every
/// diagnostic of every invalid file.
pub fn prepare(paths: &[PathBuf], skip_invalid: bool) -> Result<Pack, Failure> {
    type Loaded = Result<PackedDeal, Failure>;
    let results: Vec<(PathBuf, Loaded)> = paths
        .par_iter()
        .map(|path| {
            let name = path
                .file_name()
                .map(|n| n.to_string_lossy().to_string())
                .unwrap_or_else(|| "deal.yaml".to_string());
            (path.clone(), load_deal(path).map(|l| analyse(l, name)))
        })
        .collect();
    let mut deals = Vec::new();
    let mut skipped = Vec::new();
    for (path, result) in results {
        match result {
            Ok(d) => deals.push(d),
            Err(failure) => skipped.push((path.display().to_string(), failure)),
        }
    }
    if !skipped.is_empty() && !skip_invalid {
        let mut all = Failure::many(Vec::new(), FailureClass::Invalid);
        for (_, f) in &skipped {
            all.diagnostics.extend(f.diagnostics.iter().cloned());
            for (file, text) in &f.sources {
                all = all.with_source(file.clone(), text.clone());
            }
        }
        all.diagnostics.push(
            Diagnostic::error(
                "pack",
                format!(
                    "nothing written: {} of {} deal files are invalid",
                    skipped.len(),
                    paths.len()
                ),
            )
            .with_hint("fix them, or leave them out with `--skip-invalid`"),
        );
        return Err(all);
    }
    if deals.is_empty() {
        return Err(Failure::invalid(Diagnostic::error(
            "pack",
            "nothing written: no valid deal file to pack",
        )));
    }
    let inputs = deals.iter().flat_map(|d| d.loaded.files()).collect();
    Ok(Pack {
        deals,
        skipped,
        inputs,
    })
}

impl Pack {
    /// How many deals the pack holds.
    pub fn deals(&self) -> usize {
        self.deals.len()
    }

    /// Typesets the pack and writes the PDF/A-3b file to `out` as it is made (see the
    /// module comment); gives `out` back.
    pub fn write<W: std::io::Write>(
        &self,
        title: &str,
        created: NaiveDateTime,
        out: W,
    ) -> Result<W, Failure> {
        let names: Vec<String> = self.skipped.iter().map(|(n, _)| n.clone()).collect();
        let cover = Cover {
            title,
            created,
            deals: &self.deals,
            skipped: &names,
            rows: self
                .deals
                .iter()
                .enumerate()
                .map(|(i, d)| RowView {
                    number: i + 1,
                    ..d.row.clone()
                })
                .collect(),
        };
        let ident = sha256_hex(
            self.deals
                .iter()
                .map(|d| sha256_hex(&d.loaded.source))
                .collect::<Vec<_>>()
                .join(" ")
                .as_bytes(),
        );
        typeset_pack(&cover, &ident, out).map_err(Failure::internal)
    }
}

/// [`prepare`] and [`Pack::write`] into memory: the PDF's bytes.
pub fn build(
    paths: &[PathBuf],
    title: &str,
    created: NaiveDateTime,
    skip_invalid: bool,
) -> Result<Vec<u8>, Failure> {
    prepare(paths, skip_invalid)?.write(title, created, Vec::new())
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::time::Duration;

    /// A blank chart takes the room of the chart it stands for: the same charts laid out
    /// one after another, enough to fill several pages, break at the same places.
    #[test]
    fn a_blank_chart_takes_the_room_of_the_chart() {
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR"))
            .join("example-deals")
            .join("marlow-fen-solar.yaml");
        let loaded = load_deal(&path).expect("example deal");
        let charts = chart::render_all(&engine::analyse(&loaded.deal)).expect("charts");
        let files: Files = charts
            .iter()
            .enumerate()
            .flat_map(|(k, c)| c.files(k))
            .collect();
        assert!(files.len() >= 4, "{} charts", files.len());
        let blank: Files = files
            .iter()
            .map(|(n, b)| (n.clone(), blank_chart(n, b).expect("a chart")))
            .collect();
        assert!(blank.iter().zip(&files).all(|(b, f)| b.1.len() < f.1.len()));
        let mut markup = String::from("#set page(width: 12cm, height: 16cm)\n");
        for (k, (name, _)) in files.iter().enumerate() {
            markup.push_str(&format!("#image(\"{name}\", width: {}%)\n", 60 + 7 * k));
        }
        let options = pdf::TypesetOptions {
            created: NaiveDateTime::default(),
            ident: "charts".to_string(),
        };
        let pages = pdf::page_count(&markup, &files, &options).expect("charts");
        assert!(pages > 2, "{pages} pages");
        assert_eq!(pdf::page_count(&markup, &blank, &options), Ok(pages));
        assert_eq!(blank_chart("a.csv", b"<svg >"), None);
    }

    /// Results arrive out of order from the threads and are handed over in order; the
    /// first error, of a typesetting or of the taker, ends the run and is returned.
    #[test]
    fn results_are_taken_in_order_until_the_first_error() {
        let mut seen = Vec::new();
        in_order(
            50,
            3,
            &|i| {
                std::thread::sleep(Duration::from_micros((i as u64 * 7) % 5 * 200));
                Ok(i * 2)
            },
            &mut |i, v| {
                assert_eq!(v, i * 2);
                seen.push(i);
                Ok(())
            },
        )
        .expect("no error");
        assert_eq!(seen, (0..50).collect::<Vec<_>>());
        let failing = |i: usize| {
            if i == 17 {
                Err(Diagnostic::error("typeset", "memo 17 failed"))
            } else {
                Ok(i)
            }
        };
        let mut taken = 0;
        let err = in_order(50, 2, &failing, &mut |_, _| {
            taken += 1;
            Ok(())
        })
        .expect_err("memo 17");
        assert_eq!((err.message.as_str(), taken), ("memo 17 failed", 17));
        let err = in_order(10, 2, &Ok, &mut |i, _| {
            if i == 3 {
                Err(Diagnostic::error("typeset", "disk full"))
            } else {
                Ok(())
            }
        })
        .expect_err("disk full");
        assert_eq!(err.message, "disk full");
    }
}
