//! Drawing helpers for the inline SVG charts: escaping, scales, tick steps, and one look per
//! model (a colour, a marker shape and a bar fill pattern, so that models stay apart for
//! colour-blind readers and in greyscale print).
//!
//! Tick steps are 1, 2 or 5 × 10^k, the step nearest to a target count (common practice for
//! chart axes). Coordinates are printed with one decimal, so the same numbers always give the
//! same bytes.

use std::fmt::Write as _;

/// Text made safe for HTML and SVG (element content and quoted attributes).
pub fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

/// The Okabe–Ito colour-blind-safe palette (M. Okabe and K. Ito, "Color Universal Design",
/// 2008), ordered so that the first colours differ most in lightness as well as hue; yellow,
/// faint on white, comes last.
pub const PALETTE: [&str; 8] = ["#0072B2", "#D55E00", "#009E73", "#CC79A7", "#E69F00", "#56B4E9", "#000000", "#F0E442"];

/// A darker outline for the one palette colour too light to outline itself on white.
fn outline(colour: &str) -> &str {
    if colour == "#F0E442" { "#8C8200" } else { colour }
}

/// Marker shapes, all with an inside (so that filled and open markers can mean different
/// things), distinct in outline.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Shape {
    /// ●
    Circle,
    /// ■
    Square,
    /// ▲
    TriangleUp,
    /// ◆
    Diamond,
    /// ▼
    TriangleDown,
    /// ★
    Star,
    /// ⧗
    Hourglass,
    /// ✚
    Plus,
}

const SHAPES: [Shape; 8] =
    [Shape::Circle, Shape::Square, Shape::TriangleUp, Shape::Diamond, Shape::TriangleDown, Shape::Star, Shape::Hourglass, Shape::Plus];

/// How one model is drawn everywhere on the page.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Look {
    /// Fill colour.
    pub colour: &'static str,
    /// Outline colour.
    pub stroke: &'static str,
    /// Marker shape.
    pub shape: Shape,
    /// Index of the bar fill pattern (0 is solid).
    pub pattern: usize,
}

/// The look of the `i`-th model. Colours and shapes both cycle over eight, shifted against each
/// other after each round, so that 64 models get distinct pairs.
pub fn look(i: usize) -> Look {
    let colour = PALETTE[i % 8];
    Look { colour, stroke: outline(colour), shape: SHAPES[(i + i / 8) % 8], pattern: (i + 2 * (i / 8)) % 8 }
}

/// A marker of `look` centred at (x, y) with size `r` (about its radius); open markers are white
/// inside. `inner` goes inside the element (a `<title>`, say).
pub fn marker(look: &Look, x: f64, y: f64, r: f64, open: bool, inner: &str) -> String {
    let (fill, stroke, width) = if open { ("#ffffff", look.stroke, 1.6) } else { (look.colour, "#ffffff", 0.8) };
    let paint = format!(r#"fill="{fill}" stroke="{stroke}" stroke-width="{width}""#);
    let poly = |pts: &[(f64, f64)]| -> String {
        let mut d = String::new();
        for (k, (px, py)) in pts.iter().enumerate() {
            let _ = write!(d, "{}{:.1},{:.1}", if k == 0 { "M" } else { "L" }, x + px * r, y + py * r);
        }
        format!(r#"<path d="{d}Z" {paint}>{inner}</path>"#)
    };
    match look.shape {
        Shape::Circle => format!(r#"<circle cx="{x:.1}" cy="{y:.1}" r="{r:.1}" {paint}>{inner}</circle>"#),
        Shape::Square => poly(&[(-0.9, -0.9), (0.9, -0.9), (0.9, 0.9), (-0.9, 0.9)]),
        Shape::TriangleUp => poly(&[(0.0, -1.25), (1.15, 0.8), (-1.15, 0.8)]),
        Shape::Diamond => poly(&[(0.0, -1.3), (1.1, 0.0), (0.0, 1.3), (-1.1, 0.0)]),
        Shape::TriangleDown => poly(&[(0.0, 1.25), (1.15, -0.8), (-1.15, -0.8)]),
        Shape::Star => {
            let pts: Vec<(f64, f64)> = (0..10)
                .map(|k| {
                    let a = std::f64::consts::PI * (k as f64 / 5.0 - 0.5);
                    let rr = if k % 2 == 0 { 1.4 } else { 0.6 };
                    (rr * a.cos(), rr * a.sin())
                })
                .collect();
            poly(&pts)
        }
        Shape::Hourglass => poly(&[(-1.0, -1.0), (1.0, -1.0), (0.0, 0.0), (1.0, 1.0), (-1.0, 1.0), (0.0, 0.0)]),
        Shape::Plus => poly(&[
            (-0.4, -1.2),
            (0.4, -1.2),
            (0.4, -0.4),
            (1.2, -0.4),
            (1.2, 0.4),
            (0.4, 0.4),
            (0.4, 1.2),
            (-0.4, 1.2),
            (-0.4, 0.4),
            (-1.2, 0.4),
            (-1.2, -0.4),
            (-0.4, -0.4),
        ]),
    }
}

/// A small inline key (marker) for a model, for tables and lists.
pub fn key(look: &Look) -> String {
    format!(r#"<svg class="key" viewBox="-8 -8 16 16" width="14" height="14" aria-hidden="true">{}</svg>"#, marker(look, 0.0, 0.0, 5.0, false, ""))
}

/// `<pattern>` definitions of the bar fills for `n` models, with ids `{prefix}-{i}`: the colour
/// with white hatching, dots or checks on top (none for the first pattern).
pub fn patterns(prefix: &str, n: usize) -> String {
    let mut out = String::new();
    for i in 0..n {
        let l = look(i);
        let c = l.colour;
        let over = match l.pattern {
            0 => String::new(),
            1 => r##"<path d="M0,8L8,0M-2,2L2,-2M6,10L10,6" stroke="#fff" stroke-width="1.6"/>"##.into(),
            2 => r##"<path d="M0,2H8M0,6H8" stroke="#fff" stroke-width="1.4"/>"##.into(),
            3 => r##"<circle cx="2" cy="2" r="1.3" fill="#fff"/><circle cx="6" cy="6" r="1.3" fill="#fff"/>"##.into(),
            4 => r##"<path d="M0,0L8,8M-2,6L2,10M6,-2L10,2" stroke="#fff" stroke-width="1.6"/>"##.into(),
            5 => r##"<path d="M0,8L8,0M0,0L8,8" stroke="#fff" stroke-width="1.1"/>"##.into(),
            6 => r##"<path d="M2,0V8M6,0V8" stroke="#fff" stroke-width="1.4"/>"##.into(),
            _ => r##"<rect width="4" height="4" fill="#fff" fill-opacity=".55"/><rect x="4" y="4" width="4" height="4" fill="#fff" fill-opacity=".55"/>"##.into(),
        };
        let _ = write!(
            out,
            r#"<pattern id="{prefix}-{i}" patternUnits="userSpaceOnUse" width="8" height="8"><rect width="8" height="8" fill="{c}"/>{over}</pattern>"#
        );
    }
    out
}

/// A linear map from data to page coordinates.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Linear {
    /// Data interval.
    pub domain: (f64, f64),
    /// Page interval.
    pub range: (f64, f64),
}

impl Linear {
    /// Page coordinate of `v`.
    pub fn at(&self, v: f64) -> f64 {
        let (d0, d1) = self.domain;
        let (r0, r1) = self.range;
        if d1 == d0 { 0.5 * (r0 + r1) } else { r0 + (v - d0) / (d1 - d0) * (r1 - r0) }
    }

    /// Page coordinate of `v`, held inside the range.
    pub fn clamped(&self, v: f64) -> f64 {
        let (lo, hi) = if self.range.0 <= self.range.1 { self.range } else { (self.range.1, self.range.0) };
        self.at(v).clamp(lo, hi)
    }
}

/// A base-10 logarithmic map from positive data to page coordinates.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Log10 {
    /// Data interval, both ends positive.
    pub domain: (f64, f64),
    /// Page interval.
    pub range: (f64, f64),
}

impl Log10 {
    /// Page coordinate of `v`, held inside the range (values at or below the lower end of the
    /// domain, zero included, sit at that end).
    pub fn clamped(&self, v: f64) -> f64 {
        let lin = Linear { domain: (self.domain.0.log10(), self.domain.1.log10()), range: self.range };
        let v = v.max(self.domain.0);
        lin.clamped(v.log10())
    }

    /// Decades spanning positive values between `min` and `max`: 10^floor(log min) to
    /// 10^ceil(log max), at least one decade wide.
    pub fn decades(min: f64, max: f64) -> (f64, f64) {
        let lo = min.log10().floor();
        let hi = max.log10().ceil().max(lo + 1.0);
        (10f64.powf(lo), 10f64.powf(hi))
    }
}

/// Evenly spaced ticks of step 1, 2 or 5 × 10^k covering [lo, hi] with about `target`
/// intervals; returns the ticks (the first at or below `lo`, the last at or above `hi`) and the
/// step.
pub fn nice_ticks(lo: f64, hi: f64, target: usize) -> (Vec<f64>, f64) {
    let (lo, hi) = if hi > lo {
        (lo, hi)
    } else {
        let pad = if lo == 0.0 { 1.0 } else { 0.1 * lo.abs() };
        (lo - pad, hi + pad)
    };
    let raw = (hi - lo) / target.max(1) as f64;
    let mag = 10f64.powf(raw.log10().floor());
    let step = [1.0, 2.0, 5.0, 10.0].iter().map(|f| f * mag).find(|s| *s >= raw * 0.999).unwrap_or(10.0 * mag);
    let first = (lo / step).floor() as i64;
    let last = (hi / step).ceil() as i64;
    ((first..=last).map(|k| k as f64 * step).collect(), step)
}

/// A tick value with the decimals its step needs (no `-0`).
pub fn tick_label(v: f64, step: f64) -> String {
    let decimals = (-step.log10().floor()).max(0.0) as usize;
    let s = format!("{v:.decimals$}");
    match s.strip_prefix('-') {
        Some(rest) if rest.bytes().all(|b| b == b'0' || b == b'.') => rest.to_string(),
        _ => s.replace('-', "−"),
    }
}

/// A power of ten as plain digits (`0.01`, `1`, `1000`), or `1e−k` beyond six digits.
pub fn decade_label(v: f64) -> String {
    let k = v.log10().round() as i32;
    match k {
        0..=6 => format!("1{}", "0".repeat(k as usize)),
        -6..=-1 => format!("0.{}1", "0".repeat((-k - 1) as usize)),
        _ => format!("1e{k}").replace('-', "−"),
    }
}

/// Numbers for SVG attributes: one decimal.
pub fn n1(v: f64) -> String {
    format!("{v:.1}")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ticks_cover_the_data_with_round_steps() {
        let (t, s) = nice_ticks(-684.8, 2772.1, 8);
        assert_eq!(s, 500.0);
        assert_eq!((t[0], *t.last().unwrap()), (-1000.0, 3000.0));
        assert_eq!(nice_ticks(-684.8, 2772.1, 6).1, 1000.0);
        let (t, s) = nice_ticks(0.85, 1.36, 5);
        assert_eq!(s, 0.2);
        assert!(t[0] <= 0.85 && *t.last().unwrap() >= 1.36);
        assert_eq!(tick_label(-0.0, 0.1), "0.0");
        assert_eq!(tick_label(-500.0, 500.0), "−500");
        // A degenerate interval still gets ticks.
        assert!(nice_ticks(3.0, 3.0, 5).0.len() >= 2);
        assert_eq!(Log10::decades(0.52, 730.4), (0.1, 1000.0));
        assert_eq!([decade_label(0.01), decade_label(1.0), decade_label(1000.0)], ["0.01", "1", "1000"]);
    }

    #[test]
    fn looks_are_distinct_for_many_models() {
        let looks: Vec<Look> = (0..64).map(look).collect();
        for (i, a) in looks.iter().enumerate() {
            for b in &looks[..i] {
                assert!((a.colour, a.shape) != (b.colour, b.shape), "{a:?}");
            }
        }
        assert_eq!(esc(r#"<a href="x">&'"#), "&lt;a href=&quot;x&quot;&gt;&amp;&#39;");
    }

    #[test]
    fn scales_map_and_clamp() {
        let l = Linear { domain: (0.0, 10.0), range: (100.0, 0.0) };
        assert_eq!((l.at(0.0), l.at(5.0), l.clamped(20.0)), (100.0, 50.0, 0.0));
        let g = Log10 { domain: (0.1, 1000.0), range: (0.0, 400.0) };
        assert!((g.clamped(1.0) - 100.0).abs() < 1e-9);
        assert_eq!((g.clamped(0.0), g.clamped(1e9)), (0.0, 400.0));
    }
}
