use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_mesh::{BoundaryTag, RegionInfo};
use antinode_solver::constants::k0_squared;
use antinode_solver::fem::assembly::assemble;
use antinode_solver::linalg::factor::{FactorKind, SymmetricFactor};
use antinode_solver::linalg::ordering::nested_dissection;
use antinode_solver::linalg::sparse::{combine, spmv};
use antinode_solver::{NedelecOrder, RegionMaterial, Space};
use std::time::Instant;

fn main() {
    let args: Vec<String> = std::env::args().collect();
    let order = if args.get(1).map(|s| s.as_str()) == Some("2") {
        NedelecOrder::Two
    } else {
        NedelecOrder::One
    };
    let per: usize = args.get(2).and_then(|s| s.parse().ok()).unwrap_or(8);
    let threads: usize = args.get(3).and_then(|s| s.parse().ok()).unwrap_or(0);
    let kind = if args.get(4).map(|s| s.as_str()) == Some("lblt") {
        FactorKind::Lblt
    } else {
        FactorKind::Ldlt
    };
    let n = [3 * per, 3 * per, 2 * per];
    let mesh = grid_mesh(
        &GridLines::uniform([0.0; 3], [0.3, 0.3, 0.2], n),
        vec![RegionInfo { name: "air".into() }],
        |_| Some(0),
    );
    let space = Space::new(&mesh, order, |t| {
        matches!(t, BoundaryTag::Wall | BoundaryTag::Port(_))
    });
    let m = assemble(&space, &[RegionMaterial::VACUUM]);
    let sigma = k0_squared(2.45e9);
    let a = combine(&[(1.0, &m.stiffness), (-sigma, &m.mass_real)]);
    let (f, i) = nested_dissection(&a).unwrap();
    let use_amd = args.get(5).map(|s| s.as_str()) == Some("amd");
    let par = if threads == 1 {
        faer::Par::Seq
    } else {
        faer::Par::rayon(0)
    };
    let t = Instant::now();
    let fac =
        SymmetricFactor::new(&a, kind, par, if use_amd { None } else { Some((&f, &i)) }).unwrap();
    println!(
        "n={} factor {:.2}s nnz {:.1}M",
        a.rows(),
        t.elapsed().as_secs_f64(),
        fac.factor_nnz() as f64 / 1e6
    );
    for k in [1, 8] {
        let b = faer::Mat::<f64>::from_fn(a.rows(), k, |r, c| ((r * 7 + c * 13) % 17) as f64 - 8.0);
        let mut x = b.clone();
        let t = Instant::now();
        fac.solve_in_place(x.as_mut());
        let dt = t.elapsed().as_secs_f64();
        let mut ax = vec![0.0; a.rows()];
        let xc: Vec<f64> = (0..a.rows()).map(|r| x[(r, 0)]).collect();
        spmv(&a, &xc, &mut ax);
        let rn: f64 = (0..a.rows())
            .map(|r| (ax[r] - b[(r, 0)]).powi(2))
            .sum::<f64>()
            .sqrt();
        let bn: f64 = (0..a.rows()).map(|r| b[(r, 0)].powi(2)).sum::<f64>().sqrt();
        println!("k={k} solve {:.3}s rel residual {:.1e}", dt, rn / bn);
    }
}
