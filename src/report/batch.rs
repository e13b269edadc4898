//! Reports of a batch: `report.md`, `orbitals.csv`, `report.json` and `report.html` (see
//! [`super::html`]) in the report directory.
//!
//! The JSON layout (hartree throughout):
//!
//! ```text
//! { "tool", "units": "hartree", "workflow": PATH, "rank_by": MODEL, "models": [...],
//!   "summary": { "calculations": N, "completed": N, "failed": N,
//!                "counted": COUNTED,
//!                "models": {MODEL: {"mean_abs_self_interaction", "median_abs_self_interaction",
//!                                   "max_abs_self_interaction", "max_at": {"calculation", "label"},
//!                                   "mean_cancellation", "spin_orbitals"}},
//!                "tags": {TAG: {"calculations", "counted": COUNTED, "models": {MODEL: {...as above}}}},
//!                "worst": [{"calculation", "label", "spin", "model", "self_interaction", "hartree",
//!                           "counted": true | false, "left_out": REASON | null}],
//!                "flags": {FLAG: number of orbital records}, "tolerance", "cusp_correction",
//!                "tail_correction" },
//!   "calculations": [ {"name", "tags", "status": "ok" | "failed", "error" (when failed),
//!                      "failures": [{"source", "error"}], "duplicates": [...as in rank] (only
//!                      where some), "orbitals": [...as in rank],
//!                      "totals": {MODEL: ...as in rank: null with "invalid" when withheld},
//!                      "spin_orbitals", "counted": COUNTED (null when failed),
//!                      "density_check": (as one file of `inspect --format json`) or null,
//!                      "localization": [...as in rank] } ],
//!   "report_set": ID }
//!
//! COUNTED = {"records": N, "spin_orbitals": N,
//!            "left_out": {REASON: {"records": N, "spin_orbitals": N}}}
//! ```
//!
//! `report_set` is the id of the set of reports one run wrote (see [`super::set`]); it is the
//! last field.
//!
//! The statistics (`models`, `tags[].models`) count only the records `counted` counts: checked,
//! unflagged, every error bar within `tolerance` (see [`crate::batch::summary`]); a model is
//! absent from `models` when no record counts. Each left-out record appears under one REASON,
//! the first that applies: `not-finite`, `no-error-bars`, `kind-suspicious`, `above-tolerance`,
//! `norm-off`, `truncated-box`. The Perdew–Zunger `totals` sum over every orbital of a
//! calculation; its `counted` says how many of them the statistics count.
//!
//! Nothing in a report depends on timing or on the machine, so a rerun (from the cache or not)
//! writes the same bytes. (`report.html` shows a date: the caller's, or the newest modification
//! date among the input files, which a rerun does not change.)

use super::text::{Table, input_lines, localization_line, markdown_duplicates, markdown_failures, markdown_orbitals, markdown_totals};
use super::{EnergyUnit, Report, csv, flags_text, html, json, set};
use crate::batch::summary::{Coverage, LeftOut, ModelStats, SetSummary};
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

/// What a statistic counts, as JSON (`COUNTED` in the module docs).
fn coverage_value(c: &Coverage) -> Value {
    let left_out =
        c.left_out.iter().map(|&(r, n, w)| (r.as_str().to_string(), json!({"records": n, "spin_orbitals": w}))).collect::<Map<_, _>>();
    json!({"records": c.records, "spin_orbitals": c.spin_orbitals, "left_out": left_out})
}

/// Why a record is left out, for people: `error bar above 1.600 mEh`, or the flag's name.
pub(crate) fn reason_text(r: LeftOut, tolerance: f64, unit: EnergyUnit) -> String {
    match r {
        LeftOut::NotFinite => "a value not finite".into(),
        LeftOut::NoErrorBars => "no error bars computed".into(),
        LeftOut::AboveTolerance => format!("error bar above {} {}", unit.format(tolerance), unit.symbol()),
        LeftOut::KindSuspicious | LeftOut::NormOff | LeftOut::TruncatedBox => r.as_str().into(),
    }
}

/// The reasons of what `c` leaves out, in parentheses: `(error bar above 1.600 mEh)` for one
/// reason, `(3 error bar above 1.600 mEh, 1 norm-off)` in spin-orbitals for several.
fn reasons_text(c: &Coverage, tolerance: f64, unit: EnergyUnit) -> String {
    let parts: Vec<String> = match c.left_out.as_slice() {
        [(r, _, _)] => vec![reason_text(*r, tolerance, unit)],
        all => all.iter().map(|&(r, _, w)| format!("{w} {}", reason_text(r, tolerance, unit))).collect(),
    };
    format!("({})", parts.join(", "))
}

/// How many spin-orbitals a statistic counts, for a table cell: `4 of 4`, or `0 of 4 (error
/// bar above 1.600 mEh)`.
pub(crate) fn counted_cell(c: &Coverage, tolerance: f64, unit: EnergyUnit) -> String {
    let cell = format!("{} of {}", c.spin_orbitals, c.total_spin_orbitals());
    if c.left_out.is_empty() { cell } else { format!("{cell} {}", reasons_text(c, tolerance, unit)) }
}

/// Spin-orbitals left out, for a table cell: `—`, or `4 (error bar above 1.600 mEh)`.
pub(crate) fn left_out_cell(c: &Coverage, tolerance: f64, unit: EnergyUnit) -> String {
    if c.left_out.is_empty() { "—".into() } else { format!("{} {}", c.left_out_spin_orbitals(), reasons_text(c, tolerance, unit)) }
}

/// The sentence that says what the set statistics count (`note` follows the counts, e.g. `
/// (the same records for every model)`): `Statistics over 38 of 48 spin-orbitals…; 10 left
/// out (…).`, or, with nothing counted, `Nothing to compare: …`.
pub(crate) fn coverage_sentence(c: &Coverage, tolerance: f64, unit: EnergyUnit, note: &str) -> String {
    let total = c.total_spin_orbitals();
    if total == 0 {
        "Nothing to compare: no completed calculation has orbital records.".into()
    } else if c.spin_orbitals == 0 {
        format!(
            "Nothing to compare: all {total} spin-orbitals left out {}; no record has its error bars within the tolerance and \
             no flag. Their values are in the calculations' tables.",
            reasons_text(c, tolerance, unit)
        )
    } else if c.left_out.is_empty() {
        format!("Statistics over all {total} spin-orbitals{note}.")
    } else {
        format!(
            "Statistics over {} of {total} spin-orbitals{note}; {} left out {}.",
            c.spin_orbitals,
            c.left_out_spin_orbitals(),
            reasons_text(c, tolerance, unit)
        )
    }
}

/// Whether a worst-list entry is counted, for a table cell: `yes`, or `no: REASON`.
pub(crate) fn counted_flag(left_out: Option<LeftOut>, tolerance: f64, unit: EnergyUnit) -> String {
    left_out.map_or_else(|| "yes".into(), |r| format!("no: {}", reason_text(r, tolerance, unit)))
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
        .map(|t| {
            let v = json!({"calculations": t.calculations, "counted": coverage_value(&t.coverage), "models": per_model(report, &t.models)});
            (t.tag.clone(), v)
        })
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
                "counted": w.left_out.is_none(),
                "left_out": w.left_out.map(LeftOut::as_str),
            })
        })
        .collect::<Vec<_>>();
    let calculations = report
        .results
        .iter()
        .zip(&s.calculations)
        .map(|(c, counted)| {
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
            map.insert("counted".into(), counted.as_ref().map_or(Value::Null, coverage_value));
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
            "counted": coverage_value(&s.coverage),
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
         completed ones; {} models; energies in {u}. Set statistics count the records of completed calculations \
         whose error bars are computed and within the tolerance and that carry no flag, each restricted orbital \
         counting as two spin-orbitals; δ = J + E_x + E_c.\n\n",
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
    let tol = wf.trust.tolerance;
    out += "## Models across the set\n\n";
    out += &coverage_sentence(&s.coverage, tol, unit, " (the same records for every model)");
    out += "\n\n";
    let mut t = if s.coverage.spin_orbitals == 0 {
        // Nothing counted: the models, without numbers.
        Table::new(&[("model", false), ("exchange", false), ("correlation", false)])
    } else {
        Table::new(&[
            ("model", false),
            ("exchange", false),
            ("correlation", false),
            (&format!("mean |δ| ({u})"), true),
            (&format!("median |δ| ({u})"), true),
            (&format!("max |δ| ({u})"), true),
            ("max at", false),
            ("mean −E_x/J", true),
        ])
    };
    for (m, st) in wf.models.iter().zip(&s.models) {
        let mut row = vec![m.name.clone(), m.exchange.id(), m.correlation.as_ref().map_or("—".into(), |c| c.id())];
        if s.coverage.spin_orbitals > 0 {
            row.extend(stats_cells(st.as_ref(), unit));
            row.push(st.as_ref().map_or("—".into(), |st| format!("{} / {}", st.max_at.0, st.max_at.1)));
            row.push(st.as_ref().map_or("—".into(), |st| format!("{:.4}", st.mean_cancellation)));
        }
        t.rows.push(row);
    }
    out += &t.markdown();

    out += &format!("\n## Perdew–Zunger correction per calculation ({u})\n\n");
    out += "Sums over every orbital of a calculation, counted in the statistics or not; `counted` is how many of its \
            spin-orbitals the statistics count (a sum over records left out carries their error bars, in the \
            calculation's table).\n\n";
    let mut t = Table::new(&[("calculation", false), ("tags", false), ("counted", false)]);
    for m in &wf.models {
        t.push(m.name.clone(), true);
    }
    for (c, counted) in report.results.iter().zip(&s.calculations) {
        let mut row = vec![c.name.clone(), c.tags.join(", "), counted.as_ref().map_or("failed".into(), |k| counted_cell(k, tol, unit))];
        for tot in &c.outcome.ranking.totals {
            row.push(match tot {
                _ if !c.is_ok() => "failed".into(),
                Ok(tot) => unit.format(tot.perdew_zunger),
                Err(_) => super::INCOMPLETE.into(),
            });
        }
        row.resize(3 + wf.models.len(), "failed".into());
        t.rows.push(row);
    }
    out += &t.markdown();

    if !s.tags.is_empty() {
        out += &format!("\n## By tag: mean |δ| ({u})\n\n");
        out += "Over each tag's counted records (spin-orbitals `counted` of all, the rest `left out`).\n\n";
        let mut t = Table::new(&[("tag", false), ("calculations", true), ("counted", true), ("left out", false)]);
        for m in &wf.models {
            t.push(m.name.clone(), true);
        }
        for tag in &s.tags {
            let c = &tag.coverage;
            let mut row = vec![
                tag.tag.clone(),
                tag.calculations.to_string(),
                format!("{} of {}", c.spin_orbitals, c.total_spin_orbitals()),
                left_out_cell(c, tol, unit),
            ];
            row.extend(tag.models.iter().map(|st| st.as_ref().map_or("—".into(), |st| unit.format(st.mean_abs))));
            t.rows.push(row);
        }
        out += &t.markdown();
    }

    out += &format!("\n## The {} worst orbitals of the set\n\n", s.worst.len());
    out += "Every record of the completed calculations by |δ|, counted in the statistics or not (`counted` says which, \
            and why not).\n\n";
    let mut t = Table::new(&[
        ("#", true),
        ("calculation", false),
        ("orbital", false),
        ("spin", false),
        ("model", false),
        (&format!("δ ({u})"), true),
        (&format!("J ({u})"), true),
        ("flags", false),
        ("counted", false),
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
            counted_flag(w.left_out, tol, unit),
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

/// Writes the workflow's report files as one set (see [`super::set`]: all rendered, then
/// switched into place together, then `report-set.json`) and returns their paths. Each report
/// but the CSV carries the set's id: the last line of `report.md`, `report_set` in
/// `report.json`, the footer of `report.html`.
pub fn write(report: &BatchReport) -> std::io::Result<Vec<(ReportFormat, PathBuf)>> {
    let settings = &report.workflow.report;
    std::fs::create_dir_all(&settings.dir)?;
    let value = to_value(report);
    let mut rendered: Vec<(ReportFormat, &str, String)> = settings
        .formats
        .iter()
        .map(|&format| match format {
            ReportFormat::Markdown => (format, "report.md", render_markdown(report, settings.units)),
            ReportFormat::Csv => (format, "orbitals.csv", render_csv(report)),
            ReportFormat::Json => (format, "report.json", json::pretty(&value)),
            ReportFormat::Html => {
                let dated = html::Dated::for_workflow(report.workflow, settings.date);
                (format, "report.html", html::render(report, settings.units, dated))
            }
        })
        .collect();
    let id = set::id(&rendered.iter().map(|(_, name, text)| (*name, text.as_bytes())).collect::<Vec<_>>());
    for (format, _, text) in &mut rendered {
        mark(*format, text, &value, &id);
    }
    set::write(&settings.dir, &id, &rendered.iter().map(|(_, name, text)| (*name, text.as_bytes())).collect::<Vec<_>>())?;
    Ok(rendered.into_iter().map(|(format, name, _)| (format, settings.dir.join(name))).collect())
}

/// Puts the set's id into a rendered report (the CSV, a plain table, stays as it is: the
/// manifest's digest ties it to the set).
fn mark(format: ReportFormat, text: &mut String, value: &Value, id: &str) {
    let note = |code: &str| format!("Report set {code}: the reports of one run share this id; {} beside this file lists them with their BLAKE3 digests.", set::MANIFEST);
    match format {
        ReportFormat::Markdown => *text += &format!("\n---\n\n{}\n", note(&format!("`{id}`"))),
        ReportFormat::Json => {
            let mut v = value.clone();
            if let Some(map) = v.as_object_mut() {
                map.insert("report_set".into(), json!(id));
            }
            *text = json::pretty(&v);
        }
        ReportFormat::Html => {
            let p = format!("<p>{}</p>", note(&format!("<code>{id}</code>")));
            let at = text.rfind("</footer>").unwrap_or(text.len());
            text.insert_str(at, &p);
        }
        ReportFormat::Csv => {}
    }
}
