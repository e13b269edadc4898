//! Streaming reader for the grid values that follow the header.
//!
//! Works directly on the reader's buffer: skip whitespace (counting line feeds for error
//! messages), parse a number in place, store it. Only a number cut by the end of a buffer is
//! copied, into a small carry buffer, and completed from the next one.

use std::io::{BufRead, ErrorKind};
use std::path::Path;

use super::error::excerpt;
use super::number::{NumberError, is_space, parse_token};
use super::{CubeError, CubeErrorKind};

/// Longest token accepted when it straddles two buffers (bytes). No sensible number is longer.
const MAX_CARRIED_TOKEN: usize = 1024;

/// Destination of the values: de-interleaves them into one vector per component.
struct Sink<'a> {
    fields: &'a mut [Vec<f64>],
    component: usize,
    count: u64,
    total: u64,
}

impl Sink<'_> {
    #[inline(always)]
    fn push(&mut self, v: f64) {
        // `component` < fields.len() always; vectors were reserved for exactly their share,
        // and callers check `count < total` first, so no push reallocates.
        if let Some(f) = self.fields.get_mut(self.component) {
            f.push(v);
        }
        self.component += 1;
        if self.component == self.fields.len() {
            self.component = 0;
        }
        self.count += 1;
    }

    #[inline(always)]
    fn full(&self) -> bool {
        self.count >= self.total
    }
}

/// Reads exactly `total` values into `fields` (value index fastest), then requires that only
/// whitespace remains. `line` is the 1-based line number where the data start.
pub(crate) fn read_values<R: BufRead>(
    reader: &mut R,
    src: &Path,
    fields: &mut [Vec<f64>],
    total: u64,
    mut line: usize,
) -> Result<(), CubeError> {
    let err = |line: usize, kind: CubeErrorKind| CubeError::new(src, Some(line), kind);
    let trailing = |line: usize, tok: &[u8]| err(line, CubeErrorKind::TrailingData { found: excerpt(tok) });
    let value_error = |line: usize, tok: &[u8], e: NumberError, index: u64| match e {
        NumberError::NotFinite => err(
            line,
            CubeErrorKind::NotFinite {
                found: excerpt(tok),
            },
        ),
        NumberError::Syntax => err(
            line,
            CubeErrorKind::Syntax {
                expected: format!("value {} of {total} (a number)", index + 1),
                found: excerpt(tok),
            },
        ),
    };

    let mut sink = Sink {
        fields,
        component: 0,
        count: 0,
        total,
    };
    // A token cut by the end of a buffer, and the line it is on.
    let mut carry: Vec<u8> = Vec::new();
    let mut carry_line = line;
    // Line of the last value stored, for the "too few values" report.
    let mut last_value_line = line;

    loop {
        let buf = match reader.fill_buf() {
            Ok(b) => b,
            Err(e) if e.kind() == ErrorKind::Interrupted => continue,
            Err(e) => return Err(err(line, CubeErrorKind::Io(e))),
        };
        let len = buf.len();
        if len == 0 {
            break;
        }
        let mut pos = 0;

        if !carry.is_empty() {
            // Complete the cut token with the bytes up to the next whitespace.
            let end = buf.iter().position(|&b| is_space(b)).unwrap_or(len);
            let piece = buf.get(..end).unwrap_or(buf);
            if carry.len() + piece.len() > MAX_CARRIED_TOKEN {
                carry.extend_from_slice(piece.get(..64).unwrap_or(piece));
                if sink.full() {
                    return Err(trailing(carry_line, &carry));
                }
                let expected = format!("value {} of {total} (a number)", sink.count + 1);
                return Err(err(
                    carry_line,
                    CubeErrorKind::Syntax {
                        expected,
                        found: excerpt(&carry),
                    },
                ));
            }
            carry.extend_from_slice(piece);
            if end == len {
                reader.consume(len);
                continue;
            }
            if sink.full() {
                return Err(trailing(carry_line, &carry));
            }
            let v =
                parse_token(&carry).map_err(|e| value_error(carry_line, &carry, e, sink.count))?;
            sink.push(v);
            last_value_line = carry_line;
            carry.clear();
            pos = end;
        }

        while pos < len {
            // Skip whitespace, counting line feeds.
            while let Some(&b) = buf.get(pos) {
                if b == b' ' {
                    pos += 1;
                } else if b == b'\n' {
                    line += 1;
                    pos += 1;
                } else if is_space(b) {
                    pos += 1;
                } else {
                    break;
                }
            }
            let Some(rest) = buf.get(pos..) else { break };
            if rest.is_empty() {
                break;
            }
            if sink.full() {
                let end = rest.iter().position(|&b| is_space(b)).unwrap_or(rest.len());
                if end == rest.len() {
                    // Cut by the end of the buffer: quote it whole, once the next read ends it.
                    carry.extend_from_slice(rest);
                    carry_line = line;
                    break;
                }
                return Err(trailing(line, rest.get(..end).unwrap_or(rest)));
            }
            // Fast path: a finite number followed by whitespace inside this buffer.
            if let Ok((v, n)) = fast_float2::parse_partial::<f64, _>(rest) {
                if v.is_finite() && rest.get(n).is_some_and(|&b| is_space(b)) {
                    sink.push(v);
                    last_value_line = line;
                    pos += n;
                    continue;
                }
            }
            // Slow path: find the whole token first.
            let end = rest.iter().position(|&b| is_space(b)).unwrap_or(rest.len());
            if end == rest.len() {
                // Cut by the end of the buffer (or the input): finish it with the next read.
                carry.extend_from_slice(rest);
                carry_line = line;
                break;
            }
            let tok = rest.get(..end).unwrap_or(rest);
            let v = parse_token(tok).map_err(|e| value_error(line, tok, e, sink.count))?;
            sink.push(v);
            last_value_line = line;
            pos += end;
        }
        reader.consume(len);
    }

    if !carry.is_empty() {
        // The input ended inside a token: it is complete now.
        if sink.full() {
            return Err(trailing(carry_line, &carry));
        }
        let v = parse_token(&carry).map_err(|e| value_error(carry_line, &carry, e, sink.count))?;
        sink.push(v);
        last_value_line = carry_line;
    }
    if !sink.full() {
        let kind = CubeErrorKind::TooFewValues {
            expected: total,
            found: sink.count,
        };
        return Err(err(last_value_line, kind));
    }
    Ok(())
}
