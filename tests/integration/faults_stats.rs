//! Set-wide statistics count only records that can be vouched for: checked, unflagged, every
//! error bar (J and each model's δ) within the tolerance. A set where nothing qualifies says so
//! instead of printing numbers; a mixed set counts the good records and says how many were left
//! out and why; the demo workflow shows a comparison over records whose bars are far below the
//! tolerance, and its numbers agree with an independent calculation.

use crate::common::{number, sixray, stderr, trustworthy};
use serde_json::Value;
use std::path::{Path, PathBuf};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// Runs `sixray batch` on `yaml` (written to `dir/set.yaml`); returns report.json, report.md
/// and report.html.
fn batch(dir: &Path, yaml: &str) -> (Value, String, String) {
    std::fs::write(dir.join("set.yaml"), yaml).unwrap();
    let run = sixray(&["batch", "set.yaml", "--quiet", "--date", "2025-01-02"], dir);
    assert_eq!(run.status.code(), Some(0), "{}", stderr(&run));
    let read = |name: &str| std::fs::read_to_string(dir.join("out").join(name)).unwrap_or_else(|e| panic!("{name}: {e}"));
    (serde_json::from_str(&read("report.json")).unwrap(), read("report.md"), read("report.html"))
}

/// The text of one `## ` section of a Markdown report.
fn section<'a>(md: &'a str, heading: &str) -> &'a str {
    let start = md.find(heading).unwrap_or_else(|| panic!("no section {heading}:\n{md}"));
    let rest = &md[start + heading.len()..];
    &rest[..rest.find("\n## ").unwrap_or(rest.len())]
}

fn weight(o: &Value) -> u32 {
    if o["spin"] == "restricted" { 2 } else { 1 }
}

fn lithium_hydride_grid() -> String {
    root().join("samples/lithium_hydride/orbital_*.cube.gz").display().to_string()
}

fn lithium_hydride_basis() -> String {
    root().join("samples/basis/lithium_hydride.molden.gz").display().to_string()
}

#[test]
fn a_set_whose_records_are_all_above_the_tolerance_presents_no_statistics() {
    // Lithium hydride on the 0.25 bohr demo grid: the 1σ core is under-resolved and the 2σ
    // orbital's J carries a bar above 1.6 mEh, so no record qualifies.
    let dir = tempfile::tempdir().unwrap();
    let yaml = format!(
        "calculations:\n  - name: lih grid\n    files: ['{}']\n    tags: [hydride]\nmodels: [lsda, pbe]\nreport:\n  dir: out\n",
        lithium_hydride_grid()
    );
    let (report, md, html) = batch(dir.path(), &yaml);
    let s = &report["summary"];
    assert_eq!(s["models"], serde_json::json!({}), "no per-model numbers: {}", s["models"]);
    assert_eq!(s["counted"]["spin_orbitals"], 0);
    assert_eq!(s["counted"]["records"], 0);
    assert_eq!(s["counted"]["left_out"]["above-tolerance"], serde_json::json!({"records": 2, "spin_orbitals": 4}), "{}", s["counted"]);
    assert_eq!(s["tags"]["hydride"]["models"], serde_json::json!({}));
    assert_eq!(s["tags"]["hydride"]["counted"]["spin_orbitals"], 0);
    assert_eq!(report["calculations"][0]["counted"]["spin_orbitals"], 0);
    // The worst-orbitals list still lists the records, each saying it is not counted and why.
    let worst = s["worst"].as_array().unwrap();
    assert_eq!(worst.len(), 4);
    assert!(worst.iter().all(|w| w["counted"] == false && w["left_out"] == "above-tolerance"), "{worst:?}");

    let models = section(&md, "## Models across the set");
    assert!(models.contains("Nothing to compare"), "{models}");
    assert!(models.contains("all 4 spin-orbitals left out (error bar above 1.600 mEh)"), "{models}");
    // The models without statistics.
    assert!(models.contains("| model | exchange | correlation |\n"), "{models}");
    assert!(!models.contains("mean |δ|"), "{models}");
    let tags = section(&md, "## By tag");
    assert!(tags.contains("| hydride | 1 | 0 of 4 | 4 (error bar above 1.600 mEh) | — | — |"), "{tags}");
    assert!(section(&md, "## Perdew–Zunger").contains("0 of 4 (error bar above 1.600 mEh)"), "{md}");

    // The page: the comparison says there is none, and its chart draws no record.
    assert!(html.contains("Nothing to compare"), "page lead");
    let delta = &html[html.find("<svg id=\"chart-delta\"").unwrap()..];
    let delta = &delta[..delta.find("</svg>").unwrap()];
    assert_eq!(delta.matches(": δ = ").count(), 0);
    assert!(delta.contains("nothing to plot"), "{delta}");
    assert!(!html.contains("The best model has its points furthest left"), "no best model without records");
}

#[test]
fn a_mixed_set_counts_only_the_trustworthy_records_and_says_what_it_left_out() {
    // The same lithium hydride orbitals twice: on the coarse grid (every bar above the
    // tolerance) and as the molden file (exact path, bars ~1e-6 Eh).
    let dir = tempfile::tempdir().unwrap();
    let yaml = format!(
        "calculations:\n\
         \x20 - name: lih grid\n    files: ['{}']\n    tags: [hydride, grid]\n\
         \x20 - name: lih basis\n    files: ['{}']\n    tags: [hydride, basis]\n\
         models: [lsda, pbe, xalpha=0.75]\nreport:\n  dir: out\n  worst: 20\n",
        lithium_hydride_grid(),
        lithium_hydride_basis()
    );
    let (report, md, html) = batch(dir.path(), &yaml);
    let s = &report["summary"];
    let tolerance = number(&s["tolerance"]);
    let calcs = report["calculations"].as_array().unwrap();
    let records: Vec<(&str, &Value)> =
        calcs.iter().flat_map(|c| c["orbitals"].as_array().unwrap().iter().map(move |o| (c["name"].as_str().unwrap(), o))).collect();
    let good: Vec<(&str, &Value)> = records.iter().copied().filter(|(_, o)| trustworthy(o, tolerance)).collect();
    assert!(good.iter().all(|(c, _)| *c == "lih basis") && good.len() == 2, "the two exact-path records qualify");

    assert_eq!(s["counted"]["records"], 2);
    assert_eq!(s["counted"]["spin_orbitals"], 4);
    assert_eq!(s["counted"]["left_out"], serde_json::json!({"above-tolerance": {"records": 2, "spin_orbitals": 4}}));
    // Every model's statistics are those of the good records alone (restricted ones count twice).
    for model in ["lsda", "pbe", "xalpha=0.75"] {
        let mut abs: Vec<f64> = good
            .iter()
            .flat_map(|(_, o)| std::iter::repeat_n(number(&o["models"][model]["self_interaction"]).abs(), weight(o) as usize))
            .collect();
        abs.sort_by(f64::total_cmp);
        let m = &s["models"][model];
        assert_eq!(m["spin_orbitals"], 4, "{model}");
        let mean = abs.iter().sum::<f64>() / abs.len() as f64;
        assert!((number(&m["mean_abs_self_interaction"]) - mean).abs() <= 1e-15 * mean, "{model}: {m}");
        assert_eq!(number(&m["median_abs_self_interaction"]), 0.5 * (abs[1] + abs[2]), "{model}");
        assert_eq!(number(&m["max_abs_self_interaction"]), abs[3], "{model}");
        assert_eq!(m["max_at"]["calculation"], "lih basis", "{model}");
        let cancellation: f64 =
            good.iter().map(|(_, o)| f64::from(weight(o)) * number(&o["models"][model]["cancellation"])).sum::<f64>() / 4.0;
        assert!((number(&m["mean_cancellation"]) - cancellation).abs() < 1e-15, "{model}");
    }
    // Tags: the statistics of each tag over its own good records.
    assert_eq!(s["tags"]["hydride"]["counted"]["spin_orbitals"], 4);
    assert_eq!(s["tags"]["hydride"]["counted"]["left_out"]["above-tolerance"]["spin_orbitals"], 4);
    assert_eq!(s["tags"]["hydride"]["models"]["lsda"], s["models"]["lsda"]);
    assert_eq!(s["tags"]["grid"]["models"], serde_json::json!({}));
    assert_eq!(s["tags"]["basis"]["counted"]["left_out"], serde_json::json!({}));
    // Per calculation: the Perdew–Zunger sums stay, marked with what they contain.
    assert_eq!(calcs[0]["counted"]["spin_orbitals"], 0);
    assert_eq!(calcs[1]["counted"]["spin_orbitals"], 4);
    assert!(calcs[0]["totals"]["lsda"]["perdew_zunger"].is_f64());
    // Worst list: every record, each marked.
    for w in s["worst"].as_array().unwrap() {
        let counted = w["calculation"] == "lih basis";
        assert_eq!(w["counted"], counted, "{w}");
        assert_eq!(w["left_out"], if counted { Value::Null } else { "above-tolerance".into() }, "{w}");
    }

    let models = section(&md, "## Models across the set");
    assert!(models.contains("over 4 of 8 spin-orbitals (the same records for every model); 4 left out (error bar above 1.600 mEh)"), "{models}");
    let pz = section(&md, "## Perdew–Zunger");
    assert!(pz.contains("| lih grid | hydride, grid | 0 of 4 (error bar above 1.600 mEh) |"), "{pz}");
    assert!(pz.contains("| lih basis | hydride, basis | 4 of 4 |"), "{pz}");
    let worst = section(&md, "worst orbitals of the set");
    assert!(worst.contains("| no: error bar above 1.600 mEh |") && worst.contains("| yes |"), "{worst}");

    // The page's charts of the comparison draw the counted records only, and say so.
    let delta = &html[html.find("<svg id=\"chart-delta\"").unwrap()..];
    let delta = &delta[..delta.find("</svg>").unwrap()];
    assert_eq!(delta.matches(": δ = ").count(), 2 * 3);
    assert!(!delta.contains("lih grid /"), "no grid record in the comparison");
    let cancellation = &html[html.find("<svg id=\"chart-cancellation\"").unwrap()..];
    assert_eq!(cancellation[..cancellation.find("</svg>").unwrap()].matches(": J = ").count(), 2 * 3);
    assert!(html.contains("over 4 of 8 spin-orbitals"), "the page states the counts");
}

#[test]
fn records_without_error_bars_are_not_vouched_for() {
    let dir = tempfile::tempdir().unwrap();
    let yaml = format!(
        "calculations:\n  - name: lih\n    files: ['{}']\nmodels: [lsda]\nreport:\n  dir: out\noptions:\n  error_bars: false\n",
        lithium_hydride_basis()
    );
    let (report, md, _) = batch(dir.path(), &yaml);
    let s = &report["summary"];
    assert_eq!(s["models"], serde_json::json!({}));
    assert_eq!(s["counted"]["left_out"], serde_json::json!({"no-error-bars": {"records": 2, "spin_orbitals": 4}}));
    let models = section(&md, "## Models across the set");
    assert!(models.contains("Nothing to compare") && models.contains("(no error bars computed)"), "{models}");
}

// reference: PySCF 2.14 / libcint J and libxc 7.0.0 LSDA exchange (level-8 Becke grid) of the
// demo's molden files, samples/basis/reference.json (tools/gen_basis_samples.py).
#[test]
fn the_demo_compares_models_over_records_within_their_error_bars() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    let wf = root().join("workflows/samples.yaml");
    let run = sixray(&["batch", wf.to_str().unwrap(), "--out", out.to_str().unwrap(), "--quiet"], dir.path());
    assert_eq!(run.status.code(), Some(0), "{}", stderr(&run));
    let report: Value = serde_json::from_slice(&std::fs::read(out.join("report.json")).unwrap()).unwrap();
    let reference: Value = serde_json::from_slice(&std::fs::read(root().join("samples/basis/reference.json")).unwrap()).unwrap();
    let s = &report["summary"];
    let tolerance = number(&s["tolerance"]);
    let (mut basis, mut grid, mut checked) = (0u32, 0u32, 0);
    for c in report["calculations"].as_array().unwrap() {
        for o in c["orbitals"].as_array().unwrap() {
            let source = o["source"].as_str().unwrap();
            if source.ends_with(".molden.gz") {
                // Every exact-path record qualifies.
                assert!(trustworthy(o, tolerance), "{} / {}: {}", c["name"], o["label"], o["errors"]);
                basis += weight(o);
            } else {
                assert!(!trustworthy(o, tolerance), "the coarse grid's records do not qualify");
                grid += weight(o);
            }
            if o["set"] != "canonical" || !source.ends_with(".molden.gz") {
                continue;
            }
            // The canonical orbitals against the independent calculation, in the file's order.
            let file = Path::new(source).file_name().unwrap().to_str().unwrap();
            let label = o["label"].as_str().unwrap();
            let index: u64 = label.rsplit('#').next().unwrap().trim_end_matches(['a', 'b']).parse().unwrap();
            let r = reference["files"][file]["orbitals"]
                .as_array()
                .unwrap()
                .iter()
                .find(|r| r["index"] == index && r["spin"] == o["spin"])
                .unwrap_or_else(|| panic!("{file} {label}"));
            let j = number(&o["hartree"]);
            // Exact integrals on both sides: round-off only.
            assert!((j - number(&r["hartree_self"])).abs() < 1e-11 * j, "{file} {label} J");
            // The reference's own grid is converged to about 1e-6 Eh for LSDA (see the README).
            let x = number(&o["models"]["lsda"]["exchange"]);
            let bar = number(&o["errors"]["models"]["lsda"]["exchange"]);
            assert!((x - number(&r["lsda_x"])).abs() <= bar + 1e-6, "{file} {label}: {x} vs {} ± {bar}", r["lsda_x"]);
            checked += 1;
        }
    }
    assert_eq!(checked, reference["files"].as_object().unwrap().values().map(|f| f["orbitals"].as_array().unwrap().len()).sum::<usize>());
    assert_eq!(s["counted"]["spin_orbitals"], basis);
    assert_eq!(s["counted"]["left_out"], serde_json::json!({"above-tolerance": {"records": 5, "spin_orbitals": grid}}));
    assert!(basis > 4 * grid, "most of the set is counted: {basis} against {grid}");
    // Every model has its statistics, over the same spin-orbitals.
    for m in report["models"].as_array().unwrap() {
        assert_eq!(s["models"][m["name"].as_str().unwrap()]["spin_orbitals"], basis, "{}", m["name"]);
    }
}
