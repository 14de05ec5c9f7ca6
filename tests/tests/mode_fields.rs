//! Field output of a mode against the analytic TE101 field of a PEC box, orders 2 and 3.
//!
//! Box a × b × d = 200 × 100 × 150 mm: TE101 (f = c/2 √(1/a² + 1/d²) ≈ 1.249 GHz, the
//! lowest mode) has E = E0 sin(πx/a) sin(πz/d) ŷ (Pozar, Microwave Engineering, 4th ed.,
//! §6.3, eq. 6.42a). Scaled to 1 J stored, W = (ε0/2)∫|E|² = ε0 E0² abd/8 gives
//! E0 = √(8/(ε0 abd)). With e^{jωt}, H = ∇×E/(−jωμ0), so a real E has
//! Im H = ∇×E/(ωμ0) = (E0/ωμ0)(−(π/d) sin(πx/a) cos(πz/d), 0, (π/a) cos(πx/a) sin(πz/d)).
//!
//! Vertex E (volume-weighted average of the cells' values at the vertex) and cell-centre H
//! of the order-p element converge like h^p (the order-p first-kind space holds the full
//! polynomials of degree p − 1 and so do their curls; Monk, Finite Element Methods for
//! Maxwell's Equations, 2003, ch. 5–6; from memory). The test asserts an observed rate of
//! at least p − 0.5 between h and h/2 for both (room for the pre-asymptotic regime: common
//! practice, no source) and prints the errors and rates. The sign of the computed mode is
//! arbitrary and is fixed from ∫ E·E_exact.

use antinode_mesh::TetMesh;
use antinode_solver::constants::{EPS0, MU0};
use antinode_solver::{NedelecOrder, RegionMaterial};
use antinode_tests::*;
use std::f64::consts::PI;

const SIZE: [f64; 3] = [0.2, 0.1, 0.15];

fn centroid(mesh: &TetMesh, t: usize) -> [f64; 3] {
    let v = mesh.tets[t].map(|i| mesh.nodes[i as usize]);
    std::array::from_fn(|c| 0.25 * (v[0][c] + v[1][c] + v[2][c] + v[3][c]))
}

/// (max vertex E error / E0, max cell H error / H0) on the grid with `n` cells.
fn errors(order: NedelecOrder, n: [usize; 3]) -> (f64, f64) {
    let [a, b, d] = SIZE;
    let mesh = box_mesh(SIZE, n);
    let f = 0.5 * antinode_solver::constants::C0 * (1.0 / (a * a) + 1.0 / (d * d)).sqrt();
    let k2 = (PI / a).powi(2) + (PI / d).powi(2);
    let (set, _) = solve_nearest(&mesh, &[RegionMaterial::VACUUM], order, k2, 1);
    let mode = &set.modes[0];
    assert!(
        (mode.frequency_hz / f - 1.0).abs() < 1e-2,
        "not TE101: {}",
        mode.frequency_hz
    );
    let fields = mode.fields(&set.space, &[RegionMaterial::VACUUM]);
    let e0 = (8.0 / (EPS0 * a * b * d)).sqrt();
    let omega = 2.0 * PI * f;
    let h0 = e0 * PI / (omega * MU0 * a.min(d));
    let e_exact = |x: [f64; 3]| [0.0, e0 * (PI * x[0] / a).sin() * (PI * x[2] / d).sin(), 0.0];
    let h_exact = |x: [f64; 3]| {
        let s = e0 / (omega * MU0);
        [
            -s * (PI / d) * (PI * x[0] / a).sin() * (PI * x[2] / d).cos(),
            0.0,
            s * (PI / a) * (PI * x[0] / a).cos() * (PI * x[2] / d).sin(),
        ]
    };
    let dot: f64 = mesh
        .nodes
        .iter()
        .zip(&fields.vertex_e_real)
        .map(|(x, e)| e[1] * e_exact(*x)[1])
        .sum();
    let sign = dot.signum();
    let diff = |u: [f64; 3], v: [f64; 3]| {
        (0..3)
            .map(|c| (sign * u[c] - v[c]).powi(2))
            .sum::<f64>()
            .sqrt()
    };
    let e_err = mesh
        .nodes
        .iter()
        .zip(&fields.vertex_e_real)
        .map(|(x, e)| diff(*e, e_exact(*x)))
        .fold(0.0, f64::max)
        / e0;
    let h_err = (0..mesh.tets.len())
        .map(|t| diff(fields.cell_h_imag[t], h_exact(centroid(&mesh, t))))
        .fold(0.0, f64::max)
        / h0;
    (e_err, h_err)
}

fn rates(order: NedelecOrder, coarse: [usize; 3]) {
    let fine = coarse.map(|x| 2 * x);
    let (e1, h1) = errors(order, coarse);
    let (e2, h2) = errors(order, fine);
    let (re, rh) = ((e1 / e2).log2(), (h1 / h2).log2());
    let p = f64::from(order.as_int());
    println!(
        "TE101 fields, order {p}: grid {coarse:?} → {fine:?}: vertex E error {e1:.2e} → {e2:.2e} \
         (rate {re:.2}), cell H error {h1:.2e} → {h2:.2e} (rate {rh:.2})"
    );
    assert!(re >= p - 0.5, "vertex E rate {re:.2} below {}", p - 0.5);
    assert!(rh >= p - 0.5, "cell H rate {rh:.2} below {}", p - 0.5);
}

#[test]
fn te101_fields_order2() {
    rates(NedelecOrder::Two, [4, 2, 3]);
}

#[test]
fn te101_fields_order3() {
    rates(NedelecOrder::Three, [4, 2, 3]);
}
