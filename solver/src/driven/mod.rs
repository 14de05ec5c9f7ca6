//! Driven response: the cavity fed through its ports at real frequencies.
//!
//! In pipeline order: the driven operator with its port sources and wall term
//! ([`system`]: formulation, normalisation and the energy identity), the parametrised
//! system in affine form ([`affine`]), the fast sweep by Krylov projection ([`sweep`],
//! with its bases in [`basis`]), S-parameters, power split and heating density
//! ([`response`]), uniformity and temperature figures ([`uniformity`]), the heating
//! averaged over a turntable's rotation in the load's frame ([`rotation`]), and the
//! pipeline [`solve_driven`] ([`solve`]).

pub mod affine;
pub mod basis;
pub mod loads;
pub mod response;
pub mod rotation;
pub mod solve;
pub mod sweep;
pub mod system;
pub mod uniformity;

pub use solve::{
    solve_direct, solve_driven, AtFrequency, DriveSettings, DriveStage, DrivenField, DrivenResponse,
};

#[cfg(test)]
mod sweep_tests;
