//! Basis functions as sums of barycentric terms.
//!
//! A function is Σ c·λ^α ∇λm ([`ValueTerm`]) and its curl Σ c·λ^β (∇λl × ∇λm)
//! ([`CurlTerm`]), from curl(λ^α ∇λm) = Σ_l α_l λ^{α − e_l} ∇λl × ∇λm (curl ∇ = 0, product
//! rule). In this form every element integral is a sum of exact monomial integrals times
//! the element's geometric contractions (see [`crate::fem::barycentric`]).

use crate::fem::barycentric::{self, Exponents};
use crate::fem::element::EDGES;

/// c · λ^α ∇λm
#[derive(Clone, Copy, Debug)]
pub(super) struct ValueTerm {
    pub c: f64,
    pub alpha: Exponents,
    pub m: usize,
}

/// c · λ^β (∇λ_{PAIR.0} × ∇λ_{PAIR.1}), pair index into [`EDGES`].
#[derive(Clone, Copy, Debug)]
pub(super) struct CurlTerm {
    pub c: f64,
    pub beta: Exponents,
    pub pair: usize,
}

/// Exponents of λi alone.
pub(super) fn unit(i: usize) -> Exponents {
    let mut e = [0u8; 4];
    e[i] = 1;
    e
}

/// Exponents of a product of barycentric coordinates, `[i, j, ...]` → λi λj ….
pub(super) fn mono(factors: &[usize]) -> Exponents {
    factors
        .iter()
        .fold([0u8; 4], |acc, &i| barycentric::add(acc, unit(i)))
}

/// λ^α w_ij with the Whitney function w_ij = λi ∇λj − λj ∇λi.
pub(super) fn scaled_whitney(alpha: Exponents, i: usize, j: usize) -> Vec<ValueTerm> {
    vec![
        ValueTerm {
            c: 1.0,
            alpha: barycentric::add(alpha, unit(i)),
            m: j,
        },
        ValueTerm {
            c: -1.0,
            alpha: barycentric::add(alpha, unit(j)),
            m: i,
        },
    ]
}

/// ∇(Σ c λ^α) for a scalar polynomial given as (coefficient, exponents) pairs:
/// Σ_m c α_m λ^{α − e_m} ∇λm.
pub(super) fn gradient(poly: &[(f64, Exponents)]) -> Vec<ValueTerm> {
    let mut out = Vec::new();
    for &(c, alpha) in poly {
        for m in 0..4 {
            if alpha[m] == 0 {
                continue;
            }
            let mut a = alpha;
            a[m] -= 1;
            out.push(ValueTerm {
                c: c * alpha[m] as f64,
                alpha: a,
                m,
            });
        }
    }
    merge_values(out)
}

/// Sum the coefficients of equal (α, m) terms and drop the zero ones.
pub(super) fn merge_values(terms: Vec<ValueTerm>) -> Vec<ValueTerm> {
    let mut out: Vec<ValueTerm> = Vec::with_capacity(terms.len());
    for t in terms {
        match out.iter_mut().find(|o| o.alpha == t.alpha && o.m == t.m) {
            Some(o) => o.c += t.c,
            None => out.push(t),
        }
    }
    out.retain(|t| t.c != 0.0);
    out
}

fn pair_index(l: usize, m: usize) -> (usize, f64) {
    let (a, b, s) = if l < m { (l, m, 1.0) } else { (m, l, -1.0) };
    let idx = EDGES
        .iter()
        .position(|&e| e == (a, b))
        .expect("valid vertex pair");
    (idx, s)
}

/// curl(c λ^α ∇λm) = Σ_l c α_l λ^{α − e_l} ∇λl × ∇λm, equal terms merged (the curl of a
/// gradient function then has no terms at all).
pub(super) fn curl_of(value: &[ValueTerm]) -> Vec<CurlTerm> {
    let mut out: Vec<CurlTerm> = Vec::new();
    for t in value {
        for l in 0..4 {
            if t.alpha[l] == 0 || l == t.m {
                continue;
            }
            let mut beta = t.alpha;
            beta[l] -= 1;
            let (pair, s) = pair_index(l, t.m);
            let c = s * t.c * t.alpha[l] as f64;
            match out.iter_mut().find(|o| o.beta == beta && o.pair == pair) {
                Some(o) => o.c += c,
                None => out.push(CurlTerm { c, beta, pair }),
            }
        }
    }
    out.retain(|t| t.c != 0.0);
    out
}
