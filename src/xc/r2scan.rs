//! Scaffold.
use super::{Family, Functional, Part, XcPoint};

/// r2SCAN exchange (scaffold: to be implemented).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct R2scanExchange;

impl Functional for R2scanExchange {
    fn id(&self) -> String {
        "r2scan".into()
    }
    fn part(&self) -> Part {
        Part::Exchange
    }
    fn family(&self) -> Family {
        Family::MetaGga
    }
    fn energy_density(&self, _p: &XcPoint) -> f64 {
        unimplemented!("R2scanExchange")
    }
    fn citation(&self) -> &'static str {
        "TODO"
    }
}

/// r2SCAN correlation (scaffold: to be implemented).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct R2scanCorrelation;

impl Functional for R2scanCorrelation {
    fn id(&self) -> String {
        "r2scan".into()
    }
    fn part(&self) -> Part {
        Part::Correlation
    }
    fn family(&self) -> Family {
        Family::MetaGga
    }
    fn energy_density(&self, _p: &XcPoint) -> f64 {
        unimplemented!("R2scanCorrelation")
    }
    fn citation(&self) -> &'static str {
        "TODO"
    }
}
