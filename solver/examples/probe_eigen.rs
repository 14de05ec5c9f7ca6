use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_mesh::RegionInfo;
use antinode_solver::linalg::factor::FactorKind;
use antinode_solver::{solve_modes, ModeSettings, NedelecOrder, RegionMaterial};
use std::time::Instant;

fn main() {
    let a: Vec<String> = std::env::args().collect();
    let order = NedelecOrder::from_int(a[1].parse().unwrap()).unwrap();
    let per: usize = a[2].parse().unwrap();
    let block: usize = a[3].parse().unwrap();
    let basis: usize = a[4].parse().unwrap();
    let tol: f64 = a[5].parse().unwrap();
    let kind = if a[6] == "lblt" {
        FactorKind::Lblt
    } else {
        FactorKind::Ldlt
    };
    let mesh = grid_mesh(
        &GridLines::uniform([0.0; 3], [0.3, 0.3, 0.2], [3 * per, 3 * per, 2 * per]),
        vec![RegionInfo { name: "air".into() }],
        |_| Some(0),
    );
    let mut s = ModeSettings::new(2.45e9);
    s.order = order;
    s.factor = kind;
    s.eigen.block = block;
    s.eigen.basis = basis;
    s.eigen.tol = tol;
    let t = Instant::now();
    let set = solve_modes(&mesh, &[RegionMaterial::VACUUM], &s, &mut |_| {}).unwrap();
    let st = &set.stats;
    println!(
        "n={} nnz/n={:.1} factor/n={:.1} assembly={:.2} ordering={:.2} factor={:.2} eigen={:.2} \
         checks={:.2} total={:.2} apps={} restarts={} modes={} maxres={:.1e}",
        st.n_dofs,
        st.matrix_nnz as f64 / st.n_dofs as f64,
        st.factor_nnz as f64 / st.n_dofs as f64,
        st.assembly_s,
        st.ordering_s,
        st.factor_s,
        st.eigen_s,
        st.checks_s,
        t.elapsed().as_secs_f64(),
        st.applications,
        st.restarts,
        set.modes.len(),
        set.modes.iter().map(|m| m.residual).fold(0.0, f64::max)
    );
}
