//! Workflow YAML from memory (`Workflow::from_text`), against a small directory of orbital
//! files the patterns may match.
#![no_main]

use std::path::PathBuf;
use std::sync::OnceLock;

use libfuzzer_sys::fuzz_target;
use sixray::batch::Workflow;
use sixray_fuzz::scratch_dir;

/// Files the seeds' patterns name (empty: the workflow reader only checks that they exist).
const FILES: [&str; 5] =
    ["a/orbital_001.cube", "a/orbital_002.cube", "b/orbital_alpha_001.cube", "b/orbital_beta_001.cube", "density.cube"];

/// The virtual workflow file, beside the files above.
fn workflow_path() -> &'static PathBuf {
    static PATH: OnceLock<PathBuf> = OnceLock::new();
    PATH.get_or_init(|| {
        let dir = scratch_dir().join("set");
        for f in FILES {
            let p = dir.join(f);
            std::fs::create_dir_all(p.parent().expect("a parent")).expect("scratch tree");
            std::fs::write(p, "").expect("scratch file");
        }
        dir.join("set.yaml")
    })
}

/// Whether every file pattern stays inside the scratch directory: no absolute paths, no
/// `..`, no recursive `**` and no escapes that could spell them. Globbing the machine's
/// whole file system is what such a workflow asks for, not a fault, and would make runs slow
/// and dependent on the machine; these inputs are skipped.
fn stays_inside(text: &str) -> bool {
    let b = text.as_bytes();
    !text.contains("..")
        && !text.contains("**")
        && !text.contains('\\')
        && b.iter().enumerate().all(|(i, &c)| {
            c != b'/' || i > 0 && (b[i - 1].is_ascii_alphanumeric() || b"_.*?]-".contains(&b[i - 1]))
        })
}

/// Lines of `text` as YAML 1.1 (libyaml, under serde_yaml) counts them: CR LF, a lone CR,
/// LF, NEL, LS and PS each end one.
fn yaml_line_count(text: &str) -> usize {
    let breaks = text.replace("\r\n", "\n").chars().filter(|c| matches!(c, '\r' | '\n' | '\u{85}' | '\u{2028}' | '\u{2029}')).count();
    breaks + 1
}

fuzz_target!(|data: &[u8]| {
    let Ok(text) = std::str::from_utf8(data) else { return };
    if !stays_inside(text) {
        return;
    }
    let path = workflow_path();
    let w = match Workflow::from_text(text, path) {
        Ok(w) => w,
        Err(e) => {
            assert_eq!(&e.path, path);
            assert!(!e.message.is_empty());
            // serde_yaml's positions: "at line N column M", lines as YAML counts them.
            let lines = yaml_line_count(text);
            for (i, _) in e.message.match_indices("at line ") {
                let digits: String = e.message[i + 8..].chars().take_while(char::is_ascii_digit).collect();
                let n: usize = digits.parse().expect("a line number after \"at line\"");
                assert!(n >= 1 && n <= lines + 1, "line {n} of {lines}: {}", e.message);
            }
            return;
        }
    };
    // A checked workflow: something to run, every name once, every file existing and
    // listed once per calculation, values within the ranges the reader checks.
    assert!(!w.calculations.is_empty() && !w.models.is_empty());
    assert!(w.rank_by < w.models.len());
    for (i, m) in w.models.iter().enumerate() {
        assert!(w.models[..i].iter().all(|k| k.name != m.name), "model {} twice", m.name);
    }
    for (i, c) in w.calculations.iter().enumerate() {
        assert!(!c.name.trim().is_empty());
        assert!(w.calculations[..i].iter().all(|k| k.name != c.name), "calculation {} twice", c.name);
        assert!(!c.files.is_empty());
        for (j, f) in c.files.iter().enumerate() {
            assert!(f.is_file(), "{}", f.display());
            assert!(!c.files[..j].contains(f), "{} twice", f.display());
        }
        assert!(c.density.as_ref().is_none_or(|d| d.is_file()));
        assert!(c.load.occupation > 0.0 && c.load.occupation <= 1.0);
    }
    assert!(w.threads.is_none_or(|t| t >= 1));
    assert!(w.trust.tolerance.is_finite() && w.trust.tolerance > 0.0);
});
