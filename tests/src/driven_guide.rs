//! Finite-element models of the layered guide of [`crate::layered_guide`]: a structured
//! mesh of the guide with one region per layer, the port at z = 0 covering the whole
//! cross-section (and a second one at z = L for a matched end), and the driven settings.

use crate::layered_guide::{LayeredGuide, Termination};
use antinode_mesh::structured::{grid_mesh, GridLines};
use antinode_mesh::{BoundaryTag, RegionInfo, TetMesh};
use antinode_solver::driven::sweep::SweepOptions;
use antinode_solver::driven::DriveSettings;
use antinode_solver::fem::port::PortFrame;
use antinode_solver::{NedelecOrder, RegionMaterial};
use faer::c64;

/// The meshed guide.
pub struct GuideModel {
    pub mesh: TetMesh,
    pub frames: Vec<PortFrame>,
    /// Grid lines (m).
    pub grid: GridLines,
}

/// Mesh of `guide` with `nx` × `ny` cells across and `nz[i]` cells through layer i;
/// region i = layer i. Port 0 covers z = 0; with a matched end, port 1 covers z = L.
pub fn guide_model(guide: &LayeredGuide, nx: usize, ny: usize, nz: &[usize]) -> GuideModel {
    assert_eq!(nz.len(), guide.layers.len(), "cells for every layer");
    let (a, b, l) = (guide.width, guide.height, guide.length());
    let mut z = vec![0.0];
    let mut z0 = 0.0;
    for (layer, &n) in guide.layers.iter().zip(nz) {
        for i in 1..=n {
            z.push(z0 + layer.thickness * i as f64 / n as f64);
        }
        z0 += layer.thickness;
    }
    let uniform = GridLines::uniform([0.0; 3], [a, b, l], [nx, ny, 1]);
    let grid = GridLines {
        x: uniform.x,
        y: uniform.y,
        z,
    };
    let ends: Vec<f64> = guide
        .layers
        .iter()
        .scan(0.0, |acc, layer| {
            *acc += layer.thickness;
            Some(*acc)
        })
        .collect();
    let regions = (0..guide.layers.len())
        .map(|i| RegionInfo {
            name: format!("layer{i}"),
        })
        .collect();
    let mut mesh = grid_mesh(&grid, regions, |c| {
        let i = ends
            .iter()
            .position(|&e| c[2] < e)
            .unwrap_or(ends.len() - 1);
        Some(i as u32)
    });
    let matched = guide.termination == Termination::Matched;
    for (f, tag) in mesh.boundary.iter().zip(mesh.boundary_tag.iter_mut()) {
        let zc = f.iter().map(|&v| mesh.nodes[v as usize][2]).sum::<f64>() / 3.0;
        if zc.abs() < 1e-12 {
            *tag = BoundaryTag::Port(0);
        } else if matched && (zc - l).abs() < 1e-12 {
            *tag = BoundaryTag::Port(1);
        }
    }
    let frame = |zp: f64, nz: f64| PortFrame {
        center: [0.5 * a, 0.5 * b, zp],
        u: [1.0, 0.0, 0.0],
        v: [0.0, 1.0, 0.0],
        n: [0.0, 0.0, nz],
        width: a,
        height: b,
    };
    let mut frames = vec![frame(0.0, -1.0)];
    if matched {
        frames.push(frame(l, 1.0));
    }
    GuideModel { mesh, frames, grid }
}

/// The layers' region materials (frequency-independent).
pub fn guide_materials(guide: &LayeredGuide) -> Vec<RegionMaterial> {
    guide
        .layers
        .iter()
        .map(|l| RegionMaterial {
            eps_real: l.eps.re,
            eps_imag: -l.eps.im,
            mu_r: 1.0,
        })
        .collect()
}

/// Settings: port 0 driven with 1 W (ã = 1 √W), the others idle; PEC walls; no `at`
/// frequency.
pub fn guide_settings(
    model: &GuideModel,
    order: NedelecOrder,
    frequencies_hz: Vec<f64>,
) -> DriveSettings {
    let mut drive = vec![c64::new(0.0, 0.0); model.frames.len()];
    drive[0] = c64::new(1.0, 0.0);
    DriveSettings {
        order,
        frequencies_hz,
        at_hz: Vec::new(),
        spread_hz: None,
        spread_samples: 11,
        wall_conductivity: None,
        ports: model.frames.clone(),
        drive,
        sweep: SweepOptions::default(),
        curved: Default::default(),
    }
}

/// `n` equally spaced frequencies over [lo, hi] (Hz).
pub fn linspace(lo: f64, hi: f64, n: usize) -> Vec<f64> {
    (0..n)
        .map(|i| lo + (hi - lo) * i as f64 / (n - 1).max(1) as f64)
        .collect()
}

/// Cell-level figures of a solved guide: per grid box (each split into five
/// tetrahedra), its absorbed power (W) from the tetrahedra's cell-averaged densities,
/// and the box's grid index (i, j, k).
pub fn box_powers(model: &GuideModel, cell_heating: &[f64]) -> Vec<((usize, usize, usize), f64)> {
    use std::collections::BTreeMap;
    let g = &model.grid;
    let index = |lines: &[f64], x: f64| lines.partition_point(|&l| l <= x).saturating_sub(1);
    let mut boxes: BTreeMap<(usize, usize, usize), f64> = BTreeMap::new();
    for (t, tet) in model.mesh.tets.iter().enumerate() {
        let p = tet.map(|v| model.mesh.nodes[v as usize]);
        let c: [f64; 3] = std::array::from_fn(|d| p.iter().map(|x| x[d]).sum::<f64>() / 4.0);
        let key = (index(&g.x, c[0]), index(&g.y, c[1]), index(&g.z, c[2]));
        *boxes.entry(key).or_insert(0.0) += cell_heating[t] * model.mesh.signed_volume(t).abs();
    }
    boxes.into_iter().collect()
}
