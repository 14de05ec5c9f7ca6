//! Element exactness on single tetrahedra (seeded random shapes).
//!
//! * The order-2 first-kind Nédélec space contains all linear vector fields (its
//!   polynomial space is P1³ ⊕ {p ∈ P̃2³: p·x = 0}; Nédélec, Numer. Math. 35 (1980) 315,
//!   from memory), so the L2 projection of u = Σ λi u_i returns u exactly.
//! * The order-1 (Whitney) space contains the constants; it does not contain general
//!   linear fields (checked too, so the test can fail).
//! * The curl of the gradient functions ∇(λiλj) vanishes (curl ∇ = 0).
//!
//! Tolerances: round-off of a 20×20 solve on a reasonably shaped tetrahedron
//! (1e-10 relative; common practice, no source).

use antinode_solver::fem::element::{Entity, NedelecTet};
use antinode_solver::fem::tet_geometry::TetGeometry;
use antinode_solver::NedelecOrder;
use faer::linalg::solvers::Solve;
use faer::{Mat, Side};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

fn random_tet(rng: &mut ChaCha8Rng) -> [[f64; 3]; 4] {
    loop {
        let x: [[f64; 3]; 4] =
            std::array::from_fn(|_| std::array::from_fn(|_| rng.gen_range(-1.0..1.0)));
        let g = TetGeometry::new(x);
        // Keep reasonably shaped tetrahedra (volume vs longest edge³).
        let mut lmax: f64 = 0.0;
        for i in 0..4 {
            for j in 0..i {
                let d: f64 = (0..3)
                    .map(|k| (x[i][k] - x[j][k]).powi(2))
                    .sum::<f64>()
                    .sqrt();
                lmax = lmax.max(d);
            }
        }
        if g.volume > 0.02 * lmax.powi(3) {
            return x;
        }
    }
}

fn random_bary(rng: &mut ChaCha8Rng) -> [f64; 4] {
    let mut l: [f64; 4] = std::array::from_fn(|_| rng.gen_range(0.0..1.0));
    let s: f64 = l.iter().sum();
    l.iter_mut().for_each(|v| *v /= s);
    l
}

/// Largest error of the L2 projection of u = Σ λi u_i, sampled at random points,
/// relative to max |u_i|.
fn projection_error(
    order: NedelecOrder,
    x: [[f64; 3]; 4],
    u: [[f64; 3]; 4],
    rng: &mut ChaCha8Rng,
) -> f64 {
    let el = NedelecTet::new(order);
    let geo = TetGeometry::new(x);
    let n = el.len();
    let mut kc = vec![0.0; n * n];
    let mut mc = vec![0.0; n * n];
    el.matrices(&geo, &mut kc, &mut mc);
    let m = Mat::<f64>::from_fn(n, n, |i, j| mc[i * n + j]);
    let mut b = vec![0.0; n];
    el.load_linear(&geo, u, &mut b);
    let mut rhs = Mat::<f64>::from_fn(n, 1, |i, _| b[i]);
    let llt = m
        .llt(Side::Lower)
        .expect("element mass matrix positive definite");
    llt.solve_in_place(rhs.as_mut());
    let umax = u.iter().flatten().fold(0.0f64, |s, v| s.max(v.abs()));
    let mut phi = vec![[0.0; 3]; n];
    let mut worst: f64 = 0.0;
    for _ in 0..50 {
        let l = random_bary(rng);
        el.eval(&geo, l, &mut phi);
        for d in 0..3 {
            let exact: f64 = (0..4).map(|i| l[i] * u[i][d]).sum();
            let approx: f64 = (0..n).map(|a| rhs[(a, 0)] * phi[a][d]).sum();
            worst = worst.max((approx - exact).abs() / umax);
        }
    }
    worst
}

#[test]
fn order2_reproduces_linear_fields() {
    let mut rng = ChaCha8Rng::seed_from_u64(2024);
    for _ in 0..20 {
        let x = random_tet(&mut rng);
        let u: [[f64; 3]; 4] =
            std::array::from_fn(|_| std::array::from_fn(|_| rng.gen_range(-1.0..1.0)));
        let e = projection_error(NedelecOrder::Two, x, u, &mut rng);
        assert!(e < 1e-10, "order 2 projection error {e:e}");
    }
}

#[test]
fn order1_reproduces_constants_but_not_linear_fields() {
    let mut rng = ChaCha8Rng::seed_from_u64(7);
    let mut worst_linear: f64 = f64::INFINITY;
    for _ in 0..20 {
        let x = random_tet(&mut rng);
        let c: [f64; 3] = std::array::from_fn(|_| rng.gen_range(-1.0..1.0));
        let e = projection_error(NedelecOrder::One, x, [c; 4], &mut rng);
        assert!(e < 1e-10, "order 1 projection error of a constant {e:e}");
        let u: [[f64; 3]; 4] =
            std::array::from_fn(|_| std::array::from_fn(|_| rng.gen_range(-1.0..1.0)));
        worst_linear = worst_linear.min(projection_error(NedelecOrder::One, x, u, &mut rng));
    }
    println!("order 1: smallest projection error of a random linear field {worst_linear:.2e}");
    // A random linear field is not in the Whitney space: its projection error is O(1).
    assert!(worst_linear > 1e-3);
}

#[test]
fn gradient_functions_are_curl_free() {
    let mut rng = ChaCha8Rng::seed_from_u64(11);
    let el = NedelecTet::new(NedelecOrder::Two);
    let mut curl = vec![[0.0; 3]; el.len()];
    let mut checked = 0;
    for _ in 0..10 {
        let geo = TetGeometry::new(random_tet(&mut rng));
        // Scale of a curl of a function of the element: |∇λ|².
        let scale = geo
            .gram
            .iter()
            .map(|r| r.iter().fold(0.0f64, |s, v| s.max(v.abs())))
            .fold(0.0, f64::max);
        for _ in 0..10 {
            el.eval_curl(&geo, random_bary(&mut rng), &mut curl);
            for (a, c) in curl.iter().enumerate() {
                let norm = (c[0] * c[0] + c[1] * c[1] + c[2] * c[2]).sqrt();
                match el.entity(a) {
                    Entity::Edge { kind: 1, .. } => {
                        assert!(
                            norm <= 1e-12 * scale,
                            "curl of gradient function {a}: {norm:e}"
                        );
                        checked += 1;
                    }
                    // Whitney functions have curl 2 ∇λi × ∇λj ≠ 0: the check can fail.
                    Entity::Edge { kind: 0, .. } => assert!(norm > 1e-6 * scale),
                    _ => {}
                }
            }
        }
    }
    assert_eq!(checked, 600);
}
