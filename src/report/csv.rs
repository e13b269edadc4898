//! The CSV report: one row per (orbital, model), hartree throughout, ready for data frames. A
//! number that is not finite is an empty cell, as a missing one is; the row's `flags` then hold
//! `not-finite`.

use super::Report;

/// Column names, in order.
pub const COLUMNS: [&str; 31] = [
    "rank",
    "source",
    "label",
    "spin",
    "occupation",
    "norm",
    "lost_charge",
    "hartree",
    "hartree_error",
    "optimal_alpha",
    "model",
    "exchange",
    "exchange_error",
    "correlation",
    "correlation_error",
    "self_interaction",
    "self_interaction_error",
    "cancellation",
    "flags",
    "checked",
    "cusp_hartree",
    "cusp_exchange",
    "cusp_correlation",
    "energy",
    "set",
    "tail_hartree",
    "tail_exchange",
    "tail_correlation",
    "input_format",
    "input_convention",
    "orthonormality",
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
    // Error bars and cusp corrections are empty cells where there are none; so is a number that
    // is not finite (no result; the row's flags then say `not-finite`).
    let num = |v: f64| if v.is_finite() { v.to_string() } else { String::new() };
    let opt = |v: Option<f64>| v.map_or(String::new(), num);
    for (i, o) in report.shown().iter().enumerate() {
        let flags = o.flags.iter().map(|f| f.as_str()).collect::<Vec<_>>().join(";");
        for (k, (m, e)) in report.models.iter().zip(&o.models).enumerate() {
            let err = o.errors.as_ref().map(|x| x.models[k]);
            let cells = [
                (i + 1).to_string(),
                field(&o.source),
                field(&o.label),
                o.spin.as_str().to_string(),
                num(o.occupation),
                num(o.norm),
                num(o.lost_charge),
                num(o.hartree),
                opt(o.errors.as_ref().map(|x| x.hartree)),
                num(o.optimal_alpha),
                field(&m.name),
                num(e.exchange),
                opt(err.map(|x| x.exchange)),
                num(e.correlation),
                opt(err.map(|x| x.correlation)),
                num(e.self_interaction),
                opt(err.map(|x| x.self_interaction)),
                num(e.cancellation),
                flags.clone(),
                o.errors.is_some().to_string(),
                opt(o.cusp_correction.as_ref().and_then(|c| c.hartree)),
                opt(o.cusp_correction.as_ref().map(|c| c.models[k].0)),
                opt(o.cusp_correction.as_ref().map(|c| c.models[k].1)),
                opt(o.energy),
                o.set.as_str().to_string(),
                opt(o.tail_correction.as_ref().map(|t| t.hartree)),
                opt(o.tail_correction.as_ref().map(|t| t.models[k].0)),
                opt(o.tail_correction.as_ref().map(|t| t.models[k].1)),
                o.input.as_ref().map_or(String::new(), |c| c.format.clone()),
                o.input.as_ref().map_or(String::new(), |c| field(&c.convention)),
                opt(o.input.as_ref().map(|c| c.orthonormality)),
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
