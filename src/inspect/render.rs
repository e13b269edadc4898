//! Inspection reports: a text summary for people and JSON for programs (bohr, electrons,
//! e/bohr³ throughout; layout documented in the README).
//!
//! ```text
//! { "tool": {"name", "version"},
//!   "files": [ {"source", "grid": {"shape", "origin", "step", "cell_volume"}, "electrons",
//!               "nuclear_charge", "atoms": [{"atomic_number", "symbol", "charge_column",
//!               "position", "nucleus", "distance"}], "nuclei": [{"position", "grid_point",
//!               "grid_density", "charge_estimate", "zh", "resolved", "atom"}],
//!               "box": {"max_face_density", "outside_estimate"}, "min_density", "max_density",
//!               "orbital_sum": null | {"files": [{"source", "orbitals", "spin", "weight"}],
//!                 "electrons", "integrated_abs_difference", "integrated_tolerance",
//!                 "max_abs_difference", "max_at", "density_at_max", "max_bound_ratio"},
//!               "flags": ["kind: message", …]} ],
//!   "failures": [{"source", "error"}] }
//! ```

use super::FileInspection;
use serde_json::{Map, Value, json};
use std::fmt::Write as _;

/// A file that could not be inspected, for the reports.
#[derive(Clone, Debug, PartialEq)]
pub struct Failure {
    /// The file, as given.
    pub source: String,
    /// The error, naming the file and line.
    pub error: String,
}

/// One file's inspection as a JSON object.
pub fn file_json(f: &FileInspection) -> Value {
    let mut out = Map::new();
    out.insert("source".into(), json!(f.source));
    // Plain data with string keys always serialises to an object; anything else would leave
    // the fields out rather than stop the report.
    let fields = match serde_json::to_value(&f.inspection) {
        Ok(Value::Object(fields)) => fields,
        _ => Map::new(),
    };
    let mut flags = Value::Array(Vec::new());
    for (k, v) in fields {
        if k == "flags" {
            flags = v;
        } else {
            out.insert(k, v);
        }
    }
    out.insert("orbital_sum".into(), serde_json::to_value(&f.orbital_sum).unwrap_or(Value::Null));
    out.insert("flags".into(), flags);
    Value::Object(out)
}

/// The whole JSON report, pretty-printed, with a final newline.
pub fn json(files: &[FileInspection], failures: &[Failure]) -> String {
    let value = json!({
        "tool": {"name": "sixray", "version": env!("CARGO_PKG_VERSION")},
        "files": files.iter().map(file_json).collect::<Vec<_>>(),
        "failures": failures.iter().map(|f| json!({"source": f.source, "error": f.error})).collect::<Vec<_>>(),
    });
    let mut s = serde_json::to_string_pretty(&value).unwrap_or_default();
    s.push('\n');
    s
}

fn position(p: [f64; 3]) -> String {
    format!("({:7.3}, {:7.3}, {:7.3})", p[0], p[1], p[2])
}

/// The text report of one file.
pub fn file_text(f: &FileInspection) -> String {
    let ins = &f.inspection;
    let mut s = String::new();
    let g = &ins.grid;
    let _ = writeln!(s, "{}", f.source);
    let _ = writeln!(
        s,
        "  grid       {} × {} × {} points, longest step {:.4} bohr, cell volume {:.4e} bohr³",
        g.shape[0], g.shape[1], g.shape[2], g.step, g.cell_volume
    );
    let _ = writeln!(
        s,
        "  electrons  {:.4} on the grid (grid sum × cell volume); the listed atoms carry {} protons",
        ins.electrons, ins.nuclear_charge
    );
    let _ = writeln!(
        s,
        "  box        up to {:.2e} e/bohr³ on the faces, about {:.1e} electrons beyond them",
        ins.box_edge.max_face_density, ins.box_edge.outside_estimate
    );
    let _ = writeln!(s, "  nuclei     {} density maxima taken for nuclei (bohr)", ins.nuclei.len());
    let _ = writeln!(
        s,
        "    {:<9} {:<27} {:<27} {:>7} {:>5}  cusp charge",
        "atom", "listed at", "density maximum at", "shift", "Z·h"
    );
    let charge = |n: &super::NucleusEstimate| match n.charge_estimate {
        None => "no fit".to_string(),
        Some(z) if n.resolved => format!("{z:.2}"),
        Some(z) => format!("{z:.2} (unresolved)"),
    };
    for (i, a) in ins.atoms.iter().enumerate() {
        let name = format!("{} {}", i + 1, a.symbol);
        match a.nucleus.map(|k| &ins.nuclei[k]) {
            Some(n) => {
                let _ = writeln!(
                    s,
                    "    {name:<9} {:<27} {:<27} {:>7.4} {:>5.2}  {}",
                    position(a.position),
                    position(n.position),
                    a.distance.unwrap_or(f64::NAN),
                    n.zh.unwrap_or(f64::NAN),
                    charge(n)
                );
            }
            None => {
                let _ = writeln!(s, "    {name:<9} {:<27} {:<27}", position(a.position), "none");
            }
        }
    }
    for n in ins.nuclei.iter().filter(|n| n.atom.is_none()) {
        let zh = n.zh.map_or("-".to_string(), |z| format!("{z:.2}"));
        let _ = writeln!(s, "    {:<9} {:<27} {:<27} {:>7} {zh:>5}  {}", "-", "none", position(n.position), "-", charge(n));
    }
    if let Some(o) = &f.orbital_sum {
        let spins: Vec<String> = o.files.iter().map(|f| f.spin).fold(Vec::new(), |mut v, sp| {
            if !v.iter().any(|x| x == sp) {
                v.push(sp.to_string());
            }
            v
        });
        let _ = writeln!(
            s,
            "  orbitals   {} files ({}), {:.4} electrons; ∫|Δρ| = {:.2e} e (rounding allows {:.1e}), \
             largest |Δρ| = {:.2e} e/bohr³ at {} where ρ = {:.2e}",
            o.files.len(),
            spins.join(", "),
            o.electrons,
            o.integrated_abs_difference,
            o.integrated_tolerance,
            o.max_abs_difference,
            position(o.max_at),
            o.density_at_max
        );
    }
    if ins.flags.is_empty() {
        let _ = writeln!(s, "  flags      none");
    } else {
        let _ = writeln!(s, "  flags      {}", ins.flags.len());
        for flag in &ins.flags {
            let _ = writeln!(s, "    {flag}");
        }
    }
    s
}

/// The text report of several files, separated by blank lines, failures last.
pub fn text(files: &[FileInspection], failures: &[Failure]) -> String {
    let mut parts: Vec<String> = files.iter().map(file_text).collect();
    for f in failures {
        parts.push(format!("{}\n  not inspected: {}\n", f.source, f.error));
    }
    parts.join("\n")
}
