//! Real quantum-chemistry output: every orbital cube file of `../shared/reference/<molecule>/`
//! through the grid path, against `reference.json`.
//!
//! reference: PySCF 2.14 (exact Gaussian-integral J, `hartree_self`) and libxc 7.0.0 on a level-8
//! Becke grid (`lsda_x`, `pw92_c`), shared reference set; cubes at 0.15 bohr, five printed digits.
//!
//! Each test states its tolerances. Run with `--nocapture` to print the tables the README records.

use crate::common::{first_row_only, shared_dir};
use sixray::diagnostics::{Engine, EngineParams, Spin};
use sixray::input::{LoadParams, SpinRule, load_cube};
use sixray::par::Parallelism;
use sixray::basis::OrbitalSpin;
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

/// The reference molecules' directories, or `None` where the shared data are absent.
fn molecule_dirs(test: &str) -> Option<Vec<std::path::PathBuf>> {
    let shared = shared_dir(test)?;
    let mut dirs: Vec<_> = std::fs::read_dir(shared.join("reference"))
        .expect("reference dir")
        .filter_map(|e| e.ok().map(|e| e.path()))
        .filter(|p| p.join("reference.json").is_file())
        .filter(|p| first_row_only(test, p))
        .collect();
    dirs.sort();
    assert!(dirs.len() >= 5, "expected the shared molecules, found {dirs:?}");
    Some(dirs)
}

fn rows_with(dirs: &[std::path::PathBuf], cusp_correction: bool) -> Vec<Row> {
    rows_with_params(dirs, EngineParams { cusp_correction, ..EngineParams::default() })
}

fn rows_with_params(dirs: &[std::path::PathBuf], params: EngineParams) -> Vec<Row> {
    let models = MODELS.iter().map(|m| Model::from_name(m).unwrap()).collect();
    let engine = Engine::new(models, params);
    dirs.iter().flat_map(|dir| molecule_rows(dir, &engine)).collect()
}

/// Prints the per-orbital relative errors (per cent; vanishing correlation as our value in Eh).
fn print_table(title: &str, rows: &[Row]) {
    let heads = KEYS.map(|k| if k == "hartree_self" { "J".to_string() } else { k.to_string() });
    println!("\n{title}\n\n| molecule | orbital | ε (Eh) | norm | {} |", heads.join(" | "));
    println!("|:--|:--|--:|--:|{}", "--:|".repeat(KEYS.len()));
    for row in rows {
        let cells: Vec<String> = (0..KEYS.len())
            .map(|k| match row.error(k) {
                Some(e) => format!("{:+.2}", 100.0 * e),
                None => format!("{:.0e}", row.values[k].1),
            })
            .collect();
        println!("| {} | {} | {:.3} | {:.5} | {} |", row.molecule, row.file.trim_end_matches(".cube.gz"), row.energy, row.norm, cells.join(" | "));
    }
}

/// Checks each value of `rows` with `ok(row, key, relative error or None, ours)`.
fn check(rows: &[Row], ok: impl Fn(&Row, &str, Option<f64>, f64) -> bool) {
    let mut failures = Vec::new();
    for row in rows {
        for (k, &(key, got, want)) in row.values.iter().enumerate() {
            if !ok(row, key, row.error(k), got) {
                failures.push(format!("{}/{} {key}: norm {:.5}, {got} vs {want}", row.molecule, row.file, row.norm));
            }
        }
    }
    assert!(failures.is_empty(), "outside tolerance:\n{}", failures.join("\n"));
}

const EXCHANGE: [&str; 7] = ["hartree_self", "lsda_x", "b88_x", "pbe_x", "pw91_x", "scan_x", "r2scan_x"];

#[test]
fn cusp_corrected_grid_self_energies_against_gaussian_integral_reference() {
    // With the cusp correction (the default), J and every functional (exchange and correlation)
    // of every orbital within 2 % (cores included) and of valence orbitals within 0.5 % (the
    // targets), with one exception, checked differently: lithium hydride's 2σ J is limited by the
    // box, not the cusps (norm 0.989; the orbital must be flagged truncated-box and its J error
    // lie within its error bar).
    let Some(dirs) = molecule_dirs("cusp_corrected_grid_self_energies") else { return };
    let rows = rows_with(&dirs, true);
    print_table("With the cusp correction (relative error, %):", &rows);
    check(&rows, |row, key, err, got| {
        let core = row.energy < -5.0;
        let box_limited = row.flags.iter().any(|f| f == "truncated-box");
        match (err, key) {
            (None, _) => got.abs() < 1e-6,
            (Some(_), "hartree_self") if box_limited && !core => {
                let bar = row.bars[0];
                (row.values[0].1 - row.values[0].2).abs() <= bar
            }
            (Some(e), _) => e.abs() < if core { 0.02 } else { 0.005 },
        }
    });
    compare_with_uncorrected(&dirs, &rows);
    check_error_bars(&rows);
}

#[test]
fn tail_corrected_grid_self_energies_meet_the_targets_everywhere() {
    // With the tail correction as well (`--tail-correction`), lithium hydride's 2σ J meets the
    // valence target too: every orbital's J and every functional within 2 % (cores) and 0.5 %
    // (valence), with no exception, and the error bars still bracket the reference.
    let Some(dirs) = molecule_dirs("tail_corrected_grid_self_energies") else { return };
    let rows = rows_with_params(&dirs, EngineParams { tail_correction: true, ..EngineParams::default() });
    print_table("With the cusp and tail corrections (relative error, %):", &rows);
    check(&rows, |row, _, err, got| match err {
        None => got.abs() < 1e-6,
        Some(e) => e.abs() < if row.energy < -5.0 { 0.02 } else { 0.005 },
    });
    let lih = rows.iter().find(|r| r.molecule == "lithium_hydride" && r.file == "orbital_002.cube.gz").expect("lithium hydride 2σ");
    println!("\nlithium hydride 2σ J with the tail: {:+.2} %", 100.0 * lih.error(0).unwrap());
    check_error_bars(&rows);
}

#[test]
fn cusp_correction_holds_wherever_the_nuclei_sit() {
    // The reference cubes put each nucleus where the program's grid happened to fall. Here the
    // same orbitals (from orbitals.molden, exact values) are sampled on each cube's grid moved
    // by 0.03, 0.05 and 0.075 bohr along the diagonal (0.075: every nucleus near a cell centre),
    // with the tail correction for lithium hydride's box: J and exchange still within 2 %
    // (cores) and 0.5 % (valence).
    // reference: PySCF 2.14 / libxc 7.0.0, shared reference set, reference.json of each molecule.
    let Some(dirs) = molecule_dirs("cusp_correction_holds_wherever_the_nuclei_sit") else { return };
    let names = ["lsda-x", "b88", "pbe-x", "pw91-x"];
    let keys = ["hartree_self", "lsda_x", "b88_x", "pbe_x", "pw91_x"];
    let models = names.iter().map(|m| Model::from_name(m).unwrap()).collect();
    let trust = sixray::trust::TrustParams { error_bars: false, ..Default::default() };
    let engine = Engine::new(models, EngineParams { trust, tail_correction: true, ..EngineParams::default() });
    let (mut worst, mut failures) = ([0.0f64; 2], Vec::new());
    for dir in &dirs {
        let text = std::fs::read_to_string(dir.join("reference.json")).expect("reference.json");
        let reference: serde_json::Value = serde_json::from_str(&text).expect("reference.json parses");
        let (basis, orbitals) = sixray::basis::read(&dir.join("orbitals.molden")).unwrap_or_else(|e| panic!("{e}"));
        for o in reference["orbitals"].as_array().expect("orbitals") {
            let file = o["file"].as_str().expect("file");
            let spin = match o["spin"].as_str() {
                Some("alpha") => OrbitalSpin::Alpha,
                Some("beta") => OrbitalSpin::Beta,
                _ => OrbitalSpin::Restricted,
            };
            let index = o["index"].as_u64().expect("index") as usize;
            let mo = orbitals.occupied().find(|m| m.spin == spin && m.index == index).unwrap_or_else(|| panic!("{file}: no orbital"));
            let cube = load_cube(&dir.join(file), &LoadParams::default()).unwrap_or_else(|e| panic!("{e}")).remove(0);
            let core = num(o, "orbital_energy") < -5.0;
            for shift in [0.03, 0.05, 0.075] {
                let mut g = (*cube.geometry).clone();
                g.origin = g.origin.map(|x| x + shift);
                let [_, n1, n2] = g.shape;
                let points: Vec<[f64; 3]> = (0..g.len()).map(|k| g.point([k / (n1 * n2), (k / n2) % n1, k % n2])).collect();
                let values = basis.orbital_values(&[mo.coefficients.as_slice()], &points, Parallelism::Rayon).remove(0).values;
                let moved = sixray::diagnostics::GridOrbital { values, geometry: std::sync::Arc::new(g), ..cube.clone() };
                let r = engine.analyse(&moved, Parallelism::Rayon).unwrap_or_else(|e| panic!("{file}: {e}"));
                let ours = std::iter::once(r.hartree).chain(r.models.iter().map(|m| m.exchange));
                for (key, got) in keys.iter().zip(ours) {
                    let e = (got / num(o, key) - 1.0).abs();
                    worst[usize::from(!core)] = worst[usize::from(!core)].max(e);
                    if e >= if core { 0.02 } else { 0.005 } {
                        failures.push(format!("{}/{file} moved {shift}: {key} off by {:.3} %", dir.display(), 100.0 * e));
                    }
                }
            }
        }
    }
    println!("\nnuclei moved off their cube positions: worst J or exchange error {:.2} % (cores), {:.2} % (valence)", 100.0 * worst[0], 100.0 * worst[1]);
    assert!(failures.is_empty(), "outside tolerance:\n{}", failures.join("\n"));
}

/// Per molecule, the largest |error| of J and of exchange (all functionals), cores and valence
/// apart, without and with the correction (the README's summary table).
fn compare_with_uncorrected(dirs: &[std::path::PathBuf], corrected: &[Row]) {
    let plain = rows_with(dirs, false);
    println!("\n| molecule | cores: J, plain → corrected | cores: E_x | valence: J | valence: E_x |");
    println!("|:--|--:|--:|--:|--:|");
    let worst = |rows: &[Row], molecule: &str, core: bool, exchange: bool| -> Option<f64> {
        rows.iter()
            .filter(|r| r.molecule == molecule && (r.energy < -5.0) == core)
            .flat_map(|r| {
                EXCHANGE.iter().enumerate().filter(move |(i, _)| (*i > 0) == exchange).filter_map(move |(i, _)| r.error(i).map(f64::abs))
            })
            .reduce(f64::max)
    };
    let mut molecules: Vec<&str> = corrected.iter().map(|r| r.molecule.as_str()).collect();
    molecules.dedup();
    for m in molecules {
        let cell = |core: bool, x: bool| match (worst(&plain, m, core, x), worst(corrected, m, core, x)) {
            (Some(a), Some(b)) => format!("{:.2} % → {:.2} %", 100.0 * a, 100.0 * b),
            _ => "—".into(),
        };
        println!("| {m} | {} | {} | {} | {} |", cell(true, false), cell(true, true), cell(false, false), cell(false, true));
    }
}

#[test]
fn uncorrected_grid_self_energies_against_gaussian_integral_reference() {
    // Without the cusp correction (--no-cusp-correction), the plain grid sums. Tolerances, by what
    // a 0.15 bohr grid can resolve:
    // - orbitals whose grid norm is within 5e-4 of one electron (p-like and diffuse orbitals): J
    //   and local functionals within 0.25 % (observed: below 0.11 %); gradient-corrected and
    //   meta-GGA exchange within 0.5 % (observed: 0.37 %: their integrands are not smooth where the
    //   reduced gradient diverges); PBE correlation within 1 % (observed: 0.65 %: for one electron
    //   it is the small difference of the local term and H, ≈ −0.03 and +0.025 Eh).
    // - other valence orbitals (2s-like, a cusp at a heavy nucleus): within 8 %.
    // - cores (orbital energy below −5 Eh): within 110 %, with the sign of the norm's error
    //   (over-weighted peak: both too large; missed peak: both too small).
    // - PBE correlation with a cusp: too negative (finite differences round the cusp off, t² comes
    //   out too small), below 15 % for valence and 500 % for cores; an analytic O-1s-like density
    //   on the same grid shows the same (+390 % on a grid point, +55 % between points).
    let Some(dirs) = molecule_dirs("uncorrected_grid_self_energies") else { return };
    let rows = rows_with(&dirs, false);
    print_table("Plain grid sums, no cusp correction (relative error, %):", &rows);
    check(&rows, |row, key, err, got| {
        let resolved = (row.norm - 1.0).abs() < 5e-4;
        let core = row.energy < -5.0;
        let local = ["hartree_self", "lsda_x", "pw92_c", "vwn5_c"].contains(&key);
        match (err, key) {
            (None, _) => got.abs() < 1e-6,
            (Some(e), "pbe_c") if resolved => e.abs() < 1e-2,
            (Some(e), "pbe_c") => e > 0.0 && e < if core { 5.0 } else { 0.15 },
            (Some(e), _) if resolved => e.abs() < if local { 2.5e-3 } else { 5e-3 },
            (Some(e), _) if core => e.abs() < 1.1 && e.signum() == (row.norm - 1.0).signum(),
            (Some(e), _) => e.abs() < 0.08,
        }
    });
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
