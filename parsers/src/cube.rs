//! Reader for the volumetric grid "cube" text format, plain or gzip-compressed.
//!
//! Layout as accepted here:
//!
//! 1. two free comment lines;
//! 2. atom count (negative: an orbital-index list follows the atoms), origin x y z, and an
//!    optional number of values per point;
//! 3. three axis lines: point count and step vector. Positive counts mean lengths in Bohr,
//!    negative counts lengths in Ångström (common practice); all three must agree. The unit
//!    covers the origin, the steps and the atom positions and is reported, never applied;
//! 4. one line per atom: atomic number, nuclear charge, x y z;
//! 5. for a negative atom count: the orbital count m and m indices, wrapping freely over lines;
//! 6. the values, first axis slowest, third axis fastest, and several values per point (m
//!    orbitals, or the count from line 3) fastest of all; line breaks anywhere.
//!
//! Nothing here knows physics: numbers come back exactly as written.

mod data;
pub(crate) mod error;
mod header;
pub(crate) mod number;

use std::fs::File;
use std::io::{BufRead, BufReader, Cursor, Read};
use std::path::Path;

pub use error::{CubeError, CubeErrorKind, FOUND_EXCERPT_CHARS};

/// Default for [`ReadParams::max_values`]: 2^33 values (64 GiB of `f64`).
pub const DEFAULT_MAX_VALUES: u64 = 1 << 33;
/// Largest accepted |atom count|; larger counts are taken as a corrupt header.
pub const MAX_ATOMS: u64 = 1_000_000;
/// Largest accepted orbital count in an orbital-index list.
pub const MAX_ORBITALS: u64 = 1_000_000;
/// Largest accepted number of values per point given on the atom-count line.
pub const MAX_VALUES_PER_POINT: u64 = 1_000_000;
/// Longest accepted header line, in bytes, excluding its terminator.
pub const MAX_HEADER_LINE_BYTES: usize = 1 << 20;
/// Upper bound of deflate's expansion ratio (decompressed bytes per compressed byte); common
/// knowledge about the deflate format, used to bound what a gzip file can contain.
pub const GZIP_MAX_EXPANSION: u64 = 1032;

/// Read buffer for the value stream, in bytes: large enough that refills are rare.
const READ_BUFFER_BYTES: usize = 1 << 20;
/// Buffer between the file and the gzip decoder, in bytes.
const GZIP_INPUT_BUFFER_BYTES: usize = 1 << 18;
/// The two bytes that open every gzip member.
pub(crate) const GZIP_MAGIC: [u8; 2] = [0x1f, 0x8b];

/// Length unit of the origin, axis steps and atom positions, as selected by the sign of the
/// axis point counts.
#[derive(Debug, Clone, Copy, PartialEq, Eq, Hash)]
pub enum LengthUnit {
    /// Positive point counts: lengths in Bohr.
    Bohr,
    /// Negative point counts: lengths in Ångström.
    Angstrom,
}

/// One atom line, as written.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CubeAtom {
    /// Atomic number.
    pub atomic_number: i32,
    /// Nuclear charge column, in elementary charges (writers often put 0.0 here).
    pub charge: f64,
    /// Position, in the header's [`LengthUnit`].
    pub position: [f64; 3],
}

/// One axis line, as written.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CubeAxis {
    /// Number of grid points along this axis (the absolute value of the count written).
    pub points: usize,
    /// Step vector between neighbouring points, in the header's [`LengthUnit`].
    pub step: [f64; 3],
}

/// Everything before the grid values.
#[derive(Debug, Clone, PartialEq)]
pub struct CubeHeader {
    /// The two free comment lines, without line terminators (invalid UTF-8 replaced).
    pub comments: [String; 2],
    /// Position of the first grid point, in [`CubeHeader::unit`].
    pub origin: [f64; 3],
    /// The three axes; the first varies slowest in the data.
    pub axes: [CubeAxis; 3],
    /// Unit of `origin`, the axis steps and the atom positions (not converted).
    pub unit: LengthUnit,
    /// Atom lines, in file order.
    pub atoms: Vec<CubeAtom>,
    /// Orbital indices as written; `Some` exactly when the atom count was negative.
    pub orbital_ids: Option<Vec<i64>>,
    /// Values stored per grid point (orbital count, or the count on the atom-count line).
    pub values_per_point: usize,
    /// 1-based line number of the first data line.
    pub data_start_line: usize,
}

impl CubeHeader {
    /// Point counts of the three axes, `[n0, n1, n2]`.
    pub fn shape(&self) -> [usize; 3] {
        [
            self.axes[0].points,
            self.axes[1].points,
            self.axes[2].points,
        ]
    }

    /// Number of grid points `n0*n1*n2`, or `None` if it overflows `usize` (headers returned by
    /// this module never overflow).
    pub fn point_count(&self) -> Option<usize> {
        let [a, b, c] = self.shape();
        a.checked_mul(b)?.checked_mul(c)
    }

    /// Number of values in the data section (points × values per point), or `None` on overflow.
    pub fn value_count(&self) -> Option<u64> {
        let [a, b, c] = self.shape().map(|n| n as u64);
        a.checked_mul(b)?
            .checked_mul(c)?
            .checked_mul(self.values_per_point as u64)
    }
}

/// A whole cube file.
#[derive(Debug, Clone, PartialEq)]
pub struct CubeFile {
    /// The header.
    pub header: CubeHeader,
    /// One vector per value-per-point component (de-interleaved while reading, so memory is one
    /// grid), each of length n0*n1*n2 in file order: index = (i0*n1 + i1)*n2 + i2. Values are
    /// as written, in whatever unit the writer used.
    pub fields: Vec<Vec<f64>>,
}

impl CubeFile {
    /// Value of `component` at grid point `[i0, i1, i2]`, or `None` if out of range.
    pub fn get(&self, component: usize, [i0, i1, i2]: [usize; 3]) -> Option<f64> {
        let [n0, n1, n2] = self.header.shape();
        if i0 >= n0 || i1 >= n1 || i2 >= n2 {
            return None;
        }
        let index = i0
            .checked_mul(n1)?
            .checked_add(i1)?
            .checked_mul(n2)?
            .checked_add(i2)?;
        self.fields.get(component)?.get(index).copied()
    }
}

/// Limits applied while reading.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct ReadParams {
    /// Hard cap on n0*n1*n2*values_per_point (values, not bytes; each costs 8 bytes in memory).
    pub max_values: u64,
}

impl Default for ReadParams {
    fn default() -> Self {
        Self {
            max_values: DEFAULT_MAX_VALUES,
        }
    }
}

/// Reads a cube file, gzip-compressed or not (recognised by its first two bytes, not its name).
///
/// Before any grid memory is reserved, the declared size is checked against
/// `params.max_values` and against what the file could hold at most.
pub fn read_cube(path: &Path, params: &ReadParams) -> Result<CubeFile, CubeError> {
    let (mut reader, size_limit) = open(path)?;
    read_all(&mut reader, path, size_limit, params)
}

/// Reads only the header of a cube file (plain or gzip), leaving the values unread.
///
/// The declared grid size is checked against what the file could hold, as in [`read_cube`];
/// no [`ReadParams::max_values`] cap is applied.
pub fn read_cube_header(path: &Path) -> Result<CubeHeader, CubeError> {
    let (mut reader, size_limit) = open(path)?;
    let parsed = header::parse_header(&mut reader, path)?;
    check_size(&parsed, path, size_limit, u64::MAX)?;
    Ok(parsed.header)
}

/// Parses uncompressed cube text from `reader`; `source` names it in errors.
///
/// `size_limit`, if known, is the largest number of bytes the whole text could have (header
/// included); it lets an impossible header be rejected before memory is reserved.
pub fn parse_cube<R: BufRead>(
    mut reader: R,
    source: &Path,
    size_limit: Option<u64>,
    params: &ReadParams,
) -> Result<CubeFile, CubeError> {
    reject_compressed(&mut reader, source)?;
    read_all(&mut reader, source, size_limit, params)
}

/// Parses the header of uncompressed cube text, leaving `reader` at the first data line.
/// Arguments as for [`parse_cube`]; no [`ReadParams::max_values`] cap is applied.
pub fn parse_cube_header<R: BufRead>(
    reader: &mut R,
    source: &Path,
    size_limit: Option<u64>,
) -> Result<CubeHeader, CubeError> {
    reject_compressed(reader, source)?;
    let parsed = header::parse_header(reader, source)?;
    check_size(&parsed, source, size_limit, u64::MAX)?;
    Ok(parsed.header)
}

fn read_all<R: BufRead>(
    reader: &mut R,
    src: &Path,
    size_limit: Option<u64>,
    params: &ReadParams,
) -> Result<CubeFile, CubeError> {
    let parsed = header::parse_header(reader, src)?;
    let total = check_size(&parsed, src, size_limit, params.max_values)?;
    let header = parsed.header;

    let vpp = header.values_per_point;
    // check_size bounded total by memory-addressable sizes; vpp >= 1.
    let per_field = usize::try_from(total / vpp as u64).unwrap_or(usize::MAX);
    let mut fields = Vec::new();
    let oom = |_| {
        CubeError::new(
            src,
            None,
            CubeErrorKind::OutOfMemory {
                bytes: total.saturating_mul(8),
            },
        )
    };
    fields.try_reserve_exact(vpp).map_err(oom)?;
    for _ in 0..vpp {
        let mut f: Vec<f64> = Vec::new();
        f.try_reserve_exact(per_field).map_err(oom)?;
        fields.push(f);
    }
    data::read_values(reader, src, &mut fields, total, header.data_start_line)?;
    Ok(CubeFile { header, fields })
}

/// Line of the third axis line: by then the header has declared the grid size.
const SIZE_LINE: usize = 6;

/// Checks the declared number of values against `max_values` and against what the remaining
/// input could hold (each value takes at least one character plus a separator). Returns it.
fn check_size(
    parsed: &header::ParsedHeader,
    src: &Path,
    size_limit: Option<u64>,
    max_values: u64,
) -> Result<u64, CubeError> {
    let h = &parsed.header;
    let err = |kind| CubeError::new(src, Some(SIZE_LINE), kind);
    let counts = h.shape().map(|n| n as u64);
    let vpp = h.values_per_point as u64;
    let total = h.value_count().ok_or_else(|| {
        err(CubeErrorKind::CountOverflow {
            counts,
            values_per_point: vpp,
        })
    })?;
    if total > max_values {
        // Named for the user: what the limit is, not the parameter that sets it.
        let why = "the memory limit for one grid (8 bytes per value)".to_string();
        return Err(err(CubeErrorKind::TooLarge {
            claimed: total,
            limit: max_values,
            why,
        }));
    }
    if let Some(limit) = size_limit {
        let remaining = limit.saturating_sub(parsed.bytes);
        let fit = remaining / 2 + remaining % 2;
        if total > fit {
            let why = format!(
                "the input size ({remaining} bytes after the header, at least 2 per value; \
                 file truncated or header wrong)"
            );
            return Err(err(CubeErrorKind::TooLarge {
                claimed: total,
                limit: fit,
                why,
            }));
        }
    }
    // The grid must also be addressable in memory.
    let addressable = (isize::MAX as u64) / 8;
    if total > addressable {
        let why = "the address space of this machine".to_string();
        return Err(err(CubeErrorKind::TooLarge {
            claimed: total,
            limit: addressable,
            why,
        }));
    }
    Ok(total)
}

/// Fails if the input starts with the gzip magic bytes: `parse_cube` expects text.
fn reject_compressed<R: BufRead>(reader: &mut R, src: &Path) -> Result<(), CubeError> {
    let head = reader
        .fill_buf()
        .map_err(|e| CubeError::new(src, Some(1), CubeErrorKind::Io(e)))?;
    if head.starts_with(&GZIP_MAGIC) {
        return Err(CubeError::new(src, Some(1), CubeErrorKind::Compressed));
    }
    Ok(())
}

/// Opens `path`, detecting gzip by its magic bytes. Returns the text reader and the largest
/// number of text bytes the file could yield (unknown for pipes and other non-regular files).
fn open(path: &Path) -> Result<(Box<dyn BufRead>, Option<u64>), CubeError> {
    open_text(path).map_err(|e| CubeError::new(path, None, CubeErrorKind::Io(e)))
}

/// Opens `path` as text, decompressing transparently when it starts with the gzip magic bytes
/// (shared by every reader). Returns the reader and the largest number of text bytes the file
/// could yield (unknown for pipes and other non-regular files). An input held in memory by
/// [`crate::stream::hold`] is read from there.
pub(crate) fn open_text(path: &Path) -> std::io::Result<(Box<dyn BufRead>, Option<u64>)> {
    if let Some(bytes) = crate::stream::held(path) {
        let len = bytes.len() as u64;
        return text_reader(Cursor::new(bytes), Some(len));
    }
    let file = File::open(path)?;
    let meta = file.metadata()?;
    text_reader(file, meta.is_file().then_some(meta.len()))
}

/// `source` as text (gzip detected by its magic bytes); `source_len` is its size, if known.
fn text_reader(
    mut source: impl Read + 'static,
    source_len: Option<u64>,
) -> std::io::Result<(Box<dyn BufRead>, Option<u64>)> {
    // Peek at the first two bytes without seeking, so that pipes work too.
    let mut magic = Vec::with_capacity(2);
    (&mut source).take(2).read_to_end(&mut magic)?;
    let gzip = magic == GZIP_MAGIC;
    let stream = Cursor::new(magic).chain(source);

    if gzip {
        let decoder = flate2::bufread::MultiGzDecoder::new(BufReader::with_capacity(
            GZIP_INPUT_BUFFER_BYTES,
            stream,
        ));
        let limit = source_len.map(|n| n.saturating_mul(GZIP_MAX_EXPANSION));
        Ok((
            Box::new(BufReader::with_capacity(READ_BUFFER_BYTES, decoder)),
            limit,
        ))
    } else {
        Ok((
            Box::new(BufReader::with_capacity(READ_BUFFER_BYTES, stream)),
            source_len,
        ))
    }
}
