//! `antinode`: resonant modes of microwave cavities from the command line.
//!
//! The binary is thin: it parses options, calls the `antinode-mesh` and `antinode-solver`
//! libraries, and prints or writes what they return. Commands live in [`commands`], file
//! and terminal formats in [`output`].

// The option docs are `--help` text, where `[solve] target` names a geometry-file table,
// not a link.
#![allow(rustdoc::broken_intra_doc_links)]

mod budget;
mod commands;
mod output;
mod progress;
mod units;

use clap::{Parser, Subcommand};
use std::process::ExitCode;

/// Shown at the end of `antinode --help` (design notes §7).
const SAFETY: &str = "\
SAFETY: antinode predicts fields in an idealised closed cavity. It does not measure or
certify leakage, and a real oven's door seals, chokes and interlocks are outside its
model. Microwave energy can cause deep burns; only qualified people should build or open
high-power equipment. Follow local codes, the applicable product-safety standards and
licensed practice.

Units: geometry files use millimetres and GHz; written meshes and fields use metres and
SI units (V/m, A/m).";

/// Resonant modes of metal cavities with dielectric loads, for microwave-heating design
/// around 2.45 GHz.
#[derive(Parser)]
#[command(name = "antinode", version, about, long_about = None, after_long_help = SAFETY)]
#[command(propagate_version = true)]
struct Cli {
    #[command(subcommand)]
    command: Command,
}

#[derive(Subcommand)]
enum Command {
    /// Mesh a geometry file into tetrahedra and report sizes, volumes and element quality.
    ///
    /// Writes DIR/mesh.vtu (tetrahedra with cell data "region": 0 = air, i = load i, and
    /// "quality": normalised radius ratio, 1 = regular) and DIR/boundary.vtu (wall and port
    /// triangles with cell data "tag": 0 = metal wall, i = port i). Coordinates in metres.
    // Negative numbers reach our own range checks (a plain message) instead of being
    // read as unknown options by the parser.
    #[command(allow_negative_numbers = true)]
    Mesh(commands::mesh::MeshArgs),
    /// Find the resonant modes near the target frequency (or every mode in a band).
    ///
    /// Meshes the geometry, checks the solver's plan (unknowns, memory) against the memory
    /// available, solves Maxwell's eigenproblem with Nédélec edge elements (lossy loads,
    /// metal walls and matched TE10 ports included) and prints two tables: frequencies
    /// with their checks, then loaded Q, the Q of the loads, walls and each port, the
    /// feed's coupling κ and reflection |Γ| and the share of forward power heating the
    /// loads; then a band summary (count, Weyl's-law estimate, spacing, modal overlap,
    /// frequencies where the feed couples well). Writes DIR/modes.json, DIR/modes.csv,
    /// DIR/spectrum.svg and, unless --no-fields, one DIR/mode_NNN.vtu per mode (E, H and
    /// heating density for 1 J of stored energy) with a DIR/modes.pvd collection.
    // Negative numbers reach our own range checks (a plain message) instead of being
    // read as unknown options by the parser.
    #[command(allow_negative_numbers = true)]
    Modes(commands::modes::ModesArgs),
    /// Feed the cavity through its ports: S-parameters over the band, where the forward
    /// power goes, and the heating map with its uniformity at the field frequencies.
    ///
    /// Meshes the geometry, sweeps the band with a reduced model built by Krylov
    /// projection of the shifted operator (a few factorisations instead of one per
    /// frequency; converged to --tolerance), and solves the full field directly at each
    /// --at frequency. Ports carry `power` (W) and `phase_deg` from the geometry file;
    /// without them port 1 is fed with --power and the others are matched and idle.
    /// Writes DIR/response.json, response.csv, `response.s<N>p` (Touchstone 1.1),
    /// response.svg, `heating_<f>GHz.vtu` per field frequency and heating.pvd.
    #[command(after_long_help = SAFETY, allow_negative_numbers = true)]
    Drive(commands::drive::DriveArgs),
    /// List the built-in materials with permittivity and loss at a frequency (metals:
    /// conductivity and surface resistance), with the source of each value.
    // Negative numbers reach our own range checks (a plain message) instead of being
    // read as unknown options by the parser.
    #[command(allow_negative_numbers = true)]
    Materials(commands::materials::MaterialsArgs),
    /// Run `modes` and/or `drive` on every variant of a sweep file (parameters by dotted
    /// key into a base geometry), track the modes between neighbouring variants by their
    /// fields, and write DIR/sweep.csv, sweep.json, sweep.svg and DIR/variants/vNNN/.
    // Negative numbers reach our own range checks (a plain message) instead of being
    // read as unknown options by the parser.
    #[command(allow_negative_numbers = true)]
    Sweep(commands::sweep::SweepArgs),
}

fn main() -> ExitCode {
    let cli = Cli::parse();
    let result = match cli.command {
        Command::Mesh(a) => commands::mesh::run(&a),
        Command::Modes(a) => commands::modes::run(&a),
        Command::Drive(a) => commands::drive::run(&a),
        Command::Materials(a) => commands::materials::run(&a),
        Command::Sweep(a) => commands::sweep::run(&a),
    };
    match result {
        Ok(()) => ExitCode::SUCCESS,
        Err(e) => {
            eprintln!("error: {}", message(&e));
            ExitCode::FAILURE
        }
    }
}

/// The error and its causes on one line, skipping a cause whose text the message before
/// it already contains (library errors often embed their source).
fn message(e: &anyhow::Error) -> String {
    let mut out = String::new();
    for cause in e.chain() {
        let text = cause.to_string();
        if out.contains(&text) {
            continue;
        }
        if !out.is_empty() {
            out.push_str(": ");
        }
        out.push_str(&text);
    }
    out
}
