//! A cache of finished orbital results, keyed by input content and settings.
//!
//! Each entry is one orbital's [`OrbitalReport`] as JSON, in its own file named by a BLAKE3 hash
//! of: the grid file's bytes, the orbital's position in the file, how the file is read (kind,
//! spin, occupation), the models (names and functionals), the engine settings and the sixray
//! version. Entries are written atomically as each orbital finishes, so a run killed at any
//! moment leaves only whole entries, and a rerun recomputes exactly the orbitals without one.
//! Floats are stored in their shortest round-trip form, so cached results are bit-identical to
//! fresh ones. An entry that cannot be read or parsed counts as missing. Each entry stands on
//! its own (its name is its content's key), so entries of different runs never mix; temporary
//! files a killed run left are removed by the next (see [`crate::report::atomic`]).

use crate::diagnostics::{EngineParams, OrbitalReport, Spin};
use crate::input::LoadParams;
use crate::report::write_atomic;
use crate::xc::Model;
use std::path::{Path, PathBuf};

/// A directory of cached orbital results.
#[derive(Clone, Debug)]
pub struct ResultCache {
    dir: PathBuf,
    /// False to ignore existing entries (they are still written).
    read: bool,
}

/// BLAKE3 digest of a file's bytes (of the held bytes for an input read from a pipe, see
/// [`sixray_parsers::stream`]).
pub fn file_digest(path: &Path) -> std::io::Result<blake3::Hash> {
    if let Some(bytes) = sixray_parsers::stream::held(path) {
        return Ok(blake3::hash(&bytes));
    }
    let mut hasher = blake3::Hasher::new();
    hasher.update_reader(std::fs::File::open(path)?)?;
    Ok(hasher.finalize())
}

/// Revision of the numerical methods: raise it with every change that alters computed numbers,
/// so that results cached by an earlier build are not served as if current.
/// History: 2 — exchange–correlation near cusps from the rebuilt orbital, sub-lattice spreads
/// of plain functional sums, optional tail correction; 3 — sub-lattice spreads of the
/// functionals outside the refined windows; 4 — sub-lattice J split with the whole grid's cusp
/// models; 5 — molden conventions decided from the orbitals' orthonormality; 6 — floors under
/// the basis path's error bars (rounding, the grid's norm error, the printed coefficients) and
/// its `norm-off` and `under-resolved` flags; the Coulomb kernel from half its slabs and
/// densities transformed plane by plane (J changes at rounding level: at most 1e-14 relative,
/// 4e-15 Eh, on the demo and shared reference sets).
const METHODS_REVISION: u32 = 6;

/// Everything besides the file's bytes that determines its orbitals' results.
pub fn settings_fingerprint(load: &LoadParams, spin: Spin, models: &[Model], engine: &EngineParams) -> String {
    let models = models
        .iter()
        .map(|m| format!("{}={}+{}", m.name, m.exchange.id(), m.correlation.as_ref().map_or("none".into(), |c| c.id())))
        .collect::<Vec<_>>()
        .join(",");
    format!(
        "sixray {} methods {METHODS_REVISION}; kind {:?}; spin {:?}; occupation {:e}; basis files {:?}; models {models}; engine {:?}",
        env!("CARGO_PKG_VERSION"),
        load.kind,
        spin,
        load.occupation,
        load.molecular,
        engine
    )
}

impl ResultCache {
    /// A cache in `dir`, created if needed; with `read` false, existing entries are ignored and
    /// overwritten.
    pub fn open(dir: &Path, read: bool) -> std::io::Result<Self> {
        std::fs::create_dir_all(dir)?;
        Ok(ResultCache { dir: dir.to_path_buf(), read })
    }

    /// The key of orbital `component` of a file with digest `file`, under `settings`.
    pub fn key(file: &blake3::Hash, component: usize, settings: &str) -> String {
        let mut h = blake3::Hasher::new();
        h.update(file.as_bytes());
        h.update(&(component as u64).to_le_bytes());
        h.update(settings.as_bytes());
        h.finalize().to_hex().to_string()
    }

    fn path(&self, key: &str) -> PathBuf {
        self.dir.join(format!("{key}.json"))
    }

    /// The cached result under `key`, if there is a readable one.
    pub fn get(&self, key: &str) -> Option<OrbitalReport> {
        if !self.read {
            return None;
        }
        let text = std::fs::read(self.path(key)).ok()?;
        serde_json::from_slice(&text).ok()
    }

    /// Stores `report` under `key` (atomically).
    pub fn put(&self, key: &str, report: &OrbitalReport) -> std::io::Result<()> {
        let text = serde_json::to_vec(report).map_err(std::io::Error::other)?;
        write_atomic(&self.path(key), &text)
    }
}
