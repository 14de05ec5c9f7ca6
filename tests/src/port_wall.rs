//! A rectangular TE10 aperture on the x = a wall of a box mesh: the boundary faces inside
//! it tagged as port 0, and its frame (u along y, v along z, outward normal +x). The fed
//! test cavities and benchmarks share it.

use antinode_mesh::{BoundaryTag, TetMesh};
use antinode_solver::fem::port::PortFrame;

/// Frame of the aperture y ∈ `y`, z ∈ `z` on the wall x = `a` (metres).
pub fn x_wall_frame(a: f64, y: [f64; 2], z: [f64; 2]) -> PortFrame {
    PortFrame {
        center: [a, 0.5 * (y[0] + y[1]), 0.5 * (z[0] + z[1])],
        u: [0.0, 1.0, 0.0],
        v: [0.0, 0.0, 1.0],
        n: [1.0, 0.0, 0.0],
        width: y[1] - y[0],
        height: z[1] - z[0],
    }
}

/// Tags as port `port` every boundary face of `mesh` on x = `a` whose centroid lies
/// strictly inside the aperture (the aperture's edges are on grid lines).
pub fn tag_x_wall_port(mesh: &mut TetMesh, a: f64, y: [f64; 2], z: [f64; 2], port: usize) {
    for (f, tag) in mesh.boundary.iter().zip(mesh.boundary_tag.iter_mut()) {
        let c = f.map(|v| mesh.nodes[v as usize]);
        let m: [f64; 3] = std::array::from_fn(|k| (c[0][k] + c[1][k] + c[2][k]) / 3.0);
        let inside = m[1] > y[0] && m[1] < y[1] && m[2] > z[0] && m[2] < z[1];
        if (m[0] - a).abs() < 1e-9 && inside {
            *tag = BoundaryTag::Port(port);
        }
    }
}
