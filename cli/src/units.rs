//! Number formatting for the terminal (physical constants live in
//! `antinode_solver::constants`).

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
