//! The CSV report: one row per (orbital, model), hartree throughout, ready for data frames.

use super::Report;

/// Column names, in order.
pub const COLUMNS: [&str; 13] = [
    "rank",
    "source",
    "label",
    "spin",
    "occupation",
    "norm",
    "hartree",
    "optimal_alpha",
    "model",
    "exchange",
    "correlation",
    "self_interaction",
    "cancellation",
];

/// A field quoted where RFC 4180 requires it.
pub fn field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) { format!("\"{}\"", s.replace('"', "\"\"")) } else { s.to_string() }
}

/// The report as CSV text with a header line.
pub fn render(report: &Report) -> String {
    let mut out = COLUMNS.join(",") + "\n";
    rows(report, &[], &mut out);
    out
}

/// Appends one line per (shown orbital, model), each starting with the `leading` cells (already
/// quoted where needed).
pub fn rows(report: &Report, leading: &[String], out: &mut String) {
    for (i, o) in report.shown().iter().enumerate() {
        for (m, e) in report.models.iter().zip(&o.models) {
            let cells = [
                (i + 1).to_string(),
                field(&o.source),
                field(&o.label),
                o.spin.as_str().to_string(),
                o.occupation.to_string(),
                o.norm.to_string(),
                o.hartree.to_string(),
                o.optimal_alpha.to_string(),
                field(&m.name),
                e.exchange.to_string(),
                e.correlation.to_string(),
                e.self_interaction.to_string(),
                e.cancellation.to_string(),
            ];
            let line: Vec<&str> = leading.iter().map(String::as_str).chain(cells.iter().map(String::as_str)).collect();
            out.push_str(&line.join(","));
            out.push('\n');
        }
    }
}

#[cfg(test)]
mod tests {
    use super::field;

    #[test]
    fn quotes_only_where_needed() {
        assert_eq!(field("plain"), "plain");
        assert_eq!(field("a,b"), "\"a,b\"");
        assert_eq!(field("say \"x\""), "\"say \"\"x\"\"\"");
    }
}
