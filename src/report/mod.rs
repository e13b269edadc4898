//! Reports of a ranked calculation: a terminal table, Markdown, CSV and JSON; of a batch, also
//! a self-contained HTML page ([`html`]).
//!
//! JSON and CSV are for programs and always carry hartree; the table and Markdown are for people
//! and use the chosen [`EnergyUnit`]. The JSON layout is documented in the README and kept
//! stable; see [`json`].

pub mod atomic;
pub mod batch;
pub mod csv;
pub mod html;
pub mod json;
pub mod set;
pub mod text;

pub use atomic::write_atomic;

use crate::calculation::Outcome;
use crate::diagnostics::OrbitalReport;
use crate::xc::Model;
use std::str::FromStr;

/// Energy units for human-readable reports.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Default)]
pub enum EnergyUnit {
    /// Hartree, Eh.
    Hartree,
    /// Millihartree, mEh.
    #[default]
    Millihartree,
    /// Electronvolt.
    ElectronVolt,
    /// Kilocalorie per mole.
    KcalPerMol,
    /// Kilojoule per mole.
    KjPerMol,
}

impl EnergyUnit {
    /// All units, in listing order.
    pub const ALL: [EnergyUnit; 5] = [
        EnergyUnit::Hartree,
        EnergyUnit::Millihartree,
        EnergyUnit::ElectronVolt,
        EnergyUnit::KcalPerMol,
        EnergyUnit::KjPerMol,
    ];

    /// Value of one hartree in this unit (CODATA 2018 conversion factors; common practice).
    pub fn per_hartree(self) -> f64 {
        match self {
            EnergyUnit::Hartree => 1.0,
            EnergyUnit::Millihartree => 1e3,
            EnergyUnit::ElectronVolt => 27.211_386_245_988,
            EnergyUnit::KcalPerMol => 627.509_474_063_1,
            EnergyUnit::KjPerMol => 2_625.499_639_479_9,
        }
    }

    /// Symbol for headers.
    pub fn symbol(self) -> &'static str {
        match self {
            EnergyUnit::Hartree => "Eh",
            EnergyUnit::Millihartree => "mEh",
            EnergyUnit::ElectronVolt => "eV",
            EnergyUnit::KcalPerMol => "kcal/mol",
            EnergyUnit::KjPerMol => "kJ/mol",
        }
    }

    /// Name accepted on the command line.
    pub fn name(self) -> &'static str {
        match self {
            EnergyUnit::Hartree => "hartree",
            EnergyUnit::Millihartree => "millihartree",
            EnergyUnit::ElectronVolt => "ev",
            EnergyUnit::KcalPerMol => "kcal/mol",
            EnergyUnit::KjPerMol => "kj/mol",
        }
    }

    /// Decimals that resolve about 1 µEh.
    fn decimals(self) -> usize {
        match self {
            EnergyUnit::Hartree => 6,
            EnergyUnit::Millihartree => 3,
            EnergyUnit::ElectronVolt => 5,
            EnergyUnit::KcalPerMol | EnergyUnit::KjPerMol => 3,
        }
    }

    /// `hartree` converted and printed with this unit's decimals (no symbol); values that round
    /// to zero print without a sign.
    pub fn format(self, hartree: f64) -> String {
        let s = format!("{:.*}", self.decimals(), hartree * self.per_hartree());
        match s.strip_prefix('-') {
            Some(rest) if rest.bytes().all(|b| b == b'0' || b == b'.') => rest.to_string(),
            _ => s,
        }
    }
}

impl EnergyUnit {
    /// `value ± error` in this unit, or the value alone without an error bar.
    pub fn format_with_error(self, value: f64, error: Option<f64>) -> String {
        match error {
            Some(e) => format!("{} ± {}", self.format(value), self.format(e)),
            None => self.format(value),
        }
    }
}

/// The orbital's flags for people: `ok`, the reasons not to trust it, or `unchecked` when no
/// error bars were computed.
pub fn flags_text(o: &OrbitalReport) -> String {
    if o.errors.is_none() {
        "unchecked".into()
    } else if o.flags.is_empty() {
        "ok".into()
    } else {
        o.flags.iter().map(|f| f.as_str()).collect::<Vec<_>>().join(", ")
    }
}

/// A warning with its fix for an orbital whose values clearly look like the other kind than the
/// one given (the `kind-suspicious` flag), with the integrals that say so.
pub fn kind_warning(o: &OrbitalReport) -> Option<String> {
    use crate::diagnostics::{Flag, Kind};
    if !o.flags.contains(&Flag::KindSuspicious) {
        return None;
    }
    let kind = o.kind.unwrap_or_default();
    let other = match kind {
        Kind::Amplitude => Kind::Density,
        Kind::Density => Kind::Amplitude,
    };
    let seen = o.kind_origin.as_ref().and_then(|k| k.evidence).map_or(String::new(), |e| {
        let sign = if e.negative_share > crate::input::NEGATIVE_SHARE { ", changing sign" } else { ", never negative" };
        format!(" (∫v dV = {:.4}, ∫v² dV = {:.4}{sign})", e.integral, e.square_integral)
    });
    Some(format!(
        "{} ({}): read as {} values, but they look like {} values{seen}; read it with --kind {}, or leave --kind out to decide from the values",
        o.label,
        o.source,
        kind.as_str(),
        other.as_str(),
        other.as_str()
    ))
}

impl FromStr for EnergyUnit {
    type Err = String;
    fn from_str(s: &str) -> Result<Self, String> {
        let key = s.trim().to_ascii_lowercase();
        EnergyUnit::ALL
            .into_iter()
            .find(|u| u.name() == key || u.symbol().to_ascii_lowercase() == key)
            .ok_or_else(|| {
                let names = EnergyUnit::ALL.map(|u| u.name()).join(", ");
                format!("unknown energy unit `{s}`; expected one of {names}")
            })
    }
}

/// What a report shows: a ranked calculation and its models.
#[derive(Clone, Copy, Debug)]
pub struct Report<'a> {
    /// The models, in the order of each orbital's model entries.
    pub models: &'a [Model],
    /// The ranked calculation.
    pub outcome: &'a Outcome,
    /// Show only the first `top` orbitals of the ranking (totals still cover all).
    pub top: Option<usize>,
}

impl Report<'_> {
    /// The orbitals shown, worst first.
    pub fn shown(&self) -> &[OrbitalReport] {
        let all = &self.outcome.ranking.orbitals;
        &all[..self.top.unwrap_or(all.len()).min(all.len())]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn units_parse_and_convert() {
        assert_eq!("mEh".parse::<EnergyUnit>(), Ok(EnergyUnit::Millihartree));
        assert_eq!("kcal/mol".parse::<EnergyUnit>(), Ok(EnergyUnit::KcalPerMol));
        assert_eq!("EV".parse::<EnergyUnit>(), Ok(EnergyUnit::ElectronVolt));
        assert!("joule".parse::<EnergyUnit>().unwrap_err().contains("millihartree"));
        assert_eq!(EnergyUnit::Millihartree.format(-0.0123456), "-12.346");
        assert_eq!(EnergyUnit::Millihartree.format(-1e-9), "0.000");
    }
}
