//! The view model and the Typst markup of the memo.

/// Renders the markup.
pub fn render() {}
