//! Files written atomically, checks that a directory can take them, and clean-up of what a
//! killed writer left behind.
//!
//! A file is written to a temporary file beside it, flushed to disk, then renamed over the
//! target, so readers never see half a file. The temporary file is named
//! `.sixray-HOST-PID-N.tmp` (the writer's host name and process id, and a counter): a writer
//! killed with `kill -9` leaves it behind, and a later run removes it once it is certainly
//! nobody's ([`remove_stale_temporaries`]), while other runs writing into the same directory at
//! the same time (on this host or another sharing the file system) keep theirs.

use std::fs::{File, OpenOptions};
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::OnceLock;
use std::sync::atomic::{AtomicU64, Ordering};
use std::time::{Duration, SystemTime};

/// Prefix and suffix of every temporary file sixray writes.
const TEMP_PREFIX: &str = ".sixray-";
const TEMP_SUFFIX: &str = ".tmp";

/// Age beyond which a temporary file whose writer cannot be asked (another host, or a name
/// without a process id) is taken as abandoned. A temporary file lives for one write: the bytes
/// are ready in memory before it is created, so it exists for the time the disk takes to store
/// one report or cache entry — seconds at most, even on a slow network file system. An hour is
/// far beyond that and also covers clocks of hosts that differ by minutes.
pub const STALE_AFTER: Duration = Duration::from_secs(3600);

/// This host's name as it goes into temporary file names (letters, digits, `.`, `-` and `_`;
/// at most 64 characters).
fn host() -> &'static str {
    static HOST: OnceLock<String> = OnceLock::new();
    HOST.get_or_init(|| {
        let raw = std::fs::read_to_string("/proc/sys/kernel/hostname")
            .ok()
            .or_else(|| std::env::var("HOSTNAME").ok())
            .unwrap_or_default();
        let name: String = raw
            .trim()
            .chars()
            .take(64)
            .map(|c| if c.is_ascii_alphanumeric() || matches!(c, '.' | '-' | '_') { c } else { '_' })
            .collect();
        if name.is_empty() { "localhost".into() } else { name }
    })
}

/// A temporary file beside its target holding the target's new bytes, flushed to disk; it
/// becomes the target with [`Staged::commit`] and is removed if dropped uncommitted.
#[derive(Debug)]
pub struct Staged {
    temp: PathBuf,
    target: PathBuf,
    committed: bool,
}

impl Staged {
    /// Writes `bytes` to a new temporary file in `target`'s directory and flushes it.
    /// A symbolic link is followed: the file it names is replaced, and the link stays.
    pub fn new(target: &Path, bytes: &[u8]) -> std::io::Result<Staged> {
        let target = match std::fs::symlink_metadata(target) {
            Ok(m) if m.file_type().is_symlink() => std::fs::canonicalize(target)?,
            _ => target.to_path_buf(),
        };
        let (temp, mut file) = create_temporary(directory_of(&target))?;
        // Made first, so that a failed write drops it and the temporary file goes.
        let staged = Staged { temp, target, committed: false };
        file.write_all(bytes)?;
        file.sync_all()?;
        Ok(staged)
    }

    /// Renames the temporary file over the target.
    pub fn commit(mut self) -> std::io::Result<()> {
        std::fs::rename(&self.temp, &self.target)?;
        self.committed = true;
        Ok(())
    }
}

impl Drop for Staged {
    fn drop(&mut self) {
        if !self.committed {
            let _ = std::fs::remove_file(&self.temp);
        }
    }
}

/// The directory a file goes into (`.` for a bare file name).
pub fn directory_of(path: &Path) -> &Path {
    match path.parent() {
        Some(d) if !d.as_os_str().is_empty() => d,
        _ => Path::new("."),
    }
}

/// A new temporary file in `dir`, named for this host and process (see the module doc).
fn create_temporary(dir: &Path) -> std::io::Result<(PathBuf, File)> {
    static COUNTER: AtomicU64 = AtomicU64::new(0);
    loop {
        let n = COUNTER.fetch_add(1, Ordering::Relaxed);
        let path = dir.join(format!("{TEMP_PREFIX}{}-{}-{n}{TEMP_SUFFIX}", host(), std::process::id()));
        let mut options = OpenOptions::new();
        options.write(true).create_new(true);
        // A report is an ordinary file (the user's umask applies).
        #[cfg(unix)]
        std::os::unix::fs::OpenOptionsExt::mode(&mut options, 0o644);
        match options.open(&path) {
            Ok(file) => return Ok((path, file)),
            // Left by an earlier process with this id: take the next number.
            Err(e) if e.kind() == std::io::ErrorKind::AlreadyExists => continue,
            Err(e) => return Err(e),
        }
    }
}

/// Writes `bytes` to `path` atomically (see the module doc). Errors are the operating system's,
/// without the temporary file's name: callers name the target.
///
/// A `path` that exists and is not a regular file (`/dev/null`, a terminal, a named pipe) is
/// written to directly: renaming over it would replace the device or pipe with a plain file,
/// and a reader of a pipe sees the bytes in order anyway.
pub fn write_atomic(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    if is_special(path) {
        return OpenOptions::new().write(true).open(path)?.write_all(bytes);
    }
    Staged::new(path, bytes)?.commit()
}

/// Whether `path` (links followed) exists and is neither a regular file nor a directory.
fn is_special(path: &Path) -> bool {
    std::fs::metadata(path).is_ok_and(|m| !m.is_file() && !m.is_dir())
}

/// A directory that reports or cache entries cannot be written to, and why.
#[derive(Debug, thiserror::Error)]
#[error("cannot write to {}: {reason}", path.display())]
pub struct DirError {
    /// The directory (or, for [`check_output_file`], the file) as given.
    pub path: PathBuf,
    /// Why, for a person: which part of the path is in the way, or what the system said.
    pub reason: String,
}

/// The nearest existing ancestor of `path` (itself included) when it is not a directory: the
/// file in the way of creating `path`.
fn file_in_the_way(path: &Path) -> Option<&Path> {
    path.ancestors().find(|a| !a.as_os_str().is_empty() && a.exists()).filter(|a| !a.is_dir())
}

/// Why `path` cannot be created: the file in its way, if there is one, or what the system said.
fn reason(path: &Path, e: &std::io::Error) -> String {
    match file_in_the_way(path) {
        Some(a) => format!("{} is a file, not a directory", a.display()),
        None => e.to_string(),
    }
}

/// Creates `dir` (with its parents) if needed and checks that files can be created in it, by
/// creating and removing one: permission bits alone do not tell (root ignores them, read-only
/// mounts and full disks do not show in them).
pub fn check_dir(dir: &Path) -> Result<(), DirError> {
    let fail = |reason: String| DirError { path: dir.to_path_buf(), reason };
    std::fs::create_dir_all(dir).map_err(|e| fail(reason(dir, &e)))?;
    let (probe, _) = create_temporary(dir).map_err(|e| fail(e.to_string()))?;
    std::fs::remove_file(probe).map_err(|e| fail(e.to_string()))
}

/// Checks that `file` can be written atomically: it is not a directory, and its directory
/// exists and takes new files (see [`check_dir`]; the directory is not created).
pub fn check_output_file(file: &Path) -> Result<(), DirError> {
    let fail = |reason: String| DirError { path: file.to_path_buf(), reason };
    if file.is_dir() {
        return Err(fail("it is a directory; give a file name".into()));
    }
    if is_special(file) {
        // Written to directly (see [`write_atomic`]): it only has to open for writing.
        return OpenOptions::new().write(true).open(file).map(drop).map_err(|e| fail(e.to_string()));
    }
    let dir = directory_of(file);
    if !dir.is_dir() {
        return Err(fail(match file_in_the_way(dir) {
            Some(a) => format!("{} is a file, not a directory", a.display()),
            None => format!("the directory {} does not exist", dir.display()),
        }));
    }
    check_dir(dir).map_err(|e| fail(e.reason))
}

/// Whether process `pid` runs on this host. Only Linux can say (through `/proc`); elsewhere
/// every process counts as running, and only age makes a temporary file stale.
fn running(pid: u32) -> bool {
    if cfg!(target_os = "linux") { Path::new("/proc").join(pid.to_string()).exists() } else { true }
}

/// Whether a directory entry is a temporary file sixray wrote whose writer is gone: one named
/// for this host and a process that no longer runs, or one older than [`STALE_AFTER`] (another
/// host's, or named without a process id by an earlier version).
fn stale(name: &str, modified: Option<SystemTime>, now: SystemTime) -> bool {
    let Some(middle) = name.strip_prefix(TEMP_PREFIX).and_then(|n| n.strip_suffix(TEMP_SUFFIX)) else { return false };
    let mut parts = middle.rsplitn(3, '-');
    let (n, pid, writer) = (parts.next(), parts.next(), parts.next());
    if let (Some(n), Some(Ok(pid)), Some(writer)) = (n, pid.map(str::parse::<u32>), writer) {
        if n.bytes().all(|b| b.is_ascii_digit()) && writer == host() {
            return !running(pid);
        }
    }
    modified.and_then(|m| now.duration_since(m).ok()).is_some_and(|age| age > STALE_AFTER)
}

/// Removes the temporary files in `dir` that killed writers left (see [`stale`]); returns how
/// many. Files of writers still running are kept. A directory that cannot be read is left alone.
pub fn remove_stale_temporaries(dir: &Path) -> usize {
    let Ok(entries) = std::fs::read_dir(dir) else { return 0 };
    let now = SystemTime::now();
    let mut removed = 0;
    for entry in entries.flatten() {
        let name = entry.file_name();
        let Some(name) = name.to_str() else { continue };
        let Ok(meta) = entry.metadata() else { continue };
        if meta.is_file() && stale(name, meta.modified().ok(), now) && std::fs::remove_file(entry.path()).is_ok() {
            removed += 1;
        }
    }
    removed
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn atomic_write_replaces_whole_files() {
        let dir = tempfile::tempdir().unwrap();
        let p = dir.path().join("out.json");
        write_atomic(&p, b"first").unwrap();
        write_atomic(&p, b"second").unwrap();
        assert_eq!(std::fs::read(&p).unwrap(), b"second");
        // No temporary files are left behind, and an uncommitted one is removed.
        drop(Staged::new(&p, b"third").unwrap());
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 1);
        assert_eq!(std::fs::read(&p).unwrap(), b"second");
    }

    /// Atomic replacement would turn a device or a named pipe into a plain file (as root, even
    /// `/dev/null`): they are written to directly, and a link keeps pointing at its file.
    #[cfg(unix)]
    #[test]
    fn pipes_and_links_stay_what_they_are() {
        use std::io::Read;
        let dir = tempfile::tempdir().unwrap();
        let fifo = dir.path().join("pipe");
        let made = std::process::Command::new("mkfifo").arg(&fifo).status();
        if made.is_ok_and(|s| s.success()) {
            let reader = {
                let fifo = fifo.clone();
                std::thread::spawn(move || {
                    let mut text = String::new();
                    File::open(&fifo).unwrap().read_to_string(&mut text).unwrap();
                    text
                })
            };
            check_output_file(&fifo).unwrap_or_else(|e| panic!("{e}"));
            write_atomic(&fifo, b"through the pipe").unwrap();
            assert_eq!(reader.join().unwrap(), "through the pipe");
            use std::os::unix::fs::FileTypeExt;
            assert!(std::fs::metadata(&fifo).unwrap().file_type().is_fifo());
        } else {
            eprintln!("skipping the named-pipe half: mkfifo not available");
        }
        let file = dir.path().join("file.md");
        let link = dir.path().join("link.md");
        std::fs::write(&file, b"old").unwrap();
        std::os::unix::fs::symlink(&file, &link).unwrap();
        write_atomic(&link, b"new").unwrap();
        assert!(std::fs::symlink_metadata(&link).unwrap().file_type().is_symlink());
        assert_eq!(std::fs::read(&file).unwrap(), b"new");
    }

    #[test]
    fn only_abandoned_temporary_files_are_stale() {
        let now = SystemTime::now();
        let old = Some(now - STALE_AFTER - Duration::from_secs(1));
        let fresh = Some(now - Duration::from_secs(5));
        let me = std::process::id();
        // This process runs: its files are never stale, however old.
        assert!(!stale(&format!(".sixray-{}-{me}-3.tmp", host()), old, now));
        // Another host's: by age only.
        assert!(!stale(&format!(".sixray-elsewhere-{me}-3.tmp"), fresh, now));
        assert!(stale(&format!(".sixray-elsewhere-{me}-3.tmp"), old, now));
        // An earlier version's random names: by age only.
        assert!(!stale(".sixray-Ab3xYz.tmp", fresh, now));
        assert!(stale(".sixray-Ab3xYz.tmp", old, now));
        // Not ours at all.
        assert!(!stale("notes.tmp", old, now));
        assert!(!stale(".sixray-cache", old, now));
        if cfg!(target_os = "linux") {
            // A process that has exited.
            let mut child = std::process::Command::new("true").spawn().unwrap();
            let pid = child.id();
            child.wait().unwrap();
            assert!(stale(&format!(".sixray-{}-{pid}-0.tmp", host()), fresh, now));
        }
    }
}
