//! Scaffold.
use super::{Family, Functional, Part, XcPoint};

/// LYP correlation (scaffold: to be implemented).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Lyp;

impl Functional for Lyp {
    fn id(&self) -> String {
        "lyp".into()
    }
    fn part(&self) -> Part {
        Part::Correlation
    }
    fn family(&self) -> Family {
        Family::Gga
    }
    fn energy_density(&self, _p: &XcPoint) -> f64 {
        unimplemented!("Lyp")
    }
    fn citation(&self) -> &'static str {
        "TODO"
    }
}
