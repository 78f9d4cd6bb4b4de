//! Presentation: every word and number the reader sees, in one place. The engine
//! returns facts (typed verdicts with their numbers); this module turns them into
//! money, percentages, rates with the decimals that separate close roots (one rule),
//! decision and sign-off words, the certificate sentence and the caution paragraphs,
//! and writes the terminal report and the JSON contract. The memo's view model
//! (`report`), the pack, the diff and the charts take their figures from here.
//!
//! Each figure is written in a [`Style`]: the terminal's (ASCII `-`), print's (a true
//! minus sign U+2212, thousands grouped in rates, powers of ten as `× 10^n`), or the
//! prose that every output shares (the caution paragraphs).

pub mod cautions;
pub mod certificate;
pub mod json;
pub mod lines;
pub mod numbers;
pub mod sensitivity;
pub mod summary;
pub mod terminal;
pub mod words;

pub use cautions::scenario_cautions as caution_text_list;
pub use numbers::*;

/// How figures are written for where they are read.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Style {
    /// A terminal: ASCII hyphen-minus, rates in plain digits (`1234.5600%`), `e`
    /// notation for rates beyond 10^9 %.
    Terminal,
    /// Print (the memo, the pack, the charts, the diff): a true minus sign (U+2212),
    /// thousands grouped in rates, powers of ten as `× 10^n`.
    Print,
    /// Text that every output carries unchanged (the caution paragraphs in the
    /// terminal, the JSON and the memo): print's figures with the ASCII hyphen-minus.
    Prose,
}
