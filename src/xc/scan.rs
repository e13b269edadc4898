//! Scaffold.
use super::{Family, Functional, Part, XcPoint};

/// SCAN exchange (scaffold: to be implemented).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ScanExchange;

impl Functional for ScanExchange {
    fn id(&self) -> String {
        "scan".into()
    }
    fn part(&self) -> Part {
        Part::Exchange
    }
    fn family(&self) -> Family {
        Family::MetaGga
    }
    fn energy_density(&self, _p: &XcPoint) -> f64 {
        unimplemented!("ScanExchange")
    }
    fn citation(&self) -> &'static str {
        "TODO"
    }
}

/// SCAN correlation (scaffold: to be implemented).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct ScanCorrelation;

impl Functional for ScanCorrelation {
    fn id(&self) -> String {
        "scan".into()
    }
    fn part(&self) -> Part {
        Part::Correlation
    }
    fn family(&self) -> Family {
        Family::MetaGga
    }
    fn energy_density(&self, _p: &XcPoint) -> f64 {
        unimplemented!("ScanCorrelation")
    }
    fn citation(&self) -> &'static str {
        "TODO"
    }
}
