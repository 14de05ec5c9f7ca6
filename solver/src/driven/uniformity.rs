//! Uniformity of the absorbed power density over a load, and first-order heating.
//!
//! From cell values q_c (W/m³) and cell volumes V_c of one load (V = Σ V_c):
//!
//! * mean q̄ = Σ q_c V_c / V (volume-weighted), so q̄ V is the load's absorbed power;
//! * coefficient of variation COV = σ/q̄ with σ² = Σ (q_c − q̄)² V_c / V;
//! * max/mean and min/mean of the cell values;
//! * hot fraction: volume share with q_c > 2 q̄; cold fraction: q_c < q̄/2.
//!
//! These are the figures used in the microwave-heating literature to judge evenness; the
//! hot/cold thresholds 2× and ½× the mean are common practice, no source.
//!
//! Temperature rise over a heating time t without heat conduction, latent heat or
//! property changes (first order, constant density ρ and specific heat c_p):
//! ΔT_c = q_c t / (ρ c_p); the load's mean rise ΔT̄ = q̄ t/(ρ c_p) = P t/(m c_p), which
//! is the calorimetric relation P = m c_p ΔT̄ / t of oven power tests (common practice)
//! read backwards: with no conduction and no losses to the surroundings the two agree
//! exactly, so a measured calorimetric power is comparable to the computed absorbed
//! power only to the extent those losses are small.

/// Threshold factor of the hot fraction (q > HOT × mean; common practice, no source).
pub const HOT: f64 = 2.0;
/// Threshold factor of the cold fraction (q < COLD × mean; common practice, no source).
pub const COLD: f64 = 0.5;

/// Uniformity figures of one load.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Uniformity {
    /// Volume-weighted mean q̄ (W/m³).
    pub mean: f64,
    /// σ/q̄ (volume-weighted).
    pub cov: f64,
    pub max_over_mean: f64,
    pub min_over_mean: f64,
    /// Volume fraction with q > [`HOT`] q̄.
    pub hot_fraction: f64,
    /// Volume fraction with q < [`COLD`] q̄.
    pub cold_fraction: f64,
    /// Load volume (m³).
    pub volume: f64,
}

/// Figures of the cells `(q, volume)` of one load; None for an empty load or one that
/// absorbs nothing (mean 0: the ratios do not exist).
pub fn uniformity(cells: &[(f64, f64)]) -> Option<Uniformity> {
    let volume: f64 = cells.iter().map(|c| c.1).sum();
    if volume <= 0.0 {
        return None;
    }
    let mean = cells.iter().map(|(q, v)| q * v).sum::<f64>() / volume;
    if mean <= 0.0 || !mean.is_finite() {
        return None;
    }
    let var = cells
        .iter()
        .map(|(q, v)| (q - mean).powi(2) * v)
        .sum::<f64>()
        / volume;
    let (lo, hi) = cells
        .iter()
        .fold((f64::INFINITY, f64::NEG_INFINITY), |(lo, hi), &(q, _)| {
            (lo.min(q), hi.max(q))
        });
    let share = |keep: &dyn Fn(f64) -> bool| {
        // `+ 0.0`: an empty sum is −0.0.
        (cells.iter().filter(|c| keep(c.0)).map(|c| c.1).sum::<f64>() + 0.0) / volume
    };
    Some(Uniformity {
        mean,
        cov: var.sqrt() / mean,
        max_over_mean: hi / mean,
        min_over_mean: lo / mean,
        hot_fraction: share(&|q| q > HOT * mean),
        cold_fraction: share(&|q| q < COLD * mean),
        volume,
    })
}

/// Temperature rise ΔT = q t/(ρ c_p) (K) of density q (W/m³) after `seconds`, with
/// density ρ (kg/m³) and specific heat c_p (J/(kg·K)).
pub fn temperature_rise(q: f64, seconds: f64, density: f64, specific_heat: f64) -> f64 {
    q * seconds / (density * specific_heat)
}

/// Calorimetric power P = m c_p ΔT / t (W) of a mass m (kg) warmed by ΔT (K) in t (s).
pub fn calorimetric_power(mass: f64, specific_heat: f64, delta_t: f64, seconds: f64) -> f64 {
    mass * specific_heat * delta_t / seconds
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::f64::consts::PI;

    /// q ∝ sin²(πx/a) (the TE10 heating pattern across a guide) on a fine partition of
    /// [0, a]: ⟨sin⁴⟩/⟨sin²⟩² = (3/8)/(1/4) = 3/2, so COV = √(1/2); max/mean = 2;
    /// min/mean = 0; sin² > 2·(1/2) never holds, so no hot volume; sin² < 1/4 where
    /// |sin(πx/a)| < 1/2, i.e. x/a < 1/6 or > 5/6: cold fraction 1/3 (analytic).
    #[test]
    fn sine_squared_profile() {
        let n = 600_000;
        let cells: Vec<(f64, f64)> = (0..n)
            .map(|i| {
                let x = (i as f64 + 0.5) / n as f64;
                ((PI * x).sin().powi(2), 1.0 / n as f64)
            })
            .collect();
        let u = uniformity(&cells).expect("figures");
        // Midpoint rule: errors O(1/n²) in the moments, O(1/n) in the threshold shares
        // (one cell straddles each threshold).
        assert!((u.mean - 0.5).abs() < 1e-10);
        assert!((u.cov - 0.5f64.sqrt()).abs() < 1e-10, "COV {}", u.cov);
        assert!((u.max_over_mean - 2.0).abs() < 1e-10);
        assert!(u.min_over_mean < 1e-10);
        assert_eq!(u.hot_fraction, 0.0);
        assert!((u.cold_fraction - 1.0 / 3.0).abs() < 2.0 / n as f64);
    }

    /// Two cells, volumes 1 and 3, q = 4 and 0: mean 1, σ² = (9·1 + 1·3)/4 = 3, hot share
    /// 1/4 (q = 4 > 2), cold share 3/4 (q = 0 < 1/2), max/mean 4, min/mean 0 (hand count).
    #[test]
    fn two_cells_by_hand() {
        let u = uniformity(&[(4.0, 1.0), (0.0, 3.0)]).expect("figures");
        assert_eq!(u.mean, 1.0);
        assert!((u.cov - 3f64.sqrt()).abs() < 1e-15);
        assert_eq!((u.hot_fraction, u.cold_fraction), (0.25, 0.75));
        assert_eq!((u.max_over_mean, u.min_over_mean), (4.0, 0.0));
        assert!(uniformity(&[(0.0, 1.0)]).is_none());
        assert!(uniformity(&[]).is_none());
    }

    /// 1 kg of water (c_p 4186 J/(kg K), a textbook round value, from memory) warmed by
    /// 10 K in 60 s took 697.7 W: the calorimetric relation and the per-cell rise invert
    /// each other for uniform heating (q = P/V with V = m/ρ).
    #[test]
    fn calorimetry_inverts_the_temperature_rise() {
        let (m, cp, rho, t) = (1.0, 4186.0, 998.0, 60.0);
        let p = calorimetric_power(m, cp, 10.0, t);
        assert!((p - 697.666_666_666_666_7).abs() < 1e-9);
        let q = p / (m / rho);
        assert!((temperature_rise(q, t, rho, cp) - 10.0).abs() < 1e-12);
    }
}
