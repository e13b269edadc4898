//! sixray: one-electron self-interaction diagnostics of density-functional calculations.

pub mod grid;
pub mod par;
pub mod poisson;
pub mod quadrature;
pub mod xc;
