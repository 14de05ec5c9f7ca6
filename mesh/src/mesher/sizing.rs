//! Target element sizes: one per region from the local wavelength, and the graded size
//! fields (cross-section and height) the mesher places its points by.

use super::MesherError;
use crate::geometry::{CavityShape, Geometry, LoadShape};

/// Speed of light in vacuum in mm/s (geometry files use mm): [`crate::constants::C0`]
/// times 1000, exact in floating point.
pub const C0_MM_PER_S: f64 = crate::constants::C0 * 1e3;

/// Growth of the element size per unit distance away from a finer region. Sizes rise by
/// at most half the distance travelled, so neighbouring elements differ by a factor of
/// about 1.5 at most (the upper end of the 1.3–1.5 usually taken for smooth grading),
/// and the fine shell around a water load, (h_air − h)/0.5 wide, stays
/// thinner than with slower grading; every layer and every cross-section point inside
/// that shell is repeated through the whole extrusion, so its width costs many tets.
pub const GRADING: f64 = 0.5;

/// Growth of the layer thickness per unit height away from a finer load: thicknesses
/// may double from one layer to the next. Along z the prisms keep their triangles, so a
/// thickness jump only changes the aspect of the prisms on either side of it, never the
/// angles of a triangle; the layers at a fine load's height run across the whole
/// cross-section, so leaving that height fast removes whole layers.
pub const GRADING_Z: f64 = 1.0;

/// Target element size of one region.
#[derive(Clone, Debug, PartialEq)]
pub struct RegionSize {
    /// "air" or the load's name.
    pub name: String,
    /// Real relative permittivity ε′ at the target frequency.
    pub eps_real: f64,
    /// Relative permeability μr.
    pub mu_r: f64,
    /// Local wavelength λ0/√(ε′ μr), mm.
    pub wavelength_mm: f64,
    /// Target element edge length: wavelength / per_wavelength, capped by max_size, mm.
    pub size_mm: f64,
}

/// Target element size of each region, indexed by region id (0 = air, i + 1 = load i):
/// h = λ0/√(ε′ μr) / per_wavelength at `solve.target`, capped by `mesh.max_size`.
pub fn element_sizes(geom: &Geometry) -> Result<Vec<RegionSize>, MesherError> {
    let f_ghz = geom.solve.target;
    let pw = geom.mesh.per_wavelength;
    let cap = geom.mesh.max_size;
    for (name, v) in [
        ("solve.target", f_ghz),
        ("mesh.per_wavelength", pw),
        ("mesh.max_size", cap),
    ] {
        if !(v.is_finite() && v > 0.0) {
            return Err(MesherError::Settings(format!(
                "{name} = {v} must be a positive finite number"
            )));
        }
    }
    let lambda0 = C0_MM_PER_S / (f_ghz * 1e9);
    let region = |name: &str, eps: f64, mu: f64| -> Result<RegionSize, MesherError> {
        let n2 = eps * mu;
        if !(n2.is_finite() && n2 > 0.0) {
            return Err(MesherError::Settings(format!(
                "region '{name}': ε′·μr = {n2} at {f_ghz} GHz must be positive and finite"
            )));
        }
        let wl = lambda0 / n2.sqrt();
        Ok(RegionSize {
            name: name.to_string(),
            eps_real: eps,
            mu_r: mu,
            wavelength_mm: wl,
            size_mm: (wl / pw).min(cap),
        })
    };
    let mut out = vec![region("air", 1.0, 1.0)?];
    for load in &geom.loads {
        let (eps, _) = load.material.permittivity(f_ghz * 1e9);
        out.push(region(&load.name, eps, load.material.permeability)?);
    }
    Ok(out)
}

/// A load as the size fields see it: its footprint, z-range and size.
#[derive(Clone, Debug)]
pub(crate) struct SizedLoad {
    pub shape: LoadShape,
    pub h: f64,
}

impl SizedLoad {
    /// Distance in the cross-section from `p` to the footprint (0 inside).
    fn dist_xy(&self, p: [f64; 2]) -> f64 {
        match self.shape {
            LoadShape::Cylinder { center, radius, .. } => {
                let d = ((p[0] - center[0]).powi(2) + (p[1] - center[1]).powi(2)).sqrt();
                (d - radius).max(0.0)
            }
            LoadShape::Box { .. } => self.shape.box_footprint().map_or(0.0, |f| f.distance(p)),
        }
    }

    /// Distance in 3-D from `p` to the load (0 inside).
    fn dist(&self, p: [f64; 3]) -> f64 {
        let [b, t] = self.z_range();
        let dz = (b - p[2]).max(p[2] - t).max(0.0);
        self.dist_xy([p[0], p[1]]).hypot(dz)
    }

    /// Vertical extent [bottom, top] (mm).
    pub fn z_range(&self) -> [f64; 2] {
        match self.shape {
            LoadShape::Cylinder { bottom, height, .. } => [bottom, bottom + height],
            LoadShape::Box { min, max, .. } => [min[2], max[2]],
        }
    }
}

/// Fewest sides of a circle's polygon in a mesh made at the target sizes, so that even a
/// coarse circle stays round (chord angle 30°, sagitta 1/15 of the chord).
pub const MIN_CIRCLE_SIDES: usize = 12;

/// Fewest sides of a circle's polygon in the graded mesher's coarse start: a chord
/// deviation bound, sagitta ≤ chord/30 (chord angle 15°; a chord s of a circle of radius
/// R has sagitta s²/(8R), analytic, so s ≤ 2πR/24 gives s/(8R) = π/96 ≈ 1/30.6). The
/// start is made at the air's size, so its circles are usually at this bound, and
/// refinement moves every new side vertex from its chord's midpoint onto the cylinder by
/// that chord's sagitta; a move of 3 % of the local edge keeps the tets beside it
/// valid, where 12 sides (6.5 %) inverted or flattened enough of them that 258 of 418
/// water-side vertices of geometries/cup_compact.toml (R = 28 mm, start at 30 mm)
/// had to stay on their chords, leaving the water 3.0 % short in volume; with 24 sides
/// 22 of 308 stay and the deficit is 0.29 %, falling to 0.10 % and 0.026 % at 6 and 12
/// per wavelength (measured). More sides (32) left none off the surface but made
/// worse tets in the start (needle prisms: smallest dihedral 0.7° against 2.4°).
pub const MIN_CIRCLE_SIDES_GRADED: usize = 24;

/// Graded size fields of one geometry (mm).
#[derive(Clone, Debug)]
pub(crate) struct SizeField {
    pub h_air: f64,
    pub loads: Vec<SizedLoad>,
    /// Fewest sides of a circle's polygon (load footprints, cylinder cavity wall).
    pub min_circle_sides: usize,
}

impl SizeField {
    pub fn new(geom: &Geometry, sizes: &[RegionSize]) -> Result<Self, MesherError> {
        let mut loads = Vec::with_capacity(geom.loads.len());
        for (i, load) in geom.loads.iter().enumerate() {
            let shape = load.shape.ok_or_else(|| MesherError::MissingLoadShape {
                load: load.name.clone(),
            })?;
            loads.push(SizedLoad {
                shape,
                h: sizes[i + 1].size_mm,
            });
        }
        Ok(Self {
            h_air: sizes[0].size_mm,
            loads,
            min_circle_sides: MIN_CIRCLE_SIDES,
        })
    }

    /// Smallest target size anywhere.
    pub fn h_min(&self) -> f64 {
        self.loads.iter().map(|l| l.h).fold(self.h_air, f64::min)
    }

    /// Cross-section size h2d(p) = min(h_air, min_i(h_i + g·dist(p, footprint_i))): the 2-D
    /// mesh is shared by every z-layer, so it must be as fine as the finest load above or
    /// below `p`. It is GRADING-Lipschitz, which the quadtree relies on.
    pub fn h_xy(&self, p: [f64; 2]) -> f64 {
        self.loads
            .iter()
            .map(|l| l.h + GRADING * l.dist_xy(p))
            .fold(self.h_air, f64::min)
    }

    /// The graded 3-D size field, lowest over the ball of radius `rho` around `p`:
    /// min(h_air, min_i(h_i + GRADING·max(0, d(p, load_i) − rho))). With rho = 0 this is
    /// the field h(p) itself; h is GRADING-Lipschitz, so this bounds h from below over
    /// any element within `rho` of `p`, and equals h inside a load.
    pub fn h_3d_ball(&self, p: [f64; 3], rho: f64) -> f64 {
        self.loads
            .iter()
            .map(|l| l.h + GRADING * (l.dist(p) - rho).max(0.0))
            .fold(self.h_air, f64::min)
    }

    /// The same field with every load at the air's size: the coarse starting mesh of the
    /// graded mesher (outlines and layer planes still carry every interface), with its
    /// circles under the chord-deviation bound [`MIN_CIRCLE_SIDES_GRADED`].
    pub fn coarse(&self) -> Self {
        let mut c = self.clone();
        c.min_circle_sides = c.min_circle_sides.max(MIN_CIRCLE_SIDES_GRADED);
        for l in &mut c.loads {
            l.h = self.h_air;
        }
        c
    }

    /// Layer thickness at height z: the same rule along z with the loads' z-ranges and
    /// GRADING_Z.
    pub fn h_z(&self, z: f64) -> f64 {
        self.loads
            .iter()
            .map(|l| {
                let [b, t] = l.z_range();
                l.h + GRADING_Z * (b - z).max(z - t).max(0.0)
            })
            .fold(self.h_air, f64::min)
    }
}

/// Cavity height (mm).
pub(crate) fn cavity_height(shape: &CavityShape) -> f64 {
    match *shape {
        CavityShape::Box { size } => size[2],
        CavityShape::Cylinder { height, .. } => height,
    }
}

/// Parameters 0 = t0 < t1 < … < tN = 1 dividing a curve of length `len` (parametrised by
/// t ∈ [0, 1]) so that each piece is no longer than the local size `h(t)`: N is the
/// smallest count with N ≥ ∫ ds/h, and the points sit at equal steps of that integral,
/// which grades the pieces with h.
pub(crate) fn graded_params(len: f64, h_floor: f64, h: impl Fn(f64) -> f64) -> Vec<f64> {
    graded_params_with(len, h_floor, h, false)
}

/// As [`graded_params`], but N is the integral rounded to the nearest count (at least 1),
/// so pieces average h(t) instead of staying at or below it: used where h is a mean
/// target (layer thickness) rather than a bound (outline pieces on curved walls).
pub(crate) fn graded_params_nearest(len: f64, h_floor: f64, h: impl Fn(f64) -> f64) -> Vec<f64> {
    graded_params_with(len, h_floor, h, true)
}

fn graded_params_with(len: f64, h_floor: f64, h: impl Fn(f64) -> f64, nearest: bool) -> Vec<f64> {
    if len <= 0.0 {
        return vec![0.0, 1.0];
    }
    // Sample finely enough that h cannot change much between samples (it is Lipschitz).
    let m = ((len / h_floor) * 4.0).ceil().clamp(16.0, 200_000.0) as usize;
    let mut cum = Vec::with_capacity(m + 1);
    cum.push(0.0);
    let mut prev = 1.0 / h(0.0);
    for k in 1..=m {
        let t = k as f64 / m as f64;
        let cur = 1.0 / h(t);
        let last = cum[k - 1];
        // Using the larger integrand of the interval keeps every piece ≤ h.
        cum.push(last + prev.max(cur) * len / m as f64);
        prev = cur;
    }
    let total = cum[m];
    let n = if nearest {
        total.round().max(1.0) as usize
    } else {
        (total - 1e-9).ceil().max(1.0) as usize
    };
    let mut out = Vec::with_capacity(n + 1);
    out.push(0.0);
    let mut k = 0;
    for j in 1..n {
        let target = total * j as f64 / n as f64;
        while cum[k + 1] < target {
            k += 1;
        }
        let frac = (target - cum[k]) / (cum[k + 1] - cum[k]);
        out.push((k as f64 + frac) / m as f64);
    }
    out.push(1.0);
    out
}
