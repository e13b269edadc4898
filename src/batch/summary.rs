//! Statistics over a test set: per model, per tag, and the worst orbitals.
//!
//! Only calculations that completed count (a failed one has an incomplete orbital set), and of
//! their records, under each model, only those whose δ and −E_x/J are finite numbers (others are
//! flagged `not-finite`). Each restricted orbital stands for two spin-orbitals and counts twice,
//! as in the Perdew–Zunger sum.

use super::CalculationResult;
use crate::diagnostics::OrbitalReport;

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
    /// Per model, in model order (`None` when no spin-orbital carries the tag).
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
    /// Per model, in model order (`None` when nothing completed).
    pub models: Vec<Option<ModelStats>>,
    /// Per tag, in order of first appearance.
    pub tags: Vec<TagStats>,
    /// The worst (orbital, model) pairs by |δ|, at most the requested number.
    pub worst: Vec<WorstEntry>,
}

/// Statistics of `model` over the orbitals of `calcs`.
fn model_stats<'a>(calcs: impl Iterator<Item = &'a CalculationResult> + Clone, model: usize) -> Option<ModelStats> {
    let mut values = Vec::new();
    let mut cancellation = 0.0;
    let mut max: Option<(f64, &str, &str)> = None;
    for c in calcs {
        for o in &c.outcome.ranking.orbitals {
            let e = o.models[model];
            if !(e.self_interaction.is_finite() && e.cancellation.is_finite()) {
                continue;
            }
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

impl SetSummary {
    /// Summarises `results` for `model_count` models, listing the `worst` worst pairs.
    pub fn new(results: &[CalculationResult], model_count: usize, worst: usize) -> Self {
        let ok = results.iter().filter(|c| c.is_ok());
        let models = (0..model_count).map(|m| model_stats(ok.clone(), m)).collect();
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
                    models: (0..model_count).map(|m| model_stats(with.clone(), m)).collect(),
                    tag,
                }
            })
            .collect();
        let mut pairs: Vec<WorstEntry> = ok
            .clone()
            .flat_map(|c| {
                c.outcome.ranking.orbitals.iter().flat_map(move |o| {
                    (0..model_count).map(move |m| WorstEntry { calculation: c.name.clone(), orbital: o.clone(), model: m })
                })
            })
            .collect();
        pairs.retain(|w| w.self_interaction().is_finite());
        pairs.sort_by(|a, b| b.self_interaction().abs().total_cmp(&a.self_interaction().abs()));
        pairs.truncate(worst);
        SetSummary { completed: ok.count(), failed: results.iter().filter(|c| !c.is_ok()).count(), models, tags, worst: pairs }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::calculation::{FileFailure, Outcome};
    use crate::diagnostics::{ModelEnergies, Ranking, Spin};

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
            errors: None,
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
        let s = SetSummary::new(&results, 2, 3);
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

    #[test]
    fn records_without_a_finite_delta_are_left_out_under_that_model() {
        let results = vec![calc(
            "a",
            &[],
            vec![orbital("a1", Spin::Alpha, [0.1, f64::NAN]), orbital("a2", Spin::Alpha, [-0.3, 0.2]), orbital("a3", Spin::Alpha, [0.2, f64::INFINITY])],
            false,
        )];
        let s = SetSummary::new(&results, 2, 10);
        let [m0, m1] = [0, 1].map(|m| s.models[m].clone().unwrap());
        assert_eq!((m0.spin_orbitals, m1.spin_orbitals), (3, 1));
        assert_eq!((m1.mean_abs, m1.median_abs, m1.max_abs, m1.max_at.1.as_str()), (0.2, 0.2, 0.2, "a2"));
        assert!(m1.mean_cancellation.is_finite());
        assert_eq!(s.worst.len(), 4);
        assert!(s.worst.iter().all(|w| w.self_interaction().is_finite()));
    }
}
