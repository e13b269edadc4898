//! Memory: what a file will need, what the machine or job allows, and big buffers that fail
//! with an error instead of aborting the process.
//!
//! - [`estimate`]: the peak memory of one file from its header (grid points times the buffers
//!   the engine holds at once), checked against measured peaks (see the README's *Memory*);
//! - [`ledger`]: which files may run at once under the budget;
//! - [`limits`]: the budget's default from the job's limit (cgroup, SLURM, address-space limit)
//!   or the machine's memory, with a safety margin;
//! - [`try_filled`] and [`try_collect`]: fallible allocation for grid-sized buffers, so that an
//!   estimate that is off fails the file rather than the process (under an address-space limit;
//!   a cgroup limit kills on touch, which only the estimate can prevent).

pub mod estimate;
pub mod ledger;
pub mod limits;

pub use limits::{BudgetSource, MemoryBudget};

use std::fmt;
use thiserror::Error;

/// Bytes in a gibibyte.
pub const GIB: u64 = 1 << 30;
/// Bytes in a mebibyte.
pub const MIB: u64 = 1 << 20;

/// A buffer that could not be allocated.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Error)]
#[error("could not allocate {} for {what}", Bytes(*bytes))]
pub struct OutOfMemory {
    /// What the buffer was for.
    pub what: &'static str,
    /// Its size, bytes.
    pub bytes: u64,
}

/// A size in bytes, shown in binary units with three significant digits (`3.07 GiB`, `512 MiB`).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Bytes(pub u64);

impl fmt::Display for Bytes {
    fn fmt(&self, f: &mut fmt::Formatter) -> fmt::Result {
        let b = self.0 as f64;
        let (value, unit) = match self.0 {
            n if n >= 1 << 40 => (b / (1u64 << 40) as f64, "TiB"),
            n if n >= GIB => (b / GIB as f64, "GiB"),
            n if n >= MIB => (b / MIB as f64, "MiB"),
            n if n >= 1 << 10 => (b / 1024.0, "KiB"),
            n => return write!(f, "{n} bytes"),
        };
        let digits = if value >= 100.0 { 0 } else if value >= 10.0 { 1 } else { 2 };
        write!(f, "{value:.digits$} {unit}")
    }
}

/// A size given by a person: a number with a binary unit, `K`, `M`, `G` or `T` (powers of
/// 1024, as in SLURM and `ulimit`; any case, `B` or `iB` may follow), e.g. `8G`, `500M`,
/// `1.5GiB`. A bare number is refused: without a unit it is too easily meant as megabytes.
pub fn parse_size(text: &str) -> Result<u64, String> {
    let t = text.trim();
    let split = t.find(|c: char| !(c.is_ascii_digit() || c == '.')).unwrap_or(t.len());
    let (number, unit) = t.split_at(split);
    let unit = unit.trim();
    let value: f64 = number.parse().map_err(|_| format!("`{text}` is not a size (expected a number and a unit, e.g. 8G or 500M)"))?;
    let base = unit.trim_end_matches(['b', 'B']).trim_end_matches(['i', 'I']);
    let scale: u64 = match base.to_ascii_uppercase().as_str() {
        "K" => 1 << 10,
        "M" => MIB,
        "G" => GIB,
        "T" => 1 << 40,
        "" => return Err(format!("`{text}` has no unit; give one: K, M, G or T (e.g. 8G, 500M)")),
        _ => return Err(format!("`{text}`: unknown unit `{unit}` (expected K, M, G or T, e.g. 8G, 500M)")),
    };
    let bytes = value * scale as f64;
    if !(bytes.is_finite() && bytes >= 1.0 && bytes < u64::MAX as f64) {
        return Err(format!("`{text}` is not a usable size (at least 1 byte)"));
    }
    Ok(bytes as u64)
}

/// `len` copies of `value` in a new vector, or an error naming `what` and the bytes it needed.
pub fn try_filled<T: Clone>(len: usize, value: T, what: &'static str) -> Result<Vec<T>, OutOfMemory> {
    let mut v = reserve(len, what)?;
    v.resize(len, value);
    Ok(v)
}

/// The first `len` items of `items` in a new vector whose memory is reserved first, or an error
/// naming `what` and the bytes it needed.
pub fn try_collect<T>(len: usize, items: impl IntoIterator<Item = T>, what: &'static str) -> Result<Vec<T>, OutOfMemory> {
    let mut v = reserve(len, what)?;
    v.extend(items.into_iter().take(len));
    Ok(v)
}

fn reserve<T>(len: usize, what: &'static str) -> Result<Vec<T>, OutOfMemory> {
    let mut v = Vec::new();
    v.try_reserve_exact(len).map_err(|_| OutOfMemory { what, bytes: (len as u64).saturating_mul(std::mem::size_of::<T>() as u64) })?;
    Ok(v)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sizes_need_a_binary_unit() {
        assert_eq!(parse_size("8G"), Ok(8 * GIB));
        assert_eq!(parse_size("500M"), Ok(500 * MIB));
        assert_eq!(parse_size("1.5GiB"), Ok(3 * GIB / 2));
        assert_eq!(parse_size(" 64 kb "), Ok(64 << 10));
        assert_eq!(parse_size("2t"), Ok(2 << 40));
        for bad in ["8000", "8X", "G", "", "-1G", "0M", "1e3G", "nanG"] {
            assert!(parse_size(bad).is_err(), "{bad}");
        }
        assert!(parse_size("8000").unwrap_err().contains("no unit"));
    }

    #[test]
    fn bytes_read_in_binary_units() {
        assert_eq!(Bytes(512).to_string(), "512 bytes");
        assert_eq!(Bytes(3 * GIB + GIB / 10).to_string(), "3.10 GiB");
        assert_eq!(Bytes(512 * MIB).to_string(), "512 MiB");
        assert_eq!(Bytes(15 * GIB).to_string(), "15.0 GiB");
    }

    #[test]
    fn impossible_buffers_are_errors() {
        let e = try_filled(usize::MAX / 16, 0.0f64, "a test buffer").unwrap_err();
        assert_eq!(e.what, "a test buffer");
        assert!(e.to_string().starts_with("could not allocate"));
        assert_eq!(try_collect(3, [1, 2, 3, 4], "x").unwrap(), vec![1, 2, 3]);
    }
}
