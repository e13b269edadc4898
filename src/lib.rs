//! sixray: one-electron self-interaction diagnostics of density-functional calculations.
//!
//! Units are atomic throughout the library: hartree, bohr, electrons. Reports convert for people.
//!
//! - [`basis`] reads Gaussian basis sets and orbitals (molden files), evaluates orbitals anywhere
//!   and computes exact Hartree self-energies over the basis;
//! - [`input`] turns grid files (read by the `sixray-parsers` crate) into orbital densities;
//! - [`poisson`] computes free-space Coulomb energies on grids;
//! - [`xc`] holds the exchange–correlation functionals and the named models;
//! - [`diagnostics`] computes per-orbital self-energies and ranks them;
//! - [`calculation`] runs the files of one calculation with failure isolation;
//! - [`report`] renders results as a table, Markdown, CSV, JSON or (for a batch) HTML;
//! - [`trust`] and [`cusp`] put error bars on grid results and correct them at the nuclei;
//! - [`batch`] runs workflows; [`inspect`] checks total-density files; [`molgrid`] and
//!   [`localize`] provide atom-centred quadrature and Boys localization.

pub mod basis;
pub mod batch;
pub mod cache;
pub mod calculation;
pub mod cusp;
pub mod diagnostics;
pub mod gradient;
pub mod grid;
pub mod input;
pub mod localize;
pub mod memory;
pub mod molecular;
pub mod molgrid;
pub mod inspect;
pub mod par;
pub mod poisson;
pub mod progress;
pub mod quadrature;
pub mod report;
pub mod trust;
pub mod xc;
