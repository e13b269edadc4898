//! Integration tests of the readers (cube, molden, fchk, wfn, wfx), built as one binary.

mod common;
mod errors;
mod format;
mod fuzzed;
mod molden;
mod read;
mod robustness;
mod wavefunction;
mod shared;
