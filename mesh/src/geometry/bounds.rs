//! What a cavity solver can mean: bounds on lengths, frequencies and counts, checked
//! while reading a file (with its location) and again by the mesher after command-line
//! overrides.
//!
//! The bounds are common practice for microwave cavities, no source: a cavity is a few
//! wavelengths across at most a few hundred, so lengths from 1 µm (a fine detail of a
//! millimetre-wave part) to 100 m (a shielded room) and frequencies from 1 MHz to
//! 1 THz cover every cavity the element-count limit could mesh anyway. They exist so that
//! a typing slip (`1e-30`, `1e30`) is refused by name instead of reaching the mesher.

/// Smallest length anywhere in a geometry (mm): 1 µm.
pub const MIN_LENGTH_MM: f64 = 1e-3;
/// Largest length anywhere in a geometry (mm): 100 m.
pub const MAX_LENGTH_MM: f64 = 1e5;
/// Lowest target or band frequency (GHz): 1 MHz.
pub const MIN_FREQUENCY_GHZ: f64 = 1e-3;
/// Highest target or band frequency (GHz): 1 THz.
pub const MAX_FREQUENCY_GHZ: f64 = 1e3;
/// Most modes one solve may ask for: each needs its own field file and the eigen basis
/// grows with the count (three vectors per mode), so beyond this the basis alone is
/// larger than the problems the machine can factor.
pub const MAX_COUNT: usize = 10_000;
/// Most elements per wavelength: 100 is already ~4600× the unknowns of the default 6.
pub const MAX_PER_WAVELENGTH: f64 = 100.0;

/// `None` when `v` lies in `[lo, hi]`, else what is allowed (for the error message).
pub fn out_of_range(v: f64, lo: f64, hi: f64, unit: &str) -> Option<String> {
    if v.is_finite() && v >= lo && v <= hi {
        None
    } else {
        Some(format!(
            "must lie between {lo:e} and {hi:e} {unit} (what a cavity solver can mean)"
        ))
    }
}
