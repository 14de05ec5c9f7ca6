//! Size of a solve before it runs: unknowns, whether the complex path is needed, and an
//! estimate of peak memory.
//!
//! The factor of K − σM dominates memory. With the geometric nested-dissection order its
//! entry count grew like c·n^{4/3} on this project's box and cylinder meshes (measured on
//! the development machine, order 1 and 2, n = 3k…340k: c ≈ 19–25; the 4/3 power is the
//! known growth of nested dissection on 3-D meshes, George 1973 / Lipton–Rose–Tarjan 1979,
//! from memory). With METIS the constant is smaller, see [`fill_constant`]; at order 3 the
//! real path measured c = 8.5 (n = 41k) and 8.9 (n = 100k) on the empty 300 × 300 × 200 mm
//! box (order 2 at n = 67k: 8.4, same machine and session), so order 3 takes order 2's
//! constant; `tests/tests/budget.rs` prints estimate against measured for orders 1–3 on
//! two mesh sizes and fails if the estimate drops below the measurement. The complex path
//! factorises the n × n complex symmetric matrix natively (same structure as the real
//! factor, 16 bytes per entry instead of 8).
//!
//! Once a mesh exists, [`plan_counted`] replaces the estimate by the count itself: the
//! solve's ordering and supernodal symbolic factorisation on the coupling pattern, no
//! numeric work (4.7 s for 0.8M order-3 unknowns); the estimate remains for the check
//! before meshing.

use crate::fem::assembly::RegionMaterial;
use crate::fem::{NedelecOrder, Space};
use crate::linalg::mixed::{FactorPrecision, RESTART};
use crate::modes::ModeSettings;
use antinode_mesh::TetMesh;

/// Fill constant of the estimate (see the module docs) for element order `order`: with
/// the METIS ordering the measured constants were ≈ 7.7 at order 1 (fed box, 19k
/// unknowns, 3.8M entries), ≈ 10 at order 2 (empty box, 120k, 60M) and 8.5–8.9 at order 3
/// (empty box, 41k–100k); the estimate takes 1.3× and 1.5× those to stay on the safe side.
pub fn fill_constant(order: NedelecOrder) -> f64 {
    match order {
        NedelecOrder::One => 10.0,
        NedelecOrder::Two | NedelecOrder::Three => 15.0,
    }
}

/// A fill constant below every one measured, less about 25 %: with METIS 5.4–6.2 at
/// order 1, 7.8–10 at order 2 and 8.2–8.9 at order 3 (`tests/tests/budget.rs` on the
/// structured box, [`fill_constant`]'s docs; the 1 L oven example at order 3 counted
/// 8.9). A plan with it is a lower bound, which lets a caller reject a size without
/// counting its factor.
pub const OPTIMISTIC_FILL: f64 = 4.0;

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
    /// Precision of the factor the estimate is for.
    pub precision: FactorPrecision,
}

/// Count unknowns and estimate memory for `settings` on `mesh`.
pub fn plan(mesh: &TetMesh, materials: &[RegionMaterial], settings: &ModeSettings) -> Plan {
    let space = settings.space(mesh);
    estimate_with(
        space.n_dofs(),
        settings.is_complex(materials),
        settings.order,
        basis_size(settings),
        settings.precision,
    )
}

/// [`plan`] with the factor's entries counted rather than estimated: the pattern of the
/// space's coupling graph, its nested-dissection ordering (METIS) and the supernodal
/// symbolic factorisation the solve will perform (no numeric work). The count is that of
/// the unknowns before the ports' TE10 constraint (which the solve eliminates first, on a
/// pattern that differs only on the apertures). Costs the ordering once more than the
/// solve (seconds to a minute on the examples; the `--plan` line prints it).
pub fn plan_counted(
    mesh: &TetMesh,
    materials: &[RegionMaterial],
    settings: &ModeSettings,
) -> Result<Plan, crate::SolverError> {
    let space = settings.space(mesh);
    Ok(with_factor_entries(
        space.n_dofs(),
        settings.is_complex(materials),
        settings.order,
        basis_size(settings),
        settings.precision,
        factor_entries_counted(&space)? as f64,
    ))
}

/// Entries of the factor of a matrix on `space`'s coupling pattern: the nested-dissection
/// ordering (METIS) and the supernodal symbolic factorisation the solves run, without
/// numeric work.
pub fn factor_entries_counted(space: &Space<'_>) -> Result<usize, crate::SolverError> {
    let (indptr, indices) = crate::fem::assembly::pattern(&space.dofs);
    let ordering = crate::linalg::ordering::nested_dissection_of_pattern(&indptr, &indices);
    crate::linalg::supernodal_ldlt::factor_entries_of_pattern(
        &indptr,
        &indices,
        ordering.as_ref().map(|(f, i)| (&f[..], &i[..])),
    )
}

/// Vectors of the eigen basis the plan counts: the iteration's basis, at least three per
/// wanted mode.
pub fn basis_size(settings: &ModeSettings) -> usize {
    settings.eigen.basis.max(3 * settings.count)
}

/// Stored entries per matrix row (both triangles) used by the estimate: measured on the
/// empty box 15.1 (order 1, n = 21k), 40.3 (order 2, n = 67k) and 76.3–78.5 (order 3,
/// n = 41k–100k); rounded up (order 1 to 16: the earlier 2.5 × local functions, 15, was
/// below the measurement; order 2 keeps 2.5 × 20 = 50; order 3 measured + 25 % for meshes
/// with more boundary).
pub fn row_entries(order: NedelecOrder) -> f64 {
    match order {
        NedelecOrder::One => 16.0,
        NedelecOrder::Two => 50.0,
        NedelecOrder::Three => 98.0,
    }
}

/// Estimate for `n` unknowns of element order `order` (which sets the matrix density,
/// [`row_entries`]); `basis` is the eigen basis size; a double-precision factor.
pub fn estimate(n: usize, complex: bool, order: NedelecOrder, basis: usize) -> Plan {
    estimate_with(n, complex, order, basis, FactorPrecision::Double)
}

/// Right-hand sides of one block solve counted for the mixed-precision work vectors
/// (the eigen block is 6; 8 leaves room).
const MIXED_BLOCK: f64 = 8.0;

/// Work vectors of a mixed-precision solve, in double-precision vectors of n: the
/// refinement's copies of the block (b, x, r, the active columns, their correction and
/// product: six per column, one more for the rounded single copy at half size) and one
/// GMRES cycle (the Krylov basis V and the preconditioned Z, 2·(restart + 1)).
pub fn mixed_work_vectors() -> f64 {
    7.0 * MIXED_BLOCK + 2.0 * (RESTART as f64 + 1.0)
}

/// [`estimate`] for a factor of the given precision: single stores 4 bytes per real
/// factor entry and 8 per complex one, and adds [`mixed_work_vectors`].
pub fn estimate_with(
    n: usize,
    complex: bool,
    order: NedelecOrder,
    basis: usize,
    precision: FactorPrecision,
) -> Plan {
    let factor_entries = fill_constant(order) * (n as f64).powf(4.0 / 3.0);
    with_factor_entries(n, complex, order, basis, precision, factor_entries)
}

/// The plan for `n` unknowns whose factor has `factor_entries` stored entries (counted or
/// estimated): the factor's values with 30 % for the factorisation's workspace and the
/// solves' copies, the matrices, the eigen basis and the mixed-precision work vectors.
pub fn with_factor_entries(
    n: usize,
    complex: bool,
    order: NedelecOrder,
    basis: usize,
    precision: FactorPrecision,
    factor_entries: f64,
) -> Plan {
    let nf = n as f64;
    // K, M′, M″ and the shifted copy (real and imaginary parts when complex) each store
    // values and column indices (12 bytes per entry).
    let row = row_entries(order);
    let matrices = nf * row * 12.0 * if complex { 5.0 } else { 3.0 };
    let scalar = if complex { 16.0 } else { 8.0 };
    // The complex iteration restarts with a larger basis (`KrylovScalar::basis_before_restart`).
    let basis = match complex {
        true => <faer::c64 as crate::linalg::eigen::KrylovScalar>::basis_before_restart(basis),
        false => basis,
    };
    let vectors = nf * basis as f64 * scalar * if complex { 3.0 } else { 4.0 };
    let (factor_scalar, work) = match precision {
        FactorPrecision::Double => (scalar, 0.0),
        FactorPrecision::Single => (scalar / 2.0, nf * mixed_work_vectors() * scalar),
    };
    Plan {
        n_dofs: n,
        complex,
        factor_entries,
        memory_bytes: factor_entries * factor_scalar * 1.3 + matrices + vectors + work,
        precision,
    }
}

/// Complex vectors of the driven sweep's basis counted by [`plan_driven`]: the real basis
/// typically holds 50–200 columns (Re and Im of 25–100 Krylov vectors) on the examples.
pub const DRIVEN_BASIS_COMPLEX: usize = 100;

/// Plan of a driven solve: always complex (the ports), the factor of one expansion point
/// at a time, and the sweep's basis.
pub fn plan_driven(mesh: &TetMesh, order: NedelecOrder, n_ports: usize) -> Plan {
    let space = Space::with_ports(mesh, order, n_ports);
    estimate(space.n_dofs(), true, order, DRIVEN_BASIS_COMPLEX)
}

/// [`plan_driven`] with the factor's entries counted ([`factor_entries_counted`]).
pub fn plan_driven_counted(
    mesh: &TetMesh,
    order: NedelecOrder,
    n_ports: usize,
) -> Result<Plan, crate::SolverError> {
    let space = Space::with_ports(mesh, order, n_ports);
    Ok(with_factor_entries(
        space.n_dofs(),
        true,
        order,
        DRIVEN_BASIS_COMPLEX,
        FactorPrecision::Double,
        factor_entries_counted(&space)? as f64,
    ))
}

/// The precision `auto` chooses: double when its plan fits in `limit` bytes, single
/// otherwise (even when single does not fit either: the caller's refusal then names the
/// smaller of the two).
pub fn choose_precision(
    n: usize,
    complex: bool,
    order: NedelecOrder,
    basis: usize,
    limit: f64,
) -> FactorPrecision {
    if estimate(n, complex, order, basis).memory_bytes <= limit {
        FactorPrecision::Double
    } else {
        FactorPrecision::Single
    }
}

/// Memory the front end allows a solve (bytes; 0 = no limit), checked against the exact
/// size of the largest single allocation, the factor's values, once the symbolic
/// factorisation has counted them and before they are allocated. Process-wide because
/// it describes the machine, not one problem.
static MEMORY_LIMIT: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);

/// Sets the memory a solve may use (`None`: no limit, the default).
pub fn set_memory_limit(bytes: Option<f64>) {
    let v = bytes.map_or(0, |b| b.max(1.0) as u64);
    MEMORY_LIMIT.store(v, std::sync::atomic::Ordering::Relaxed);
}

/// The limit set by [`set_memory_limit`].
pub fn memory_limit() -> Option<f64> {
    match MEMORY_LIMIT.load(std::sync::atomic::Ordering::Relaxed) {
        0 => None,
        v => Some(v as f64),
    }
}

/// Free unknowns expected on a mesh of `tets` tetrahedra, before it exists: with
/// F ≈ 2T faces (each interior face shared by two tetrahedra) and Euler's relation
/// V − E + F − T = 1, E ≈ V + T; the extruded meshes have V ≈ T/6 (three tetrahedra per
/// prism, two triangles per cross-section point), so E ≈ 7T/6. Unknowns per edge and
/// face follow the element order; the wall unknowns (a few % on these meshes) are counted
/// too, so the figure errs high.
pub fn unknowns_from_tets(tets: f64, order: NedelecOrder) -> f64 {
    let edges = 7.0 / 6.0 * tets;
    let faces = 2.0 * tets;
    edges * order.per_edge() as f64 + faces * order.per_face() as f64
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fem::NedelecOrder;

    /// Counts from an actual mesh against the formula: a 40 × 40 × 40 grid of cubes,
    /// five tetrahedra each (edges and faces counted by the topology). Own arithmetic, no
    /// source: this split has E → 1.2 T (three grid edges and three face diagonals per
    /// cell) against the extruded meshes' 7/6 T (+2.9 %), the grid lines on the far
    /// boundary add (41/40)² − 1 ≈ 5 % more edges and the boundary faces 1.5 % more
    /// faces: under 10 % in all. (On a mesher mesh, empty_box.toml at 4 mm, 2,667,504
    /// tetrahedra: E = 1.185 T, F = 2.012 T.)
    #[test]
    fn unknowns_from_tets_is_near_the_counted_entities() {
        let grid = antinode_mesh::structured::GridLines::uniform([0.0; 3], [0.1; 3], [40; 3]);
        let air = antinode_mesh::tet_mesh::RegionInfo { name: "air".into() };
        let mesh = antinode_mesh::structured::grid_mesh(&grid, vec![air], |_| Some(0));
        let topo = crate::fem::topology::Topology::new(&mesh);
        let t = mesh.tets.len() as f64;
        for order in [NedelecOrder::One, NedelecOrder::Two] {
            let counted =
                (topo.edges.len() * order.per_edge() + topo.faces.len() * order.per_face()) as f64;
            let est = unknowns_from_tets(t, order);
            assert!(
                (est / counted - 1.0).abs() < 0.10,
                "{order:?}: {est} vs {counted}"
            );
        }
    }

    /// The single plan is smaller than the double one by most of the factor, and `auto`
    /// picks single only when double does not fit: limits just above and just below the
    /// double plan of a 1M-unknown complex order-2 problem (own arithmetic, no source).
    #[test]
    fn auto_chooses_single_only_when_double_does_not_fit() {
        let (n, order, basis) = (1_000_000, NedelecOrder::Two, 80);
        for complex in [false, true] {
            let d = estimate(n, complex, order, basis);
            let s = estimate_with(n, complex, order, basis, FactorPrecision::Single);
            let scalar = if complex { 16.0 } else { 8.0 };
            // Half the factor's bytes saved, the work vectors added.
            let saved = d.factor_entries * scalar / 2.0 * 1.3;
            let work = n as f64 * mixed_work_vectors() * scalar;
            assert!((d.memory_bytes - s.memory_bytes - (saved - work)).abs() < 1.0);
            assert!(s.memory_bytes < d.memory_bytes);
            let pick = |limit| choose_precision(n, complex, order, basis, limit);
            assert_eq!(pick(d.memory_bytes * 1.001), FactorPrecision::Double);
            assert_eq!(pick(d.memory_bytes), FactorPrecision::Double);
            assert_eq!(pick(d.memory_bytes * 0.999), FactorPrecision::Single);
            assert_eq!(pick(s.memory_bytes * 0.5), FactorPrecision::Single);
        }
    }

    /// An allocation no allocator can give (half the address space) is a typed error,
    /// not an abort.
    #[test]
    fn an_impossible_factor_allocation_is_an_error() {
        let len = usize::MAX / 16;
        match crate::linalg::factor::zeroed(len, "factor values") {
            Err(crate::SolverError::OutOfMemory { bytes, .. }) => assert!(bytes > 1 << 60),
            other => panic!("expected OutOfMemory, got {:?}", other.map(|v| v.len())),
        }
    }
}
