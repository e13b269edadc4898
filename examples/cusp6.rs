use sixray::diagnostics::{Engine, EngineParams, GridOrbital, Spin};
fn dot(a: &[f64; 3], b: &[f64; 3]) -> f64 { a[0]*b[0]+a[1]*b[1]+a[2]*b[2] }
use sixray::input::{LoadParams, SpinRule, load_cube};
use sixray::par::Parallelism;
use sixray::poisson::{HartreeParams, HartreeSolver};
use sixray::trust::TrustParams;
use sixray::xc::Model;

fn solve(mut a: Vec<Vec<f64>>, mut b: Vec<f64>) -> Option<Vec<f64>> {
    let n = b.len();
    for c in 0..n {
        let p = (c..n).max_by(|&x, &y| a[x][c].abs().total_cmp(&a[y][c].abs()))?;
        if a[p][c].abs() < 1e-300 { return None; }
        a.swap(c, p); b.swap(c, p);
        for r in 0..n { if r != c { let f = a[r][c] / a[c][c]; let pr = a[c].clone(); for (x, y) in a[r].iter_mut().zip(&pr) { *x -= f * y; } b[r] -= f * b[c]; } }
    }
    Some((0..n).map(|i| b[i] / a[i][i]).collect())
}

fn fit(o: &GridOrbital, r0: [f64; 3], z: f64, rad: f64, h: f64, quad: bool) -> f64 {
    let g = &o.geometry;
    let nb = if quad { 10 } else { 4 };
    let mut ata = vec![vec![0.0; nb]; nb];
    let mut atb = vec![0.0; nb];
    let [n0, n1, n2] = g.shape;
    for i in 0..n0 { for j in 0..n1 { for k in 0..n2 {
        let p = g.point([i, j, k]);
        let d = [(p[0]-r0[0]), (p[1]-r0[1]), (p[2]-r0[2])];
        let r = dot(&d, &d).sqrt();
        if r > rad { continue; }
        let e = (-z * r).exp();
        let u = [d[0]/h, d[1]/h, d[2]/h];
        let mut row = vec![e, u[0], u[1], u[2]];
        if quad { row.extend([u[0]*u[0], u[1]*u[1], u[2]*u[2], u[0]*u[1], u[0]*u[2], u[1]*u[2]]); }
        let y = o.values[(i*n1+j)*n2+k];
        for a in 0..nb { atb[a] += row[a]*y; for b in 0..nb { ata[a][b] += row[a]*row[b]; } }
    }}}
    solve(ata, atb).map_or(0.0, |v| v[0])
}

fn main() {
    let root = std::path::Path::new("../shared/reference");
    let mut dirs: Vec<_> = std::fs::read_dir(root).unwrap().map(|e| e.unwrap().path()).filter(|p| p.is_dir()).collect();
    dirs.sort();
    let engine = Engine::new(vec![Model::from_name("lsda").unwrap()], EngineParams { trust: TrustParams { error_bars: false, ..Default::default() }, ..Default::default() });
    for rf in [2.01, 2.5, 3.01] { for quad in [false, true] {
    let mut worst_core: f64 = 0.0; let mut worst_val: f64 = 0.0;
    for d in &dirs {
        let r: serde_json::Value = serde_json::from_str(&std::fs::read_to_string(d.join("reference.json")).unwrap()).unwrap();
        for o in r["orbitals"].as_array().unwrap() {
            let file = o["file"].as_str().unwrap();
            let orb = load_cube(&d.join(file), &LoadParams { spin: SpinRule::Fixed(Spin::Alpha), ..Default::default() }).unwrap().remove(0);
            let g = orb.geometry.clone(); let w = g.voxel_volume(); let h = g.max_step();
            let n = orb.density();
            let models: Vec<(f64, [f64;3], f64)> = orb.nuclei.iter().map(|nu| { let z = nu.atomic_number as f64; let a = fit(&orb, nu.position, z, rf*h, h, quad); (z, nu.position, a*a*std::f64::consts::PI/z.powi(3)) }).collect();
            // model sum and potential on the grid
            let mut rem = n.clone(); let mut vm = vec![0.0; n.len()];
            for (idx, (rv, v)) in rem.iter_mut().zip(vm.iter_mut()).enumerate() {
                let p = g.point([idx/(g.shape[1]*g.shape[2]), (idx/g.shape[2])%g.shape[1], idx%g.shape[2]]);
                for &(z, c, q) in &models { let dd = [p[0]-c[0],p[1]-c[1],p[2]-c[2]]; let dist = dot(&dd,&dd).sqrt();
                    *rv -= q*z.powi(3)/std::f64::consts::PI*(-2.0*z*dist).exp();
                    *v += if dist < 1e-12 { q*z } else { q*((1.0-(-2.0*z*dist).exp())/dist - z*(-2.0*z*dist).exp()) }; }
            }
            let solver = HartreeSolver::new(&g, &HartreeParams::default(), Parallelism::Rayon).unwrap();
            let jr = solver.self_energy(&rem, Parallelism::Rayon).unwrap();
            let cross = w * rem.iter().zip(&vm).map(|(a,b)| a*b).sum::<f64>();
            let mut jm = 0.0;
            for (i,&(za,ca,qa)) in models.iter().enumerate() { jm += qa*qa*5.0*za/16.0;
                for &(zb,cb,qb) in &models[i+1..] { let rr=[ca[0]-cb[0],ca[1]-cb[1],ca[2]-cb[2]]; let rab=dot(&rr,&rr).sqrt();
                    // C[m_A,m_B] by radial quadrature of m_A against spherical average of v_B
                    let fb = |dd: f64| dd + (-2.0*zb*dd).exp()*(dd/2.0 + 3.0/(4.0*zb));
                    let rule = sixray::quadrature::radial_rule(2000, 40.0/za);
                    let c: f64 = rule.iter().map(|&(r, wr)| { let ma = qa*za.powi(3)/std::f64::consts::PI*(-2.0*za*r).exp(); let vbar = qb*(fb(rab+r)-fb((rab-r).abs()))/(2.0*r*rab); wr*ma*vbar }).sum();
                    jm += c; } }
            let jcorr = jr + cross + jm;
            let plain = engine.analyse(&orb, Parallelism::Rayon).unwrap().hartree;
            let refj = o["hartree_self"].as_f64().unwrap();
            let e = ((jcorr/refj)-1.0).abs();
            if o["orbital_energy"].as_f64().unwrap() < -5.0 { worst_core = worst_core.max(e) } else { worst_val = worst_val.max(e) }
            if rf == 2.5 && quad { println!("{} {file}: plain {:+.3}% corrected {:+.3}%", d.file_name().unwrap().to_string_lossy(), 100.0*(plain/refj-1.0), 100.0*(jcorr/refj-1.0)); }
        }
    }
    println!("rfit={rf} quad={quad}: worst core {:.3}% worst valence {:.3}%", 100.0*worst_core, 100.0*worst_val);
    }}
}
