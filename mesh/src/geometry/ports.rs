//! Checks between ports and against the band: no two apertures share wall area, and
//! every port can carry its TE10 wave somewhere in the band.
//!
//! Overlap: two ports overlap when they sit on the same wall and their rectangles share
//! area beyond the geometric tolerance (touching edges are allowed). On a box wall and on
//! a cylinder's top or bottom the rectangles are compared in the wall's in-plane
//! coordinates; on a cylinder's side the aperture spans the azimuth
//! φ = angle_deg + u/R ± (extent along the arc)/(2R), compared modulo 360° (so the same
//! port written at 0° and at 360° overlaps itself), and the same z extent.
//!
//! Cutoff: a rectangular guide of broad side a, filled with air, carries the TE10 wave
//! only above f_c = c/(2a) (Pozar, Microwave Engineering, 4th ed., §3.3, eq. 3.84 with
//! m = 1, n = 0). A port whose cutoff lies above the whole band can take no power at any
//! frequency of interest (every external Q infinite), so it is refused.

use super::*;
use crate::constants::C0;

/// TE10 cutoff frequency of a port's guide (GHz), from its broad side (mm).
pub fn te10_cutoff_ghz(width_mm: f64) -> f64 {
    // c [m/s] / (2 a [mm] 1e-3) / 1e9 = c / (2 a) * 1e-6
    C0 / (2.0 * width_mm) * 1e-6
}

/// `Some(description)` when two ports share aperture area beyond `tol` (mm).
pub fn ports_overlap(a: &Port, b: &Port, cavity: &CavityShape, tol: f64) -> Option<String> {
    let rect = |p: &Port| {
        let [du, dv] = p.in_plane_extent();
        let [cu, cv] = p.center;
        (
            [cu - du / 2.0, cu + du / 2.0],
            [cv - dv / 2.0, cv + dv / 2.0],
        )
    };
    let ((au, av), (bu, bv)) = (rect(a), rect(b));
    let overlap = |x: [f64; 2], y: [f64; 2]| x[1].min(y[1]) - x[0].max(y[0]);
    match (a.wall, b.wall) {
        (PortWall::Side { angle_deg: pa }, PortWall::Side { angle_deg: pb }) => {
            let CavityShape::Cylinder { radius, .. } = *cavity else {
                return None;
            };
            let dz = overlap(av, bv);
            if dz <= tol {
                return None;
            }
            // Azimuth of each centre and half-span, in degrees.
            let centre = |angle: f64, u: f64| angle + (u / radius).to_degrees();
            let half = |p: &Port| (p.in_plane_extent()[0] / (2.0 * radius)).to_degrees();
            let (ca, cb) = (centre(pa, a.center[0]), centre(pb, b.center[0]));
            let gap = (ca - cb).rem_euclid(360.0);
            let gap = gap.min(360.0 - gap);
            let reach = half(a) + half(b);
            let tol_deg = (tol / radius).to_degrees();
            (gap < reach - tol_deg).then(|| {
                format!(
                    "on the side wall their centres are {gap:.3}° apart in azimuth (at \
                     {:.3}° and {:.3}°, taken modulo 360°), less than their half-spans \
                     sum {reach:.3}°, and both cover z = {:.3} .. {:.3} mm",
                    ca.rem_euclid(360.0),
                    cb.rem_euclid(360.0),
                    av[0].max(bv[0]),
                    av[1].min(bv[1])
                )
            })
        }
        (wa, wb) if wa == wb => {
            let (du, dv) = (overlap(au, bu), overlap(av, bv));
            (du > tol && dv > tol).then(|| {
                format!(
                    "both sit on wall \"{}\" and their apertures share {du:.3} x {dv:.3} mm \
                     (u = {:.3} .. {:.3}, v = {:.3} .. {:.3} mm)",
                    wa.label(),
                    au[0].max(bu[0]),
                    au[1].min(bu[1]),
                    av[0].max(bv[0]),
                    av[1].min(bv[1])
                )
            })
        }
        _ => None,
    }
}

/// `Some(reason)` when the port's TE10 cutoff lies at or above every frequency of the
/// solve (the band's upper edge, or the target when no band is given).
pub fn below_cutoff(port: &Port, solve: &SolveSettings) -> Option<String> {
    let fc = te10_cutoff_ghz(port.width);
    let top = solve
        .band
        .map_or(solve.target, |[_, hi]| hi.max(solve.target));
    (fc >= top).then(|| {
        format!(
            "its TE10 cutoff c/(2 width) = {fc:.4} GHz lies above {} {top} GHz, so the port \
             carries no wave there (every external Q would be infinite); widen the broad \
             side above {:.2} mm (WR-340: 86.36 mm, cutoff 1.736 GHz)",
            if solve.band.is_some() {
                "the whole band, up to"
            } else {
                "the target"
            },
            C0 / (2.0 * top) * 1e-6
        )
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn wr340_cutoff() {
        // Pozar 4th ed., §3.3: WR-340 (a = 86.36 mm) has f_c10 = 1.736 GHz
        // (c/(2a) = 299.792458/(2 * 86.36) GHz).
        assert!((te10_cutoff_ghz(86.36) - 1.7357).abs() < 1e-4);
    }
}
