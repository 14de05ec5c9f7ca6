//! Post-processing of computed modes: losses and Q ([`losses`]), the fields E, H and the
//! heating density on the mesh ([`field`]), and the figures of a band of modes
//! ([`band`]: Weyl estimate, completeness, distinct frequencies, modal overlap), and one
//! mode's isolated-resonance curves ([`resonance`]).
//!
//! Everything here works on a [`crate::fem::Space`] and coefficient vectors; nothing
//! depends on how the modes were found, so the driven response can use it as well.

pub mod band;
pub mod field;
pub mod losses;
pub mod probes;
pub mod resonance;
pub mod tracking;
