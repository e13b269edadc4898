//! The JSON report (hartree throughout; layout documented in the README).
//!
//! ```text
//! { "tool": {"name", "version"}, "units": "hartree", "rank_by": MODEL,
//!   "models": [{"name", "exchange", "correlation", "summary"}],
//!   "orbitals": [ {"rank", "source", "label", "spin", "occupation", "energy", "set", "norm", "lost_charge",
//!                  "hartree", "optimal_alpha", "models": {MODEL: {"exchange", "correlation",
//!                  "self_interaction", "cancellation"}},
//!                  "errors": {"hartree", "models": {MODEL: {"exchange", "correlation",
//!                  "self_interaction"}}} or null, "flags": [FLAG],
//!                  "cusp_correction": {"nuclei", "hartree", "models": {MODEL: {"exchange",
//!                  "correlation"}}} or null,
//!                  "tail_correction": {"lost_charge", "hartree", "models": {MODEL:
//!                  {"exchange", "correlation"}}} or null,
//!                  "input": {"format", "writer", "convention", "orthonormality",
//!                  "tolerance", "core_potentials"} or null (basis-set files: how they were
//!                  read),
//!                  "kind": "amplitude"|"density", "kind_source": "given"|"detected"|"computed"
//!                  or null, "kind_evidence": {"integral", "square_integral", "negative_share",
//!                  "nuclear_charge", "title"} or null,
//!                  "invalid": [{"quantity", "reason"}] (only where some number is null
//!                  because it is not finite: its dotted name, e.g.
//!                  "models.lsda.self_interaction", and why; the record is then flagged
//!                  "not-finite")} ],
//!                  // worst first (records without a finite δ under rank_by last);
//!                  // corrections: corrected − plain
//!   "totals": {MODEL: {"perdew_zunger", "mean_cancellation"} or, where withheld (a file
//!              failed, or a record has no finite δ under MODEL), both null and "invalid":
//!              [{"quantity", "reason": "incomplete: …"}]}, "spin_orbitals": N,
//!   "failures": [{"source", "error"}],
//!   "duplicates": [{"source", "same_as"}] (only where a file given has the bytes of an
//!                  earlier one: left out, analysed once as `same_as`),
//!   "localization": [{"source", "spin", "orbitals", "initial_functional", "functional",
//!                     "sweeps", "converged"}] }   (localized orbitals only; L in bohr²)
//! ```

use super::Report;
use crate::calculation::{DuplicateFile, FileFailure, LocalizationSummary};
use crate::diagnostics::non_finite_reason;
use crate::xc::Model;
use serde_json::{Map, Value, json};

/// The shown orbitals, ranked, as in the `orbitals` list.
pub fn orbitals(report: &Report) -> Vec<Value> {
    let names: Vec<&str> = report.models.iter().map(|m| m.name.as_str()).collect();
    report
        .shown()
        .iter()
        .enumerate()
        .map(|(i, o)| {
            let per_model = report
                .models
                .iter()
                .zip(&o.models)
                .map(|(m, e)| {
                    let v = json!({
                        "exchange": e.exchange,
                        "correlation": e.correlation,
                        "self_interaction": e.self_interaction,
                        "cancellation": e.cancellation,
                    });
                    (m.name.clone(), v)
                })
                .collect::<Map<_, _>>();
            let errors = o.errors.as_ref().map(|e| {
                let per_model = report
                    .models
                    .iter()
                    .zip(&e.models)
                    .map(|(m, e)| {
                        let v = json!({
                            "exchange": e.exchange,
                            "correlation": e.correlation,
                            "self_interaction": e.self_interaction,
                        });
                        (m.name.clone(), v)
                    })
                    .collect::<Map<_, _>>();
                json!({"hartree": e.hartree, "models": per_model})
            });
            let mut v = json!({
                "rank": i + 1,
                "source": o.source,
                "label": o.label,
                "spin": o.spin.as_str(),
                "occupation": o.occupation,
                "energy": o.energy,
                "set": o.set.as_str(),
                "norm": o.norm,
                "lost_charge": o.lost_charge,
                "hartree": o.hartree,
                "optimal_alpha": o.optimal_alpha,
                "models": per_model,
                "errors": errors,
                "flags": o.flags.iter().map(|f| f.as_str()).collect::<Vec<_>>(),
                "cusp_correction": o.cusp_correction.as_ref().map(|c| json!({
                    "nuclei": c.nuclei,
                    "hartree": c.hartree,
                    "models": changes_per_model(report, &c.models),
                })),
                "tail_correction": o.tail_correction.as_ref().map(|t| json!({
                    "lost_charge": t.lost_charge,
                    "hartree": t.hartree,
                    "models": changes_per_model(report, &t.models),
                })),
                "input": o.input.as_ref().map(|c| json!({
                    "format": c.format,
                    "writer": c.writer,
                    "convention": c.convention,
                    "orthonormality": c.orthonormality,
                    "tolerance": c.tolerance,
                    "core_potentials": c.core_potentials,
                })),
                "kind": o.kind.map(|k| k.as_str()),
                "kind_source": o.kind_origin.as_ref().map(|k| k.source.as_str()),
                "kind_evidence": o.kind_origin.as_ref().and_then(|k| k.evidence).map(|e| json!({
                    "integral": e.integral,
                    "square_integral": e.square_integral,
                    "negative_share": e.negative_share,
                    "nuclear_charge": e.nuclear_charge,
                    "title": e.title,
                })),
            });
            // serde_json writes a number that is not finite as null: say which, and why.
            let bad = o.non_finite();
            if !bad.is_empty() {
                let list = bad.iter().map(|(q, v)| invalid(&q.path(&names), &non_finite_reason(*v))).collect::<Vec<_>>();
                insert_after(&mut v, "flags", "invalid", json!(list));
            }
            v
        })
        .collect()
}

/// One entry of an `invalid` list: a number shown as null, and why it is no result.
fn invalid(quantity: &str, reason: &str) -> Value {
    json!({"quantity": quantity, "reason": reason})
}

/// Inserts `key` right after `after` in the object `v` (keys keep their order in the output).
fn insert_after(v: &mut Value, after: &str, key: &str, value: Value) {
    let Some(map) = v.as_object_mut() else { return };
    let entries: Vec<(String, Value)> = std::mem::take(map).into_iter().collect();
    for (k, x) in entries {
        let here = k == after;
        map.insert(k, x);
        if here {
            map.insert(key.to_string(), value.clone());
        }
    }
}

/// A correction's (exchange, correlation) changes, keyed by model name.
fn changes_per_model(report: &Report, changes: &[(f64, f64)]) -> Map<String, Value> {
    report.models.iter().zip(changes).map(|(m, d)| (m.name.clone(), json!({"exchange": d.0, "correlation": d.1}))).collect()
}

/// Per-model totals, keyed by model name; a withheld one as nulls with the reason.
pub fn totals(report: &Report) -> Value {
    let totals = report
        .models
        .iter()
        .zip(&report.outcome.ranking.totals)
        .map(|(m, t)| {
            let v = match t {
                Ok(t) => json!({ "perdew_zunger": t.perdew_zunger, "mean_cancellation": t.mean_cancellation }),
                Err(reason) => json!({
                    "perdew_zunger": null,
                    "mean_cancellation": null,
                    "invalid": [invalid("perdew_zunger", reason), invalid("mean_cancellation", reason)],
                }),
            };
            (m.name.clone(), v)
        })
        .collect::<Map<_, _>>();
    Value::Object(totals)
}

/// Files left out for having the same bytes as another, as in the `duplicates` list.
pub fn duplicates(duplicates: &[DuplicateFile]) -> Vec<Value> {
    duplicates.iter().map(|d| json!({"source": d.source, "same_as": d.same_as})).collect()
}

/// The models with their functionals.
pub fn models(models: &[Model]) -> Vec<Value> {
    models
        .iter()
        .map(|m| {
            json!({
                "name": m.name,
                "exchange": m.exchange.id(),
                "correlation": m.correlation.as_ref().map(|c| c.id()),
                "summary": m.summary,
            })
        })
        .collect()
}

/// Files that failed.
pub fn failures(failures: &[FileFailure]) -> Vec<Value> {
    failures.iter().map(|f| json!({"source": f.source, "error": f.error})).collect()
}

/// What the tool is.
pub fn tool() -> Value {
    json!({ "name": "sixray", "version": env!("CARGO_PKG_VERSION") })
}

/// The report as a JSON value.
pub fn to_value(report: &Report) -> Value {
    let ranking = &report.outcome.ranking;
    let mut v = json!({
        "tool": tool(),
        "units": "hartree",
        "rank_by": report.models.get(ranking.rank_by).map(|m| m.name.as_str()),
        "models": models(report.models),
        "orbitals": orbitals(report),
        "totals": totals(report),
        "spin_orbitals": ranking.spin_orbitals,
        "failures": failures(&report.outcome.failures),
        "localization": localization(&report.outcome.localization),
    });
    if !report.outcome.duplicates.is_empty() {
        insert_after(&mut v, "failures", "duplicates", json!(duplicates(&report.outcome.duplicates)));
    }
    v
}

/// Per localized spin channel: files, spin, orbitals, L before and after (bohr²), sweeps,
/// convergence.
pub fn localization(summaries: &[LocalizationSummary]) -> Vec<Value> {
    summaries
        .iter()
        .map(|l| {
            let r = &l.channel.result;
            json!({
                "source": l.source,
                "spin": l.channel.spin.as_str(),
                "orbitals": l.channel.orbitals,
                "initial_functional": r.initial_functional,
                "functional": r.functional,
                "sweeps": r.sweeps,
                "converged": r.converged,
            })
        })
        .collect()
}

/// Pretty-printed JSON text with a final newline.
pub fn pretty(value: &Value) -> String {
    let mut s = serde_json::to_string_pretty(value).expect("JSON values always serialise");
    s.push('\n');
    s
}

/// The report as pretty-printed JSON text with a final newline.
pub fn render(report: &Report) -> String {
    pretty(&to_value(report))
}
