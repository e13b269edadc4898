//! `sixray inspect`: checks of total-density grid files, optionally against the orbital files of
//! the same calculation.

use super::{Status, hold_streams, prepare_output};
use anyhow::{Context, bail};
use clap::{Args, ValueEnum};
use sixray::input::{Kind, LoadParams};
use sixray::inspect::render::{self, Failure};
use sixray::inspect::{InspectParams, inspect_file};
use sixray::par::Parallelism;
use sixray::report::write_atomic;
use std::path::PathBuf;

#[derive(Debug, Args)]
pub struct InspectArgs {
    /// Total-density grid files (cube format, optionally gzip-compressed), each checked on its own.
    #[arg(required = true, value_name = "FILE")]
    files: Vec<PathBuf>,

    /// Orbital files of the calculation of the one density FILE: their sum (2|φ|² for
    /// restricted orbitals, |φ|² for files named alpha/beta) is compared with the density.
    /// Give it after FILE.
    #[arg(long, value_name = "ORB", num_args = 1..)]
    orbitals: Vec<PathBuf>,

    /// What the orbital files' values are.
    #[arg(long, value_enum, default_value_t = KindArg::Amplitude)]
    kind: KindArg,

    /// Output format.
    #[arg(short, long, value_enum, default_value_t = Format::Text)]
    format: Format,

    /// Write the report to FILE (atomically) instead of standard output.
    #[arg(short, long, value_name = "FILE")]
    output: Option<PathBuf>,

    /// Exit with status 3 (after writing the report) when any flag is raised.
    #[arg(long)]
    strict: bool,
}

#[derive(Clone, Copy, Debug, ValueEnum)]
enum KindArg {
    Amplitude,
    Density,
}

#[derive(Clone, Copy, Debug, ValueEnum)]
enum Format {
    Text,
    Json,
}

pub fn run(args: InspectArgs) -> anyhow::Result<Status> {
    if !args.orbitals.is_empty() && args.files.len() != 1 {
        bail!("--orbitals belongs to one density file, but {} were given", args.files.len());
    }
    let load = LoadParams {
        kind: Some(match args.kind {
            KindArg::Amplitude => Kind::Amplitude,
            KindArg::Density => Kind::Density,
        }),
        ..LoadParams::default()
    };
    prepare_output(args.output.as_ref())?;
    let (files, orbitals) = (hold_streams(&args.files)?, hold_streams(&args.orbitals)?);
    let params = InspectParams::default();
    let mut done = Vec::new();
    let mut failures = Vec::new();
    for file in &files {
        match inspect_file(file, &orbitals, &load, &params, Parallelism::Rayon) {
            Ok(f) => done.push(f),
            Err(e) => {
                eprintln!("sixray: error: {e}");
                failures.push(Failure { source: file.display().to_string(), error: e.to_string() });
            }
        }
    }
    let text = match args.format {
        Format::Text => render::text(&done, &failures),
        Format::Json => render::json(&done, &failures),
    };
    match &args.output {
        Some(path) => write_atomic(path, text.as_bytes()).with_context(|| format!("writing {}", path.display()))?,
        None => print!("{text}"),
    }
    let flagged: Vec<_> = done.iter().filter(|f| !f.inspection.flags.is_empty()).collect();
    if !failures.is_empty() {
        Ok(Status::BadInput)
    } else if args.strict && !flagged.is_empty() {
        for f in flagged {
            eprintln!("sixray: {}: {} flag(s)", f.source, f.inspection.flags.len());
        }
        Ok(Status::AboveThreshold)
    } else {
        Ok(Status::Success)
    }
}
