//! sixray: one-electron self-interaction diagnostics of density-functional calculations.

pub mod calculation;
pub mod diagnostics;
pub mod grid;
pub mod input;
pub mod par;
pub mod poisson;
pub mod quadrature;
pub mod xc;
