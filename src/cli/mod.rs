//! Command-line arguments and their wiring to the library. No physics here.

mod batch;
mod inspect;
mod progress;
mod rank;

use clap::{Parser, Subcommand};
use std::path::PathBuf;
use sixray::xc::model::{BUILTIN, ModelLibrary};
use sixray::xc::{Part, catalogue};

/// Per-orbital one-electron self-interaction diagnostics from cube grid files and Gaussian-basis
/// orbital files (molden, fchk, wfn, wfx).
#[derive(Debug, Parser)]
#[command(name = "sixray", version, about, long_about = None)]
pub struct Cli {
    /// Worker threads (default: all cores).
    #[arg(short = 'j', long, global = true, value_name = "N")]
    threads: Option<usize>,

    #[command(subcommand)]
    command: Command,
}

#[derive(Debug, Subcommand)]
enum Command {
    /// Rank the occupied spin-orbitals of one calculation by self-interaction error.
    Rank(rank::RankArgs),
    /// Run a workflow: every calculation of a test set, with set-wide reports.
    Batch(batch::BatchArgs),
    /// Check total-density grid files: electron count, nuclei against the listed atoms, box,
    /// and the sum of the calculation's orbital files.
    Inspect(inspect::InspectArgs),
    /// List the exchange-correlation models and functionals.
    Models(ModelsArgs),
}

#[derive(Debug, clap::Args)]
struct ModelsArgs {
    /// Also list the user-defined models of this YAML file.
    #[arg(long, value_name = "FILE")]
    models_file: Option<std::path::PathBuf>,
}

/// How a run ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Status {
    /// Everything asked for was computed.
    Success,
    /// Some calculations of a batch failed; the results of the rest were written.
    Partial,
    /// Bad arguments, an invalid workflow, or input that could not be read (results of the rest
    /// are still written).
    BadInput,
    /// An orbital's self-interaction error exceeded `--fail-above`, or `inspect --strict` raised
    /// a flag.
    AboveThreshold,
}

impl From<Status> for std::process::ExitCode {
    fn from(s: Status) -> Self {
        match s {
            Status::Success => 0.into(),
            Status::Partial => 1.into(),
            Status::BadInput => 2.into(),
            Status::AboveThreshold => 3.into(),
        }
    }
}

/// Runs a parsed command line.
pub fn run(cli: Cli) -> anyhow::Result<Status> {
    if cli.threads == Some(0) {
        anyhow::bail!("--threads must be at least 1");
    }
    match cli.command {
        Command::Rank(args) => in_pool(cli.threads, || rank::run(args)),
        Command::Batch(args) => batch::run_batch(args, cli.threads),
        Command::Inspect(args) => in_pool(cli.threads, || inspect::run(args)),
        Command::Models(args) => {
            let library = match &args.models_file {
                Some(path) => ModelLibrary::builtin().with_file(path)?,
                None => ModelLibrary::builtin(),
            };
            print!("{}", models_listing(&library));
            Ok(Status::Success)
        }
    }
}

/// Checks that a uniform-grid spacing given as `option` has basis-set files to apply to among
/// `files`: an error when every readable file is a cube grid, a warning (returned) naming the
/// cube grids it leaves as they are when some are.
fn uniform_grid_scope(option: &str, files: &[PathBuf]) -> anyhow::Result<Option<String>> {
    let (cubes, basis) = sixray::calculation::cube_files(files);
    if cubes.is_empty() {
        return Ok(None);
    }
    const SHOWN: usize = 5;
    let mut list = cubes.iter().take(SHOWN).map(|p| p.display().to_string()).collect::<Vec<_>>().join(", ");
    if cubes.len() > SHOWN {
        list += &format!(" and {} more", cubes.len() - SHOWN);
    }
    if !basis {
        anyhow::bail!(
            "{option} samples basis-set files (molden, fchk, wfn, wfx) on a uniform grid, but the files are cube \
             grids, which have a grid of their own ({list}); leave {option} out"
        );
    }
    Ok(Some(format!("{option} applies to basis-set files only; read on their own grids: {list}")))
}

/// The input files as they are read: standard input (`-`) and pipes held in memory under
/// their names (see [`sixray_parsers::stream`]), other files as given.
fn hold_streams(files: &[PathBuf]) -> anyhow::Result<Vec<PathBuf>> {
    Ok(files.iter().map(|f| sixray_parsers::stream::hold(f)).collect::<Result<_, _>>()?)
}

/// Before any input is read: `--output FILE` must be writable (see
/// [`sixray::report::atomic::check_output_file`]); temporary files killed runs left beside it go.
fn prepare_output(path: Option<&PathBuf>) -> anyhow::Result<()> {
    use sixray::report::atomic::{check_output_file, directory_of, remove_stale_temporaries};
    if let Some(path) = path {
        check_output_file(path).map_err(|e| anyhow::anyhow!("{e} (--output; nothing was run)"))?;
        remove_stale_temporaries(directory_of(path));
    }
    Ok(())
}

/// Runs `f` in a thread pool of `threads` workers (all cores if `None`).
fn in_pool<T: Send>(threads: Option<usize>, f: impl FnOnce() -> anyhow::Result<T> + Send) -> anyhow::Result<T> {
    let mut pool = rayon::ThreadPoolBuilder::new();
    if let Some(n) = threads {
        pool = pool.num_threads(n);
    }
    pool.build()?.install(f)
}

fn models_listing(library: &ModelLibrary) -> String {
    let mut out = String::from("Models (use with --model NAME):\n\n");
    let builtin = BUILTIN.iter().map(|b| b.0).chain(["xalpha=VALUE"]);
    for name in builtin {
        let m = library.resolve(&name.replace("VALUE", "0.7")).expect("built-in names resolve");
        let summary = if name == "xalpha=VALUE" { "Xα (α = VALUE) exchange only".into() } else { m.summary };
        out += &format!("  {name:<14} {summary}\n");
    }
    if !library.custom().is_empty() {
        out += "\nUser-defined models:\n\n";
        for m in library.custom() {
            out += &format!("  {:<14} {}\n", m.name, m.summary);
        }
    }
    out += "\nFunctionals (ids for user-defined models):\n\n";
    for f in catalogue() {
        let part = match f.part() {
            Part::Exchange => "exchange",
            Part::Correlation => "correlation",
        };
        let id = if f.id() == "lsda" { "lsda, xalpha".to_string() } else { f.id() };
        out += &format!("  {part:<12} {id:<13} {:<9} {}\n", f.family().label(), f.citation());
    }
    out
}
