//! Day-count conventions (ISDA 2006 Definitions, section 4.16).

use serde::Serialize;

/// A day-count convention.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Serialize)]
pub enum DayCount {
    /// Actual/365 (Fixed).
    #[serde(rename = "act/365f")]
    Act365F,
}
