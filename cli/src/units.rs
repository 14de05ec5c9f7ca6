//! Physical constants and small unit helpers used by the command-line front end.

/// Speed of light in vacuum, m/s (exact SI value).
pub const C0: f64 = 299_792_458.0;
/// Vacuum permittivity, F/m (CODATA 2018).
pub const EPS0: f64 = 8.854_187_812_8e-12;
/// Vacuum permeability, H/m (CODATA 2018).
pub const MU0: f64 = 1.256_637_062_12e-6;

/// A volume in m³ written in litres (≥ 0.1 L) or mm³.
pub fn volume(m3: f64) -> String {
    let litres = m3 * 1e3;
    if litres >= 0.1 {
        format!("{litres:.3} L")
    } else {
        format!("{:.0} mm³", m3 * 1e9)
    }
}

/// A byte count in MB or GB.
pub fn bytes(b: f64) -> String {
    if b >= 1e9 {
        format!("{:.2} GB", b / 1e9)
    } else {
        format!("{:.0} MB", b / 1e6)
    }
}
