//! Scaffold.
use super::{Family, Functional, Part, XcPoint};

/// Becke 1988 exchange (scaffold: to be implemented).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct B88;

impl Functional for B88 {
    fn id(&self) -> String {
        "b88".into()
    }
    fn part(&self) -> Part {
        Part::Exchange
    }
    fn family(&self) -> Family {
        Family::Gga
    }
    fn energy_density(&self, _p: &XcPoint) -> f64 {
        unimplemented!("B88")
    }
    fn citation(&self) -> &'static str {
        "TODO"
    }
}
