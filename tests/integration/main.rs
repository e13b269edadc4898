//! Integration tests: one binary. `cli` drives the real command line in temporary directories;
//! the other modules check the library against external reference data in `../shared`.

mod basis;
mod basis_cli;
mod batch;
mod cli;
mod common;
mod cusp;
mod faults_io;
mod faults_stats;
mod faults_results;
mod faults_basis;
mod functionals;
mod html;
mod inspect;
mod localized;
mod memory;
mod real_world;
mod reference;
mod trust;
