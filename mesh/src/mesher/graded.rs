//! The graded 3-D mesh: fine only in and near the loads, coarse in the rest of the air.
//!
//! Algorithm: mesh the geometry with the extruded mesher at the air's element size
//! everywhere (every load outline and load top/bottom is still a mesh entity, so
//! interfaces and port rectangles are unions of faces), then refine by conforming
//! longest-edge bisection ([`crate::refine`], Rivara 1984) in rounds: each round bisects
//! every tetrahedron whose mean edge exceeds the size field's lowest value over it, until
//! none does. The size field is
//!
//! h(x) = min(h_air, min_i(h_i + GRADING · d(x, load_i)))
//!
//! with h_i from the per-wavelength rule ([`super::element_sizes`]) and d the 3-D
//! distance to load i, so sizes grow away from a load by at most GRADING per unit
//! distance and reach the air size (h_air − h_i)/GRADING away. A tetrahedron's target is
//! h at its centroid. The mean edge is the measure because the extruded mesher aims at a
//! mean edge of about h too (`mesh/tests/mesher.rs`), so both methods mean the same by
//! "element size h", and a mean is a property of the whole tet, so it is compared with
//! the field where the tet is, its centroid. Taking the smallest h over the vertices
//! instead (the earlier rule) lowers the target of a tet of mean edge e by up to
//! GRADING·0.6e (a vertex lies about 0.6 e from the centroid), a bias that compounds
//! through the shell: on geometries/oven_1l.toml it left the air 2–3 times finer than
//! the field at 5–40 mm from the water (mean edge 0.63 h) and 279k air tets, against
//! 167k with the centroid (measured; `heavy_oven_1l_figures` in
//! `mesh/tests/graded_curved.rs` prints the shell figures);
//! inside a load, where h is constant, the two rules agree. A bisection halves a tet's
//! volume, so its mean edge falls by about 2^(−1/3); a tet is bisected only while its
//! mean edge exceeds [`OVERSHOOT`]·h = 2^(1/3)·h, i.e. while its children would still
//! be about h or larger. Bisecting whenever the mean edge exceeds h would leave mean
//! edges of 0.7–0.9 h (the conformity closure cuts some tets further), about twice the
//! tets the size asks for; with 2^(1/3) the mean edge inside a fine load averages
//! 0.99 h (measured, `mesh/tests/graded.rs`), the extruded mesher's 1.07 h on the same
//! load.
//!
//! Grading ratio: GRADING = 0.5 ([`super::GRADING`]) lets neighbouring sizes differ by
//! a factor of about 1.5; bisection itself cannot grade faster than its closure allows
//! (a bisected tet forces its neighbours on the cut edge to be cut), so a steeper field
//! would buy little (GRADING = 1 removed 7 % of the oven's air tets, measured) while
//! giving up the smooth size change the approximation relies on.
//!
//! The coarse start decides the air far from the loads: there nothing is refined, and
//! the tets are the extruded mesher's at h_air.
//!
//! Cylinder sides (cavity wall, cylindrical loads) are followed: the start's circles
//! keep the chord-deviation bound [`super::MIN_CIRCLE_SIDES_GRADED`] (sagitta ≤ 1/30 of
//! the chord), new vertices on their faces go onto the true surface
//! ([`crate::refine::surface`]), and projections that would leave a flat or inverted
//! tet are undone after refinement. Each bisection of a side chord halves it and its
//! sagitta/chord ratio, so the bound holds at every later size and a cylinder's volume
//! deficit falls like the square of the side edge length (the mesh's own rate).

use super::sizing::{RegionSize, SizeField};
use super::{estimate, extruded, CurvedMesh, MesherError, MAX_TETS};
use crate::geometry::Geometry;
use crate::refine::surface::{tracked_faces, undo_flat_projections};
use crate::refine::{curved_surfaces, surface_faces, Bisection};
use crate::tet_mesh::{dot, sub};
use rayon::prelude::*;
use std::collections::HashMap;

/// Refinement rounds before giving up: each round bisects every tet that is too large at
/// least once, and about three bisections halve all edges of a tet, so 3·log2(h_air/h_min)
/// rounds (≈ 30 for a 1000:1 size ratio) suffice by far.
const MAX_ROUNDS: usize = 200;

/// How far a tet's mean edge may exceed the size field before it is bisected: 2^(1/3),
/// one bisection's mean-edge step (see the module doc).
pub const OVERSHOOT: f64 = 1.259_921_049_894_873;

/// mm per m.
const PER_M: f64 = 1e3;

/// Meshes `geom` graded in 3-D (see the module doc).
pub(super) fn graded(geom: &Geometry, sizes: &[RegionSize]) -> Result<CurvedMesh, MesherError> {
    let coarse_sizes: Vec<RegionSize> = sizes
        .iter()
        .map(|s| RegionSize {
            size_mm: sizes[0].size_mm,
            ..s.clone()
        })
        .collect();
    // The starting mesh is refused as the extruded one would be, before any allocation.
    estimate(geom, &coarse_sizes)?;
    let field = SizeField::new(geom, sizes)?;
    let start = extruded(geom, &field.coarse())?;
    let regions = start.regions.clone();
    let surfaces = curved_surfaces(geom);
    let mut b = Bisection::new(&start);
    for (f, s) in surface_faces(&start, &surfaces) {
        b.mark_face(f, s);
    }
    drop(start);
    // New vertex → the surface it was projected onto.
    let mut projected: HashMap<u32, u32> = HashMap::new();
    let mut done = false;
    for _ in 0..MAX_ROUNDS {
        let marked = too_large(&b, &field);
        if marked.is_empty() {
            done = true;
            break;
        }
        let mut place =
            |b: &Bisection, edge: [u32; 2], mid: [f64; 3]| match b.marked_edges.get(&edge) {
                Some(&s) => {
                    projected.insert(b.nodes.len() as u32, s);
                    surfaces[s as usize].project(mid)
                }
                None => mid,
            };
        b.refine(&marked, MAX_TETS, &mut place)
            .ok_or(MesherError::TooLarge {
                what: "tetrahedra",
                limit: MAX_TETS,
            })?;
    }
    if !done {
        return Err(MesherError::Settings(format!(
            "refinement did not meet the element sizes in {MAX_ROUNDS} rounds"
        )));
    }
    let undone = undo_flat_projections(&mut b, &surfaces, &mut projected);
    let surface_faces = tracked_faces(&b);
    Ok(CurvedMesh {
        mesh: b.into_mesh(regions),
        surfaces,
        surface_faces,
        projections_undone: undone,
    })
}

/// Mean edge (mm) of tetrahedron `t` and the size field at its centroid (mm).
pub(crate) fn size_and_target(b: &Bisection, field: &SizeField, t: usize) -> (f64, f64) {
    let p = b.tets[t].map(|v| b.nodes[v as usize].map(|x| x * PER_M));
    let c: [f64; 3] = std::array::from_fn(|k| 0.25 * (p[0][k] + p[1][k] + p[2][k] + p[3][k]));
    let len = |a: [f64; 3], q: [f64; 3]| dot(sub(a, q), sub(a, q)).sqrt();
    let mut sum = 0.0;
    for i in 0..4 {
        for j in i + 1..4 {
            sum += len(p[i], p[j]);
        }
    }
    (sum / 6.0, field.h_3d_ball(c, 0.0))
}

/// The tetrahedra whose mean edge exceeds [`OVERSHOOT`] times the size field at their
/// centroid, where that is below the air's size (the coarse start is accepted as it is elsewhere).
fn too_large(b: &Bisection, field: &SizeField) -> Vec<u32> {
    (0..b.tets.len())
        .into_par_iter()
        .filter(|&t| {
            let (mean, h) = size_and_target(b, field, t);
            h < field.h_air && mean > OVERSHOOT * h
        })
        .map(|t| t as u32)
        .collect()
}
