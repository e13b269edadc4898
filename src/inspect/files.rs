//! From grid files to inspections: a total-density file, optionally with the orbital files of
//! the same calculation. Lengths are converted to bohr where the header is read.

use super::{Inspection, OrbitalSum, OrbitalSumBuilder, InspectParams, inspect_density};
use crate::grid::{GridError, GridGeometry, Nucleus};
use crate::input::{InputError, LoadParams, geometry_of, load_cube};
use crate::par::Parallelism;
use sixray_parsers::cube::{CubeError, ReadParams, read_cube};
use std::path::{Path, PathBuf};
use thiserror::Error;

/// A file that cannot be inspected. Every variant from a file names it (and the line, where
/// one applies).
#[derive(Debug, Error)]
pub enum InspectError {
    /// The density file cannot be read or parsed.
    #[error(transparent)]
    Cube(#[from] CubeError),
    /// An orbital file cannot be read or parsed.
    #[error(transparent)]
    Input(#[from] InputError),
    /// The header describes no usable grid.
    #[error("{}: {source}", path.display())]
    Grid {
        /// The file.
        path: PathBuf,
        /// What is wrong with the grid.
        source: GridError,
    },
    /// The file is not a grid file at all (a basis-set file, or none sixray reads).
    #[error("{}: expected a total-density cube file, found {found}", path.display())]
    NotCube {
        /// The file.
        path: PathBuf,
        /// What the file is instead.
        found: String,
    },
    /// The file stores several values per point (orbitals), not one density.
    #[error("{}:3: {count} values per grid point (the atom-count line); a total density has one", path.display())]
    Components {
        /// The file.
        path: PathBuf,
        /// Values per point.
        count: usize,
    },
    /// Values and grid disagree in size (library callers only; files are checked while read).
    #[error("{found} values for a grid of {expected} points")]
    Size {
        /// Points of the grid.
        expected: usize,
        /// Values given.
        found: usize,
    },
}

/// A total density read from a file.
#[derive(Clone, Debug, PartialEq)]
pub struct DensityGrid {
    /// The file, as given.
    pub source: String,
    /// The grid, bohr.
    pub geometry: GridGeometry,
    /// Atoms the file lists, bohr.
    pub atoms: Vec<Nucleus>,
    /// ρ at every point, e/bohr³, first axis slowest.
    pub values: Vec<f64>,
}

/// Reads a total-density grid file (cube format, plain or gzip-compressed).
pub fn load_density(path: &Path, read: &ReadParams) -> Result<DensityGrid, InspectError> {
    // Tell a basis-set file (or a foreign one) apart before the cube reader trips on its second
    // line; a file that cannot even be opened is left to the cube reader's message.
    if let Ok(format) = sixray_parsers::sniff_format(path) {
        let found = match format {
            sixray_parsers::FileFormat::Cube => None,
            sixray_parsers::FileFormat::Unknown { start } => Some(format!("a file of no format sixray reads (it starts with {start})")),
            other => Some(format!("a {} basis-set file: give it to `sixray rank`, which analyses its orbitals exactly", other.name())),
        };
        if let Some(found) = found {
            return Err(InspectError::NotCube { path: path.to_path_buf(), found });
        }
    }
    let file = read_cube(path, read)?;
    let (geometry, atoms) = geometry_of(&file.header).map_err(|source| InspectError::Grid { path: path.to_path_buf(), source })?;
    let count = file.fields.len();
    let values = match <[Vec<f64>; 1]>::try_from(file.fields) {
        Ok([values]) => values,
        Err(_) => return Err(InspectError::Components { path: path.to_path_buf(), count }),
    };
    Ok(DensityGrid { source: path.display().to_string(), geometry, atoms, values })
}

/// The inspection of one density file.
#[derive(Clone, Debug, PartialEq)]
pub struct FileInspection {
    /// The density file, as given.
    pub source: String,
    /// What the density shows; its flags include those of the orbital sum.
    pub inspection: Inspection,
    /// The orbital files' sum against the density, when orbital files were given and fit.
    pub orbital_sum: Option<OrbitalSum>,
}

/// Inspects the density file `path` and, if `orbitals` is not empty, compares the sum of those
/// orbital files (read with `load`: kind, spin from the name, occupation) with it. Orbital files
/// are read one at a time. Fails on the first file that cannot be read.
pub fn inspect_file(
    path: &Path,
    orbitals: &[PathBuf],
    load: &LoadParams,
    params: &InspectParams,
    par: Parallelism,
) -> Result<FileInspection, InspectError> {
    let density = load_density(path, &load.read)?;
    let mut inspection = inspect_density(&density.geometry, &density.values, &density.atoms, params, par)?;
    let mut orbital_sum = None;
    if !orbitals.is_empty() {
        let mut builder = OrbitalSumBuilder::new(&density.geometry, &density.atoms);
        for file in orbitals {
            let loaded = load_cube(file, load)?;
            builder.add(&file.display().to_string(), &loaded, params.value_precision);
        }
        let (sum, flags) = builder.finish(&density.values, params, par);
        orbital_sum = sum;
        inspection.flags.extend(flags);
    }
    Ok(FileInspection { source: density.source, inspection, orbital_sum })
}
