//! `sixray rank`: one calculation's orbital files in, a ranked report out.

use super::{Status, hold_streams, prepare_output, uniform_grid_scope};
use anyhow::{Context, bail};
use clap::{Args, ValueEnum};
use sixray::calculation::{OrbitalSets, Outcome, analyse_files, analyse_localized};
use sixray::diagnostics::OrbitalSet;
use sixray::localize::LocalizeParams;
use sixray::memory::MemoryBudget;
use sixray::par::Parallelism;
use sixray::diagnostics::{Engine, EngineParams, Spin};
use sixray::input::{Kind, LoadParams, SpinRule};
use sixray::molecular::{MIN_UNIFORM_SPACING, MolecularParams};
use sixray::molgrid::GridLevel;
use sixray::report::{self, EnergyUnit, Report};
use sixray::trust::TrustParams;
use sixray::xc::Model;
use sixray::xc::model::ModelLibrary;
use std::path::PathBuf;

#[derive(Debug, Args)]
pub struct RankArgs {
    /// Orbital files of one calculation: cube grids or basis-set files (molden, fchk, wfn, wfx),
    /// each optionally gzip-compressed; `-` reads standard input, and pipes work too.
    #[arg(required = true, value_name = "FILE")]
    files: Vec<PathBuf>,

    /// Exchange-correlation model (repeatable): a name from `sixray models`, xalpha=VALUE, or a
    /// model of --models-file.
    #[arg(short, long = "model", value_name = "NAME", default_value = "lsda")]
    models: Vec<String>,

    /// YAML file of user-defined models (a `models:` list of name, exchange, correlation, alpha).
    #[arg(long, value_name = "FILE")]
    models_file: Option<PathBuf>,

    /// Model whose |δ| orders the ranking (default: the first --model).
    #[arg(long, value_name = "MODEL")]
    rank_by: Option<String>,

    /// What the grid values are: decided from the values (auto), orbital amplitudes φ, or
    /// orbital densities |φ|².
    #[arg(long, value_enum, default_value_t = KindArg::Auto)]
    kind: KindArg,

    /// Spin of the orbitals; from-name looks for alpha/beta in the file name.
    #[arg(long, value_enum, default_value_t = SpinArg::FromName)]
    spin: SpinArg,

    /// Electrons in each spin-orbital, where the files cannot say (0 < F ≤ 1).
    #[arg(long, value_name = "F", default_value_t = 1.0)]
    occupation: f64,

    /// Atom-centred grid for the functionals of basis-set files.
    #[arg(long, value_enum, default_value_t = GridLevelArg::Default)]
    grid_level: GridLevelArg,

    /// Evaluate basis-set files on a uniform grid of SPACING bohr and take the grid-file path
    /// (to see what a cube file of that spacing would cost in accuracy). Cube files keep their
    /// own grid: with only cube files this is an error.
    #[arg(long = "grid", value_name = "SPACING")]
    uniform_grid: Option<f64>,

    /// Which orbitals to rank: as in the files, Foster–Boys localized within each spin channel
    /// (all grid files together; each basis-set file on its own), or both (two rankings).
    #[arg(long, value_enum, default_value_t = OrbitalsArg::Canonical)]
    orbitals: OrbitalsArg,

    /// Localize without mixing orbitals of different symmetry: stop at the stationary point a
    /// gradient-driven optimiser reaches from the canonical orbitals, not the largest L.
    #[arg(long)]
    keep_symmetry: bool,

    /// Output format.
    #[arg(short, long, value_enum, default_value_t = Format::Table)]
    format: Format,

    /// Energy unit of the table and Markdown (JSON and CSV are always in hartree):
    /// hartree, millihartree, ev, kcal/mol, kj/mol.
    #[arg(long, value_name = "UNIT", default_value = "millihartree")]
    units: EnergyUnit,

    /// Show only the N worst orbitals (totals still cover all).
    #[arg(long, value_name = "N")]
    top: Option<usize>,

    /// Write the report to FILE (atomically) instead of standard output.
    #[arg(short, long, value_name = "FILE")]
    output: Option<PathBuf>,

    /// Largest acceptable error bar of J and of each model's δ, in millihartree; orbitals above
    /// it are flagged (default 1.6 mEh, about 1 kcal/mol).
    #[arg(long, value_name = "MEH", default_value_t = 1.6)]
    tolerance: f64,

    /// Skip error bars and checks (about halves the time per orbital).
    #[arg(long)]
    no_error_bars: bool,

    /// Use plain grid sums at the nuclei the files list (no cusp models).
    #[arg(long)]
    no_cusp_correction: bool,

    /// Add the estimated tail beyond the box to J and every functional (for grid files whose box
    /// cuts the orbitals off; the estimate extrapolates the two outermost layers).
    #[arg(long)]
    tail_correction: bool,

    /// Exit with status 3 (after writing the report) if any orbital's |δ| under the --rank-by
    /// model exceeds THRESHOLD, given in --units (millihartree by default).
    #[arg(long, value_name = "THRESHOLD")]
    fail_above: Option<f64>,

    /// Memory the files may use at once, e.g. 8G or 500M (default: the job's or the machine's
    /// limit less a margin); a file that cannot fit fails alone.
    #[arg(long, value_name = "SIZE", value_parser = sixray::memory::parse_size)]
    memory: Option<u64>,
}

#[derive(Clone, Copy, Debug, ValueEnum)]
enum KindArg {
    Auto,
    Amplitude,
    Density,
}

#[derive(Clone, Copy, Debug, ValueEnum)]
enum OrbitalsArg {
    Canonical,
    Localized,
    Both,
}

#[derive(Clone, Copy, Debug, ValueEnum)]
enum GridLevelArg {
    Coarse,
    Default,
    Fine,
}

#[derive(Clone, Copy, Debug, ValueEnum)]
enum SpinArg {
    FromName,
    Restricted,
    Alpha,
    Beta,
}

#[derive(Clone, Copy, Debug, ValueEnum)]
enum Format {
    Table,
    Json,
    Csv,
    Markdown,
}

pub fn run(args: RankArgs) -> anyhow::Result<Status> {
    let library = match &args.models_file {
        Some(path) => ModelLibrary::builtin().with_file(path)?,
        None => ModelLibrary::builtin(),
    };
    let mut models = Vec::new();
    for name in &args.models {
        let m = library.resolve(name).with_context(|| format!("--model {name}"))?;
        if models.iter().any(|k: &Model| k.name == m.name) {
            bail!("--model {name} is given twice");
        }
        models.push(m);
    }
    let rank_by = match &args.rank_by {
        None => 0,
        Some(name) => {
            let m = library.resolve(name).with_context(|| format!("--rank-by {name}"))?;
            match models.iter().position(|k| k.name == m.name) {
                Some(i) => i,
                None => {
                    models.push(m);
                    models.len() - 1
                }
            }
        }
    };
    if args.fail_above.is_some_and(|t| !(t.is_finite() && t >= 0.0)) {
        bail!("--fail-above must be a non-negative number");
    }
    if args.top == Some(0) {
        bail!("--top must be at least 1 (an empty table shows nothing; leave --top out to show every orbital)");
    }
    if args.uniform_grid.is_some_and(|h| !(h.is_finite() && h >= MIN_UNIFORM_SPACING)) {
        bail!("--grid must be a spacing of at least {MIN_UNIFORM_SPACING} bohr");
    }
    if !(args.occupation > 0.0 && args.occupation <= 1.0) {
        bail!("--occupation must be in (0, 1], got {}", args.occupation);
    }
    prepare_output(args.output.as_ref())?;
    let files = hold_streams(&args.files)?;
    if args.uniform_grid.is_some() {
        if let Some(warning) = uniform_grid_scope("--grid", &files)? {
            eprintln!("sixray: warning: {warning}");
        }
    }
    let load = LoadParams {
        kind: match args.kind {
            KindArg::Auto => None,
            KindArg::Amplitude => Some(Kind::Amplitude),
            KindArg::Density => Some(Kind::Density),
        },
        spin: match args.spin {
            SpinArg::FromName => SpinRule::FromName,
            SpinArg::Restricted => SpinRule::Fixed(Spin::Restricted),
            SpinArg::Alpha => SpinRule::Fixed(Spin::Alpha),
            SpinArg::Beta => SpinRule::Fixed(Spin::Beta),
        },
        occupation: args.occupation,
        molecular: MolecularParams {
            grid: match args.grid_level {
                GridLevelArg::Coarse => GridLevel::Coarse,
                GridLevelArg::Default => GridLevel::Default,
                GridLevelArg::Fine => GridLevel::Fine,
            },
            uniform_spacing: args.uniform_grid,
            ..MolecularParams::default()
        },
        ..LoadParams::default()
    };

    if !(args.tolerance.is_finite() && args.tolerance > 0.0) {
        bail!("--tolerance must be a positive number of millihartree");
    }
    let trust = TrustParams { error_bars: !args.no_error_bars, tolerance: args.tolerance * 1e-3 };
    let params = EngineParams {
        trust,
        cusp_correction: !args.no_cusp_correction,
        tail_correction: args.tail_correction,
        ..EngineParams::default()
    };
    let budget = args.memory.map(MemoryBudget::given).or_else(|| MemoryBudget::detect(rayon::current_num_threads()));
    let engine = Engine::new(models, params).with_memory_budget(budget);
    let sets = match args.orbitals {
        OrbitalsArg::Canonical => OrbitalSets::Canonical,
        OrbitalsArg::Localized => OrbitalSets::Localized,
        OrbitalsArg::Both => OrbitalSets::Both,
    };
    let localize = LocalizeParams { escape_saddle_points: !args.keep_symmetry, ..LocalizeParams::default() };
    let mut outcomes: Vec<(OrbitalSet, Outcome)> = Vec::new();
    if sets.canonical() {
        outcomes.push((OrbitalSet::Canonical, analyse_files(&files, &load, &engine, rank_by)));
    }
    if sets.localized() {
        outcomes.push((OrbitalSet::Localized, analyse_localized(&files, &load, &engine, &localize, rank_by, Parallelism::Rayon)));
    }
    // Each set's analysis leaves out the same files: say so once.
    let mut duplicates = Vec::new();
    for d in outcomes.iter().flat_map(|(_, o)| &o.duplicates) {
        if !duplicates.contains(&d) {
            eprintln!("sixray: warning: {} has the same content as {}; analysed once, as {}", d.source, d.same_as, d.same_as);
            duplicates.push(d);
        }
    }
    let reports: Vec<(OrbitalSet, Report)> =
        outcomes.iter().map(|(set, outcome)| (*set, Report { models: engine.models(), outcome, top: args.top })).collect();
    for (_, r) in &reports {
        for f in &r.outcome.failures {
            eprintln!("sixray: error: {}", f.error);
        }
        for w in r.outcome.ranking.orbitals.iter().filter_map(report::kind_warning).chain(report::non_finite_warnings(r)) {
            eprintln!("sixray: warning: {w}");
        }
    }
    let text = render(&reports, args.format, args.units);
    match &args.output {
        Some(path) => report::write_atomic(path, text.as_bytes()).with_context(|| format!("writing {}", path.display()))?,
        None => print!("{text}"),
    }
    if outcomes.iter().any(|(_, o)| !o.failures.is_empty()) {
        return Ok(Status::BadInput);
    }
    if let Some(limit) = args.fail_above {
        let model = &engine.models()[rank_by];
        let over: Vec<_> = outcomes
            .iter()
            .flat_map(|(_, o)| &o.ranking.orbitals)
            .filter(|o| above(o.models[rank_by].self_interaction * args.units.per_hartree(), limit))
            .collect();
        if !over.is_empty() {
            eprintln!("sixray: {} orbital(s) with |δ| above {limit} {} under {}:", over.len(), args.units.symbol(), model.name);
            for o in over {
                let delta = o.models[rank_by].self_interaction;
                let value = if delta.is_finite() { format!("{} {}", args.units.format(delta), args.units.symbol()) } else { format!("not a finite number ({delta})") };
                eprintln!("  {} ({}): δ = {value}", o.label, o.source);
            }
            return Ok(Status::AboveThreshold);
        }
    }
    Ok(Status::Success)
}

/// One report per orbital set; with two, the table and Markdown show them one after the other
/// under headings, the CSV holds the rows of both (its `set` column tells them apart) and the
/// JSON is an object with a `canonical` and a `localized` report.
fn render(reports: &[(OrbitalSet, Report)], format: Format, units: EnergyUnit) -> String {
    let one = |r: &Report| match format {
        Format::Table => report::text::render_table(r, units),
        Format::Markdown => report::text::render_markdown(r, units),
        Format::Json => report::json::render(r),
        Format::Csv => report::csv::render(r),
    };
    if let [(_, r)] = reports {
        return one(r);
    }
    match format {
        Format::Json => {
            let mut object = serde_json::Map::new();
            for (set, r) in reports {
                object.insert(set.as_str().to_string(), report::json::to_value(r));
            }
            report::json::pretty(&serde_json::Value::Object(object))
        }
        Format::Csv => {
            let mut out = String::new();
            for (k, (_, r)) in reports.iter().enumerate() {
                let text = one(r);
                // The header once.
                out += if k == 0 { &text } else { text.split_once('\n').map_or("", |(_, rows)| rows) };
            }
            out
        }
        Format::Table | Format::Markdown => {
            let heading = |set: OrbitalSet| {
                let title = match set {
                    OrbitalSet::Canonical => "Canonical orbitals",
                    OrbitalSet::Localized => "Foster–Boys localized orbitals",
                    OrbitalSet::Natural => "Natural orbitals",
                };
                if matches!(format, Format::Markdown) { format!("**{title}**\n\n") } else { format!("{title}\n\n") }
            };
            reports.iter().map(|(set, r)| heading(*set) + &one(r)).collect::<Vec<_>>().join("\n")
        }
    }
}

/// Whether |δ| fails the gate at `limit` (both in the report's unit). A δ that is not a number
/// fails it: a gate must never pass what it cannot compare.
fn above(delta: f64, limit: f64) -> bool {
    delta.is_nan() || delta.abs() > limit
}

#[cfg(test)]
mod tests {
    use super::above;

    #[test]
    fn the_gate_fails_what_is_not_a_number() {
        assert!(above(f64::NAN, 100.0));
        assert!(above(f64::INFINITY, 100.0));
        assert!(above(-2.0, 1.0));
        assert!(!above(-1.0, 1.0));
        assert!(!above(0.5, 1.0));
    }
}
