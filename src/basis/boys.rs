//! The Boys function F_n(T) = ∫₀¹ t²ⁿ exp(−T t²) dt, for all orders up to [`MAX_ORDER`].
//!
//! - T ≤ [`T_TABLE`]: F_m(T) for the highest order m wanted comes from an eight-term Taylor
//!   expansion about the nearest point T_k of a table with spacing 0.05,
//!   F_m(T_k + δ) = Σ_j F_{m+j}(T_k) (−δ)^j / j! (|δ| ≤ 0.025: truncation below 4e-18
//!   relative), and lower orders by the stable downward recursion
//!   F_{n−1}(T) = (2T F_n(T) + e^{−T}) / (2n − 1).
//! - T > [`T_TABLE`]: F_0(T) = √(π/T) erf(√T) / 2 and the upward recursion
//!   F_{n+1}(T) = ((2n + 1) F_n(T) − e^{−T}) / 2T, stable while 2T > 2n + 1.
//! - The table itself comes from the series F_n(T) = e^{−T} Σ_k (2T)^k / ((2n+1)(2n+3)…(2n+2k+1))
//!   (all terms positive: no cancellation) at its highest order, then downward recursion.
//!
//! All standard (e.g. Helgaker, Jørgensen and Olsen 2000, section 9.8).

use std::sync::OnceLock;

/// Highest order served: (ij|kl) over four shells of l ≤ [`MAX_L`](super::MAX_L) needs 4·l.
pub const MAX_ORDER: usize = 4 * super::MAX_L as usize;
/// Upper end of the table; above it the upward recursion is used.
pub const T_TABLE: f64 = 40.0;
const STEP: f64 = 0.05;
const TAYLOR_TERMS: usize = 8;
const TABLE_ORDERS: usize = MAX_ORDER + TAYLOR_TERMS;

/// Rows of F_0..F_{TABLE_ORDERS−1} at T_k = k · STEP.
fn table() -> &'static [[f64; TABLE_ORDERS]] {
    static TABLE: OnceLock<Vec<[f64; TABLE_ORDERS]>> = OnceLock::new();
    TABLE.get_or_init(|| {
        let points = (T_TABLE / STEP).round() as usize + 2;
        (0..points)
            .map(|k| {
                let t = k as f64 * STEP;
                let mut row = [0.0; TABLE_ORDERS];
                let top = TABLE_ORDERS - 1;
                row[top] = series(top, t);
                let e = (-t).exp();
                for n in (0..top).rev() {
                    row[n] = (2.0 * t * row[n + 1] + e) / (2 * n + 1) as f64;
                }
                row
            })
            .collect()
    })
}

/// F_n(T) from its series (accurate for any T, slow for large T).
pub fn series(n: usize, t: f64) -> f64 {
    let mut term = 1.0 / (2 * n + 1) as f64;
    let mut sum = term;
    let mut k = 0usize;
    loop {
        k += 1;
        term *= 2.0 * t / (2 * n + 2 * k + 1) as f64;
        sum += term;
        if term < sum * 1e-17 {
            break;
        }
    }
    (-t).exp() * sum
}

/// Writes F_0(T) … F_n(T) into `out[..=n]` (`n ≤ MAX_ORDER`, T ≥ 0).
pub fn boys(n: usize, t: f64, out: &mut [f64]) {
    debug_assert!(n <= MAX_ORDER && out.len() > n && t >= 0.0);
    if t <= T_TABLE {
        let k = (t / STEP).round() as usize;
        let row = &table()[k];
        let d = k as f64 * STEP - t; // −δ
        let mut f = 0.0;
        let mut power = 1.0;
        for (j, value) in row[n..n + TAYLOR_TERMS].iter().enumerate() {
            f += value * power;
            power *= d / (j + 1) as f64;
        }
        out[n] = f;
        if n > 0 {
            let e = (-t).exp();
            for m in (0..n).rev() {
                out[m] = (2.0 * t * out[m + 1] + e) / (2 * m + 1) as f64;
            }
        }
    } else {
        let root = t.sqrt();
        out[0] = 0.5 * (std::f64::consts::PI / t).sqrt() * libm::erf(root);
        if n > 0 {
            let e = (-t).exp();
            let inv = 0.5 / t;
            for m in 0..n {
                out[m + 1] = ((2 * m + 1) as f64 * out[m] - e) * inv;
            }
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::quadrature::gauss_legendre;

    /// Independent value: Gauss–Legendre quadrature of the defining integral on [0, 1], split
    /// into pieces so the peaked integrand of large T is resolved.
    fn quadrature(n: usize, t: f64) -> f64 {
        let (x, w) = gauss_legendre(64);
        let pieces = 64;
        let mut sum = 0.0;
        for p in 0..pieces {
            let (a, b) = (p as f64 / pieces as f64, (p + 1) as f64 / pieces as f64);
            for (xi, wi) in x.iter().zip(&w) {
                let s = 0.5 * (a + b) + 0.5 * (b - a) * xi;
                sum += 0.5 * (b - a) * wi * s.powi(2 * n as i32) * (-t * s * s).exp();
            }
        }
        sum
    }

    #[test]
    fn matches_quadrature_for_all_orders_and_ranges() {
        let mut out = [0.0; MAX_ORDER + 1];
        let ts = [
            0.0, 1e-9, 0.013, 0.024999, 0.025001, 0.7, 1.0, 3.3, 9.99, 17.5, 29.0, 39.97, 40.0, 40.01, 55.0, 120.0, 1e4,
        ];
        for &t in &ts {
            boys(MAX_ORDER, t, &mut out);
            for (n, &got) in out.iter().enumerate() {
                let want = quadrature(n, t);
                let rel = ((got - want) / want).abs();
                assert!(rel < 1e-13, "F_{n}({t}) = {got}, quadrature {want}, rel {rel:e}");
            }
        }
    }

    // textbook: F_0(T) = √(π/T) erf(√T) / 2, and F_n(0) = 1/(2n+1)
    #[test]
    fn closed_forms() {
        let mut out = [0.0; MAX_ORDER + 1];
        for i in 1..4000 {
            let t = i as f64 * 0.0137;
            boys(0, t, &mut out);
            let want = 0.5 * (std::f64::consts::PI / t).sqrt() * libm::erf(t.sqrt());
            assert!(((out[0] - want) / want).abs() < 2e-15, "T={t}: {} vs {want}", out[0]);
        }
        boys(MAX_ORDER, 0.0, &mut out);
        for (n, v) in out.iter().enumerate() {
            assert!((v - 1.0 / (2 * n + 1) as f64).abs() < 1e-16);
        }
    }

    /// Every order to [`MAX_ORDER`] over the whole argument range against exact values (a
    /// 60-digit decimal series and downward recursion).
    // reference: tests/data/basis/boys_reference.py (Python's decimal module), boys.json
    #[test]
    fn matches_exact_series_to_machine_precision() {
        let path = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/basis/boys.json");
        let text = std::fs::read_to_string(&path).expect("boys.json is committed");
        let data: serde_json::Value = serde_json::from_str(&text).expect("valid JSON");
        let parse = |v: &serde_json::Value| v.as_str().and_then(|s| s.parse::<f64>().ok()).expect("number");
        let points = data["points"].as_array().expect("points");
        assert!(points.len() > 50 && data["orders"].as_u64() == Some(MAX_ORDER as u64 + 1));
        let mut out = [0.0; MAX_ORDER + 1];
        let mut worst = (0.0f64, 0usize, 0.0f64);
        for p in points {
            let t = parse(&p["t"]);
            boys(MAX_ORDER, t, &mut out);
            for (n, want) in p["values"].as_array().expect("values").iter().map(parse).enumerate() {
                let rel = ((out[n] - want) / want).abs() / f64::EPSILON;
                if rel > worst.0 {
                    worst = (rel, n, t);
                }
            }
        }
        eprintln!("Boys function: worst error {:.1} ε (F_{} at T = {})", worst.0, worst.1, worst.2);
        // Eight Taylor terms or up to 24 recursion steps, each adding an ε-sized rounding
        // that the (stable) recursion does not amplify: a few ε per step at most.
        assert!(worst.0 < 4.0 * (MAX_ORDER as f64 + 8.0), "{worst:?}");
    }

    /// Asking for fewer orders gives the same values (the recursion start does not matter).
    #[test]
    fn lower_orders_agree() {
        let mut all = [0.0; MAX_ORDER + 1];
        let mut few = [0.0; MAX_ORDER + 1];
        for &t in &[0.3, 5.0, 25.0, 45.0] {
            boys(MAX_ORDER, t, &mut all);
            for n in 0..MAX_ORDER {
                boys(n, t, &mut few);
                for m in 0..=n {
                    assert!(((all[m] - few[m]) / all[m]).abs() < 1e-14, "n={n} m={m} T={t}");
                }
            }
        }
    }
}
