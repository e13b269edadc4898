//! Scaffold.
use super::{Family, Functional, Part, XcPoint};

/// VWN5 correlation (scaffold: to be implemented).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Vwn5;

impl Functional for Vwn5 {
    fn id(&self) -> String {
        "vwn5".into()
    }
    fn part(&self) -> Part {
        Part::Correlation
    }
    fn family(&self) -> Family {
        Family::Lda
    }
    fn energy_density(&self, _p: &XcPoint) -> f64 {
        unimplemented!("Vwn5")
    }
    fn citation(&self) -> &'static str {
        "TODO"
    }
}
