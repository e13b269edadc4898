//! The blank-separated fields of one line of a text format, read in order, with errors that
//! name the file and the line. Each format says what separates its fields and how it reports a
//! bad one ([`LineErrors`]); the cursor is the same for all.

use std::marker::PhantomData;
use std::path::Path;

use nom::bytes::complete::{take_till1, take_while};
use nom::character::complete::{digit1, one_of};
use nom::combinator::{all_consuming, opt, recognize};
use nom::sequence::preceded;
use nom::{IResult, Parser};

use crate::cube::error::{END_OF_LINE, excerpt};
use crate::cube::number::{NumberError, parse_token};

/// What separates a format's fields and how it reports a field that is not what was expected.
pub(crate) trait LineErrors: Sized {
    /// Whether `b` separates fields (the line terminator has been stripped).
    fn is_blank(b: u8) -> bool;
    /// `expected` was wanted at `line` of `src`; `found` is an excerpt of the input (or
    /// `end of line`).
    fn syntax(src: &Path, line: usize, expected: String, found: String) -> Self;
    /// A NaN or infinity spelling, or a number beyond the range of `f64`, at `line` of `src`.
    fn not_finite(src: &Path, line: usize, found: String) -> Self;
}

/// nom: a whole field that is an optionally signed run of decimal digits.
pub(crate) fn integer_text(input: &[u8]) -> IResult<&[u8], &[u8]> {
    all_consuming(recognize((opt(one_of("+-")), digit1))).parse(input)
}

/// Cursor over the fields of one line.
pub(crate) struct Fields<'a, E> {
    rest: &'a [u8],
    line: usize,
    src: &'a Path,
    errors: PhantomData<E>,
}

impl<'a, E: LineErrors> Fields<'a, E> {
    /// The fields of `text`, line `line` (1-based) of `src`.
    pub(crate) fn new(src: &'a Path, line: usize, text: &'a [u8]) -> Self {
        Self {
            rest: text,
            line,
            src,
            errors: PhantomData,
        }
    }

    /// The 1-based line number.
    pub(crate) fn line(&self) -> usize {
        self.line
    }

    /// The file.
    pub(crate) fn src(&self) -> &'a Path {
        self.src
    }

    fn syntax(&self, expected: String, found: String) -> E {
        E::syntax(self.src, self.line, expected, found)
    }

    /// The next field, if any.
    pub(crate) fn token(&mut self) -> Option<&'a [u8]> {
        let mut field = preceded(take_while(E::is_blank), take_till1(E::is_blank));
        let parsed: IResult<&[u8], &[u8]> = field.parse(self.rest);
        let (rest, tok) = parsed.ok()?;
        self.rest = rest;
        Some(tok)
    }

    /// Whether only blanks remain.
    pub(crate) fn at_end(&self) -> bool {
        self.rest.iter().all(|&b| E::is_blank(b))
    }

    /// The next field as text; `what` names it for the error message.
    pub(crate) fn word(&mut self, what: &str) -> Result<String, E> {
        self.token()
            .map(|t| String::from_utf8_lossy(t).into_owned())
            .ok_or_else(|| self.syntax(what.to_string(), END_OF_LINE.to_string()))
    }

    /// The next field as a 64-bit integer.
    pub(crate) fn int(&mut self, what: &str) -> Result<i64, E> {
        let expected = || format!("{what} (an integer)");
        let Some(tok) = self.token() else {
            return Err(self.syntax(expected(), END_OF_LINE.to_string()));
        };
        integer_text(tok)
            .ok()
            .and_then(|(_, digits)| std::str::from_utf8(digits).ok())
            .and_then(|s| s.parse::<i64>().ok())
            .ok_or_else(|| self.syntax(expected(), excerpt(tok)))
    }

    /// The next field as an integer if the line has one more field.
    pub(crate) fn opt_int(&mut self, what: &str) -> Result<Option<i64>, E> {
        if self.at_end() {
            Ok(None)
        } else {
            self.int(what).map(Some)
        }
    }

    /// The next field as a finite float (`E` or Fortran `D` exponents).
    pub(crate) fn float(&mut self, what: &str) -> Result<f64, E> {
        let expected = || format!("{what} (a number)");
        let Some(tok) = self.token() else {
            return Err(self.syntax(expected(), END_OF_LINE.to_string()));
        };
        parse_token(tok).map_err(|e| match e {
            NumberError::NotFinite => E::not_finite(self.src, self.line, excerpt(tok)),
            NumberError::Syntax => self.syntax(expected(), excerpt(tok)),
        })
    }

    /// [`Fields::float`], and half a unit in the last digit as written (the absolute rounding
    /// the writer may have made: `0.1234` → 5e-5, `1.5E-03` → 5e-5, `12` → 0.5).
    pub(crate) fn float_with_resolution(&mut self, what: &str) -> Result<(f64, f64), E> {
        let before = self.rest;
        let value = self.float(what)?;
        let tok = before
            .iter()
            .position(|&b| !E::is_blank(b))
            .map(|start| &before[start..])
            .map(|t| &t[..t.iter().position(|&b| E::is_blank(b)).unwrap_or(t.len())])
            .unwrap_or_default();
        Ok((value, half_unit_in_last_place(tok)))
    }

    /// Requires that nothing but blanks remain on the line.
    pub(crate) fn finish(&mut self, after: &str) -> Result<(), E> {
        match self.token() {
            None => Ok(()),
            Some(tok) => {
                Err(self.syntax(format!("the end of the line after {after}"), excerpt(tok)))
            }
        }
    }
}

/// Half a unit in the last written digit of a number token that parsed (mantissa digits after
/// the point, shifted by an `E`/`D` exponent).
pub(crate) fn half_unit_in_last_place(tok: &[u8]) -> f64 {
    let split = tok.iter().position(|b| matches!(b, b'e' | b'E' | b'd' | b'D'));
    let (mantissa, exponent) = match split {
        Some(k) => (&tok[..k], &tok[k + 1..]),
        None => (tok, &tok[tok.len()..]),
    };
    let decimals = mantissa
        .iter()
        .position(|&b| b == b'.')
        .map_or(0, |p| mantissa[p + 1..].iter().filter(|b| b.is_ascii_digit()).count()) as i32;
    let exponent = std::str::from_utf8(exponent).ok().and_then(|e| e.parse::<i32>().ok()).unwrap_or(0);
    0.5 * 10f64.powi(exponent.saturating_sub(decimals).clamp(-320, 300))
}

#[cfg(test)]
mod tests {
    use super::half_unit_in_last_place as h;

    #[test]
    fn resolution_of_written_numbers() {
        let close = |a: f64, b: f64| (a - b).abs() <= 1e-12 * b;
        assert!(close(h(b"0.1234"), 5e-5));
        assert!(close(h(b"-0.2886751346"), 5e-11));
        assert!(close(h(b"1.5E-03"), 5e-5));
        assert!(close(h(b"1.5D+02"), 5.0));
        assert!(close(h(b"12"), 0.5));
        assert!(close(h(b".5"), 0.05));
    }
}
