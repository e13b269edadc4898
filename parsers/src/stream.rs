//! Inputs that can be read only once: standard input (`-`), `/dev/stdin`, named pipes and process
//! substitution (`<(zcat f.cube.gz)`, which the shell passes as `/dev/fd/N`).
//!
//! A caller reads a file several times (its first lines to decide the format, its header for
//! counts and labels, then the whole of it), and a pipe yields its bytes only once. [`hold`]
//! reads such an input whole into memory, once, under a name; every reader of this crate (and
//! [`held`] for callers that read the bytes themselves) then takes the bytes from there instead
//! of opening the path. Ordinary files are not held: they are read from disk as often as needed.
//!
//! The held bytes are as they came (gzip stays compressed, and is decompressed by the readers
//! as for a file), process-wide, and never released: a command holds its few inputs for its
//! whole run.

use std::collections::HashMap;
use std::io::Read;
use std::path::{Path, PathBuf};
use std::sync::{Arc, OnceLock, RwLock};

/// The argument that means standard input.
pub const STDIN_ARG: &str = "-";

/// The name standard input is held, and reported, under (no file has it by accident, and
/// Markdown shows it as it is).
pub const STDIN_NAME: &str = "(stdin)";

/// Largest input held in memory, in bytes (as it arrives, before decompression): the limit of
/// the whole-text readers ([`crate::text::MAX_TEXT_BYTES`], 4 GiB), so that a pipe takes what a
/// file of those formats would. Larger grids are read from a file, which is streamed.
pub const MAX_STREAM_BYTES: u64 = crate::text::MAX_TEXT_BYTES;

/// An input that could not be held.
#[derive(Debug, thiserror::Error)]
pub enum StreamError {
    /// Reading it failed.
    #[error("{}: read failed: {source}", name.display())]
    Io {
        /// The input, as named.
        name: PathBuf,
        /// What the operating system said.
        source: std::io::Error,
    },
    /// More arrived than is held in memory.
    #[error(
        "{}: more than {} bytes arrived, the most sixray holds in memory from a pipe or standard input; \
         save the data to a file and give its name instead",
        name.display(),
        limit
    )]
    TooLarge {
        /// The input, as named.
        name: PathBuf,
        /// The limit, in bytes.
        limit: u64,
    },
}

fn registry() -> &'static RwLock<HashMap<PathBuf, Arc<[u8]>>> {
    static HELD: OnceLock<RwLock<HashMap<PathBuf, Arc<[u8]>>>> = OnceLock::new();
    HELD.get_or_init(Default::default)
}

/// The bytes held under `name`, if [`hold`] read them.
pub fn held(name: &Path) -> Option<Arc<[u8]>> {
    registry().read().unwrap_or_else(|e| e.into_inner()).get(name).cloned()
}

/// Whether `path` is an input that can be read only once: `-`, or a path (links followed) to a
/// pipe, a socket or a character device such as a terminal.
pub fn is_stream(path: &Path) -> bool {
    if path.as_os_str() == STDIN_ARG {
        return true;
    }
    let Ok(meta) = std::fs::metadata(path) else { return false };
    let kind = meta.file_type();
    #[cfg(unix)]
    {
        use std::os::unix::fs::FileTypeExt;
        kind.is_fifo() || kind.is_socket() || kind.is_char_device()
    }
    #[cfg(not(unix))]
    {
        !kind.is_file() && !kind.is_dir()
    }
}

/// Holds `path` in memory if it can be read only once (see [`is_stream`]) and returns the name
/// to read it by: [`STDIN_NAME`] for `-`, the path itself otherwise. Any other path comes back
/// unchanged and unread (a missing file is left for its reader to report). Holding the same
/// input twice reads it once.
pub fn hold(path: &Path) -> Result<PathBuf, StreamError> {
    let stdin = path.as_os_str() == STDIN_ARG;
    let name = if stdin { PathBuf::from(STDIN_NAME) } else { path.to_path_buf() };
    if !is_stream(path) || held(&name).is_some() {
        return Ok(name);
    }
    let bytes = if stdin {
        read_limited(std::io::stdin().lock(), &name, MAX_STREAM_BYTES)?
    } else {
        let file = std::fs::File::open(path).map_err(|source| StreamError::Io { name: name.clone(), source })?;
        read_limited(file, &name, MAX_STREAM_BYTES)?
    };
    registry().write().unwrap_or_else(|e| e.into_inner()).insert(name.clone(), bytes.into());
    Ok(name)
}

/// All of `reader`, or an error naming `name` when it holds more than `limit` bytes.
fn read_limited(reader: impl Read, name: &Path, limit: u64) -> Result<Vec<u8>, StreamError> {
    let mut bytes = Vec::new();
    reader
        .take(limit.saturating_add(1))
        .read_to_end(&mut bytes)
        .map_err(|source| StreamError::Io { name: name.to_path_buf(), source })?;
    if bytes.len() as u64 > limit {
        return Err(StreamError::TooLarge { name: name.to_path_buf(), limit });
    }
    Ok(bytes)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_limit_is_enforced_with_the_name() {
        let name = Path::new("(stdin)");
        assert_eq!(read_limited(&b"12345"[..], name, 5).unwrap(), b"12345");
        let err = read_limited(&b"123456"[..], name, 5).unwrap_err();
        let text = err.to_string();
        assert!(text.starts_with("(stdin): more than 5 bytes") && text.contains("save the data to a file"), "{text}");
    }

    #[test]
    fn files_are_not_held_and_missing_ones_are_left_to_their_reader() {
        let dir = tempfile::tempdir().unwrap();
        let file = dir.path().join("a.cube");
        std::fs::write(&file, "x").unwrap();
        assert!(!is_stream(&file) && !is_stream(dir.path()));
        assert_eq!(hold(&file).unwrap(), file);
        assert!(held(&file).is_none());
        let missing = dir.path().join("missing.cube");
        assert_eq!(hold(&missing).unwrap(), missing);
        assert!(is_stream(Path::new("-")));
    }
}
