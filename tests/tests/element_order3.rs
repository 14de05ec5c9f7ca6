//! The order-3 Nédélec element (45 functions) on single tetrahedra and across a shared
//! face (seeded random shapes).
//!
//! * The first-kind space of degree 3 is P2³ ⊕ {p ∈ P̃3³ : p·x = 0}, dimension 45
//!   (Nédélec, Numer. Math. 35 (1980) 315; Monk, Finite Element Methods for Maxwell's
//!   Equations, 2003, §5.5 — from memory). So: the 45 functions are independent, every
//!   quadratic vector field and the gradient of every cubic scalar is fitted exactly (with
//!   the curl of the fit equal to the analytic curl), a general cubic field is not.
//! * The kernel of the curl in the space is ∇P3: dimension dim P3 − 1 = 20 − 1 = 19
//!   (order 2: 10 − 1 = 9, order 1: 4 − 1 = 3; the exact-sequence property of the
//!   Nédélec family, same sources).
//! * The exact element matrices agree with a Grundmann–Möller quadrature of degree 7
//!   (Grundmann & Möller, SIAM J. Numer. Anal. 15 (1978) 282, from memory; the rule is
//!   itself checked on monomials here) of the pointwise functions, and the pointwise curl
//!   agrees with central differences of the pointwise values.
//! * Two tetrahedra sharing a face, under all 120 global numberings of their five
//!   vertices: the tangential part of E = Σ x_a φ_a agrees on the face from both sides
//!   (H(curl) conformity), while evaluating with the unsorted local order breaks it (so
//!   the check can fail).
//!
//! Tolerances: round-off of 45×45 dense problems on reasonably shaped tetrahedra, 1e-9
//! relative (common practice, no source), unless stated beside a check.

use antinode_mesh::{RegionInfo, TetMesh};
use antinode_solver::fem::element::NedelecTet;
use antinode_solver::fem::tet_geometry::TetGeometry;
use antinode_solver::fem::Space;
use antinode_solver::NedelecOrder;
use faer::linalg::solvers::SolveLstsq;
use faer::{Mat, Side};
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;

fn random_tet(rng: &mut ChaCha8Rng) -> [[f64; 3]; 4] {
    loop {
        let x: [[f64; 3]; 4] =
            std::array::from_fn(|_| std::array::from_fn(|_| rng.gen_range(-1.0..1.0)));
        let g = TetGeometry::new(x);
        let mut lmax: f64 = 0.0;
        for i in 0..4 {
            for j in 0..i {
                let d: f64 = (0..3).map(|k| (x[i][k] - x[j][k]).powi(2)).sum();
                lmax = lmax.max(d.sqrt());
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

fn point(x: &[[f64; 3]; 4], l: [f64; 4]) -> [f64; 3] {
    std::array::from_fn(|d| (0..4).map(|i| l[i] * x[i][d]).sum())
}

/// A vector field given with its curl: (value, curl) at a point.
type Field<'a> = &'a dyn Fn([f64; 3]) -> ([f64; 3], [f64; 3]);

/// Least-squares fit of `u` by the element's functions at 150 random points; returns the
/// largest value error and the largest curl error of the fit at 50 further points,
/// relative to the largest |u| and |curl u| sampled.
fn fit_errors(order: NedelecOrder, x: [[f64; 3]; 4], u: Field, rng: &mut ChaCha8Rng) -> (f64, f64) {
    let el = NedelecTet::new(order);
    let geo = TetGeometry::new(x);
    let n = el.len();
    let mut phi = vec![[0.0; 3]; n];
    let mut curl = vec![[0.0; 3]; n];
    let pts: Vec<[f64; 4]> = (0..150).map(|_| random_bary(rng)).collect();
    let mut a = Mat::<f64>::zeros(3 * pts.len(), n);
    let mut b = Mat::<f64>::zeros(3 * pts.len(), 1);
    for (p, &l) in pts.iter().enumerate() {
        el.eval(&geo, l, &mut phi);
        let (v, _) = u(point(&x, l));
        for d in 0..3 {
            for c in 0..n {
                a[(3 * p + d, c)] = phi[c][d];
            }
            b[(3 * p + d, 0)] = v[d];
        }
    }
    let coef = a.qr().solve_lstsq(&b);
    let (mut ev, mut ec, mut umax, mut cmax) = (0.0f64, 0.0f64, 0.0f64, 0.0f64);
    for _ in 0..50 {
        let l = random_bary(rng);
        el.eval(&geo, l, &mut phi);
        el.eval_curl(&geo, l, &mut curl);
        let (v, c) = u(point(&x, l));
        for d in 0..3 {
            let fv: f64 = (0..n).map(|k| coef[(k, 0)] * phi[k][d]).sum();
            let fc: f64 = (0..n).map(|k| coef[(k, 0)] * curl[k][d]).sum();
            ev = ev.max((fv - v[d]).abs());
            ec = ec.max((fc - c[d]).abs());
            umax = umax.max(v[d].abs());
            cmax = cmax.max(c[d].abs());
        }
    }
    (ev / umax, if cmax > 0.0 { ec / cmax } else { ec })
}

/// A random quadratic vector field u_d = Σ_{|γ|≤2} c_dγ x^γ with its exact curl.
// Index loops mirror the formula (u_d, ∂_k u_d).
#[allow(clippy::needless_range_loop)]
fn random_quadratic(rng: &mut ChaCha8Rng) -> impl Fn([f64; 3]) -> ([f64; 3], [f64; 3]) {
    // u_d = a_d + B_d·x + xᵀ Q_d x with Q_d symmetric; ∂_k u_d = B_dk + 2 (Q_d x)_k.
    let a: [f64; 3] = std::array::from_fn(|_| rng.gen_range(-1.0..1.0));
    let bm: [[f64; 3]; 3] =
        std::array::from_fn(|_| std::array::from_fn(|_| rng.gen_range(-1.0..1.0)));
    let mut q = [[[0.0; 3]; 3]; 3];
    for qd in &mut q {
        for k in 0..3 {
            for l in k..3 {
                let v = rng.gen_range(-1.0..1.0);
                qd[k][l] = v;
                qd[l][k] = v;
            }
        }
    }
    move |x: [f64; 3]| {
        let mut u = [0.0; 3];
        let mut du = [[0.0; 3]; 3]; // du[d][k] = ∂_k u_d
        for d in 0..3 {
            u[d] = a[d];
            for k in 0..3 {
                u[d] += bm[d][k] * x[k];
                du[d][k] = bm[d][k];
                for l in 0..3 {
                    u[d] += q[d][k][l] * x[k] * x[l];
                    du[d][k] += 2.0 * q[d][k][l] * x[l];
                }
            }
        }
        let c = [
            du[2][1] - du[1][2],
            du[0][2] - du[2][0],
            du[1][0] - du[0][1],
        ];
        (u, c)
    }
}

#[test]
fn order3_fits_quadratic_fields_and_their_curls() {
    let mut rng = ChaCha8Rng::seed_from_u64(303);
    let (mut wv, mut wc) = (0.0f64, 0.0f64);
    for _ in 0..10 {
        let x = random_tet(&mut rng);
        let u = random_quadratic(&mut rng);
        let (ev, ec) = fit_errors(NedelecOrder::Three, x, &u, &mut rng);
        wv = wv.max(ev);
        wc = wc.max(ec);
    }
    println!("order 3, random quadratic fields: worst value error {wv:.2e}, curl {wc:.2e}");
    assert!(wv < 1e-9 && wc < 1e-9, "value {wv:e}, curl {wc:e}");
    // Order 2 does not hold general quadratic fields (the check can fail).
    let x = random_tet(&mut rng);
    let u = random_quadratic(&mut rng);
    let (e2, _) = fit_errors(NedelecOrder::Two, x, &u, &mut rng);
    println!("order 2, random quadratic field: value error {e2:.2e}");
    assert!(e2 > 1e-3);
}

#[test]
fn order3_fits_gradients_of_cubics_but_not_general_cubics() {
    let mut rng = ChaCha8Rng::seed_from_u64(304);
    let mut worst = 0.0f64;
    let mut worst_curl = 0.0f64;
    let mut smallest_cubic = f64::INFINITY;
    for _ in 0..10 {
        let x = random_tet(&mut rng);
        // φ = Σ c_klm x^k y^l z^m over k + l + m ≤ 3, gradient by hand.
        let exps: Vec<[i32; 3]> = (0..4)
            .flat_map(|k| (0..4).flat_map(move |l| (0..4).map(move |m| [k, l, m])))
            .filter(|e| e.iter().sum::<i32>() <= 3)
            .collect();
        assert_eq!(exps.len(), 20); // dim P3
        let c: Vec<f64> = exps.iter().map(|_| rng.gen_range(-1.0..1.0)).collect();
        let grad = |p: [f64; 3]| {
            let mut g = [0.0; 3];
            for (e, ce) in exps.iter().zip(&c) {
                for d in 0..3 {
                    if e[d] == 0 {
                        continue;
                    }
                    let mut t = ce * e[d] as f64;
                    for k in 0..3 {
                        let pw = if k == d { e[k] - 1 } else { e[k] };
                        t *= p[k].powi(pw);
                    }
                    g[d] += t;
                }
            }
            (g, [0.0; 3])
        };
        let (ev, ec) = fit_errors(NedelecOrder::Three, x, &grad, &mut rng);
        worst = worst.max(ev);
        worst_curl = worst_curl.max(ec);
        // u = (y³, z³, x³) is cubic with p·x ≠ 0 in general: not in the space.
        let cubic = |p: [f64; 3]| {
            let u = [p[1].powi(3), p[2].powi(3), p[0].powi(3)];
            let cu = [-3.0 * p[2] * p[2], -3.0 * p[0] * p[0], -3.0 * p[1] * p[1]];
            (u, cu)
        };
        smallest_cubic = smallest_cubic.min(fit_errors(NedelecOrder::Three, x, &cubic, &mut rng).0);
    }
    println!(
        "order 3: ∇(cubic) fit error {worst:.2e}, curl of the fit {worst_curl:.2e} (absolute, \
         |∇φ| ~ 1); (y³, z³, x³) smallest fit error {smallest_cubic:.2e}"
    );
    assert!(
        worst < 1e-9 && worst_curl < 1e-8,
        "{worst:e} {worst_curl:e}"
    );
    assert!(smallest_cubic > 1e-3);
}

#[test]
fn curl_kernel_dimension_is_dim_pp_minus_one() {
    let mut rng = ChaCha8Rng::seed_from_u64(305);
    for (order, kernel) in [
        (NedelecOrder::One, 3),
        (NedelecOrder::Two, 9),
        (NedelecOrder::Three, 19),
    ] {
        let el = NedelecTet::new(order);
        let n = el.len();
        assert_eq!(n, order.per_tet());
        for _ in 0..5 {
            let geo = TetGeometry::new(random_tet(&mut rng));
            let mut k = vec![0.0; n * n];
            let mut m = vec![0.0; n * n];
            el.matrices(&geo, &mut k, &mut m);
            let km = Mat::<f64>::from_fn(n, n, |i, j| k[i * n + j]);
            let mm = Mat::<f64>::from_fn(n, n, |i, j| m[i * n + j]);
            let ek = km
                .self_adjoint_eigenvalues(Side::Lower)
                .expect("eigenvalues");
            let em = mm
                .self_adjoint_eigenvalues(Side::Lower)
                .expect("eigenvalues");
            let kmax = ek.iter().fold(0.0f64, |s, v| s.max(v.abs()));
            let zero = ek.iter().filter(|v| v.abs() < 1e-10 * kmax).count();
            let gap = ek
                .iter()
                .filter(|v| v.abs() >= 1e-10 * kmax)
                .fold(f64::INFINITY, |s, v| s.min(v.abs()));
            assert_eq!(zero, kernel, "order {}: eigenvalues {ek:?}", order.as_int());
            // Above the round-off threshold by a wide margin: the count is not a threshold
            // accident.
            assert!(
                gap > 1e-6 * kmax,
                "smallest non-zero curl eigenvalue {gap:e}"
            );
            // The functions are independent: mass matrix positive definite.
            assert!(
                em[0] > 1e-8 * em[n - 1],
                "mass eigenvalues {:e}..{:e}",
                em[0],
                em[n - 1]
            );
        }
    }
}

/// Grundmann–Möller rule of degree 2s + 1 on the reference tetrahedron, as
/// (barycentric point, weight relative to the volume).
fn grundmann_moller(s: usize) -> Vec<([f64; 4], f64)> {
    let (n, d) = (3i32, 2 * s as i32 + 1);
    let fact = |k: i32| (1..=k).map(f64::from).product::<f64>();
    let mut out = Vec::new();
    for i in 0..=s as i32 {
        let den = (d + n - 2 * i) as f64;
        let w = (-1f64).powi(i) * 2f64.powi(-2 * s as i32) * den.powi(d)
            / (fact(i) * fact(d + n - i))
            * fact(n); // relative to the volume 1/3!
        let m = s as i32 - i;
        for b0 in 0..=m {
            for b1 in 0..=m - b0 {
                for b2 in 0..=m - b0 - b1 {
                    let b3 = m - b0 - b1 - b2;
                    let l = [b0, b1, b2, b3].map(|b| (2 * b + 1) as f64 / den);
                    out.push((l, w));
                }
            }
        }
    }
    out
}

#[test]
fn element_matrices_match_quadrature_and_curls_match_differences() {
    let rule = grundmann_moller(3);
    // The rule integrates λ0²λ1³λ3² (degree 7) like the closed form 2!3!2!·3!/10!.
    let exact = 2.0 * 6.0 * 2.0 * 6.0 / (1..=10).map(f64::from).product::<f64>();
    let q: f64 = rule
        .iter()
        .map(|(l, w)| w * l[0].powi(2) * l[1].powi(3) * l[3].powi(2))
        .sum();
    assert!((q - exact).abs() < 1e-12 * exact, "{q} vs {exact}");
    let mut rng = ChaCha8Rng::seed_from_u64(306);
    let el = NedelecTet::new(NedelecOrder::Three);
    let n = el.len();
    let (mut phi, mut curl) = (vec![[0.0; 3]; n], vec![[0.0; 3]; n]);
    for _ in 0..3 {
        let x = random_tet(&mut rng);
        let geo = TetGeometry::new(x);
        let mut k = vec![0.0; n * n];
        let mut m = vec![0.0; n * n];
        el.matrices(&geo, &mut k, &mut m);
        let mut kq = vec![0.0; n * n];
        let mut mq = vec![0.0; n * n];
        for &(l, w) in &rule {
            el.eval(&geo, l, &mut phi);
            el.eval_curl(&geo, l, &mut curl);
            for a in 0..n {
                for b in 0..n {
                    let dot = |u: [f64; 3], v: [f64; 3]| u[0] * v[0] + u[1] * v[1] + u[2] * v[2];
                    mq[a * n + b] += w * geo.volume * dot(phi[a], phi[b]);
                    kq[a * n + b] += w * geo.volume * dot(curl[a], curl[b]);
                }
            }
        }
        let rel = |e: &[f64], q: &[f64]| {
            let s = e.iter().fold(0.0f64, |s, v| s.max(v.abs()));
            e.iter()
                .zip(q)
                .fold(0.0f64, |s, (a, b)| s.max((a - b).abs()))
                / s
        };
        let (dm, dk) = (rel(&m, &mq), rel(&k, &kq));
        assert!(dm < 1e-11 && dk < 1e-11, "mass {dm:e}, curl {dk:e}");
        // Pointwise curl against central differences of the values, step δ = 1e-4 of the
        // element size: truncation O(δ²) ≈ 1e-8 relative, round-off ε/δ ≈ 1e-12; 1e-6
        // leaves room for the third derivatives (common practice, no source).
        let delta = 1e-4;
        let l0 = random_bary(&mut rng);
        let p0 = point(&x, l0);
        el.eval_curl(&geo, l0, &mut curl);
        let mut jac = vec![[[0.0; 3]; 3]; n]; // jac[a][d][k] = ∂_k φ_a,d
        for k in 0..3 {
            let mut vals = [vec![[0.0; 3]; n], vec![[0.0; 3]; n]];
            for (s, v) in [1.0, -1.0].iter().zip(vals.iter_mut()) {
                let mut p = p0;
                p[k] += s * delta;
                el.eval(&geo, geo.barycentric(x[0], p), v);
            }
            for a in 0..n {
                for d in 0..3 {
                    jac[a][d][k] = (vals[0][a][d] - vals[1][a][d]) / (2.0 * delta);
                }
            }
        }
        let scale = curl.iter().flatten().fold(0.0f64, |s, v| s.max(v.abs()));
        for a in 0..n {
            let j = jac[a];
            let fd = [j[2][1] - j[1][2], j[0][2] - j[2][0], j[1][0] - j[0][1]];
            for d in 0..3 {
                assert!(
                    (fd[d] - curl[a][d]).abs() < 1e-6 * scale,
                    "function {a}: {fd:?} vs {:?}",
                    curl[a]
                );
            }
        }
    }
}

/// Largest tangential jump of a random field across the shared face of two tetrahedra,
/// relative to the largest |E|, and the largest normal jump (same scale), for one global
/// numbering. `sorted`: evaluate with the ascending local order the space assumes.
fn jumps(perm: &[u32; 5], sorted: bool, rng: &mut ChaCha8Rng) -> (f64, f64) {
    // Vertices 0, 1, 2 span the shared face; 3 and 4 lie on either side.
    let base = [
        [0.0, 0.0, 0.0],
        [1.0, 0.1, 0.0],
        [0.2, 0.9, 0.1],
        [0.3, 0.3, 0.8],
        [0.4, 0.2, -0.7],
    ];
    let mut nodes = [[0.0; 3]; 5];
    for (v, &p) in perm.iter().enumerate() {
        nodes[p as usize] = base[v];
    }
    let g = |v: usize| perm[v];
    let mesh = TetMesh {
        nodes: nodes.to_vec(),
        tets: vec![[g(3), g(0), g(2), g(1)], [g(1), g(4), g(0), g(2)]],
        tet_region: vec![0, 0],
        boundary: Vec::new(),
        boundary_tag: Vec::new(),
        regions: vec![RegionInfo { name: "air".into() }],
    };
    let space = Space::new(&mesh, NedelecOrder::Three, |_| false);
    let el = NedelecTet::new(NedelecOrder::Three);
    let xs: Vec<f64> = (0..space.n_dofs())
        .map(|_| rng.gen_range(-1.0..1.0))
        .collect();
    let verts = |t: usize| -> [[f64; 3]; 4] {
        if sorted {
            space.tet_vertices(t)
        } else {
            mesh.tets[t].map(|v| mesh.nodes[v as usize])
        }
    };
    let field = |t: usize, p: [f64; 3]| {
        let x = verts(t);
        let geo = TetGeometry::new(x);
        let mut phi = vec![[0.0; 3]; el.len()];
        el.eval(&geo, geo.barycentric(x[0], p), &mut phi);
        let mut e = [0.0; 3];
        for (a, &d) in space.dofs.of_tet(t).iter().enumerate() {
            for k in 0..3 {
                e[k] += xs[d as usize] * phi[a][k];
            }
        }
        e
    };
    let (a, b, c) = (base[0], base[1], base[2]);
    let nrm = {
        let u = [b[0] - a[0], b[1] - a[1], b[2] - a[2]];
        let v = [c[0] - a[0], c[1] - a[1], c[2] - a[2]];
        let n = [
            u[1] * v[2] - u[2] * v[1],
            u[2] * v[0] - u[0] * v[2],
            u[0] * v[1] - u[1] * v[0],
        ];
        let l = (n[0] * n[0] + n[1] * n[1] + n[2] * n[2]).sqrt();
        n.map(|x| x / l)
    };
    let (mut jt, mut jn, mut emax) = (0.0f64, 0.0f64, 0.0f64);
    for _ in 0..20 {
        let w: [f64; 3] = {
            let r: [f64; 3] = std::array::from_fn(|_| rng.gen_range(0.0..1.0));
            let s: f64 = r.iter().sum();
            r.map(|x| x / s)
        };
        let p: [f64; 3] = std::array::from_fn(|d| w[0] * a[d] + w[1] * b[d] + w[2] * c[d]);
        let (e0, e1) = (field(0, p), field(1, p));
        let diff: [f64; 3] = std::array::from_fn(|d| e0[d] - e1[d]);
        let dn: f64 = (0..3).map(|d| diff[d] * nrm[d]).sum();
        let tang: f64 = (0..3)
            .map(|d| (diff[d] - dn * nrm[d]).powi(2))
            .sum::<f64>()
            .sqrt();
        jt = jt.max(tang);
        jn = jn.max(dn.abs());
        emax = emax.max((0..3).map(|d| e0[d] * e0[d]).sum::<f64>().sqrt());
    }
    (jt / emax, jn / emax)
}

fn permutations(n: u32) -> Vec<Vec<u32>> {
    if n == 0 {
        return vec![Vec::new()];
    }
    let mut out = Vec::new();
    for p in permutations(n - 1) {
        for pos in 0..=p.len() {
            let mut q = p.clone();
            q.insert(pos, n - 1);
            out.push(q);
        }
    }
    out
}

#[test]
fn tangential_continuity_across_a_shared_face_under_every_numbering() {
    let mut rng = ChaCha8Rng::seed_from_u64(307);
    let perms = permutations(5);
    assert_eq!(perms.len(), 120);
    let (mut worst_t, mut worst_n, mut worst_unsorted) = (0.0f64, 0.0f64, 0.0f64);
    for p in &perms {
        let perm: [u32; 5] = [p[0], p[1], p[2], p[3], p[4]];
        let (jt, jn) = jumps(&perm, true, &mut rng);
        worst_t = worst_t.max(jt);
        worst_n = worst_n.max(jn);
        worst_unsorted = worst_unsorted.max(jumps(&perm, false, &mut rng).0);
    }
    println!(
        "two tets, 120 numberings: tangential jump {worst_t:.2e}, normal jump {worst_n:.2e}, \
         tangential jump with the unsorted local order {worst_unsorted:.2e} (relative to |E|)"
    );
    assert!(worst_t < 1e-12, "tangential jump {worst_t:e}");
    // The normal component of a random field jumps (so the face sampling is not trivial)
    // and ignoring the orientation rule breaks conformity (so the check can fail).
    assert!(worst_n > 1e-3 && worst_unsorted > 1e-3);
}
