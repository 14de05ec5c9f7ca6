//! Mode tracking across a sweep of an empty PEC box's height, against the analytic
//! TE/TM_mnp modes (Pozar, Microwave Engineering, 4th ed., §6.3): every tracked mode is
//! identified independently by projecting its sampled E on the analytic field patterns
//! of each (m, n, p) family, its k² is checked against k² = (mπ/a)² + (nπ/b)² + (pπ/d)²
//! within the grid tolerance, and every track must keep one family. The sweep passes a
//! crossing (TE101 falls through TM110 at d = b), where tracking by frequency order would
//! swap the two: the tracks must follow the fields.

use antinode_solver::constants::frequency_of;
use antinode_solver::post::probes::{bounding_box, locate, probe_fractions, probe_points, sample};
use antinode_solver::post::tracking::{track_ids, ProbedMode, TrackOptions};
use antinode_solver::{NedelecOrder, RegionMaterial};
use antinode_tests::{box_mesh, box_modes, clear_window, grid_h, grid_tolerance, solve_band};
use std::collections::{BTreeMap, BTreeSet};
use std::f64::consts::PI;

type Family = (usize, usize, usize);

/// Share of a sampled field inside the span of family (m, n, p)'s analytic patterns
/// E_x ∝ cos(mπx/a) sin(nπy/b) sin(pπz/d), E_y ∝ sin cos sin, E_z ∝ sin sin cos (the
/// TE_mnp and TM_mnp fields of Pozar §6.3 are combinations of these three; from memory).
/// The three patterns live in different components, so they are orthogonal at any
/// point set and the projection is a sum of three terms.
fn family_share(
    field: &[Option<[faer::c64; 3]>],
    pts: &[[f64; 3]],
    size: [f64; 3],
    f: Family,
) -> f64 {
    let [a, b, d] = size;
    let (m, n, p) = (f.0 as f64 * PI, f.1 as f64 * PI, f.2 as f64 * PI);
    let mut total = 0.0;
    let mut inner = [faer::c64::new(0.0, 0.0); 3];
    let mut norm = [0.0; 3];
    for (e, x) in field.iter().zip(pts) {
        let Some(e) = e else { continue };
        let (cx, sx) = ((m * x[0] / a).cos(), (m * x[0] / a).sin());
        let (cy, sy) = ((n * x[1] / b).cos(), (n * x[1] / b).sin());
        let (cz, sz) = ((p * x[2] / d).cos(), (p * x[2] / d).sin());
        let u = [cx * sy * sz, sx * cy * sz, sx * sy * cz];
        for k in 0..3 {
            inner[k] += e[k] * u[k];
            norm[k] += u[k] * u[k];
            total += e[k].norm_sqr();
        }
    }
    (0..3)
        .filter(|&k| norm[k] > 0.0)
        .map(|k| inner[k].norm_sqr() / norm[k])
        .sum::<f64>()
        / total
}

fn k2_of(size: [f64; 3], f: Family) -> f64 {
    (f.0 as f64 * PI / size[0]).powi(2)
        + (f.1 as f64 * PI / size[1]).powi(2)
        + (f.2 as f64 * PI / size[2]).powi(2)
}

/// Families with a field (at most one zero index), indices up to 3.
fn families() -> Vec<Family> {
    let mut v = Vec::new();
    for m in 0..=3 {
        for n in 0..=3 {
            for p in 0..=3 {
                if [m, n, p].iter().filter(|&&i| i == 0).count() <= 1 {
                    v.push((m, n, p));
                }
            }
        }
    }
    v
}

#[test]
fn box_height_sweep_tracks_keep_their_family_through_a_crossing() {
    let (a, b) = (0.30, 0.26);
    let heights = [0.20, 0.22, 0.24, 0.25, 0.27, 0.28];
    let order = NedelecOrder::Two;
    // One k² window for all variants, widened until no analytic mode of any variant is
    // within 2 % of an edge (so none straddles it through discretisation error).
    let k2 = |f_ghz: f64| (2.0 * PI * f_ghz * 1e9 / antinode_solver::constants::C0).powi(2);
    let mut reference = Vec::new();
    for &d in &heights {
        reference.extend(box_modes([a, b, d], k2(2.0)));
    }
    reference.sort_by(|x, y| x.k2.total_cmp(&y.k2));
    let window = clear_window(&reference, [k2(0.70), k2(0.98)], 0.02);
    let fractions = probe_fractions(256);
    let mut chain = Vec::new();
    let mut found: Vec<Vec<(Family, f64)>> = Vec::new();
    for &d in &heights {
        let size = [a, b, d];
        let n = [10, 9, (d / 0.028).round() as usize];
        let mesh = box_mesh(size, n);
        let (set, _) = solve_band(&mesh, &[RegionMaterial::VACUUM], order, window);
        let (lo, hi) = bounding_box(&set.space);
        let pts = probe_points(&fractions, lo, hi);
        let located = locate(&set.space, &pts);
        let tol = grid_tolerance(order, window[1].sqrt(), grid_h(size, n));
        let mut modes = Vec::new();
        let mut fams = Vec::new();
        for m in &set.modes {
            let field = sample(&set.space, &m.coefficients, &m.coefficients_imag, &located);
            let (fam, share) = families()
                .into_iter()
                .map(|f| (f, family_share(&field, &pts, size, f)))
                .max_by(|x, y| x.1.total_cmp(&y.1))
                .unwrap();
            // 0.9: clearly one family (our threshold, no source; measured shares below).
            assert!(
                share > 0.9,
                "d = {d}: mode at {} GHz is {share:.3} {fam:?}",
                m.frequency_hz / 1e9
            );
            let k2_fe = (2.0 * PI * m.frequency_hz / antinode_solver::constants::C0).powi(2);
            let err = (k2_fe / k2_of(size, fam) - 1.0).abs();
            assert!(
                err < tol,
                "d = {d}: {fam:?} k² error {err:.2e} > tolerance {tol:.2e}"
            );
            println!(
                "d = {:.0} mm: {fam:?} f = {:.5} GHz (analytic {:.5}), k² error {err:.1e} (tol {tol:.1e}), share {share:.4}",
                d * 1e3,
                m.frequency_hz / 1e9,
                frequency_of(k2_of(size, fam)) / 1e9
            );
            fams.push((fam, m.frequency_hz));
            modes.push(ProbedMode {
                frequency_hz: m.frequency_hz,
                field,
            });
        }
        chain.push(modes);
        found.push(fams);
    }
    let starts: Vec<bool> = (0..heights.len()).map(|v| v == 0).collect();
    let ids = track_ids(&chain, &starts, &TrackOptions::default());
    // Each track keeps one family, and a family present in two neighbours keeps its tracks.
    let mut family_of_track: BTreeMap<usize, Family> = BTreeMap::new();
    for (v, ids_v) in ids.iter().enumerate() {
        for (i, &(t, _)) in ids_v.iter().enumerate() {
            let fam = found[v][i].0;
            let prev = *family_of_track.entry(t).or_insert(fam);
            assert_eq!(prev, fam, "track {t} changes family at d = {}", heights[v]);
            if v > 0 && found[v - 1].iter().any(|x| x.0 == fam) {
                let before: BTreeSet<usize> = found[v - 1]
                    .iter()
                    .zip(&ids[v - 1])
                    .filter(|(x, _)| x.0 == fam)
                    .map(|(_, id)| id.0)
                    .collect();
                assert!(
                    before.contains(&t),
                    "{fam:?} at d = {} starts a new track {t}",
                    heights[v]
                );
            }
        }
    }
    // The crossing happened: some pair of tracks swaps frequency order between neighbours.
    let freq = |v: usize, t: usize| ids[v].iter().position(|x| x.0 == t).map(|i| found[v][i].1);
    let mut swapped = false;
    for v in 1..heights.len() {
        for &t in family_of_track.keys() {
            for &u in family_of_track.keys() {
                if let (Some(a0), Some(b0), Some(a1), Some(b1)) =
                    (freq(v - 1, t), freq(v - 1, u), freq(v, t), freq(v, u))
                {
                    swapped |= a0 < b0 && a1 > b1;
                }
            }
        }
    }
    assert!(
        swapped,
        "the sweep should pass a crossing (TE101 through TM110 at d = b)"
    );
}
