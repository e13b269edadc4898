//! Throughput benchmark: `cargo bench --bench throughput` (release build, prints a table).
//!
//! 1. Parsing: a synthetic 128³ single-orbital cube file written the way common writers do
//!    (`%13.5E`, six values per line), read plain and gzip-compressed; MB/s of cube text.
//! 2. Engine: J plus three models (lsda, slater, xalpha=0.75) for one 128³ orbital, after the
//!    Coulomb kernel of the grid has been built once (its cost is reported separately), on one
//!    thread and on all threads, without and with error bars; then J plus all twelve
//!    functionals (seven models), density gradients included, without error bars.
//! 3. Peak resident memory of the process (VmHWM).
//!
//! Each timing is the best of several runs. The data are invented for the benchmark only.

mod common;

use common::best;
use sixray::diagnostics::{Engine, EngineParams, GridOrbital, Kind};
use sixray::grid::GridGeometry;
use sixray::par::Parallelism;
use sixray::trust::TrustParams;
use sixray::xc::Model;
use sixray_parsers::cube::{ReadParams, read_cube};
use std::fmt::Write as _;
use std::io::Write;

const N: usize = 128;
const H: f64 = 0.15;

/// An orbital-like test function: exponential decay as real orbitals have (so that every grid
/// point carries density above the functionals' floors), an s-like and a p-like part.
fn value(r: [f64; 3]) -> f64 {
    let d = |c: [f64; 3]| ((r[0] - c[0]).powi(2) + (r[1] - c[1]).powi(2) + (r[2] - c[2]).powi(2)).sqrt();
    0.5 * (-1.3 * d([0.0, 0.0, 0.4])).exp() - 0.3 * (r[1] - 0.5) * (-1.1 * d([0.0, 0.5, -0.6])).exp()
}

fn geometry() -> GridGeometry {
    let o = -(N as f64 - 1.0) * H / 2.0;
    GridGeometry::new([o; 3], [[H, 0.0, 0.0], [0.0, H, 0.0], [0.0, 0.0, H]], [N; 3]).expect("valid grid")
}

fn cube_text(g: &GridGeometry) -> String {
    let mut s = String::with_capacity(N * N * N * 14);
    s += "benchmark orbital\nsynthetic values\n";
    let _ = writeln!(s, "{:5}{:12.6}{:12.6}{:12.6}", 1, g.origin[0], g.origin[1], g.origin[2]);
    for a in 0..3 {
        let v = g.axes[a];
        let _ = writeln!(s, "{:5}{:12.6}{:12.6}{:12.6}", N, v[0], v[1], v[2]);
    }
    let _ = writeln!(s, "{:5}{:12.6}{:12.6}{:12.6}{:12.6}", 8, 0.0, 0.0, 0.0, 0.0);
    for i in 0..N {
        for j in 0..N {
            for k in 0..N {
                let _ = write!(s, "{:13.5E}", value(g.point([i, j, k])));
                if k % 6 == 5 {
                    s.push('\n');
                }
            }
            s.push('\n');
        }
    }
    s
}

fn peak_rss_mib() -> Option<f64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    let line = status.lines().find(|l| l.starts_with("VmHWM:"))?;
    let kib: f64 = line.split_whitespace().nth(1)?.parse().ok()?;
    Some(kib / 1024.0)
}

fn main() {
    let g = geometry();
    let dir = tempfile::tempdir().expect("temporary directory");
    let text = cube_text(&g);
    let plain = dir.path().join("bench.cube");
    std::fs::write(&plain, &text).expect("write plain cube");
    let gz = dir.path().join("bench.cube.gz");
    let mut enc = flate2::write::GzEncoder::new(std::fs::File::create(&gz).expect("create"), flate2::Compression::new(6));
    enc.write_all(text.as_bytes()).expect("compress");
    enc.finish().expect("finish gzip");
    let mb = text.len() as f64 / 1e6;
    drop(text);

    let threads = rayon::current_num_threads();
    println!("sixray throughput benchmark: {N}³ grid, {H} bohr spacing, {threads} threads available\n");
    println!("{:<52} {:>12}", "measurement", "result");

    let (t, file) = best(5, || read_cube(&plain, &ReadParams::default()).expect("read plain"));
    println!("{:<52} {:>9.0} MB/s  ({mb:.1} MB in {:.3} s)", "parse plain cube text", mb / t.as_secs_f64(), t.as_secs_f64());
    let (t, _) = best(3, || read_cube(&gz, &ReadParams::default()).expect("read gz"));
    println!("{:<52} {:>9.0} MB/s  ({:.3} s)", "parse gzip cube (MB of text per second)", mb / t.as_secs_f64(), t.as_secs_f64());

    let values = file.fields[0].clone();
    let orbital = GridOrbital { values, ..GridOrbital::sampled("bench", g.clone(), Vec::new(), Kind::Amplitude, |_| 0.0) };
    let models = ["lsda", "slater", "xalpha=0.75"].map(|m| Model::from_name(m).expect("model")).to_vec();
    // Seven models whose exchange and correlation parts are the twelve functionals.
    let every_functional = ["lsda", "lsda-vwn5", "blyp", "pbe", "pw91-x", "scan", "r2scan"]
        .map(|m| Model::from_name(m).expect("model"))
        .to_vec();
    let plain = EngineParams { trust: TrustParams { error_bars: false, ..TrustParams::default() }, ..EngineParams::default() };
    for (label, par) in [("1 thread", Parallelism::Sequential), ("all threads", Parallelism::Rayon)] {
        let engine = Engine::new(models.clone(), plain.clone());
        let (setup, solver) = best(1, || engine.solver(&g, par).expect("kernel"));
        let padded = solver.padded_shape();
        let (t, report) = best(5, || engine.analyse(&orbital, par).expect("analyse"));
        println!(
            "{:<52} {:>9.3} s",
            format!("Coulomb kernel setup, padded {}×{}×{} ({label})", padded[0], padded[1], padded[2]),
            setup.as_secs_f64()
        );
        println!("{:<52} {:>9.3} s  (J = {:.6} Eh)", format!("J + 3 models per orbital ({label})"), t.as_secs_f64(), report.hartree);
        let checked = Engine::new(models.clone(), EngineParams::default());
        checked.analyse(&orbital, par).expect("analyse");
        let (t, _) = best(3, || checked.analyse(&orbital, par).expect("analyse"));
        println!("{:<52} {:>9.3} s", format!("  … with error bars and checks ({label})"), t.as_secs_f64());
        let every = Engine::new(every_functional.clone(), plain.clone());
        every.solver(&g, par).expect("kernel");
        let (t, _) = best(3, || every.analyse(&orbital, par).expect("analyse"));
        println!("{:<52} {:>9.3} s", format!("J + all 12 functionals, gradients incl. ({label})"), t.as_secs_f64());
    }
    if let Some(m) = peak_rss_mib() {
        println!("{:<52} {:>9.0} MiB", "peak resident memory (whole benchmark)", m);
    }
}
