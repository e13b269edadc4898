//! Scaffold.
use super::{Family, Functional, Part, XcPoint};

/// PBE exchange (scaffold: to be implemented).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct PbeExchange;

impl Functional for PbeExchange {
    fn id(&self) -> String {
        "pbe".into()
    }
    fn part(&self) -> Part {
        Part::Exchange
    }
    fn family(&self) -> Family {
        Family::Gga
    }
    fn energy_density(&self, _p: &XcPoint) -> f64 {
        unimplemented!("PbeExchange")
    }
    fn citation(&self) -> &'static str {
        "TODO"
    }
}

/// PBE correlation (scaffold: to be implemented).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct PbeCorrelation;

impl Functional for PbeCorrelation {
    fn id(&self) -> String {
        "pbe".into()
    }
    fn part(&self) -> Part {
        Part::Correlation
    }
    fn family(&self) -> Family {
        Family::Gga
    }
    fn energy_density(&self, _p: &XcPoint) -> f64 {
        unimplemented!("PbeCorrelation")
    }
    fn citation(&self) -> &'static str {
        "TODO"
    }
}
