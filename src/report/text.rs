//! Reports for people: an aligned table for the terminal and a Markdown document.
//!
//! The terminal table is compact (one δ and one cancellation ratio per model); Markdown carries
//! every energy, since documents can be wide.

use super::{EnergyUnit, INCOMPLETE, Report, fixed, flags_text};
use crate::calculation::LocalizationSummary;
use crate::diagnostics::{Flag, OrbitalReport};
use super::INVALID;

/// A table of text cells with per-column alignment (true: right-aligned).
pub(crate) struct Table {
    header: Vec<String>,
    right: Vec<bool>,
    pub(crate) rows: Vec<Vec<String>>,
}

impl Table {
    pub(crate) fn new(columns: &[(&str, bool)]) -> Self {
        Table {
            header: columns.iter().map(|c| c.0.to_string()).collect(),
            right: columns.iter().map(|c| c.1).collect(),
            rows: Vec::new(),
        }
    }

    pub(crate) fn push(&mut self, header: String, right: bool) {
        self.header.push(header);
        self.right.push(right);
    }

    fn widths(&self) -> Vec<usize> {
        (0..self.header.len())
            .map(|c| {
                std::iter::once(&self.header[c])
                    .chain(self.rows.iter().map(|r| &r[c]))
                    .map(|s| s.chars().count())
                    .max()
                    .unwrap_or(0)
            })
            .collect()
    }

    fn line(&self, cells: &[String], widths: &[usize], sep: &str) -> String {
        cells
            .iter()
            .zip(widths)
            .zip(&self.right)
            .map(|((s, &w), &right)| if right { format!("{s:>w$}") } else { format!("{s:<w$}") })
            .collect::<Vec<_>>()
            .join(sep)
    }

    /// Columns separated by two spaces, the header underlined.
    pub(crate) fn plain(&self, indent: &str) -> String {
        let widths = self.widths();
        let mut out = format!("{indent}{}\n", self.line(&self.header, &widths, "  ").trim_end());
        let rule = widths.iter().map(|&w| "─".repeat(w)).collect::<Vec<_>>().join("  ");
        out += &format!("{indent}{rule}\n");
        for row in &self.rows {
            out += &format!("{indent}{}\n", self.line(row, &widths, "  ").trim_end());
        }
        out
    }

    pub(crate) fn markdown(&self) -> String {
        let escape = |s: &String| s.replace('|', "\\|");
        let cells = |r: &[String]| format!("| {} |\n", r.iter().map(escape).collect::<Vec<_>>().join(" | "));
        let rule = self.right.iter().map(|&r| if r { "---:" } else { ":---" }).collect::<Vec<_>>();
        let mut out = cells(&self.header);
        out += &format!("|{}|\n", rule.join("|"));
        for row in &self.rows {
            out += &cells(row);
        }
        out
    }
}

/// Columns every orbital row starts with.
fn orbital_table(unit: EnergyUnit) -> Table {
    Table::new(&[
        ("#", true),
        ("orbital", false),
        ("spin", false),
        ("norm", true),
        (&format!("J ({})", unit.symbol()), true),
        ("α*", true),
    ])
}

fn orbital_cells(rank: usize, o: &OrbitalReport, unit: EnergyUnit) -> Vec<String> {
    vec![
        rank.to_string(),
        o.label.clone(),
        o.spin.as_str().to_string(),
        fixed(o.norm, 4),
        unit.format_with_error(o.hartree, o.errors.as_ref().map(|e| e.hartree)),
        fixed(o.optimal_alpha, 4),
    ]
}

/// Error bar of model `m`'s energy `q` (0 exchange, 1 correlation, 2 δ), if computed.
fn model_error(o: &OrbitalReport, m: usize, q: usize) -> Option<f64> {
    o.errors.as_ref().map(|e| {
        let e = e.models[m];
        [e.exchange, e.correlation, e.self_interaction][q]
    })
}

/// Per-model totals: Perdew–Zunger correction and mean cancellation.
fn totals_table(report: &Report, unit: EnergyUnit) -> Table {
    let mut t = Table::new(&[
        ("model", false),
        ("exchange", false),
        ("correlation", false),
        (&format!("PZ correction ({})", unit.symbol()), true),
        ("mean −Ex/J", true),
    ]);
    for (m, tot) in report.models.iter().zip(&report.outcome.ranking.totals) {
        let (pz, mean) = match tot {
            Ok(tot) => (unit.format(tot.perdew_zunger), fixed(tot.mean_cancellation, 4)),
            Err(_) => (INCOMPLETE.into(), INCOMPLETE.into()),
        };
        t.rows.push(vec![m.name.clone(), m.exchange.id(), m.correlation.as_ref().map_or("—".into(), |c| c.id()), pz, mean]);
    }
    t
}

/// Why totals are withheld, one line per distinct reason with the models it applies to:
/// `lsda, pbe: incomplete: 1 of 3 files failed` (empty when every total stands).
pub fn withheld_lines(report: &Report) -> Vec<String> {
    let mut reasons: Vec<(&str, Vec<&str>)> = Vec::new();
    for (m, tot) in report.models.iter().zip(&report.outcome.ranking.totals) {
        let Err(reason) = tot else { continue };
        match reasons.iter_mut().find(|(r, _)| r == reason) {
            Some((_, models)) => models.push(&m.name),
            None => reasons.push((reason, vec![&m.name])),
        }
    }
    reasons.into_iter().map(|(r, models)| format!("no total for {}: {r}", models.join(", "))).collect()
}

/// One line on the records with numbers that are not finite, if there are any.
pub fn non_finite_line(orbitals: &[OrbitalReport]) -> Option<String> {
    let n = orbitals.iter().filter(|o| o.flags.contains(&Flag::NotFinite)).count();
    (n > 0).then(|| {
        format!(
            "{n} orbital record(s) flagged not-finite: the numbers shown as {INVALID} are not finite (infinite or NaN) and no \
             results; a record without a finite δ is ranked last, and no total includes it"
        )
    })
}

fn caption(report: &Report, unit: EnergyUnit) -> String {
    let r = &report.outcome.ranking;
    let by = report.models.get(r.rank_by).map_or("", |m| m.name.as_str());
    let shown = report.shown().len();
    let of = if shown < r.orbitals.len() { format!("worst {shown} of ") } else { String::new() };
    format!(
        "{of}{} orbital records ({} occupied spin-orbitals), worst first by |δ| under {by}; energies in {}",
        r.orbitals.len(),
        r.spin_orbitals,
        unit.symbol()
    )
}

/// One localized spin channel in words: orbitals, spin, files, L before and after, sweeps.
pub fn localization_line(l: &LocalizationSummary) -> String {
    let r = &l.channel.result;
    format!(
        "{} {} orbitals of {}: L {:.6} → {:.6} bohr² in {} sweeps{}",
        l.channel.orbitals,
        l.channel.spin.as_str(),
        l.source,
        r.initial_functional,
        r.functional,
        r.sweeps,
        if r.converged { "" } else { " (NOT converged)" }
    )
}

/// How each basis-set file among `orbitals` was read, one line per file in first-seen order:
/// `FILE: molden (writer ORCA), read as CONVENTION, max |CᵀSC − I| = 7.5e-11`.
pub fn input_lines(orbitals: &[OrbitalReport]) -> Vec<String> {
    let mut seen: Vec<&str> = Vec::new();
    let mut out = Vec::new();
    for o in orbitals {
        let Some(c) = &o.input else { continue };
        if seen.contains(&o.source.as_str()) {
            continue;
        }
        seen.push(&o.source);
        let writer = c.writer.as_ref().map_or(String::new(), |w| format!(" (writer {w})"));
        let valence = if c.core_potentials { "; valence orbitals only (effective core potentials)" } else { "" };
        out.push(format!(
            "{}: {}{writer}, read as {}, max |CᵀSC − I| = {:.1e}{valence}",
            o.source, c.format, c.convention, c.orthonormality
        ));
    }
    out
}

/// The terminal table.
pub fn render_table(report: &Report, unit: EnergyUnit) -> String {
    let mut t = orbital_table(unit);
    for m in report.models {
        t.push(format!("δ {}", m.name), true);
        t.push(format!("−Ex/J {}", m.name), true);
    }
    t.push("flags".into(), false);
    for (i, o) in report.shown().iter().enumerate() {
        let mut row = orbital_cells(i + 1, o, unit);
        for (m, e) in o.models.iter().enumerate() {
            row.push(unit.format_with_error(e.self_interaction, model_error(o, m, 2)));
            row.push(fixed(e.cancellation, 4));
        }
        row.push(flags_text(o));
        t.rows.push(row);
    }
    let mut out = format!("{}\n\n{}\n", caption(report, unit), t.plain("  "));
    if let Some(l) = non_finite_line(&report.outcome.ranking.orbitals) {
        out += &format!("{l}.\n\n");
    }
    if !report.outcome.ranking.orbitals.is_empty() {
        out += &format!("Per model, over all {} spin-orbitals:\n\n", report.outcome.ranking.spin_orbitals);
        out += &totals_table(report, unit).plain("  ");
        for l in withheld_lines(report) {
            out += &format!("  {l}\n");
        }
    }
    if !report.outcome.duplicates.is_empty() {
        out += "\nFiles with the same content as an earlier file:\n";
        for d in &report.outcome.duplicates {
            out += &format!("  {}\n", d.note());
        }
    }
    let inputs = input_lines(&report.outcome.ranking.orbitals);
    if !inputs.is_empty() {
        out += "\nBasis-set files (conventions decided from the orbitals' orthonormality):\n";
        for l in inputs {
            out += &format!("  {l}\n");
        }
    }
    if !report.outcome.localization.is_empty() {
        out += "\nFoster–Boys localization (L = Σ|⟨φ|r|φ⟩|², bohr²):\n";
        for l in &report.outcome.localization {
            out += &format!("  {}\n", localization_line(l));
        }
    }
    let failed = report.outcome.failures.len();
    if failed > 0 {
        out += &format!("\n{failed} file(s) could not be analysed:\n");
        for f in &report.outcome.failures {
            out += &format!("  {}\n", f.error);
        }
    }
    out
}

/// Markdown table of the shown orbitals with every energy of every model.
pub fn markdown_orbitals(report: &Report, unit: EnergyUnit) -> String {
    let mut t = orbital_table(unit);
    for m in report.models {
        for q in ["E_x", "E_c", "δ", "−E_x/J"] {
            t.push(format!("{q} {}", m.name), true);
        }
    }
    t.push("flags".into(), false);
    t.push(format!("cusp ΔJ ({})", unit.symbol()), true);
    // The tail column only where the tail correction was asked for.
    let tails = report.shown().iter().any(|o| o.tail_correction.is_some());
    if tails {
        t.push(format!("tail ΔJ ({})", unit.symbol()), true);
    }
    for (i, o) in report.shown().iter().enumerate() {
        let mut row = orbital_cells(i + 1, o, unit);
        for (m, e) in o.models.iter().enumerate() {
            let values = [e.exchange, e.correlation, e.self_interaction];
            row.extend((0..3).map(|q| unit.format_with_error(values[q], model_error(o, m, q))));
            row.push(fixed(e.cancellation, 4));
        }
        row.push(flags_text(o));
        row.push(o.cusp_correction.as_ref().and_then(|c| c.hartree).map_or("—".into(), |d| unit.format(d)));
        if tails {
            row.push(o.tail_correction.as_ref().map_or("—".into(), |c| unit.format(c.hartree)));
        }
        t.rows.push(row);
    }
    t.markdown()
}

/// Markdown table of the per-model totals, with why any is withheld.
pub fn markdown_totals(report: &Report, unit: EnergyUnit) -> String {
    let mut out = totals_table(report, unit).markdown();
    let withheld = withheld_lines(report);
    if !withheld.is_empty() {
        out += "\n";
        out += &withheld.iter().map(|l| format!("- {l}\n")).collect::<String>();
    }
    out
}

/// Markdown list of the files analysed once for having another's bytes (empty when none).
pub fn markdown_duplicates(report: &Report) -> String {
    report.outcome.duplicates.iter().map(|d| format!("- `{}`: same content as `{}`; analysed once\n", d.source, d.same_as)).collect()
}

/// Markdown list of failed files (empty when none failed).
pub fn markdown_failures(failures: &[crate::calculation::FileFailure]) -> String {
    failures.iter().map(|f| format!("- `{}`: {}\n", f.source, f.error.replace('\n', " "))).collect()
}

/// The Markdown document.
pub fn render_markdown(report: &Report, unit: EnergyUnit) -> String {
    let mut out = format!("# Self-interaction ranking\n\n{}.\n\n{}", caption(report, unit), markdown_orbitals(report, unit));
    if let Some(l) = non_finite_line(&report.outcome.ranking.orbitals) {
        out += &format!("\n{l}.\n");
    }
    out += "\n## Per model\n\n";
    out += &markdown_totals(report, unit);
    if !report.outcome.duplicates.is_empty() {
        out += "\n## Files with the same content as an earlier file\n\n";
        out += &markdown_duplicates(report);
    }
    let inputs = input_lines(&report.outcome.ranking.orbitals);
    if !inputs.is_empty() {
        out += "\n## Basis-set files\n\nConventions decided from the orbitals' orthonormality.\n\n";
        for l in inputs {
            out += &format!("- {l}\n");
        }
    }
    if !report.outcome.localization.is_empty() {
        out += "\n## Foster–Boys localization\n\nL = Σ|⟨φ|r|φ⟩|², bohr².\n\n";
        for l in &report.outcome.localization {
            out += &format!("- {}\n", localization_line(l));
        }
    }
    if !report.outcome.failures.is_empty() {
        out += "\n## Files that could not be analysed\n\n";
        out += &markdown_failures(&report.outcome.failures);
    }
    out
}
