//! A small fed box cavity for driven-response checks: 200 × 150 × 120 mm on a grid of
//! 20 × 18.75 × 20 mm cells, a 75 × 40 mm TE10 aperture centred on the x = a wall (the
//! feed of `tests/losses_port.rs`), optionally a second aperture on the y = 0 wall, and a
//! lossy block on the floor (εr = 4 − 0.4j: tan δ = 0.1). Invented test case.

use crate::port_wall;
use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_mesh::{BoundaryTag, RegionInfo, TetMesh};
use antinode_solver::fem::port::PortFrame;
use antinode_solver::RegionMaterial;

pub const SIZE: [f64; 3] = [0.2, 0.15, 0.12];
/// Feed aperture on x = a: y ∈ [37.5, 112.5] mm, z ∈ [40, 80] mm (TE10 cutoff 2.0 GHz).
const Y: [f64; 2] = [0.0375, 0.1125];
const Z: [f64; 2] = [0.04, 0.08];
/// Second aperture on y = 0: x ∈ [60, 140] mm, z ∈ [40, 80] mm (cutoff 1.87 GHz).
const X2: [f64; 2] = [0.06, 0.14];
/// The lossy block: x ∈ [80, 120], y ∈ [37.5, 75], z ∈ [0, 20] mm.
const BLOCK: [[f64; 2]; 3] = [[0.08, 0.12], [0.0375, 0.075], [0.0, 0.02]];

/// The block's material.
pub const BLOCK_MATERIAL: RegionMaterial = RegionMaterial {
    eps_real: 4.0,
    eps_imag: 0.4,
    mu_r: 1.0,
};

/// Mesh (refinement `r` splits every cell in r³) and the port frames.
pub fn fed_box(r: usize, two_ports: bool) -> (TetMesh, Vec<PortFrame>) {
    let grid = GridLines::uniform([0.0; 3], SIZE, [10 * r, 8 * r, 6 * r]);
    let inside = |c: [f64; 3]| (0..3).all(|d| c[d] > BLOCK[d][0] && c[d] < BLOCK[d][1]);
    let regions = vec![
        RegionInfo { name: "air".into() },
        RegionInfo {
            name: "block".into(),
        },
    ];
    let mut mesh = grid_mesh(&grid, regions, |c| Some(u32::from(inside(c))));
    for (f, tag) in mesh.boundary.iter().zip(mesh.boundary_tag.iter_mut()) {
        let p = f.map(|v| mesh.nodes[v as usize]);
        let m: [f64; 3] = std::array::from_fn(|k| (p[0][k] + p[1][k] + p[2][k]) / 3.0);
        let within = |x: f64, r: [f64; 2]| x > r[0] && x < r[1];
        if (m[0] - SIZE[0]).abs() < 1e-9 && within(m[1], Y) && within(m[2], Z) {
            *tag = BoundaryTag::Port(0);
        } else if two_ports && m[1].abs() < 1e-9 && within(m[0], X2) && within(m[2], Z) {
            *tag = BoundaryTag::Port(1);
        }
    }
    let mut frames = vec![port_wall::x_wall_frame(SIZE[0], Y, Z)];
    if two_ports {
        frames.push(PortFrame {
            center: [0.5 * (X2[0] + X2[1]), 0.0, 0.5 * (Z[0] + Z[1])],
            u: [1.0, 0.0, 0.0],
            v: [0.0, 0.0, 1.0],
            n: [0.0, -1.0, 0.0],
            width: X2[1] - X2[0],
            height: Z[1] - Z[0],
        });
    }
    (mesh, frames)
}

/// Air and the block.
pub fn fed_box_materials() -> Vec<RegionMaterial> {
    vec![RegionMaterial::VACUUM, BLOCK_MATERIAL]
}
