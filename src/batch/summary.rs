//! Statistics over a test set: per model, per tag, and the worst orbitals.
//!
//! Only calculations that completed count (a failed one has an incomplete orbital set). Each
//! restricted orbital stands for two spin-orbitals and counts twice, as in the Perdew–Zunger sum.
//!
//! The statistics (mean, median and largest |δ|, mean −E_x/J, per model and per tag) count only
//! orbital records that can be vouched for: error bars computed, no flag, and the bar of J and
//! of every model's δ within the tolerance. The same records count for every model, so that the
//! models are compared on the same orbitals. Every other record is left out under the first
//! [`LeftOut`] reason that applies, and the reports say how many were left out and why:
//!
//! - no finite value (J, an energy or a bar is NaN or infinite): nothing to average;
//! - no error bars (`error_bars: false`): nothing vouches for the numbers;
//! - `kind-suspicious`: the values were read as the wrong kind, so every number belongs to
//!   another density;
//! - an error bar above the tolerance (every `under-resolved` record among them): δ is not
//!   known to the accuracy the set asks for, and on coarse grids it can be off by more than its
//!   own size;
//! - `norm-off`: the density does not hold the orbital's electrons (J scales with the square of
//!   the norm, E_x with its 4/3 power), an error no bar measures;
//! - `truncated-box`: over 1e-3 of the charge lies beyond the box, so δ rests on a first-order
//!   extrapolation of the tail (the bar's box term is that same extrapolation).
//!
//! The worst-orbitals list is a list of records, not a statistic: it ranks every record of the
//! completed calculations and marks each one counted or left out, with the reason.

use super::CalculationResult;
use crate::diagnostics::{Flag, OrbitalReport};

/// Why an orbital record is left out of the set statistics; a record left out for several
/// reasons is counted under the first, in this order.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum LeftOut {
    /// J, some energy or some error bar is not a finite number.
    NotFinite,
    /// No error bars were computed, so nothing vouches for the numbers.
    NoErrorBars,
    /// Flagged `kind-suspicious`: the values were read as the wrong kind.
    KindSuspicious,
    /// The error bar of J or of some model's δ exceeds the tolerance (or the record is flagged
    /// `under-resolved`, which implies it).
    AboveTolerance,
    /// Flagged `norm-off`: the density does not hold the orbital's electrons.
    NormOff,
    /// Flagged `truncated-box`: noticeable charge beyond the box.
    TruncatedBox,
}

impl LeftOut {
    /// Every reason, in the order they are tried.
    pub const ALL: [LeftOut; 6] =
        [LeftOut::NotFinite, LeftOut::NoErrorBars, LeftOut::KindSuspicious, LeftOut::AboveTolerance, LeftOut::NormOff, LeftOut::TruncatedBox];

    /// The name used in JSON: `not-finite`, `no-error-bars`, `kind-suspicious`,
    /// `above-tolerance`, `norm-off`, `truncated-box`.
    pub fn as_str(self) -> &'static str {
        match self {
            LeftOut::NotFinite => "not-finite",
            LeftOut::NoErrorBars => "no-error-bars",
            LeftOut::KindSuspicious => "kind-suspicious",
            LeftOut::AboveTolerance => "above-tolerance",
            LeftOut::NormOff => "norm-off",
            LeftOut::TruncatedBox => "truncated-box",
        }
    }

    /// Why `o` is left out of statistics that ask for error bars within `tolerance` (hartree),
    /// or `None` when it counts.
    pub fn of(o: &OrbitalReport, tolerance: f64) -> Option<LeftOut> {
        let values = std::iter::once(o.hartree).chain(o.models.iter().flat_map(|m| [m.exchange, m.correlation, m.self_interaction, m.cancellation]));
        // The bars the tolerance applies to: J's and each model's δ (those of E_x and E_c are
        // parts of δ's).
        let bars = || o.errors.iter().flat_map(|e| std::iter::once(e.hartree).chain(e.models.iter().map(|m| m.self_interaction)));
        if !values.chain(bars()).all(f64::is_finite) {
            return Some(LeftOut::NotFinite);
        }
        if o.errors.is_none() {
            return Some(LeftOut::NoErrorBars);
        }
        let flagged = |f: Flag| o.flags.contains(&f);
        if flagged(Flag::KindSuspicious) {
            Some(LeftOut::KindSuspicious)
        } else if flagged(Flag::UnderResolved) || bars().any(|b| b > tolerance) {
            Some(LeftOut::AboveTolerance)
        } else if flagged(Flag::NormOff) {
            Some(LeftOut::NormOff)
        } else if flagged(Flag::TruncatedBox) {
            Some(LeftOut::TruncatedBox)
        } else {
            None
        }
    }
}

/// How many records a statistic counts, and how many it leaves out and why.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Coverage {
    /// Orbital records counted.
    pub records: usize,
    /// Spin-orbitals counted (a restricted record is two).
    pub spin_orbitals: u32,
    /// Per reason that occurs, in [`LeftOut`] order: (reason, records, spin-orbitals).
    pub left_out: Vec<(LeftOut, usize, u32)>,
}

impl Coverage {
    /// Tallies `records` against `tolerance` (hartree).
    fn of<'a>(records: impl Iterator<Item = &'a OrbitalReport>, tolerance: f64) -> Self {
        let mut c = Coverage::default();
        let mut out = [(0usize, 0u32); LeftOut::ALL.len()];
        for o in records {
            let w = o.spin.spin_orbitals();
            match LeftOut::of(o, tolerance) {
                None => {
                    c.records += 1;
                    c.spin_orbitals += w;
                }
                Some(r) => {
                    let slot = &mut out[r as usize];
                    slot.0 += 1;
                    slot.1 += w;
                }
            }
        }
        c.left_out = LeftOut::ALL.iter().zip(out).filter(|(_, (n, _))| *n > 0).map(|(&r, (n, w))| (r, n, w)).collect();
        c
    }

    /// Spin-orbitals left out, for every reason together.
    pub fn left_out_spin_orbitals(&self) -> u32 {
        self.left_out.iter().map(|l| l.2).sum()
    }

    /// Spin-orbitals counted and left out.
    pub fn total_spin_orbitals(&self) -> u32 {
        self.spin_orbitals + self.left_out_spin_orbitals()
    }
}

/// One model's |δ| statistics over a set of spin-orbitals.
#[derive(Clone, Debug, PartialEq)]
pub struct ModelStats {
    /// Mean |δ_i|, hartree.
    pub mean_abs: f64,
    /// Median |δ_i|, hartree.
    pub median_abs: f64,
    /// Largest |δ_i|, hartree.
    pub max_abs: f64,
    /// Calculation and orbital label of the largest.
    pub max_at: (String, String),
    /// Mean cancellation ratio −E_x/J.
    pub mean_cancellation: f64,
    /// Spin-orbitals counted.
    pub spin_orbitals: u32,
}

/// Statistics of the calculations carrying one tag.
#[derive(Clone, Debug, PartialEq)]
pub struct TagStats {
    /// The tag.
    pub tag: String,
    /// Completed calculations with the tag.
    pub calculations: usize,
    /// What the statistics count of their records.
    pub coverage: Coverage,
    /// Per model, in model order (`None` when no record of the tag counts).
    pub models: Vec<Option<ModelStats>>,
}

/// One (orbital, model) pair among the worst of the set.
#[derive(Clone, Debug, PartialEq)]
pub struct WorstEntry {
    /// Calculation name.
    pub calculation: String,
    /// The orbital.
    pub orbital: OrbitalReport,
    /// Index of the model.
    pub model: usize,
    /// Why the record is not in the statistics (`None`: it is).
    pub left_out: Option<LeftOut>,
}

impl WorstEntry {
    /// δ of this entry, hartree.
    pub fn self_interaction(&self) -> f64 {
        self.orbital.models[self.model].self_interaction
    }
}

/// Everything the set-wide reports show.
#[derive(Clone, Debug, PartialEq)]
pub struct SetSummary {
    /// Calculations that completed.
    pub completed: usize,
    /// Calculations with a failed file.
    pub failed: usize,
    /// The largest error bar a counted record may carry, hartree.
    pub tolerance: f64,
    /// What the statistics count of the completed calculations' records.
    pub coverage: Coverage,
    /// Per model, in model order (`None` when no record counts).
    pub models: Vec<Option<ModelStats>>,
    /// Per tag, in order of first appearance.
    pub tags: Vec<TagStats>,
    /// Per calculation, in workflow order, what the statistics count of its records (`None`
    /// for a failed calculation: none of its records count).
    pub calculations: Vec<Option<Coverage>>,
    /// The worst (orbital, model) pairs by |δ| among every record of the completed
    /// calculations, counted or not, at most the requested number.
    pub worst: Vec<WorstEntry>,
}

/// Statistics of `model` over the counted orbitals of `calcs`.
fn model_stats<'a>(calcs: impl Iterator<Item = &'a CalculationResult> + Clone, model: usize, tolerance: f64) -> Option<ModelStats> {
    let mut values = Vec::new();
    let mut cancellation = 0.0;
    let mut max: Option<(f64, &str, &str)> = None;
    for c in calcs {
        for o in c.outcome.ranking.orbitals.iter().filter(|o| LeftOut::of(o, tolerance).is_none()) {
            let e = o.models[model];
            let weight = o.spin.spin_orbitals();
            let d = e.self_interaction.abs();
            values.extend(std::iter::repeat_n(d, weight as usize));
            cancellation += weight as f64 * e.cancellation;
            if max.is_none_or(|m| d > m.0) {
                max = Some((d, &c.name, &o.label));
            }
        }
    }
    let (max_abs, calc, label) = max?;
    values.sort_by(f64::total_cmp);
    let n = values.len();
    let median_abs = if n % 2 == 1 { values[n / 2] } else { 0.5 * (values[n / 2 - 1] + values[n / 2]) };
    Some(ModelStats {
        mean_abs: values.iter().sum::<f64>() / n as f64,
        median_abs,
        max_abs,
        max_at: (calc.to_string(), label.to_string()),
        mean_cancellation: cancellation / n as f64,
        spin_orbitals: n as u32,
    })
}

/// The orbital records of `calcs`.
fn records<'a>(calcs: impl Iterator<Item = &'a CalculationResult>) -> impl Iterator<Item = &'a OrbitalReport> {
    calcs.flat_map(|c| &c.outcome.ranking.orbitals)
}

impl SetSummary {
    /// Summarises `results` for `model_count` models, counting records whose error bars are
    /// within `tolerance` (hartree; see the module docs) and listing the `worst` worst pairs.
    pub fn new(results: &[CalculationResult], model_count: usize, worst: usize, tolerance: f64) -> Self {
        let ok = results.iter().filter(|c| c.is_ok());
        let models = (0..model_count).map(|m| model_stats(ok.clone(), m, tolerance)).collect();
        let mut tags: Vec<String> = Vec::new();
        for t in ok.clone().flat_map(|c| &c.tags) {
            if !tags.contains(t) {
                tags.push(t.clone());
            }
        }
        let tags = tags
            .into_iter()
            .map(|tag| {
                let with = ok.clone().filter(|c| c.tags.contains(&tag));
                TagStats {
                    calculations: with.clone().count(),
                    coverage: Coverage::of(records(with.clone()), tolerance),
                    models: (0..model_count).map(|m| model_stats(with.clone(), m, tolerance)).collect(),
                    tag,
                }
            })
            .collect();
        let mut pairs: Vec<WorstEntry> = ok
            .clone()
            .flat_map(|c| {
                c.outcome.ranking.orbitals.iter().flat_map(move |o| {
                    let left_out = LeftOut::of(o, tolerance);
                    (0..model_count).map(move |m| WorstEntry { calculation: c.name.clone(), orbital: o.clone(), model: m, left_out })
                })
            })
            .collect();
        pairs.retain(|w| w.self_interaction().is_finite());
        pairs.sort_by(|a, b| b.self_interaction().abs().total_cmp(&a.self_interaction().abs()));
        pairs.truncate(worst);
        SetSummary {
            completed: ok.clone().count(),
            failed: results.iter().filter(|c| !c.is_ok()).count(),
            tolerance,
            coverage: Coverage::of(records(ok), tolerance),
            models,
            tags,
            calculations: results.iter().map(|c| c.is_ok().then(|| Coverage::of(c.outcome.ranking.orbitals.iter(), tolerance))).collect(),
            worst: pairs,
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::calculation::{FileFailure, Outcome};
    use crate::diagnostics::{ModelEnergies, ModelErrors, OrbitalErrors, Ranking, Spin};

    const TOLERANCE: f64 = 1.6e-3;

    /// A checked, unflagged record with bars of 1e-4 Eh (well within the tolerance).
    fn orbital(label: &str, spin: Spin, delta: [f64; 2]) -> OrbitalReport {
        OrbitalReport {
            source: "x".into(),
            label: label.into(),
            spin,
            occupation: 1.0,
            norm: 1.0,
            hartree: 1.0,
            lsda_exchange: -0.9,
            optimal_alpha: 0.7,
            models: delta
                .iter()
                .map(|&d| ModelEnergies { exchange: d - 1.0, correlation: 0.0, self_interaction: d, cancellation: 1.0 - d })
                .collect(),
            lost_charge: 0.0,
            errors: Some(OrbitalErrors {
                hartree: 1e-4,
                models: vec![ModelErrors { exchange: 1e-4, correlation: 0.0, self_interaction: 1e-4 }; 2],
            }),
            flags: Vec::new(),
            cusp_correction: None,
            tail_correction: None,
            energy: None,
            set: Default::default(),
            input: None,
            kind: None,
            kind_origin: None,
        }
    }

    fn calc(name: &str, tags: &[&str], orbitals: Vec<OrbitalReport>, failed: bool) -> CalculationResult {
        let failures = if failed { vec![FileFailure { source: "bad".into(), error: "bad: broken".into() }] } else { vec![] };
        CalculationResult {
            name: name.into(),
            tags: tags.iter().map(|t| t.to_string()).collect(),
            outcome: Outcome { ranking: Ranking::new(orbitals, 0), failures, localization: Vec::new(), duplicates: Vec::new() },
            density: None,
        }
    }

    #[test]
    fn statistics_weight_restricted_orbitals_and_skip_failed_calculations() {
        let results = vec![
            calc("a", &["ion"], vec![orbital("a1", Spin::Restricted, [0.1, -0.4]), orbital("a2", Spin::Restricted, [-0.3, 0.2])], false),
            calc("b", &["radical", "ion"], vec![orbital("b1", Spin::Alpha, [0.5, 0.0])], false),
            calc("c", &["ion"], vec![orbital("c1", Spin::Alpha, [9.0, 9.0])], true),
        ];
        let s = SetSummary::new(&results, 2, 3, TOLERANCE);
        assert_eq!((s.completed, s.failed), (2, 1));
        let m0 = s.models[0].as_ref().unwrap();
        // |δ| over spin-orbitals: 0.1, 0.1, 0.3, 0.3, 0.5.
        assert_eq!(m0.spin_orbitals, 5);
        assert!((m0.mean_abs - 1.3 / 5.0).abs() < 1e-15);
        assert_eq!(m0.median_abs, 0.3);
        assert_eq!((m0.max_abs, m0.max_at.0.as_str(), m0.max_at.1.as_str()), (0.5, "b", "b1"));
        assert!((m0.mean_cancellation - (1.0 - (0.2 - 0.6 + 0.5) / 5.0)).abs() < 1e-15);
        assert_eq!(s.tags.iter().map(|t| (t.tag.as_str(), t.calculations)).collect::<Vec<_>>(), [("ion", 2), ("radical", 1)]);
        // Worst pairs across models, failed calculation excluded.
        let worst: Vec<_> = s.worst.iter().map(|w| (w.orbital.label.as_str(), w.model)).collect();
        assert_eq!(worst, [("b1", 0), ("a1", 1), ("a2", 0)]);
    }

    /// `o` with the bar of δ under the second model set to `bar` and the given flags.
    fn with(mut o: OrbitalReport, bar: f64, flags: &[Flag]) -> OrbitalReport {
        o.errors.as_mut().unwrap().models[1].self_interaction = bar;
        o.flags = flags.to_vec();
        o
    }

    #[test]
    fn each_left_out_record_gets_the_first_reason_that_applies() {
        use Flag::*;
        let ok = orbital("ok", Spin::Alpha, [0.1, 0.2]);
        let reason = |o: &OrbitalReport| LeftOut::of(o, TOLERANCE);
        assert_eq!(reason(&ok), None);
        // A bar exactly at the tolerance is within it.
        assert_eq!(reason(&with(ok.clone(), TOLERANCE, &[])), None);
        assert_eq!(reason(&with(ok.clone(), 1.7e-3, &[])), Some(LeftOut::AboveTolerance), "a bar above it, unflagged");
        assert_eq!(reason(&with(ok.clone(), 1e-4, &[UnderResolved])), Some(LeftOut::AboveTolerance));
        assert_eq!(reason(&with(ok.clone(), 0.5, &[UnderResolved, NormOff])), Some(LeftOut::AboveTolerance), "the bar first");
        assert_eq!(reason(&with(ok.clone(), 1e-4, &[NormOff, TruncatedBox])), Some(LeftOut::NormOff));
        assert_eq!(reason(&with(ok.clone(), 1e-4, &[TruncatedBox])), Some(LeftOut::TruncatedBox));
        assert_eq!(reason(&with(ok.clone(), 0.5, &[KindSuspicious, UnderResolved])), Some(LeftOut::KindSuspicious));
        let mut unchecked = with(ok.clone(), 1e-4, &[]);
        unchecked.errors = None;
        assert_eq!(reason(&unchecked), Some(LeftOut::NoErrorBars));
        let mut nan = unchecked.clone();
        nan.models[0].self_interaction = f64::NAN;
        assert_eq!(reason(&nan), Some(LeftOut::NotFinite), "before anything else");
        assert_eq!(reason(&with(ok, f64::INFINITY, &[])), Some(LeftOut::NotFinite));
    }

    #[test]
    fn statistics_count_only_trustworthy_records_and_say_what_they_left_out() {
        use Flag::*;
        let results = vec![
            calc(
                "a",
                &["ion"],
                vec![
                    with(orbital("core", Spin::Restricted, [0.9, 0.8]), 0.6, &[UnderResolved, NormOff]),
                    orbital("a2", Spin::Restricted, [-0.3, 0.2]),
                    with(orbital("a3", Spin::Alpha, [0.05, 0.04]), 1e-4, &[TruncatedBox]),
                ],
                false,
            ),
            calc("b", &["radical"], vec![with(orbital("b1", Spin::Alpha, [0.5, 0.0]), 2e-3, &[])], false),
        ];
        let s = SetSummary::new(&results, 2, 20, TOLERANCE);
        // Counted: a2 only (two spin-orbitals); the same records for both models.
        assert_eq!((s.coverage.records, s.coverage.spin_orbitals), (1, 2));
        assert_eq!(s.coverage.left_out, [(LeftOut::AboveTolerance, 2, 3), (LeftOut::TruncatedBox, 1, 1)]);
        assert_eq!(s.coverage.total_spin_orbitals(), 6);
        for (m, d) in [(0, 0.3), (1, 0.2)] {
            let st = s.models[m].as_ref().unwrap();
            assert_eq!((st.spin_orbitals, st.mean_abs, st.median_abs, st.max_abs), (2, d, d, d), "model {m}");
            assert_eq!(st.max_at, ("a".to_string(), "a2".to_string()));
        }
        // The radical tag has nothing left to compare; its record's reason is stated.
        let radical = &s.tags[1];
        assert_eq!(radical.models, [None, None]);
        assert_eq!((radical.coverage.spin_orbitals, radical.coverage.left_out.clone()), (0, vec![(LeftOut::AboveTolerance, 1, 1)]));
        assert_eq!(s.calculations.iter().map(|c| c.as_ref().unwrap().spin_orbitals).collect::<Vec<_>>(), [2, 0]);
        // The worst list keeps every record, each marked.
        assert_eq!(s.worst.len(), 8);
        assert_eq!((s.worst[0].orbital.label.as_str(), s.worst[0].left_out), ("core", Some(LeftOut::AboveTolerance)));
        assert!(s.worst.iter().all(|w| (w.left_out.is_none()) == (w.orbital.label == "a2")));
    }

    #[test]
    fn a_set_with_nothing_trustworthy_has_no_statistics() {
        let results = vec![calc("a", &["ion"], vec![with(orbital("a1", Spin::Restricted, [0.1, 0.2]), 0.01, &[Flag::UnderResolved])], false)];
        let s = SetSummary::new(&results, 2, 5, TOLERANCE);
        assert_eq!(s.models, [None, None]);
        assert_eq!(s.coverage, Coverage { records: 0, spin_orbitals: 0, left_out: vec![(LeftOut::AboveTolerance, 1, 2)] });
        assert_eq!(s.worst.len(), 2, "the records are still listed");
    }
}
