//! The charts plot what `report.json` says; the page holds every chart and table, escapes what
//! users named, and fetches nothing.

use super::chart::{self, DeltaPoint};
use super::*;
use crate::batch::summary::SetSummary;
use crate::batch::workflow::ReportSettings;
use crate::batch::{CalculationResult, ReportFormat};
use crate::calculation::{FileFailure, Outcome};
use crate::diagnostics::{Flag, ModelEnergies, ModelErrors, OrbitalErrors, Ranking, Spin};
use crate::report::batch::to_value;
use crate::trust::TrustParams;
use crate::xc::Model;
use serde_json::Value;
use std::path::PathBuf;

/// An orbital with J and, per model, (E_x, E_c); δ and the ratio follow from them.
fn orbital(label: &str, spin: Spin, hartree: f64, models: &[(f64, f64)], errors: Option<f64>, flags: &[Flag]) -> OrbitalReport {
    OrbitalReport {
        source: format!("{label}.cube"),
        label: label.into(),
        spin,
        occupation: 1.0,
        norm: 0.99,
        hartree,
        lsda_exchange: models[0].0,
        optimal_alpha: 2.0 / 3.0 * hartree / -models[0].0,
        models: models
            .iter()
            .map(|&(x, c)| ModelEnergies { exchange: x, correlation: c, self_interaction: hartree + x + c, cancellation: -x / hartree })
            .collect(),
        lost_charge: 1e-6,
        // Bars that differ per model and quantity, so that a mix-up shows.
        errors: errors.map(|e| OrbitalErrors {
            hartree: e,
            models: (0..models.len())
                .map(|m| ModelErrors { exchange: 0.7 * e + 1e-5 * m as f64, correlation: 0.1 * e, self_interaction: 1.3 * e + 2e-5 * m as f64 })
                .collect(),
        }),
        flags: flags.to_vec(),
        cusp_correction: None,
        tail_correction: None,
        energy: None,
            set: Default::default(),
            input: None,
        kind: None,
        kind_origin: None,
    }
}

fn calc(name: &str, tags: &[&str], orbitals: Vec<OrbitalReport>, failures: &[(&str, &str)]) -> CalculationResult {
    CalculationResult {
        name: name.into(),
        tags: tags.iter().map(|t| t.to_string()).collect(),
        outcome: Outcome {
            ranking: Ranking::new(orbitals, 0),
            failures: failures.iter().map(|(s, e)| FileFailure { source: s.to_string(), error: e.to_string() }).collect(),
            localization: Vec::new(),
            duplicates: Vec::new(),
        },
        density: None,
    }
}

fn workflow(models: &[&str]) -> Workflow {
    Workflow {
        path: PathBuf::from("/sets/survey.yaml"),
        calculations: Vec::new(),
        models: models.iter().map(|n| Model::from_name(n).unwrap()).collect(),
        rank_by: 0,
        report: ReportSettings {
            dir: PathBuf::from("/sets/out"),
            formats: vec![ReportFormat::Html],
            units: EnergyUnit::Millihartree,
            worst: 4,
            date: None,
        },
        threads: None,
        cache: false,
        trust: TrustParams::default(),
        cusp_correction: true,
        tail_correction: false,
        memory: None,
    }
}

/// Three calculations (one failed, one with a restricted and an unflagged orbital, one
/// without error bars) under three models.
fn results() -> Vec<CalculationResult> {
    use Flag::*;
    vec![
        calc(
            "water <b>&\"x\"",
            &["neutral"],
            vec![
                orbital("core", Spin::Restricted, 2.48, &[(-2.10, -0.05), (-2.30, -0.04), (-2.26, 0.0)], Some(0.42), &[UnderResolved, NormOff]),
                orbital("lone", Spin::Restricted, 0.37, &[(-0.33, -0.02), (-0.39, -0.01), (-0.36, 0.0)], Some(0.0008), &[]),
                orbital("bond", Spin::Restricted, 0.33, &[(-0.31, -0.03), (-0.36, -0.02), (-0.34, 0.0)], Some(0.0009), &[]),
            ],
            &[],
        ),
        calc(
            "radical",
            &["neutral", "open"],
            vec![
                orbital("a1", Spin::Alpha, 0.40, &[(-0.35, -0.02), (-0.43, -0.02), (-0.41, 0.0)], None, &[]),
                orbital("b1", Spin::Beta, 0.39, &[(-0.36, -0.01), (-0.42, -0.01), (-0.38, 0.0)], None, &[]),
            ],
            &[],
        ),
        calc(
            "anion",
            &["charged"],
            vec![orbital("o1", Spin::Restricted, 0.80, &[(-0.70, -0.03), (-0.79, -0.02), (-0.74, 0.0)], Some(0.009), &[UnderResolved])],
            &[("anion/o2.cube", "anion/o2.cube:9: expected a number, found \"x\"")],
        ),
    ]
}

fn models_of(v: &Value) -> Vec<String> {
    v["models"].as_array().unwrap().iter().map(|m| m["name"].as_str().unwrap().to_string()).collect()
}

fn ok_calculations(v: &Value) -> impl Iterator<Item = &Value> {
    v["calculations"].as_array().unwrap().iter().filter(|c| c["status"] == "ok")
}

/// Whether a record of the JSON report qualifies for the set statistics (checked, unflagged,
/// every bar within the tolerance), decided here from the JSON alone.
fn counted(o: &Value, tolerance: f64) -> bool {
    let e = &o["errors"];
    !e.is_null()
        && o["flags"].as_array().unwrap().is_empty()
        && e["hartree"].as_f64().unwrap() <= tolerance
        && e["models"].as_object().unwrap().values().all(|m| m["self_interaction"].as_f64().unwrap() <= tolerance)
}

/// The counted records of the completed calculations, with their calculation.
fn counted_records(v: &Value) -> impl Iterator<Item = (&Value, &Value)> {
    let tolerance = v["summary"]["tolerance"].as_f64().unwrap();
    ok_calculations(v).flat_map(move |c| c["orbitals"].as_array().unwrap().iter().filter(move |o| counted(o, tolerance)).map(move |o| (c, o)))
}

fn opt(v: &Value) -> Option<f64> {
    v.as_f64()
}

/// Weighted median |δ| of plotted points, computed here independently of the set statistics.
fn weighted_median_abs(points: &[DeltaPoint]) -> f64 {
    let mut values: Vec<f64> = points.iter().flat_map(|p| std::iter::repeat_n(p.self_interaction.abs(), p.weight as usize)).collect();
    values.sort_by(f64::total_cmp);
    let n = values.len();
    if n % 2 == 1 { values[n / 2] } else { 0.5 * (values[n / 2 - 1] + values[n / 2]) }
}

#[test]
fn chart_data_is_what_the_json_report_says() {
    let wf = workflow(&["lsda", "pbe", "xalpha=0.75"]);
    let results = results();
    let summary = SetSummary::new(&results, wf.models.len(), wf.report.worst, wf.trust.tolerance);
    let report = BatchReport { workflow: &wf, results: &results, summary: &summary };
    let v = to_value(&report);
    let names = models_of(&v);

    // δ distribution: every counted orbital of the completed calculations, per model, with its
    // bar: the records the statistics count.
    let rows = chart::delta_rows(&report);
    assert_eq!(rows.len(), names.len());
    for (row, name) in rows.iter().zip(&names) {
        assert_eq!(&row.model, name);
        let expected: Vec<(String, String, u32, f64, Option<f64>)> = counted_records(&v)
            .map(|(c, o)| {
                (
                    c["name"].as_str().unwrap().to_string(),
                    o["label"].as_str().unwrap().to_string(),
                    if o["spin"] == "restricted" { 2 } else { 1 },
                    o["models"][name]["self_interaction"].as_f64().unwrap(),
                    opt(&o["errors"]["models"][name]["self_interaction"]),
                )
            })
            .collect();
        let plotted: Vec<_> =
            row.points.iter().map(|p| (p.calculation.clone(), p.label.clone(), p.weight, p.self_interaction, p.error)).collect();
        assert_eq!(plotted, expected, "{name}");
        let median = v["summary"]["models"][name]["median_abs_self_interaction"].as_f64().unwrap();
        assert_eq!(row.median_abs, Some(median), "{name}");
        // The marked median is the median of the plotted points (restricted ones counted twice).
        assert_eq!(weighted_median_abs(&row.points), median, "{name}");
    }
    let plotted: u32 = rows[0].points.iter().map(|p| p.weight).sum();
    assert_eq!(u64::from(plotted), v["summary"]["counted"]["spin_orbitals"].as_u64().unwrap());
    assert_eq!(rows[0].points.len(), 2, "the flagged core, the unchecked radical and the failed calculation are left out");

    // Perdew–Zunger bars: the totals of each completed calculation, none for the failed one.
    let groups = chart::pz_groups(&report);
    let calcs = v["calculations"].as_array().unwrap();
    assert_eq!(groups.len(), calcs.len());
    for (g, c) in groups.iter().zip(calcs) {
        assert_eq!(g.calculation, c["name"].as_str().unwrap());
        let expected = (c["status"] == "ok")
            .then(|| names.iter().map(|n| c["totals"][n]["perdew_zunger"].as_f64().unwrap()).collect::<Vec<_>>());
        assert_eq!(g.values, expected);
        // Spin-orbitals left out of the statistics (the * on the chart).
        let left_out: u64 = c["counted"]["left_out"].as_object().map_or(0, |l| l.values().map(|r| r["spin_orbitals"].as_u64().unwrap()).sum());
        assert_eq!(u64::from(g.left_out), left_out, "{}", g.calculation);
    }
    assert!(groups[2].values.is_none());
    assert_eq!(groups.iter().map(|g| g.left_out).collect::<Vec<_>>(), [2, 2, 0], "the core; the radical's unchecked records");

    // Cancellation: x = J with its bar, y = −E_x/J with the bar propagated from E_x's and J's.
    let series = chart::cancellation_series(&report);
    for (s, name) in series.iter().zip(&names) {
        assert_eq!(&s.model, name);
        let expected: Vec<(f64, Option<f64>, f64, Option<f64>)> = counted_records(&v)
            .map(|(_, o)| {
                let j = o["hartree"].as_f64().unwrap();
                let ratio = o["models"][name]["cancellation"].as_f64().unwrap();
                let ratio_error = o["errors"]["models"][name]["exchange"]
                    .as_f64()
                    .map(|ex| (ex + ratio.abs() * o["errors"]["hartree"].as_f64().unwrap()) / j);
                (j, opt(&o["errors"]["hartree"]), ratio, ratio_error)
            })
            .collect();
        let plotted: Vec<_> = s.points.iter().map(|p| (p.hartree, p.hartree_error, p.ratio, p.ratio_error)).collect();
        assert_eq!(plotted, expected, "{name}");
    }

    // Verdict counts.
    let verdict = chart::verdict(&report);
    assert_eq!((verdict.calculations, verdict.completed), (3, v["summary"]["completed"].as_u64().unwrap() as usize));
    let failed: Vec<(String, Vec<(String, String)>)> = calcs
        .iter()
        .filter(|c| c["status"] == "failed")
        .map(|c| {
            let f = c["failures"].as_array().unwrap();
            (c["name"].as_str().unwrap().into(), f.iter().map(|f| (f["source"].as_str().unwrap().into(), f["error"].as_str().unwrap().into())).collect())
        })
        .collect();
    assert_eq!(verdict.failed, failed);
    let flags: Vec<(String, u64)> = verdict.flags.iter().map(|(f, n)| (f.as_str().to_string(), *n as u64)).collect();
    let json_flags: Vec<(String, u64)> =
        v["summary"]["flags"].as_object().unwrap().iter().map(|(f, n)| (f.clone(), n.as_u64().unwrap())).collect();
    assert_eq!(flags, json_flags);
    let tolerance = v["summary"]["tolerance"].as_f64().unwrap();
    let orbitals: Vec<&Value> = ok_calculations(&v).flat_map(|c| c["orbitals"].as_array().unwrap()).collect();
    let above = orbitals
        .iter()
        .filter(|o| {
            let e = &o["errors"];
            !e.is_null()
                && (e["hartree"].as_f64().unwrap() > tolerance
                    || e["models"].as_object().unwrap().values().any(|m| m["self_interaction"].as_f64().unwrap() > tolerance))
        })
        .count();
    assert_eq!((verdict.records, verdict.above_tolerance, verdict.unchecked), (orbitals.len(), above, 2));
    assert_eq!(verdict.flagged, orbitals.iter().filter(|o| !o["flags"].as_array().unwrap().is_empty()).count());
    assert_eq!((verdict.above_tolerance, verdict.flagged), (1, 1), "only the core's bar exceeds 1.6 mEh");
}

/// The text of the element `<svg id="ID" …>…</svg>`.
fn svg_of<'a>(page: &'a str, id: &str) -> &'a str {
    let start = page.find(&format!("<svg id=\"{id}\"")).unwrap_or_else(|| panic!("no chart {id}"));
    let end = start + page[start..].find("</svg>").unwrap();
    &page[start..end]
}

#[test]
fn the_page_holds_every_chart_and_table_and_fetches_nothing() {
    let wf = workflow(&["lsda", "pbe", "xalpha=0.75"]);
    let results = results();
    let summary = SetSummary::new(&results, wf.models.len(), wf.report.worst, wf.trust.tolerance);
    let report = BatchReport { workflow: &wf, results: &results, summary: &summary };
    let date = ReportDate { year: 2025, month: 3, day: 14 };
    let page = render(&report, EnergyUnit::ElectronVolt, Dated::Given(date));

    for id in ["chart-delta", "chart-pz", "chart-cancellation", "table-models", "table-pz", "table-tags", "table-worst"] {
        assert!(page.contains(&format!("id=\"{id}\"")), "{id}");
    }
    for i in 1..=3 {
        assert!(page.contains(&format!("id=\"table-calc-{i}\"")), "table-calc-{i}");
    }
    // Header: test set, models, units, date, version, verdict with the failure's error.
    for needle in ["survey.yaml", "2025-03-14", env!("CARGO_PKG_VERSION"), "eV in tables and charts", "1 of 3 calculations failed", "anion/o2.cube:9: expected a number"] {
        assert!(page.contains(needle), "{needle}");
    }
    // Every chart has a text alternative.
    for id in ["chart-delta", "chart-pz", "chart-cancellation"] {
        let svg = svg_of(&page, id);
        assert!(svg.contains(&format!("aria-labelledby=\"{id}-title {id}-desc\"")) && svg.contains("<desc"), "{id}");
    }
    // One mark per (counted orbital, model), with its value in the unit: the lone pair and the
    // bond; not the flagged core nor the unchecked radical.
    let delta = svg_of(&page, "chart-delta");
    assert_eq!(delta.matches(" · lsda: δ = ").count(), 2);
    assert_eq!(delta.matches(": δ = ").count(), 2 * 3);
    let lone = &results[0].outcome.ranking.orbitals.iter().find(|o| o.label == "lone").unwrap();
    let shown = format!("δ = {} ± {} eV", num(EnergyUnit::ElectronVolt, lone.models[1].self_interaction), num(EnergyUnit::ElectronVolt, lone.errors.as_ref().unwrap().models[1].self_interaction));
    assert!(delta.contains(&shown), "{shown}");
    assert!(!delta.contains("/ core ·"), "the core is left out");
    assert_eq!(delta.matches(": median |δ| = ").count(), 3);
    assert_eq!(svg_of(&page, "chart-pz").matches("</rect>").count(), 2 * 3, "bars (with their values) of the two completed calculations");
    assert_eq!(svg_of(&page, "chart-cancellation").matches(": J = ").count(), 2 * 3);
    // What the statistics count is stated beside them, and the sums that hold other records are marked.
    assert!(page.contains("Statistics over 4 of 8 spin-orbitals (the same records for every model); 4 left out (2 no error bars computed, 2 error bar above"), "coverage");
    assert!(svg_of(&page, "chart-pz").contains("radical *<title>radical (2 spin-orbitals left out of the statistics)</title>"));

    // A user's name is text, never markup.
    assert!(page.contains("water &lt;b&gt;&amp;&quot;x&quot;") && !page.contains("water <b>"));
    // Self-contained: no external resource of any kind (the SVG namespace is a name, not a fetch).
    let without_ns = page.replace("xmlns=\"http://www.w3.org/2000/svg\"", "");
    for bad in ["http:", "https:", "//fonts", "src=", "@import", "url(http", "<link", "<img", "<iframe"] {
        assert!(!without_ns.contains(bad), "{bad}");
    }
    assert!(page.contains("default-src 'none'"));
    // The same report gives the same bytes.
    assert_eq!(page, render(&report, EnergyUnit::ElectronVolt, Dated::Given(date)));
}

#[test]
fn a_set_where_everything_failed_still_renders() {
    let wf = workflow(&["lsda"]);
    let results = vec![calc("only", &[], Vec::new(), &[("only.cube", "only.cube:1: empty file")])];
    let summary = SetSummary::new(&results, 1, 5, wf.trust.tolerance);
    let report = BatchReport { workflow: &wf, results: &results, summary: &summary };
    let page = render(&report, EnergyUnit::Millihartree, Dated::Unknown);
    assert_eq!(page.matches("nothing to plot").count(), 3);
    assert!(page.contains("1 of 1 calculations failed") && page.contains("only.cube:1: empty file"));
    assert!(page.contains("id=\"table-worst\""));
}

#[test]
fn the_date_is_the_callers_or_the_newest_input() {
    use std::time::{Duration, SystemTime};
    let dir = tempfile::tempdir().unwrap();
    let at = |days: u64| SystemTime::UNIX_EPOCH + Duration::from_secs(days * 86_400 + 3_600);
    let mut wf = workflow(&["lsda"]);
    wf.path = dir.path().join("set.yaml");
    let grid = dir.path().join("a.cube");
    for (p, day) in [(&wf.path, 19_000), (&grid, 19_500)] {
        let f = std::fs::File::create(p).unwrap();
        f.set_modified(at(day)).unwrap();
    }
    wf.calculations.push(crate::batch::workflow::CalculationPlan {
        name: "a".into(),
        tags: Vec::new(),
        load: Default::default(),
        files: vec![grid.clone()],
        duplicates: Vec::new(),
        orbitals: Default::default(),
        localize: Default::default(),
        density: None,
    });
    // Day 19 500 after 1970-01-01 is 2023-05-23 (reference: GNU coreutils `date -u -d @1684800000 +%F`).
    assert_eq!(Dated::for_workflow(&wf, None), Dated::Inputs(ReportDate { year: 2023, month: 5, day: 23 }));
    let given = ReportDate { year: 2025, month: 1, day: 2 };
    assert_eq!(Dated::for_workflow(&wf, Some(given)), Dated::Given(given));
    wf.path = dir.path().join("gone.yaml");
    wf.calculations.clear();
    assert_eq!(Dated::for_workflow(&wf, None), Dated::Unknown);
}

#[test]
fn large_sets_render_within_their_charts() {
    // 12 models over 60 calculations with long names: no panic, every label and mark present.
    let names = ["lsda", "blyp", "pbe", "r2scan", "scan", "b88", "pbe-x", "slater", "lsda-x", "lsda-vwn5", "xalpha=0.7", "xalpha=0.8"];
    let wf = workflow(&names);
    let models: Vec<(f64, f64)> = (0..names.len()).map(|m| (-0.30 - 0.005 * m as f64, -0.01)).collect();
    let results: Vec<CalculationResult> = (0..60)
        .map(|i| {
            let name = format!("conformer number {i} of a rather long series");
            calc(&name, &["set"], vec![orbital("o1", Spin::Restricted, 0.33 + 0.001 * i as f64, &models, Some(0.001), &[])], &[])
        })
        .collect();
    let summary = SetSummary::new(&results, names.len(), 20, wf.trust.tolerance);
    let report = BatchReport { workflow: &wf, results: &results, summary: &summary };
    let page = render(&report, EnergyUnit::Millihartree, Dated::Unknown);
    let pz = svg_of(&page, "chart-pz");
    assert_eq!(pz.matches("</rect>").count(), 60 * names.len());
    assert_eq!(pz.matches("rotate(-40").count(), 60, "slanted calculation names");
    assert!(pz.contains(">conformer …ng series<title>conformer number 7 of a rather long series</title>"), "clipped in the middle");
    assert_eq!(svg_of(&page, "chart-delta").matches(": δ = ").count(), 60 * names.len());
    // Every legend entry of the cancellation chart lies inside it.
    let c = svg_of(&page, "chart-cancellation");
    let height: f64 = c.split("viewBox=\"0 0 1100 ").nth(1).unwrap().split('"').next().unwrap().parse().unwrap();
    assert!(24.0 + 34.0 + 24.0 * names.len() as f64 + 40.0 < height);
}
