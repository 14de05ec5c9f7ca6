use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_mesh::{BoundaryTag, RegionInfo};
use antinode_solver::assembly::RegionMaterial;
use antinode_solver::modes::{solve_modes, ModeSettings};
use antinode_solver::port::PortFrame;
use antinode_solver::NedelecOrder;

#[test]
fn filled_lossy_box() {
    let (a, b, d) = (0.1, 0.08, 0.06);
    let grid = GridLines::uniform([0.0; 3], [a, b, d], [6, 5, 4]);
    let mesh = grid_mesh(
        &grid,
        vec![RegionInfo {
            name: "fill".into(),
        }],
        |_| Some(0),
    );
    let mut s = ModeSettings::new(2.0e9);
    s.order = NedelecOrder::Two;
    s.count = 6;
    let mat = RegionMaterial {
        eps_real: 4.0,
        eps_imag: 0.04,
        mu_r: 1.0,
    };
    let set = solve_modes(&mesh, &[mat], &s, &mut |_| {}).unwrap();
    println!("{:?}", set.stats);
    for m in &set.modes {
        println!(
            "f {:.6e} fi {:.3e} Qeig {:.3} Qd {:.3} res {:.1e} div {:.1e}",
            m.frequency_hz,
            m.frequency_imag_hz,
            m.q_eigen,
            m.q.q_dielectric,
            m.residual,
            m.divergence
        );
    }
}

#[test]
fn box_with_port() {
    // WR-340-like aperture on the x = a wall of a 200 x 150 x 120 mm box.
    let (a, b, d) = (0.2, 0.15, 0.12);
    let n = [10, 8, 6];
    let grid = GridLines::uniform([0.0; 3], [a, b, d], n);
    let mut mesh = grid_mesh(&grid, vec![RegionInfo { name: "air".into() }], |_| Some(0));
    // Port: y in [0.045, 0.105] (3 cells of 15 mm... use exact grid lines), z in [0.04, 0.08]
    let (y0, y1, z0, z1) = (0.0375, 0.1125, 0.04, 0.08);
    for (f, tag) in mesh.boundary.iter().zip(mesh.boundary_tag.iter_mut()) {
        let c = f.map(|v| mesh.nodes[v as usize]);
        let cx = (c[0][0] + c[1][0] + c[2][0]) / 3.0;
        let cy = (c[0][1] + c[1][1] + c[2][1]) / 3.0;
        let cz = (c[0][2] + c[1][2] + c[2][2]) / 3.0;
        if (cx - a).abs() < 1e-9 && cy > y0 && cy < y1 && cz > z0 && cz < z1 {
            *tag = BoundaryTag::Port(0);
        }
    }
    let mut s = ModeSettings::new(2.45e9);
    s.count = 6;
    s.ports = vec![PortFrame {
        center: [a, 0.5 * (y0 + y1), 0.5 * (z0 + z1)],
        u: [0.0, 1.0, 0.0],
        v: [0.0, 0.0, 1.0],
        n: [1.0, 0.0, 0.0],
        width: y1 - y0,
        height: z1 - z0,
    }];
    s.wall_conductivity = Some(5.8e7);
    let set = solve_modes(&mesh, &[RegionMaterial::VACUUM], &s, &mut |_| {}).unwrap();
    println!("{:?}", set.stats);
    println!(
        "port norm {:?} exact {:?}",
        set.disc.ports.as_ref().unwrap().norm,
        set.disc.ports.as_ref().unwrap().exact_norm
    );
    for m in &set.modes {
        println!(
            "f {:.6e} fi {:.3e} Qeig {:.2} Qext {:?} Qc {:.1} QL {:.2} kappa {:?} res {:.1e} div {:.1e}",
            m.frequency_hz, m.frequency_imag_hz, m.q_eigen, m.q.q_ports, m.q.q_walls, m.q.q_loaded, m.q.coupling, m.residual, m.divergence
        );
    }
}
