//! Workflow files: a test set, the models and the reports, in YAML (a schema of our own).
//!
//! ```yaml
//! calculations:                      # the test set
//!   - name: water                    # unique label
//!     files: [water/*.cube.gz]       # paths or glob patterns, relative to this file
//!     kind: auto                     # optional: auto (default: from the values) | amplitude | density
//!     spin: from-name                # optional: from-name (default) | restricted | alpha | beta
//!     occupation: 1.0                # optional: electrons per spin-orbital, 0 < f ≤ 1
//!     tags: [neutral]                # optional
//!     density: water/density.cube.gz # optional: total density, checked against the atoms and orbitals
//!     grid_level: default            # optional, basis-set (molden) files: coarse | default | fine
//!     uniform_grid: 0.15             # optional, basis-set files: sample on a uniform grid of this
//!                                    #   spacing (bohr) and take the grid-file path instead
//!     orbitals: canonical            # optional: canonical (default) | localized | both
//!     keep_symmetry: false           # optional: localize without mixing symmetries
//! models: [lsda, blyp, xalpha=0.75]  # named models, xalpha=VALUE, or custom ones below
//! custom_models:                     # optional, as in a models file
//!   - {name: xa-vwn, exchange: xalpha, alpha: 0.7, correlation: vwn5}
//! report:                            # optional
//!   dir: out                         # relative to this file unless absolute (default: report)
//!   formats: [markdown, csv, json, html]  # default: all four
//!   units: millihartree              # for the Markdown tables
//!   worst: 20                        # worst orbitals listed across the set
//! options:                           # optional
//!   threads: 2                       # default: all cores
//!   rank_by: lsda                    # default: the first model
//!   cache: true                      # reuse finished orbitals from earlier runs
//!   error_bars: true                 # error bars and checks for every orbital
//!   tolerance: 1.6                   # largest acceptable error bar, millihartree
//!   cusp_correction: true            # cusp models at the nuclei the files list
//!   tail_correction: false           # add the estimated tail beyond each grid's box
//!   memory: 8G                       # memory the files may use at once (default: the job's limit)
//! ```
//!
//! The whole file is checked before anything runs. Checks that need more than the value itself
//! (a pattern must match files, a model name must be known, names must be unique) run while the
//! value is deserialised, so that every error carries the YAML line and column.

use crate::diagnostics::Spin;
use crate::calculation::{DuplicateFile, OrbitalSets, distinct_files};
use crate::input::{Kind, LoadParams, SpinRule};
use crate::localize::LocalizeParams;
use crate::molecular::{MIN_UNIFORM_SPACING, MolecularParams};
use crate::molgrid::GridLevel;
use crate::report::EnergyUnit;
use crate::trust::TrustParams;
use crate::xc::model::{CustomModel, ModelLibrary};
use crate::xc::Model;
use serde::de::Error as _;
use serde::{Deserialize, Deserializer};
use std::cell::RefCell;
use std::path::{Path, PathBuf};
use thiserror::Error;

/// A workflow file that cannot be used; nothing has run.
#[derive(Debug, Error)]
#[error("{}: {message}", path.display())]
pub struct WorkflowError {
    /// The workflow file.
    pub path: PathBuf,
    /// What is wrong, with the YAML line and column where known.
    pub message: String,
}

/// Report files a batch can write.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Deserialize)]
#[serde(rename_all = "lowercase")]
pub enum ReportFormat {
    /// `report.md`.
    Markdown,
    /// `orbitals.csv`.
    Csv,
    /// `report.json`.
    Json,
    /// `report.html`.
    Html,
}

/// One calculation of the test set, resolved.
#[derive(Clone, Debug, PartialEq)]
pub struct CalculationPlan {
    /// The user's label.
    pub name: String,
    /// The user's tags.
    pub tags: Vec<String>,
    /// How its files are read.
    pub load: LoadParams,
    /// Its orbital files (grid or basis-set), in pattern order, each pattern's matches sorted,
    /// each content once ([`distinct_files`]).
    pub files: Vec<PathBuf>,
    /// The files matched that hold the same bytes as one of `files`, left out.
    pub duplicates: Vec<DuplicateFile>,
    /// Which orbital sets are analysed (the localized set reports as `NAME (localized)`).
    pub orbitals: OrbitalSets,
    /// How localized orbitals are formed.
    pub localize: LocalizeParams,
    /// Its total-density file, checked against its atoms and its orbitals, if given.
    pub density: Option<PathBuf>,
}

/// Where and how reports are written.
#[derive(Clone, Debug, PartialEq)]
pub struct ReportSettings {
    /// Output directory (resolved against the workflow file's directory).
    pub dir: PathBuf,
    /// Which reports.
    pub formats: Vec<ReportFormat>,
    /// Energy unit of the human-readable tables.
    pub units: EnergyUnit,
    /// Worst orbitals listed across the set.
    pub worst: usize,
    /// Date printed in `report.html` (`None`: the newest modification date among the inputs).
    pub date: Option<crate::report::html::ReportDate>,
}

/// A checked workflow, ready to run.
#[derive(Clone, Debug)]
pub struct Workflow {
    /// The workflow file.
    pub path: PathBuf,
    /// The test set.
    pub calculations: Vec<CalculationPlan>,
    /// The models, in report order.
    pub models: Vec<Model>,
    /// Index of the model that orders rankings.
    pub rank_by: usize,
    /// Reports.
    pub report: ReportSettings,
    /// Worker threads, if set.
    pub threads: Option<usize>,
    /// Whether finished orbitals are cached and reused.
    pub cache: bool,
    /// Error bars and checks.
    pub trust: TrustParams,
    /// Cusp-corrected quadrature at the nuclei the files list.
    pub cusp_correction: bool,
    /// The estimated tail beyond each grid's box added to the values.
    pub tail_correction: bool,
    /// Memory the files may use at once, bytes, if set.
    pub memory: Option<u64>,
}

/// What the custom deserialisers need to know: where relative paths start, which models exist.
struct Context {
    base: PathBuf,
    library: ModelLibrary,
}

thread_local! {
    static CONTEXT: RefCell<Option<Context>> = const { RefCell::new(None) };
}

fn with_context<T>(f: impl FnOnce(&Context) -> T) -> T {
    CONTEXT.with(|c| f(c.borrow().as_ref().expect("workflow context is set while deserialising")))
}

/// A list whose items carry a name that must be unique.
trait Named {
    fn name(&self) -> &str;
}

/// A non-empty list of named items, with a repeated name reported at the repeat (inside the
/// sequence, so that the error carries its position).
fn unique<'de, D: Deserializer<'de>, T: Deserialize<'de> + Named>(d: D, what: &'static str) -> Result<Vec<T>, D::Error> {
    struct Unique<T>(&'static str, std::marker::PhantomData<T>);
    impl<'de, T: Deserialize<'de> + Named> serde::de::Visitor<'de> for Unique<T> {
        type Value = Vec<T>;
        fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
            write!(f, "a list of {}s", self.0)
        }
        fn visit_seq<A: serde::de::SeqAccess<'de>>(self, mut seq: A) -> Result<Vec<T>, A::Error> {
            let mut items: Vec<T> = Vec::new();
            while let Some(item) = seq.next_element::<T>()? {
                if items.iter().any(|b| b.name() == item.name()) {
                    return Err(A::Error::custom(format!("{} `{}` is listed twice", self.0, item.name())));
                }
                items.push(item);
            }
            if items.is_empty() {
                return Err(A::Error::custom(format!("the list of {}s is empty", self.0)));
            }
            Ok(items)
        }
    }
    d.deserialize_seq(Unique(what, std::marker::PhantomData))
}

/// Files matched by one pattern, relative to the workflow file.
#[derive(Clone, Debug)]
struct Pattern(Vec<PathBuf>);

impl<'de> Deserialize<'de> for Pattern {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let text = String::deserialize(d)?;
        let full = with_context(|c| c.base.join(&text));
        let pattern = full.to_string_lossy().into_owned();
        let paths = glob::glob(&pattern).map_err(|e| D::Error::custom(format!("bad file pattern `{text}`: {e}")))?;
        let mut files: Vec<PathBuf> = paths.filter_map(Result::ok).filter(|p| p.is_file()).collect();
        files.sort();
        if files.is_empty() {
            return Err(D::Error::custom(format!("file pattern `{text}` matches no file (looked for {pattern})")));
        }
        Ok(Pattern(files))
    }
}

/// A model name that resolves (built-in, `xalpha=VALUE`, or one of `custom_models`).
#[derive(Clone, Debug)]
struct ModelName(Model);

impl<'de> Deserialize<'de> for ModelName {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let name = String::deserialize(d)?;
        with_context(|c| c.library.resolve(&name)).map(ModelName).map_err(D::Error::custom)
    }
}

impl Named for ModelName {
    fn name(&self) -> &str {
        &self.0.name
    }
}

#[derive(Clone, Copy, Debug, Default, Deserialize)]
#[serde(rename_all = "lowercase")]
enum KindSpec {
    #[default]
    Auto,
    Amplitude,
    Density,
}

#[derive(Clone, Copy, Debug, Default, Deserialize)]
#[serde(rename_all = "kebab-case")]
enum SpinSpec {
    #[default]
    FromName,
    Restricted,
    Alpha,
    Beta,
}

/// An occupation in (0, 1].
#[derive(Clone, Copy, Debug)]
struct Occupation(f64);

impl<'de> Deserialize<'de> for Occupation {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let f = f64::deserialize(d)?;
        if f > 0.0 && f <= 1.0 { Ok(Occupation(f)) } else { Err(D::Error::custom(format!("occupation must be in (0, 1], got {f}"))) }
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct CalculationSpec {
    name: CalculationName,
    #[serde(deserialize_with = "patterns")]
    files: Vec<Pattern>,
    #[serde(default)]
    kind: KindSpec,
    #[serde(default)]
    spin: SpinSpec,
    #[serde(default)]
    occupation: Option<Occupation>,
    #[serde(default)]
    tags: Vec<String>,
    #[serde(default)]
    density: Option<DensityFile>,
    #[serde(default)]
    grid_level: GridLevelSpec,
    #[serde(default)]
    orbitals: OrbitalsSpec,
    #[serde(default)]
    keep_symmetry: bool,
    #[serde(default)]
    uniform_grid: Option<Spacing>,
}

#[derive(Clone, Copy, Debug, Default, Deserialize)]
#[serde(rename_all = "lowercase")]
enum OrbitalsSpec {
    #[default]
    Canonical,
    Localized,
    Both,
}

#[derive(Clone, Copy, Debug, Default, Deserialize)]
#[serde(rename_all = "lowercase")]
enum GridLevelSpec {
    Coarse,
    #[default]
    Default,
    Fine,
}

/// A uniform grid spacing in bohr: positive, and not so fine that the grid cannot be held.
struct Spacing(f64);

impl<'de> Deserialize<'de> for Spacing {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let h = f64::deserialize(d)?;
        if h.is_finite() && h >= MIN_UNIFORM_SPACING {
            Ok(Spacing(h))
        } else {
            Err(D::Error::custom(format!("uniform_grid must be a spacing of at least {MIN_UNIFORM_SPACING} bohr, got {h}")))
        }
    }
}

/// The one total-density file a pattern names.
struct DensityFile(PathBuf);

impl<'de> Deserialize<'de> for DensityFile {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let Pattern(mut files) = Pattern::deserialize(d)?;
        match files.len() {
            1 => Ok(DensityFile(files.remove(0))),
            n => Err(D::Error::custom(format!("density must name one file; the pattern matches {n}"))),
        }
    }
}

impl Named for CalculationSpec {
    fn name(&self) -> &str {
        &self.name.0
    }
}

/// A calculation's file patterns: at least one (YAML reads `files:` with no value as none).
fn patterns<'de, D: Deserializer<'de>>(d: D) -> Result<Vec<Pattern>, D::Error> {
    let list = Option::<Vec<Pattern>>::deserialize(d)?.unwrap_or_default();
    if list.is_empty() {
        return Err(D::Error::custom("files must name at least one file or pattern"));
    }
    Ok(list)
}

fn calculations<'de, D: Deserializer<'de>>(d: D) -> Result<Vec<CalculationSpec>, D::Error> {
    unique(d, "calculation")
}

fn models<'de, D: Deserializer<'de>>(d: D) -> Result<Vec<ModelName>, D::Error> {
    unique(d, "model")
}

/// A calculation name: not empty.
struct CalculationName(String);

impl<'de> Deserialize<'de> for CalculationName {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let name = String::deserialize(d)?;
        if name.trim().is_empty() { Err(D::Error::custom("a calculation needs a non-empty name")) } else { Ok(CalculationName(name)) }
    }
}

/// An energy unit by its name.
struct Units(EnergyUnit);

impl<'de> Deserialize<'de> for Units {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        String::deserialize(d)?.parse().map(Units).map_err(D::Error::custom)
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ReportSpec {
    #[serde(default = "default_dir")]
    dir: PathBuf,
    #[serde(default = "default_formats")]
    formats: Vec<ReportFormat>,
    #[serde(default)]
    units: Option<Units>,
    #[serde(default = "default_worst")]
    worst: usize,
}

fn default_dir() -> PathBuf {
    PathBuf::from("report")
}
fn default_formats() -> Vec<ReportFormat> {
    vec![ReportFormat::Markdown, ReportFormat::Csv, ReportFormat::Json, ReportFormat::Html]
}
fn default_worst() -> usize {
    20
}

impl Default for ReportSpec {
    fn default() -> Self {
        ReportSpec { dir: default_dir(), formats: default_formats(), units: None, worst: default_worst() }
    }
}

/// A positive thread count.
struct Threads(usize);

impl<'de> Deserialize<'de> for Threads {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        match usize::deserialize(d)? {
            0 => Err(D::Error::custom("threads must be at least 1")),
            n => Ok(Threads(n)),
        }
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct OptionsSpec {
    #[serde(default)]
    threads: Option<Threads>,
    #[serde(default)]
    rank_by: Option<ModelName>,
    #[serde(default = "yes")]
    cache: bool,
    #[serde(default = "yes")]
    error_bars: bool,
    #[serde(default)]
    tolerance: Option<Tolerance>,
    #[serde(default = "yes")]
    cusp_correction: bool,
    #[serde(default)]
    tail_correction: bool,
    #[serde(default)]
    memory: Option<MemorySize>,
}

fn yes() -> bool {
    true
}

impl Default for OptionsSpec {
    fn default() -> Self {
        OptionsSpec {
            threads: None,
            rank_by: None,
            cache: true,
            error_bars: true,
            tolerance: None,
            cusp_correction: true,
            tail_correction: false,
            memory: None,
        }
    }
}

/// A memory size with its unit (`8G`, `500M`; see [`crate::memory::parse_size`]).
struct MemorySize(u64);

impl<'de> Deserialize<'de> for MemorySize {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        struct Size;
        impl serde::de::Visitor<'_> for Size {
            type Value = MemorySize;
            fn expecting(&self, f: &mut std::fmt::Formatter) -> std::fmt::Result {
                write!(f, "a memory size such as 8G or 500M")
            }
            fn visit_str<E: serde::de::Error>(self, v: &str) -> Result<MemorySize, E> {
                crate::memory::parse_size(v).map(MemorySize).map_err(|e| E::custom(format!("memory: {e}")))
            }
            fn visit_u64<E: serde::de::Error>(self, v: u64) -> Result<MemorySize, E> {
                self.visit_str(&v.to_string())
            }
            fn visit_i64<E: serde::de::Error>(self, v: i64) -> Result<MemorySize, E> {
                self.visit_str(&v.to_string())
            }
            fn visit_f64<E: serde::de::Error>(self, v: f64) -> Result<MemorySize, E> {
                self.visit_str(&v.to_string())
            }
        }
        d.deserialize_any(Size)
    }
}

/// A positive tolerance in millihartree.
struct Tolerance(f64);

impl<'de> Deserialize<'de> for Tolerance {
    fn deserialize<D: Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let t = f64::deserialize(d)?;
        if t.is_finite() && t > 0.0 { Ok(Tolerance(t)) } else { Err(D::Error::custom("tolerance must be a positive number of millihartree")) }
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct WorkflowFile {
    #[serde(deserialize_with = "calculations")]
    calculations: Vec<CalculationSpec>,
    #[serde(deserialize_with = "models")]
    models: Vec<ModelName>,
    #[serde(default)]
    #[allow(dead_code)] // read in the first pass
    custom_models: Vec<CustomModel>,
    #[serde(default)]
    report: ReportSpec,
    #[serde(default)]
    options: OptionsSpec,
}

/// First pass: only the user's models, which the model names elsewhere may refer to.
#[derive(Deserialize)]
struct CustomModelsOnly {
    #[serde(default)]
    custom_models: Vec<CustomModel>,
}

impl Workflow {
    /// Reads and checks a workflow file.
    pub fn load(path: &Path) -> Result<Workflow, WorkflowError> {
        let text = std::fs::read_to_string(path)
            .map_err(|e| WorkflowError { path: path.to_path_buf(), message: e.to_string() })?;
        Self::from_text(&text, path)
    }

    /// Checks workflow text as if it were the content of the file `path`, which is not read
    /// (it names the workflow in errors, and relative patterns and the report directory
    /// resolve against its directory, whose files the patterns must match).
    pub fn from_text(text: &str, path: &Path) -> Result<Workflow, WorkflowError> {
        let fail = |message: String| WorkflowError { path: path.to_path_buf(), message };
        let base = path.parent().map(Path::to_path_buf).unwrap_or_default();
        let custom: CustomModelsOnly = serde_yaml::from_str(text).map_err(|e| fail(e.to_string()))?;
        let library = ModelLibrary::builtin()
            .with_custom(custom.custom_models.into_iter().map(|c| c.0).collect())
            .map_err(|e| fail(format!("custom_models: {e}")))?;
        CONTEXT.with(|c| *c.borrow_mut() = Some(Context { base: base.clone(), library }));
        let parsed: Result<WorkflowFile, _> = serde_yaml::from_str(text);
        CONTEXT.with(|c| *c.borrow_mut() = None);
        let file = parsed.map_err(|e| fail(e.to_string()))?;

        let mut models: Vec<Model> = file.models.into_iter().map(|m| m.0).collect();
        let rank_by = match file.options.rank_by {
            None => 0,
            Some(ModelName(m)) => match models.iter().position(|k| k.name == m.name) {
                Some(i) => i,
                None => {
                    models.push(m);
                    models.len() - 1
                }
            },
        };
        let calculations = file
            .calculations
            .into_iter()
            .map(|c| {
                // The same path from several patterns is no news; the same bytes under another
                // name are, and are noted.
                let mut matched: Vec<PathBuf> = Vec::new();
                for p in c.files.into_iter().flat_map(|p| p.0) {
                    if !matched.contains(&p) {
                        matched.push(p);
                    }
                }
                let (files, duplicates) = distinct_files(&matched);
                let spin = match c.spin {
                    SpinSpec::FromName => SpinRule::FromName,
                    SpinSpec::Restricted => SpinRule::Fixed(Spin::Restricted),
                    SpinSpec::Alpha => SpinRule::Fixed(Spin::Alpha),
                    SpinSpec::Beta => SpinRule::Fixed(Spin::Beta),
                };
                let kind = match c.kind {
                    KindSpec::Auto => None,
                    KindSpec::Amplitude => Some(Kind::Amplitude),
                    KindSpec::Density => Some(Kind::Density),
                };
                let occupation = c.occupation.map_or(1.0, |o| o.0);
                let molecular = MolecularParams {
                    grid: match c.grid_level {
                        GridLevelSpec::Coarse => GridLevel::Coarse,
                        GridLevelSpec::Default => GridLevel::Default,
                        GridLevelSpec::Fine => GridLevel::Fine,
                    },
                    uniform_spacing: c.uniform_grid.map(|h| h.0),
                    ..MolecularParams::default()
                };
                CalculationPlan {
                    name: c.name.0,
                    tags: c.tags,
                    load: LoadParams { kind, spin, occupation, molecular, ..LoadParams::default() },
                    files,
                    duplicates,
                    orbitals: match c.orbitals {
                        OrbitalsSpec::Canonical => OrbitalSets::Canonical,
                        OrbitalsSpec::Localized => OrbitalSets::Localized,
                        OrbitalsSpec::Both => OrbitalSets::Both,
                    },
                    localize: LocalizeParams { escape_saddle_points: !c.keep_symmetry, ..LocalizeParams::default() },
                    density: c.density.map(|d| d.0),
                }
            })
            .collect();
        let report = ReportSettings {
            dir: base.join(&file.report.dir),
            formats: file.report.formats,
            units: file.report.units.map_or(EnergyUnit::default(), |u| u.0),
            worst: file.report.worst,
            date: None,
        };
        Ok(Workflow {
            path: path.to_path_buf(),
            calculations,
            models,
            rank_by,
            report,
            threads: file.options.threads.map(|t| t.0),
            cache: file.options.cache,
            trust: TrustParams {
                error_bars: file.options.error_bars,
                tolerance: file.options.tolerance.map_or(TrustParams::default().tolerance, |t| t.0 * 1e-3),
            },
            cusp_correction: file.options.cusp_correction,
            tail_correction: file.options.tail_correction,
            memory: file.options.memory.map(|m| m.0),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn setup(yaml: &str) -> (tempfile::TempDir, Result<Workflow, WorkflowError>) {
        let dir = tempfile::tempdir().unwrap();
        for f in ["a/orbital_001.cube", "a/orbital_002.cube", "b/orbital_alpha_001.cube"] {
            let p = dir.path().join(f);
            std::fs::create_dir_all(p.parent().unwrap()).unwrap();
            // Distinct contents: files with the same bytes are one file to a workflow.
            std::fs::write(p, f).unwrap();
        }
        let wf = dir.path().join("set.yaml");
        std::fs::write(&wf, yaml).unwrap();
        let r = Workflow::load(&wf);
        (dir, r)
    }

    #[test]
    fn minimal_workflow_gets_defaults_and_resolved_paths() {
        let (dir, w) = setup("calculations:\n  - name: a\n    files: [a/*.cube, a/orbital_001.cube]\nmodels: [pbe]\n");
        let w = w.unwrap();
        assert_eq!(w.calculations.len(), 1);
        let c = &w.calculations[0];
        // Each file once, in pattern order.
        assert_eq!(c.files, vec![dir.path().join("a/orbital_001.cube"), dir.path().join("a/orbital_002.cube")]);
        assert!(c.duplicates.is_empty());
        // A copy under another name is left out, and noted.
        std::fs::copy(dir.path().join("a/orbital_002.cube"), dir.path().join("a/orbital_003.cube")).unwrap();
        let c = &Workflow::load(&dir.path().join("set.yaml")).unwrap().calculations[0];
        assert_eq!(c.files.len(), 2);
        let copy = DuplicateFile {
            source: dir.path().join("a/orbital_003.cube").display().to_string(),
            same_as: dir.path().join("a/orbital_002.cube").display().to_string(),
        };
        assert_eq!(c.duplicates, [copy]);
        assert_eq!(c.load.kind, None);
        assert_eq!(c.load.spin, SpinRule::FromName);
        assert_eq!(w.report.dir, dir.path().join("report"));
        assert_eq!(w.report.formats, [ReportFormat::Markdown, ReportFormat::Csv, ReportFormat::Json, ReportFormat::Html]);
        assert_eq!((w.report.units, w.report.worst, w.cache, w.threads), (EnergyUnit::Millihartree, 20, true, None));
        assert_eq!((w.models.len(), w.rank_by), (1, 0));
        assert_eq!((w.cusp_correction, w.tail_correction, w.memory), (true, false, None));
    }

    #[test]
    fn full_workflow_with_custom_models_declared_after_use() {
        let yaml = "calculations:\n  - name: radical\n    files: [b/*.cube]\n    kind: density\n    spin: alpha\n    occupation: 0.5\n    tags: [open-shell]\nmodels: [mine, xalpha=0.8]\nreport:\n  dir: /tmp/elsewhere\n  formats: [json]\n  units: ev\n  worst: 3\noptions:\n  threads: 2\n  rank_by: scan\n  cache: false\n  tail_correction: true\n  memory: 1.5G\ncustom_models:\n  - {name: mine, exchange: b88, correlation: pw92}\n";
        let (_dir, w) = setup(yaml);
        let w = w.unwrap();
        let c = &w.calculations[0];
        assert_eq!((c.load.kind, c.load.spin, c.load.occupation), (Some(Kind::Density), SpinRule::Fixed(Spin::Alpha), 0.5));
        assert_eq!(c.tags, ["open-shell"]);
        let names: Vec<_> = w.models.iter().map(|m| m.name.as_str()).collect();
        assert_eq!(names, ["mine", "xalpha=0.8", "scan"]);
        assert_eq!(w.rank_by, 2);
        assert_eq!(w.report.dir, PathBuf::from("/tmp/elsewhere"));
        assert_eq!((w.report.formats.clone(), w.report.units, w.report.worst), (vec![ReportFormat::Json], EnergyUnit::ElectronVolt, 3));
        assert_eq!((w.threads, w.cache, w.tail_correction, w.memory), (Some(2), false, true, Some(3 << 29)));
    }

    #[test]
    fn text_checks_like_the_file_without_reading_it() {
        let yaml = "calculations:\n  - name: a\n    files: [a/*.cube]\nmodels: [pbe, lsda]\nreport:\n  dir: out\n";
        let (dir, loaded) = setup(yaml);
        // A name beside the real file that does not exist: only its directory is used.
        let virtual_path = dir.path().join("not-written.yaml");
        let parsed = Workflow::from_text(yaml, &virtual_path).unwrap();
        let mut loaded = loaded.unwrap();
        assert_eq!(parsed.path, virtual_path);
        loaded.path = virtual_path.clone();
        assert_eq!(format!("{parsed:?}"), format!("{loaded:?}"));
        assert_eq!(parsed.report.dir, dir.path().join("out"));
        // Errors name the virtual file and carry the YAML line.
        let e = Workflow::from_text("calculations: []\nmodels: [lsda]\n", &virtual_path).unwrap_err();
        assert_eq!(e.path, virtual_path);
        assert!(e.message.contains("line 1"), "{e}");
        // `load` still reports a file it cannot read.
        assert!(Workflow::load(&virtual_path).is_err());
    }

    #[test]
    fn a_calculation_without_files_is_refused() {
        // Found by the workflow fuzz target (fuzz/seeds/workflow/no-files.yaml): `files:` with no
        // value, or an empty list, was accepted as a calculation of no orbitals.
        for files in ["files:", "files: []", "files: ~"] {
            let yaml = format!("calculations:\n  - name: a\n    {files}\nmodels: [lsda]\n");
            let (_dir, w) = setup(&yaml);
            let e = w.expect_err(&yaml).to_string();
            assert!(e.contains("files must name at least one file or pattern"), "{yaml}\n→ {e}");
            assert!(e.contains("line 2") || e.contains("line 3"), "{yaml}\n→ {e}");
        }
    }

    #[test]
    fn every_mistake_is_located() {
        let base = "calculations:\n  - name: a\n    files: [a/*.cube]\n";
        for (yaml, needle, line) in [
            (format!("{base}models: [lsda]\noptions:\n  threads: 0\n"), "threads must be at least 1", 6),
            // Errors inside a calculation point at the start of its entry.
            (format!("{base}    occupation: 2\nmodels: [lsda]\n"), "occupation must be in (0, 1]", 2),
            ("calculations:\n  - name: \"\"\n    files: [a/*.cube]\nmodels: [lsda]\n".into(), "non-empty name", 2),
            (format!("{base}    spin: up\nmodels: [lsda]\n"), "unknown variant `up`", 4),
            (format!("{base}models: [lsda]\nreport:\n  formats: [pdf]\n"), "unknown variant `pdf`", 6),
            (format!("{base}models: [lsda]\nreport:\n  units: joules\n"), "unknown energy unit", 6),
            (format!("{base}models: []\n"), "list of models is empty", 4),
            (format!("{base}models: [lsda]\nextra: 1\n"), "unknown field `extra`", 5),
            (format!("{base}models: [lsda]\noptions:\n  memory: 8000\n"), "memory: `8000` has no unit", 6),
            (format!("{base}models: [lsda]\noptions:\n  memory: lots\n"), "memory: `lots` is not a size", 6),
            ("calculations: []\nmodels: [lsda]\n".to_string(), "list of calculations is empty", 1),
        ] {
            let (_dir, w) = setup(&yaml);
            let e = w.unwrap_err().to_string();
            assert!(e.contains(needle), "{yaml}\n→ {e}");
            assert!(e.contains(&format!("line {line}")), "{yaml}\n→ {e}");
        }
        let (_dir, w) = setup("calculations:\n  - name: a\n    files: [a/*.cube]\nmodels: [lsda]\n");
        assert!(w.is_ok());
    }
}
