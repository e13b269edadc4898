//! What the fuzz targets check beyond "no panic": the invariants every reader's answer must
//! satisfy, whatever the input. A failed assertion is reported by libFuzzer as a crash, with
//! the input saved under `fuzz/artifacts/TARGET/`.

use std::fmt::Display;
use std::io::Write;
use std::path::{Path, PathBuf};

/// Longest error message accepted, in bytes. Messages quote the input only in excerpts of
/// about 40 characters (`FOUND_EXCERPT_CHARS`) besides the path, a line number and what was
/// expected, so a longer one quotes raw input it should have shortened.
pub const MAX_MESSAGE_BYTES: usize = 1024;

/// Number of lines of `text` as the readers count them: a final line terminator starts no
/// further line.
pub fn line_count(text: &[u8]) -> usize {
    let breaks = text.iter().filter(|&&b| b == b'\n').count();
    breaks + usize::from(!text.is_empty() && !text.ends_with(b"\n"))
}

/// Checks a reader's error: it names `source` first, its line (if any) is a line of `text`
/// or the end of file just after the last one (line 1 for an empty input), and it is short.
pub fn check_error(source: &Path, line: Option<usize>, error: &dyn Display, text: &[u8]) {
    let message = error.to_string();
    let lines = line_count(text);
    assert!(
        message.starts_with(&source.display().to_string()),
        "the message does not start with the file name: {message}"
    );
    if let Some(n) = line {
        assert!(n >= 1 && n <= lines + 1, "line {n} of a {lines}-line input: {message}");
    }
    assert!(message.len() <= MAX_MESSAGE_BYTES, "a {}-byte message: {message:.200}", message.len());
}

/// What a reader returned if it accepted the input; otherwise `None`, its error checked with
/// [`check_error`] (`line` reads the error's line).
pub fn accepted<T, E: Display>(
    answer: Result<T, E>,
    line: impl Fn(&E) -> Option<usize>,
    source: &Path,
    text: &[u8],
) -> Option<T> {
    answer.map_err(|e| check_error(source, line(&e), &e, text)).ok()
}

/// Checks 1-based line numbers that the reader reports for parts of an accepted input: each
/// a line of `text`, in file order (`strict`: each after the one before).
pub fn check_lines(lines: impl IntoIterator<Item = usize>, text: &[u8], strict: bool, what: &str) {
    let count = line_count(text);
    let mut previous = 0;
    for n in lines {
        assert!(n >= 1 && n <= count, "{what}: line {n} of a {count}-line input");
        assert!(n > previous || (!strict && n == previous), "{what}: line {n} after line {previous}");
        previous = n;
    }
}

/// Asserts that every value is finite (the readers reject NaN and infinities).
pub fn check_finite<'a>(values: impl IntoIterator<Item = &'a f64>, what: &str) {
    for v in values {
        assert!(v.is_finite(), "{what}: {v}");
    }
}

/// `bytes` as one gzip member (fastest level: the targets compress every input).
pub fn gzip(bytes: &[u8]) -> Vec<u8> {
    let mut encoder = flate2::write::GzEncoder::new(Vec::new(), flate2::Compression::fast());
    encoder.write_all(bytes).expect("gzip into memory");
    encoder.finish().expect("gzip into memory")
}

/// A scratch directory of this process under the temporary directory, for targets that go
/// through the path-taking readers (`.ci/fuzz` points `TMPDIR` at a directory it removes).
pub fn scratch_dir() -> PathBuf {
    let dir = std::env::temp_dir().join(format!("sixray-fuzz-{}", std::process::id()));
    std::fs::create_dir_all(&dir).expect("scratch directory");
    dir
}

/// Writes `bytes` to `name` in the scratch directory and returns its path.
pub fn scratch_file(name: &str, bytes: &[u8]) -> PathBuf {
    let path = scratch_dir().join(name);
    std::fs::write(&path, bytes).expect("scratch file");
    path
}
