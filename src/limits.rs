//! The one set of limits on what candor reads: every bound on the size of an input,
//! in one place, so that deal files, companion files and batch lines are held to the
//! same numbers. Each bound is a bound on memory and time as well as on bytes.

/// Largest amount accepted, in currency units (10^15): beyond any real deal, and far
/// inside `Decimal`'s range so that netting and scenario factors cannot overflow.
pub const MAX_AMOUNT: i64 = 1_000_000_000_000_000;
/// Most decimal places accepted in an amount or a factor.
pub(crate) const MAX_SCALE: u32 = 6;
/// Largest rate accepted, as a fraction (10000 = 1,000,000%).
pub(crate) const MAX_RATE: i64 = 10_000;
/// Earliest year of a date accepted: earlier years are typing slips (`0207` for `2027`).
pub(crate) const MIN_YEAR: i32 = 1900;
/// Latest year of a date accepted: a series of daily dates as long as the flow limit
/// allows (100,000 days, 274 years) fits when it starts today.
pub(crate) const MAX_YEAR: i32 = 2399;

/// Most flows accepted in one series.
pub const MAX_FLOWS: usize = 100_000;
/// Most diagnostics reported for one file; past this the list ends with a note.
pub(crate) const MAX_DIAGNOSTICS: usize = 100;
/// Most scenarios accepted besides the base case: a committee reads a handful.
pub(crate) const MAX_SCENARIOS: usize = 100;
/// Most flows accepted over the base case and every scenario together, so that a
/// short file of scenarios that each copy a long base series cannot take the memory
/// and the time of a hundred million flows.
pub const MAX_TOTAL_FLOWS: usize = 1_000_000;
/// Longest deal name, scenario name, section title or person's name, in characters:
/// a title, which the memo prints on one line.
pub(crate) const MAX_NAME_CHARS: usize = 200;
/// Longest flow note, scenario description or CSV file name, in characters.
pub(crate) const MAX_NOTE_CHARS: usize = 1_000;
/// Longest block of text (the recommendation, the summary, one risk, one section's
/// text), in characters: about six pages.
pub(crate) const MAX_BLOCK_CHARS: usize = 20_000;
/// Longest word (a run of characters without white space) in any text, in
/// characters: a word cannot be broken across lines of the memo, and every text of
/// the memo must stay far below the 32,767 characters of a PDF string.
pub(crate) const MAX_WORD_CHARS: usize = 500;
/// Most risks, and most narrative sections, in a memo.
pub(crate) const MAX_ITEMS: usize = 1_000;
/// Most characters of narrative in the whole memo (recommendation, summary, risks
/// and sections together): about sixty pages.
pub(crate) const MAX_MEMO_CHARS: usize = 200_000;

/// Largest deal file (and CSV file) read, in bytes: checked before reading, so a
/// stray multi-gigabyte file is refused at once.
pub const MAX_FILE_BYTES: u64 = 10 * 1024 * 1024;
/// Largest file of a filed version that `verify` reads (a memo PDF, the analysis),
/// in bytes: a listed file is read to at most the size its manifest records (and never
/// past this), so a file swapped for a huge one or for `/dev/zero` cannot take the
/// memory.
pub(crate) const MAX_FILED_BYTES: u64 = 256 * 1024 * 1024;
/// Largest manifest read, in bytes: a manifest lists a handful of files.
pub(crate) const MAX_MANIFEST_BYTES: u64 = 1024 * 1024;
/// Largest signature file read, in bytes (an Ed25519 signature is under 1 KB).
pub(crate) const MAX_SIGNATURE_BYTES: u64 = 64 * 1024;
/// Longest batch line read, in bytes (16 MiB, room for the most flows a series may
/// hold written out at length): a longer line is answered with an error line and
/// skipped to its end without being held in memory.
pub const MAX_LINE_BYTES: usize = 16 << 20;
/// Most alias uses (`*name`) accepted in one file.
pub(crate) const MAX_ALIASES: usize = 100;
/// Most nodes that aliases may add to the tree in all, so that a chain of aliases to
/// aliases cannot grow exponentially.
pub(crate) const MAX_ALIAS_NODES: usize = 10_000;
/// Deepest nesting of sequences and mappings accepted.
pub(crate) const MAX_DEPTH: usize = 64;
/// Most items in one list, or entries in one mapping: no list of a deal file holds
/// more (the flow limit of the validator). Items past it are counted, not kept.
pub(crate) const MAX_LIST_ENTRIES: usize = MAX_FLOWS;
/// Most values (scalars, lists and mappings) in one file: a deal at the limits (a
/// base case of 100,000 dated flows and a scenario that replaces them) holds about
/// 1,000,000. The tree is held in memory, about 80 bytes a value, so this bounds the
/// memory a file of 10 MB can take.
pub(crate) const MAX_NODES: usize = 1_200_000;

/// Font files a house style may add to the bundled fonts (each at most
/// [`MAX_FILE_BYTES`], like any file candor reads besides the deal).
pub(crate) const MAX_HOUSE_FONTS: usize = 16;
