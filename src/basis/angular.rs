//! Angular parts of Gaussian shells: Cartesian components, the molden format's component
//! orders, and real solid harmonics.
//!
//! A shell of angular momentum l and contracted radial part R(r) spans the Cartesian
//! components χ_abc = x^a y^b z^c R(r), a + b + c = l (coordinates relative to the centre).
//! Internally they are ordered a descending, then b descending (d: xx, xy, xz, yy, yz, zz).
//! R is normalised so that χ_l00 has unit norm; then (textbook Gaussian integrals)
//!
//!   ⟨χ_abc|χ_a'b'c'⟩ = (a+a'−1)!! (b+b'−1)!! (c+c'−1)!! / (2l−1)!!
//!
//! when a+a', b+b', c+c' are all even, and 0 otherwise, for any contraction: the angular
//! metric within a shell is a pure number.
//!
//! The basis functions a file's coefficients refer to are rows of a matrix T over these
//! components, φ_j = Σ_k T_jk χ_k:
//!
//! - Cartesian shells, in the format's order (p: x, y, z; d: xx, yy, zz, xy, xz, yz;
//!   f: xxx, yyy, zzz, xyy, xxy, xxz, xzz, yzz, yyz, xyz; g: xxxx, yyyy, zzzz, xxxy, xxxz,
//!   yyyx, yyyz, zzzx, zzzy, xxyy, xxzz, yyzz, xxyz, yyxz, zzxy), each component normalised
//!   on its own (so xy is not the xx normalisation times xy). The format defines no Cartesian
//!   order above g ([`molden_cartesian_order`]); Cartesian h and i shells built in code
//!   ([`transformation`]) take the internal order, which is also PySCF's (libcint's) Cartesian
//!   order (`Mole.cart_labels()` of PySCF 2.14: xxxxx, xxxxy, xxxxz, xxxyy, …);
//! - spherical shells, real solid harmonics in the order m = 0, +1, −1, +2, −2, …, each
//!   normalised, with the sign convention of the standard real solid harmonics without the
//!   Condon–Shortley phase (d+1 ∝ xz, d−1 ∝ yz, d+2 ∝ x²−y², d−2 ∝ xy, f+3 ∝ x³−3xy²,
//!   f−3 ∝ 3x²y−y³). The polynomials come from the closed form of Helgaker, Jørgensen and
//!   Olsen, *Molecular Electronic-Structure Theory* (2000), eq. 6.4.48; the normalisation is
//!   computed from the metric above rather than taken from a formula.
//! - s and p shells are the same both ways (p: x, y, z).

/// Number of Cartesian components of angular momentum `l`.
pub fn cartesian_count(l: u32) -> usize {
    let l = l as usize;
    (l + 1) * (l + 2) / 2
}

/// Number of spherical components of angular momentum `l`.
pub fn spherical_count(l: u32) -> usize {
    2 * l as usize + 1
}

/// Cartesian exponents `[a, b, c]` of angular momentum `l` in the internal order (a
/// descending, then b descending).
pub fn cartesian_components(l: u32) -> Vec<[u32; 3]> {
    let mut out = Vec::with_capacity(cartesian_count(l));
    for a in (0..=l).rev() {
        for b in (0..=l - a).rev() {
            out.push([a, b, l - a - b]);
        }
    }
    out
}

/// Position of `[a, b, c]` in [`cartesian_components`] of `a + b + c`.
pub fn cartesian_index([a, b, c]: [u32; 3]) -> usize {
    let l = a + b + c;
    // Components with a larger a come first: Σ_{a'>a} (l − a' + 1) of them.
    let before: u32 = (a + 1..=l).map(|a2| l - a2 + 1).sum();
    (before + (l - a - b)) as usize
}

/// The molden format's Cartesian order for `l ≤ 4`; `None` above, where neither the format nor
/// the writers that produce h and i shells define one: PySCF 2.14's writer
/// (`pyscf/tools/molden.py`, `order_ao_index`) raises "l=5 is not supported" for any shell
/// above g (its `header` writes h and i shells only with the spherical flags `[5d] [7f] [9g]`),
/// and IOData's molden reader knows h only as spherical functions, "as PSI4 and ORCA write
/// them" (theochem/iodata, `iodata/formats/molden.py`). Files with Cartesian h or i shells are
/// therefore refused rather than read in a guessed order.
pub fn molden_cartesian_order(l: u32) -> Option<Vec<[u32; 3]>> {
    let parse = components_named;
    Some(match l {
        0 => vec![[0, 0, 0]],
        1 => parse(&["x", "y", "z"]),
        2 => parse(&["xx", "yy", "zz", "xy", "xz", "yz"]),
        3 => parse(&["xxx", "yyy", "zzz", "xyy", "xxy", "xxz", "xzz", "yzz", "yyz", "xyz"]),
        4 => parse(&[
            "xxxx", "yyyy", "zzzz", "xxxy", "xxxz", "yyyx", "yyyz", "zzzx", "zzzy", "xxyy", "xxzz", "yyzz", "xxyz",
            "yyxz", "zzxy",
        ]),
        _ => return None,
    })
}

/// Exponent triples of component names such as `xxy` (letters counted, order ignored).
pub(crate) fn components_named(names: &[&str]) -> Vec<[u32; 3]> {
    names
        .iter()
        .map(|n| {
            let count = |c: char| n.chars().filter(|&x| x == c).count() as u32;
            [count('x'), count('y'), count('z')]
        })
        .collect()
}

/// (2n − 1)!! as a float; 1 for n = 0 (and for the (−1)!! of odd-free sums).
pub fn odd_double_factorial(n: u32) -> f64 {
    (1..=n).map(|k| (2 * k - 1) as f64).product()
}

/// ⟨χ_u|χ_v⟩ of two components of one shell (see the module header); `u`, `v` exponent triples.
pub fn component_overlap(u: [u32; 3], v: [u32; 3]) -> f64 {
    let l = u[0] + u[1] + u[2];
    let mut num = 1.0;
    for k in 0..3 {
        let s = u[k] + v[k];
        if s % 2 == 1 {
            return 0.0;
        }
        num *= odd_double_factorial(s / 2);
    }
    num / odd_double_factorial(l)
}

fn binomial(n: u32, k: u32) -> f64 {
    if k > n {
        return 0.0;
    }
    (0..k).fold(1.0, |acc, i| acc * (n - i) as f64 / (i + 1) as f64)
}

/// Unnormalised real solid harmonic S_lm as (exponents, coefficient) terms (Helgaker,
/// Jørgensen and Olsen 2000, eq. 6.4.48, with 2v written as the integer w).
pub fn solid_harmonic(l: u32, m: i32) -> Vec<([u32; 3], f64)> {
    let am = m.unsigned_abs();
    let wm = u32::from(m < 0);
    let mut terms: Vec<([u32; 3], f64)> = Vec::new();
    for t in 0..=(l - am) / 2 {
        for u in 0..=t {
            // w = 2v runs over integers of the parity of w_m up to |m|.
            let mut w = wm;
            while w <= am {
                let sign = if (t + (w - wm) / 2) % 2 == 0 { 1.0 } else { -1.0 };
                let c = sign
                    * 0.25f64.powi(t as i32)
                    * binomial(l, t)
                    * binomial(l - t, am + t)
                    * binomial(t, u)
                    * binomial(am, w);
                let e = [2 * t + am - 2 * u - w, 2 * u + w, l - 2 * t - am];
                match terms.iter_mut().find(|(x, _)| *x == e) {
                    Some((_, acc)) => *acc += c,
                    None => terms.push((e, c)),
                }
                w += 2;
            }
        }
    }
    terms.retain(|(_, c)| *c != 0.0);
    terms
}

/// The format's spherical order of m: 0, +1, −1, +2, −2, … (for l = 1 the components are
/// x, y, z instead: see [`transformation`]).
pub fn molden_m_order(l: u32) -> Vec<i32> {
    let mut out = vec![0];
    for m in 1..=l as i32 {
        out.push(m);
        out.push(-m);
    }
    out
}

/// Matrix T (rows: the format's basis functions of the shell; columns: the internal Cartesian
/// components; row-major) with φ_j = Σ_k T_jk χ_k, every φ_j normalised. Cartesian shells
/// above g, which the format does not define, take the internal order (see the module header).
/// `None` above [`MAX_L`](super::MAX_L).
pub fn transformation(l: u32, spherical: bool) -> Option<Vec<f64>> {
    if l > super::MAX_L {
        return None;
    }
    let ncart = cartesian_count(l);
    let rows: Vec<Vec<([u32; 3], f64)>> = if spherical && l >= 2 {
        molden_m_order(l).into_iter().map(|m| solid_harmonic(l, m)).collect()
    } else {
        molden_cartesian_order(l)
            .unwrap_or_else(|| cartesian_components(l))
            .into_iter()
            .map(|e| vec![(e, 1.0)])
            .collect()
    };
    let mut t = vec![0.0; rows.len() * ncart];
    for (j, terms) in rows.iter().enumerate() {
        let norm2: f64 = terms
            .iter()
            .flat_map(|(u, cu)| terms.iter().map(move |(v, cv)| cu * cv * component_overlap(*u, *v)))
            .sum();
        let scale = 1.0 / norm2.sqrt();
        for (e, c) in terms {
            t[j * ncart + cartesian_index(*e)] = c * scale;
        }
    }
    Some(t)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn component_indices_round_trip() {
        for l in 0..=6 {
            for (k, e) in cartesian_components(l).into_iter().enumerate() {
                assert_eq!(cartesian_index(e), k, "{e:?}");
            }
        }
    }

    /// Textbook closed forms of the real solid harmonics (up to a positive factor), as the
    /// format's documentation lists them for d and f (from memory), the standard g forms and
    /// the extreme and zonal h and i ones.
    #[test]
    fn solid_harmonics_match_closed_forms() {
        let poly = |s: &[(&str, f64)]| -> Vec<([u32; 3], f64)> {
            s.iter()
                .map(|(n, c)| {
                    let count = |ch: char| n.chars().filter(|&x| x == ch).count() as u32;
                    ([count('x'), count('y'), count('z')], *c)
                })
                .collect()
        };
        type Poly = Vec<([u32; 3], f64)>;
        let cases: Vec<(u32, i32, Poly)> = vec![
            (2, 0, poly(&[("xx", -1.0), ("yy", -1.0), ("zz", 2.0)])),
            (2, 1, poly(&[("xz", 1.0)])),
            (2, -1, poly(&[("yz", 1.0)])),
            (2, 2, poly(&[("xx", 1.0), ("yy", -1.0)])),
            (2, -2, poly(&[("xy", 1.0)])),
            (3, 0, poly(&[("xxz", -3.0), ("yyz", -3.0), ("zzz", 2.0)])),
            (3, 1, poly(&[("xxx", -1.0), ("xyy", -1.0), ("xzz", 4.0)])),
            (3, -1, poly(&[("yyy", -1.0), ("xxy", -1.0), ("yzz", 4.0)])),
            (3, 2, poly(&[("xxz", 1.0), ("yyz", -1.0)])),
            (3, -2, poly(&[("xyz", 1.0)])),
            (3, 3, poly(&[("xxx", 1.0), ("xyy", -3.0)])),
            (3, -3, poly(&[("yyy", -1.0), ("xxy", 3.0)])),
            // g0 ∝ 35z⁴ − 30z²r² + 3r⁴ = 8z⁴ − 24x²z² − 24y²z² + 3x⁴ + 6x²y² + 3y⁴
            (
                4,
                0,
                poly(&[
                    ("zzzz", 8.0),
                    ("xxzz", -24.0),
                    ("yyzz", -24.0),
                    ("xxxx", 3.0),
                    ("xxyy", 6.0),
                    ("yyyy", 3.0),
                ]),
            ),
            (4, 4, poly(&[("xxxx", 1.0), ("xxyy", -6.0), ("yyyy", 1.0)])),
            (4, -4, poly(&[("xxxy", 1.0), ("xyyy", -1.0)])),
            (4, 3, poly(&[("xxxz", 1.0), ("xyyz", -3.0)])),
            (4, -3, poly(&[("xxyz", 3.0), ("yyyz", -1.0)])),
            (
                4,
                2,
                poly(&[("xxzz", 6.0), ("yyzz", -6.0), ("xxxx", -1.0), ("yyyy", 1.0)]),
            ),
            (4, -2, poly(&[("xyzz", 6.0), ("xxxy", -1.0), ("xyyy", -1.0)])),
            (4, 1, poly(&[("xzzz", 4.0), ("xxxz", -3.0), ("xyyz", -3.0)])),
            (4, -1, poly(&[("yzzz", 4.0), ("xxyz", -3.0), ("yyyz", -3.0)])),
            // h0 ∝ 63z⁵ − 70z³r² + 15zr⁴ and i0 ∝ 231z⁶ − 315z⁴r² + 105z²r⁴ − 5r⁶ (r^l times
            // the Legendre polynomials P5, P6; textbook, from memory), expanded; h±5 and i±6
            // are the real and imaginary parts of (x + iy)^l.
            (
                5,
                0,
                poly(&[("zzzzz", 8.0), ("xxzzz", -40.0), ("yyzzz", -40.0), ("xxxxz", 15.0), ("xxyyz", 30.0), ("yyyyz", 15.0)]),
            ),
            (5, 5, poly(&[("xxxxx", 1.0), ("xxxyy", -10.0), ("xyyyy", 5.0)])),
            (5, -5, poly(&[("xxxxy", 5.0), ("xxyyy", -10.0), ("yyyyy", 1.0)])),
            (
                6,
                0,
                poly(&[
                    ("zzzzzz", 16.0),
                    ("xxzzzz", -120.0),
                    ("yyzzzz", -120.0),
                    ("xxxxzz", 90.0),
                    ("xxyyzz", 180.0),
                    ("yyyyzz", 90.0),
                    ("xxxxxx", -5.0),
                    ("xxxxyy", -15.0),
                    ("xxyyyy", -15.0),
                    ("yyyyyy", -5.0),
                ]),
            ),
            (6, 6, poly(&[("xxxxxx", 1.0), ("xxxxyy", -15.0), ("xxyyyy", 15.0), ("yyyyyy", -1.0)])),
            (6, -6, poly(&[("xxxxxy", 6.0), ("xxxyyy", -20.0), ("xyyyyy", 6.0)])),
        ];
        for (l, m, want) in cases {
            let got = solid_harmonic(l, m);
            assert_eq!(got.len(), want.len(), "l={l} m={m}: {got:?}");
            // One positive factor relates them.
            let (e0, c0) = want[0];
            let g0 = got.iter().find(|(e, _)| *e == e0).expect("term present").1;
            let factor = g0 / c0;
            assert!(factor > 0.0, "l={l} m={m}: sign");
            for (e, c) in &want {
                let g = got.iter().find(|(x, _)| x == e).map(|t| t.1).unwrap_or(0.0);
                assert!(
                    (g - factor * c).abs() < 1e-12 * factor.abs(),
                    "l={l} m={m} {e:?}: {g} vs {}",
                    factor * c
                );
            }
        }
    }

    /// Spherical components of one shell are orthonormal; Cartesian ones have unit norm and
    /// the textbook metric (e.g. ⟨xx|yy⟩ = 1/3).
    #[test]
    fn transformations_are_normalised() {
        for l in 0..=super::super::MAX_L {
            let comps = cartesian_components(l);
            let n = comps.len();
            for spherical in [false, true] {
                let t = transformation(l, spherical).expect("l ≤ MAX_L");
                let rows = t.len() / n;
                assert_eq!(rows, if spherical && l >= 2 { spherical_count(l) } else { n });
                for i in 0..rows {
                    for j in 0..rows {
                        let mut s = 0.0;
                        for (a, &u) in comps.iter().enumerate() {
                            for (b, &v) in comps.iter().enumerate() {
                                s += t[i * n + a] * t[j * n + b] * component_overlap(u, v);
                            }
                        }
                        // Sums of ~ncart² terms of order one: a few hundred ε.
                        let tol = 512.0 * f64::EPSILON;
                        if i == j {
                            assert!((s - 1.0).abs() < tol, "l={l} sph={spherical} {i}: {s}");
                        } else if spherical || l < 2 {
                            assert!(s.abs() < tol, "l={l} sph={spherical} {i},{j}: {s}");
                        }
                    }
                }
            }
        }
        // textbook: ∫x⁴ e^{-2ar²} / ∫x²y² e^{-2ar²} = 3, so the normalised ⟨xx|yy⟩ is 1/3.
        assert!((component_overlap([2, 0, 0], [0, 2, 0]) - 1.0 / 3.0).abs() < 1e-15);
        assert!(molden_cartesian_order(5).is_none());
        assert!(transformation(super::super::MAX_L + 1, true).is_none());
        // Cartesian rows above g are the internal components, one each.
        let t = transformation(5, false).expect("h");
        let n = cartesian_count(5);
        for (j, row) in t.chunks(n).enumerate() {
            assert_eq!(row.iter().position(|&x| x != 0.0), Some(j));
            assert_eq!(row.iter().filter(|&&x| x != 0.0).count(), 1);
        }
    }
}
