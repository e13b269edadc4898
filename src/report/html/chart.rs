//! What the charts of `report.html` plot, as plain numbers in hartree (the drawing converts to
//! the report's unit), so that tests can hold them against `report.json`.
//!
//! - δ distribution: per model, δ_i of every orbital record the set statistics count (see
//!   [`crate::batch::summary`]: checked, unflagged, bars within the tolerance), with its error
//!   bar, and the set's median |δ| over the same records (restricted orbitals count twice, as
//!   everywhere);
//! - Perdew–Zunger: per calculation, −Σ_i g_i δ_i under each model (none for a failed one), a sum
//!   over all its orbitals, with how many of its spin-orbitals the statistics leave out;
//! - cancellation: per model and counted record, c_i = −E_x,i/J_i against J_i. Its bar is the
//!   first-order worst case from the bars of E_x and J, |Δc| ≤ (σ_Ex + c σ_J)/J (bars are bounds
//!   built as sums, so they are combined as sums too).

use super::super::batch::BatchReport;
use crate::batch::summary::LeftOut;
use crate::diagnostics::{Flag, OrbitalReport};

/// One orbital record in the δ distribution of one model.
#[derive(Clone, Debug, PartialEq)]
pub struct DeltaPoint {
    /// Calculation name.
    pub calculation: String,
    /// Orbital label.
    pub label: String,
    /// Spin-orbitals the record stands for (2 restricted, 1 otherwise).
    pub weight: u32,
    /// δ_i, hartree.
    pub self_interaction: f64,
    /// Its error bar, hartree (`None` without error bars).
    pub error: Option<f64>,
}

/// One model's row of the δ distribution.
#[derive(Clone, Debug, PartialEq)]
pub struct DeltaRow {
    /// Model name.
    pub model: String,
    /// Every counted orbital record of the completed calculations, calculation by calculation,
    /// each in ranked order.
    pub points: Vec<DeltaPoint>,
    /// Median |δ| over spin-orbitals, hartree (`None` when nothing completed).
    pub median_abs: Option<f64>,
}

/// One calculation's Perdew–Zunger corrections.
#[derive(Clone, Debug, PartialEq)]
pub struct PzGroup {
    /// Calculation name.
    pub calculation: String,
    /// Per model, hartree; `None` for a failed calculation (its orbital set is incomplete).
    pub values: Option<Vec<f64>>,
    /// Spin-orbitals of the calculation the set statistics leave out (0 for a failed one).
    pub left_out: u32,
}

/// One orbital record under one model in the cancellation chart.
#[derive(Clone, Debug, PartialEq)]
pub struct CancellationPoint {
    /// Calculation name.
    pub calculation: String,
    /// Orbital label.
    pub label: String,
    /// J_i, hartree.
    pub hartree: f64,
    /// Error bar of J_i, hartree.
    pub hartree_error: Option<f64>,
    /// −E_x,i / J_i (dimensionless).
    pub ratio: f64,
    /// Its first-order worst-case bar (dimensionless).
    pub ratio_error: Option<f64>,
}

/// One model's points in the cancellation chart.
#[derive(Clone, Debug, PartialEq)]
pub struct CancellationSeries {
    /// Model name.
    pub model: String,
    /// Every counted orbital record of the completed calculations.
    pub points: Vec<CancellationPoint>,
}

/// The counts behind the page's verdict.
#[derive(Clone, Debug, PartialEq)]
pub struct Verdict {
    /// Calculations in the workflow.
    pub calculations: usize,
    /// Completed calculations.
    pub completed: usize,
    /// Failed calculations with their failed files and errors.
    pub failed: Vec<(String, Vec<(String, String)>)>,
    /// Orbital records of the completed calculations.
    pub records: usize,
    /// Of those, the records with at least one flag.
    pub flagged: usize,
    /// Of those, the records with an error bar of J or of some model's δ above the tolerance.
    pub above_tolerance: usize,
    /// Records with no error bars (not checked).
    pub unchecked: usize,
    /// Records per flag, in order of first appearance.
    pub flags: Vec<(Flag, usize)>,
    /// The tolerance, hartree.
    pub tolerance: f64,
}

/// Orbital records of the completed calculations, with their calculation's name.
fn completed_records<'a>(report: &'a BatchReport) -> impl Iterator<Item = (&'a str, &'a OrbitalReport)> + 'a {
    report.results.iter().filter(|c| c.is_ok()).flat_map(|c| c.outcome.ranking.orbitals.iter().map(move |o| (c.name.as_str(), o)))
}

/// The records the set statistics count, with their calculation's name.
fn counted_records<'a>(report: &'a BatchReport) -> impl Iterator<Item = (&'a str, &'a OrbitalReport)> + 'a {
    let tolerance = report.summary.tolerance;
    completed_records(report).filter(move |(_, o)| LeftOut::of(o, tolerance).is_none())
}

/// The δ distribution, one row per model in model order.
pub fn delta_rows(report: &BatchReport) -> Vec<DeltaRow> {
    report
        .workflow
        .models
        .iter()
        .enumerate()
        .map(|(m, model)| DeltaRow {
            model: model.name.clone(),
            points: counted_records(report)
                .map(|(calc, o)| DeltaPoint {
                    calculation: calc.to_string(),
                    label: o.label.clone(),
                    weight: o.spin.spin_orbitals(),
                    self_interaction: o.models[m].self_interaction,
                    error: o.errors.as_ref().map(|e| e.models[m].self_interaction).filter(|e| e.is_finite()),
                })
                .collect(),
            median_abs: report.summary.models[m].as_ref().map(|s| s.median_abs),
        })
        .collect()
}

/// Perdew–Zunger corrections, one group per calculation in workflow order.
pub fn pz_groups(report: &BatchReport) -> Vec<PzGroup> {
    report
        .results
        .iter()
        .zip(&report.summary.calculations)
        .map(|(c, counted)| PzGroup {
            calculation: c.name.clone(),
            values: c.outcome.ranking.totals.iter().map(|t| t.as_ref().ok().map(|t| t.perdew_zunger)).collect::<Option<_>>().filter(|_| c.is_ok()),
            left_out: counted.as_ref().map_or(0, |k| k.left_out_spin_orbitals()),
        })
        .collect()
}

/// The cancellation ratio against J, one series per model in model order.
pub fn cancellation_series(report: &BatchReport) -> Vec<CancellationSeries> {
    report
        .workflow
        .models
        .iter()
        .enumerate()
        .map(|(m, model)| CancellationSeries {
            model: model.name.clone(),
            points: counted_records(report)
                .map(|(calc, o)| {
                    let e = o.models[m];
                    let ratio_error = o.errors.as_ref().filter(|_| o.hartree > 0.0).map(|err| {
                        (err.models[m].exchange + e.cancellation.abs() * err.hartree) / o.hartree
                    });
                    CancellationPoint {
                        calculation: calc.to_string(),
                        label: o.label.clone(),
                        hartree: o.hartree,
                        hartree_error: o.errors.as_ref().map(|e| e.hartree).filter(|e| e.is_finite()),
                        ratio: e.cancellation,
                        ratio_error: ratio_error.filter(|e| e.is_finite()),
                    }
                })
                .collect(),
        })
        .collect()
}

/// The verdict counts.
pub fn verdict(report: &BatchReport) -> Verdict {
    let tolerance = report.workflow.trust.tolerance;
    let mut v = Verdict {
        calculations: report.results.len(),
        completed: report.summary.completed,
        failed: report
            .results
            .iter()
            .filter(|c| !c.is_ok())
            .map(|c| (c.name.clone(), c.outcome.failures.iter().map(|f| (f.source.clone(), f.error.clone())).collect()))
            .collect(),
        records: 0,
        flagged: 0,
        above_tolerance: 0,
        unchecked: 0,
        flags: Vec::new(),
        tolerance,
    };
    for (_, o) in completed_records(report) {
        v.records += 1;
        v.flagged += usize::from(!o.flags.is_empty());
        match &o.errors {
            None => v.unchecked += 1,
            Some(e) => {
                let above = e.hartree > tolerance || e.models.iter().any(|m| m.self_interaction > tolerance);
                v.above_tolerance += usize::from(above);
            }
        }
        for &f in &o.flags {
            match v.flags.iter_mut().find(|(g, _)| *g == f) {
                Some((_, n)) => *n += 1,
                None => v.flags.push((f, 1)),
            }
        }
    }
    v
}
