//! Memory estimate of a solve, made after meshing and before assembly, and the check
//! against the memory the machine has available.

use antinode_solver::NedelecOrder;

/// Estimated memory of one solve.
#[derive(Clone, Debug, serde::Serialize)]
pub struct Estimate {
    /// Free unknowns (exact, from the unknown numbering).
    pub unknowns: usize,
    /// Estimated non-zeros of K (and of M, same pattern).
    pub matrix_nnz: f64,
    /// Estimated entries of the sparse factor of K − σM.
    pub factor_entries: f64,
    /// Estimated peak bytes (matrices + factor + eigen basis + mode vectors).
    pub peak_bytes: f64,
}

/// Estimates the peak memory of solving `unknowns` unknowns of `order` for `modes` modes.
///
/// Matrix non-zeros per row: about 16 for order 1 and 45 for order 2 (typical
/// tetrahedral meshes). Factor entries ≈ 60·n^1.3: a rough fit for nested-dissection
/// orderings of 3-D meshes, to be replaced by figures measured with this solver (the
/// `modes` command prints the measured factor size beside this estimate so the fit can
/// be checked). Bytes: three sparse matrices (K, M, K − σM) at 16 bytes per entry
/// (value + index), the factor at ~10 bytes per entry (value + share of the supernode
/// index), a Krylov basis of three n × m blocks with m = max(64, 3·modes), and the mode
/// vectors.
pub fn estimate(unknowns: usize, order: NedelecOrder, modes: usize) -> Estimate {
    let n = unknowns as f64;
    let per_row = match order {
        NedelecOrder::One => 16.0,
        NedelecOrder::Two => 45.0,
    };
    let matrix_nnz = n * per_row;
    let factor_entries = 60.0 * n.powf(1.3);
    let basis = (3 * modes).max(64) as f64;
    let peak_bytes = 3.0 * matrix_nnz * 16.0
        + factor_entries * 10.0
        + 3.0 * n * basis * 8.0
        + n * modes as f64 * 8.0;
    Estimate {
        unknowns,
        matrix_nnz,
        factor_entries,
        peak_bytes,
    }
}

/// Available memory in bytes (MemAvailable of /proc/meminfo), when it can be read.
pub fn available_bytes() -> Option<f64> {
    let text = std::fs::read_to_string("/proc/meminfo").ok()?;
    text.lines().find_map(|l| {
        let rest = l.strip_prefix("MemAvailable:")?;
        let kb: f64 = rest.trim().trim_end_matches("kB").trim().parse().ok()?;
        Some(kb * 1024.0)
    })
}
