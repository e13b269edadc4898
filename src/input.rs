//! From grid files to orbital densities.
//!
//! A cube file holds orbital amplitudes φ_i or orbital densities, one or several orbitals per
//! file. Here each becomes a [`GridOrbital`] on a [`GridGeometry`] in bohr, with a kind (given,
//! or decided from the values: [`kind`]), an occupation, a spin and a label. Files that cannot
//! give a number are refused: grids too coarse for any orbital, and total densities.

mod kind;

pub use crate::diagnostics::Kind;
pub use kind::{
    AMBIGUITY, Decision, KindEvidence, KindOrigin, KindSource, MAX_ION_CHARGE, MAX_ORBITAL_ELECTRONS, MAX_STEP, NEGATIVE_SHARE,
    TitleHint, TooCoarse, Verdict, check_resolution, contradicts, decide,
};
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
    /// What the values are; `None`: decided from the values ([`decide`]).
    pub kind: Option<Kind>,
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
            kind: None,
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
    /// The grid's steps are too long for any orbital (see [`MAX_STEP`]).
    #[error(
        "{}: grid too coarse for any number: steps of {:.3} bohr with {} × {} × {} points; an orbital needs steps of at most {MAX_STEP} bohr, and about 0.15 bohr for error bars within the default tolerance{}",
        path.display(), coarse.step, coarse.shape[0], coarse.shape[1], coarse.shape[2],
        if *looks_total { format!("; its title says density and its values do not look like one orbital: if it is a total density, `sixray inspect {}` checks those", path.display()) } else { String::new() }
    )]
    TooCoarse {
        /// The file.
        path: PathBuf,
        /// Its longest step and shape.
        coarse: TooCoarse,
        /// The title says density and the values, on this grid, read as a total density
        /// ([`decide`]; the integrals of so coarse a grid are no proof, hence the title too).
        looks_total: bool,
    },
    /// The values are a many-electron density, not one orbital's.
    #[error(
        "{}{}: a total electron density, not an orbital: the values are non-negative and integrate to {:.3} electrons (the listed nuclei's charges sum to {}); the analysis needs one orbital per field (its amplitude or its density){}",
        path.display(), field_label(*field), evidence.integral, evidence.nuclear_charge, total_density_note(path)
    )]
    TotalDensity {
        /// The file.
        path: PathBuf,
        /// Which field of a multi-orbital file (from 1), if it holds several.
        field: Option<usize>,
        /// The integrals.
        evidence: KindEvidence,
    },
}

/// ` (orbital K)` for the K-th field of a file holding several.
fn field_label(field: Option<usize>) -> String {
    field.map(|k| format!(" (orbital {k})")).unwrap_or_default()
}

/// The pointer to the check of total-density files.
fn total_density_note(path: &Path) -> String {
    format!("; `sixray inspect {}` checks total-density files", path.display())
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

/// Reads one grid file: one orbital per value stored at each point, each read as the kind
/// `params` gives or, without one, as its values say ([`decide`], the title lines as a hint).
/// Refuses grids whose steps exceed [`MAX_STEP`] and fields that hold a total density.
pub fn load_cube(path: &Path, params: &LoadParams) -> Result<Vec<GridOrbital>, InputError> {
    let file = cube::read_cube(path, &params.read)?;
    let (geometry, nuclei) =
        geometry_of(&file.header).map_err(|source| InputError::Grid { path: path.to_path_buf(), source })?;
    let title = TitleHint::from_titles(&file.header.comments);
    let evidence: Vec<KindEvidence> = file.fields.iter().map(|v| KindEvidence::of(v, &geometry, &nuclei, title)).collect();
    // The user's kind, else the title's, breaks ties between readings.
    let preferred = params.kind.or(title.map(TitleHint::kind));
    let decisions: Vec<Decision> = evidence.iter().map(|e| decide(e, preferred)).collect();
    if let Err(coarse) = check_resolution(&geometry) {
        let looks_total = title == Some(TitleHint::Density) && decisions.iter().any(|d| d.verdict == Verdict::TotalDensity);
        return Err(InputError::TooCoarse { path: path.to_path_buf(), coarse, looks_total });
    }
    let several = file.fields.len() > 1;
    if let Some(k) = decisions.iter().position(|d| d.verdict == Verdict::TotalDensity) {
        return Err(InputError::TotalDensity { path: path.to_path_buf(), field: several.then_some(k + 1), evidence: evidence[k] });
    }
    let geometry = Arc::new(geometry);
    let nuclei: Arc<[Nucleus]> = Arc::from(nuclei);
    let spin = params.spin_for(path);
    let labels = orbital_labels(path, &file.header);
    Ok(file
        .fields
        .into_iter()
        .zip(labels)
        .zip(evidence.into_iter().zip(decisions))
        .map(|((values, label), (evidence, decision))| {
            let (kind, origin) = match params.kind {
                Some(kind) => (kind, KindOrigin { source: KindSource::Given, evidence: Some(evidence), contradicted: contradicts(kind, &evidence) }),
                // Not a total density (refused above), so a one-orbital kind.
                None => (
                    decision.verdict.kind().unwrap_or_default(),
                    KindOrigin { source: KindSource::Detected, evidence: Some(evidence), contradicted: false },
                ),
            };
            GridOrbital {
                source: path.display().to_string(),
                label,
                spin,
                occupation: params.occupation,
                geometry: geometry.clone(),
                nuclei: nuclei.clone(),
                kind,
                kind_origin: Some(origin),
                values,
            }
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
