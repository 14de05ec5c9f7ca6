use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_mesh::RegionInfo;
use antinode_solver::assembly::RegionMaterial;
use antinode_solver::modes::{frequency_of, solve_modes, ModeSettings};
use antinode_solver::NedelecOrder;
use std::f64::consts::PI;

#[test]
fn cube_smoke() {
    for (order, n) in [(NedelecOrder::One, 8), (NedelecOrder::Two, 4)] {
        let grid = GridLines::uniform([0.0; 3], [PI; 3], [n; 3]);
        let mesh = grid_mesh(&grid, vec![RegionInfo { name: "air".into() }], |_| Some(0));
        let mut s = ModeSettings::new(frequency_of(3.5));
        s.order = order;
        s.count = 17;
        let t = std::time::Instant::now();
        let set = solve_modes(&mesh, &[RegionMaterial::VACUUM], &s, &mut |_| {}).unwrap();
        println!(
            "{order:?} n={n} dofs={} {:?} t={:?}",
            set.stats.n_dofs,
            set.stats,
            t.elapsed()
        );
        for m in &set.modes {
            println!(
                "  {:.6} res {:.1e} div {:.1e}",
                m.k0_squared, m.residual, m.divergence
            );
        }
    }
}
