//! No silent wrong number, no lost run: values that are not numbers, calculations that did not
//! finish and files given twice, through the real binary.

use crate::common::{sixray, stderr, stdout};
use serde_json::Value;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::process::Output;

fn sample(name: &str) -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("samples/lithium_hydride").join(name)
}

fn json(o: &Output) -> Value {
    serde_json::from_slice(&o.stdout).unwrap_or_else(|e| panic!("{e}: {}\n{}", stdout(o), stderr(o)))
}

fn read_json(path: &Path) -> Value {
    serde_json::from_slice(&std::fs::read(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()))).unwrap()
}

/// The two lithium hydride sample orbitals copied into `dir/to`.
fn copy_lih(dir: &Path, to: &str) {
    std::fs::create_dir_all(dir.join(to)).unwrap();
    for f in ["orbital_001.cube.gz", "orbital_002.cube.gz"] {
        std::fs::copy(sample(f), dir.join(to).join(f)).unwrap();
    }
}

/// One H 1s primitive of exponent 1e12 bohr⁻² on an atom 1e300 bohr from the origin: the
/// basis path's J of it overflows to NaN (found by trying extreme inputs; invented data). The
/// file reads as orthonormal, so nothing before the integrals refuses it.
const OVERFLOWING_MOLDEN: &str = "[Molden Format]\n[Atoms] (AU)\nH   1   1     1e300 0 0\n[GTO]\n1 0\n s    1 1.00\n   1e12   1.0\n\n[MO]\n Ene=  -0.5\n Spin= Alpha\n Occup= 1.0\n   1   1.0\n";

/// A directory with `overflow.molden` and the lithium hydride orbitals in `lih/`; `None` (after a
/// notice) where `sixray rank` refuses the overflowing file itself (a check of the basis path
/// that catches it before the reports): the reports then never see its NaN, and how reports
/// show such values rests on the library tests (`report::tests`).
fn with_overflowing_file() -> Option<tempfile::TempDir> {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("overflow.molden"), OVERFLOWING_MOLDEN).unwrap();
    copy_lih(dir.path(), "lih");
    let out = sixray(&["rank", "-f", "json", "overflow.molden"], dir.path());
    if json(&out)["failures"].as_array().is_some_and(|f| !f.is_empty()) {
        use std::io::Write;
        let _ = writeln!(std::io::stderr(), "overflow.molden is refused by the basis path itself: {}", stderr(&out));
        return None;
    }
    Some(dir)
}

/// Whether some cell or word of a report is a NaN or an infinity as Rust or a spreadsheet would
/// print one (prose that names them, "infinite or NaN", is no cell of its own).
fn shows_a_non_number(text: &str) -> bool {
    text.split(|c: char| c.is_whitespace() || "|,±".contains(c))
        .any(|w| ["nan", "inf", "-inf", "+inf", "infinity", "-infinity"].contains(&w.to_lowercase().as_str()))
}

#[test]
fn a_value_that_is_not_a_number_is_marked_ranked_last_and_kept_out_of_the_totals() {
    let Some(dir) = with_overflowing_file() else { return };
    let p = dir.path();
    let args = ["rank", "-m", "lsda", "-m", "slater", "overflow.molden", "lih/orbital_001.cube.gz", "lih/orbital_002.cube.gz"];
    let run = |format: &str| {
        let mut a = args.to_vec();
        a.extend(["-f", format]);
        sixray(&a, p)
    };
    let out = run("json");
    assert!(out.status.success(), "{}", stderr(&out));
    assert!(stderr(&out).contains("overflow#1 (overflow.molden): not a finite number"), "{}", stderr(&out));
    let v = json(&out);
    let orbitals = v["orbitals"].as_array().unwrap();
    assert_eq!(orbitals.len(), 3);
    // Not ranked as a number: last, flagged, every null among its numbers explained.
    let bad = &orbitals[2];
    assert_eq!(bad["label"], "overflow#1");
    assert!(bad["flags"].as_array().unwrap().contains(&Value::from("not-finite")), "{bad}");
    let invalid: Vec<(&str, &str)> = bad["invalid"]
        .as_array()
        .unwrap_or_else(|| panic!("no invalid list: {bad}"))
        .iter()
        .map(|i| (i["quantity"].as_str().unwrap(), i["reason"].as_str().unwrap()))
        .collect();
    assert!(invalid.iter().all(|(_, r)| r.starts_with("not a finite number")), "{invalid:?}");
    let named = |q: &str| invalid.iter().any(|(k, _)| *k == q);
    for (key, value) in [("hartree", &bad["hartree"]), ("optimal_alpha", &bad["optimal_alpha"]), ("norm", &bad["norm"])] {
        assert_eq!(value.is_null(), named(key), "{key}: {value} / {invalid:?}");
    }
    for m in ["lsda", "slater"] {
        for q in ["exchange", "correlation", "self_interaction", "cancellation"] {
            let value = &bad["models"][m][q];
            assert_eq!(value.is_null(), named(&format!("models.{m}.{q}")), "{m}.{q}: {value} / {invalid:?}");
        }
    }
    assert!(named("hartree") && named("models.lsda.self_interaction"), "{invalid:?}");
    // The good records are ranked among themselves and carry nothing new.
    for o in &orbitals[..2] {
        assert!(o.get("invalid").is_none() && o["hartree"].is_f64(), "{o}");
    }
    assert!(orbitals[0]["models"]["lsda"]["self_interaction"].as_f64().unwrap().abs() >= orbitals[1]["models"]["lsda"]["self_interaction"].as_f64().unwrap().abs());
    // No total summed over the records that happen to be numbers.
    for m in ["lsda", "slater"] {
        let t = &v["totals"][m];
        assert!(t["perdew_zunger"].is_null() && t["mean_cancellation"].is_null(), "{t}");
        let reasons: Vec<&str> = t["invalid"].as_array().unwrap().iter().map(|i| i["reason"].as_str().unwrap()).collect();
        assert!(reasons.iter().all(|r| r.contains("incomplete: 1 of 3 orbital records")), "{reasons:?}");
    }
    // The table, Markdown and CSV show no NaN: `invalid` cells, an incomplete total.
    for format in ["table", "markdown", "csv"] {
        let text = stdout(&run(format));
        assert!(!shows_a_non_number(&text), "{format}:\n{text}");
        assert!(text.contains("not-finite"), "{format}:\n{text}");
        if format != "csv" {
            assert!(text.contains("invalid") && text.contains("incomplete"), "{format}:\n{text}");
        }
    }
}

#[test]
fn a_batch_leaves_records_that_are_not_numbers_out_of_its_statistics() {
    let Some(dir) = with_overflowing_file() else { return };
    let p = dir.path();
    let yaml = "calculations:\n  - name: mixed\n    files: [overflow.molden, lih/orbital_001.cube.gz]\n  - name: lih\n    files: [lih/*.gz]\nmodels: [lsda]\nreport:\n  dir: out\n  formats: [markdown, json, csv]\n";
    std::fs::write(p.join("set.yaml"), yaml).unwrap();
    let run = sixray(&["batch", "-q", "set.yaml"], p);
    assert!(run.status.success(), "{}", stderr(&run));
    let v = read_json(&p.join("out/report.json"));
    let mixed = &v["calculations"][0];
    assert_eq!(mixed["status"], "ok");
    assert!(mixed["totals"]["lsda"]["perdew_zunger"].is_null(), "{}", mixed["totals"]);
    assert!(v["calculations"][1]["totals"]["lsda"]["perdew_zunger"].is_f64());
    // The record that is not a number is left out of the statistics under its own reason (the
    // lithium hydride grid records are left out too, for their error bars), and no statistic is
    // a non-number.
    let counted = &v["summary"]["counted"];
    assert_eq!(counted["left_out"]["not-finite"]["records"], 1, "{counted}");
    if let Some(stats) = v["summary"]["models"].get("lsda") {
        assert!(stats["mean_abs_self_interaction"].is_f64(), "{stats}");
    }
    assert_eq!(v["summary"]["flags"]["not-finite"], 1);
    assert!(v["summary"]["worst"].as_array().unwrap().iter().all(|w| w["self_interaction"].is_f64()));
    let md = std::fs::read_to_string(p.join("out/report.md")).unwrap();
    assert!(!shows_a_non_number(&md) && md.contains("left out of the statistics"), "{md}");
    assert!(!shows_a_non_number(&std::fs::read_to_string(p.join("out/orbitals.csv")).unwrap()));
}

/// The PZ and mean −E_x/J cells of `model`'s row of the first totals table in a table or
/// Markdown report (the row that starts with the model's name and its exchange functional).
fn totals_cells(text: &str, model: &str) -> Vec<String> {
    let cells = |l: &str| l.split(|c: char| c == '|' || c.is_whitespace()).filter(|c| !c.is_empty()).map(String::from).collect::<Vec<_>>();
    let row = text.lines().map(cells).find(|c| c.len() == 5 && c[0] == model && c[1] == model);
    row.map_or_else(Vec::new, |c| c[3..].to_vec())
}

#[test]
fn a_failed_file_leaves_its_calculation_without_a_perdew_zunger_total() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    copy_lih(p, "lih");
    std::fs::write(p.join("broken.cube"), "comment\ncomment\n    2 0.0 0.0 0.0\n   10 0.1 0.0 0.0\n").unwrap();
    let files = ["lih/orbital_001.cube.gz", "lih/orbital_002.cube.gz"];
    let run = |format: &str, broken: bool| {
        let mut a = vec!["rank", "-f", format, "-m", "lsda", "-m", "pbe"];
        a.extend(files);
        if broken {
            a.push("broken.cube");
        }
        sixray(&a, p)
    };
    let out = run("json", true);
    assert_eq!(out.status.code(), Some(2));
    let v = json(&out);
    assert_eq!(v["orbitals"].as_array().unwrap().len(), 2);
    for m in ["lsda", "pbe"] {
        let t = &v["totals"][m];
        assert!(t["perdew_zunger"].is_null() && t["mean_cancellation"].is_null(), "{t}");
        let invalid = t["invalid"].as_array().unwrap();
        let quantities: Vec<&str> = invalid.iter().map(|i| i["quantity"].as_str().unwrap()).collect();
        assert_eq!(quantities, ["perdew_zunger", "mean_cancellation"]);
        assert!(invalid.iter().all(|i| i["reason"] == "incomplete: 1 of 3 files failed"), "{t}");
    }
    for format in ["table", "markdown"] {
        let text = stdout(&run(format, true));
        assert_eq!(totals_cells(&text, "lsda"), ["incomplete", "incomplete"], "{format}:\n{text}");
        assert!(text.contains("incomplete: 1 of 3 files failed"), "{format}:\n{text}");
    }
    // Complete, the totals are numbers and nothing new is in the layout.
    let v = json(&run("json", false));
    for m in ["lsda", "pbe"] {
        let keys: Vec<&String> = v["totals"][m].as_object().unwrap().keys().collect();
        assert_eq!(keys, ["perdew_zunger", "mean_cancellation"]);
        assert!(v["totals"][m]["perdew_zunger"].is_f64());
    }
    assert!(v.get("duplicates").is_none() && v["orbitals"].as_array().unwrap().iter().all(|o| o.get("invalid").is_none()));
    assert!(!stdout(&run("table", false)).contains("incomplete"));
}

#[test]
fn a_failed_calculation_of_a_batch_has_no_perdew_zunger_total() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    copy_lih(p, "lih");
    copy_lih(p, "other");
    std::fs::write(p.join("broken.cube"), "comment\ncomment\n    2 0.0 0.0 0.0\n   10 0.1 0.0 0.0\n").unwrap();
    let yaml = "calculations:\n  - name: broken\n    files: [lih/*.gz, broken.cube]\n  - name: fine\n    files: [other/*.gz]\nmodels: [lsda]\nreport:\n  dir: out\n  formats: [markdown, json]\n";
    std::fs::write(p.join("set.yaml"), yaml).unwrap();
    let run = sixray(&["batch", "-q", "set.yaml"], p);
    assert_eq!(run.status.code(), Some(1), "{}", stderr(&run));
    let v = read_json(&p.join("out/report.json"));
    let broken = &v["calculations"][0];
    assert_eq!((broken["status"].as_str(), broken["orbitals"].as_array().unwrap().len()), (Some("failed"), 2));
    let t = &broken["totals"]["lsda"];
    assert!(t["perdew_zunger"].is_null(), "{t}");
    assert_eq!(t["invalid"][0]["reason"], "incomplete: 1 of 3 files failed");
    let fine = &v["calculations"][1]["totals"]["lsda"];
    assert!(fine["perdew_zunger"].is_f64() && fine.get("invalid").is_none(), "{fine}");
    // In report.md the failed calculation's own totals table shows no number either.
    let md = std::fs::read_to_string(p.join("out/report.md")).unwrap();
    let section = md.split_once("### broken").unwrap().1.split("### fine").next().unwrap();
    assert_eq!(totals_cells(section, "lsda"), ["incomplete", "incomplete"], "{section}");
}

#[test]
fn rank_analyses_each_distinct_file_once_and_says_which_it_left_out() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    copy_lih(p, "lih");
    std::fs::copy(sample("orbital_001.cube.gz"), p.join("copy.cube.gz")).unwrap();
    let first = "lih/orbital_001.cube.gz";
    let absolute = p.join(first).display().to_string();
    let once = json(&sixray(&["rank", "-f", "json", first, "lih/orbital_002.cube.gz"], p));
    let out = sixray(&["rank", "-f", "json", first, "./lih/orbital_001.cube.gz", &absolute, "copy.cube.gz", "lih/orbital_002.cube.gz"], p);
    assert!(out.status.success(), "{}", stderr(&out));
    let v = json(&out);
    assert_eq!(v["orbitals"].as_array().unwrap().len(), 2);
    assert_eq!(v["spin_orbitals"], 4);
    assert_eq!(v["totals"], once["totals"]);
    let duplicates: Vec<(&str, &str)> =
        v["duplicates"].as_array().unwrap().iter().map(|d| (d["source"].as_str().unwrap(), d["same_as"].as_str().unwrap())).collect();
    assert_eq!(duplicates, [("./lih/orbital_001.cube.gz", first), (absolute.as_str(), first), ("copy.cube.gz", first)]);
    let err = stderr(&out);
    for (source, _) in &duplicates {
        assert!(err.contains(&format!("warning: {source} has the same content as {first}")), "{err}");
    }
    let table = stdout(&sixray(&["rank", first, "copy.cube.gz"], p));
    assert!(table.contains(&format!("copy.cube.gz: same content as {first}")), "{table}");
}

#[test]
fn a_workflow_analyses_each_distinct_file_of_a_calculation_once() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    copy_lih(p, "lih");
    std::fs::create_dir_all(p.join("copy")).unwrap();
    std::fs::copy(sample("orbital_001.cube.gz"), p.join("copy/orbital_001.cube.gz")).unwrap();
    // Overlapping globs, a path spelled another way and a byte-identical copy.
    let yaml = "calculations:\n  - name: lih\n    files: [lih/*.gz, lih/orbital_001.cube.gz, lih/../lih/orbital_002.cube.gz, copy/*.gz]\nmodels: [lsda]\nreport:\n  dir: out\n  formats: [markdown, json]\n";
    std::fs::write(p.join("set.yaml"), yaml).unwrap();
    let run = sixray(&["batch", "-q", "set.yaml"], p);
    assert!(run.status.success(), "{}", stderr(&run));
    let err = stderr(&run);
    assert!(err.contains("calculation lih:") && err.contains("copy/orbital_001.cube.gz has the same content as"), "{err}");
    let v = read_json(&p.join("out/report.json"));
    let c = &v["calculations"][0];
    assert_eq!((c["orbitals"].as_array().unwrap().len(), c["spin_orbitals"].as_u64()), (2, Some(4)));
    let sources: Vec<String> = c["duplicates"].as_array().unwrap().iter().map(|d| d["source"].as_str().unwrap().to_string()).collect();
    assert_eq!(sources.len(), 2, "{sources:?}");
    assert!(sources.iter().any(|s| s.ends_with("lih/../lih/orbital_002.cube.gz")) && sources.iter().any(|s| s.ends_with("copy/orbital_001.cube.gz")), "{sources:?}");
    let md = std::fs::read_to_string(p.join("out/report.md")).unwrap();
    assert!(md.contains("same content as") && md.contains("analysed once"), "{md}");
}

/// A cube of two orbitals (Gaussian amplitudes of exponents 1 and 2 at the origin, invented
/// data) on 25³ points 0.35 bohr apart, whose orbital list reads `ids`.
fn two_orbital_cube(ids: &str) -> String {
    let (n, h) = (25, 0.35);
    let o = -(n as f64 - 1.0) * h / 2.0;
    let mut s = format!("two orbitals\ninvented for the tests\n   -1{o:12.6}{o:12.6}{o:12.6}\n");
    for a in 0..3 {
        let mut v = [0.0; 3];
        v[a] = h;
        let _ = writeln!(s, "{n:5}{:12.6}{:12.6}{:12.6}", v[0], v[1], v[2]);
    }
    let _ = writeln!(s, "    1    1.000000    0.000000    0.000000    0.000000\n{ids}");
    let amplitude = |a: f64, r2: f64| (2.0 * a / std::f64::consts::PI).powf(0.75) * (-a * r2).exp();
    for i in 0..n {
        for j in 0..n {
            for k in 0..n {
                let r2 = [i, j, k].iter().map(|&x| (o + x as f64 * h).powi(2)).sum::<f64>();
                let _ = writeln!(s, "{:14.6E}{:14.6E}", amplitude(0.5, r2), amplitude(1.0, r2));
            }
        }
    }
    s
}

#[test]
fn a_cube_listing_one_orbital_twice_is_refused_with_its_line() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    std::fs::write(p.join("pair.cube"), two_orbital_cube("    2    3    4")).unwrap();
    std::fs::write(p.join("twice.cube"), two_orbital_cube("    2    3    3")).unwrap();
    let good = sixray(&["rank", "-f", "json", "--kind", "amplitude", "pair.cube"], p);
    assert!(good.status.success(), "{}", stderr(&good));
    let labels: Vec<Value> = json(&good)["orbitals"].as_array().unwrap().iter().map(|o| o["label"].clone()).collect();
    assert_eq!(labels.len(), 2);
    assert!(labels.contains(&Value::from("pair#3")) && labels.contains(&Value::from("pair#4")), "{labels:?}");
    let bad = sixray(&["rank", "-f", "json", "--kind", "amplitude", "twice.cube"], p);
    assert_eq!(bad.status.code(), Some(2));
    assert!(stderr(&bad).contains("twice.cube:8: orbital index 3 is listed twice"), "{}", stderr(&bad));
    assert!(json(&bad)["orbitals"].as_array().unwrap().is_empty());
}
