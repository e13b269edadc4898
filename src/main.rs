//! The `sixray` command: parse arguments, run, exit with a status.

mod cli;

use clap::Parser;
use std::process::ExitCode;

fn main() -> ExitCode {
    let args = cli::Cli::parse();
    match cli::run(args) {
        Ok(status) => status.into(),
        Err(err) => {
            eprintln!("sixray: error: {err:#}");
            cli::Status::BadInput.into()
        }
    }
}
