//! Models: one exchange functional plus an optional correlation functional, under a name.
//!
//! The names here are what `--model` accepts and what reports use as keys. `xalpha=VALUE` builds
//! Xα exchange with any α > 0.

use super::pw92::Pw92;
use super::slater::XAlpha;
use super::{Family, Functional};
use std::fmt;
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

/// A model name that cannot be resolved.
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
    /// `xalpha=` with a value that is not a positive finite number.
    #[error("`{spec}`: α must be a positive number, e.g. xalpha=0.7")]
    BadAlpha {
        /// The full specification given.
        spec: String,
    },
}

/// Names of the built-in models, in listing order.
pub const BUILTIN: &[&str] = &["lsda", "lsda-x", "slater"];

impl Model {
    /// Resolves a model name (`lsda`, `lsda-x`, `slater`, `xalpha=VALUE`).
    pub fn from_name(spec: &str) -> Result<Model, ModelError> {
        let spec = spec.trim();
        if let Some(value) = spec.strip_prefix("xalpha=") {
            let alpha: f64 = value.trim().parse().map_err(|_| ModelError::BadAlpha { spec: spec.into() })?;
            if !(alpha.is_finite() && alpha > 0.0) {
                return Err(ModelError::BadAlpha { spec: spec.into() });
            }
            return Ok(Model {
                name: format!("xalpha={alpha}"),
                exchange: Arc::new(XAlpha { alpha }),
                correlation: None,
                summary: format!("Xα exchange with α = {alpha}, no correlation"),
            });
        }
        let (exchange, correlation, summary): (Arc<dyn Functional>, Option<Arc<dyn Functional>>, &str) = match spec {
            "lsda" => (Arc::new(XAlpha::lsda()), Some(Arc::new(Pw92)), "LSDA exchange (Xα, α = 2/3) + PW92 correlation"),
            "lsda-x" => (Arc::new(XAlpha::lsda()), None, "LSDA exchange only"),
            "slater" => (Arc::new(XAlpha { alpha: 1.0 }), None, "Slater exchange (Xα, α = 1), no correlation"),
            _ => return Err(ModelError::Unknown { name: spec.into(), known: BUILTIN.join(", ") }),
        };
        Ok(Model { name: spec.into(), exchange, correlation, summary: summary.into() })
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

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn resolves_names() {
        let m = Model::from_name("lsda").unwrap();
        assert_eq!(m.exchange.id(), "lsda");
        assert_eq!(m.correlation.as_ref().unwrap().id(), "pw92");
        assert!(Model::from_name("lsda-x").unwrap().correlation.is_none());
        assert_eq!(Model::from_name("xalpha=0.75").unwrap().name, "xalpha=0.75");
        assert_eq!(Model::from_name("xalpha=.70").unwrap().name, "xalpha=0.7");
        assert!(matches!(Model::from_name("xalpha=-1"), Err(ModelError::BadAlpha { .. })));
        assert!(matches!(Model::from_name("xalpha=nan"), Err(ModelError::BadAlpha { .. })));
        let err = Model::from_name("lsdaa").unwrap_err().to_string();
        assert!(err.contains("unknown model `lsdaa`") && err.contains("lsda-x"), "{err}");
    }
}
