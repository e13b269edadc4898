//! Helpers shared by the integration tests.

use std::path::PathBuf;

/// The shared reference data beside the project root, or `None` (after printing a notice) where
/// it is absent, so that tests needing it skip instead of failing.
pub fn shared_dir(test: &str) -> Option<PathBuf> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("../shared");
    if dir.join("reference").is_dir() {
        Some(dir)
    } else {
        // Straight to stderr: the test harness captures eprintln! output of passing tests.
        use std::io::Write;
        let _ = writeln!(std::io::stderr(), "skipping {test}: shared reference data not found at {}", dir.display());
        None
    }
}

/// Parsed `reference/analytic.json` (libxc 7.0.0 through PySCF 2.14), if present.
pub fn analytic(test: &str) -> Option<serde_json::Value> {
    let path = shared_dir(test)?.join("reference/analytic.json");
    let text = std::fs::read_to_string(&path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    Some(serde_json::from_str(&text).unwrap_or_else(|e| panic!("{}: {e}", path.display())))
}

