//! Reports of a batch: `report.md`, `orbitals.csv`, `report.json` and `report.html` (see
//! [`super::html`]) in the report directory.
//!
//! The JSON layout (hartree throughout):
//!
//! ```text
//! { "tool", "units": "hartree", "workflow": PATH, "rank_by": MODEL, "models": [...],
//!   "summary": { "calculations": N, "completed": N, "failed": N,
//!                "models": {MODEL: {"mean_abs_self_interaction", "median_abs_self_interaction",
//!                                   "max_abs_self_interaction", "max_at": {"calculation", "label"},
//!                                   "mean_cancellation", "spin_orbitals"}},
//!                "tags": {TAG: {"calculations", "models": {MODEL: {...as above}}}},
//!                "worst": [{"calculation", "label", "spin", "model", "self_interaction", "hartree"}],
//!                "flags": {FLAG: number of orbital records}, "tolerance", "cusp_correction",
//!                "tail_correction" },
//!   "calculations": [ {"name", "tags", "status": "ok" | "failed", "error" (when failed),
//!                      "failures": [{"source", "error"}], "duplicates": [...as in rank] (only
//!                      where some), "orbitals": [...as in rank],
//!                      "totals": {MODEL: ...as in rank: null with "invalid" when withheld},
//!                      "spin_orbitals", "density_check": (as one file of `inspect --format json`) or null,
//!                      "localization": [...as in rank] } ] }
//! ```
//!
//! Nothing in a report depends on timing or on the machine, so a rerun (from the cache or not)
//! writes the same bytes. (`report.html` shows a date: the caller's, or the newest modification
//! date among the input files, which a rerun does not change.)

use super::text::{Table, input_lines, localization_line, markdown_duplicates, markdown_failures, markdown_orbitals, markdown_totals};
use super::{EnergyUnit, Report, csv, flags_text, html, json, write_atomic};
use crate::batch::summary::{ModelStats, SetSummary};
use crate::batch::{CalculationResult, ReportFormat, Workflow};
use crate::diagnostics::Flag;
use serde_json::{Map, Value, json};
use std::path::PathBuf;

/// A finished batch, ready to be reported.
#[derive(Clone, Copy, Debug)]
pub struct BatchReport<'a> {
    /// The workflow that ran.
    pub workflow: &'a Workflow,
    /// Its calculations' results, in workflow order.
    pub results: &'a [CalculationResult],
    /// Set-wide statistics of `results`.
    pub summary: &'a SetSummary,
}

impl<'a> BatchReport<'a> {
    fn calculation(&self, c: &'a CalculationResult) -> Report<'a> {
        Report { models: &self.workflow.models, outcome: &c.outcome, top: None }
    }

    fn model_name(&self, i: usize) -> &str {
        &self.workflow.models[i].name
    }

    fn workflow_name(&self) -> String {
        self.workflow.path.file_name().map_or_else(String::new, |n| n.to_string_lossy().into_owned())
    }
}

fn stats_value(s: &ModelStats) -> Value {
    json!({
        "mean_abs_self_interaction": s.mean_abs,
        "median_abs_self_interaction": s.median_abs,
        "max_abs_self_interaction": s.max_abs,
        "max_at": {"calculation": s.max_at.0, "label": s.max_at.1},
        "mean_cancellation": s.mean_cancellation,
        "spin_orbitals": s.spin_orbitals,
    })
}

fn per_model(report: &BatchReport, stats: &[Option<ModelStats>]) -> Value {
    let map = stats
        .iter()
        .enumerate()
        .filter_map(|(i, s)| s.as_ref().map(|s| (report.model_name(i).to_string(), stats_value(s))))
        .collect::<Map<_, _>>();
    Value::Object(map)
}

/// How many orbital records of completed calculations carry each flag, in flag order.
fn flag_counts(report: &BatchReport) -> Vec<(&'static str, usize)> {
    let mut counts: Vec<(&'static str, usize)> = Vec::new();
    for o in report.results.iter().filter(|c| c.is_ok()).flat_map(|c| &c.outcome.ranking.orbitals) {
        for f in &o.flags {
            match counts.iter_mut().find(|(name, _)| *name == f.as_str()) {
                Some((_, n)) => *n += 1,
                None => counts.push((f.as_str(), 1)),
            }
        }
    }
    counts
}

/// The batch report as a JSON value.
pub fn to_value(report: &BatchReport) -> Value {
    let s = report.summary;
    let tags = s
        .tags
        .iter()
        .map(|t| (t.tag.clone(), json!({"calculations": t.calculations, "models": per_model(report, &t.models)})))
        .collect::<Map<_, _>>();
    let worst = s
        .worst
        .iter()
        .map(|w| {
            json!({
                "calculation": w.calculation,
                "label": w.orbital.label,
                "spin": w.orbital.spin.as_str(),
                "model": report.model_name(w.model),
                "self_interaction": w.self_interaction(),
                "hartree": w.orbital.hartree,
            })
        })
        .collect::<Vec<_>>();
    let calculations = report
        .results
        .iter()
        .map(|c| {
            let r = report.calculation(c);
            let mut v = json!({
                "name": c.name,
                "tags": c.tags,
                "status": if c.is_ok() { "ok" } else { "failed" },
            });
            let map = v.as_object_mut().expect("an object");
            if let Some(first) = c.outcome.failures.first() {
                map.insert("error".into(), json!(first.error));
            }
            map.insert("failures".into(), json!(json::failures(&c.outcome.failures)));
            if !c.outcome.duplicates.is_empty() {
                map.insert("duplicates".into(), json!(json::duplicates(&c.outcome.duplicates)));
            }
            map.insert("orbitals".into(), json!(json::orbitals(&r)));
            map.insert("totals".into(), json::totals(&r));
            map.insert("spin_orbitals".into(), json!(c.outcome.ranking.spin_orbitals));
            map.insert("density_check".into(), c.density.as_ref().map_or(Value::Null, crate::inspect::render::file_json));
            map.insert("localization".into(), json!(json::localization(&c.outcome.localization)));
            v
        })
        .collect::<Vec<_>>();
    json!({
        "tool": json::tool(),
        "units": "hartree",
        "workflow": report.workflow.path.display().to_string(),
        "rank_by": report.model_name(report.workflow.rank_by),
        "models": json::models(&report.workflow.models),
        "summary": {
            "calculations": report.results.len(),
            "completed": s.completed,
            "failed": s.failed,
            "models": per_model(report, &s.models),
            "tags": tags,
            "worst": worst,
            "flags": flag_counts(report).into_iter().map(|(f, n)| (f.to_string(), json!(n))).collect::<Map<_, _>>(),
            "tolerance": report.workflow.trust.tolerance,
            "cusp_correction": report.workflow.cusp_correction,
            "tail_correction": report.workflow.tail_correction,
        },
        "calculations": calculations,
    })
}

/// `orbitals.csv`: one row per (calculation, orbital, model), hartree.
pub fn render_csv(report: &BatchReport) -> String {
    let mut out = format!("calculation,status,tags,{}\n", csv::COLUMNS.join(","));
    for c in report.results {
        let status = if c.is_ok() { "ok" } else { "failed" };
        let leading = [csv::field(&c.name), status.to_string(), csv::field(&c.tags.join(";"))];
        csv::rows(&report.calculation(c), &leading, &mut out);
    }
    out
}

/// Per-model statistics as table cells.
fn stats_cells(s: Option<&ModelStats>, unit: EnergyUnit) -> [String; 3] {
    match s {
        Some(s) => [unit.format(s.mean_abs), unit.format(s.median_abs), unit.format(s.max_abs)],
        None => ["—".into(), "—".into(), "—".into()],
    }
}

/// `report.md`.
pub fn render_markdown(report: &BatchReport, unit: EnergyUnit) -> String {
    let (wf, s) = (report.workflow, report.summary);
    let u = unit.symbol();
    let records: usize = report.results.iter().filter(|c| c.is_ok()).map(|c| c.outcome.ranking.orbitals.len()).sum();
    let spin_orbitals: u32 = report.results.iter().filter(|c| c.is_ok()).map(|c| c.outcome.ranking.spin_orbitals).sum();
    let mut out = format!("# Self-interaction survey: {}\n\n", report.workflow_name());
    out += &format!(
        "{} calculations ({} completed, {} failed); {records} orbital records ({spin_orbitals} spin-orbitals) in the \
         completed ones; {} models; energies in {u}. Statistics cover completed calculations, each restricted \
         orbital counting as two spin-orbitals; δ = J + E_x + E_c.\n\n",
        report.results.len(),
        s.completed,
        s.failed,
        wf.models.len()
    );

    let flagged = flag_counts(report);
    if flagged.is_empty() {
        out += "Every orbital passed the grid checks.\n\n";
    } else {
        let list = flagged.iter().map(|(f, n)| format!("{n} {f}")).collect::<Vec<_>>().join(", ");
        out += &format!("Orbital records flagged by the grid checks: {list} (tolerance {} {u}).\n\n", unit.format(wf.trust.tolerance));
    }
    if let Some((_, n)) = flagged.iter().find(|(f, _)| *f == Flag::NotFinite.as_str()) {
        out += &format!(
            "{n} orbital record(s) flagged not-finite have numbers that are not finite (infinite or NaN; shown as {}): they are left out \
             of the statistics, and their calculations' totals under the models concerned are withheld.\n\n",
            super::INVALID
        );
    }
    // Which corrections the grid-file values carry.
    out += &format!(
        "Grid files: cusp correction {}; tail correction {}.\n\n",
        if wf.cusp_correction { "on" } else { "off (plain grid sums at the nuclei)" },
        if wf.tail_correction { "on (values include the estimated tail beyond each box)" } else { "off" }
    );
    out += "## Models across the set\n\n";
    let mut t = Table::new(&[
        ("model", false),
        ("exchange", false),
        ("correlation", false),
        (&format!("mean |δ| ({u})"), true),
        (&format!("median |δ| ({u})"), true),
        (&format!("max |δ| ({u})"), true),
        ("max at", false),
        ("mean −E_x/J", true),
    ]);
    for (m, st) in wf.models.iter().zip(&s.models) {
        let mut row = vec![m.name.clone(), m.exchange.id(), m.correlation.as_ref().map_or("—".into(), |c| c.id())];
        row.extend(stats_cells(st.as_ref(), unit));
        row.push(st.as_ref().map_or("—".into(), |st| format!("{} / {}", st.max_at.0, st.max_at.1)));
        row.push(st.as_ref().map_or("—".into(), |st| format!("{:.4}", st.mean_cancellation)));
        t.rows.push(row);
    }
    out += &t.markdown();

    out += &format!("\n## Perdew–Zunger correction per calculation ({u})\n\n");
    let mut t = Table::new(&[("calculation", false), ("tags", false)]);
    for m in &wf.models {
        t.push(m.name.clone(), true);
    }
    for c in report.results {
        let mut row = vec![c.name.clone(), c.tags.join(", ")];
        for tot in &c.outcome.ranking.totals {
            row.push(match tot {
                _ if !c.is_ok() => "failed".into(),
                Ok(tot) => unit.format(tot.perdew_zunger),
                Err(_) => super::INCOMPLETE.into(),
            });
        }
        row.resize(2 + wf.models.len(), "failed".into());
        t.rows.push(row);
    }
    out += &t.markdown();

    if !s.tags.is_empty() {
        out += &format!("\n## By tag: mean |δ| ({u})\n\n");
        let mut t = Table::new(&[("tag", false), ("calculations", true)]);
        for m in &wf.models {
            t.push(m.name.clone(), true);
        }
        for tag in &s.tags {
            let mut row = vec![tag.tag.clone(), tag.calculations.to_string()];
            row.extend(tag.models.iter().map(|st| st.as_ref().map_or("—".into(), |st| unit.format(st.mean_abs))));
            t.rows.push(row);
        }
        out += &t.markdown();
    }

    out += &format!("\n## The {} worst orbitals of the set\n\n", s.worst.len());
    let mut t = Table::new(&[
        ("#", true),
        ("calculation", false),
        ("orbital", false),
        ("spin", false),
        ("model", false),
        (&format!("δ ({u})"), true),
        (&format!("J ({u})"), true),
        ("flags", false),
    ]);
    for (i, w) in s.worst.iter().enumerate() {
        let errors = w.orbital.errors.as_ref();
        t.rows.push(vec![
            (i + 1).to_string(),
            w.calculation.clone(),
            w.orbital.label.clone(),
            w.orbital.spin.as_str().into(),
            report.model_name(w.model).into(),
            unit.format_with_error(w.self_interaction(), errors.map(|e| e.models[w.model].self_interaction)),
            unit.format_with_error(w.orbital.hartree, errors.map(|e| e.hartree)),
            flags_text(&w.orbital),
        ]);
    }
    out += &t.markdown();

    out += "\n## Calculations\n";
    for c in report.results {
        let r = report.calculation(c);
        let tags = if c.tags.is_empty() { String::new() } else { format!(" ({})", c.tags.join(", ")) };
        out += &format!("\n### {}{tags}\n\n", c.name);
        if !c.is_ok() {
            out += "**Failed**: the orbitals below are incomplete and excluded from the statistics above.\n\n";
            out += &markdown_failures(&c.outcome.failures);
            out += "\n";
        }
        if !c.outcome.duplicates.is_empty() {
            out += &markdown_duplicates(&r);
            out += "\n";
        }
        for l in input_lines(&c.outcome.ranking.orbitals) {
            out += &format!("Basis-set file {l}.\n\n");
        }
        for l in &c.outcome.localization {
            out += &format!("Foster–Boys localization of {}.\n\n", localization_line(l));
        }
        if let Some(d) = &c.density {
            let i = &d.inspection;
            let matched = i.nuclei.iter().filter(|n| n.atom.is_some()).count();
            out += &format!(
                "Density check (`{}`): {:.4} electrons on the grid; {matched} of {} listed atoms found at density maxima",
                d.source,
                i.electrons,
                i.atoms.len()
            );
            if let Some(sum) = &d.orbital_sum {
                out += &format!("; orbitals sum to the density within {:.1e} e", sum.integrated_abs_difference);
            }
            out += ".\n";
            for f in &i.flags {
                out += &format!("- {}: {}\n", f.kind.as_str(), f.message);
            }
            out += "\n";
        }
        if c.outcome.ranking.orbitals.is_empty() {
            continue;
        }
        out += &format!("Ranked by |δ| under {}; energies in {u}.\n\n", report.model_name(wf.rank_by));
        out += &markdown_orbitals(&r, unit);
        out += "\n";
        out += &markdown_totals(&r, unit);
    }
    out
}

/// Writes the workflow's report files (atomically) and returns their paths.
pub fn write(report: &BatchReport) -> std::io::Result<Vec<(ReportFormat, PathBuf)>> {
    let settings = &report.workflow.report;
    std::fs::create_dir_all(&settings.dir)?;
    let mut written = Vec::new();
    for &format in &settings.formats {
        let (name, text) = match format {
            ReportFormat::Markdown => ("report.md", render_markdown(report, settings.units)),
            ReportFormat::Csv => ("orbitals.csv", render_csv(report)),
            ReportFormat::Json => ("report.json", json::pretty(&to_value(report))),
            ReportFormat::Html => {
                let dated = html::Dated::for_workflow(report.workflow, settings.date);
                ("report.html", html::render(report, settings.units, dated))
            }
        };
        let path = settings.dir.join(name);
        write_atomic(&path, text.as_bytes())?;
        written.push((format, path));
    }
    Ok(written)
}
