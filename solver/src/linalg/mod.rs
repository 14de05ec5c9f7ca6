//! Linear algebra of the solver, independent of the discretisation: sparse matrices and
//! their products ([`sparse`]), the fill-reducing ordering ([`ordering`]), the symmetric
//! sparse factorisation of a shifted operator ([`factor`]) and its tree-parallel
//! triangular solves ([`triangular`]), products of tall dense blocks ([`tall_skinny`]),
//! and the block Krylov–Schur eigen iteration ([`eigen`]).

pub mod bunch_kaufman;
pub mod complex_ldlt;
pub mod eigen;
pub mod factor;
pub mod mixed;
pub mod ordering;
pub mod sparse;
pub mod supernodal_ldlt;
pub mod tall_skinny;
pub mod triangular;

/// Euclidean inner product xᵀy of two vectors of one length.
pub fn dot(x: &[f64], y: &[f64]) -> f64 {
    x.iter().zip(y).map(|(a, b)| a * b).sum()
}

/// Euclidean norm ‖x‖₂.
pub fn norm(x: &[f64]) -> f64 {
    x.iter().map(|v| v * v).sum::<f64>().sqrt()
}
