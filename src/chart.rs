//! Charts drawn with plotters into SVG strings.

/// Renders the charts.
pub fn render() {}
