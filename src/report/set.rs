//! A batch's reports as one set: written together, named by an id, listed in a manifest.
//!
//! Every report is rendered in memory first and staged beside its target (a flushed temporary
//! file, see [`super::atomic`]); only then are they renamed into place, one after the other, and
//! last [`MANIFEST`] is replaced: it names the set's id and each file's BLAKE3 digest. The id is
//! a hash of the reports' content (no clock, no process id), and the reports carry it (the
//! caller marks them), so a run killed between two renames leaves a set that shows it is mixed:
//! a report whose id or digest is not the manifest's. [`check`] finds such a set; the next run
//! replaces it whole.

use super::atomic::Staged;
use serde_json::{Map, Value, json};
use std::path::Path;

/// The manifest's file name in the report directory.
pub const MANIFEST: &str = "report-set.json";

/// Environment variable for tests: `N` makes the process abort (as if killed) once `N` reports
/// of a set are in place, before the rest and before the manifest.
pub const CRASH_AFTER: &str = "SIXRAY_TEST_CRASH_AFTER_REPORTS";

/// The id of a set of reports: the first 16 hex digits of a BLAKE3 hash of their names and
/// bytes (64 bits: two different runs' sets do not share one by chance).
pub fn id(files: &[(&str, &[u8])]) -> String {
    let mut h = blake3::Hasher::new();
    for (name, bytes) in files {
        h.update(&(name.len() as u64).to_le_bytes());
        h.update(name.as_bytes());
        h.update(&(bytes.len() as u64).to_le_bytes());
        h.update(bytes);
    }
    h.finalize().to_hex()[..16].to_string()
}

/// The manifest of a set: its id and each file's digest, in the set's order.
fn manifest(id: &str, files: &[(&str, &[u8])]) -> Vec<u8> {
    let digests: Map<String, Value> =
        files.iter().map(|(name, bytes)| (name.to_string(), json!(blake3::hash(bytes).to_hex().to_string()))).collect();
    let text = serde_json::to_string_pretty(&json!({"report_set": id, "tool": super::json::tool(), "files": digests}))
        .expect("a JSON value serialises");
    (text + "\n").into_bytes()
}

/// The files the manifest in `dir` lists, with their digests (empty when there is none).
fn listed(dir: &Path) -> (Option<String>, Vec<(String, String)>) {
    let Ok(bytes) = std::fs::read(dir.join(MANIFEST)) else { return (None, Vec::new()) };
    let Ok(v) = serde_json::from_slice::<Value>(&bytes) else { return (None, Vec::new()) };
    let files = v["files"]
        .as_object()
        .map(|m| m.iter().filter_map(|(k, d)| d.as_str().map(|d| (k.clone(), d.to_string()))).collect())
        .unwrap_or_default();
    (v["report_set"].as_str().map(str::to_string), files)
}

/// Writes `files` (name, bytes) into `dir` as the set `id`: all staged, then renamed into place,
/// then reports an earlier manifest listed that this set does not hold removed, then the
/// manifest. `dir` must exist.
pub fn write(dir: &Path, id: &str, files: &[(&str, &[u8])]) -> std::io::Result<()> {
    let staged = files.iter().map(|(name, bytes)| Staged::new(&dir.join(name), bytes)).collect::<std::io::Result<Vec<_>>>()?;
    let (_, before) = listed(dir);
    let crash_after = std::env::var(CRASH_AFTER).ok().and_then(|n| n.parse::<usize>().ok());
    for (k, s) in staged.into_iter().enumerate() {
        if crash_after == Some(k) {
            std::process::abort();
        }
        s.commit()?;
    }
    // Before the manifest names the new set, the renames must be on disk.
    if let Ok(d) = std::fs::File::open(dir) {
        let _ = d.sync_all();
    }
    // A report the earlier set held and this one does not (a format no longer asked for)
    // would otherwise sit beside the new ones with old numbers.
    for (name, _) in &before {
        if !files.iter().any(|(n, _)| n == name) && !name.contains(['/', '\\']) && name != MANIFEST {
            let _ = std::fs::remove_file(dir.join(name));
        }
    }
    super::atomic::write_atomic(&dir.join(MANIFEST), &manifest(id, files))
}

/// What is wrong with the set of reports in `dir`, if its manifest does not describe the files
/// there (a run was killed while writing them): the files that are missing or differ. `None`
/// for a whole set, and where there is no manifest.
pub fn check(dir: &Path) -> Option<String> {
    let (id, files) = listed(dir);
    let id = id?;
    let off: Vec<String> = files
        .iter()
        .filter(|(name, digest)| std::fs::read(dir.join(name)).map_or(true, |b| blake3::hash(&b).to_hex().as_str() != digest))
        .map(|(name, _)| name.clone())
        .collect();
    (!off.is_empty()).then(|| {
        let (verb, noun) = if off.len() > 1 { ("are", "ones") } else { ("is", "one") };
        format!("{} {verb} not the {noun} {MANIFEST} lists for report set {id}", off.join(", "))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_set_is_checked_against_its_manifest() {
        let dir = tempfile::tempdir().unwrap();
        let files: [(&str, &[u8]); 2] = [("a.md", b"one"), ("b.json", b"two")];
        let first = id(&files);
        write(dir.path(), &first, &files).unwrap();
        assert_eq!(check(dir.path()), None);
        // Only temporaries were in the way: the directory holds the set and its manifest.
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 3);
        std::fs::write(dir.path().join("b.json"), b"changed").unwrap();
        let found = check(dir.path()).expect("b.json differs");
        assert!(found.contains("b.json") && !found.contains("a.md") && found.contains(&first), "{found}");

        // A later set without b.json removes it; the id follows the content.
        let fewer: [(&str, &[u8]); 1] = [("a.md", b"one")];
        let second = id(&fewer);
        assert_ne!(first, second);
        write(dir.path(), &second, &fewer).unwrap();
        assert!(!dir.path().join("b.json").exists());
        assert_eq!(check(dir.path()), None);
    }
}
