//! Validation suite: helpers shared by the tests in `tests/` (meshes, solves, analytic
//! reference spectra, matching of computed modes to reference groups, a root finder).
//!
//! Every test names its outside reference beside the check; this file holds no
//! reference values, only the machinery to compare against them.

pub mod driven_cavity;
pub mod driven_guide;
pub mod layered_guide;
pub mod port_wall;

use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_mesh::{RegionInfo, TetMesh};
use antinode_solver::constants::frequency_of;
use antinode_solver::NedelecOrder;
use antinode_solver::RegionMaterial;
use antinode_solver::{solve_modes, ModeSet, ModeSettings};
use std::f64::consts::PI;
use std::time::Instant;

/// Structured grid mesh (five tetrahedra per cell) of the box `[0,a]×[0,b]×[0,d]` with
/// `n[i]` cells per direction, one region ("air").
pub fn box_mesh(size: [f64; 3], n: [usize; 3]) -> TetMesh {
    let grid = GridLines::uniform([0.0; 3], size, n);
    grid_mesh(&grid, vec![region("air")], |_| Some(0))
}

/// A region description.
pub fn region(name: &str) -> RegionInfo {
    RegionInfo { name: name.into() }
}

/// Largest grid spacing of a uniform grid (the h of the convergence statements).
pub fn grid_h(size: [f64; 3], n: [usize; 3]) -> f64 {
    (0..3).map(|i| size[i] / n[i] as f64).fold(0.0, f64::max)
}

/// Solve for every mode with k0² in `[lo, hi]` (m⁻² or any consistent unit): band solve
/// with the target at the band centre. Returns the mode set and the wall-clock time (s).
pub fn solve_band<'m>(
    mesh: &'m TetMesh,
    materials: &[RegionMaterial],
    order: NedelecOrder,
    k2_band: [f64; 2],
) -> (ModeSet<'m>, f64) {
    let mut s = ModeSettings::new(frequency_of(0.5 * (k2_band[0] + k2_band[1])));
    s.order = order;
    s.band_hz = Some([frequency_of(k2_band[0]), frequency_of(k2_band[1])]);
    s.count = 1;
    let t = Instant::now();
    let set = solve_modes(mesh, materials, &s, &mut |_| {}).expect("solve_modes");
    (set, t.elapsed().as_secs_f64())
}

/// Solve for the `count` modes nearest to k0² = `k2_target`.
pub fn solve_nearest<'m>(
    mesh: &'m TetMesh,
    materials: &[RegionMaterial],
    order: NedelecOrder,
    k2_target: f64,
    count: usize,
) -> (ModeSet<'m>, f64) {
    let mut s = ModeSettings::new(frequency_of(k2_target));
    s.order = order;
    s.count = count;
    let t = Instant::now();
    let set = solve_modes(mesh, materials, &s, &mut |_| {}).expect("solve_modes");
    (set, t.elapsed().as_secs_f64())
}

/// k0² of the computed modes inside `[lo, hi]`, sorted.
pub fn k2_in(set: &ModeSet<'_>, band: [f64; 2]) -> Vec<f64> {
    set.modes
        .iter()
        .map(|m| m.k0_squared)
        .filter(|&k| k >= band[0] && k <= band[1])
        .collect()
}

/// One analytic mode: k², a label.
#[derive(Clone, Debug)]
pub struct RefMode {
    pub k2: f64,
    pub label: String,
}

/// Analytic modes of the PEC box a×b×d with k² ≤ `k2_max`:
/// k² = (mπ/a)² + (nπ/b)² + (pπ/d)²; TE_mnp needs p ≥ 1 and (m,n) ≠ (0,0), TM_mnp needs
/// m, n ≥ 1 (Pozar, Microwave Engineering, 4th ed., §6.3). One entry per field pattern,
/// so a degenerate frequency appears as many times as its multiplicity.
pub fn box_modes(size: [f64; 3], k2_max: f64) -> Vec<RefMode> {
    let [a, b, d] = size;
    let kmax = k2_max.sqrt();
    let lim = |l: f64| (kmax * l / PI).floor() as usize + 1;
    let mut out = Vec::new();
    for m in 0..=lim(a) {
        for n in 0..=lim(b) {
            for p in 0..=lim(d) {
                let k2 = (m as f64 * PI / a).powi(2)
                    + (n as f64 * PI / b).powi(2)
                    + (p as f64 * PI / d).powi(2);
                if k2 > k2_max {
                    continue;
                }
                if p >= 1 && (m, n) != (0, 0) {
                    out.push(RefMode {
                        k2,
                        label: format!("TE{m}{n}{p}"),
                    });
                }
                if m >= 1 && n >= 1 {
                    out.push(RefMode {
                        k2,
                        label: format!("TM{m}{n}{p}"),
                    });
                }
            }
        }
    }
    out.sort_by(|x, y| x.k2.total_cmp(&y.k2));
    out
}

/// A group of reference modes that the comparison cannot tell apart (exactly degenerate,
/// or closer than the comparison tolerance), with the computed modes assigned to it.
#[derive(Clone, Debug)]
pub struct Group {
    pub reference: Vec<RefMode>,
    pub computed: Vec<f64>,
}

impl Group {
    /// Largest relative k² error of a computed member against the nearest reference
    /// member.
    pub fn worst_rel_error(&self) -> f64 {
        self.computed
            .iter()
            .map(|&c| {
                self.reference
                    .iter()
                    .map(|r| ((c - r.k2) / r.k2).abs())
                    .fold(f64::INFINITY, f64::min)
            })
            .fold(0.0, f64::max)
    }
}

/// Cluster sorted reference modes: neighbours closer than `merge_rel` (relative in k²)
/// share a group.
pub fn cluster(reference: &[RefMode], merge_rel: f64) -> Vec<Group> {
    let mut groups: Vec<Group> = Vec::new();
    for r in reference {
        match groups.last_mut() {
            Some(g)
                if (r.k2 - g.reference.last().unwrap().k2).abs()
                    <= merge_rel * r.k2.abs().max(1e-300) =>
            {
                g.reference.push(r.clone())
            }
            _ => groups.push(Group {
                reference: vec![r.clone()],
                computed: Vec::new(),
            }),
        }
    }
    groups
}

/// Outcome of comparing a computed spectrum with reference groups.
pub struct Comparison {
    pub groups: Vec<Group>,
    /// Computed values with no reference within the tolerance.
    pub unmatched: Vec<f64>,
}

/// Assign each computed k² to the reference group with the nearest member; values
/// farther than `tol_rel` from every member are unmatched.
pub fn compare(reference: &[RefMode], computed: &[f64], tol_rel: f64) -> Comparison {
    // Groups closer than 2·tol could swap members: treat them as one group.
    let mut groups = cluster(reference, 2.0 * tol_rel);
    let mut unmatched = Vec::new();
    for &c in computed {
        let mut best: Option<(usize, f64)> = None;
        for (gi, g) in groups.iter().enumerate() {
            for r in &g.reference {
                let e = ((c - r.k2) / r.k2).abs();
                if best.is_none_or(|(_, b)| e < b) {
                    best = Some((gi, e));
                }
            }
        }
        match best {
            Some((gi, e)) if e <= tol_rel => groups[gi].computed.push(c),
            _ => unmatched.push(c),
        }
    }
    Comparison { groups, unmatched }
}

impl Comparison {
    /// Print the table; `scale` converts k² to the printed quantity (e.g. frequency).
    pub fn print(&self, title: &str, unit: &str, to_unit: impl Fn(f64) -> f64) {
        println!("{title}");
        println!(
            "  {:<28} {:>4} {:>4}  {:>14} {:>14}  {:>10}",
            "reference group",
            "ref",
            "got",
            format!("ref {unit}"),
            format!("computed {unit}"),
            "rel err k²"
        );
        for g in &self.groups {
            let labels: Vec<&str> = g.reference.iter().map(|r| r.label.as_str()).collect();
            let mut lab = labels.join(",");
            if lab.len() > 28 {
                lab.truncate(25);
                lab.push_str("...");
            }
            let first = to_unit(g.reference[0].k2);
            if g.computed.is_empty() {
                println!(
                    "  {lab:<28} {:>4} {:>4}  {first:>14.6} {:>14}  {:>10}",
                    g.reference.len(),
                    0,
                    "-",
                    "-"
                );
            }
            for (i, &c) in g.computed.iter().enumerate() {
                if i == 0 {
                    println!(
                        "  {lab:<28} {:>4} {:>4}  {first:>14.6} {:>14.6}  {:>10.2e}",
                        g.reference.len(),
                        g.computed.len(),
                        to_unit(c),
                        g.worst_rel_error()
                    );
                } else {
                    println!(
                        "  {:<28} {:>4} {:>4}  {:>14} {:>14.6}",
                        "",
                        "",
                        "",
                        "",
                        to_unit(c)
                    );
                }
            }
        }
        for &u in &self.unmatched {
            println!("  UNMATCHED computed value {:.6}", to_unit(u));
        }
    }

    /// Every group holds exactly as many computed modes as reference modes, and nothing
    /// is unmatched. Returns the worst relative k² error.
    pub fn assert_complete(&self, what: &str) -> f64 {
        assert!(
            self.unmatched.is_empty(),
            "{what}: computed values with no reference within tolerance: {:?}",
            self.unmatched
        );
        let mut worst: f64 = 0.0;
        for g in &self.groups {
            let labels: Vec<&str> = g.reference.iter().map(|r| r.label.as_str()).collect();
            assert_eq!(
                g.computed.len(),
                g.reference.len(),
                "{what}: group {labels:?} (k² = {}) has {} computed modes {:?}",
                g.reference[0].k2,
                g.computed.len(),
                g.computed
            );
            worst = worst.max(g.worst_rel_error());
        }
        worst
    }
}

/// Widen `band` (k² values) until no reference value lies within `margin_rel` of either
/// edge, so that no mode can fall either side of an edge through discretisation error
/// and make the count ambiguous. `reference` must extend well beyond `band`.
pub fn clear_window(reference: &[RefMode], band: [f64; 2], margin_rel: f64) -> [f64; 2] {
    let [mut lo, mut hi] = band;
    loop {
        let mut moved = false;
        for r in reference {
            if ((r.k2 - lo) / lo).abs() <= margin_rel {
                lo = r.k2 * (1.0 - 1.01 * margin_rel);
                moved = true;
            }
            if ((r.k2 - hi) / hi).abs() <= margin_rel {
                // |r − hi|/hi = 1.01·margin after this move (r·(1 + 1.01·margin) would leave
                // it inside the margin for margin ≳ 1 % and never stop).
                hi = r.k2 / (1.0 - 1.01 * margin_rel);
                moved = true;
            }
        }
        if !moved {
            break;
        }
    }
    let top = reference.iter().map(|r| r.k2).fold(0.0, f64::max);
    assert!(hi < top, "reference list does not extend beyond the window");
    [lo, hi]
}

/// Reference modes inside `window`.
pub fn inside(reference: &[RefMode], window: [f64; 2]) -> Vec<RefMode> {
    reference
        .iter()
        .filter(|r| r.k2 >= window[0] && r.k2 <= window[1])
        .cloned()
        .collect()
}

/// Frequency in GHz of k0² in m⁻².
pub fn ghz(k2: f64) -> f64 {
    frequency_of(k2) / 1e9
}

/// A-priori discretisation tolerance for the relative eigenvalue error of a smooth mode
/// on the structured five-tetrahedra grid meshes: C_p (k h)^{2p}, the O(h^{2p}) law
/// (Boffi, Acta Numerica 19 (2010), §§ on edge-element eigenvalue convergence, from
/// memory), with
/// the constant measured on the cube (0,π)³ (see `tests/cube.rs`, where the observed
/// worst constants over k² ≤ 6 were C1 = 9.875e-3 (order 1, n = 8), C2 = 5.025e-4
/// (order 2, n = 4) and C3 = 4.261e-6 (order 3, n = 3); rounded up to two digits below) and a safety factor of
/// 3 on them for other boxes and mode shapes (common practice, no source). `k` is the
/// local wavenumber of the mode (√ε k0 in a dielectric), `h` the largest grid spacing.
pub fn grid_tolerance(order: NedelecOrder, k: f64, h: f64) -> f64 {
    let (c, p) = match order {
        NedelecOrder::One => (GRID_C1, 2),
        NedelecOrder::Two => (GRID_C2, 4),
        NedelecOrder::Three => (GRID_C3, 6),
    };
    3.0 * c * (k * h).powi(p)
}

/// Observed constant of the order-1 error law on the cube (see [`grid_tolerance`]).
pub const GRID_C1: f64 = 9.9e-3;
/// Observed constant of the order-2 error law on the cube (see [`grid_tolerance`]).
pub const GRID_C2: f64 = 5.1e-4;
/// Observed constant of the order-3 error law on the cube (see [`grid_tolerance`]).
pub const GRID_C3: f64 = 4.3e-6;

/// A root of `f` in `[a, b]` where f(a)·f(b) ≤ 0, by bisection to |b − a| ≤ tol
/// (bisection halves the bracket each step, so it always converges; Press et al.,
/// Numerical Recipes 3rd ed., §9.1).
pub fn bisect(f: impl Fn(f64) -> f64, mut a: f64, mut b: f64, tol: f64) -> f64 {
    let mut fa = f(a);
    let fb = f(b);
    assert!(fa * fb <= 0.0, "bisect: no sign change in [{a}, {b}]");
    if fa == 0.0 {
        return a;
    }
    if fb == 0.0 {
        return b;
    }
    while (b - a).abs() > tol {
        let m = 0.5 * (a + b);
        let fm = f(m);
        if fm == 0.0 {
            return m;
        }
        if fa * fm < 0.0 {
            b = m;
        } else {
            a = m;
            fa = fm;
        }
    }
    0.5 * (a + b)
}

/// All roots of `f` in `[lo, hi]` found by sign changes on `steps` equal sub-intervals,
/// each refined by bisection. Roots of even multiplicity (no sign change) are missed;
/// callers use functions whose roots are simple.
pub fn roots_in(f: impl Fn(f64) -> f64, lo: f64, hi: f64, steps: usize) -> Vec<f64> {
    let mut out = Vec::new();
    let dx = (hi - lo) / steps as f64;
    let mut x0 = lo;
    let mut f0 = f(x0);
    for i in 1..=steps {
        let x1 = lo + dx * i as f64;
        let f1 = f(x1);
        if f0 == 0.0 {
            out.push(x0);
        } else if f0 * f1 < 0.0 {
            out.push(bisect(&f, x0, x1, 1e-13 * x1.abs().max(1.0)));
        }
        x0 = x1;
        f0 = f1;
    }
    out
}

/// Observed convergence order from errors e1 (spacing h1) and e2 (spacing h2).
pub fn observed_order(e1: f64, h1: f64, e2: f64, h2: f64) -> f64 {
    (e1 / e2).ln() / (h1 / h2).ln()
}
