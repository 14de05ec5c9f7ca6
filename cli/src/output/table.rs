//! The terminal table and band summary of `antinode modes`.

use super::json::ModesDoc;
use super::summary::GROUP_TOLERANCE;
use crate::units;

pub fn print(doc: &ModesDoc) {
    println!("{}", doc.title);
    println!(
        "target {} GHz, Nédélec order {}, {} unknowns",
        doc.target_ghz, doc.order, doc.unknowns
    );
    println!();
    println!(
        "{:>5}  {:>16}  {:>12}  {:>10}  {:>7}",
        "mode", "frequency (GHz)", "Δ target MHz", "residual", "in band"
    );
    for r in &doc.modes {
        println!(
            "{:>5}  {:>16.6}  {:>+12.3}  {:>10.2e}  {:>7}",
            r.index,
            r.frequency_ghz,
            r.delta_mhz,
            r.residual,
            if r.in_band { "yes" } else { "-" }
        );
    }
    let b = &doc.band_summary;
    println!();
    println!(
        "band {:.4}–{:.4} GHz ({}):",
        b.band_ghz[0], b.band_ghz[1], b.band_from
    );
    println!(
        "  modes found in band: {}{}",
        b.modes_in_band,
        if b.complete {
            " (complete: the search covered the whole band)"
        } else {
            " (may be incomplete: the search did not reach both band edges; pass --band or raise --count)"
        }
    );
    println!(
        "  Weyl's-law estimate: {:.1} modes (estimate; {}, V = {}; {})",
        b.weyl_estimate.modes,
        b.weyl_estimate.formula,
        units::volume(b.weyl_estimate.volume_m3),
        b.weyl_estimate.source
    );
    println!(
        "  distinct frequencies: {} (modes within a relative {:.0e} counted as one)",
        b.distinct_frequencies, GROUP_TOLERANCE
    );
    match b.mean_spacing_mhz {
        Some(s) => println!("  mean spacing between distinct frequencies: {s:.2} MHz"),
        None => println!("  mean spacing: needs two distinct frequencies in the band"),
    }
    let s = &doc.solve;
    println!();
    println!(
        "solve: {} unknowns, {} matrix non-zeros, factor {} entries (estimated before \
         assembly: {:.3e}, rough fit); estimated peak memory {} (rough); mesh {:.2} s, assembly {:.2} s, factorisation {:.2} s, \
         eigen {:.2} s ({} solves, {} restarts); spurious fields dropped: {}",
        doc.unknowns,
        s.matrix_nnz,
        s.factor_nnz,
        s.memory_estimate.factor_entries,
        units::bytes(s.memory_estimate.peak_bytes),
        s.mesh_s,
        s.assembly_s,
        s.factor_s,
        s.eigen_s,
        s.operator_applications,
        s.restarts,
        s.spurious_dropped
    );
}
