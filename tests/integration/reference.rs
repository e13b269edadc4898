//! Real quantum-chemistry output: every orbital cube file of `../shared/reference/<molecule>/`
//! through the grid path, against `reference.json`.
//!
//! reference: PySCF 2.14 (exact Gaussian-integral J, `hartree_self`) and libxc 7.0.0 on a level-8
//! Becke grid (`lsda_x`, `pw92_c`), shared reference set; cubes at 0.15 bohr, five printed digits.
//!
//! Tolerances, by what a 0.15 bohr grid can resolve:
//! - orbitals whose grid norm is within 5e-4 of one electron (no cusp the grid misses; p-like and
//!   diffuse orbitals): J and the local functionals within 0.25 % (observed: below 0.11 %). The
//!   norm is only a symptom: water's 2a1 has a norm within 8e-4 and an E_x off by 0.46 %.
//!   Gradient-corrected and meta-GGA exchange within 0.5 % (observed: 0.37 %): their integrands
//!   are not smooth where the reduced gradient diverges (nodal surfaces, where B88's integrand
//!   is ∝ |∇n|, and the exponential tail), which uniform-grid quadrature resolves only to a few
//!   tenths of a per cent. PBE correlation within 1 % (observed: 0.65 %): for one electron it is
//!   the small difference of the local term and the gradient correction H (≈ −0.03 and +0.025
//!   Eh), so grid errors in either are amplified about fivefold.
//! - other valence orbitals (2s-like, with a cusp at a heavy nucleus): within 8 %.
//! - core orbitals (orbital energy below −5 Eh, 1s of a first-row atom): the cusp spans about one
//!   grid step, so the plain sum is far off (+99 % when a nucleus sits on a grid point, −6 % when
//!   it lies between points). Checked: within 110 %, and the error has the sign of the norm's
//!   error (over-weighted peak: both too large; missed peak: both too small).
//! - PBE correlation of orbitals with a cusp (the last two groups): finite differences round the
//!   cusp off, t² comes out too small near the nucleus and E_c too negative, on top of the
//!   quadrature error. Checked: the error is positive, below 15 % for valence and 500 % for
//!   cores. An analytic O-1s-like density (ζ = 7.66) on the same grid shows the same: +390 % with
//!   the nucleus on a grid point, +55 % between points (−22 % / +128 % with exact gradients).
//! - correlation that vanishes for one electron (LYP, SCAN, r2SCAN): below 1e-6 Eh.
//!
//! Run with `--nocapture` to print the per-orbital table recorded in the README.

use crate::common::shared_dir;
use sixray::diagnostics::{Engine, EngineParams, Spin};
use sixray::input::{LoadParams, SpinRule, load_cube};
use sixray::par::Parallelism;
use sixray::xc::{Model, Part};
use std::path::Path;

/// Models whose parts cover every functional of the reference file.
const MODELS: [&str; 7] = ["lsda", "lsda-vwn5", "blyp", "pbe", "pw91-x", "scan", "r2scan"];
/// Reference keys in table order; "hartree_self" is J.
const KEYS: [&str; 13] = [
    "hartree_self", "lsda_x", "b88_x", "pbe_x", "pw91_x", "scan_x", "r2scan_x", "pw92_c", "vwn5_c", "pbe_c", "lyp_c",
    "scan_c", "r2scan_c",
];

struct Row {
    molecule: String,
    file: String,
    energy: f64,
    norm: f64,
    /// (key, ours, reference), in KEYS order.
    values: Vec<(&'static str, f64, f64)>,
    /// Our error bar of each of `values`.
    bars: Vec<f64>,
    /// (model, δ ours, δ reference, error bar of δ).
    deltas: Vec<(String, f64, f64, f64)>,
    flags: Vec<String>,
}

impl Row {
    /// Relative error, or None where the reference vanishes (one-electron-exact correlation).
    fn error(&self, k: usize) -> Option<f64> {
        let (_, got, want) = self.values[k];
        (want.abs() > 1e-8).then(|| (got - want) / want)
    }
}

fn num(v: &serde_json::Value, key: &str) -> f64 {
    v[key].as_f64().unwrap_or_else(|| panic!("reference value `{key}` missing in {v}"))
}

fn reference_key(part: Part, id: &str) -> String {
    format!("{id}_{}", if part == Part::Exchange { "x" } else { "c" })
}

fn molecule_rows(dir: &Path, engine: &Engine) -> Vec<Row> {
    let text = std::fs::read_to_string(dir.join("reference.json")).expect("reference.json");
    let reference: serde_json::Value = serde_json::from_str(&text).expect("reference.json parses");
    let molecule = dir.file_name().unwrap().to_string_lossy().into_owned();
    let mut rows = Vec::new();
    for o in reference["orbitals"].as_array().expect("orbitals") {
        let file = o["file"].as_str().expect("file");
        let spin = match o["spin"].as_str() {
            Some("alpha") => Spin::Alpha,
            Some("beta") => Spin::Beta,
            _ => Spin::Restricted,
        };
        // One electron per spin-orbital: reference.json's `occupation` is that of the spatial
        // orbital, while its energies are of n_i = |φ_i|².
        let load = LoadParams { spin: SpinRule::Fixed(spin), ..LoadParams::default() };
        let orbitals = load_cube(&dir.join(file), &load).unwrap_or_else(|e| panic!("{e}"));
        assert_eq!(orbitals.len(), 1, "{file}");
        let r = engine.analyse(&orbitals[0], Parallelism::Rayon).unwrap_or_else(|e| panic!("{file}: {e}"));
        let errors = r.errors.as_ref().expect("error bars are on by default");
        let mut ours = vec![("hartree_self".to_string(), r.hartree, errors.hartree)];
        let mut deltas = Vec::new();
        for ((m, e), u) in engine.models().iter().zip(&r.models).zip(&errors.models) {
            ours.push((reference_key(Part::Exchange, &m.exchange.id()), e.exchange, u.exchange));
            let mut want = num(o, "hartree_self") + num(o, &reference_key(Part::Exchange, &m.exchange.id()));
            if let Some(c) = &m.correlation {
                ours.push((reference_key(Part::Correlation, &c.id()), e.correlation, u.correlation));
                want += num(o, &reference_key(Part::Correlation, &c.id()));
            }
            deltas.push((m.name.clone(), e.self_interaction, want, u.self_interaction));
        }
        let found = |k: &str| ours.iter().find(|(key, ..)| key == k).unwrap_or_else(|| panic!("no model computes {k}")).clone();
        let values = KEYS.iter().map(|&k| (k, found(k).1, num(o, k))).collect();
        let bars = KEYS.iter().map(|&k| found(k).2).collect();
        let flags = r.flags.iter().map(|f| f.as_str().to_string()).collect();
        rows.push(Row {
            molecule: molecule.clone(),
            file: file.to_string(),
            energy: num(o, "orbital_energy"),
            norm: r.norm,
            values,
            bars,
            deltas,
            flags,
        });
    }
    rows
}

#[test]
fn grid_self_energies_against_gaussian_integral_reference() {
    let Some(shared) = shared_dir("grid_self_energies_against_gaussian_integral_reference") else { return };
    let mut dirs: Vec<_> = std::fs::read_dir(shared.join("reference"))
        .expect("reference dir")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.join("reference.json").is_file())
        .collect();
    dirs.sort();
    assert!(dirs.len() >= 5, "expected the shared molecules, found {dirs:?}");
    let models = MODELS.iter().map(|m| Model::from_name(m).unwrap()).collect();
    let engine = Engine::new(models, EngineParams::default());

    let heads = KEYS.map(|k| if k == "hartree_self" { "J".to_string() } else { k.to_string() });
    println!("| molecule | orbital | ε (Eh) | norm | {} |", heads.join(" | "));
    println!("|:--|:--|--:|--:|{}", "--:|".repeat(KEYS.len()));
    let mut failures = Vec::new();
    let all_rows: Vec<Row> = dirs.iter().flat_map(|dir| molecule_rows(dir, &engine)).collect();
    {
        for row in &all_rows {
            let cells: Vec<String> = (0..KEYS.len())
                .map(|k| match row.error(k) {
                    Some(e) => format!("{:+.2}", 100.0 * e),
                    None => format!("{:.0e}", row.values[k].1),
                })
                .collect();
            println!(
                "| {} | {} | {:.3} | {:.5} | {} |",
                row.molecule,
                row.file.trim_end_matches(".cube.gz"),
                row.energy,
                row.norm,
                cells.join(" | ")
            );
            let resolved = (row.norm - 1.0).abs() < 5e-4;
            let core = row.energy < -5.0;
            for (k, &(key, got, want)) in row.values.iter().enumerate() {
                let local = ["hartree_self", "lsda_x", "pw92_c", "vwn5_c"].contains(&key);
                let ok = match (row.error(k), key) {
                    // Correlation that vanishes for one electron must vanish here too.
                    (None, _) => got.abs() < 1e-6,
                    (Some(e), "pbe_c") if resolved => e.abs() < 1e-2,
                    (Some(e), "pbe_c") => e > 0.0 && e < if core { 5.0 } else { 0.15 },
                    (Some(e), _) if resolved => e.abs() < if local { 2.5e-3 } else { 5e-3 },
                    (Some(e), _) if core => e.abs() < 1.1 && e.signum() == (row.norm - 1.0).signum(),
                    (Some(e), _) => e.abs() < 0.08,
                };
                if !ok {
                    failures.push(format!("{}/{} {key}: norm {:.5}, {got} vs {want}", row.molecule, row.file, row.norm));
                }
            }
        }
    }
    assert!(failures.is_empty(), "outside tolerance:\n{}", failures.join("\n"));
    check_error_bars(&all_rows);
}

/// The error bars bracket the reference for at least 90 % of (orbital, quantity) pairs, and stay
/// below 1 % of J where the grid resolves the orbital.
fn check_error_bars(rows: &[Row]) {
    let (mut inside, mut total) = (0, 0);
    let mut missed = Vec::new();
    println!("\n| molecule | orbital | flags | J ± σ (mEh) | δ lsda ± σ (mEh) | reference δ lsda (mEh) |");
    println!("|:--|:--|:--|--:|--:|--:|");
    for row in rows {
        let mut pairs: Vec<(String, f64, f64, f64)> = row
            .values
            .iter()
            .zip(&row.bars)
            // Correlation that vanishes for one electron is exactly zero here; the reference's
            // ~1e-12 Eh is its density floor, not a number to bracket.
            .filter(|((_, _, want), _)| want.abs() > 1e-8)
            .map(|((k, got, want), bar)| (k.to_string(), *got, *want, *bar))
            .collect();
        pairs.extend(row.deltas.iter().cloned());
        for (key, got, want, bar) in pairs {
            total += 1;
            if (got - want).abs() <= bar {
                inside += 1;
            } else {
                missed.push(format!("{}/{} {key}: {got:.6} ± {bar:.6} vs {want:.6}", row.molecule, row.file));
            }
        }
        let (j, jr, jb) = (row.values[0].1, row.values[0].2, row.bars[0]);
        let _ = jr;
        let d = &row.deltas[0];
        println!(
            "| {} | {} | {} | {:.2} ± {:.2} | {:.2} ± {:.2} | {:.2} |",
            row.molecule,
            row.file.trim_end_matches(".cube.gz"),
            if row.flags.is_empty() { "ok".to_string() } else { row.flags.join(", ") },
            1e3 * j,
            1e3 * jb,
            1e3 * d.1,
            1e3 * d.3,
            1e3 * d.2
        );
        // Where the grid resolves the orbital, the bars are small.
        if (row.norm - 1.0).abs() < 5e-4 && row.energy > -5.0 {
            for (k, bar) in KEYS.iter().zip(&row.bars) {
                assert!(*bar < 0.01 * j, "{}/{} {k}: error bar {bar} not below 1 % of J", row.molecule, row.file);
            }
            for (m, _, _, bar) in &row.deltas {
                assert!(*bar < 0.01 * j, "{}/{} δ {m}: error bar {bar} not below 1 % of J", row.molecule, row.file);
            }
        }
    }
    let rate = inside as f64 / total as f64;
    println!("\nerror bars bracket the reference for {inside} of {total} pairs ({:.1} %)", 100.0 * rate);
    for m in &missed {
        println!("  missed: {m}");
    }
    assert!(rate >= 0.9, "bracketing rate {rate:.3} below 0.9");
}
