//! Post-processing of computed modes: losses and Q ([`losses`]), the fields E, H and the
//! heating density on the mesh ([`field`]), and the figures of a band of modes
//! ([`band`]: Weyl estimate, completeness, distinct frequencies, modal overlap), and one
//! mode's isolated-resonance curves ([`resonance`]); the closed-form lowest mode of an
//! empty box or cylinder ([`lowest_mode`]), a run's expected accuracy from the benchmark
//! ([`accuracy`]) and the warnings about a run ([`warnings`]).
//!
//! Everything here works on a [`crate::fem::Space`] and coefficient vectors; nothing
//! depends on how the modes were found, so the driven response can use it as well.

pub mod accuracy;
pub mod band;
pub mod field;
pub mod losses;
pub mod lowest_mode;
pub mod probes;
pub mod resonance;
pub mod tracking;
pub mod warnings;
