//! Command-line arguments and their wiring to the library. No physics here.

mod rank;

use clap::{Parser, Subcommand};

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
    /// List the exchange-correlation models.
    Models,
}

/// How a run ended.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Status {
    /// Everything asked for was computed.
    Success,
    /// Bad arguments or input that could not be read (results of the rest are still written).
    BadInput,
}

impl From<Status> for std::process::ExitCode {
    fn from(s: Status) -> Self {
        match s {
            Status::Success => 0.into(),
            Status::BadInput => 2.into(),
        }
    }
}

/// Runs a parsed command line.
pub fn run(cli: Cli) -> anyhow::Result<Status> {
    let mut pool = rayon::ThreadPoolBuilder::new();
    if let Some(n) = cli.threads {
        anyhow::ensure!(n > 0, "--threads must be at least 1");
        pool = pool.num_threads(n);
    }
    let pool = pool.build()?;
    pool.install(|| match cli.command {
        Command::Rank(args) => rank::run(args),
        Command::Models => {
            print!("{}", models_listing());
            Ok(Status::Success)
        }
    })
}

fn models_listing() -> String {
    let mut out = String::new();
    for name in sixray::xc::model::BUILTIN.iter().copied().chain(["xalpha=0.7"]) {
        let m = sixray::xc::Model::from_name(name).expect("built-in names resolve");
        let shown = if name.starts_with("xalpha=") { "xalpha=VALUE" } else { name };
        out += &format!("{shown:<14} {}\n", m.summary);
        out += &format!("{:<14}   exchange: {}\n", "", m.exchange.citation());
        if let Some(c) = &m.correlation {
            out += &format!("{:<14}   correlation: {}\n", "", c.citation());
        }
    }
    out
}
