//! From grid files to orbital densities.
//!
//! A cube file holds orbital amplitudes φ_i (the default) or orbital densities, one or several
//! orbitals per file. Here each becomes a [`GridOrbital`] on a [`GridGeometry`] in bohr, with a
//! kind, an occupation, a spin and a label.

pub use crate::diagnostics::Kind;
use crate::diagnostics::{GridOrbital, Spin};
use crate::grid::{BOHR_PER_ANGSTROM, GridError, GridGeometry, Nucleus};
use crate::molecular::MolecularParams;
use sixray_parsers::cube::{self, CubeError, CubeHeader, LengthUnit, ReadParams};
use std::path::{Path, PathBuf};
use std::sync::Arc;
use thiserror::Error;

/// How to decide an orbital's spin.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum SpinRule {
    /// `alpha` or `beta` in the file name, otherwise restricted.
    #[default]
    FromName,
    /// Every file is of this spin.
    Fixed(Spin),
}

/// How to turn files into orbital densities.
#[derive(Clone, Debug, PartialEq)]
pub struct LoadParams {
    /// What the values are.
    pub kind: Kind,
    /// How spins are assigned.
    pub spin: SpinRule,
    /// Electrons per spin-orbital, f_i, for files that cannot say (0 < f ≤ 1).
    pub occupation: f64,
    /// Limits of the file reader.
    pub read: ReadParams,
    /// How to treat Gaussian-basis files (which give their own spins and occupations: `kind`,
    /// `spin` and `occupation` apply to grid files only).
    pub molecular: MolecularParams,
}

impl Default for LoadParams {
    fn default() -> Self {
        LoadParams {
            kind: Kind::Amplitude,
            spin: SpinRule::FromName,
            occupation: 1.0,
            read: ReadParams::default(),
            molecular: MolecularParams::default(),
        }
    }
}

/// A file that cannot become orbital densities.
#[derive(Debug, Error)]
pub enum InputError {
    /// The file cannot be read or parsed (the error names file and line).
    #[error(transparent)]
    Cube(#[from] CubeError),
    /// The header describes no usable grid.
    #[error("{}: {source}", path.display())]
    Grid {
        /// The file.
        path: PathBuf,
        /// What is wrong with the grid.
        source: GridError,
    },
}

/// Geometry and nuclei of a parsed grid-file header, converted to bohr.
pub fn geometry_of(header: &CubeHeader) -> Result<(GridGeometry, Vec<Nucleus>), GridError> {
    let scale = match header.unit {
        LengthUnit::Bohr => 1.0,
        LengthUnit::Angstrom => BOHR_PER_ANGSTROM,
    };
    let s = |v: [f64; 3]| v.map(|x| x * scale);
    let geometry = GridGeometry::new(
        s(header.origin),
        [s(header.axes[0].step), s(header.axes[1].step), s(header.axes[2].step)],
        [header.axes[0].points, header.axes[1].points, header.axes[2].points],
    )?;
    let nuclei = header
        .atoms
        .iter()
        .map(|a| Nucleus { atomic_number: a.atomic_number, charge: a.charge, position: s(a.position) })
        .collect();
    Ok((geometry, nuclei))
}

/// Spin named by a file name: a word `alpha` or `beta` (case-insensitive, delimited by anything
/// that is not a letter), otherwise restricted.
pub fn spin_from_name(path: &Path) -> Spin {
    let name = path.file_name().map(|n| n.to_string_lossy().to_lowercase()).unwrap_or_default();
    let words = name.split(|c: char| !c.is_ascii_alphabetic()).collect::<Vec<_>>();
    if words.contains(&"alpha") {
        Spin::Alpha
    } else if words.contains(&"beta") {
        Spin::Beta
    } else {
        Spin::Restricted
    }
}

/// File name without directory and without `.gz` / `.cube` / `.cub` / `.molden` suffixes.
pub(crate) fn stem(path: &Path) -> String {
    let mut name = path.file_name().map(|n| n.to_string_lossy().into_owned()).unwrap_or_default();
    for suffix in [".gz", ".cube", ".cub", ".molden", ".mold"] {
        if let Some(s) = name.strip_suffix(suffix) {
            name = s.to_string();
        }
    }
    name
}

impl LoadParams {
    /// The spin of the orbitals in `path` under these parameters.
    pub fn spin_for(&self, path: &Path) -> Spin {
        match self.spin {
            SpinRule::FromName => spin_from_name(path),
            SpinRule::Fixed(s) => s,
        }
    }
}

/// Labels of the orbitals a grid file holds: the file stem, plus `#INDEX` (the file's orbital
/// index, or the position from 1) when it holds several.
pub fn orbital_labels(path: &Path, header: &CubeHeader) -> Vec<String> {
    let stem = stem(path);
    let count = header.values_per_point;
    (0..count)
        .map(|k| match (&header.orbital_ids, count > 1) {
            (Some(ids), _) => format!("{stem}#{}", ids.get(k).copied().unwrap_or(k as i64 + 1)),
            (None, true) => format!("{stem}#{}", k + 1),
            (None, false) => stem.clone(),
        })
        .collect()
}

/// Reads one grid file: one orbital per value stored at each point.
pub fn load_cube(path: &Path, params: &LoadParams) -> Result<Vec<GridOrbital>, InputError> {
    let file = cube::read_cube(path, &params.read)?;
    let (geometry, nuclei) =
        geometry_of(&file.header).map_err(|source| InputError::Grid { path: path.to_path_buf(), source })?;
    let geometry = Arc::new(geometry);
    let nuclei: Arc<[Nucleus]> = Arc::from(nuclei);
    let spin = params.spin_for(path);
    let labels = orbital_labels(path, &file.header);
    Ok(file
        .fields
        .into_iter()
        .zip(labels)
        .map(|(values, label)| GridOrbital {
            source: path.display().to_string(),
            label,
            spin,
            occupation: params.occupation,
            geometry: geometry.clone(),
            nuclei: nuclei.clone(),
            kind: params.kind,
            values,
        })
        .collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn spin_from_file_names() {
        assert_eq!(spin_from_name(Path::new("dir/orbital_alpha_003.cube.gz")), Spin::Alpha);
        assert_eq!(spin_from_name(Path::new("radical/BETA-7.cube")), Spin::Beta);
        assert_eq!(spin_from_name(Path::new("alpha/orbital_001.cube")), Spin::Restricted);
        assert_eq!(spin_from_name(Path::new("alphabet_001.cube")), Spin::Restricted);
    }

    #[test]
    fn stems_drop_grid_suffixes() {
        assert_eq!(stem(Path::new("a/b/orbital_001.cube.gz")), "orbital_001");
        assert_eq!(stem(Path::new("x.cub")), "x");
        assert_eq!(stem(Path::new("plain")), "plain");
    }
}
