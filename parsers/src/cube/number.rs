//! Number tokens: plain decimal floats in any common spelling, plus Fortran `D` exponents.

/// Why a token is not an acceptable value.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub(crate) enum NumberError {
    /// Not a number at all.
    Syntax,
    /// A NaN or infinity spelling, or a number beyond the range of `f64`.
    NotFinite,
}

/// Longest token for which the `D`-exponent rewrite is attempted (bytes). Real exponent
/// spellings are ~15 characters; anything longer is not a number a writer would produce.
const MAX_REWRITE: usize = 64;

/// ASCII whitespace separating tokens: space, tab, LF, VT, FF, CR.
#[inline(always)]
pub(crate) fn is_space(b: u8) -> bool {
    b == b' ' || b.wrapping_sub(b'\t') < 5
}

/// Parses one complete whitespace-free token as a finite `f64`.
pub(crate) fn parse_token(tok: &[u8]) -> Result<f64, NumberError> {
    match fast_float2::parse_partial::<f64, _>(tok) {
        Ok((v, n)) if n == tok.len() => return finite(v),
        Ok((_, n)) if matches!(tok.get(n), Some(b'D' | b'd')) => {
            // Fortran double-precision exponent: rewrite `D` as `e` on a stack copy.
            let mut copy = [0u8; MAX_REWRITE];
            if let Some(dst) = copy.get_mut(..tok.len()) {
                dst.copy_from_slice(tok);
                if let Some(d) = dst.get_mut(n) {
                    *d = b'e';
                }
                if let Ok(v) = fast_float2::parse::<f64, _>(&*dst) {
                    return finite(v);
                }
            }
        }
        _ => {}
    }
    if spells_non_finite(tok) {
        Err(NumberError::NotFinite)
    } else {
        Err(NumberError::Syntax)
    }
}

#[inline(always)]
fn finite(v: f64) -> Result<f64, NumberError> {
    if v.is_finite() {
        Ok(v)
    } else {
        Err(NumberError::NotFinite)
    }
}

/// Whether a token that failed to parse is a NaN/infinity spelling (`nan`, `NaNQ`, `-Infinity`,
/// `1.#INF`, `-1.#IND`...), so that the error can say "not finite" rather than "not a number".
fn spells_non_finite(tok: &[u8]) -> bool {
    let body = match tok.first() {
        Some(b'+' | b'-') => tok.get(1..).unwrap_or(&[]),
        _ => tok,
    };
    let starts = |p: &[u8]| {
        body.len() >= p.len() && body.iter().zip(p).all(|(a, b)| a.eq_ignore_ascii_case(b))
    };
    if starts(b"nan") || starts(b"inf") {
        return true;
    }
    // Some C runtimes print e.g. `1.#INF` or `-1.#IND` (from memory).
    body.windows(4).any(|w| {
        w.first() == Some(&b'#')
            && [b"#inf", b"#ind", b"#nan", b"#qna", b"#sna"]
                .iter()
                .any(|p| w.eq_ignore_ascii_case(&p[..]))
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn accepts_common_spellings() {
        let cases: [(&str, f64); 13] = [
            ("1.0E-05", 1.0e-5),
            ("-1.23456e+00", -1.23456),
            ("0.5", 0.5),
            ("1e-300", 1e-300),
            (".5", 0.5),
            ("-.5", -0.5),
            ("+2", 2.0),
            ("3.", 3.0),
            ("1.0D-05", 1.0e-5),
            ("-2.5d+02", -250.0),
            ("7D3", 7000.0),
            ("4.9E-324", 4.9e-324),
            ("1e-400", 0.0),
        ];
        for (text, want) in cases {
            assert_eq!(parse_token(text.as_bytes()), Ok(want), "{text}");
        }
        let neg_zero = parse_token(b"-0.0").map(f64::to_bits);
        assert_eq!(neg_zero, Ok((-0.0f64).to_bits()));
    }

    #[test]
    fn rejects_non_finite_spellings() {
        for text in [
            "nan",
            "NaN",
            "-nan",
            "NAN",
            "inf",
            "-inf",
            "+Infinity",
            "INF",
            "1e999",
            "-1D400",
            "1.#INF",
            "-1.#IND",
            "NaNQ",
            "nan(0x1)",
        ] {
            assert_eq!(
                parse_token(text.as_bytes()),
                Err(NumberError::NotFinite),
                "{text}"
            );
        }
    }

    #[test]
    fn rejects_non_numbers() {
        for text in [
            "",
            "abc",
            "1.0.0",
            "1e",
            "1D",
            "1.0D-",
            "--1",
            "1,5",
            "0x10",
            ".",
            "-",
            "1.0E-05-2.0E-05",
            "1Dx",
            "e5",
            "********",
        ] {
            assert_eq!(
                parse_token(text.as_bytes()),
                Err(NumberError::Syntax),
                "{text}"
            );
        }
    }

    #[test]
    fn whitespace_class() {
        for b in [b' ', b'\t', b'\n', 0x0b, 0x0c, b'\r'] {
            assert!(is_space(b));
        }
        for b in [0u8, 8, 14, b'a', b'0', 0xff] {
            assert!(!is_space(b));
        }
    }
}
