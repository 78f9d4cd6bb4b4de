//! Pure numerics, no I/O: every real IRR with a certified count, balance paths, the
//! decision rule, MIRR, NPV and the other committee figures, and the cautions.

pub mod analysis;
pub mod flows;

pub use analysis::*;
pub use flows::{FlowPoint, Flows};

use crate::model::Deal;

/// Analyses the base case and every scenario of a validated deal.
pub fn analyse(_deal: &Deal) -> Analysis {
    todo!()
}
