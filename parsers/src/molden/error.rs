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

/// The kinds of failure: the same as the other whole-text readers' (fchk, wfn, wfx).
pub type MoldenErrorKind = crate::text::TextErrorKind;
