//! Size of a solve before it runs: unknowns, whether the complex path is needed, and an
//! estimate of peak memory.
//!
//! The factor of K − σM dominates memory. With the geometric nested-dissection order its
//! entry count grew like c·n^{4/3} on this project's box and cylinder meshes (measured on
//! the development machine, order 1 and 2, n = 3k…340k: c ≈ 19–25; the 4/3 power is the
//! known growth of nested dissection on 3-D meshes, George 1973 / Lipton–Rose–Tarjan 1979,
//! from memory). With METIS the constant is smaller, see [`fill_constant`]. The complex path
//! factorises the n × n complex symmetric matrix natively (same structure as the real
//! factor, 16 bytes per entry instead of 8).

use crate::fem::assembly::RegionMaterial;
use crate::fem::Space;
use crate::modes::ModeSettings;
use antinode_mesh::TetMesh;

/// Fill constant of the estimate (see the module docs) for `per_tet` local functions:
/// with the METIS ordering the measured constants were ≈ 7.7 at order 1 (fed box, 19k
/// unknowns, 3.8M entries) and ≈ 10 at order 2 (empty box, 120k, 60M); the estimate
/// takes 1.3× and 1.5× those to stay on the safe side.
pub fn fill_constant(per_tet: usize) -> f64 {
    if per_tet <= 6 {
        10.0
    } else {
        15.0
    }
}

/// What a solve will need.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Plan {
    /// Free unknowns (before the port constraints, which remove a few).
    pub n_dofs: usize,
    /// Whether losses or ports make the problem complex.
    pub complex: bool,
    /// Estimated entries of the sparse factor.
    pub factor_entries: f64,
    /// Estimated peak memory, bytes.
    pub memory_bytes: f64,
}

/// Count unknowns and estimate memory for `settings` on `mesh`.
pub fn plan(mesh: &TetMesh, materials: &[RegionMaterial], settings: &ModeSettings) -> Plan {
    let space = Space::with_ports(mesh, settings.order, settings.ports.len());
    estimate(
        space.n_dofs(),
        settings.is_complex(materials),
        settings.order.per_tet(),
        settings.eigen.basis.max(3 * settings.count),
    )
}

/// Estimate for `n` unknowns; `per_tet` local functions (6 or 20) sets the matrix density;
/// `basis` is the eigen basis size.
pub fn estimate(n: usize, complex: bool, per_tet: usize, basis: usize) -> Plan {
    let nf = n as f64;
    let factor_entries = fill_constant(per_tet) * nf.powf(4.0 / 3.0);
    // Matrix rows hold about 2.5 × the local functions (measured ≈ 16 for order 1 and ≈ 45
    // for order 2); K, M′, M″ and the shifted copy (real and imaginary parts when
    // complex) each store values and column indices (12 bytes per entry).
    let row = 2.5 * per_tet as f64;
    let matrices = nf * row * 12.0 * if complex { 5.0 } else { 3.0 };
    let scalar = if complex { 16.0 } else { 8.0 };
    let vectors = nf * basis as f64 * scalar * if complex { 3.0 } else { 4.0 };
    Plan {
        n_dofs: n,
        complex,
        factor_entries,
        memory_bytes: factor_entries * scalar * 1.3 + matrices + vectors,
    }
}

/// Complex vectors of the driven sweep's basis counted by [`plan_driven`]: the real basis
/// typically holds 50–200 columns (Re and Im of 25–100 Krylov vectors) on the examples.
pub const DRIVEN_BASIS_COMPLEX: usize = 100;

/// Plan of a driven solve: always complex (the ports), the factor of one expansion point
/// at a time, and the sweep's basis.
pub fn plan_driven(mesh: &TetMesh, order: crate::fem::NedelecOrder, n_ports: usize) -> Plan {
    let space = Space::with_ports(mesh, order, n_ports);
    estimate(space.n_dofs(), true, order.per_tet(), DRIVEN_BASIS_COMPLEX)
}
