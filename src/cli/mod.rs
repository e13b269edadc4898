//! Command-line arguments and their wiring to the library. No physics here.

mod batch;
mod inspect;
mod progress;
mod rank;

use clap::{Parser, Subcommand};
use sixray::xc::model::{BUILTIN, ModelLibrary};
use sixray::xc::{Part, catalogue};

/// Per-orbital one-electron self-interaction diagnostics from orbital grid files.
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
