//! Fill-reducing ordering by geometric nested dissection.
//!
//! Finite-element matrices couple unknowns that are close in space. Cutting the set of
//! unknowns by a plane at the median coordinate (along the longest extent) and taking as
//! separator the unknowns of one side that couple to the other leaves two independent
//! halves; ordering each half recursively and the separator last confines fill to the
//! separators (George, SIAM J. Numer. Anal. 10 (1973) 345; for 3-D meshes the fill grows
//! like n^{4/3} instead of the n^{5/3} of banded orders — from memory). Minimum-degree
//! orders do well on small problems but fall behind on large 3-D ones.

use crate::assembly::SparseMatrix;

/// Sets at or below this size are not split further.
const LEAF: usize = 48;

/// A nested-dissection permutation of the unknowns of `a` (symmetric pattern) located at
/// `coords`: returns (forward, inverse) with forward[k] = the unknown eliminated k-th and
/// inverse[forward[k]] = k.
pub fn nested_dissection(a: &SparseMatrix, coords: &[[f64; 3]]) -> (Vec<u32>, Vec<u32>) {
    let n = a.rows();
    assert_eq!(coords.len(), n, "one coordinate per unknown");
    let indptr = a.indptr().into_raw_storage();
    let indices = a.indices();
    let mut label = vec![u32::MAX; n];
    let mut next_label = 0u32;
    let mut order = Vec::with_capacity(n);
    let mut ids: Vec<u32> = (0..n as u32).collect();
    // Explicit stack of (set, separator to emit after it) to avoid deep recursion.
    enum Task {
        Split(Vec<u32>),
        Emit(Vec<u32>),
    }
    let mut stack = vec![Task::Split(std::mem::take(&mut ids))];
    while let Some(task) = stack.pop() {
        match task {
            Task::Emit(sep) => order.extend(sep),
            Task::Split(mut set) => {
                if set.len() <= LEAF {
                    order.extend(set);
                    continue;
                }
                let mut lo = [f64::INFINITY; 3];
                let mut hi = [f64::NEG_INFINITY; 3];
                for &v in &set {
                    for d in 0..3 {
                        lo[d] = lo[d].min(coords[v as usize][d]);
                        hi[d] = hi[d].max(coords[v as usize][d]);
                    }
                }
                let axis = (0..3)
                    .max_by(|&x, &y| (hi[x] - lo[x]).total_cmp(&(hi[y] - lo[y])))
                    .unwrap_or(0);
                let mid = set.len() / 2;
                set.select_nth_unstable_by(mid, |&x, &y| {
                    coords[x as usize][axis].total_cmp(&coords[y as usize][axis])
                });
                let b_part = set.split_off(mid);
                let b_label = next_label;
                next_label += 1;
                for &v in &b_part {
                    label[v as usize] = b_label;
                }
                let (sep, a_part): (Vec<u32>, Vec<u32>) = set.into_iter().partition(|&v| {
                    let (s, e) = (indptr[v as usize] as usize, indptr[v as usize + 1] as usize);
                    indices[s..e].iter().any(|&u| label[u as usize] == b_label)
                });
                // Processed last-in-first-out: A, then B, then the separator.
                stack.push(Task::Emit(sep));
                stack.push(Task::Split(b_part));
                stack.push(Task::Split(a_part));
            }
        }
    }
    let mut inverse = vec![0u32; n];
    for (k, &v) in order.iter().enumerate() {
        inverse[v as usize] = k as u32;
    }
    (order, inverse)
}

/// Interleave an ordering of n unknowns into one of the 2n-unknown real form
/// (unknown i and its imaginary partner n + i eliminated together).
pub fn doubled(forward: &[u32]) -> (Vec<u32>, Vec<u32>) {
    let n = forward.len() as u32;
    let fwd: Vec<u32> = forward.iter().flat_map(|&v| [v, v + n]).collect();
    let mut inv = vec![0u32; fwd.len()];
    for (k, &v) in fwd.iter().enumerate() {
        inv[v as usize] = k as u32;
    }
    (fwd, inv)
}
