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
    /// to zero print without a sign; a value that is not finite prints as [`INVALID`].
    pub fn format(self, hartree: f64) -> String {
        if !hartree.is_finite() {
            return INVALID.into();
        }
        let s = format!("{:.*}", self.decimals(), hartree * self.per_hartree());
        match s.strip_prefix('-') {
            Some(rest) if rest.bytes().all(|b| b == b'0' || b == b'.') => rest.to_string(),
            _ => s,
        }
    }
}

impl EnergyUnit {
    /// `value ± error` in this unit, or the value alone without an error bar (or when it is not
    /// a result).
    pub fn format_with_error(self, value: f64, error: Option<f64>) -> String {
        match error.filter(|_| value.is_finite()) {
            Some(e) => format!("{} ± {}", self.format(value), self.format(e)),
            None => self.format(value),
        }
    }
}

/// What tables show in place of a number that is not finite (it is no result).
pub const INVALID: &str = "invalid";

/// What tables show in place of a total that is withheld (see [`crate::diagnostics::Ranking`]).
pub const INCOMPLETE: &str = "incomplete";

/// `value` with `decimals` decimals, or [`INVALID`] when it is not finite.
pub fn fixed(value: f64, decimals: usize) -> String {
    if value.is_finite() { format!("{value:.decimals$}") } else { INVALID.into() }
}

/// The orbital's flags for people: `ok`, the reasons not to trust it, or `unchecked` when no
/// error bars were computed (before any flag the record has all the same).
pub fn flags_text(o: &OrbitalReport) -> String {
    let unchecked = o.errors.is_none().then_some("unchecked");
    match (unchecked, o.flags.is_empty()) {
        (Some(u), true) => u.into(),
        (None, true) => "ok".into(),
        (u, false) => u.into_iter().chain(o.flags.iter().map(|f| f.as_str())).collect::<Vec<_>>().join(", "),
    }
}

/// One line per orbital record with numbers that are not finite: which, as in the JSON report,
/// and that the record is ranked last and kept out of the totals; for standard error.
pub fn non_finite_warnings(report: &Report) -> Vec<String> {
    let names: Vec<&str> = report.models.iter().map(|m| m.name.as_str()).collect();
    report
        .outcome
        .ranking
        .orbitals
        .iter()
        .filter_map(|o| {
            let bad = o.non_finite();
            let list = bad.iter().map(|(q, v)| format!("{} = {v}", q.path(&names))).collect::<Vec<_>>();
            (!bad.is_empty()).then(|| {
                format!(
                    "{} ({}): not a finite number, hence no result: {}; the record is flagged not-finite and left out of the totals",
                    o.label,
                    o.source,
                    list.join(", ")
                )
            })
        })
        .collect()
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

    #[test]
    fn numbers_that_are_not_finite_and_withheld_totals_are_never_shown_as_numbers() {
        use crate::calculation::{DuplicateFile, FileFailure, Outcome};
        use crate::diagnostics::{Engine, EngineParams, GridOrbital, Kind, Ranking};
        use crate::grid::GridGeometry;
        let models = vec![Model::from_name("lsda").unwrap(), Model::from_name("slater").unwrap()];
        let engine = Engine::new(models.clone(), EngineParams::default());
        let h = 0.3;
        let geometry = GridGeometry::around([[h, 0.0, 0.0], [0.0, h, 0.0], [0.0, 0.0, h]], [0.0; 3], 5.0).unwrap();
        // A normalised Gaussian amplitude (invented data); the second copy gets a NaN J and δ, as
        // a path without its own guard could hand over.
        let gaussian = |label: &str| GridOrbital::sampled(label, geometry.clone(), Vec::new(), Kind::Amplitude, |r| {
            std::f64::consts::PI.powf(-0.75) * (-0.5 * (r[0] * r[0] + r[1] * r[1] + r[2] * r[2])).exp()
        });
        let good = engine.analyse(&gaussian("good"), crate::par::Parallelism::Rayon).unwrap();
        let mut bad = engine.analyse(&gaussian("bad"), crate::par::Parallelism::Rayon).unwrap();
        bad.hartree = f64::NAN;
        bad.optimal_alpha = f64::NAN;
        for m in &mut bad.models {
            m.self_interaction = f64::NAN;
            m.cancellation = f64::NAN;
        }
        let mut ranking = Ranking::new(vec![bad, good], 0);
        assert_eq!(ranking.orbitals[1].label, "bad");
        let complete = Outcome { ranking: ranking.clone(), failures: Vec::new(), localization: Vec::new(), duplicates: Vec::new() };
        ranking.withhold_totals("1 of 3 files failed");
        let failure = FileFailure { source: "c.cube".into(), error: "c.cube:4: broken".into() };
        let copy = DuplicateFile { source: "b.cube".into(), same_as: "a.cube".into() };
        let incomplete = Outcome { ranking, failures: vec![failure], localization: Vec::new(), duplicates: vec![copy] };

        let v = json::to_value(&Report { models: &models, outcome: &complete, top: None });
        let bad = &v["orbitals"][1];
        assert!(bad["hartree"].is_null() && bad["flags"] == serde_json::json!(["not-finite"]), "{bad}");
        let quantities: Vec<&str> = bad["invalid"].as_array().unwrap().iter().map(|i| i["quantity"].as_str().unwrap()).collect();
        assert_eq!(
            quantities,
            ["hartree", "optimal_alpha", "models.lsda.self_interaction", "models.lsda.cancellation", "models.slater.self_interaction", "models.slater.cancellation"]
        );
        assert_eq!(bad["invalid"][0]["reason"], "not a finite number (NaN)");
        assert!(v["orbitals"][0].get("invalid").is_none() && v.get("duplicates").is_none());
        assert!(v["totals"]["lsda"]["perdew_zunger"].is_null());
        assert_eq!(v["totals"]["lsda"]["invalid"][1]["reason"], "incomplete: 1 of 2 orbital records without a finite δ under this model");

        let v = json::to_value(&Report { models: &models, outcome: &incomplete, top: None });
        let reason = "incomplete: 1 of 3 files failed; 1 of 2 orbital records without a finite δ under this model";
        assert_eq!(v["totals"]["slater"]["invalid"][0], serde_json::json!({"quantity": "perdew_zunger", "reason": reason}));
        assert_eq!(v["duplicates"], serde_json::json!([{"source": "b.cube", "same_as": "a.cube"}]));

        let r = Report { models: &models, outcome: &incomplete, top: None };
        let (table, markdown, csv) = (text::render_table(&r, EnergyUnit::Millihartree), text::render_markdown(&r, EnergyUnit::Hartree), csv::render(&r));
        for t in [&table, &markdown, &csv] {
            assert!(!t.split([' ', ',', '|']).any(|w| w == "NaN" || w.ends_with("inf")), "{t}");
        }
        let bad_row = table.lines().find(|l| l.contains(" bad ")).unwrap();
        assert!(bad_row.contains(INVALID) && bad_row.ends_with("not-finite"), "{bad_row}");
        assert!(table.contains(&format!("no total for lsda, slater: {reason}")), "{table}");
        assert!(table.contains("b.cube: same content as a.cube; analysed once"), "{table}");
        assert!(markdown.contains("| lsda | lsda | pw92 | incomplete | incomplete |"), "{markdown}");
        assert!(markdown.contains("- `b.cube`: same content as `a.cube`; analysed once"), "{markdown}");
        // CSV: empty cells where the numbers are not finite, and the flag.
        let row = csv.lines().find(|l| l.contains(",bad,") && l.contains(",lsda,")).unwrap();
        let cells: Vec<&str> = row.split(',').collect();
        let at = |name: &str| cells[csv::COLUMNS.iter().position(|c| *c == name).unwrap()];
        assert_eq!((at("hartree"), at("self_interaction"), at("flags")), ("", "", "not-finite"));
        assert!(!at("exchange").is_empty() && !at("hartree_error").is_empty());
    }
}
