//! Faults of input and output, through the real binary: report and output paths that cannot be
//! written (found before any input is read), temporary files a killed run left, report sets
//! switched as a whole, pipes and standard input in every format, a uniform-grid spacing given
//! for cube files, and messages that speak to a user rather than name the code.
//!
//! Tests run as root here, where permission bits stop nothing: the unwritable paths are a path
//! under a regular file, a regular file where a directory belongs, and a directory under /proc.

use crate::common::{shared_dir, sixray, stderr, stdout};
use serde_json::Value;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn bin() -> &'static str {
    env!("CARGO_BIN_EXE_sixray")
}

fn json(o: &Output) -> Value {
    serde_json::from_slice(&o.stdout).unwrap_or_else(|e| panic!("{e}: {}\n{}", stdout(o), stderr(o)))
}

/// A workflow in `dir` over copies of the lithium hydride samples (two small orbitals; no error
/// bars, so that a run takes a fraction of a second), reports in `out`.
fn lih_workflow(dir: &Path, models: &str, extra: &str) -> PathBuf {
    let grids = dir.join("grids");
    std::fs::create_dir_all(&grids).unwrap();
    for e in std::fs::read_dir(root().join("samples/lithium_hydride")).unwrap() {
        let e = e.unwrap();
        std::fs::copy(e.path(), grids.join(e.file_name())).unwrap();
    }
    let yaml = format!(
        "calculations:\n  - name: lithium hydride\n    files: [grids/*.gz]\nmodels: [{models}]\nreport:\n  dir: out\n{extra}options:\n  error_bars: false\n"
    );
    let path = dir.join("set.yaml");
    std::fs::write(&path, yaml).unwrap();
    path
}

/// A workflow in `dir` whose one input is not a file sixray reads: a run that reads its inputs
/// says so ("not a file sixray reads"); a run stopped before any input is read does not.
fn broken_workflow(dir: &Path, report_dir: &str) -> PathBuf {
    std::fs::write(dir.join("broken.cube"), "this is no cube file\n").unwrap();
    let path = dir.join("broken.yaml");
    std::fs::write(&path, format!("calculations:\n  - name: a\n    files: [broken.cube]\nmodels: [lsda]\nreport:\n  dir: {report_dir}\n")).unwrap();
    path
}

/// Asserts a refusal before any work: status 2, nothing on standard output, the message naming
/// `path` and containing `why`, and neither the input's own error nor a temporary file's name.
fn refused_before_work(run: &Output, path: &str, why: &str) {
    let err = stderr(run);
    assert_eq!(run.status.code(), Some(2), "{err}");
    assert!(stdout(run).is_empty(), "nothing may be reported: {}", stdout(run));
    assert!(err.contains(path) && err.contains(why), "the message names {path} and says {why:?}: {err}");
    for read in ["not a file sixray reads", "no format sixray reads"] {
        assert!(!err.contains(read), "no input may be read first: {err}");
    }
    assert!(!err.contains(".sixray-") || err.contains(".sixray-cache"), "no temporary file's name: {err}");
}

#[test]
fn unwritable_report_directories_are_refused_before_any_input_is_read() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("blocker"), "a regular file").unwrap();
    let wf = broken_workflow(dir.path(), "out");
    let wf = wf.to_str().unwrap();

    // --out below a regular file, --out naming a regular file, a directory under /proc.
    let run = sixray(&["batch", wf, "--out", "blocker/sub"], dir.path());
    refused_before_work(&run, "blocker/sub", "blocker is a file, not a directory");
    let run = sixray(&["batch", wf, "--out", "blocker"], dir.path());
    refused_before_work(&run, "blocker", "is a file, not a directory");
    let run = sixray(&["batch", wf, "--out", "/proc/sixray-reports"], dir.path());
    refused_before_work(&run, "/proc/sixray-reports", "report directory");

    // The workflow's own report directory.
    let wf = broken_workflow(dir.path(), "blocker/reports");
    let run = sixray(&["batch", wf.to_str().unwrap()], dir.path());
    refused_before_work(&run, "blocker/reports", "blocker is a file, not a directory");

    // A result cache that cannot be written: `.sixray-cache` taken by a file.
    let wf = broken_workflow(dir.path(), "cached");
    std::fs::create_dir(dir.path().join("cached")).unwrap();
    std::fs::write(dir.path().join("cached/.sixray-cache"), "").unwrap();
    let run = sixray(&["batch", wf.to_str().unwrap()], dir.path());
    refused_before_work(&run, "cached/.sixray-cache", "cache: false");
}

#[test]
fn unwritable_output_files_are_refused_before_any_input_is_read() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("blocker"), "a regular file").unwrap();
    std::fs::write(dir.path().join("broken.cube"), "this is no cube file\n").unwrap();
    std::fs::create_dir(dir.path().join("adir")).unwrap();
    for command in ["rank", "inspect"] {
        for (output, why) in [
            ("blocker/report.json", "blocker is a file, not a directory"),
            ("adir", "it is a directory"),
            ("missing/report.json", "the directory missing does not exist"),
            ("/proc/sixray-report.json", "--output"),
        ] {
            let run = sixray(&[command, "broken.cube", "--output", output], dir.path());
            refused_before_work(&run, output, why);
        }
    }
    // Standard input is not read either (empty, it would be "not a file sixray reads").
    let run = with_stdin(&["rank", "-", "--output", "blocker/x.json"], dir.path(), b"");
    refused_before_work(&run, "blocker/x.json", "blocker is a file");
}

/// This host's name as sixray writes it into temporary file names (Linux only).
fn host() -> String {
    let raw = std::fs::read_to_string("/proc/sys/kernel/hostname").unwrap_or_default();
    let name: String =
        raw.trim().chars().take(64).map(|c| if c.is_ascii_alphanumeric() || matches!(c, '.' | '-' | '_') { c } else { '_' }).collect();
    if name.is_empty() { "localhost".into() } else { name }
}

/// The process id of a process that has exited.
fn dead_pid() -> u32 {
    let mut child = Command::new("true").spawn().unwrap();
    let pid = child.id();
    child.wait().unwrap();
    pid
}

fn temporaries(dir: &Path) -> Vec<String> {
    let mut names: Vec<String> = std::fs::read_dir(dir)
        .map(|d| d.flatten().map(|e| e.file_name().to_string_lossy().into_owned()).filter(|n| n.ends_with(".tmp")).collect())
        .unwrap_or_default();
    names.sort();
    names
}

#[test]
fn temporary_files_of_killed_runs_go_and_those_of_running_ones_stay() {
    if !cfg!(target_os = "linux") {
        return;
    }
    let dir = tempfile::tempdir().unwrap();
    let wf = lih_workflow(dir.path(), "lsda", "");
    let wf = wf.to_str().unwrap();
    let out = dir.path().join("out");
    let cache = out.join(".sixray-cache");
    std::fs::create_dir_all(&cache).unwrap();
    let (host, dead, alive) = (host(), dead_pid(), std::process::id());
    let hour_ago = std::time::SystemTime::now() - std::time::Duration::from_secs(2 * 3600);
    let put = |d: &Path, name: &str, old: bool| {
        let f = std::fs::File::create(d.join(name)).unwrap();
        if old {
            f.set_modified(hour_ago).unwrap();
        }
    };
    for d in [&out, &cache] {
        put(d, &format!(".sixray-{host}-{dead}-0.tmp"), false); // a killed run's, on this host
        put(d, &format!(".sixray-{host}-{alive}-0.tmp"), true); // a running process's, however old
        put(d, &format!(".sixray-otherhost-{dead}-0.tmp"), false); // another host's, recent
        put(d, ".sixray-Xy7Qz1.tmp", true); // an earlier version's, two hours old
        put(d, "notes.tmp", true); // not ours
    }
    let run = sixray(&["batch", wf, "--quiet"], dir.path());
    assert_eq!(run.status.code(), Some(0), "{}", stderr(&run));
    for d in [&out, &cache] {
        let mut kept = vec![format!(".sixray-{host}-{alive}-0.tmp"), format!(".sixray-otherhost-{dead}-0.tmp"), "notes.tmp".into()];
        kept.sort();
        assert_eq!(temporaries(d), kept, "in {}", d.display());
    }

    // A run killed after staging its reports, before any is in place, leaves the earlier set
    // whole and its temporary files behind; the next run removes them.
    for d in [&out, &cache] {
        for name in temporaries(d) {
            std::fs::remove_file(d.join(name)).unwrap();
        }
    }
    let killed = Command::new(bin()).args(["batch", wf, "--quiet"]).current_dir(dir.path()).env("SIXRAY_TEST_CRASH_AFTER_REPORTS", "0").output().unwrap();
    assert!(!killed.status.success());
    assert_eq!(temporaries(&out).len(), 4, "the four staged reports: {:?}", temporaries(&out));
    assert!(temporaries(&out).iter().all(|n| n.starts_with(&format!(".sixray-{host}-"))));
    let run = sixray(&["batch", wf, "--quiet"], dir.path());
    assert_eq!(run.status.code(), Some(0), "{}", stderr(&run));
    assert!(stderr(&run).is_empty(), "the set was whole: {}", stderr(&run));
    assert!(temporaries(&out).is_empty(), "{:?}", temporaries(&out));
}

/// The report set's id each report carries (`None` where it carries none).
fn ids(out: &Path) -> Vec<(&'static str, Option<String>)> {
    let md = std::fs::read_to_string(out.join("report.md")).unwrap();
    let md_id = md.lines().last().and_then(|l| l.strip_prefix("Report set `")).map(|l| l[..16].to_string());
    let json: Value = serde_json::from_slice(&std::fs::read(out.join("report.json")).unwrap()).unwrap();
    let html = std::fs::read_to_string(out.join("report.html")).unwrap();
    let html_id = html.split("Report set <code>").nth(1).map(|l| l[..16].to_string());
    vec![("report.md", md_id), ("report.json", json["report_set"].as_str().map(str::to_string)), ("report.html", html_id)]
}

/// The manifest's id, and the files whose bytes are not the ones it lists.
fn against_manifest(out: &Path) -> (String, Vec<String>) {
    let manifest: Value = serde_json::from_slice(&std::fs::read(out.join("report-set.json")).unwrap()).unwrap();
    let off = manifest["files"]
        .as_object()
        .unwrap()
        .iter()
        .filter(|(name, digest)| blake3::hash(&std::fs::read(out.join(name)).unwrap()).to_hex().as_str() != digest.as_str().unwrap())
        .map(|(name, _)| name.clone())
        .collect();
    (manifest["report_set"].as_str().unwrap().to_string(), off)
}

#[test]
fn a_run_killed_between_two_reports_leaves_a_set_that_shows_it_is_mixed() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    let wf = lih_workflow(dir.path(), "lsda", "");
    let wf = wf.to_str().unwrap();
    let batch = |crash: Option<&str>| {
        let mut c = Command::new(bin());
        c.args(["batch", wf, "--quiet", "--date", "2024-05-01"]).current_dir(dir.path());
        if let Some(n) = crash {
            c.env("SIXRAY_TEST_CRASH_AFTER_REPORTS", n);
        }
        c.output().unwrap()
    };

    // A whole set: every report carries the manifest's id and has the bytes it lists.
    let run = batch(None);
    assert_eq!(run.status.code(), Some(0), "{}", stderr(&run));
    let (first, off) = against_manifest(&out);
    assert!(off.is_empty(), "{off:?}");
    assert_eq!(first.len(), 16);
    assert!(ids(&out).iter().all(|(_, id)| id.as_deref() == Some(first.as_str())), "{:?}", ids(&out));
    let manifest: Value = serde_json::from_slice(&std::fs::read(out.join("report-set.json")).unwrap()).unwrap();
    let listed: Vec<&str> = manifest["files"].as_object().unwrap().keys().map(String::as_str).collect();
    assert_eq!(listed, ["report.md", "orbitals.csv", "report.json", "report.html"]);
    // The id follows the content, not the run: a rerun writes the same bytes.
    let before: Vec<Vec<u8>> = listed.iter().map(|n| std::fs::read(out.join(n)).unwrap()).collect();
    assert_eq!(batch(None).status.code(), Some(0));
    assert_eq!(against_manifest(&out).0, first);
    assert!(listed.iter().zip(&before).all(|(n, b)| &std::fs::read(out.join(n)).unwrap() == b));

    // Other results (a second model), killed once the first report is in place.
    lih_workflow(dir.path(), "lsda, pbe", "");
    let killed = batch(Some("1"));
    assert!(!killed.status.success(), "the hook aborts the run");
    let (manifest_id, off) = against_manifest(&out);
    assert_eq!(manifest_id, first, "the manifest still names the earlier set");
    assert_eq!(off, ["report.md"], "only the first report is new, and it does not match the manifest");
    let now = ids(&out);
    assert_eq!(now[1].1.as_deref(), Some(first.as_str()), "report.json is the earlier set's");
    assert_eq!(now[2].1.as_deref(), Some(first.as_str()), "report.html is the earlier set's");
    let second = now[0].1.clone().expect("report.md carries an id");
    assert_ne!(second, first, "report.md is the new set's, and says so");
    assert!(std::fs::read_to_string(out.join("report.md")).unwrap().contains("| pbe"));
    assert!(!std::fs::read_to_string(out.join("orbitals.csv")).unwrap().contains(",pbe,"));

    // The next run says so and replaces the set whole.
    let run = batch(None);
    assert_eq!(run.status.code(), Some(0), "{}", stderr(&run));
    let err = stderr(&run);
    assert!(err.contains("not one set") && err.contains("report.md is not the one report-set.json lists"), "{err}");
    let (manifest_id, off) = against_manifest(&out);
    assert!(off.is_empty(), "{off:?}");
    assert_eq!(manifest_id, second, "the same results give the same id");
    assert!(ids(&out).iter().all(|(_, id)| id.as_deref() == Some(second.as_str())));
    assert!(std::fs::read_to_string(out.join("orbitals.csv")).unwrap().contains(",pbe,"));
    assert!(temporaries(&out).is_empty(), "{:?}", temporaries(&out));

    // Reports of a format no longer asked for go with the set they belonged to.
    lih_workflow(dir.path(), "lsda, pbe", "  formats: [json]\n");
    let run = batch(None);
    assert_eq!(run.status.code(), Some(0), "{}", stderr(&run));
    for gone in ["report.md", "orbitals.csv", "report.html"] {
        assert!(!out.join(gone).exists(), "{gone} of the earlier set is left");
    }
    assert!(against_manifest(&out).1.is_empty());
}

/// Runs sixray with `args` and `input` on its standard input.
fn with_stdin(args: &[&str], dir: &Path, input: &[u8]) -> Output {
    let mut child = Command::new(bin())
        .args(args)
        .current_dir(dir)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    let mut stdin = child.stdin.take().unwrap();
    let bytes = input.to_vec();
    // Written from another thread, so that a reader that stops early cannot block the test.
    let writer = std::thread::spawn(move || {
        let _ = stdin.write_all(&bytes);
    });
    let out = child.wait_with_output().unwrap();
    writer.join().unwrap();
    out
}

fn gzip(bytes: &[u8]) -> Vec<u8> {
    let mut e = flate2::write::GzEncoder::new(Vec::new(), flate2::Compression::fast());
    e.write_all(bytes).unwrap();
    e.finish().unwrap()
}

/// The numbers of a `rank -f json` report, orbital by orbital in rank order: J and each model's
/// exchange, correlation and δ (labels and sources differ with the way the file came in).
fn numbers(report: &Value) -> Vec<Vec<f64>> {
    report["orbitals"]
        .as_array()
        .unwrap()
        .iter()
        .map(|o| {
            let mut v = vec![o["hartree"].as_f64().unwrap()];
            for m in o["models"].as_object().unwrap().values() {
                for q in ["exchange", "correlation", "self_interaction"] {
                    v.push(m[q].as_f64().unwrap());
                }
            }
            v
        })
        .collect()
}

#[test]
fn standard_input_pipes_and_process_substitution_read_every_format() {
    let dir = tempfile::tempdir().unwrap();
    let cube_gz = std::fs::read(root().join("samples/lithium_hydride/orbital_002.cube.gz")).unwrap();
    let cube = {
        let mut text = Vec::new();
        std::io::Read::read_to_end(&mut flate2::read::GzDecoder::new(&cube_gz[..]), &mut text).unwrap();
        text
    };
    let molden = std::fs::read(root().join("tests/data/basis/spherical.molden")).unwrap();
    let mut inputs: Vec<(String, Vec<u8>)> = vec![
        ("orbital.cube".into(), cube),
        ("orbital.cube.gz".into(), cube_gz),
        ("orbitals.molden".into(), molden.clone()),
        ("orbitals.molden.gz".into(), gzip(&molden)),
    ];
    // reference: the shared real-world files (written by Gaussian and an AIM converter)
    if let Some(shared) = shared_dir("standard_input_pipes_and_process_substitution_read_every_format") {
        for name in ["h2o_sto3g.fchk", "h2o_sto3g.wfn", "lih_cation_uhf.wfx"] {
            let bytes = std::fs::read(shared.join("real-world").join(name)).unwrap();
            inputs.push((format!("{name}.gz"), gzip(&bytes)));
            inputs.push((name.into(), bytes));
        }
    }
    fn rank(file: &str) -> Vec<&str> {
        let mut args = vec!["rank", "-f", "json", "-m", "lsda", "-m", "pbe", "--no-error-bars", "--grid-level", "coarse"];
        args.push(file);
        args
    }
    for (name, bytes) in &inputs {
        let file = dir.path().join(name);
        std::fs::write(&file, bytes).unwrap();
        let reference = sixray(&rank(file.to_str().unwrap()), dir.path());
        assert_eq!(reference.status.code(), Some(0), "{name}: {}", stderr(&reference));
        let expected = numbers(&json(&reference));
        assert!(!expected.is_empty(), "{name}");

        // `-` and /dev/stdin, fed by this process through a pipe.
        for arg in ["-", "/dev/stdin"] {
            let run = with_stdin(&rank(arg), dir.path(), bytes);
            assert_eq!(run.status.code(), Some(0), "{name} as {arg}: {}", stderr(&run));
            let report = json(&run);
            assert_eq!(numbers(&report), expected, "{name} as {arg}");
            let source = if arg == "-" { "(stdin)" } else { "/dev/stdin" };
            assert!(report["orbitals"].as_array().unwrap().iter().all(|o| o["source"] == source), "{name} as {arg}");
        }

        // A named pipe, written by another thread.
        let fifo = dir.path().join("fifo");
        let _ = std::fs::remove_file(&fifo);
        assert!(Command::new("mkfifo").arg(&fifo).status().unwrap().success());
        let (path, data) = (fifo.clone(), bytes.clone());
        let writer = std::thread::spawn(move || {
            let _ = std::fs::OpenOptions::new().write(true).open(path).and_then(|mut f| f.write_all(&data));
        });
        let run = sixray(&rank(fifo.to_str().unwrap()), dir.path());
        writer.join().unwrap();
        assert_eq!(run.status.code(), Some(0), "{name} through a named pipe: {}", stderr(&run));
        assert_eq!(numbers(&json(&run)), expected, "{name} through a named pipe");

        // Process substitution, as a shell passes it (/dev/fd/N).
        let script = format!("exec \"$0\" {} <(cat \"$1\")", rank("").join(" ").trim_end());
        let run = Command::new("bash").args(["-c", &script, bin(), file.to_str().unwrap()]).current_dir(dir.path()).output().unwrap();
        assert_eq!(run.status.code(), Some(0), "{name} through <(…): {}", stderr(&run));
        assert_eq!(numbers(&json(&run)), expected, "{name} through <(…)");
    }

    // What is no known format says so about standard input, by its name.
    let run = with_stdin(&rank("-"), dir.path(), b"hello\n");
    assert_eq!(run.status.code(), Some(2));
    assert!(stderr(&run).contains("(stdin): not a file sixray reads"), "{}", stderr(&run));
    // And `inspect` takes it too.
    let density = std::fs::read(root().join("samples/lithium_hydride/orbital_002.cube.gz")).unwrap();
    let run = with_stdin(&["inspect", "-", "--format", "json"], dir.path(), &density);
    assert!(stdout(&run).contains("(stdin)"), "{}{}", stdout(&run), stderr(&run));
}

#[test]
fn a_uniform_grid_for_cube_files_is_refused_and_named_when_mixed() {
    let dir = tempfile::tempdir().unwrap();
    let cube = root().join("samples/lithium_hydride/orbital_002.cube.gz");
    let cube = cube.to_str().unwrap();
    let molden = root().join("tests/data/basis/spherical.molden");
    let molden = molden.to_str().unwrap();

    let run = sixray(&["rank", cube, "--grid", "0.3"], dir.path());
    let err = stderr(&run);
    assert_eq!(run.status.code(), Some(2), "{err}");
    assert!(stdout(&run).is_empty());
    assert!(err.contains("--grid") && err.contains("orbital_002.cube.gz") && err.contains("leave --grid out"), "{err}");

    // Beside a basis-set file it applies to that one; the cube file is named as read as it is.
    let run = sixray(&["rank", molden, cube, "--grid", "0.3", "--no-error-bars", "-f", "json"], dir.path());
    let err = stderr(&run);
    assert_eq!(run.status.code(), Some(0), "{err}");
    assert!(err.contains("warning: --grid applies to basis-set files only") && err.contains("orbital_002.cube.gz"), "{err}");
    assert!(!err.contains("spherical.molden"), "{err}");
    assert_eq!(json(&run)["orbitals"].as_array().unwrap().len(), 4);

    // A workflow's uniform_grid on a calculation of cube files: an invalid workflow.
    let wf = lih_workflow(dir.path(), "lsda", "");
    let text = std::fs::read_to_string(&wf).unwrap().replace("    files: [grids/*.gz]\n", "    files: [grids/*.gz]\n    uniform_grid: 0.2\n");
    std::fs::write(&wf, text).unwrap();
    let run = sixray(&["batch", wf.to_str().unwrap()], dir.path());
    let err = stderr(&run);
    assert_eq!(run.status.code(), Some(2), "{err}");
    assert!(err.contains("invalid workflow") && err.contains("calculation lithium hydride: uniform_grid") && err.contains("orbital_001.cube.gz"), "{err}");
    assert!(!dir.path().join("out").exists(), "nothing may run");
}

#[test]
fn help_and_messages_speak_to_a_user() {
    let dir = tempfile::tempdir().unwrap();
    let help = sixray(&["--help"], dir.path());
    let tagline = stdout(&help).lines().next().unwrap_or_default().to_string();
    for format in ["cube", "molden", "fchk", "wfn", "wfx"] {
        assert!(tagline.contains(format), "{tagline}");
    }
    let help = stdout(&sixray(&["rank", "--help"], dir.path()));
    assert!(help.contains("fchk") && help.contains("`-` reads standard input"), "{help}");

    // A cube header claiming a grid beyond the limit: the limit for a user, no parameter names.
    let mut text = String::from("huge\ngrid\n    1    0.0    0.0    0.0\n");
    for axis in 0..3 {
        let step = [0.1, 0.0, 0.0];
        let rotated = [step[(3 - axis) % 3], step[(4 - axis) % 3], step[(5 - axis) % 3]];
        text += &format!(" 5000 {} {} {}\n", rotated[0], rotated[1], rotated[2]);
    }
    text += "    1    1.0    0.0    0.0    0.0\n 1.0\n";
    std::fs::write(dir.path().join("huge.cube"), text).unwrap();
    let run = sixray(&["rank", "huge.cube"], dir.path());
    let err = stderr(&run);
    assert_eq!(run.status.code(), Some(2), "{err}");
    assert!(err.contains("huge.cube:6") && err.contains("memory limit for one grid"), "{err}");
    assert!(!err.contains("::") && !err.contains("max_values") && !err.contains("ReadParams"), "{err}");
}
