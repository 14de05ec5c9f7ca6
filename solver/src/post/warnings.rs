//! Warnings about a run whose figures should not be trusted as they stand: a cavity far
//! too small for the target (often lengths given in metres where the file wants mm), a
//! region meshed too coarsely for its local wavelength, modes found far from the asked
//! band, and settings whose expected frequency error is comparable with the spacing of
//! the modes. The library returns them typed ([`RunWarning`]); front ends print them.
//!
//! Thresholds (each is our own choice or common practice, said beside it):
//! * [`CAVITY_OCTAVE`]: the cavity's lowest analytic mode ([`super::lowest_mode`]) lies
//!   more than this factor above the highest frequency asked for;
//! * [`min_per_wavelength`]: fewer elements per local wavelength than this for the
//!   element order (3 at order 1, common practice; orders 2 and 3 from the mesh-size
//!   study);
//! * [`BAND_OCTAVE`]: a found mode lies more than this factor outside a band edge;
//! * [`SPACING_SHARE`]: the expected error ([`super::accuracy`]) exceeds this share of the
//!   mean spacing of the modes found in the band.

use super::accuracy::AccuracyEstimate;
use super::lowest_mode::{box_lowest, cylinder_lowest, LowestMode};
use crate::fem::assembly::RegionMaterial;
use crate::fem::NedelecOrder;
use crate::modes::{Mode, ModeSettings};
use crate::problem::mm_to_m;
use antinode_mesh::geometry::CavityShape;
use antinode_mesh::{Geometry, TetMesh};

/// A cavity whose lowest mode is more than this factor above the target (or the band's
/// upper edge) has no resonance within an octave of what was asked (our own threshold).
pub const CAVITY_OCTAVE: f64 = 2.0;

/// The metres hint is given when the cavity read as metres would have its lowest mode
/// at most this factor below the asked frequency (a 300 mm oven: 3.5; a 2 m tunnel
/// applicator at 2.45 GHz: ~25; our own bound).
pub const METRES_HINT_SPAN: f64 = 50.0;

/// Elements per local wavelength below which a first-order region is too coarse for any
/// field pattern to be represented (common practice, no source: "at least 3 per
/// wavelength" is the usual floor quoted for finite elements; 6–10 is the usual working
/// range).
pub const MIN_PER_WAVELENGTH: f64 = 3.0;

/// Elements per local wavelength (mean edge) below which a region is too coarse at
/// element order `order`. Order 1 keeps the common-practice floor [`MIN_PER_WAVELENGTH`]
/// (on the mesh-size study's references, `tests/tests/mesh_size_study.rs`, order 1 at
/// 2.6–2.7 per wavelength had worst frequency errors of 1.7e-2–3.5e-2). Orders 2 and 3
/// take the size at which their worst error in the same study is at or below that
/// level: order 2 at 1.74–1.85 gave 2.4e-3–1.6e-2, so 1.7; order 3 at 1.31–1.51 gave
/// 7.9e-4–6.0e-3, below order 1's level, and 1.3 is the coarsest size measured, so the
/// threshold stops there (README "Accuracy by order and mesh size"). Each order thus
/// warns at about the same "not resolved" error, not at the same element count. The
/// defaults (`antinode_mesh::geometry::default_per_wavelength`: 10, 5, 3) gave mean-edge
/// sizes of 9.2–9.4, 4.3–4.6 and 2.6–2.7 on the references (and 2.6–2.9 in the coarsest
/// region of each example in `geometries/` at the new defaults, README Performance),
/// above the thresholds, so a run at the defaults does not warn.
pub fn min_per_wavelength(order: NedelecOrder) -> f64 {
    match order {
        NedelecOrder::One => MIN_PER_WAVELENGTH,
        NedelecOrder::Two => MIN_PER_WAVELENGTH_ORDER2,
        NedelecOrder::Three => MIN_PER_WAVELENGTH_ORDER3,
    }
}

/// [`min_per_wavelength`] at order 2.
pub const MIN_PER_WAVELENGTH_ORDER2: f64 = 1.7;
/// [`min_per_wavelength`] at order 3.
pub const MIN_PER_WAVELENGTH_ORDER3: f64 = 1.3;

/// Modes more than this factor below the band's lower edge or above its upper edge are
/// "far outside" it (an octave; our own threshold).
pub const BAND_OCTAVE: f64 = 2.0;

/// The expected frequency error counts as comparable with the mode spacing above this
/// share of the mean spacing: neighbouring modes may then be misordered, merged or split
/// (our own threshold).
pub const SPACING_SHARE: f64 = 0.5;

/// Relative residual above which a listed mode is marked as suspect. The iteration
/// accepts a pair at a residual of 1e-8 in the shift-inverted problem
/// ([`crate::linalg::eigen::EigenOptions`]), and accepted pairs show ~1e-9 or less in
/// the original one; 100× the acceptance level is our own margin.
pub const RESIDUAL_SUSPECT: f64 = 1e-6;

/// |Q_eig/Q_bal − 1| up to which the Q check counts as agreeing. Both sides come from the
/// same discrete field, so they differ only by the first-order β correction at ports
/// and round-off; 2 % is our own threshold (the figures it checks are quoted to 3
/// significant digits).
pub const Q_CHECK_AGREES: f64 = 0.02;

/// Verdict of one mode's Q check (`q_check_relative`, None when both Q are infinite).
pub fn q_check_verdict(check: Option<f64>, has_ports: bool) -> &'static str {
    match check {
        None => "—",
        Some(c) if c.abs() <= Q_CHECK_AGREES => "ok",
        // With ports the unrefined balance uses β at the target (README, Limitations).
        Some(c) if c.is_finite() && has_ports => "β at target",
        Some(_) => "disagrees",
    }
}

/// A reason to distrust a run's figures.
#[derive(Clone, Debug, PartialEq)]
pub enum RunWarning {
    /// The cavity's lowest mode is far above the frequencies asked for.
    CavityTooSmall {
        lowest: LowestMode,
        /// Highest frequency asked for (target or band's upper edge), Hz.
        asked_hz: f64,
        /// The cavity's lengths in the file (mm) when they look like metres: the lowest
        /// mode of the same numbers read as metres, Hz.
        as_metres_hz: Option<f64>,
    },
    /// A region has fewer than [`min_per_wavelength`] elements per local wavelength.
    CoarseRegion {
        /// Region id (0 = air, i = load i) and its name.
        region: usize,
        name: String,
        per_wavelength: f64,
        /// The element order and its threshold ([`min_per_wavelength`]).
        order: u8,
        threshold: f64,
    },
    /// Found modes lie far outside the band.
    ModesOutsideBand {
        outside: usize,
        found: usize,
        band_hz: [f64; 2],
    },
    /// The expected frequency error is comparable with the mode spacing.
    CoarseForSpacing {
        order: u8,
        relative_error: f64,
        error_hz: f64,
        spacing_hz: f64,
    },
}

impl RunWarning {
    /// A short stable name for documents (`modes.json` `warnings[].kind`).
    pub fn kind(&self) -> &'static str {
        match self {
            RunWarning::CavityTooSmall { .. } => "cavity_too_small",
            RunWarning::CoarseRegion { .. } => "coarse_region",
            RunWarning::ModesOutsideBand { .. } => "modes_outside_band",
            RunWarning::CoarseForSpacing { .. } => "coarse_for_spacing",
        }
    }
}

impl std::fmt::Display for RunWarning {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            RunWarning::CavityTooSmall {
                lowest,
                asked_hz,
                as_metres_hz,
            } => {
                write!(
                    f,
                    "the cavity's lowest mode ({}, {:.4} GHz by the closed-form mode list, \
                     Pozar 4th ed. §6.3/§6.4) is more than {CAVITY_OCTAVE}× above the {:.4} GHz \
                     asked for: the cavity is tiny against the wavelength and nothing found \
                     near the target is a cavity mode of interest",
                    lowest.label,
                    lowest.frequency_hz * 1e-9,
                    asked_hz * 1e-9
                )?;
                if let Some(m) = as_metres_hz {
                    write!(
                        f,
                        "; lengths in the geometry file are in mm — read as metres the same \
                         numbers would have their lowest mode at {:.4} GHz: multiply them by 1000",
                        m * 1e-9
                    )?;
                }
                Ok(())
            }
            RunWarning::CoarseRegion {
                region,
                name,
                per_wavelength,
                order,
                threshold,
            } => {
                let basis = if *order == 1 {
                    "common practice, no source"
                } else {
                    "the order-1 floor of 3 carried to this order by the mesh-size study's error"
                };
                write!(
                    f,
                    "region {region} ({name}) has {per_wavelength:.2} elements per local \
                     wavelength (mean edge length), fewer than {threshold} at order {order} \
                     ({basis}): its fields are not resolved; raise --per-wavelength or lower \
                     --max-size"
                )
            }
            RunWarning::ModesOutsideBand {
                outside,
                found,
                band_hz,
            } => write!(
                f,
                "{outside} of the {found} modes found lie more than {BAND_OCTAVE}× outside the \
                 band {:.4}–{:.4} GHz: the cavity has no modes near the band, or its size or \
                 the target is not what was meant",
                band_hz[0] * 1e-9,
                band_hz[1] * 1e-9
            ),
            RunWarning::CoarseForSpacing {
                order,
                relative_error,
                error_hz,
                spacing_hz,
            } => write!(
                f,
                "settings are coarse for this band: order {order} at this mesh size gives an \
                 expected frequency error of {relative_error:.1e} (±{:.2} MHz, from the \
                 mesh-size study), more than {SPACING_SHARE} of the mean spacing of the \
                 modes found ({:.2} MHz): neighbouring modes may be misplaced, merged or split; \
                 use a higher --order or a larger --per-wavelength",
                error_hz * 1e-6,
                spacing_hz * 1e-6
            ),
        }
    }
}

/// The lowest analytic mode of the geometry's cavity (loads ignored: they only lower it).
pub fn cavity_lowest_mode(geom: &Geometry) -> LowestMode {
    match geom.cavity.shape {
        CavityShape::Box { size } => box_lowest(size.map(mm_to_m)),
        CavityShape::Cylinder { radius, height } => {
            cylinder_lowest(mm_to_m(radius), mm_to_m(height))
        }
    }
}

/// [`RunWarning::CavityTooSmall`] when the empty cavity's lowest mode is more than
/// [`CAVITY_OCTAVE`] × the highest frequency asked for (target, or band's upper edge).
/// Loads lower the modes by at most √(ε′μr) of the densest load, so they are allowed for.
pub fn cavity_warning(geom: &Geometry) -> Option<RunWarning> {
    let lowest = cavity_lowest_mode(geom);
    let asked_hz = 1e9
        * geom
            .solve
            .band
            .map_or(geom.solve.target, |b| b[1].max(geom.solve.target));
    let index = geom
        .loads
        .iter()
        .map(|l| {
            let (e, _) = l.material.permittivity(asked_hz);
            (e * l.material.permeability).max(1.0).sqrt()
        })
        .fold(1.0, f64::max);
    let lowest_loaded = lowest.frequency_hz / index;
    (lowest_loaded > CAVITY_OCTAVE * asked_hz).then(|| {
        // Numbers meant as metres are 1000× too small in mm: their lowest mode would be
        // 1000× lower. Hint when that gives a cavity resonating at the asked frequency:
        // lowest mode below it, but by at most METRES_HINT_SPAN (a cavity at most some
        // tens of wavelengths across).
        let as_m = lowest.frequency_hz * 1e-3;
        let plausible =
            as_m / index <= CAVITY_OCTAVE * asked_hz && as_m >= asked_hz / METRES_HINT_SPAN;
        RunWarning::CavityTooSmall {
            lowest,
            asked_hz,
            as_metres_hz: plausible.then_some(as_m),
        }
    })
}

/// [`RunWarning::CoarseRegion`] for every region with fewer than
/// [`min_per_wavelength`]`(order)` elements per local wavelength at `freq_hz`.
pub fn mesh_warnings(
    mesh: &TetMesh,
    materials: &[RegionMaterial],
    freq_hz: f64,
    order: NedelecOrder,
) -> Vec<RunWarning> {
    let threshold = min_per_wavelength(order);
    super::accuracy::region_per_wavelength(mesh, materials, freq_hz)
        .into_iter()
        .enumerate()
        .filter(|(_, n)| n.is_finite() && *n < threshold)
        .map(|(region, per_wavelength)| RunWarning::CoarseRegion {
            order: order.as_int(),
            threshold,
            region,
            name: mesh
                .regions
                .get(region)
                .map_or_else(|| format!("region {region}"), |r| r.name.clone()),
            per_wavelength,
        })
        .collect()
}

/// Warnings about the modes found (`frequencies_hz`, any order) against the band and the
/// run's accuracy estimate.
pub fn mode_warnings(
    frequencies_hz: &[f64],
    band_hz: [f64; 2],
    accuracy: &AccuracyEstimate,
    order: u8,
    target_hz: f64,
) -> Vec<RunWarning> {
    let mut out = Vec::new();
    let outside = frequencies_hz
        .iter()
        .filter(|&&f| f < band_hz[0] / BAND_OCTAVE || f > band_hz[1] * BAND_OCTAVE)
        .count();
    if outside > 0 {
        out.push(RunWarning::ModesOutsideBand {
            outside,
            found: frequencies_hz.len(),
            band_hz,
        });
    }
    let mut in_band: Vec<f64> = frequencies_hz
        .iter()
        .copied()
        .filter(|&f| f >= band_hz[0] && f <= band_hz[1])
        .collect();
    in_band.sort_by(f64::total_cmp);
    if let (Some(rel), [first, .., last]) = (accuracy.relative_error, in_band.as_slice()) {
        let spacing_hz = (last - first) / (in_band.len() - 1) as f64;
        let error_hz = rel * target_hz;
        if error_hz > SPACING_SHARE * spacing_hz {
            out.push(RunWarning::CoarseForSpacing {
                order,
                relative_error: rel,
                error_hz,
                spacing_hz,
            });
        }
    }
    out
}

/// Everything a front end reports about a run's trustworthiness.
#[derive(Clone, Debug, PartialEq)]
pub struct RunReview {
    pub accuracy: AccuracyEstimate,
    /// Relative tolerance for the distinct frequencies ([`group_tolerance`]).
    pub group_tolerance: f64,
    pub warnings: Vec<RunWarning>,
}

/// The review of a mode solve of `geom` on `mesh` with `materials` and `settings` that
/// found `modes`: accuracy estimate, group tolerance and every warning, with `band_hz`
/// the band of the summary.
pub fn review_run(
    geom: &Geometry,
    mesh: &TetMesh,
    materials: &[RegionMaterial],
    settings: &ModeSettings,
    modes: &[Mode],
    band_hz: [f64; 2],
) -> RunReview {
    let accuracy = super::accuracy::estimate(mesh, materials, settings.order, settings.target_hz);
    let mut warnings: Vec<RunWarning> = cavity_warning(geom).into_iter().collect();
    warnings.extend(mesh_warnings(
        mesh,
        materials,
        settings.target_hz,
        settings.order,
    ));
    let freqs: Vec<f64> = modes.iter().map(|m| m.frequency_hz).collect();
    warnings.extend(mode_warnings(
        &freqs,
        band_hz,
        &accuracy,
        settings.order.as_int(),
        settings.target_hz,
    ));
    RunReview {
        accuracy,
        group_tolerance: group_tolerance(&accuracy, super::band::GROUP_TOLERANCE),
        warnings,
    }
}

/// Relative tolerance for grouping near-degenerate modes: two frequencies each off by up
/// to the expected error ε can differ by 2ε while being one degenerate level, so 2ε; the
/// fixed `fallback` when the run's order has no accuracy estimate.
pub fn group_tolerance(accuracy: &AccuracyEstimate, fallback: f64) -> f64 {
    accuracy.relative_error.map_or(fallback, |e| 2.0 * e)
}

#[cfg(test)]
mod tests {
    use super::*;

    fn geometry(cavity: &str) -> Geometry {
        Geometry::from_toml_str(
            &format!("title = \"t\"\n[cavity]\n{cavity}\nwalls = \"pec\"\n"),
            None,
        )
        .expect("valid test geometry")
    }

    /// A box given in metres where mm are meant (the 300 × 300 × 200 mm box written as
    /// [0.3, 0.3, 0.2]): lowest mode 706.6 GHz (Pozar 4th ed. eq. 6.40, 1000× that of the
    /// 300 mm box), far above 2.45 GHz, and the metres hint brings it to 0.7066 GHz.
    #[test]
    fn box_in_metres_is_flagged_with_the_unit_hint() {
        let g = geometry("shape = \"box\"\nsize = [0.3, 0.3, 0.2]");
        match cavity_warning(&g) {
            Some(RunWarning::CavityTooSmall {
                lowest,
                as_metres_hz: Some(m),
                ..
            }) => {
                assert!((lowest.frequency_hz - 706.6e9).abs() < 0.1e9);
                assert!((m - 0.7066e9).abs() < 0.1e6);
            }
            other => panic!("{other:?}"),
        }
        let text = cavity_warning(&g).unwrap().to_string();
        assert!(text.contains("mm") && text.contains("1000"), "{text}");
    }

    /// The example box in mm (lowest mode 0.71 GHz < 2.45 GHz) gets no warning; a 40 mm
    /// cube (lowest 5.3 GHz, > 2 × 2.45 GHz) gets one without the metres hint (40 m
    /// would put the lowest mode at 5.3 MHz, not near the target).
    #[test]
    fn real_cavities_are_not_flagged_and_small_ones_are() {
        assert_eq!(
            cavity_warning(&geometry("shape = \"box\"\nsize = [300.0, 300.0, 200.0]")),
            None
        );
        match cavity_warning(&geometry("shape = \"box\"\nsize = [40.0, 40.0, 40.0]")) {
            Some(RunWarning::CavityTooSmall { as_metres_hz, .. }) => assert_eq!(as_metres_hz, None),
            other => panic!("{other:?}"),
        }
        // A cylinder of radius 100 mm: TM010 at 1.15 GHz, below the target: no warning.
        assert_eq!(
            cavity_warning(&geometry(
                "shape = \"cylinder\"\nradius = 100.0\nheight = 100.0"
            )),
            None
        );
    }

    /// Modes an octave outside the band and an error larger than half the spacing.
    #[test]
    fn mode_warnings_flag_far_modes_and_coarse_settings() {
        let band = [2.4e9, 2.5e9];
        let fine = AccuracyEstimate {
            per_wavelength: 8.0,
            region: 0,
            relative_error: Some(1e-4),
        };
        // 834 GHz: the metres box of the issue.
        let w = mode_warnings(&[834e9], band, &fine, 2, 2.45e9);
        assert!(
            matches!(
                w[..],
                [RunWarning::ModesOutsideBand {
                    outside: 1,
                    found: 1,
                    ..
                }]
            ),
            "{w:?}"
        );
        // Modes 10 MHz apart: an error of 1e-4 (0.245 MHz) is fine, 5e-3 (12 MHz) is not.
        let modes = [2.41e9, 2.42e9, 2.43e9, 2.44e9];
        assert!(mode_warnings(&modes, band, &fine, 2, 2.45e9).is_empty());
        let coarse = AccuracyEstimate {
            relative_error: Some(5e-3),
            ..fine
        };
        let w = mode_warnings(&modes, band, &coarse, 1, 2.45e9);
        assert!(
            matches!(w[..], [RunWarning::CoarseForSpacing { order: 1, .. }]),
            "{w:?}"
        );
    }
}
