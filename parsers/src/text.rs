//! What the whole-text readers (fchk, wfn, wfx) share: reading a file into memory with a size
//! limit, splitting it into lines, and one error shape (file, 1-based line, what was expected
//! and what was found).

use std::io::Read;
use std::path::Path;

use crate::cube::{GZIP_MAGIC, open_text};

/// Largest accepted text size (after decompression), in bytes; the whole text is held in memory.
pub const MAX_TEXT_BYTES: u64 = 1 << 32;

/// The kinds of failure of the molden, fchk, wfn and wfx readers. `found` strings are excerpts of the
/// input, already quoted and shortened (or a phrase such as `end of line`).
#[derive(Debug, thiserror::Error)]
pub enum TextErrorKind {
    /// The operating system or the gzip decoder reported an error.
    #[error("read failed: {0}")]
    Io(std::io::Error),
    /// The input ended while `expected` was still to come.
    #[error("unexpected end of file: expected {expected}")]
    UnexpectedEnd {
        /// What the reader was looking for.
        expected: String,
    },
    /// Text that does not fit the format, or numbers that disagree with each other.
    #[error("expected {expected}, found {found}")]
    Syntax {
        /// What the format requires here.
        expected: String,
        /// The offending text (or a description of what is there).
        found: String,
    },
    /// A NaN, an infinity, or a number too large for a 64-bit float.
    #[error("expected a finite number, found {found}")]
    NotFinite {
        /// The offending text.
        found: String,
    },
    /// A count that is negative or larger than the rest of the file could hold.
    #[error("bad {what}, found {value}")]
    BadCount {
        /// The count and what it must be.
        what: String,
        /// The count as written.
        value: i64,
    },
    /// Something the format requires is absent.
    #[error("expected {what}, found none in the file")]
    Missing {
        /// What is missing.
        what: String,
    },
    /// Something that may appear once appears again.
    #[error("expected one {what}, found a second one (the first is on line {first_line})")]
    Duplicate {
        /// What is repeated.
        what: String,
        /// Line of its first appearance.
        first_line: usize,
    },
    /// The file is larger than the reader accepts.
    #[error("expected a file of at most {limit} bytes of text, found more")]
    TooLarge {
        /// The limit, in bytes.
        limit: u64,
    },
    /// A `parse_*` function was handed gzip-compressed bytes.
    #[error("expected text, found gzip-compressed data (decompress it first, or read the file by name)")]
    Compressed,
}

/// Defines a reader's error type: the file, the line and a [`TextErrorKind`], displayed as
/// `PATH:LINE: message` (or `PATH: message`), with the field cursor's error hooks.
macro_rules! text_error {
    ($(#[$doc:meta])* $name:ident) => {
        $(#[$doc])*
        ///
        /// Displays as `PATH:LINE: message`, or `PATH: message` when no line applies.
        #[derive(Debug, thiserror::Error)]
        #[error("{}: {kind}", $crate::cube::error::Location(path, *line))]
        pub struct $name {
            /// The file being read (or the name given to the `parse_*` function).
            pub path: std::path::PathBuf,
            /// 1-based line number of the problem, if it can be tied to one line.
            pub line: Option<usize>,
            /// What went wrong.
            pub kind: $crate::text::TextErrorKind,
        }

        impl $name {
            /// Builds an error for `path`, optionally at 1-based `line`.
            pub fn new(path: &std::path::Path, line: Option<usize>, kind: $crate::text::TextErrorKind) -> Self {
                Self { path: path.to_path_buf(), line, kind }
            }
        }

        impl $crate::text::TextError for $name {
            fn make(path: &std::path::Path, line: Option<usize>, kind: $crate::text::TextErrorKind) -> Self {
                Self::new(path, line, kind)
            }
        }

        impl $crate::fields::LineErrors for $name {
            fn is_blank(b: u8) -> bool {
                $crate::text::is_blank(b)
            }

            fn syntax(src: &std::path::Path, line: usize, expected: String, found: String) -> Self {
                Self::new(src, Some(line), $crate::text::TextErrorKind::Syntax { expected, found })
            }

            fn not_finite(src: &std::path::Path, line: usize, found: String) -> Self {
                Self::new(src, Some(line), $crate::text::TextErrorKind::NotFinite { found })
            }
        }
    };
}
pub(crate) use text_error;

/// Construction shared by the error types [`text_error!`] defines.
pub(crate) trait TextError: Sized {
    fn make(path: &Path, line: Option<usize>, kind: TextErrorKind) -> Self;

    fn syntax_at(path: &Path, line: usize, expected: impl Into<String>, found: String) -> Self {
        Self::make(path, Some(line), TextErrorKind::Syntax { expected: expected.into(), found })
    }
}

/// The whole text of `path` (plain or gzip), at most [`MAX_TEXT_BYTES`].
pub(crate) fn read_text<E: TextError>(path: &Path) -> Result<Vec<u8>, E> {
    let io = |e| E::make(path, None, TextErrorKind::Io(e));
    let (reader, _) = open_text(path).map_err(io)?;
    let mut bytes = Vec::new();
    reader.take(MAX_TEXT_BYTES + 1).read_to_end(&mut bytes).map_err(io)?;
    if bytes.len() as u64 > MAX_TEXT_BYTES {
        return Err(E::make(path, None, TextErrorKind::TooLarge { limit: MAX_TEXT_BYTES }));
    }
    Ok(bytes)
}

/// Refuses gzip bytes handed to a `parse_*` function.
pub(crate) fn refuse_gzip<E: TextError>(text: &[u8], path: &Path) -> Result<(), E> {
    if text.starts_with(&GZIP_MAGIC) {
        Err(E::make(path, Some(1), TextErrorKind::Compressed))
    } else {
        Ok(())
    }
}

/// Lines of `text` without their terminators (LF, or CRLF); a final terminator starts no line.
pub(crate) fn split_lines(text: &[u8]) -> Vec<&[u8]> {
    let mut lines: Vec<&[u8]> =
        text.split(|&b| b == b'\n').map(|l| l.strip_suffix(b"\r").unwrap_or(l)).collect();
    if text.ends_with(b"\n") || text.is_empty() {
        lines.pop();
    }
    lines
}

/// The line an unexpected end of `lines` is reported on: the last one, or line 1 of an empty
/// text (where the first line was expected).
pub(crate) fn end_line(lines: &[&[u8]]) -> usize {
    lines.len().max(1)
}

/// Field separators: space, tab, CR, VT, FF.
pub(crate) fn is_blank(b: u8) -> bool {
    b == b' ' || b == b'\t' || b == b'\r' || b == 0x0b || b == 0x0c
}

/// Whether a line holds only blanks.
pub(crate) fn blank_line(line: &[u8]) -> bool {
    line.iter().all(|&b| is_blank(b))
}

/// The blank-separated words of `line`, with numbers written without a blank between them
/// split apart: fixed-column Fortran output runs a negative number into the one before it
/// (`0.1D+01-0.2D+01`). A sign starts a new word when it follows a digit or a point (after an
/// exponent letter it belongs to the exponent).
pub(crate) fn number_words(line: &[u8]) -> impl Iterator<Item = &[u8]> {
    line.split(|&b| is_blank(b)).filter(|w| !w.is_empty()).flat_map(|w| {
        let mut parts = Vec::new();
        let mut start = 0;
        for i in 1..w.len() {
            let prev = w[i - 1];
            if matches!(w[i], b'+' | b'-') && (prev.is_ascii_digit() || prev == b'.') {
                parts.push(&w[start..i]);
                start = i;
            }
        }
        parts.push(&w[start..]);
        parts
    })
}

/// Number of words a text of `bytes` bytes can hold at most (one character and one separator
/// each): the bound on any count read from a header before allocating for it.
pub(crate) fn most_words(bytes: usize) -> usize {
    bytes / 2 + 1
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn run_together_numbers_split() {
        let words: Vec<&[u8]> = number_words(b" 0.1D+01-0.2D+01  3.0E-05 -4-5").collect();
        assert_eq!(words, vec![&b"0.1D+01"[..], b"-0.2D+01", b"3.0E-05", b"-4", b"-5"]);
    }

    #[test]
    fn lines() {
        assert_eq!(split_lines(b"a\r\nb\n\nc"), vec![&b"a"[..], b"b", b"", b"c"]);
        assert_eq!(split_lines(b"a\n"), vec![&b"a"[..]]);
        assert!(split_lines(b"").is_empty());
    }
}
