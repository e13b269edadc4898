//! The real `sixray` binary, run in temporary directories.

use serde_json::Value;
use std::fmt::Write as _;
use std::path::{Path, PathBuf};
use std::process::Output;
use crate::common::{shared_dir, sixray, stderr, stdout};

fn samples() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("samples")
}

fn json(o: &Output) -> Value {
    serde_json::from_slice(&o.stdout).unwrap_or_else(|e| panic!("{e}: {}", stdout(o)))
}

/// A cube file of a normalised Gaussian amplitude √n (n = (a/π)^{3/2} e^{−a r²}, a = 1) on a
/// cubic grid of `points` per axis and step `h` bohr, written in Å with negative counts when
/// `angstrom`, squared (a density file) when `density`. Invented data for these tests.
fn gaussian_cube(points: usize, h: f64, angstrom: bool, density: bool) -> String {
    let scale = if angstrom { 0.529_177_210_903 } else { 1.0 };
    let sign = if angstrom { -1 } else { 1 };
    let o = -(points as f64 - 1.0) * h / 2.0;
    let mut s = String::from("test orbital\na Gaussian\n");
    let _ = writeln!(s, "{:5}{:12.6}{:12.6}{:12.6}", 1, o * scale, o * scale, o * scale);
    for a in 0..3 {
        let mut v = [0.0; 3];
        v[a] = h * scale;
        let _ = writeln!(s, "{:5}{:12.6}{:12.6}{:12.6}", sign * points as i64, v[0], v[1], v[2]);
    }
    let _ = writeln!(s, "{:5}{:12.6}{:12.6}{:12.6}{:12.6}", 1, 1.0, 0.0, 0.0, 0.0);
    for i in 0..points {
        for j in 0..points {
            for k in 0..points {
                let r2 = [i, j, k].iter().map(|&x| (o + x as f64 * h).powi(2)).sum::<f64>();
                let n = std::f64::consts::PI.powf(-1.5) * (-r2).exp();
                let _ = write!(s, "{:14.6E}", if density { n } else { n.sqrt() });
                if k % 6 == 5 {
                    s.push('\n');
                }
            }
            s.push('\n');
        }
    }
    s
}

#[test]
fn ranks_a_multi_orbital_sample_as_json() {
    let dir = tempfile::tempdir().unwrap();
    let file = samples().join("water/occupied.cube.gz");
    let out = sixray(&["rank", "-f", "json", "-m", "lsda", "-m", "slater", file.to_str().unwrap()], dir.path());
    assert!(out.status.success(), "{}", stderr(&out));
    let v = json(&out);
    assert_eq!(v["units"], "hartree");
    assert_eq!(v["rank_by"], "lsda");
    let orbitals = v["orbitals"].as_array().unwrap();
    assert_eq!(orbitals.len(), 5);
    assert_eq!(v["spin_orbitals"], 10);
    let delta = |o: &Value, m: &str| o["models"][m]["self_interaction"].as_f64().unwrap();
    for (i, o) in orbitals.iter().enumerate() {
        assert_eq!(o["rank"], i + 1);
        assert_eq!(o["spin"], "restricted");
        for key in ["source", "label", "occupation", "norm", "hartree", "optimal_alpha"] {
            assert!(!o[key].is_null(), "{key} missing in {o}");
        }
        let (j, m) = (o["hartree"].as_f64().unwrap(), &o["models"]["lsda"]);
        let (x, c) = (m["exchange"].as_f64().unwrap(), m["correlation"].as_f64().unwrap());
        assert!((delta(o, "lsda") - (j + x + c)).abs() < 1e-12);
        assert!((m["cancellation"].as_f64().unwrap() + x / j).abs() < 1e-12);
        assert_eq!(o["models"]["slater"]["correlation"], 0.0);
        // Error bars have the shape of the values, non-negative; flags is a list.
        let e = &o["errors"];
        assert!(e["hartree"].as_f64().unwrap() >= 0.0);
        for m in ["lsda", "slater"] {
            for q in ["exchange", "correlation", "self_interaction"] {
                assert!(e["models"][m][q].as_f64().unwrap() >= 0.0, "{m}.{q}");
            }
        }
        assert!(o["flags"].is_array() && o["lost_charge"].as_f64().unwrap() >= 0.0);
        if i > 0 {
            assert!(delta(&orbitals[i - 1], "lsda").abs() >= delta(o, "lsda").abs());
        }
    }
    // Restricted orbitals count twice in the Perdew–Zunger sum.
    for m in ["lsda", "slater"] {
        let want = -2.0 * orbitals.iter().map(|o| delta(o, m)).sum::<f64>();
        let got = v["totals"][m]["perdew_zunger"].as_f64().unwrap();
        assert!((got - want).abs() < 1e-12, "{m}: {got} vs {want}");
    }
    let labels: Vec<_> = orbitals.iter().map(|o| o["label"].as_str().unwrap().to_string()).collect();
    for k in 1..=5 {
        assert!(labels.contains(&format!("occupied#{k}")), "{labels:?}");
    }
}

#[test]
fn spins_come_from_file_names_and_can_be_forced() {
    let dir = tempfile::tempdir().unwrap();
    let files: Vec<String> = std::fs::read_dir(samples().join("hydroxyl_radical"))
        .unwrap()
        .map(|e| e.unwrap().path().display().to_string())
        .collect();
    let mut args = vec!["rank", "-f", "json"];
    args.extend(files.iter().map(String::as_str));
    let v = json(&sixray(&args, dir.path()));
    let spins: Vec<_> = v["orbitals"].as_array().unwrap().iter().map(|o| o["spin"].as_str().unwrap().to_string()).collect();
    assert_eq!(spins.iter().filter(|s| *s == "alpha").count(), 5);
    assert_eq!(spins.iter().filter(|s| *s == "beta").count(), 4);
    assert_eq!(v["spin_orbitals"], 9);

    args.extend(["--spin", "restricted"]);
    let v = json(&sixray(&args, dir.path()));
    assert_eq!(v["spin_orbitals"], 18);
}

#[test]
fn formats_units_top_and_output_file() {
    let dir = tempfile::tempdir().unwrap();
    let file = samples().join("lithium_hydride/orbital_002.cube.gz");
    let f = file.to_str().unwrap();
    let j = json(&sixray(&["rank", "-f", "json", f], dir.path()))["orbitals"][0]["hartree"].as_f64().unwrap();

    let table = stdout(&sixray(&["rank", f, "--units", "ev"], dir.path()));
    assert!(table.contains("J (eV)") && table.contains("PZ correction (eV)"), "{table}");
    assert!(table.contains(&format!("{:.5}", j * 27.211_386_245_988)), "{table}");

    let md = stdout(&sixray(&["rank", "-f", "markdown", "-m", "lsda", "-m", "xalpha=0.7", f], dir.path()));
    assert!(md.starts_with("# Self-interaction ranking"), "{md}");
    assert!(md.contains("| E_x xalpha=0.7 |") && md.contains("|---:|"), "{md}");

    let csv = stdout(&sixray(&["rank", "-f", "csv", "-m", "lsda", "-m", "slater", f], dir.path()));
    let lines: Vec<_> = csv.lines().collect();
    assert_eq!(
        lines[0],
        "rank,source,label,spin,occupation,norm,lost_charge,hartree,hartree_error,optimal_alpha,model,exchange,\
         exchange_error,correlation,correlation_error,self_interaction,self_interaction_error,cancellation,flags,checked,\
         cusp_hartree,cusp_exchange,cusp_correlation,energy,set,tail_hartree,tail_exchange,tail_correlation,\
         input_format,input_convention,orthonormality"
    );
    // Error bars are there unless switched off; a grid file gives no orbital energy (the field
    // before the orbital set), without the tail correction the tail cells are empty, and a grid
    // file has no basis-set reading to describe.
    let row = lines[1].strip_suffix(",,canonical,,,,,,").expect("an empty energy field, canonical orbitals, no tail");
    assert!(row.contains(",true,") && !row.contains(",,"), "{}", lines[1]);
    let bare = stdout(&sixray(&["rank", "-f", "csv", "--no-error-bars", "--no-cusp-correction", f], dir.path()));
    assert!(bare.lines().nth(1).unwrap().ends_with(",false,,,,,canonical,,,,,,"), "{bare}");
    assert_eq!(lines.len(), 3, "one row per orbital and model: {csv}");

    // --top limits the rows, not the totals; --output writes the same text atomically.
    let all = samples().join("hydroxide");
    let files: Vec<String> = (1..=5).map(|i| all.join(format!("orbital_{i:03}.cube.gz")).display().to_string()).collect();
    let mut args = vec!["rank", "-f", "json", "--top", "2"];
    args.extend(files.iter().map(String::as_str));
    let top = sixray(&args, dir.path());
    let v = json(&top);
    assert_eq!(v["orbitals"].as_array().unwrap().len(), 2);
    assert_eq!(v["spin_orbitals"], 10);
    args.extend(["-o", "report.json"]);
    let written = sixray(&args, dir.path());
    assert!(written.status.success() && written.stdout.is_empty());
    assert_eq!(std::fs::read(dir.path().join("report.json")).unwrap(), top.stdout);
}

#[test]
fn rank_by_adds_the_model_and_orders_by_it() {
    let dir = tempfile::tempdir().unwrap();
    let f = samples().join("water/occupied.cube.gz");
    let v = json(&sixray(&["rank", "-f", "json", "--rank-by", "slater", f.to_str().unwrap()], dir.path()));
    assert_eq!(v["rank_by"], "slater");
    assert_eq!(v["models"].as_array().unwrap().len(), 2, "lsda (default) and slater");
    let d: Vec<f64> = v["orbitals"]
        .as_array()
        .unwrap()
        .iter()
        .map(|o| o["models"]["slater"]["self_interaction"].as_f64().unwrap().abs())
        .collect();
    assert!(d.windows(2).all(|w| w[0] >= w[1]), "{d:?}");
}

#[test]
fn units_kinds_and_occupations_of_synthetic_files_agree() {
    // The same Gaussian orbital written in bohr, in Ångström and as a density gives the same J;
    // J = √(1/2π) for the normalised Gaussian with a = 1 (textbook), up to the six printed digits.
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    std::fs::write(p.join("bohr.cube"), gaussian_cube(41, 0.3, false, false)).unwrap();
    std::fs::write(p.join("angstrom.cube"), gaussian_cube(41, 0.3, true, false)).unwrap();
    std::fs::write(p.join("dens.cube"), gaussian_cube(41, 0.3, false, true)).unwrap();
    let j = |args: &[&str]| -> (f64, f64) {
        let out = sixray(args, p);
        assert!(out.status.success(), "{}", stderr(&out));
        let o = &json(&out)["orbitals"][0];
        (o["hartree"].as_f64().unwrap(), o["norm"].as_f64().unwrap())
    };
    let want = (1.0 / (2.0 * std::f64::consts::PI)).sqrt();
    let (bohr, norm) = j(&["rank", "-f", "json", "bohr.cube"]);
    assert!((bohr - want).abs() < 1e-5 * want, "{bohr} vs {want}");
    assert!((norm - 1.0).abs() < 1e-5);
    let (ang, _) = j(&["rank", "-f", "json", "angstrom.cube"]);
    assert!((ang - bohr).abs() < 1e-5 * want, "{ang} vs {bohr}");
    let (dens, _) = j(&["rank", "-f", "json", "--kind", "density", "dens.cube"]);
    assert!((dens - bohr).abs() < 1e-5 * want, "{dens} vs {bohr}");
    // Without --kind the values say what they are.
    let (auto, _) = j(&["rank", "-f", "json", "dens.cube"]);
    assert_eq!(auto, dens);
    // A density read as amplitudes because the user said so is flagged, with the fix on
    // standard error; the same kind detected is not.
    let wrong = sixray(&["rank", "-f", "json", "--kind", "amplitude", "dens.cube"], p);
    assert!(json(&wrong)["orbitals"][0]["flags"].as_array().unwrap().iter().any(|f| f == "kind-suspicious"));
    assert!(stderr(&wrong).contains("read it with --kind density"), "{}", stderr(&wrong));
    let right = sixray(&["rank", "-f", "json", "bohr.cube"], p);
    assert!(!stderr(&right).contains("--kind"), "{}", stderr(&right));
    assert!(json(&right)["orbitals"][0]["flags"].as_array().unwrap().iter().all(|f| f != "kind-suspicious"));
    // Half an electron: a quarter of J, half the norm.
    let (half, half_norm) = j(&["rank", "-f", "json", "--occupation", "0.5", "bohr.cube"]);
    assert!((half - 0.25 * bohr).abs() < 1e-12 && (half_norm - 0.5 * norm).abs() < 1e-12);
}

#[test]
fn a_bad_file_is_reported_and_the_good_ones_still_ranked() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    let good = gaussian_cube(21, 0.5, false, false);
    std::fs::write(p.join("good.cube"), &good).unwrap();
    // Line 9 (the second data line) holds a word where a number belongs.
    let mut lines: Vec<String> = good.lines().map(String::from).collect();
    lines[8] = lines[8].replacen("E", "X", 1);
    std::fs::write(p.join("broken.cube"), lines.join("\n")).unwrap();
    let out = sixray(&["rank", "-f", "json", "good.cube", "broken.cube", "missing.cube"], p);
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert!(err.contains("broken.cube:9:"), "{err}");
    assert!(err.contains("missing.cube"), "{err}");
    let v = json(&out);
    assert_eq!(v["orbitals"].as_array().unwrap().len(), 1);
    assert_eq!(v["orbitals"][0]["label"], "good");
    assert_eq!(v["failures"].as_array().unwrap().len(), 2);
}

#[test]
fn files_of_no_known_format_are_named_with_the_formats_read() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    std::fs::write(p.join("notes.cube"), "hello world\nnothing numeric here\n").unwrap();
    let fchk = "water\nSP        RHF                                                         STO-3G\n\
                Number of atoms                            I                3\n";
    std::fs::write(p.join("water.fchk"), fchk).unwrap();
    let out = sixray(&["rank", "-f", "json", "notes.cube", "water.fchk"], p);
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert!(
        err.contains("notes.cube: not a file sixray reads (cube, molden, fchk, wfn, wfx); it starts with \"hello world\""),
        "{err}"
    );
    // An fchk file goes to the basis-set reader, which says what it misses.
    assert!(err.contains("water.fchk: expected a section \"Atomic numbers\", found none"), "{err}");
}

#[test]
fn bad_arguments_exit_with_status_two() {
    let dir = tempfile::tempdir().unwrap();
    let f = samples().join("lithium_hydride/orbital_001.cube.gz");
    let f = f.to_str().unwrap();
    for (args, needle) in [
        (vec!["rank", "-m", "lsdaa", f], "unknown model `lsdaa`"),
        (vec!["rank", "-m", "xalpha=-2", f], "α must be a number above 0"),
        (vec!["rank", "--occupation", "1.5", f], "--occupation"),
        (vec!["rank", "--units", "joule", f], "unknown energy unit"),
        (vec!["rank", "-m", "lsda", "-m", "lsda", f], "twice"),
        (vec!["rank"], "FILE"),
    ] {
        let out = sixray(&args, dir.path());
        assert_eq!(out.status.code(), Some(2), "{args:?}");
        assert!(stderr(&out).contains(needle), "{args:?}: {}", stderr(&out));
    }
}

#[test]
fn models_are_listed_with_references() {
    let out = sixray(&["models"], Path::new("."));
    let text = stdout(&out);
    for needle in ["lsda", "lsda-x", "slater", "xalpha=VALUE", "Perdew and Y. Wang"] {
        assert!(text.contains(needle), "{needle}: {text}");
    }
}

#[test]
fn every_named_model_is_accepted_and_reported_for_every_orbital() {
    let dir = tempfile::tempdir().unwrap();
    let f = samples().join("water/occupied.cube.gz");
    let names = ["lsda", "lsda-x", "lsda-vwn5", "slater", "xalpha=0.7", "b88", "blyp", "pbe", "pbe-x", "pw91-x", "scan", "scan-x", "r2scan", "r2scan-x"];
    let mut args = vec!["rank", "-f", "json", f.to_str().unwrap()];
    for n in names {
        args.extend(["-m", n]);
    }
    let out = sixray(&args, dir.path());
    assert!(out.status.success(), "{}", stderr(&out));
    let v = json(&out);
    let listed: Vec<_> = v["models"].as_array().unwrap().iter().map(|m| m["name"].as_str().unwrap().to_string()).collect();
    assert_eq!(listed, names);
    for o in v["orbitals"].as_array().unwrap() {
        let models = o["models"].as_object().unwrap();
        assert_eq!(models.keys().collect::<Vec<_>>(), names.iter().collect::<Vec<_>>());
        for (name, e) in models {
            for q in ["exchange", "correlation", "self_interaction", "cancellation"] {
                assert!(e[q].as_f64().is_some_and(f64::is_finite), "{name}.{q} in {o}");
            }
            assert!(e["exchange"].as_f64().unwrap() < 0.0, "{name}");
        }
        // Models sharing a functional report the same number for it.
        assert_eq!(models["scan"]["exchange"], models["scan-x"]["exchange"]);
        assert_eq!(models["b88"]["exchange"], models["blyp"]["exchange"]);
    }
}

#[test]
fn user_defined_models_come_from_a_models_file() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(
        dir.path().join("mine.yaml"),
        "models:\n  - name: xa-vwn\n    exchange: xalpha\n    alpha: 0.7\n    correlation: vwn5\n  - name: b88-pw92\n    exchange: b88\n    correlation: pw92\n",
    )
    .unwrap();
    let f = samples().join("lithium_hydride/orbital_002.cube.gz");
    let f = f.to_str().unwrap();
    let out = sixray(&["rank", "-f", "json", "--models-file", "mine.yaml", "-m", "xa-vwn", "-m", "b88-pw92", "-m", "lsda-vwn5", "-m", "blyp", "-m", "xalpha=0.7", f], dir.path());
    assert!(out.status.success(), "{}", stderr(&out));
    let m = &json(&out)["orbitals"][0]["models"];
    // The pairings are made of the same functionals as the built-in models.
    assert_eq!(m["xa-vwn"]["exchange"], m["xalpha=0.7"]["exchange"]);
    assert_eq!(m["xa-vwn"]["correlation"], m["lsda-vwn5"]["correlation"]);
    assert_eq!(m["b88-pw92"]["exchange"], m["blyp"]["exchange"]);

    let listing = stdout(&sixray(&["models", "--models-file", "mine.yaml"], dir.path()));
    assert!(listing.contains("xa-vwn") && listing.contains("Xα (α = 0.7) exchange + vwn5 correlation"), "{listing}");

    std::fs::write(dir.path().join("bad.yaml"), "models:\n  - name: a\n    exchange: b88\n  - name: b\n    exchange: b89\n").unwrap();
    let out = sixray(&["rank", "--models-file", "bad.yaml", f], dir.path());
    assert_eq!(out.status.code(), Some(2));
    let err = stderr(&out);
    assert!(err.contains("bad.yaml") && err.contains("unknown exchange functional `b89`") && err.contains("line 4"), "{err}");
}

#[test]
fn fail_above_gates_a_pipeline_with_status_three() {
    let dir = tempfile::tempdir().unwrap();
    let files: Vec<String> = std::fs::read_dir(samples().join("hydroxyl_radical"))
        .unwrap()
        .map(|e| e.unwrap().path().display().to_string())
        .collect();
    let run = |threshold: &str, units: &str| {
        let mut args = vec!["rank", "-f", "json", "--fail-above", threshold, "--units", units];
        args.extend(files.iter().map(String::as_str));
        sixray(&args, dir.path())
    };
    let all = json(&run("1e9", "hartree"));
    let worst = all["orbitals"][0]["models"]["lsda"]["self_interaction"].as_f64().unwrap().abs();
    // Just above the worst |δ|: success; just below: status 3, the offenders on stderr, the
    // report still on stdout.
    let ok = run(&format!("{}", worst * 1e3 * 1.0001), "millihartree");
    assert_eq!(ok.status.code(), Some(0), "{}", stderr(&ok));
    let over = run(&format!("{}", worst * 0.9999), "hartree");
    assert_eq!(over.status.code(), Some(3));
    assert_eq!(json(&over)["orbitals"].as_array().unwrap().len(), 9);
    let err = stderr(&over);
    assert!(err.contains("1 orbital(s) with |δ| above") && err.contains(all["orbitals"][0]["label"].as_str().unwrap()), "{err}");
    assert_eq!(run("-1", "hartree").status.code(), Some(2));
}

#[test]
fn cusp_correction_is_reported_and_can_be_switched_off() {
    let dir = tempfile::tempdir().unwrap();
    let f = samples().join("water/occupied.cube.gz");
    let f = f.to_str().unwrap();
    let on = json(&sixray(&["rank", "-f", "json", "--no-error-bars", f], dir.path()));
    let off = json(&sixray(&["rank", "-f", "json", "--no-error-bars", "--no-cusp-correction", f], dir.path()));
    let find = |v: &Value, label: &str| v["orbitals"].as_array().unwrap().iter().find(|o| o["label"] == label).unwrap().clone();
    // The oxygen 1s: a cusp model at the oxygen, and J changed by exactly the reported amount.
    let (core_on, core_off) = (find(&on, "occupied#1"), find(&off, "occupied#1"));
    let c = &core_on["cusp_correction"];
    assert!(c["nuclei"].as_u64().unwrap() >= 1, "{c}");
    let dj = c["hartree"].as_f64().unwrap();
    assert!(dj.abs() > 1e-3, "the coarse demo grid needs a sizeable correction: {dj}");
    let (j_on, j_off) = (core_on["hartree"].as_f64().unwrap(), core_off["hartree"].as_f64().unwrap());
    assert!((j_on - j_off - dj).abs() < 1e-12, "{j_on} − {j_off} vs {dj}");
    let dx = c["models"]["lsda"]["exchange"].as_f64().unwrap();
    let (x_on, x_off) = (core_on["models"]["lsda"]["exchange"].as_f64().unwrap(), core_off["models"]["lsda"]["exchange"].as_f64().unwrap());
    assert!((x_on - x_off - dx).abs() < 1e-12);
    assert!(core_off["cusp_correction"].is_null());
    // A p-like orbital (1b1, no s character at any nucleus) is left alone.
    let p_on = find(&on, "occupied#5");
    assert!(p_on["cusp_correction"].is_null() || p_on["cusp_correction"]["hartree"].as_f64().unwrap().abs() < 1e-4, "{}", p_on["cusp_correction"]);
}

#[test]
fn tail_correction_is_opt_in_reported_and_added() {
    // The demo lithium hydride's 2σ runs out of its box (about 0.01 electrons outside).
    let dir = tempfile::tempdir().unwrap();
    let f = samples().join("lithium_hydride/orbital_002.cube.gz");
    let f = f.to_str().unwrap();
    let plain = json(&sixray(&["rank", "-f", "json", f], dir.path()));
    let tailed = json(&sixray(&["rank", "-f", "json", "--tail-correction", f], dir.path()));
    let (p, t) = (&plain["orbitals"][0], &tailed["orbitals"][0]);
    assert!(p["tail_correction"].is_null(), "off by default: {}", p["tail_correction"]);
    let c = &t["tail_correction"];
    let lost = c["lost_charge"].as_f64().unwrap();
    assert!(lost > 1e-3 && (lost - p["lost_charge"].as_f64().unwrap()).abs() < 1e-15, "{c}");
    // J gains, exchange deepens, by exactly the reported amounts; the J bar shrinks (half of
    // the tail instead of all of it).
    let dj = c["hartree"].as_f64().unwrap();
    assert!(dj > 0.0, "{c}");
    let (j_t, j_p) = (t["hartree"].as_f64().unwrap(), p["hartree"].as_f64().unwrap());
    assert!((j_t - j_p - dj).abs() < 1e-12, "{j_t} − {j_p} vs {dj}");
    let dx = c["models"]["lsda"]["exchange"].as_f64().unwrap();
    assert!(dx < 0.0);
    let (x_t, x_p) = (t["models"]["lsda"]["exchange"].as_f64().unwrap(), p["models"]["lsda"]["exchange"].as_f64().unwrap());
    assert!((x_t - x_p - dx).abs() < 1e-12);
    assert!(t["errors"]["hartree"].as_f64().unwrap() < p["errors"]["hartree"].as_f64().unwrap());
    assert!(t["flags"].as_array().unwrap().iter().any(|f| f == "truncated-box"), "the box still cuts the orbital");
    // CSV carries the same in its tail columns.
    let csv = stdout(&sixray(&["rank", "-f", "csv", "--tail-correction", f], dir.path()));
    let header: Vec<&str> = csv.lines().next().unwrap().split(',').collect();
    let row: Vec<&str> = csv.lines().nth(1).unwrap().split(',').collect();
    let at = |name: &str| header.iter().position(|h| *h == name).unwrap_or_else(|| panic!("no column {name}"));
    assert!((row[at("tail_hartree")].parse::<f64>().unwrap() - dj).abs() < 1e-15);
    assert_eq!(at("tail_correlation"), at("tail_hartree") + 2);
    // Markdown shows the tail's ΔJ beside the cusp's, only when asked for.
    let md = stdout(&sixray(&["rank", "-f", "markdown", "--units", "hartree", "--tail-correction", f], dir.path()));
    assert!(md.contains("| tail ΔJ (Eh) |"), "{md}");
    let plain_md = stdout(&sixray(&["rank", "-f", "markdown", f], dir.path()));
    assert!(!plain_md.contains("tail ΔJ"), "{plain_md}");
}

/// A cube text of `value(r)` (r in bohr) on a cubic grid of `points` per axis and step `h` bohr
/// centred on the origin, listing `atoms` (Z, position in bohr). Invented data for these tests.
fn cube_of(title: &str, points: usize, h: f64, atoms: &[(i32, [f64; 3])], value: impl Fn([f64; 3]) -> f64) -> String {
    let o = -(points as f64 - 1.0) * h / 2.0;
    let mut s = format!("{title}\ninvented for the tests\n{:5}{:12.6}{:12.6}{:12.6}\n", atoms.len(), o, o, o);
    for a in 0..3 {
        let mut v = [0.0; 3];
        v[a] = h;
        let _ = writeln!(s, "{:5}{:12.6}{:12.6}{:12.6}", points, v[0], v[1], v[2]);
    }
    for (z, p) in atoms {
        let _ = writeln!(s, "{:5}{:12.6}{:12.6}{:12.6}{:12.6}", z, *z as f64, p[0], p[1], p[2]);
    }
    for i in 0..points {
        for j in 0..points {
            for k in 0..points {
                let _ = write!(s, "{:14.6E}", value([i, j, k].map(|x| o + x as f64 * h)));
                if k % 6 == 5 {
                    s.push('\n');
                }
            }
            s.push('\n');
        }
    }
    s
}

/// Hydrogenic 1s density of charge z at c (textbook): (z³/π) e^{−2z|r − c|}.
fn s_density(z: f64, c: [f64; 3], r: [f64; 3]) -> f64 {
    let d = ((r[0] - c[0]).powi(2) + (r[1] - c[1]).powi(2) + (r[2] - c[2]).powi(2)).sqrt();
    z.powi(3) / std::f64::consts::PI * (-2.0 * z * d).exp()
}

#[test]
fn a_total_density_is_refused_with_a_pointer_to_inspect() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    // An invented lithium-hydride-like total density: two electrons in a 1s of charge 2.7 and
    // one in a 1s of charge 0.7 on Li, one in a hydrogen 1s on H — four electrons, Σ Z = 4.
    let (li, h) = ([0.0, 0.0, -1.5], [0.0, 0.0, 1.5]);
    let rho = |r: [f64; 3]| 2.0 * s_density(2.7, li, r) + s_density(0.7, li, r) + s_density(1.0, h, r);
    std::fs::write(p.join("total.cube"), cube_of("density", 81, 0.2, &[(3, li), (1, h)], rho)).unwrap();
    std::fs::write(p.join("good.cube"), gaussian_cube(21, 0.5, false, false)).unwrap();
    // Refused whatever --kind says: a total density is neither kind of one orbital.
    for kind in ["auto", "density", "amplitude"] {
        let out = sixray(&["rank", "-f", "json", "--kind", kind, "total.cube", "good.cube"], p);
        assert_eq!(out.status.code(), Some(2), "{kind}: {}", stderr(&out));
        let err = stderr(&out);
        assert!(err.contains("total.cube: a total electron density, not an orbital"), "{err}");
        assert!(err.contains("sixray inspect total.cube"), "{err}");
        // ∫ρ over the 8 bohr box: 4 electrons up to the grid's error (0.2 bohr, Z·h = 0.54 at
        // the core) and what lies outside.
        let electrons: f64 = err.split("integrate to ").nth(1).and_then(|t| t.split(' ').next()).unwrap().parse().unwrap();
        assert!((electrons - 4.0).abs() < 0.1, "{err}");
        let v = json(&out);
        assert_eq!(v["orbitals"].as_array().unwrap().len(), 1, "the good file is still ranked");
        assert_eq!(v["failures"][0]["source"], "total.cube");
    }
    // The reference densities of the shared set are refused likewise.
    let Some(shared) = shared_dir("a_total_density_is_refused_with_a_pointer_to_inspect") else { return };
    let water = shared.join("reference/water/density.cube.gz");
    let out = sixray(&["rank", "--no-error-bars", water.to_str().unwrap()], p);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("a total electron density") && stderr(&out).contains("sixray inspect"), "{}", stderr(&out));
}

#[test]
fn grids_too_coarse_for_any_number_are_refused() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    // The normalised Gaussian on 5 points 2.5 bohr apart, and on 1 bohr steps (the limit).
    std::fs::write(p.join("coarse.cube"), gaussian_cube(5, 2.5, false, false)).unwrap();
    std::fs::write(p.join("limit.cube"), gaussian_cube(13, 1.0, false, false)).unwrap();
    let out = sixray(&["rank", "-f", "json", "coarse.cube"], p);
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    let err = stderr(&out);
    assert!(err.contains("coarse.cube: grid too coarse") && err.contains("2.500 bohr") && err.contains("5 × 5 × 5"), "{err}");
    assert!(err.contains("at most 1 bohr"), "{err}");
    assert!(!err.contains("inspect"), "an orbital titled so is no total density: {err}");
    assert!(json(&out)["orbitals"].as_array().unwrap().is_empty());
    let out = sixray(&["rank", "-f", "json", "limit.cube"], p);
    assert!(out.status.success(), "{}", stderr(&out));
    // Real cubegen total densities on 5 and 6 points per axis (2.5 bohr steps).
    let Some(shared) = shared_dir("grids_too_coarse_for_any_number_are_refused") else { return };
    for (name, step) in [("cubegen_h2o_5points.cube", "2.485"), ("cubegen_ch4_6points.cube", "2.605")] {
        let f = shared.join("real-world").join(name);
        let out = sixray(&["rank", f.to_str().unwrap()], p);
        assert_eq!(out.status.code(), Some(2), "{name}");
        let err = stderr(&out);
        assert!(err.contains(&format!("{name}: grid too coarse")) && err.contains(step), "{err}");
        assert!(err.contains("if it is a total density") && err.contains("sixray inspect"), "{err}");
    }
}

#[test]
fn a_squared_amplitude_sample_is_detected_as_a_density() {
    use std::io::Read;
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    let mut text = String::new();
    let sample = samples().join("lithium_hydride/orbital_002.cube.gz");
    flate2::read::GzDecoder::new(std::fs::File::open(&sample).unwrap()).read_to_string(&mut text).unwrap();
    // Header: two titles, origin, three axes, two atoms; then the values, squared (the title,
    // which speaks of an orbital, stays: the values overrule it).
    let mut lines = text.lines();
    let mut squared: String = lines.by_ref().take(8).map(|l| format!("{l}\n")).collect();
    for l in lines {
        let row: Vec<String> = l.split_whitespace().map(|v| format!("{:14.6E}", v.parse::<f64>().unwrap().powi(2))).collect();
        squared += &(row.concat() + "\n");
    }
    std::fs::write(p.join("squared.cube"), squared).unwrap();
    let run = |args: &[&str]| {
        let out = sixray(args, p);
        assert!(out.status.success(), "{args:?}: {}", stderr(&out));
        json(&out)["orbitals"][0].clone()
    };
    let mut auto = run(&["rank", "-f", "json", "-m", "lsda", "-m", "pbe", "squared.cube"]);
    let mut given = run(&["rank", "-f", "json", "-m", "lsda", "-m", "pbe", "--kind", "density", "squared.cube"]);
    assert_eq!((auto["kind"].as_str(), auto["kind_source"].as_str()), (Some("density"), Some("detected")));
    assert_eq!((given["kind"].as_str(), given["kind_source"].as_str()), (Some("density"), Some("given")));
    assert_eq!(auto["kind_evidence"]["title"], "amplitude");
    // Every number the same.
    for o in [&mut auto, &mut given] {
        o.as_object_mut().unwrap().remove("kind_source");
    }
    assert_eq!(auto, given);
    // The amplitudes themselves are detected as such.
    let amplitude = run(&["rank", "-f", "json", sample.to_str().unwrap()]);
    assert_eq!((amplitude["kind"].as_str(), amplitude["kind_source"].as_str()), (Some("amplitude"), Some("detected")));
    assert!(amplitude["kind_evidence"]["negative_share"].as_f64().unwrap() > 1e-3);
}

#[test]
fn a_file_without_occupied_orbitals_is_a_failure() {
    let dir = tempfile::tempdir().unwrap();
    let p = dir.path();
    // One hydrogen s function, its orbital written with occupation 0 (invented).
    let molden = "[Molden Format]\n[Atoms] AU\nH 1 1 0.0 0.0 0.0\n[GTO]\n  1 0\ns 1 1.00\n  0.5 1.0\n\n[MO]\n Sym= A\n Ene= 0.5\n Spin= Alpha\n Occup= 0.0\n  1 1.0\n";
    std::fs::write(p.join("empty.molden"), molden).unwrap();
    std::fs::write(p.join("full.molden"), molden.replace("Occup= 0.0", "Occup= 1.0")).unwrap();
    let out = sixray(&["rank", "-f", "json", "empty.molden", "full.molden"], p);
    assert_eq!(out.status.code(), Some(2), "{}", stderr(&out));
    let err = stderr(&out);
    assert!(err.contains("empty.molden: no occupied orbitals: the file lists 1 orbital(s), none occupied: every `Occup=` is 0"), "{err}");
    let v = json(&out);
    assert_eq!(v["failures"][0]["source"], "empty.molden");
    assert_eq!(v["orbitals"].as_array().unwrap().len(), 1);
    // Localized: the same failure.
    let out = sixray(&["rank", "--orbitals", "localized", "empty.molden"], p);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("no occupied orbitals"), "{}", stderr(&out));
    // A workflow marks the calculation failed, with the reason.
    std::fs::write(p.join("set.yaml"), "calculations:\n  - name: empty\n    files: [empty.molden]\n  - name: full\n    files: [full.molden]\nmodels: [lsda]\nreport:\n  dir: out\n  formats: [json]\n").unwrap();
    let run = sixray(&["batch", "set.yaml", "--quiet"], p);
    assert_eq!(run.status.code(), Some(1), "{}", stderr(&run));
    let report: Value = serde_json::from_slice(&std::fs::read(p.join("out/report.json")).unwrap()).unwrap();
    let calcs = report["calculations"].as_array().unwrap();
    assert_eq!((calcs[0]["status"].as_str(), calcs[1]["status"].as_str()), (Some("failed"), Some("ok")));
    assert!(calcs[0]["failures"][0]["error"].as_str().unwrap().contains("no occupied orbitals"), "{}", calcs[0]);
    // The CFOUR file with a d shell only, every occupation 0.
    let Some(shared) = shared_dir("a_file_without_occupied_orbitals_is_a_failure") else { return };
    let f = shared.join("real-world/h_donly_sph_cfour.molden");
    let out = sixray(&["rank", f.to_str().unwrap()], p);
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("h_donly_sph_cfour.molden: no occupied orbitals"), "{}", stderr(&out));
}

/// Small things a user trips over: model names in any case, an empty `--top`, a basis-set file
/// given to `inspect`.
#[test]
fn model_names_in_any_case_an_empty_top_and_inspect_on_a_basis_file() {
    let dir = tempfile::tempdir().unwrap();
    let sample = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("samples/lithium_hydride/orbital_001.cube.gz");
    let f = sample.to_str().unwrap();
    let out = sixray(&["rank", "-f", "json", "--no-error-bars", "-m", "PBE", "--rank-by", "Pbe", f], dir.path());
    assert_eq!(out.status.code(), Some(0), "{}", stderr(&out));
    let report: serde_json::Value = serde_json::from_slice(&out.stdout).unwrap();
    assert_eq!(report["rank_by"], "pbe");
    assert_eq!(report["models"].as_array().unwrap().len(), 1, "PBE and Pbe are one model");

    let out = sixray(&["rank", "--top", "0", f], dir.path());
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("--top must be at least 1"), "{}", stderr(&out));

    let out = sixray(&["rank", "-m", "xalpha=1e308", f], dir.path());
    assert_eq!(out.status.code(), Some(2));
    assert!(stderr(&out).contains("at most 2"), "{}", stderr(&out));

    let molden = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/data/basis/spherical.molden");
    let out = sixray(&["inspect", molden.to_str().unwrap()], dir.path());
    let text = format!("{}{}", stdout(&out), stderr(&out));
    assert_ne!(out.status.code(), Some(0), "{text}");
    assert!(text.contains("a molden basis-set file") && text.contains("sixray rank"), "{text}");
}
