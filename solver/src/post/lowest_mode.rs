//! The lowest resonance of an empty box or cylinder cavity with perfectly conducting
//! walls, from the closed-form mode lists (used to tell a cavity far too small for the
//! target apart from a real design).
//!
//! * Box a × b × d (Pozar, Microwave Engineering, 4th ed., §6.3, eq. 6.40 and the TE101
//!   example): f_mnp = (c/2)·√((m/a)² + (n/b)² + (p/d)²), with at most one index zero.
//!   The lowest is therefore the mode with the two largest sides L1 ≥ L2 carrying one
//!   half-wave each: f = (c/2)·√(1/L1² + 1/L2²) (TE101 when a and d are the largest).
//! * Cylinder of radius a and height d (Pozar, 4th ed., §6.4, eqs. 6.58 and 6.62):
//!   TE_nml: f = c/(2π)·√((p′_nm/a)² + (lπ/d)²), l ≥ 1; TM_nml: f = c/(2π)·√((p_nm/a)² +
//!   (lπ/d)²), l ≥ 0. The lowest is TM010 (p_01 = 2.405, height-independent) or TE111
//!   (p′_11 = 1.841, Pozar Tables 3.4 and 3.3), whichever is lower: TE111 for tall
//!   cylinders (d > 2.03 a), TM010 for flat ones.

use crate::constants::C0;

/// First zero of J0 (p_01; Pozar, 4th ed., Table 3.4).
pub const BESSEL_J0_ZERO: f64 = 2.405;
/// First zero of J1′ (p′_11; Pozar, 4th ed., Table 3.3).
pub const BESSEL_J1_PRIME_ZERO: f64 = 1.841;

/// A cavity's lowest mode: its frequency and its name.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LowestMode {
    pub frequency_hz: f64,
    /// Mode label, e.g. "TE101" or "TM010".
    pub label: &'static str,
}

/// Lowest mode of an empty box with sides `size_m` (m) and PEC walls.
pub fn box_lowest(size_m: [f64; 3]) -> LowestMode {
    let mut s = size_m;
    s.sort_by(|a, b| b.total_cmp(a));
    LowestMode {
        frequency_hz: 0.5 * C0 * (s[0].powi(-2) + s[1].powi(-2)).sqrt(),
        label: "TE101 (one half-wave along each of the two longest sides)",
    }
}

/// Lowest mode of an empty cylinder of radius `radius_m` and height `height_m` (m).
pub fn cylinder_lowest(radius_m: f64, height_m: f64) -> LowestMode {
    let tm010 = C0 / (2.0 * std::f64::consts::PI) * BESSEL_J0_ZERO / radius_m;
    let te111 = C0 / (2.0 * std::f64::consts::PI)
        * ((BESSEL_J1_PRIME_ZERO / radius_m).powi(2) + (std::f64::consts::PI / height_m).powi(2))
            .sqrt();
    if te111 < tm010 {
        LowestMode {
            frequency_hz: te111,
            label: "TE111",
        }
    } else {
        LowestMode {
            frequency_hz: tm010,
            label: "TM010",
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// Against a brute-force search of the box mode list (Pozar 4th ed. eq. 6.40 with at
    /// most one zero index), for boxes of every side ordering. Tolerance: round-off.
    #[test]
    fn box_lowest_is_the_minimum_of_the_mode_list() {
        for size in [
            [0.3, 0.3, 0.2],
            [0.2, 0.5, 0.1],
            [0.05, 0.04, 0.3],
            [1.0, 1.0, 1.0],
        ] {
            let mut best = f64::INFINITY;
            for m in 0..4 {
                for n in 0..4 {
                    for p in 0..4 {
                        let zeros = (m == 0) as u8 + (n == 0) as u8 + (p == 0) as u8;
                        if zeros > 1 {
                            continue;
                        }
                        let f = 0.5
                            * C0
                            * ((m as f64 / size[0]).powi(2)
                                + (n as f64 / size[1]).powi(2)
                                + (p as f64 / size[2]).powi(2))
                            .sqrt();
                        best = best.min(f);
                    }
                }
            }
            let got = box_lowest(size).frequency_hz;
            assert!(
                (got - best).abs() <= 1e-12 * best,
                "{size:?}: {got} vs {best}"
            );
        }
    }

    /// The 300 × 300 × 200 mm box's lowest mode: (c/2)·√2/0.3 m = 706.6 MHz (one
    /// half-wave along each 300 mm side; Pozar 4th ed. eq. 6.40, worked by hand).
    #[test]
    fn box_of_the_examples() {
        let f = box_lowest([0.3, 0.3, 0.2]).frequency_hz;
        assert!((f - 706.6e6).abs() < 0.1e6, "{f}");
    }

    /// Pozar 4th ed. §6.4: TM010 does not depend on the height, TE111 is the lowest of a
    /// tall cylinder, and the two cross where (p′11/a)² + (π/d)² = (p01/a)², i.e. at
    /// d/a = π/√(p01² − p′11²) = 2.03 (worked from the table values).
    #[test]
    fn cylinder_lowest_switches_at_the_mode_chart_crossing() {
        let a = 0.1;
        let cross =
            std::f64::consts::PI / (BESSEL_J0_ZERO.powi(2) - BESSEL_J1_PRIME_ZERO.powi(2)).sqrt();
        assert!((cross - 2.03).abs() < 0.005, "{cross}");
        assert_eq!(cylinder_lowest(a, 0.9 * cross * a).label, "TM010");
        assert_eq!(cylinder_lowest(a, 1.1 * cross * a).label, "TE111");
        let tm = cylinder_lowest(a, 0.05).frequency_hz;
        let expect = C0 * BESSEL_J0_ZERO / (2.0 * std::f64::consts::PI * a);
        assert!((tm - expect).abs() <= 1e-12 * expect);
        // 1.148 GHz for a = 100 mm (c·2.405/(2π·0.1 m), worked by hand).
        assert!((tm - 1.1475e9).abs() < 1e6, "{tm}");
    }
}
