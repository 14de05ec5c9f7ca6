//! Driven response: the cavity fed through its ports at a real frequency.
//!
//! Parts that do not depend on the eigen pipeline: the parametrised system in affine form
//! ([`affine`]), the bases of the projection ([`basis`]), the fast sweep by Krylov
//! projection ([`sweep`]), the complex solve through the real 2n form ([`real_form`]),
//! and the uniformity and temperature figures of a heating pattern ([`uniformity`]).

pub mod affine;
pub mod basis;
pub mod real_form;
pub mod sweep;
pub mod uniformity;

#[cfg(test)]
mod sweep_tests;
