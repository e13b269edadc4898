//! Errors raised while reading a molden file. Every error names the file and, where one
//! applies, the 1-based line on which the problem was detected.

use crate::cube::error::Location;
use std::path::{Path, PathBuf};

/// A failure to read a molden file: where it happened and what went wrong.
///
/// Displays as `PATH:LINE: message`, or `PATH: message` when no line applies.
#[derive(Debug, thiserror::Error)]
#[error("{}: {kind}", Location(path, *line))]
pub struct MoldenError {
    /// The file being read (or the name given to [`parse_molden`](crate::molden::parse_molden)).
    pub path: PathBuf,
    /// 1-based line number of the problem, if it can be tied to one line.
    pub line: Option<usize>,
    /// What went wrong.
    pub kind: MoldenErrorKind,
}

impl MoldenError {
    /// Builds an error for `path`, optionally at 1-based `line`.
    pub fn new(path: &Path, line: Option<usize>, kind: MoldenErrorKind) -> Self {
        Self {
            path: path.to_path_buf(),
            line,
            kind,
        }
    }
}

/// The kinds of failure. `found` strings are excerpts of the input, already quoted and
/// shortened (or a phrase such as `end of line`).
#[derive(Debug, thiserror::Error)]
pub enum MoldenErrorKind {
    /// The operating system or the gzip decoder reported an error.
    #[error("read failed: {0}")]
    Io(std::io::Error),
    /// The input ended while `expected` was still to come.
    #[error("unexpected end of file: expected {expected}")]
    UnexpectedEnd {
        /// What the reader was looking for.
        expected: String,
    },
    /// Text that does not fit the format.
    #[error("expected {expected}, found {found}")]
    Syntax {
        /// What the format requires here.
        expected: String,
        /// The offending text.
        found: String,
    },
    /// A NaN, an infinity, or a number too large for a 64-bit float.
    #[error("expected a finite number, found {found}")]
    NotFinite {
        /// The offending text.
        found: String,
    },
    /// A count that is zero, negative or larger than the rest of the file could hold.
    #[error("bad {what}, found {value}")]
    BadCount {
        /// The count and what it must be.
        what: String,
        /// The count as written.
        value: i64,
    },
    /// A section the format requires is absent.
    #[error("expected {what}, found none in the file")]
    Missing {
        /// The missing section.
        what: String,
    },
    /// A section that may appear once appears again.
    #[error("expected one {what}, found a second one (the first is on line {first_line})")]
    Duplicate {
        /// The section.
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
    /// `parse_molden` was handed gzip-compressed bytes.
    #[error(
        "expected molden text, found gzip-compressed data (use read_molden, which decompresses)"
    )]
    Compressed,
}
