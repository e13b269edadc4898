//! Memory: big buffers that fail with an error instead of aborting the process.
//!
//! [`try_filled`] and [`try_collect`]: fallible allocation for grid-sized buffers, so that a
//! grid too large for the memory at hand fails its file rather than the process (under an
//! address-space limit; a cgroup limit kills on touch).

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
