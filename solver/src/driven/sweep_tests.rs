//! Tests of the fast sweep on small systems against dense direct solves.
//!
//! The test system is the 1-D finite-element model of a TE10 guide with layers (linear
//! elements along z): −V″ − (k²εr(z) − kc²)V = 0 with a matched port at z = 0, where the
//! boundary term gives jβ(k)V(0) on the left and 2jβ(k)a on the right (incident a), the
//! same structure as the 3-D port model of [`crate::port`]. Optionally a second port at
//! z = L instead of a short, a dispersive layer εr(k) and a surface-loss-like term
//! j c/√k on the last node. Direct solves use faer's dense LU on the assembled A(k).

use super::affine::{AffineSystem, ShiftedSolver, Source, Term};
use super::basis::orthonormalise;
use super::sweep::{sweep, SweepOptions};
use crate::linalg::sparse::SparseMatrix;
use faer::linalg::solvers::Solve;
use faer::{c64, Mat, MatMut};
use std::f64::consts::PI;

const C0: f64 = 299_792_458.0;
const J: c64 = c64 { re: 0.0, im: 1.0 };

fn k_of(f_hz: f64) -> f64 {
    2.0 * PI * f_hz / C0
}

/// εr of a layer as a function of k.
type Permittivity = Box<dyn Fn(f64) -> c64 + Send + Sync>;

struct Chain {
    /// K, M_0 (unit mass), then per-layer unit masses.
    mats: Vec<SparseMatrix>,
    /// Port unknowns.
    ports: Vec<usize>,
    n: usize,
}

fn tri(n: usize, entries: &[(usize, usize, f64)]) -> SparseMatrix {
    let mut t = sprs::TriMatI::<f64, u32>::new((n, n));
    for &(i, j, v) in entries {
        t.add_triplet(i, j, v);
    }
    t.to_csr()
}

/// Linear elements on [0, L] with `cells` cells; layers as (z_end, index) by element
/// midpoint. `two_ports`: the far end is a second port (else a short: node removed).
fn chain(length: f64, cells: usize, layer_ends: &[f64], two_ports: bool) -> Chain {
    let h = length / cells as f64;
    let n = if two_ports { cells + 1 } else { cells };
    let mut k = Vec::new();
    let mut m0 = Vec::new();
    let mut layers: Vec<Vec<(usize, usize, f64)>> = vec![Vec::new(); layer_ends.len()];
    for e in 0..cells {
        let mid = (e as f64 + 0.5) * h;
        let layer = layer_ends
            .iter()
            .position(|&z| mid <= z)
            .unwrap_or(layer_ends.len() - 1);
        let nodes = [e, e + 1];
        for a in 0..2 {
            for b in 0..2 {
                let (i, j) = (nodes[a], nodes[b]);
                if i >= n || j >= n {
                    continue; // the short: V(L) = 0
                }
                let kv = if a == b { 1.0 / h } else { -1.0 / h };
                let mv = if a == b { h / 3.0 } else { h / 6.0 };
                k.push((i, j, kv));
                m0.push((i, j, mv));
                layers[layer].push((i, j, mv));
            }
        }
    }
    let mut mats = vec![tri(n, &k), tri(n, &m0)];
    mats.extend(layers.iter().map(|l| tri(n, l)));
    let mut ports = vec![0];
    if two_ports {
        ports.push(n - 1);
    }
    Chain { mats, ports, n }
}

/// WR-340-like broad side: kc = π/a.
const WIDTH: f64 = 0.08636;

fn beta(k: f64) -> c64 {
    (c64::new(k * k - (PI / WIDTH).powi(2), 0.0)).sqrt()
}

/// The affine system of `c` with layer permittivities `eps(k)` (one function per layer)
/// and the port diagonals.
fn system<'a>(
    c: &'a Chain,
    eps: Vec<Permittivity>,
    port_mats: &'a [SparseMatrix],
) -> AffineSystem<'a> {
    let kc2 = (PI / WIDTH).powi(2);
    let mut terms = vec![
        Term {
            matrix: &c.mats[0],
            coefficient: Box::new(|_| c64::new(1.0, 0.0)),
            name: "stiffness".into(),
        },
        Term {
            matrix: &c.mats[1],
            coefficient: Box::new(move |_| c64::new(kc2, 0.0)),
            name: "cutoff".into(),
        },
    ];
    for (l, e) in eps.into_iter().enumerate() {
        terms.push(Term {
            matrix: &c.mats[2 + l],
            coefficient: Box::new(move |k| -(k * k) * e(k)),
            name: format!("layer {l}"),
        });
    }
    for pm in port_mats {
        terms.push(Term {
            matrix: pm,
            coefficient: Box::new(|k| J * beta(k)),
            name: "port".into(),
        });
    }
    let sources = c
        .ports
        .iter()
        .map(|&i| Source {
            entries: vec![(i, 1.0)],
            coefficient: Box::new(|k| 2.0 * J * beta(k)),
        })
        .collect();
    AffineSystem { terms, sources }
}

fn port_matrices(c: &Chain) -> Vec<SparseMatrix> {
    c.ports.iter().map(|&i| tri(c.n, &[(i, i, 1.0)])).collect()
}

fn dense(system: &AffineSystem, k: f64) -> Mat<c64> {
    let n = system.dim();
    let mut a = Mat::<c64>::zeros(n, n);
    for (t, w) in system.terms.iter().zip(system.coefficients(k)) {
        for (v, (i, j)) in t.matrix.iter() {
            a[(i as usize, j as usize)] += w * *v;
        }
    }
    a
}

struct DenseSolver(faer::linalg::solvers::PartialPivLu<c64>);

impl ShiftedSolver for DenseSolver {
    fn solve_in_place(&self, mut rhs: MatMut<'_, c64>) {
        let x = self.0.solve(rhs.as_ref());
        rhs.copy_from(&x);
    }
}

/// S = y − I for unit incident waves (all ports alike, so no impedance scaling).
fn s_of(_k: f64, y: &Mat<c64>) -> Mat<c64> {
    Mat::from_fn(y.nrows(), y.ncols(), |i, j| {
        y[(i, j)]
            - if i == j {
                c64::new(1.0, 0.0)
            } else {
                c64::new(0.0, 0.0)
            }
    })
}

fn direct_s(system: &AffineSystem, k: f64) -> Mat<c64> {
    let x = dense(system, k).partial_piv_lu().solve(system.rhs(k));
    s_of(k, &system.outputs(x.as_ref()))
}

fn max_diff(a: &Mat<c64>, b: &Mat<c64>) -> f64 {
    let mut d: f64 = 0.0;
    for j in 0..a.ncols() {
        for i in 0..a.nrows() {
            d = d.max((a[(i, j)] - b[(i, j)]).norm());
        }
    }
    d
}

fn grid(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    (0..n)
        .map(|i| lo + (hi - lo) * i as f64 / (n - 1) as f64)
        .collect()
}

/// A resonant layered short: a thin high-permittivity window at the port (a partial
/// reflector), an air gap, a lossless block and a lossy water-like layer with a
/// Debye-like ε(k). The gap between window and load is a resonator; its length sets how
/// many resonances the band holds.
fn layered_case(gap: f64, cells: usize) -> (Chain, Vec<Permittivity>) {
    let w = 0.01;
    let c = chain(
        w + gap + 0.2,
        cells,
        &[w, w + gap, w + gap + 0.15, w + gap + 0.2],
        false,
    );
    let k_ref = k_of(2.45e9);
    let eps: Vec<Permittivity> = vec![
        Box::new(|_| c64::new(10.0, 0.0)),
        Box::new(|_| c64::new(1.0, 0.0)),
        Box::new(|_| c64::new(2.1, -0.002)),
        Box::new(move |k| c64::new(40.0, -1.0) / (c64::new(1.0, 0.0) + J * 0.05 * (k / k_ref))),
    ];
    (c, eps)
}

/// Sweep over 2.3–2.6 GHz, then compare with direct solves on the grid and between its
/// points (where the model was never checked). The stated tolerance is on |ΔS| between
/// successive models, an estimate of the previous model's error, so the final model is
/// held to it. Returns the number of expansion points.
fn sweep_against_direct(gap: f64, cells: usize, options: &SweepOptions) -> usize {
    let (c, eps) = layered_case(gap, cells);
    let pm = port_matrices(&c);
    let sys = system(&c, eps, &pm);
    let (lo, hi) = (k_of(2.3e9), k_of(2.6e9));
    let g = grid(lo, hi, 61);
    let mut factorize = |k: f64| -> Result<(Box<dyn ShiftedSolver>, f64), ()> {
        Ok((Box::new(DenseSolver(dense(&sys, k).partial_piv_lu())), 0.0))
    };
    let sw = sweep(&sys, &g, &[], &mut factorize, &s_of, options).expect("sweep");
    for s in &sw.steps {
        println!(
            "  points {} basis {:3}: max η {:.2e} at {:.4} GHz, max |ΔS| {}",
            s.points,
            s.basis,
            s.max_residual,
            s.max_residual_k * C0 / (2.0 * PI) / 1e9,
            s.max_change.map_or("-".into(), |d| format!("{d:.2e}"))
        );
    }
    assert!(sw.converged, "sweep did not converge");
    let fine = grid(lo, hi, 181);
    let direct: Vec<Mat<c64>> = fine.iter().map(|&k| direct_s(&sys, k)).collect();
    let worst = fine
        .iter()
        .zip(&direct)
        .map(|(&k, d)| max_diff(&s_of(k, &sw.outputs(&sys, k)), d))
        .fold(0.0, f64::max);
    let s_min = direct
        .iter()
        .map(|d| d[(0, 0)].norm())
        .fold(f64::INFINITY, f64::min);
    let dips = direct
        .windows(3)
        .filter(|w| w[1][(0, 0)].norm() < w[0][(0, 0)].norm().min(w[2][(0, 0)].norm()))
        .count();
    println!(
        "gap {gap} m: {} points, basis {}, max |ΔS| vs direct over 181 frequencies {worst:.2e} \
         (tolerance {:.0e}); {dips} |S11| minima, lowest {s_min:.3}",
        sw.points.len(),
        sw.basis.dim(),
        options.tolerance
    );
    assert!(dips >= 1, "the band should hold a resonance (|S11| dip)");
    assert!(worst <= options.tolerance, "max |ΔS| {worst:e}");
    sw.points.len()
}

#[test]
fn sweep_matches_direct_solves_over_a_resonant_band() {
    sweep_against_direct(0.3, 400, &SweepOptions::default());
}

#[test]
fn capped_krylov_depth_on_a_long_guide_adds_expansion_points() {
    // A 2 m air gap behind a partially reflecting window puts several sharp resonances in
    // the band; with at most 18 blocks per point no single point reaches 1e-8, so the
    // adaptive loop must place further points and still converge.
    let options = SweepOptions {
        tolerance: 1e-8,
        residual_tolerance: 1e-6,
        max_blocks_per_point: 18,
        ..SweepOptions::default()
    };
    let points = sweep_against_direct(2.0, 1000, &options);
    assert!(points > 1, "expected several expansion points");
}

#[test]
fn model_is_exact_at_an_expansion_point() {
    // The direct solution at an expansion point lies in the basis, and a Galerkin
    // projection reproduces any solution its space holds (exactness: round-off only).
    let (c, eps) = layered_case(0.3, 400);
    let pm = port_matrices(&c);
    let sys = system(&c, eps, &pm);
    let k0 = k_of(2.41e9);
    let options = SweepOptions {
        max_points: 1,
        max_blocks_per_point: 4,
        chunk_blocks: 4,
        ..SweepOptions::default()
    };
    let mut factorize = |k: f64| -> Result<(Box<dyn ShiftedSolver>, f64), ()> {
        Ok((Box::new(DenseSolver(dense(&sys, k).partial_piv_lu())), 0.0))
    };
    let sw = sweep(&sys, &[k0], &[k0], &mut factorize, &s_of, &options).expect("sweep");
    let d = max_diff(&s_of(k0, &sw.outputs(&sys, k0)), &direct_s(&sys, k0));
    let direct = sys.outputs(sw.points[0].direct.as_ref());
    let d2 = max_diff(&s_of(k0, &direct), &direct_s(&sys, k0));
    println!("at the expansion point: |ΔS| {d:.1e} (model), {d2:.1e} (stored direct solution)");
    assert!(d < 1e-10 && d2 < 1e-12);
}

#[test]
fn two_port_model_is_reciprocal_and_passive() {
    // Reciprocity S12 = S21 and the energy balance 1 − |S11|² − |S21|² = P_loss/P_fwd hold
    // exactly for the discrete system (A complex symmetric; Im xᴴAx = loss); the real,
    // symmetric projection keeps both, so the reduced model satisfies them to round-off.
    let c = chain(0.4, 800, &[0.15, 0.25, 0.4], true);
    let eps: Vec<Permittivity> = vec![
        Box::new(|_| c64::new(1.0, 0.0)),
        Box::new(|_| c64::new(9.0, -1.5)),
        Box::new(|_| c64::new(1.0, 0.0)),
    ];
    let pm = port_matrices(&c);
    let sys = system(&c, eps, &pm);
    let g = grid(k_of(2.35e9), k_of(2.55e9), 21);
    let options = SweepOptions {
        max_points: 1,
        max_blocks_per_point: 6,
        chunk_blocks: 6,
        ..SweepOptions::default()
    };
    let mut factorize = |k: f64| -> Result<(Box<dyn ShiftedSolver>, f64), ()> {
        Ok((Box::new(DenseSolver(dense(&sys, k).partial_piv_lu())), 0.0))
    };
    let sw = sweep(&sys, &g, &[], &mut factorize, &s_of, &options).expect("sweep");
    let lossy = 3; // term index of the lossy layer
    for &k in &g {
        let y = sw.reduced_solution(&sys, k);
        let s = s_of(k, &sw.outputs(&sys, k));
        let recip = (s[(0, 1)] - s[(1, 0)]).norm();
        // Loss of port 1's excitation: Im(α) yᴴ R y, forward power ∝ β|a|² with a = 1;
        // both scale alike (the 1-D analogue of P = (β/2ωμ0)N|a|²), so the ratio is
        // Im(α_lossy) yᴴRy / β.
        let r = &sw.basis.reduced[lossy];
        let m = sw.basis.dim();
        let mut q = 0.0;
        for i in 0..m {
            for j in 0..m {
                q += (y[(i, 0)].conj() * y[(j, 0)]).re * r[(i, j)];
            }
        }
        let alpha = (sys.terms[lossy].coefficient)(k);
        let loss = alpha.im * q / beta(k).re;
        let balance = 1.0 - s[(0, 0)].norm_sqr() - s[(1, 0)].norm_sqr() - loss;
        assert!(recip < 1e-12, "S12 − S21 = {recip:e}");
        assert!(
            balance.abs() < 1e-10,
            "energy balance {balance:e} at k = {k}"
        );
        assert!(
            s[(0, 0)].norm_sqr() + s[(1, 0)].norm_sqr() <= 1.0 + 1e-12,
            "not passive"
        );
    }
}

#[test]
fn orthonormalise_deflates_dependent_columns() {
    // Three columns of which the third is a combination of the first two: two survive,
    // orthonormal to round-off.
    let n = 50;
    let a = Mat::<c64>::from_fn(n, 3, |i, j| {
        let x = i as f64 / n as f64;
        match j {
            0 => c64::new(x.sin(), x),
            1 => c64::new(x * x, (3.0 * x).cos()),
            _ => c64::new(x.sin() + 2.0 * x * x, x + 2.0 * (3.0 * x).cos()),
        }
    });
    let q = orthonormalise(Mat::<c64>::zeros(n, 0).as_ref(), a.as_ref());
    assert_eq!(q.ncols(), 2);
    let g = q.adjoint() * &q;
    let err = (&g - Mat::<c64>::identity(2, 2)).norm_max();
    assert!(err < 1e-14, "QᴴQ − I = {err:e}");
}
