//! The heating density sampled at points (the turntable's load-frame grid samples) against
//! the analytic TE101 field of a PEC box, order 2.
//!
//! Box a × b × d = 200 × 100 × 150 mm: TE101 has E = E0 sin(πx/a) sin(πz/d) ŷ (Pozar,
//! Microwave Engineering, 4th ed., §6.3, eq. 6.42a). With a fictitious loss ε″ = 1 filling
//! the box, q(x) = (ωε0/2)|E(x)|² exactly; E0 is taken from the computed field's own
//! total ∫ q dV = (ωε0/2) E0² abd/4 (∫ sin²(πx/a) sin²(πz/d) dV = abd/4; the total is
//! the cell averages times the cell volumes, exact element integrals), so the check does
//! not depend on how the mode is scaled.
//!
//! At points spread through the box (the Halton probe points of `post::probes`) the
//! point evaluation (`driven::response::point_heating`: the element functions of the
//! tetrahedron holding the point) and the cell average of that tetrahedron (the former
//! sampling) are compared with the exact q. The cell average differs from q(x) by the
//! gradient times the distance to the centroid, O(h); the point value has the element's
//! O(h^p) error (the order-p first-kind space holds the full polynomials of degree
//! p − 1; Monk, Finite Element Methods for Maxwell's Equations, 2003, ch. 5–6, from
//! memory). Asserted: the point error's observed rate between h and h/2 is at least
//! p − 0.5 (room for the pre-asymptotic regime, as in `mode_fields.rs`: common practice,
//! no source), and the point error is below the cell-average error on both meshes.

use antinode_solver::constants::EPS0;
use antinode_solver::driven::response::{cell_heating, point_heating};
use antinode_solver::post::probes::{locate, probe_fractions, probe_points};
use antinode_solver::{NedelecOrder, RegionMaterial};
use antinode_tests::*;
use std::f64::consts::PI;

const SIZE: [f64; 3] = [0.2, 0.1, 0.15];

/// (max point error, max cell-average error), both over max q.
fn errors(n: [usize; 3]) -> (f64, f64) {
    let [a, b, d] = SIZE;
    let mesh = box_mesh(SIZE, n);
    let k2 = (PI / a).powi(2) + (PI / d).powi(2);
    let (set, _) = solve_nearest(&mesh, &[RegionMaterial::VACUUM], NedelecOrder::Two, k2, 1);
    let mode = &set.modes[0];
    let f = 0.5 * antinode_solver::constants::C0 * (1.0 / (a * a) + 1.0 / (d * d)).sqrt();
    assert!(
        (mode.frequency_hz / f - 1.0).abs() < 1e-2,
        "not TE101: {}",
        mode.frequency_hz
    );
    let lossy = [RegionMaterial {
        eps_real: 1.0,
        eps_imag: 1.0,
        mu_r: 1.0,
    }];
    let omega = 2.0 * PI * f;
    let space = &set.space;
    let zeros = vec![0.0; mode.coefficients.len()];
    let cells = cell_heating(space, omega, &lossy, &mode.coefficients, &zeros);
    let total: f64 = (0..space.n_tets())
        .map(|t| cells[t] * space.tet_geometry(t).volume)
        .sum();
    let e0_sq = total / (0.5 * omega * EPS0) * 4.0 / (a * b * d);
    let q_max = 0.5 * omega * EPS0 * e0_sq;
    let exact = |x: [f64; 3]| q_max * ((PI * x[0] / a).sin() * (PI * x[2] / d).sin()).powi(2);
    let points = probe_points(&probe_fractions(400), [0.0; 3], SIZE);
    let located = locate(space, &points);
    let q = point_heating(space, omega, &lossy, &mode.coefficients, &[], &located);
    let (mut point_err, mut cell_err) = (0.0f64, 0.0f64);
    for ((x, l), qp) in points.iter().zip(&located).zip(&q) {
        let (t, _) = l.expect("probe points lie in the box");
        let qx = exact(*x);
        point_err = point_err.max((qp.expect("located") - qx).abs());
        cell_err = cell_err.max((cells[t] - qx).abs());
    }
    (point_err / q_max, cell_err / q_max)
}

#[test]
fn point_samples_follow_the_analytic_te101_heating() {
    let coarse = [4, 2, 3];
    let fine = coarse.map(|x| 2 * x);
    let (p1, c1) = errors(coarse);
    let (p2, c2) = errors(fine);
    let (rp, rc) = ((p1 / p2).log2(), (c1 / c2).log2());
    println!(
        "TE101 heating at 400 points, order 2: grid {coarse:?} → {fine:?}: point error \
         {p1:.2e} → {p2:.2e} (rate {rp:.2}), cell-average error {c1:.2e} → {c2:.2e} (rate {rc:.2})"
    );
    assert!(rp >= 1.5, "point rate {rp:.2} below 1.5");
    assert!(p1 < c1 && p2 < c2, "point {p1} {p2}, cell {c1} {c2}");
}
