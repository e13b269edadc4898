//! Scaffold.
use super::{Family, Functional, Part, XcPoint};

/// PW91 exchange (scaffold: to be implemented).
#[derive(Clone, Copy, Debug, Default, PartialEq)]
pub struct Pw91Exchange;

impl Functional for Pw91Exchange {
    fn id(&self) -> String {
        "pw91".into()
    }
    fn part(&self) -> Part {
        Part::Exchange
    }
    fn family(&self) -> Family {
        Family::Gga
    }
    fn energy_density(&self, _p: &XcPoint) -> f64 {
        unimplemented!("Pw91Exchange")
    }
    fn citation(&self) -> &'static str {
        "TODO"
    }
}
