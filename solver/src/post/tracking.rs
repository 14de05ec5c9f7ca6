//! Mode tracking between neighbouring variants of a sweep: which mode of one variant is
//! which mode of the next, judged by the fields, not by the frequency order.
//!
//! * Modal assurance criterion of two fields sampled at the same probe points
//!   ([`super::probes`]): MAC(a, b) = |aᴴb|² / ((aᴴa)(bᴴb)), 1 for proportional fields,
//!   0 for orthogonal ones (Allemang, "The modal assurance criterion — twenty years of
//!   use and abuse", Sound and Vibration, Aug. 2003, eq. 1; from memory). Points absent
//!   in either field are left out of both.
//! * Degenerate modes (frequencies within a relative tolerance) are only defined as a
//!   subspace: any rotation of the group is as valid. Groups A (k modes) and B (l modes)
//!   are compared by the principal angles θ_i between span A and span B: with thin QR
//!   factors Q_A, Q_B, cos θ_i are the singular values of Q_Aᴴ Q_B (Björck and Golub,
//!   Math. Comp. 27, 1973; Golub and Van Loan, Matrix Computations, 4th ed., §6.4.3).
//!   The overlap Σ cos²θ_i / min(k, l) is 1 when the smaller space lies in the larger
//!   (a degeneracy that splits or forms) and equals the MAC for k = l = 1.
//! * Assignment: group pairs in decreasing overlap are matched greedily while both have
//!   unmatched modes and the overlap is at least [`TrackOptions::min_overlap`]; inside a
//!   matched pair the modes are paired by decreasing MAC. A mode of the next variant
//!   that is not paired starts a new track; a track whose mode finds no partner ends.

use super::probes::ProbeField;
use faer::{c64, Mat};

/// Tracking settings.
#[derive(Clone, Copy, Debug)]
pub struct TrackOptions {
    /// Relative frequency difference below which modes form one degenerate group. The
    /// default 3e-3 is a few times the mesh splitting of exactly degenerate pairs on the
    /// coarse meshes of a sweep (the box benchmark's worst relative error at its coarsest
    /// order-2 grid is 1.5e-3, README Performance); our choice, no source.
    pub group_tolerance: f64,
    /// Smallest overlap that continues a track: more than half of the field pattern
    /// shared (our choice, no source; distinct modes of a box score near 0, the same
    /// mode on another mesh near 1).
    pub min_overlap: f64,
}

impl Default for TrackOptions {
    fn default() -> Self {
        TrackOptions {
            group_tolerance: 3e-3,
            min_overlap: 0.5,
        }
    }
}

/// The modes of one variant as the tracker sees them.
#[derive(Clone, Debug)]
pub struct ProbedMode {
    pub frequency_hz: f64,
    pub field: ProbeField,
}

/// Rows (3 per point present in both) of two fields.
fn common_rows(fields: &[&ProbeField], other: &[&ProbeField]) -> Vec<usize> {
    let n = fields
        .iter()
        .chain(other)
        .map(|f| f.len())
        .min()
        .unwrap_or(0);
    (0..n)
        .filter(|&p| fields.iter().chain(other).all(|f| f[p].is_some()))
        .collect()
}

fn matrix(fields: &[&ProbeField], points: &[usize]) -> Mat<c64> {
    Mat::from_fn(3 * points.len(), fields.len(), |r, c| {
        fields[c][points[r / 3]].expect("common rows only")[r % 3]
    })
}

/// MAC of two sampled fields (module docs); 0 when either is zero at the common points.
pub fn mac(a: &ProbeField, b: &ProbeField) -> f64 {
    let pts = common_rows(&[a], &[b]);
    let (mut ab, mut aa, mut bb) = (c64::new(0.0, 0.0), 0.0, 0.0);
    for &p in &pts {
        let (x, y) = (a[p].expect("common"), b[p].expect("common"));
        for k in 0..3 {
            ab += x[k].conj() * y[k];
            aa += x[k].norm_sqr();
            bb += y[k].norm_sqr();
        }
    }
    if aa == 0.0 || bb == 0.0 {
        0.0
    } else {
        ab.norm_sqr() / (aa * bb)
    }
}

/// Σ cos²θ_i / min(k, l) over the principal angles between the spans (module docs).
pub fn subspace_overlap(a: &[&ProbeField], b: &[&ProbeField]) -> f64 {
    if a.is_empty() || b.is_empty() {
        return 0.0;
    }
    if a.len() == 1 && b.len() == 1 {
        return mac(a[0], b[0]);
    }
    let pts = common_rows(a, b);
    if 3 * pts.len() < a.len().max(b.len()) {
        return 0.0;
    }
    let qa = matrix(a, &pts).qr().compute_thin_Q();
    let qb = matrix(b, &pts).qr().compute_thin_Q();
    let c = qa.adjoint() * &qb;
    match c.singular_values() {
        Ok(s) => s.iter().map(|x| x * x).sum::<f64>() / a.len().min(b.len()) as f64,
        Err(_) => 0.0,
    }
}

/// Modes grouped by frequency: indices in increasing frequency, a new group wherever the
/// relative gap to the previous mode exceeds `tolerance`.
pub fn degenerate_groups(freqs_hz: &[f64], tolerance: f64) -> Vec<Vec<usize>> {
    let mut order: Vec<usize> = (0..freqs_hz.len()).collect();
    order.sort_by(|&i, &j| freqs_hz[i].total_cmp(&freqs_hz[j]));
    let mut groups: Vec<Vec<usize>> = Vec::new();
    let mut last = f64::NAN;
    for i in order {
        let f = freqs_hz[i];
        match groups.last_mut() {
            Some(g) if (f - last).abs() <= tolerance * last.abs() => g.push(i),
            _ => groups.push(vec![i]),
        }
        last = f;
    }
    groups
}

/// One continued track: which mode of the previous variant, and the overlap it was
/// matched with.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Continuation {
    pub previous: usize,
    pub overlap: f64,
}

fn fields_of<'a>(m: &'a [ProbedMode], g: &[usize]) -> Vec<&'a ProbeField> {
    g.iter().map(|&i| &m[i].field).collect()
}

/// For each mode of `next`, the mode of `prev` it continues (module docs), or `None`.
pub fn match_modes(
    prev: &[ProbedMode],
    next: &[ProbedMode],
    opts: &TrackOptions,
) -> Vec<Option<Continuation>> {
    let freqs = |m: &[ProbedMode]| m.iter().map(|x| x.frequency_hz).collect::<Vec<_>>();
    let gp = degenerate_groups(&freqs(prev), opts.group_tolerance);
    let gn = degenerate_groups(&freqs(next), opts.group_tolerance);
    let mut pairs: Vec<(f64, usize, usize)> = Vec::new();
    for (a, ga) in gp.iter().enumerate() {
        for (b, gb) in gn.iter().enumerate() {
            let s = subspace_overlap(&fields_of(prev, ga), &fields_of(next, gb));
            if s >= opts.min_overlap {
                pairs.push((s, a, b));
            }
        }
    }
    pairs.sort_by(|x, y| y.0.total_cmp(&x.0));
    let mut used_prev = vec![false; prev.len()];
    let mut out: Vec<Option<Continuation>> = vec![None; next.len()];
    for (score, a, b) in pairs {
        // Modes still free in both groups, paired by decreasing MAC.
        let mut cands: Vec<(f64, usize, usize)> = Vec::new();
        for &i in gp[a].iter().filter(|&&i| !used_prev[i]) {
            for &j in gn[b].iter().filter(|&&j| out[j].is_none()) {
                cands.push((mac(&prev[i].field, &next[j].field), i, j));
            }
        }
        cands.sort_by(|x, y| y.0.total_cmp(&x.0));
        for (_, i, j) in cands {
            if !used_prev[i] && out[j].is_none() {
                used_prev[i] = true;
                out[j] = Some(Continuation {
                    previous: i,
                    overlap: score,
                });
            }
        }
    }
    out
}

/// Track ids along a chain of variants: `chain[v]` are the modes of variant v, and
/// `starts[v]` says that variant v begins a new chain (no neighbour before it). Returns
/// per variant the track id of each mode and the overlap that continued it (`None` for
/// a track's first mode). Ids are numbered from 0 in order of appearance.
pub fn track_ids(
    chain: &[Vec<ProbedMode>],
    starts: &[bool],
    opts: &TrackOptions,
) -> Vec<Vec<(usize, Option<f64>)>> {
    let parents: Vec<Option<usize>> = (0..chain.len())
        .map(|v| (v > 0 && !starts[v]).then(|| v - 1))
        .collect();
    track_tree(chain, &parents, opts)
}

/// Track ids over a tree of variants: variant v continues the tracks of `parents[v]`
/// (an earlier variant, `parents[v] < v`) or starts new ones (`None`). Each mode of v
/// paired with a mode of its parent ([`match_modes`]) takes that mode's id, so a track
/// holds at most one mode per variant and runs along every edge of the tree (over a
/// grid of several parameters: one track id for the same mode in every variant the
/// tree's edges reach). Ids are numbered from 0 in order of appearance.
pub fn track_tree(
    modes: &[Vec<ProbedMode>],
    parents: &[Option<usize>],
    opts: &TrackOptions,
) -> Vec<Vec<(usize, Option<f64>)>> {
    let mut next_id = 0;
    let mut out: Vec<Vec<(usize, Option<f64>)>> = Vec::with_capacity(modes.len());
    for (v, ms) in modes.iter().enumerate() {
        let parent = parents.get(v).copied().flatten().filter(|&p| p < v);
        let matched = match parent {
            None => vec![None; ms.len()],
            Some(p) => match_modes(&modes[p], ms, opts),
        };
        let mut ids = Vec::with_capacity(ms.len());
        for m in matched {
            match (m, parent) {
                (Some(c), Some(p)) => ids.push((out[p][c.previous].0, Some(c.overlap))),
                _ => {
                    ids.push((next_id, None));
                    next_id += 1;
                }
            }
        }
        out.push(ids);
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn field(v: &[[f64; 3]]) -> ProbeField {
        v.iter()
            .map(|e| Some(e.map(|x| c64::new(x, 0.0))))
            .collect()
    }

    /// MAC is scale- and phase-invariant and 0 for orthogonal fields (the definition).
    #[test]
    fn mac_of_scaled_and_orthogonal_fields() {
        let a = field(&[[1.0, 0.0, 0.0], [0.0, 2.0, 0.0]]);
        let b: ProbeField = a
            .iter()
            .map(|e| e.map(|v| v.map(|x| x * c64::new(0.0, -3.0))))
            .collect();
        assert!((mac(&a, &b) - 1.0).abs() < 1e-15);
        let c = field(&[[0.0, 1.0, 0.0], [0.0, 0.0, 5.0]]);
        assert_eq!(mac(&a, &c), 0.0);
    }

    /// A degenerate pair rotated by 30° spans the same plane: every principal angle is 0
    /// and the overlap 1, though each rotated mode has MAC cos²30° = 0.75 with its
    /// counterpart (Golub and Van Loan, §6.4.3: cos θ are singular values of Q_AᴴQ_B).
    #[test]
    fn rotated_degenerate_pair_is_the_same_subspace() {
        let u = field(&[[1.0, 0.0, 0.0], [0.0, 0.0, 0.0], [0.0, 0.0, 1.0]]);
        let w = field(&[[0.0, 1.0, 0.0], [1.0, 0.0, 0.0], [0.0, 0.0, 0.0]]);
        let (c, s) = (30f64.to_radians().cos(), 30f64.to_radians().sin());
        let mix = |p: f64, q: f64| -> ProbeField {
            u.iter()
                .zip(&w)
                .map(|(a, b)| {
                    Some(std::array::from_fn(|k| {
                        a.unwrap()[k] * p + b.unwrap()[k] * q
                    }))
                })
                .collect()
        };
        let (r1, r2) = (mix(c, s), mix(-s, c));
        assert!((mac(&u, &r1) - 0.75).abs() < 1e-12);
        let o = subspace_overlap(&[&u, &w], &[&r1, &r2]);
        assert!((o - 1.0).abs() < 1e-12, "overlap {o}");
        // One member of a pair that splits lies wholly in the old plane.
        assert!((subspace_overlap(&[&u, &w], &[&r1]) - 1.0).abs() < 1e-12);
    }

    /// Two modes that swap frequency order between variants keep their tracks.
    #[test]
    fn tracks_follow_fields_through_a_crossing() {
        let a = field(&[[1.0, 0.0, 0.0], [0.0, 1.0, 0.0]]);
        let b = field(&[[0.0, 0.0, 1.0], [1.0, 0.0, -1.0]]);
        let m = |f: f64, x: &ProbeField| ProbedMode {
            frequency_hz: f,
            field: x.clone(),
        };
        let chain = vec![
            vec![m(1.0e9, &a), m(1.1e9, &b)],
            vec![m(1.0e9, &b), m(1.1e9, &a)],
        ];
        let ids = track_ids(&chain, &[true, false], &TrackOptions::default());
        assert_eq!(ids[1][0].0, ids[0][1].0);
        assert_eq!(ids[1][1].0, ids[0][0].0);
        assert_eq!(
            degenerate_groups(&[2.0, 1.0, 1.001], 2e-3),
            vec![vec![1, 2], vec![0]]
        );
    }

    /// Over a 2 × 2 grid whose tree runs (0,0) → (0,1), (0,0) → (1,0) → (1,1), the
    /// modes of the second row keep the first row's ids by their fields, though their
    /// frequency order is swapped there.
    #[test]
    fn tracks_continue_across_rows_of_a_grid() {
        let a = field(&[[1.0, 0.0, 0.0], [0.0, 1.0, 0.0]]);
        let b = field(&[[0.0, 0.0, 1.0], [1.0, 0.0, -1.0]]);
        let m = |f: f64, x: &ProbeField| ProbedMode {
            frequency_hz: f,
            field: x.clone(),
        };
        let modes = vec![
            vec![m(1.0e9, &a), m(1.1e9, &b)],
            vec![m(1.0e9, &a), m(1.1e9, &b)],
            vec![m(1.0e9, &b), m(1.1e9, &a)],
            vec![m(1.0e9, &b), m(1.1e9, &a)],
        ];
        let ids = track_tree(
            &modes,
            &[None, Some(0), Some(0), Some(2)],
            &TrackOptions::default(),
        );
        let id = |v: usize, k: usize| ids[v][k].0;
        assert_eq!((id(0, 0), id(0, 1)), (0, 1));
        assert_eq!((id(1, 0), id(1, 1)), (0, 1));
        assert_eq!((id(2, 0), id(2, 1)), (1, 0));
        assert_eq!((id(3, 0), id(3, 1)), (1, 0));
        // Without the row edge the second row starts new tracks.
        let apart = track_tree(
            &modes,
            &[None, Some(0), None, Some(2)],
            &TrackOptions::default(),
        );
        assert_eq!((apart[2][0].0, apart[2][1].0), (2, 3));
    }
}
