//! A synthetic orbital cube of any size, for the memory benchmark and the memory tests (included
//! by path from both).

/// Writes a gzip cube file of `shape` points at step `h` bohr centred on the origin, with one
/// hydrogen nucleus there and the amplitude of a normalised Slater 1s orbital of exponent 2,
/// √(8/π) e^{−2r} (values below 1e-10 written as `0`, so that large grids are quick to write
/// and read): a realistic orbital file of any size, for memory measurements and tests.
pub fn write_orbital_cube(path: &std::path::Path, shape: [usize; 3], h: f64) -> std::io::Result<()> {
    use std::io::Write;
    let file = std::fs::File::create(path)?;
    let mut out = std::io::BufWriter::new(flate2::write::GzEncoder::new(file, flate2::Compression::fast()));
    let origin = shape.map(|n| -h * (n - 1) as f64 / 2.0);
    writeln!(out, "synthetic orbital\n1s orbital amplitude of a one-electron ion")?;
    writeln!(out, "1 {:.6} {:.6} {:.6}", origin[0], origin[1], origin[2])?;
    for (a, &n) in shape.iter().enumerate() {
        let step = [0, 1, 2].map(|x| if x == a { h } else { 0.0 });
        writeln!(out, "{n} {:.6} {:.6} {:.6}", step[0], step[1], step[2])?;
    }
    writeln!(out, "1 1.000000 0.000000 0.000000 0.000000")?;
    let norm = (8.0 / std::f64::consts::PI).sqrt();
    let mut column = 0;
    for i in 0..shape[0] {
        for j in 0..shape[1] {
            for k in 0..shape[2] {
                let p = [i, j, k].map(|x| x as f64);
                let r = (0..3).map(|x| (origin[x] + h * p[x]).powi(2)).sum::<f64>().sqrt();
                let v = norm * (-2.0 * r).exp();
                if v < 1e-10 { write!(out, "0")? } else { write!(out, "{v:.6e}")? }
                column += 1;
                out.write_all(if column % 6 == 0 { b"\n" } else { b" " })?;
            }
        }
    }
    out.write_all(b"\n")?;
    out.into_inner().map_err(|e| e.into_error())?.finish()?;
    Ok(())
}
