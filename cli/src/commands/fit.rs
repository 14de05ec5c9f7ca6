//! Automatic mesh size: a `modes` run whose geometry and command line give no
//! `per_wavelength` starts at the order's default (the mesh-size study's accuracy choice,
//! `antinode_mesh::geometry::default_per_wavelength`) and, when the solve's plan does not
//! fit [`FIT_SHARE`] of the memory this run may use, relaxes the size step by step, never
//! below the order's floor ([`floor_per_wavelength`]). The run then says what it did and
//! prints the accuracy estimate of the size it used (the review's table).
//!
//! Each step meshes (under a second on the examples) and counts the unknowns. A step is
//! judged first by an optimistic plan (fill constant [`budget::OPTIMISTIC_FILL`]): when
//! even that does not fit, no ordering is spent on it; otherwise by the plan with the
//! factor's entries counted by the symbolic factorisation ([`budget::plan_counted`]).
//! Memory grows at least like the cube of `per_wavelength` (the unknowns of a volume
//! mesh) and the factor like its fourth power, so a step to p·(share/need)^{1/3} reaches
//! a plan within the share or below it; once one fits, the gap to the last size that did
//! not is halved (geometrically) while it exceeds [`BRACKET`].

use super::mesh::make_curved;
use crate::units;
use antinode_mesh::geometry::default_max_size_mm;
use antinode_mesh::mesher::CurvedMesh;
use antinode_mesh::{Geometry, TetMesh};
use antinode_solver::budget::{self, Plan};
use antinode_solver::fem::assembly::RegionMaterial;
use antinode_solver::linalg::mixed::FactorPrecision;
use antinode_solver::{ModeSettings, NedelecOrder};
use anyhow::Result;

/// Share of the memory this run may use that an automatically sized solve plans for:
/// our choice, below the refusal's 0.9 so that the run is well inside memory, with room
/// for the plan's own error (counted plans measured 1.04–1.28× the peak on the
/// examples, README Performance) and for other programs.
pub const FIT_SHARE: f64 = 0.7;

/// The search stops once the last size that fits and the last that did not are within
/// this ratio (10 %: about 30 % in unknowns).
const BRACKET: f64 = 1.1;

/// At most this many meshes are tried.
const MAX_TRIES: usize = 8;

/// Coarsest `per_wavelength` automatic sizing goes to, by element order: the coarsest
/// size of the mesh-size study (README, "Mesh-size study and the defaults") at which all
/// three references (box, loaded, cylinder) are within 1 % in frequency — order 1: 6
/// (worst 8.0e-3; at 3, 3.5e-2), order 2: 3 (3.8e-3; at 2, 1.6e-2), order 3: 1.5 (6.0e-3,
/// the study's coarsest order-3 size). 1 % is our bound (a quarter of the 2.4–2.5 GHz
/// band's width): coarser than that a mode listing no longer places the modes in the
/// band.
pub fn floor_per_wavelength(order: NedelecOrder) -> f64 {
    match order {
        NedelecOrder::One => 6.0,
        NedelecOrder::Two => 3.0,
        NedelecOrder::Three => 1.5,
    }
}

/// One mesh the search tried.
#[derive(Clone, Copy, Debug)]
pub struct Attempt {
    pub per_wavelength: f64,
    pub tets: usize,
    pub unknowns: usize,
    /// Planned peak memory, bytes (optimistic when `counted` is false).
    pub bytes: f64,
    /// Whether the factor's entries were counted (else the optimistic plan sufficed to
    /// reject the size).
    pub counted: bool,
}

/// The mesh the search settled on and how it got there.
pub struct Fitted {
    pub mesh: CurvedMesh,
    pub mesh_s: f64,
    /// The counted plan of `mesh` at the lowest precision the run allows.
    pub plan: Plan,
    /// The order's default the search started from.
    pub asked: f64,
    pub used: f64,
    pub attempts: Vec<Attempt>,
    /// Bytes the search planned for (FIT_SHARE of the memory this run may use).
    pub share_bytes: f64,
    /// Whether `plan` fits `share_bytes` (else `mesh` is the floor's).
    pub fits: bool,
}

impl Fitted {
    /// Whether the size was relaxed from the default.
    pub fn relaxed(&self) -> bool {
        self.used < self.asked
    }

    /// One line for the run's output.
    pub fn summary(&self) -> String {
        let tried: Vec<String> = self
            .attempts
            .iter()
            .map(|a| {
                format!(
                    "{:.2} → {} unknowns, {}{}",
                    a.per_wavelength,
                    a.unknowns,
                    units::bytes(a.bytes),
                    if a.counted { "" } else { " at least" }
                )
            })
            .collect();
        if !self.fits {
            format!(
                "automatic mesh size: even the order's floor, {:.2} elements per wavelength, \
                 plans above {} ({:.0} % of the memory this run may use); tried {}",
                self.used,
                units::bytes(self.share_bytes),
                FIT_SHARE * 100.0,
                tried.join("; ")
            )
        } else if self.relaxed() {
            format!(
                "automatic mesh size: {:.2} elements per wavelength instead of the order's \
                 default {:.2}, so that the solve plans within {} ({:.0} % of the memory this \
                 run may use); tried {}; give --per-wavelength (or [mesh] per_wavelength) to \
                 fix the size",
                self.used,
                self.asked,
                units::bytes(self.share_bytes),
                FIT_SHARE * 100.0,
                tried.join("; ")
            )
        } else {
            format!(
                "automatic mesh size: the order's default, {:.2} elements per wavelength \
                 (fits the memory)",
                self.used
            )
        }
    }
}

/// Sets the size the mesher will use: `per_wavelength` p and, unless the run gave
/// `max_size`, its default λ0/p.
pub fn set_size(geom: &mut Geometry, p: f64) {
    geom.mesh.per_wavelength = p;
    if !geom.mesh.max_size_given {
        geom.mesh.max_size = default_max_size_mm(p, geom.solve.target);
    }
}

/// What the search needs of a command's plan.
pub trait SizePlanner {
    /// Unknowns of the command's space on `mesh`.
    fn unknowns(&self, mesh: &TetMesh) -> usize;
    /// A lower bound of the plan for `n` unknowns ([`budget::OPTIMISTIC_FILL`]).
    fn optimistic(&self, n: usize) -> Plan;
    /// The plan with the factor's entries counted.
    fn counted(&self, mesh: &TetMesh) -> Result<Plan>;
}

/// `modes`: its settings (the space with impedance walls when they enter the solve) at
/// the lowest precision the run allows.
pub struct ModesPlanner<'a> {
    settings: ModeSettings,
    materials: &'a [RegionMaterial],
}

impl<'a> ModesPlanner<'a> {
    pub fn new(
        settings: &ModeSettings,
        materials: &'a [RegionMaterial],
        precision: FactorPrecision,
    ) -> Self {
        let mut settings = settings.clone();
        settings.precision = precision;
        Self {
            settings,
            materials,
        }
    }
}

impl SizePlanner for ModesPlanner<'_> {
    fn unknowns(&self, mesh: &TetMesh) -> usize {
        self.settings.space(mesh).n_dofs()
    }
    fn optimistic(&self, n: usize) -> Plan {
        let s = &self.settings;
        budget::with_factor_entries(
            n,
            s.is_complex(self.materials),
            s.order,
            budget::basis_size(s),
            s.precision,
            budget::OPTIMISTIC_FILL * (n as f64).powf(4.0 / 3.0),
        )
    }
    fn counted(&self, mesh: &TetMesh) -> Result<Plan> {
        Ok(budget::plan_counted(mesh, self.materials, &self.settings)?)
    }
}

/// `drive`: complex, double precision, its sweep basis, the ports' unknowns.
pub struct DrivePlanner {
    pub order: NedelecOrder,
    pub ports: usize,
}

impl SizePlanner for DrivePlanner {
    fn unknowns(&self, mesh: &TetMesh) -> usize {
        antinode_solver::fem::Space::with_ports(mesh, self.order, self.ports).n_dofs()
    }
    fn optimistic(&self, n: usize) -> Plan {
        budget::with_factor_entries(
            n,
            true,
            self.order,
            budget::DRIVEN_BASIS_COMPLEX,
            FactorPrecision::Double,
            budget::OPTIMISTIC_FILL * (n as f64).powf(4.0 / 3.0),
        )
    }
    fn counted(&self, mesh: &TetMesh) -> Result<Plan> {
        Ok(budget::plan_driven_counted(mesh, self.order, self.ports)?)
    }
}

/// Searches the finest `per_wavelength` between the order's floor and `geom`'s current
/// (default) size whose plan by `planner` fits `FIT_SHARE · limit` bytes; leaves that
/// size in `geom`. When even the floor does not fit, returns the floor's mesh and plan
/// (the caller's memory check then refuses it and says why).
pub fn mesh_to_fit(
    geom: &mut Geometry,
    order: NedelecOrder,
    planner: &dyn SizePlanner,
    limit: f64,
) -> Result<Fitted> {
    let asked = geom.mesh.per_wavelength;
    let floor = floor_per_wavelength(order).min(asked);
    let share = FIT_SHARE * limit;

    let mut attempts: Vec<Attempt> = Vec::new();
    // The finest size that fitted, and the latest one tried (kept when none fits).
    let mut best: Option<(CurvedMesh, f64, Plan, f64)> = None;
    let mut latest: Option<(CurvedMesh, f64, Plan, f64)> = None;
    let mut too_big = f64::INFINITY; // smallest size that did not fit
    let mut p = asked;
    for _ in 0..MAX_TRIES {
        set_size(geom, p);
        let (mesh, mesh_s) = make_curved(geom)?;
        let n = planner.unknowns(&mesh.mesh);
        let optimistic = planner.optimistic(n);
        let (plan, counted) = if optimistic.memory_bytes > share {
            (optimistic, false)
        } else {
            (planner.counted(&mesh.mesh)?, true)
        };
        attempts.push(Attempt {
            per_wavelength: p,
            tets: mesh.mesh.tets.len(),
            unknowns: n,
            bytes: plan.memory_bytes,
            counted,
        });
        let need = plan.memory_bytes;
        if counted && need <= share {
            best = Some((mesh, mesh_s, plan, p));
        } else {
            too_big = too_big.min(p);
            latest = Some((mesh, mesh_s, plan, p));
        }
        p = match &best {
            // The default fits: nothing to search.
            Some((.., ok)) if *ok >= asked => break,
            Some((.., ok)) if too_big / ok > BRACKET => (ok * too_big).sqrt(),
            Some(_) => break,
            None if p <= floor => break,
            None => (p * (share / need).cbrt()).min(0.95 * p).max(floor),
        };
    }
    let fits = best.is_some();
    let (mesh, mesh_s, plan, used) = match (best, latest) {
        (Some(b), _) | (None, Some(b)) => b,
        (None, None) => unreachable!("every try is kept as best or latest"),
    };
    set_size(geom, used);
    // A size rejected by the optimistic plan alone gets its counted plan, for the
    // refusal's figures.
    let plan = match attempts.iter().find(|a| a.per_wavelength == used) {
        Some(a) if !a.counted => planner.counted(&mesh.mesh)?,
        _ => plan,
    };
    Ok(Fitted {
        mesh,
        mesh_s,
        plan,
        asked,
        used,
        attempts,
        share_bytes: share,
        fits,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn floors_are_coarser_than_the_defaults() {
        for (o, k) in [
            (NedelecOrder::One, 1u8),
            (NedelecOrder::Two, 2),
            (NedelecOrder::Three, 3),
        ] {
            let d = antinode_mesh::geometry::default_per_wavelength(k);
            assert!(floor_per_wavelength(o) < d, "{o:?}");
        }
    }
}
