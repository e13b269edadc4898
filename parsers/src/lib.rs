//! Readers that turn quantum-chemistry output files into plain data: cube grids, molden files,
//! Gaussian formatted checkpoints (fchk) and AIM wavefunction files (wfn, wfx).
//!
//! This crate knows no physics: it reports numbers and units exactly as written and leaves
//! every conversion and interpretation to its callers. Errors name the file and the line.
//! Inputs that can be read only once (standard input, pipes) are held in memory by
//! [`stream::hold`] and then read by name like files.
//!
//! ```no_run
//! use std::path::Path;
//! use sixray_parsers::{LengthUnit, ReadParams, read_cube};
//!
//! let cube = read_cube(Path::new("orbital.cube.gz"), &ReadParams::default())?;
//! let [n0, n1, n2] = cube.header.shape();
//! assert_eq!(cube.fields[0].len(), n0 * n1 * n2);
//! if cube.header.unit == LengthUnit::Angstrom { /* the caller converts, if it wants to */ }
//! # Ok::<(), sixray_parsers::CubeError>(())
//! ```

#![warn(missing_docs)]

pub mod cube;
pub mod fchk;
mod fields;
pub mod format;
pub mod molden;
pub mod stream;
pub mod text;
pub mod wfn;
pub mod wfx;

pub use cube::{
    CubeAtom, CubeAxis, CubeError, CubeErrorKind, CubeFile, CubeHeader, LengthUnit, ReadParams,
    parse_cube, parse_cube_header, read_cube, read_cube_header,
};
pub use fchk::{FchkError, FchkFile, FchkSection, FchkValue, parse_fchk, read_fchk};
pub use format::{FileFormat, sniff_format};
pub use molden::{
    MoldenAtom, MoldenBasisAtom, MoldenError, MoldenErrorKind, MoldenFile, MoldenFlag,
    MoldenOrbital, MoldenPrimitive, MoldenShell, MoldenSpin, ShellType, parse_molden, read_molden,
};
pub use text::TextErrorKind;
pub use wfn::{WfnError, WfnFile, WfnNucleus, WfnOrbital, parse_wfn, read_wfn};
pub use wfx::{WfxError, WfxFile, WfxOrbital, WfxSpin, parse_wfx, read_wfx};
