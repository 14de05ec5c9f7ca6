//! Benchmark: the cost of the complex (lossy, fed) problem against the real (lossless)
//! one on the same mesh. The 300 × 300 × 200 mm box of `box_modes`, 20 modes nearest
//! 2.45 GHz, order 2, solved three ways in one run:
//!
//! * `real`: empty and closed (lossless: real symmetric LBLᵀ);
//! * `complex`: a lossy slab over the floor (εr = 4 − j0.4, invented) and a matched TE10
//!   port on the x = a wall (native complex symmetric LDLᵀ);
//! * `realform`: the same complex problem through the real 2n form, the path the native
//!   factor replaced (only with `-- realform`: it needs about twice the memory).
//!
//! Prints unknowns, factor entries and bytes, factor and eigen times, peak resident
//! memory (each case in its own child process, so VmHWM is its own) and the complex /
//! real ratios. Figures are printed, never asserted. Run:
//! `cargo bench -p antinode-tests --bench complex_modes` (add `-- quick` for the two
//! smaller grids, `-- realform` to add the 2n-form case); heavy: run it under
//! `flock /tmp/antinode-heavy.lock`.

use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_mesh::{RegionInfo, TetMesh};
use antinode_solver::linalg::factor::FactorKind;
use antinode_solver::modes::operator::ComplexForm;
use antinode_solver::{solve_modes, ModeSettings, NedelecOrder, RegionMaterial};
use antinode_tests::port_wall;
use std::process::Command;
use std::time::Instant;

const SIZE: [f64; 3] = [0.30, 0.30, 0.20];
/// Port aperture on the x = a wall: 90 × 45 mm (TE10 cutoff 1.67 GHz), centred.
const Y: [f64; 2] = [0.105, 0.195];
const Z: [f64; 2] = [0.0775, 0.1225];
/// Slab thickness over the floor.
const SLAB: f64 = 0.03;

fn mesh(n: [usize; 3], lossy_fed: bool) -> TetMesh {
    let grid = GridLines::uniform([0.0; 3], SIZE, n);
    let regions = vec![
        RegionInfo { name: "air".into() },
        RegionInfo {
            name: "slab".into(),
        },
    ];
    let mut mesh = grid_mesh(&grid, regions, |c| {
        Some(u32::from(lossy_fed && c[2] < SLAB))
    });
    if lossy_fed {
        port_wall::tag_x_wall_port(&mut mesh, SIZE[0], Y, Z, 0);
    }
    mesh
}

fn peak_rss_mb() -> f64 {
    let status = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    status
        .lines()
        .find(|l| l.starts_with("VmHWM:"))
        .and_then(|l| l.split_whitespace().nth(1))
        .and_then(|v| v.parse::<f64>().ok())
        .map_or(f64::NAN, |kb| kb / 1024.0)
}

fn run_case(kind: &str, n: [usize; 3]) {
    let lossy_fed = kind != "real";
    let mesh = mesh(n, lossy_fed);
    let mut s = ModeSettings::new(2.45e9);
    s.order = NedelecOrder::Two;
    s.count = 20;
    let slab = RegionMaterial {
        eps_real: 4.0,
        eps_imag: 0.4,
        mu_r: 1.0,
    };
    if lossy_fed {
        s.ports = vec![port_wall::x_wall_frame(SIZE[0], Y, Z)];
    }
    if kind == "realform" {
        s.complex_form = ComplexForm::RealForm(FactorKind::Lblt);
    }
    let t = Instant::now();
    // The lossless case must not list the lossy slab material: any lossy material makes
    // the problem complex (`ModeSettings::is_complex`), even with no element in it.
    let materials = if lossy_fed {
        [RegionMaterial::VACUUM, slab]
    } else {
        [RegionMaterial::VACUUM; 2]
    };
    let set = match solve_modes(&mesh, &materials, &s, &mut |_| {}) {
        Ok(set) => set,
        Err(e) => {
            println!("{kind} grid={}x{}x{} failed: {e}", n[0], n[1], n[2]);
            return;
        }
    };
    let st = &set.stats;
    let bytes = if kind == "complex" { 16.0 } else { 8.0 };
    println!(
        "{kind:<8} grid={}x{}x{} unknowns={} factor_entries={:.1}M factor_values={:.0}MB factor={:.2}s eigen={:.2}s total={:.2}s peak={:.0}MB modes={} solves={} complex={}",
        n[0],
        n[1],
        n[2],
        st.n_dofs,
        st.factor_nnz as f64 / 1e6,
        st.factor_nnz as f64 * bytes / 1e6,
        st.factor_s,
        st.eigen_s,
        t.elapsed().as_secs_f64(),
        peak_rss_mb(),
        set.modes.len(),
        st.applications,
        st.complex
    );
}

/// A `key=value` figure of a printed line.
fn figure(line: &str, key: &str) -> Option<f64> {
    line.split_whitespace()
        .find_map(|w| w.strip_prefix(key)?.strip_prefix('='))
        .map(|v| v.trim_end_matches(|c: char| c.is_alphabetic()))
        .and_then(|v| v.parse().ok())
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    if let (Ok(kind), Ok(grid)) = (
        std::env::var("ANTINODE_BENCH_KIND"),
        std::env::var("ANTINODE_BENCH_GRID"),
    ) {
        let n: Vec<usize> = grid.split(',').filter_map(|x| x.parse().ok()).collect();
        if let &[nx, ny, nz] = n.as_slice() {
            run_case(&kind, [nx, ny, nz]);
        }
        return;
    }
    let grids: &[[usize; 3]] = if args.iter().any(|a| a == "quick") {
        &[[12, 12, 8], [15, 15, 10]]
    } else {
        &[[12, 12, 8], [18, 18, 12], [24, 24, 16]]
    };
    let mut kinds = vec!["real", "complex"];
    if args.iter().any(|a| a == "realform") {
        kinds.push("realform");
    }
    let exe = std::env::current_exe().expect("own path");
    println!(
        "300x300x200 mm box, order 2, 20 modes nearest 2.45 GHz: lossless (real) against \
         lossy slab + port (complex), {} threads",
        std::thread::available_parallelism().map_or(1, |n| n.get())
    );
    for n in grids {
        let grid = format!("{},{},{}", n[0], n[1], n[2]);
        let mut lines = Vec::new();
        for kind in &kinds {
            let out = Command::new(&exe)
                .env("ANTINODE_BENCH_KIND", kind)
                .env("ANTINODE_BENCH_GRID", &grid)
                .output();
            let line = match out {
                Ok(o) => String::from_utf8_lossy(&o.stdout).trim().to_string(),
                Err(e) => format!("{kind} grid={grid}: could not run: {e}"),
            };
            println!("{line}");
            lines.push(line);
        }
        let ratio = |key: &str, i: usize| {
            let (c, r) = (figure(&lines[i], key), figure(&lines[0], key));
            c.zip(r).map_or(f64::NAN, |(c, r)| c / r)
        };
        for (i, kind) in kinds.iter().enumerate().skip(1) {
            println!(
                "  {kind}/real: unknowns {:.2}x, factor time {:.2}x, eigen time {:.2}x, total {:.2}x, peak memory {:.2}x, factor bytes {:.2}x",
                ratio("unknowns", i),
                ratio("factor", i),
                ratio("eigen", i),
                ratio("total", i),
                ratio("peak", i),
                ratio("factor_values", i)
            );
        }
    }
}
