//! Errors raised while reading a cube file. Every error names the file and, where one applies,
//! the 1-based line on which the problem was detected.

use std::fmt;
use std::path::{Path, PathBuf};

/// Longest excerpt of offending input quoted in an error message, in characters.
pub const FOUND_EXCERPT_CHARS: usize = 40;

/// A failure to read a cube file: where it happened and what went wrong.
///
/// Displays as `PATH:LINE: message`, or `PATH: message` when no line applies.
#[derive(Debug, thiserror::Error)]
#[error("{}: {kind}", Location(path, *line))]
pub struct CubeError {
    /// The file being read (or the name given to [`parse_cube`](crate::cube::parse_cube)).
    pub path: PathBuf,
    /// 1-based line number of the problem, if it can be tied to one line.
    pub line: Option<usize>,
    /// What went wrong.
    pub kind: CubeErrorKind,
}

impl CubeError {
    /// Builds an error for `path`, optionally at 1-based `line`.
    pub fn new(path: &Path, line: Option<usize>, kind: CubeErrorKind) -> Self {
        Self {
            path: path.to_path_buf(),
            line,
            kind,
        }
    }
}

/// `PATH:LINE` or `PATH` (shared with the molden reader's errors).
pub(crate) struct Location<'a>(pub(crate) &'a Path, pub(crate) Option<usize>);

impl fmt::Display for Location<'_> {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self.1 {
            Some(line) => write!(f, "{}:{line}", self.0.display()),
            None => write!(f, "{}", self.0.display()),
        }
    }
}

/// The kinds of failure. `found` strings are excerpts of the input, already quoted and
/// shortened to about [`FOUND_EXCERPT_CHARS`] characters (or a phrase such as `end of line`).
#[derive(Debug, thiserror::Error)]
pub enum CubeErrorKind {
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
    /// A count that is zero, negative where that is not allowed, or absurdly large.
    /// `what` names the count and the accepted range.
    #[error("bad {what}, found {value}")]
    BadCount {
        /// The count and what it must be, e.g. "point count of axis 2 (expected non-zero)".
        what: String,
        /// The count as written.
        value: i64,
    },
    /// The three axis point counts do not share a sign (the sign selects the length unit).
    #[error(
        "expected all three axis point counts positive (Bohr) or all negative (Ångström), \
         found this axis with the opposite sign to the first"
    )]
    MixedUnits,
    /// The product of the point counts and the values per point does not fit in 64 bits.
    #[error(
        "expected a grid whose size fits in 64 bits, found {} x {} x {} points x {values_per_point} \
         values per point",
        counts[0], counts[1], counts[2]
    )]
    CountOverflow {
        /// Point counts of the three axes, as written (absolute values).
        counts: [u64; 3],
        /// Values per grid point.
        values_per_point: u64,
    },
    /// The header declares more values than allowed or than the input could possibly hold.
    #[error("header declares {claimed} values but {why} allows at most {limit}")]
    TooLarge {
        /// Number of values (points × values per point) the header declares.
        claimed: u64,
        /// The largest number of values acceptable.
        limit: u64,
        /// Where the limit comes from.
        why: String,
    },
    /// The memory for the grid values could not be reserved.
    #[error("could not reserve {bytes} bytes for the grid values")]
    OutOfMemory {
        /// Bytes requested.
        bytes: u64,
    },
    /// A header line is longer than [`MAX_HEADER_LINE_BYTES`](crate::cube::MAX_HEADER_LINE_BYTES).
    #[error("expected a header line of at most {limit} bytes, found a longer one")]
    LineTooLong {
        /// The limit, in bytes.
        limit: usize,
    },
    /// The orbital-index list names one orbital twice: its values could be either field's.
    #[error("orbital index {index} is listed twice (first on line {first_line}); each orbital of a file may be listed once")]
    RepeatedOrbital {
        /// The index as written.
        index: i64,
        /// The 1-based line of its first mention.
        first_line: usize,
    },
    /// The data ended before all declared values were read.
    #[error(
        "expected {expected} values after the header, found only {found} before the end of file"
    )]
    TooFewValues {
        /// Values declared by the header (points × values per point).
        expected: u64,
        /// Values actually present.
        found: u64,
    },
    /// Non-blank text after the last declared value.
    #[error(
        "expected the end of file after the last declared value, found {found} (more values than the header declares)"
    )]
    TrailingData {
        /// The first offending text.
        found: String,
    },
    /// `parse_cube` was handed gzip-compressed bytes.
    #[error("expected cube text, found gzip-compressed data (decompress it first, or read the file by name)")]
    Compressed,
}

/// Quotes an excerpt of raw input for an error message: lossy UTF-8, control characters escaped,
/// cut to [`FOUND_EXCERPT_CHARS`] characters with an ellipsis.
pub(crate) fn excerpt(bytes: &[u8]) -> String {
    // Look at a bounded prefix only: the input may be megabytes of garbage.
    let head = bytes.get(..FOUND_EXCERPT_CHARS * 4).unwrap_or(bytes);
    let text = String::from_utf8_lossy(head);
    let mut out = String::from("\"");
    let mut chars = text.chars();
    for c in chars.by_ref().take(FOUND_EXCERPT_CHARS) {
        out.extend(c.escape_debug());
    }
    let truncated = chars.next().is_some() || head.len() < bytes.len();
    if truncated {
        out.push('…');
    }
    out.push('"');
    out
}

/// The `found` text used when a line has no more fields.
pub(crate) const END_OF_LINE: &str = "end of line";
