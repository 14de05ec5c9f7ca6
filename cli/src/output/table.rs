//! The terminal tables and band summary of `antinode modes`: first frequencies and
//! checks, then Q and power (kept within about 100 columns for one or two ports).

use super::json::ModesDoc;
use crate::units;
use antinode_solver::modes::SPURIOUS_DIVERGENCE;
use antinode_solver::post::warnings::{q_check_verdict, Q_CHECK_AGREES, RESIDUAL_SUSPECT};

/// A quality factor for the table: `∞` when infinite, 3 significant figures otherwise.
pub fn q_text(q: f64) -> String {
    if !q.is_finite() {
        "∞".into()
    } else if q >= 1e6 {
        format!("{q:.2e}")
    } else if q >= 100.0 {
        format!("{q:.0}")
    } else if q >= 10.0 {
        format!("{q:.1}")
    } else {
        format!("{q:.2}")
    }
}

fn short(name: &str, width: usize) -> String {
    name.chars().take(width).collect()
}

/// Prints the whole result: heading, the two mode tables, the band summary and the
/// solve figures.
pub fn print(doc: &ModesDoc) {
    println!("{}", doc.title);
    println!(
        "target {} GHz, Nédélec order {}, {} unknowns{}",
        doc.target_ghz,
        doc.order,
        doc.unknowns,
        if doc.solve.complex {
            " (complex: lossy loads or ports)"
        } else {
            ""
        }
    );
    println!();
    print_frequencies(doc);
    println!();
    print_q(doc);
    println!();
    print_band(doc);
    println!();
    print_solve(doc);
}

/// The first table: frequencies and their checks.
fn print_frequencies(doc: &ModesDoc) {
    println!("Frequencies and checks");
    println!(
        "{:>5}  {:>12}  {:>9}  {:>9}  {:>10}  {:>9}  {:>7}  {:>10}  {:<11}",
        "mode",
        "f (GHz)",
        "Δf (MHz)",
        "f″ (MHz)",
        "residual",
        "div",
        "in band",
        "Q check",
        "verdict"
    );
    let has_ports = !doc.ports.is_empty();
    for r in &doc.modes {
        let check = match r.q_check_relative {
            Some(c) if c.is_finite() => format!("{c:+.1e}"),
            Some(_) => "fails".into(),
            None => "—".into(),
        };
        let residual = format!(
            "{:.2e}{}",
            r.residual,
            if r.residual > RESIDUAL_SUSPECT {
                "!"
            } else {
                " "
            }
        );
        println!(
            "{:>5}  {:>12.6}  {:>+9.3}  {:>9.4}  {:>10}  {:>9.1e}  {:>7}  {:>10}  {:<11}",
            r.index,
            r.frequency_ghz,
            r.delta_mhz,
            r.frequency_imag_ghz * 1e3,
            residual,
            r.divergence,
            if r.in_band { "yes" } else { "-" },
            check,
            q_check_verdict(r.q_check_relative, has_ports)
        );
    }
    println!(
        "  Δf: from the target; f″ = Im f (decay rate/2π); residual ‖Kx − λMx‖/(‖K‖‖x‖ + \
         |λ|‖M‖‖x‖): converged pairs read ≲ 1e-9, ! marks one above {RESIDUAL_SUSPECT:.0e} \
         (suspect); div: ‖GᵀMx‖/‖Mx‖, true modes read ≲ 1e-10, fields above \
         {SPURIOUS_DIVERGENCE:.0e} are dropped as gradients"
    );
    println!(
        "  Q check (consistency, not a result): Q from the complex eigenvalue, Re f/(2 Im f), \
         against power balance 1/Q = 1/Q_d + Σ 1/Q_ext, as Q_eig/Q_bal − 1; verdict ok \
         within ±{:.0} % (our own threshold){}",
        100.0 * Q_CHECK_AGREES,
        if has_ports {
            "; \"β at target\": the balance uses the port β at the target, re-run with \
             --target at the mode to compare"
        } else {
            "; \"disagrees\": the load's loss and the eigenvalue do not match, refine the load"
        }
    );
    if !doc.ports.is_empty() {
        println!(
            "  (with ports the solver rescales Q_ext to the refined eigenvalue when the two agree \
             within a factor 2, so the check reads ≈ 0 then; it tests Q_d and the scaling only)"
        );
    }
}

/// The second table: Q parts, coupling and power split.
fn print_q(doc: &ModesDoc) {
    println!("Q and power");
    let mut head = format!(
        "{:>5}  {:>10}  {:>8}  {:>8}  {:>8}  {:>8}",
        "mode", "f (GHz)", "BW (MHz)", "Q_L", "Q_d", "Q_c"
    );
    for p in &doc.ports {
        let p = short(p, 6);
        head.push_str(&format!(
            "  {:>12}  {:>7}  {:>6}  {:>7}",
            format!("Q_ext {p}"),
            "κ",
            "|Γ|",
            "load %"
        ));
    }
    head.push_str(&format!("  {:>8}", "E load %"));
    println!("{head}");
    for r in &doc.modes {
        let mut line = format!(
            "{:>5}  {:>10.5}  {:>8}  {:>8}  {:>8}  {:>8}",
            r.index,
            r.frequency_ghz,
            if r.bandwidth_mhz > 0.0 {
                format!("{:.3}", r.bandwidth_mhz)
            } else {
                "0".into()
            },
            q_text(r.q_loaded),
            q_text(r.q_dielectric),
            q_text(r.q_walls)
        );
        for p in 0..doc.ports.len() {
            let get = |v: &[f64]| v.get(p).copied().unwrap_or(f64::NAN);
            let kappa = get(&r.coupling);
            line.push_str(&format!(
                "  {:>12}  {:>7}  {:>6.3}  {:>7.1}",
                q_text(get(&r.q_ports)),
                if kappa.is_finite() {
                    format!("{kappa:.3}")
                } else {
                    "∞".into()
                },
                get(&r.reflection),
                100.0 * get(&r.load_power_fraction)
            ));
        }
        if r.load_energy_fraction.is_empty() {
            line.push_str(&format!("  {:>8}", "—"));
        } else {
            let e_load: f64 = r.load_energy_fraction.values().sum();
            line.push_str(&format!("  {:>8.1}", 100.0 * e_load));
        }
        println!("{line}");
    }
    if doc.ports.is_empty() {
        println!("  Q_ext: — (no ports: the cavity is closed)");
    }
    println!(
        "  BW = f/Q_L; Q_L: loaded, Q_d: loads' dielectric loss, Q_c: walls{}; ∞ = no such loss",
        match doc.wall_conductivity {
            Some(s) => format!(
                " (σ = {s:.3e} S/m, {})",
                match doc.wall_losses.as_deref() {
                    Some("perturbation") => "surface-resistance perturbation",
                    _ => "surface impedance in the solve",
                }
            ),
            None => " (PEC: no wall loss)".into(),
        }
    );
    if !doc.ports.is_empty() {
        println!(
            "  κ = Q0/Q_ext (other ports as losses); |Γ| at resonance = |1 − κ|/(1 + κ); load % = \
             share of that port's forward power absorbed in the loads at resonance"
        );
    }
    println!("  E load % = share of the stored electric energy inside the loads");
}

/// The band summary.
fn print_band(doc: &ModesDoc) {
    let b = &doc.band_summary;
    println!(
        "band {:.4}–{:.4} GHz ({}):",
        b.band_ghz[0], b.band_ghz[1], b.band_from
    );
    match (b.complete, b.complete_above_q) {
        (true, None) => println!(
            "  modes found in band: {} (complete: no lossy load and no port, so every mode is \
             real and the search reached both band edges)",
            b.modes_in_band
        ),
        (true, Some(q)) => println!(
            "  modes found in band: {} (complete for modes with Q from loads, ports and impedance walls ≥ {:.0}; more strongly damped ones may be missing)",
            b.modes_in_band, q
        ),
        _ => println!(
            "  modes found in band: {} (may be incomplete: the search did not reach both band edges; pass --band or raise --count)",
            b.modes_in_band
        ),
    }
    println!(
        "  Weyl's-law estimate: {:.1} modes (estimate; {}, V = {}; {})",
        b.weyl_estimate.modes,
        b.weyl_estimate.formula,
        units::volume(b.weyl_estimate.volume_m3),
        b.weyl_estimate.source
    );
    if let Some(air) = &b.weyl_estimate_air_only {
        println!(
            "  Weyl's-law estimate, loads counted as air: {:.1} modes (V = {}; the optical-volume \
             figure above also counts the loads' own internal resonances, heavily damped in \
             water and not found near the real axis: compare the listing with this one)",
            air.modes,
            units::volume(air.volume_m3)
        );
    }
    println!(
        "  distinct frequencies: {} (modes within a relative {:.1e} counted as one: {})",
        b.distinct_frequencies, b.group_tolerance_relative, b.group_tolerance_basis
    );
    match doc.accuracy.expected_relative_error {
        Some(e) => println!(
            "  expected accuracy: ~{e:.1e} relative (±{:.2} MHz at the target) at order {} with \
             {:.1} elements per local wavelength ({}; estimate from the mesh-size study, \
             README Accuracy)",
            e * doc.target_ghz * 1e3,
            doc.order,
            doc.accuracy.elements_per_wavelength,
            doc.accuracy.coarsest_region
        ),
        None => println!(
            "  expected accuracy: no study data for order {} ({:.1} elements per local wavelength)",
            doc.order, doc.accuracy.elements_per_wavelength
        ),
    }
    match b.mean_spacing_mhz {
        Some(s) => println!("  mean spacing between distinct frequencies: {s:.2} MHz"),
        None => println!("  mean spacing: needs two distinct frequencies in the band"),
    }
    match b.modal_overlap {
        Some(m) => println!(
            "  modal overlap: {m:.2} (mean number of other modes within ±f/(2Q_L) of each in-band mode)"
        ),
        None => println!("  modal overlap: — (no in-band mode with a finite Q_L)"),
    }
    if !doc.ports.is_empty() {
        println!(
            "  feed coupling below: each mode at its own resonance, as if it were alone \
             (|Γ| = |1 − κ|/(1 + κ)){}",
            match b.modal_overlap {
                Some(m) if m >= 1.0 => format!(
                    "; the modes overlap (overlap {m:.1}), so between and across resonances the \
                     power that enters needs the driven response: antinode drive"
                ),
                _ => "; antinode drive gives the power that enters at every frequency".into(),
            }
        );
        if b.good_coupling.is_empty() {
            println!(
                "  feed couples well (|Γ| ≤ {} at resonance; threshold: common practice, no source): no in-band mode",
                b.good_coupling_reflection
            );
        } else {
            let list: Vec<String> = b
                .good_coupling
                .iter()
                .map(|g| {
                    let port = if doc.ports.len() > 1 {
                        format!(" {}", g.port)
                    } else {
                        String::new()
                    };
                    format!(
                        "{:.4} GHz (mode {}{port}, |Γ| {:.2}, load {:.0} %)",
                        g.frequency_ghz,
                        g.index,
                        g.reflection,
                        100.0 * g.load_power_fraction
                    )
                })
                .collect();
            println!(
                "  feed couples well (|Γ| ≤ {} at resonance; threshold: common practice, no source) at:",
                b.good_coupling_reflection
            );
            for l in list {
                println!("    {l}");
            }
        }
    }
    if let Some(c) = b.q_check_max_relative {
        println!(
            "  check: Q from the eigenvalue vs power balance, largest |Q_eig/Q_bal − 1| = {c:.1e}"
        );
    }
}

/// Sizes and times of the solve.
fn print_solve(doc: &ModesDoc) {
    let s = &doc.solve;
    println!(
        "solve: {} unknowns ({}), {} matrix non-zeros, factor {} entries (planned before \
         assembly: {:.3e}, counted before the port constraint); planned peak memory {} \
         (plan{}); mesh {:.2} s, \
         assembly {:.2} s, factorisation {:.2} s, eigen {:.2} s ({} solves, {} restarts); \
         spurious fields dropped: {}; factor precision {}{}",
        doc.unknowns,
        if s.complex {
            "complex symmetric, LDLᵀ with complex entries"
        } else {
            "real"
        },
        s.matrix_nnz,
        s.factor_nnz,
        s.plan.factor_entries_estimate,
        units::bytes(s.plan.memory_estimate_bytes),
        match s.plan.memory_available_bytes {
            Some(a) => format!("; {} available", units::bytes(a)),
            None => String::new(),
        },
        s.mesh_s,
        s.assembly_s,
        s.factor_s,
        s.eigen_s,
        s.operator_applications,
        s.restarts,
        s.spurious_dropped,
        s.factor_precision,
        match &s.refinement {
            Some(r) => format!(
                " ({} solves: {} refinement steps, {} went on to GMRES with {} iterations, \
                 {} missed the {:.0e} residual; worst residual {:.1e})",
                r.columns,
                r.refinement_steps,
                r.gmres_columns,
                r.gmres_iterations,
                r.unconverged,
                r.tolerance,
                r.worst_residual
            ),
            None => String::new(),
        }
    );
}
