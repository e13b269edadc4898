//! Models: one exchange functional plus an optional correlation functional, under a name.
//!
//! The names here are what `--model` accepts and what reports use as keys. `xalpha=VALUE` builds
//! Xα exchange with any α > 0. Users add their own pairings in a models file (YAML, also the
//! `custom_models` of a workflow):
//!
//! ```yaml
//! models:
//!   - name: xalpha-vwn5      # a name of the user's
//!     exchange: xalpha       # an exchange functional id (`sixray models` lists them)
//!     alpha: 0.7             # for xalpha only
//!     correlation: vwn5      # optional
//! ```

use super::slater::XAlpha;
use super::{Family, Functional, Part, find};
use serde::Deserialize;
use std::fmt;
use std::path::Path;
use std::sync::Arc;
use thiserror::Error;

/// A named exchange(–correlation) approximation.
#[derive(Clone, Debug)]
pub struct Model {
    /// Name as used on the command line and as a report key.
    pub name: String,
    /// The exchange functional.
    pub exchange: Arc<dyn Functional>,
    /// The correlation functional, if the model has one.
    pub correlation: Option<Arc<dyn Functional>>,
    /// One line for listings.
    pub summary: String,
}

/// A model that cannot be resolved or built.
#[derive(Debug, Error, Clone, PartialEq)]
pub enum ModelError {
    /// No model of that name.
    #[error("unknown model `{name}`; known models: {known}, or xalpha=VALUE")]
    Unknown {
        /// The name given.
        name: String,
        /// Comma-separated known names.
        known: String,
    },
    /// `xalpha` with an α outside (0, [`MAX_ALPHA`]].
    #[error("`{spec}`: α must be a number above 0 and at most 2, e.g. xalpha=0.7")]
    BadAlpha {
        /// What was given.
        spec: String,
    },
    /// No functional of that id.
    #[error("unknown {part} functional `{id}`; known: {known}")]
    UnknownFunctional {
        /// "exchange" or "correlation".
        part: &'static str,
        /// The id given.
        id: String,
        /// Comma-separated known ids.
        known: String,
    },
    /// `alpha` given for an exchange functional other than xalpha, or missing for xalpha.
    #[error("`alpha` belongs to exchange `xalpha` only, and xalpha needs it (model `{name}`)")]
    AlphaMisplaced {
        /// The model's name.
        name: String,
    },
    /// A user-defined model reuses a name that is taken.
    #[error("model name `{name}` is {why}")]
    BadName {
        /// The name given.
        name: String,
        /// Why it cannot be used.
        why: &'static str,
    },
}

/// A models file that cannot be used.
#[derive(Debug, Error)]
pub enum ModelFileError {
    /// The file cannot be read.
    #[error("{}: {source}", path.display())]
    Io {
        /// The file.
        path: std::path::PathBuf,
        /// The cause.
        source: std::io::Error,
    },
    /// The YAML is malformed or a model in it is invalid; the message carries line and column.
    #[error("{}: {message}", path.display())]
    Invalid {
        /// The file.
        path: std::path::PathBuf,
        /// What is wrong, and where.
        message: String,
    },
}

/// Named models: name, exchange id, α (for xalpha), correlation id.
pub const BUILTIN: &[(&str, &str, Option<f64>, Option<&str>)] = &[
    ("lsda", "lsda", None, Some("pw92")),
    ("lsda-x", "lsda", None, None),
    ("lsda-vwn5", "lsda", None, Some("vwn5")),
    ("slater", "xalpha", Some(1.0), None),
    ("b88", "b88", None, None),
    ("blyp", "b88", None, Some("lyp")),
    ("pbe", "pbe", None, Some("pbe")),
    ("pbe-x", "pbe", None, None),
    ("pw91-x", "pw91", None, None),
    ("scan", "scan", None, Some("scan")),
    ("scan-x", "scan", None, None),
    ("r2scan", "r2scan", None, Some("r2scan")),
    ("r2scan-x", "r2scan", None, None),
];

fn known_ids(part: Part) -> String {
    let mut ids: Vec<String> = super::catalogue().iter().filter(|f| f.part() == part).map(|f| f.id()).collect();
    if part == Part::Exchange {
        ids.push("xalpha (with alpha)".into());
    }
    ids.join(", ")
}

/// Largest Xα value accepted: α = 2/3 is the exact exchange of the uniform gas and α = 1
/// Slater's; the values that cancel an orbital's J lie between them (about 0.7–0.8 on the
/// shared reference set), so twice Slater's already describes no model in use, and larger
/// values only hide a typing error.
pub const MAX_ALPHA: f64 = 2.0;

fn alpha_in_range(alpha: f64) -> bool {
    alpha.is_finite() && alpha > 0.0 && alpha <= MAX_ALPHA
}

impl Model {
    /// Builds a model from functional ids: `exchange` is `xalpha` (with `alpha`) or a catalogued
    /// exchange id, `correlation` a catalogued correlation id.
    pub fn from_parts(name: &str, exchange: &str, alpha: Option<f64>, correlation: Option<&str>) -> Result<Model, ModelError> {
        let x: Arc<dyn Functional> = match (exchange, alpha) {
            ("xalpha", Some(alpha)) if alpha_in_range(alpha) => Arc::new(XAlpha { alpha }),
            ("xalpha", Some(a)) => return Err(ModelError::BadAlpha { spec: format!("xalpha={a}") }),
            ("xalpha", None) | (_, Some(_)) => return Err(ModelError::AlphaMisplaced { name: name.into() }),
            (id, None) => find(Part::Exchange, id).ok_or_else(|| ModelError::UnknownFunctional {
                part: "exchange",
                id: id.into(),
                known: known_ids(Part::Exchange),
            })?,
        };
        let c = correlation
            .map(|id| {
                find(Part::Correlation, id).ok_or_else(|| ModelError::UnknownFunctional {
                    part: "correlation",
                    id: id.into(),
                    known: known_ids(Part::Correlation),
                })
            })
            .transpose()?;
        let x_name = match alpha {
            Some(a) => format!("Xα (α = {a})"),
            None => x.id(),
        };
        let summary = match &c {
            Some(c) => format!("{x_name} exchange + {} correlation", c.id()),
            None => format!("{x_name} exchange only"),
        };
        Ok(Model { name: name.into(), exchange: x, correlation: c, summary })
    }

    /// Resolves a built-in model name (see [`BUILTIN`]) or `xalpha=VALUE`.
    pub fn from_name(spec: &str) -> Result<Model, ModelError> {
        let spec = spec.trim();
        // Names are matched in any case (`PBE`, `XAlpha=0.7`); reports use the canonical one.
        let prefix = "xalpha=";
        if spec.len() >= prefix.len() && spec.is_char_boundary(prefix.len()) && spec[..prefix.len()].eq_ignore_ascii_case(prefix) {
            let value = &spec[prefix.len()..];
            let alpha: f64 = value.trim().parse().map_err(|_| ModelError::BadAlpha { spec: spec.into() })?;
            if !alpha_in_range(alpha) {
                return Err(ModelError::BadAlpha { spec: spec.into() });
            }
            return Model::from_parts(&format!("xalpha={alpha}"), "xalpha", Some(alpha), None);
        }
        match BUILTIN.iter().find(|b| b.0.eq_ignore_ascii_case(spec)) {
            Some(&(name, x, alpha, c)) => Model::from_parts(name, x, alpha, c),
            None => Err(ModelError::Unknown { name: spec.into(), known: BUILTIN.iter().map(|b| b.0).collect::<Vec<_>>().join(", ") }),
        }
    }

    /// The richest ingredient any of the model's functionals reads.
    pub fn family(&self) -> Family {
        self.correlation.iter().map(|c| c.family()).fold(self.exchange.family(), Family::max)
    }
}

impl fmt::Display for Model {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.name)
    }
}

/// One user-defined model as written in a models file or a workflow. Names and functional ids
/// are checked as they are read, so that an error points at the offending line.
#[derive(Clone, Debug, Deserialize, PartialEq)]
#[serde(deny_unknown_fields)]
pub struct ModelSpec {
    /// The user's name for the model.
    pub name: CustomName,
    /// Exchange functional id (`xalpha` needs `alpha`).
    pub exchange: FunctionalId<true>,
    /// Correlation functional id, if any.
    #[serde(default)]
    pub correlation: Option<FunctionalId<false>>,
    /// α of Xα exchange.
    #[serde(default)]
    pub alpha: Option<f64>,
}

/// A name for a user-defined model: not empty, no white space, not a built-in name.
#[derive(Clone, Debug, PartialEq)]
pub struct CustomName(pub String);

impl<'de> Deserialize<'de> for CustomName {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let name = String::deserialize(d)?;
        let why = if name.is_empty() || name.chars().any(char::is_whitespace) {
            Some("empty or contains white space")
        } else if BUILTIN.iter().any(|b| b.0 == name) || name.starts_with("xalpha=") {
            Some("a built-in model name")
        } else {
            None
        };
        match why {
            Some(why) => Err(serde::de::Error::custom(ModelError::BadName { name, why })),
            None => Ok(CustomName(name)),
        }
    }
}

/// The id of a catalogued functional (`EXCHANGE` true: an exchange id or `xalpha`; false: a
/// correlation id).
#[derive(Clone, Debug, PartialEq)]
pub struct FunctionalId<const EXCHANGE: bool>(pub String);

impl<'de, const EXCHANGE: bool> Deserialize<'de> for FunctionalId<EXCHANGE> {
    fn deserialize<D: serde::Deserializer<'de>>(d: D) -> Result<Self, D::Error> {
        let id = String::deserialize(d)?;
        let part = if EXCHANGE { Part::Exchange } else { Part::Correlation };
        if (EXCHANGE && id == "xalpha") || find(part, &id).is_some() {
            return Ok(FunctionalId(id));
        }
        let part_name = if EXCHANGE { "exchange" } else { "correlation" };
        Err(serde::de::Error::custom(ModelError::UnknownFunctional { part: part_name, id, known: known_ids(part) }))
    }
}

/// A user-defined model, checked while it is deserialised.
#[derive(Clone, Debug, Deserialize)]
#[serde(try_from = "ModelSpec")]
pub struct CustomModel(pub Model);

impl TryFrom<ModelSpec> for CustomModel {
    type Error = ModelError;
    fn try_from(s: ModelSpec) -> Result<Self, ModelError> {
        Model::from_parts(&s.name.0, &s.exchange.0, s.alpha, s.correlation.as_ref().map(|c| c.0.as_str())).map(CustomModel)
    }
}

#[derive(Deserialize)]
#[serde(deny_unknown_fields)]
struct ModelsFile {
    models: Vec<CustomModel>,
}

/// Built-in models plus the user's.
#[derive(Clone, Debug, Default)]
pub struct ModelLibrary {
    custom: Vec<Model>,
}

impl ModelLibrary {
    /// The built-in models only.
    pub fn builtin() -> Self {
        ModelLibrary::default()
    }

    /// Adds user-defined models; a name may be defined once.
    pub fn with_custom(mut self, models: Vec<Model>) -> Result<Self, ModelError> {
        for m in models {
            if self.custom.iter().any(|k| k.name == m.name) {
                return Err(ModelError::BadName { name: m.name, why: "defined twice" });
            }
            self.custom.push(m);
        }
        Ok(self)
    }

    /// Reads a models file (YAML with a `models:` list of [`ModelSpec`]) and adds its models.
    pub fn with_file(self, path: &Path) -> Result<Self, ModelFileError> {
        let text = std::fs::read_to_string(path).map_err(|source| ModelFileError::Io { path: path.into(), source })?;
        let invalid = |message: String| ModelFileError::Invalid { path: path.into(), message };
        let file: ModelsFile = serde_yaml::from_str(&text).map_err(|e| invalid(e.to_string()))?;
        self.with_custom(file.models.into_iter().map(|c| c.0).collect()).map_err(|e| invalid(e.to_string()))
    }

    /// The user-defined models.
    pub fn custom(&self) -> &[Model] {
        &self.custom
    }

    /// A model by name: user-defined, built-in, or `xalpha=VALUE`.
    pub fn resolve(&self, name: &str) -> Result<Model, ModelError> {
        if let Some(m) = self.custom.iter().find(|m| m.name.eq_ignore_ascii_case(name.trim())) {
            return Ok(m.clone());
        }
        Model::from_name(name).map_err(|e| match e {
            ModelError::Unknown { name, known } if !self.custom.is_empty() => {
                let mine = self.custom.iter().map(|m| m.name.as_str()).collect::<Vec<_>>().join(", ");
                ModelError::Unknown { name, known: format!("{known}, {mine}") }
            }
            other => other,
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn resolves_every_builtin_name() {
        for &(name, ..) in BUILTIN {
            let m = Model::from_name(name).unwrap_or_else(|e| panic!("{name}: {e}"));
            assert_eq!(m.name, name);
        }
        let m = Model::from_name("lsda").unwrap();
        assert_eq!(m.exchange.id(), "lsda");
        assert_eq!(m.correlation.as_ref().unwrap().id(), "pw92");
        assert_eq!(Model::from_name("blyp").unwrap().family(), Family::Gga);
        assert_eq!(Model::from_name("r2scan-x").unwrap().family(), Family::MetaGga);
        assert!(Model::from_name("lsda-x").unwrap().correlation.is_none());
        assert_eq!(Model::from_name("xalpha=0.75").unwrap().name, "xalpha=0.75");
        assert_eq!(Model::from_name("xalpha=.70").unwrap().name, "xalpha=0.7");
        assert!(matches!(Model::from_name("xalpha=-1"), Err(ModelError::BadAlpha { .. })));
        assert!(matches!(Model::from_name("xalpha=nan"), Err(ModelError::BadAlpha { .. })));
        assert!(matches!(Model::from_name("xalpha=1e308"), Err(ModelError::BadAlpha { .. })));
        assert!(matches!(Model::from_name("xalpha=2.5"), Err(ModelError::BadAlpha { .. })));
        assert_eq!(Model::from_name("xalpha=2").unwrap().name, "xalpha=2");
        // Any case in, the canonical name out.
        assert_eq!(Model::from_name("PBE").unwrap().name, "pbe");
        assert_eq!(Model::from_name("R2SCAN-X").unwrap().name, "r2scan-x");
        assert_eq!(Model::from_name("XAlpha=0.7").unwrap().name, "xalpha=0.7");
        let err = Model::from_name("lsdaa").unwrap_err().to_string();
        assert!(err.contains("unknown model `lsdaa`") && err.contains("r2scan-x"), "{err}");
    }

    #[test]
    fn models_file_defines_pairings_and_reports_positions() {
        let dir = tempfile::tempdir().unwrap();
        let good = dir.path().join("models.yaml");
        std::fs::write(&good, "models:\n  - name: xa-vwn\n    exchange: xalpha\n    alpha: 0.7\n    correlation: vwn5\n  - name: pbe-lyp\n    exchange: pbe\n    correlation: lyp\n").unwrap();
        let lib = ModelLibrary::builtin().with_file(&good).unwrap();
        let m = lib.resolve("xa-vwn").unwrap();
        assert_eq!(m.exchange.id(), "xalpha(0.7)");
        assert_eq!(m.correlation.unwrap().id(), "vwn5");
        assert_eq!(lib.resolve("pbe-lyp").unwrap().family(), Family::Gga);
        assert!(lib.resolve("lsda").is_ok());
        assert!(lib.resolve("nope").unwrap_err().to_string().contains("pbe-lyp"));

        for (text, needle) in [
            ("models:\n  - name: a\n    exchange: b89\n", "unknown exchange functional `b89`"),
            ("models:\n  - name: a\n    exchange: b88\n    alpha: 0.5\n", "`alpha` belongs"),
            ("models:\n  - name: lsda\n    exchange: b88\n", "built-in model name"),
            ("models:\n  - name: a\n    exchange: b88\n    colour: red\n", "unknown field `colour`"),
            ("models:\n  - name: a\n    exchange: b88\n    correlation: pw93\n", "unknown correlation functional"),
            ("models:\n  - name: a\n    exchange: b88\n  - name: a\n    exchange: pbe\n", "defined twice"),
        ] {
            let bad = dir.path().join("bad.yaml");
            std::fs::write(&bad, text).unwrap();
            let err = ModelLibrary::builtin().with_file(&bad).unwrap_err().to_string();
            assert!(err.contains(needle) && err.contains("bad.yaml"), "{err}");
        }
        // Errors found while reading the file carry the YAML position.
        std::fs::write(dir.path().join("pos.yaml"), "models:\n  - name: a\n    exchange: b88\n  - name: b\n    exchange: b89\n").unwrap();
        let err = ModelLibrary::builtin().with_file(&dir.path().join("pos.yaml")).unwrap_err().to_string();
        assert!(err.contains("line 4"), "{err}");
    }
}
