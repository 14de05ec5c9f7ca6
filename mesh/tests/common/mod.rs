//! Helpers shared by the mesher test files: invented test geometries and a check of the
//! mesh invariants every mesher must keep.
#![allow(dead_code)] // each test file uses its own subset

use antinode_mesh::geometry::{
    Cavity, CavityShape, Geometry, Load, LoadShape, MeshMethod, MeshSettings, Port, SolveSettings,
    WallMetal,
};
use antinode_mesh::material::{Dielectric, Material};
use antinode_mesh::tet_mesh::{cross, dot, sub};
use antinode_mesh::TetMesh;
use std::collections::HashMap;

pub const MM: f64 = 1e-3;

pub fn dielectric(name: &str, eps: f64) -> Material {
    Material {
        name: name.to_string(),
        dielectric: Dielectric::Constant {
            eps_real: eps,
            eps_imag: 0.0,
            conductivity: 0.0,
        },
        permeability: 1.0,
        thermal: None,
    }
}

/// An invented test scenario with PEC walls, order 1, 2.45 GHz, no ports.
pub fn geometry(shape: CavityShape, loads: Vec<(&str, LoadShape, Material)>) -> Geometry {
    geometry_with_ports(shape, loads, vec![])
}

/// [`geometry`] with feed ports.
pub fn geometry_with_ports(
    shape: CavityShape,
    loads: Vec<(&str, LoadShape, Material)>,
    ports: Vec<Port>,
) -> Geometry {
    Geometry {
        title: "invented test scenario".into(),
        cavity: Cavity {
            shape,
            walls: WallMetal::Pec,
        },
        loads: loads
            .into_iter()
            .map(|(n, s, m)| Load {
                name: n.into(),
                shape: Some(s),
                material: m,
            })
            .collect(),
        ports,
        mesh: MeshSettings {
            order: 1,
            per_wavelength: 5.0,
            max_size: 20.0,
            per_wavelength_given: true,
            max_size_given: true,
            import: None,
            method: MeshMethod::Extruded,
        },
        solve: SolveSettings {
            target: 2.45,
            band: None,
            count: Some(10),
        },
        turntable: None,
        source: None,
    }
}

/// Signed volume of a tetrahedron (positive when right-handed).
pub fn signed_volume(v: [[f64; 3]; 4]) -> f64 {
    let d = |i: usize| sub(v[i], v[0]);
    dot(d(1), cross(d(2), d(3))) / 6.0
}

fn sorted3(mut f: [u32; 3]) -> [u32; 3] {
    f.sort_unstable();
    f
}

/// Whether a point (m) lies on the cavity wall, to `tol` (m).
fn on_wall(shape: CavityShape, p: [f64; 3], tol: f64) -> [bool; 4] {
    // [x-plane or round side, y-plane, floor, ceiling]
    match shape {
        CavityShape::Box { size } => {
            let s = size.map(|x| x * MM);
            let at = |k: usize| p[k].abs() <= tol || (p[k] - s[k]).abs() <= tol;
            [at(0), at(1), p[2].abs() <= tol, (p[2] - s[2]).abs() <= tol]
        }
        CavityShape::Cylinder { radius, height } => [
            (p[0].hypot(p[1]) - radius * MM).abs() <= tol,
            false,
            p[2].abs() <= tol,
            (p[2] - height * MM).abs() <= tol,
        ],
    }
}

/// Checks the invariants and returns each region's volume (m³):
/// every tet right-handed with volume above 1e-9 of a cube of the cavity's scale (no
/// inverted or zero-volume tet); every face shared by one or two tets; the faces with one
/// tet exactly the mesh's boundary triangles, each lying on one wall (box planes to 1e-9
/// of the scale; the round side to 1e-9 too, since wall vertices sit on the circle).
pub fn check_invariants(geom: &Geometry, mesh: &TetMesh) -> Vec<f64> {
    let scale = geom.cavity.shape.scale() * MM;
    let tol = 1e-9 * scale;
    let mut vols = vec![0.0; mesh.regions.len()];
    let mut faces: HashMap<[u32; 3], u32> = HashMap::with_capacity(2 * mesh.tets.len());
    for (t, tet) in mesh.tets.iter().enumerate() {
        let v = signed_volume(tet.map(|i| mesh.nodes[i as usize]));
        assert!(v > 1e-9 * scale.powi(3), "tet {t} has volume {v:e} m³");
        vols[mesh.tet_region[t] as usize] += v;
        for skip in 0..4 {
            let mut f = [0u32; 3];
            let mut k = 0;
            for (j, &n) in tet.iter().enumerate() {
                if j != skip {
                    f[k] = n;
                    k += 1;
                }
            }
            *faces.entry(sorted3(f)).or_default() += 1;
        }
    }
    let mut outer: Vec<[u32; 3]> = faces
        .iter()
        .map(|(f, &c)| {
            assert!(c <= 2, "face {f:?} is shared by {c} tets");
            (*f, c)
        })
        .filter(|&(_, c)| c == 1)
        .map(|(f, _)| f)
        .collect();
    outer.sort_unstable();
    let mut listed: Vec<[u32; 3]> = mesh.boundary.iter().map(|&f| sorted3(f)).collect();
    listed.sort_unstable();
    assert_eq!(outer.len(), listed.len(), "boundary triangle count");
    assert!(
        outer == listed,
        "the boundary list is not the faces with one tet"
    );
    for f in &listed {
        let w = f.map(|i| on_wall(geom.cavity.shape, mesh.nodes[i as usize], tol));
        assert!(
            (0..4).any(|k| w.iter().all(|x| x[k])),
            "boundary triangle {f:?} does not lie on one wall"
        );
    }
    let total: f64 = vols.iter().sum();
    let expect = geom.cavity.shape.volume() * MM.powi(3);
    if let CavityShape::Box { .. } = geom.cavity.shape {
        // Analytic: the tets tile the box, up to rounding (1e-12 per the sum's length).
        assert!(
            (total - expect).abs() <= 1e-12 * expect * (mesh.tets.len() as f64).sqrt().max(1.0),
            "mesh volume {total:e} vs cavity {expect:e}"
        );
    }
    vols
}
