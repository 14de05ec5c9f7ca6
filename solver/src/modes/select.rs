//! Which modes the iteration looks for, and which of the checked ones are returned.
//!
//! * Band: every eigenvalue λ = k0² within [`BAND_MARGIN`] × the distance from σ to the
//!   farther band edge (a disc in the complex λ plane), so that damped modes near the
//!   edges are caught too.
//! * Count: the `count` nearest σ plus [`COUNT_MARGIN`] more, since spurious fields are
//!   dropped after the iteration and the final choice of the nearest is made on the real
//!   frequency axis, where strongly damped modes sit nearer than in the λ plane.
//! * Returned: every mode in the band, the `count` nearest the target on the frequency
//!   axis, and the other members of a degenerate group (within [`DEGENERATE_REL`]) whose
//!   member is the `count`-th: never half a group.

use super::settings::ModeSettings;
use super::Mode;
use crate::constants::k0_squared;
use crate::linalg::eigen::Wanted;
use faer::c64;

/// Band searches reach this factor beyond the farther band edge.
pub const BAND_MARGIN: f64 = 1.25;

/// Extra modes sought beyond the requested count.
pub const COUNT_MARGIN: usize = 4;

/// Relative frequency difference below which two computed modes are one degenerate
/// eigenvalue. Members of a group that a symmetry makes exactly degenerate agree to
/// round-off (measured ~1e-14 on the cube); modes merely close in frequency differ by
/// their discretisation error or physics, ≥ ~1e-7 at any practical mesh (common
/// practice, no source).
pub const DEGENERATE_REL: f64 = 1e-9;

/// The search around the shift.
#[derive(Clone, Copy, Debug)]
pub struct Search {
    /// σ = k0²(target), m⁻².
    pub sigma: f64,
    /// Target wavenumber √σ, m⁻¹.
    pub k_target: f64,
    /// Radius of the band disc around σ (m⁻²), for a band search.
    pub band_radius: Option<f64>,
    /// What the iteration must converge.
    pub wanted: Wanted,
}

impl Search {
    pub fn new(settings: &ModeSettings) -> Self {
        let sigma = k0_squared(settings.target_hz);
        let band_radius = settings.band_hz.map(|[lo, hi]| {
            BAND_MARGIN
                * (k0_squared(hi) - sigma)
                    .abs()
                    .max((sigma - k0_squared(lo)).abs())
        });
        Self {
            sigma,
            k_target: sigma.sqrt(),
            band_radius,
            wanted: Wanted {
                nearest: settings.count + COUNT_MARGIN,
                theta_min: band_radius.map(|r| 1.0 / r),
                max: settings.max_modes,
                kernel_theta: Some(-1.0 / sigma),
            },
        }
    }

    /// Radius of the disc around σ inside which every eigenvalue was found: the band
    /// radius, or the distance of the farthest mode found if larger (or without a band).
    pub fn radius(&self, modes: &[Mode]) -> f64 {
        let reach = modes
            .iter()
            .map(|m| c64::new(m.k0_squared - self.sigma, m.k0_squared_imag).norm())
            .fold(0.0, f64::max);
        self.band_radius.map_or(reach, |r| r.max(reach))
    }
}

/// Keep the modes to return (see the module docs), sorted by frequency.
pub fn select(mut modes: Vec<Mode>, settings: &ModeSettings) -> Vec<Mode> {
    modes.sort_by(|a, b| {
        (a.frequency_hz - settings.target_hz)
            .abs()
            .total_cmp(&(b.frequency_hz - settings.target_hz).abs())
    });
    let in_band = |m: &Mode| {
        settings
            .band_hz
            .is_some_and(|[lo, hi]| m.frequency_hz >= lo && m.frequency_hz <= hi)
    };
    let cut = modes
        .get(settings.count.max(1) - 1)
        .map(|m| m.frequency_hz)
        .filter(|_| settings.count > 0);
    let mut rank = 0;
    modes.retain(|m| {
        rank += 1;
        rank <= settings.count
            || in_band(m)
            || cut.is_some_and(|f| (m.frequency_hz - f).abs() <= DEGENERATE_REL * f)
    });
    modes.sort_by(|a, b| a.frequency_hz.total_cmp(&b.frequency_hz));
    modes
}
