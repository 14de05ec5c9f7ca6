//! The memory plan of a run, before meshing and again once the mesh exists.
//!
//! Before meshing: the mesher's element-count estimate (`antinode_mesh::mesher::estimate`)
//! gives the tetrahedra; `antinode_solver::budget::unknowns_from_tets` turns them into
//! unknowns and `budget::estimate` into the solver's peak memory; the meshing itself
//! costs [`MESHING_BYTES_PER_TET`]. The larger of the two is held against the memory
//! this run may use ([`crate::budget::available`]: MemAvailable or the cgroup limit).
//! After meshing, the solver's exact plan is checked the same way (in `modes` and
//! `drive`). Both refusals name the options that shrink the run, never one the run
//! already uses.

use crate::budget::Available;
use crate::units;
use antinode_mesh::{mesher, Geometry};
use antinode_solver::budget;
use antinode_solver::linalg::mixed::FactorPrecision;
use antinode_solver::NedelecOrder;
use anyhow::{bail, Result};

/// Share of the available memory a run may plan to use before it is refused.
pub const MEMORY_SHARE: f64 = 0.9;

/// Peak memory of meshing (mesher, mesh, topology and unknown count) per tetrahedron:
/// `antinode mesh geometries/empty_box.toml --max-size 4` peaked at 636 MB resident for
/// 2,667,504 tetrahedra (238 B each; development machine, 2026-12-03), rounded up.
pub const MESHING_BYTES_PER_TET: f64 = 300.0;

/// The wanted mode count of a `modes` run and the eigen basis it would have without it.
#[derive(Clone, Copy, Debug)]
pub struct CountBasis {
    pub count: usize,
    pub usual: usize,
}

/// What the run is expected to need, before meshing.
#[derive(Clone, Copy, Debug)]
pub struct PrePlan {
    pub tets: f64,
    pub unknowns: f64,
    pub meshing_bytes: f64,
    pub solve_bytes: f64,
}

impl PrePlan {
    pub fn peak_bytes(&self) -> f64 {
        self.meshing_bytes.max(self.solve_bytes)
    }
}

/// The plan from the mesher's estimate; `None` for an imported mesh (no estimate).
/// Refuses a run whose plan exceeds the memory available unless `allow_large`; the solve
/// is planned with a factor of precision `lowest` (single when the run may fall back to
/// it, so that it is not refused for a double plan it would not use).
#[allow(clippy::too_many_arguments)]
pub fn before_meshing(
    geom: &Geometry,
    order: NedelecOrder,
    complex: bool,
    basis: usize,
    count: Option<CountBasis>,
    allow_large: bool,
    lowest: FactorPrecision,
    avail: Option<Available>,
) -> Result<Option<PrePlan>> {
    let Some(plan) = estimate_before_meshing(geom, order, complex, basis, lowest)? else {
        return Ok(None);
    };
    let unknowns = plan.unknowns;
    let solve = budget::estimate_with(unknowns as usize, complex, order, basis, lowest);
    let mut basis_note = String::new();
    if let Some(c) = count {
        // The estimate may be 1/0.87 off the mesher's count (mesher::ESTIMATE_MARGIN).
        if c.count as f64 > unknowns * mesher::ESTIMATE_MARGIN {
            bail!(
                "--count {} asks for more modes than this problem will have unknowns (about \
                 {:.0} at order {} by the mesher's estimate): use a smaller --count, or \
                 refine the mesh (--per-wavelength, --max-size)",
                c.count,
                unknowns,
                order.as_int()
            );
        }
        let usual = budget::estimate_with(unknowns as usize, complex, order, c.usual, lowest);
        if solve.memory_bytes > 2.0 * usual.memory_bytes {
            basis_note = format!(
                "; most of it the eigen basis of {basis} vectors for --count {} (use a \
                 smaller --count)",
                c.count
            );
        }
    }
    if let Some(a) = avail {
        if plan.peak_bytes() > MEMORY_SHARE * a.bytes && !allow_large {
            bail!(
                "this run would need an estimated {} before it starts meshing (about {:.2e} \
                 tetrahedra by the mesher's estimate, ~{:.2e} unknowns at order {}{}; meshing \
                 {}, solve {}), but only {} is available ({}){basis_note}; {}",
                units::bytes(plan.peak_bytes()),
                plan.tets,
                plan.unknowns,
                order.as_int(),
                if complex { ", complex" } else { "" },
                units::bytes(plan.meshing_bytes),
                units::bytes(plan.solve_bytes),
                units::bytes(a.bytes),
                a.source,
                shrink_hint(order)
            );
        }
    }
    Ok(Some(plan))
}

/// The plan before meshing without any check: the mesher's element-count estimate,
/// unknowns and the solver's estimate; `None` for an imported mesh.
pub fn estimate_before_meshing(
    geom: &Geometry,
    order: NedelecOrder,
    complex: bool,
    basis: usize,
    lowest: FactorPrecision,
) -> Result<Option<PrePlan>> {
    if geom.mesh.import.is_some() {
        return Ok(None);
    }
    let sizes = mesher::element_sizes(geom)?;
    let est = mesher::estimate(geom, &sizes)?;
    let unknowns = budget::unknowns_from_tets(est.tets, order);
    let solve = budget::estimate_with(unknowns as usize, complex, order, basis, lowest);
    Ok(Some(PrePlan {
        tets: est.tets,
        unknowns,
        meshing_bytes: MESHING_BYTES_PER_TET * est.tets,
        solve_bytes: solve.memory_bytes,
    }))
}

/// Refuses a solve whose exact plan (after meshing) exceeds the memory available.
pub fn check_solve(
    plan: &budget::Plan,
    order: NedelecOrder,
    avail: Option<Available>,
    basis_note: Option<String>,
    allow_large: bool,
) -> Result<()> {
    let Some(a) = avail else {
        eprintln!(
            "note: available memory unknown (/proc/meminfo unreadable); estimated need {}",
            units::bytes(plan.memory_bytes)
        );
        return Ok(());
    };
    if !allow_large {
        // The factor's values, counted exactly before they are allocated, get the same
        // limit (the fill estimate can be low: a single 13.6 GB allocation once followed
        // a 12.8 GB plan).
        budget::set_memory_limit(Some(MEMORY_SHARE * a.bytes));
    }
    if plan.memory_bytes > MEMORY_SHARE * a.bytes && !allow_large {
        bail!(
            "this solve would need an estimated {} ({} unknowns at order {}{}, {:.3e} factor \
             entries counted by the symbolic factorisation, in {} precision{}), but only {} \
             is available ({}); {}",
            units::bytes(plan.memory_bytes),
            plan.n_dofs,
            order.as_int(),
            if plan.complex { ", complex" } else { "" },
            plan.factor_entries,
            plan.precision.name(),
            basis_note.unwrap_or_default(),
            units::bytes(a.bytes),
            a.source,
            shrink_hint(order)
        );
    }
    Ok(())
}

/// Measured reference for the time estimate: the empty box at order 2 with 126,962 real
/// unknowns took 7.85 s in all (README, Performance, 2026-12-02).
const TIME_REF: (f64, f64) = (126_962.0, 7.85);
/// Growth of the total time with the factor size, and the extra cost per factor entry
/// of the complex (2n real) problems: fitted by eye to the README's measured runs
/// (order-2 benchmark rows; fed_box and bowl_on_plate), which it meets within about 2×.
const TIME_EXPONENT: f64 = 1.25;
const COMPLEX_TIME_FACTOR: f64 = 1.8;

/// Rough wall time of the solve on the 2-core development machine.
pub fn time_estimate(plan: &budget::Plan) -> f64 {
    // The plan's entries are counted; the reference's are its measured fill constant
    // (≈ 10 at order 2 on the empty box, `budget::fill_constant`'s docs) times n^{4/3}.
    let reference = 10.0 * TIME_REF.0.powf(4.0 / 3.0);
    let ratio = (plan.factor_entries / reference).powf(TIME_EXPONENT);
    TIME_REF.1
        * ratio
        * if plan.complex {
            COMPLEX_TIME_FACTOR
        } else {
            1.0
        }
}

/// What `--plan` prints after meshing.
pub fn print_plan_only(plan: &budget::Plan, pre: Option<&PrePlan>, tets: usize, mesh_s: f64) {
    if let Some(p) = pre {
        println!(
            "before meshing: about {:.3e} tetrahedra and {:.3e} unknowns expected (mesher's \
             estimate), {} for meshing",
            p.tets,
            p.unknowns,
            units::bytes(p.meshing_bytes)
        );
    }
    println!(
        "mesh: {tets} tetrahedra in {mesh_s:.2} s; solve: {} unknowns, {:.3e} factor entries \
         (counted by the symbolic factorisation), peak memory ~{}",
        plan.n_dofs,
        plan.factor_entries,
        units::bytes(plan.memory_bytes)
    );
    println!(
        "time: ~{:.0} s for the solve: a rough estimate scaled from the measured runs in the \
         README (empty box at order 2, 127k unknowns, 7.85 s on the 2-core development \
         machine; time ∝ factor entries^{TIME_EXPONENT}, complex problems {COMPLEX_TIME_FACTOR}× \
         slower), within about 2× there",
        time_estimate(plan)
    );
    println!("plan only (--plan): nothing solved, nothing written");
}

/// Says what the plan's unknown count includes when the solve will report fewer.
pub fn port_note(ports: usize) -> &'static str {
    if ports == 0 {
        ""
    } else {
        " before the ports' TE10 constraint (which ties the aperture unknowns together and \
         removes some: the solve reports fewer)"
    }
}

/// The options that make a run smaller, without the one it already uses.
pub fn shrink_hint(order: NedelecOrder) -> String {
    let coarser = "a smaller --per-wavelength or a larger --max-size";
    match order {
        NedelecOrder::One => format!("use {coarser}, or pass --allow-large to try anyway"),
        // Order 1 at its own default size (10 per wavelength) is larger, not smaller.
        _ => format!(
            "use {coarser}, or --order 1 with a --per-wavelength of 3–4 (its default, 10, \
             is finer), or pass --allow-large to try anyway"
        ),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn order_one_is_not_told_to_use_order_one() {
        assert!(!shrink_hint(NedelecOrder::One).contains("--order 1"));
        assert!(shrink_hint(NedelecOrder::Two).contains("--order 1"));
    }
}
