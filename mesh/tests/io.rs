//! Mesh I/O: VTK XML writers and Gmsh MSH 4.1 import/export.

use antinode_mesh::geometry::MeshImport;
use antinode_mesh::gmsh::{import_msh, read_msh_str, write_msh, ImportError};
use antinode_mesh::vtk::{
    write_boundary_vtu, write_mesh_vtu, write_pvd, write_vtu, CellBlock, DataArray, VtkError,
    VtuPiece,
};
use antinode_mesh::{BoundaryTag, RegionInfo, TetMesh};
use std::collections::{BTreeMap, HashMap};
use std::path::{Path, PathBuf};

const FIXTURE: &str = include_str!("data/cube_two_volumes.msh");

fn out_dir(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("antinode-io-{}-{name}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// Unit cube (side `side` metres) split into the 6 tetrahedra around its main diagonal;
/// tets 3..6 are load 0; triangle (0,1,3) of the z = 0 face is port 0.
fn cube_mesh(side: f64) -> TetMesh {
    let nodes: Vec<[f64; 3]> = (0..8u32)
        .map(|i| {
            [
                (i & 1) as f64 * side,
                ((i >> 1) & 1) as f64 * side,
                ((i >> 2) & 1) as f64 * side,
            ]
        })
        .collect();
    let tets = vec![
        [0, 1, 3, 7],
        [0, 1, 5, 7],
        [0, 2, 3, 7],
        [0, 2, 6, 7],
        [0, 4, 5, 7],
        [0, 4, 6, 7],
    ];
    let mut count: HashMap<[u32; 3], usize> = HashMap::new();
    for t in &tets {
        for k in 0..4 {
            let mut f: Vec<u32> = (0..4).filter(|&j| j != k).map(|j| t[j]).collect();
            f.sort();
            *count.entry([f[0], f[1], f[2]]).or_default() += 1;
        }
    }
    let mut boundary: Vec<[u32; 3]> = count
        .into_iter()
        .filter(|&(_, c)| c == 1)
        .map(|(f, _)| f)
        .collect();
    boundary.sort();
    let boundary_tag = boundary
        .iter()
        .map(|f| {
            if *f == [0, 1, 3] {
                BoundaryTag::Port(0)
            } else {
                BoundaryTag::Wall
            }
        })
        .collect();
    TetMesh {
        nodes,
        tets,
        tet_region: vec![0, 0, 0, 1, 1, 1],
        boundary,
        boundary_tag,
        regions: vec![
            RegionInfo { name: "air".into() },
            RegionInfo {
                name: "bowl".into(),
            },
        ],
    }
}

fn mapping(groups: &[(&str, &str)], unit_mm: f64) -> MeshImport {
    MeshImport {
        file: PathBuf::from("cube_two_volumes.msh"),
        unit_mm,
        groups: groups
            .iter()
            .map(|&(a, b)| (a.to_string(), b.to_string()))
            .collect(),
    }
}

fn names(v: &[&str]) -> Vec<String> {
    v.iter().map(|s| s.to_string()).collect()
}

fn import_fixture(text: &str) -> Result<TetMesh, ImportError> {
    read_msh_str(
        text,
        &mapping(&[("water_volume", "bowl"), ("feed_aperture", "feed")], 1.0),
        &names(&["bowl"]),
        &names(&["feed"]),
    )
}

// ----- a minimal reader for what the writer produces ---------------------------------

fn b64_decode(s: &str) -> Vec<u8> {
    let val = |c: u8| -> u32 {
        match c {
            b'A'..=b'Z' => (c - b'A') as u32,
            b'a'..=b'z' => (c - b'a') as u32 + 26,
            b'0'..=b'9' => (c - b'0') as u32 + 52,
            b'+' => 62,
            b'/' => 63,
            _ => panic!("bad base64 character {c}"),
        }
    };
    let clean: Vec<u8> = s.bytes().filter(|c| !c.is_ascii_whitespace()).collect();
    let mut out = Vec::new();
    for chunk in clean.chunks(4) {
        let pad = chunk.iter().filter(|&&c| c == b'=').count();
        let mut n = 0u32;
        for &c in chunk {
            n = (n << 6) | if c == b'=' { 0 } else { val(c) };
        }
        let bytes = [(n >> 16) as u8, (n >> 8) as u8, n as u8];
        out.extend_from_slice(&bytes[..3 - pad]);
    }
    out
}

/// (attributes text, decoded payload) of each `<DataArray ...>` in document order.
fn data_arrays(xml: &str) -> Vec<(String, Vec<u8>)> {
    let mut out = Vec::new();
    let mut rest = xml;
    while let Some(start) = rest.find("<DataArray") {
        let open_end = start + rest[start..].find('>').unwrap();
        let attrs = rest[start..open_end].to_string();
        let close = open_end + rest[open_end..].find("</DataArray>").unwrap();
        let raw = b64_decode(&rest[open_end + 1..close]);
        let n = u64::from_le_bytes(raw[..8].try_into().unwrap()) as usize;
        assert_eq!(raw.len(), 8 + n, "header byte count of {attrs}");
        out.push((attrs, raw[8..].to_vec()));
        rest = &rest[close..];
    }
    out
}

fn array<'a>(arrays: &'a [(String, Vec<u8>)], name: &str) -> &'a (String, Vec<u8>) {
    arrays
        .iter()
        .find(|(a, _)| a.contains(&format!("Name=\"{name}\"")))
        .unwrap_or_else(|| panic!("no array {name}"))
}

fn i32s(b: &[u8]) -> Vec<i32> {
    b.chunks(4)
        .map(|c| i32::from_le_bytes(c.try_into().unwrap()))
        .collect()
}

fn f64s(b: &[u8]) -> Vec<f64> {
    b.chunks(8)
        .map(|c| f64::from_le_bytes(c.try_into().unwrap()))
        .collect()
}

// ----- VTK ---------------------------------------------------------------------------

#[test]
fn mesh_vtu_has_counts_arrays_and_exact_values() {
    let mesh = cube_mesh(0.3);
    let dir = out_dir("mesh-vtu");
    let path = dir.join("mesh.vtu");
    let quality: Vec<f64> = (0..6).map(|i| 0.5 + i as f64 * 0.1).collect();
    write_mesh_vtu(
        &path,
        &mesh,
        &[DataArray::Scalars {
            name: "quality",
            values: &quality,
        }],
    )
    .unwrap();
    let xml = std::fs::read_to_string(&path).unwrap();
    assert!(xml.contains("header_type=\"UInt64\""));
    assert!(xml.contains("NumberOfPoints=\"8\" NumberOfCells=\"6\""));
    let arrays = data_arrays(&xml);
    assert_eq!(
        arrays.len(),
        6,
        "region, quality, points, connectivity, offsets, types"
    );

    let (attrs, region) = array(&arrays, "region");
    assert!(attrs.contains("UInt32"));
    assert_eq!(i32s(region), vec![0, 0, 0, 1, 1, 1]);
    assert_eq!(f64s(&array(&arrays, "quality").1), quality);

    let points = arrays
        .iter()
        .find(|(a, _)| a.contains("NumberOfComponents=\"3\""))
        .unwrap();
    let flat: Vec<f64> = mesh.nodes.iter().flatten().copied().collect();
    assert_eq!(f64s(&points.1), flat);

    let conn = i32s(&array(&arrays, "connectivity").1);
    let expected: Vec<i32> = mesh.tets.iter().flatten().map(|&v| v as i32).collect();
    assert_eq!(conn, expected);
    assert_eq!(
        i32s(&array(&arrays, "offsets").1),
        vec![4, 8, 12, 16, 20, 24]
    );
    assert_eq!(array(&arrays, "types").1, vec![10u8; 6]);
    std::fs::remove_dir_all(dir).unwrap();
}

#[test]
fn boundary_vtu_tags_wall_zero_and_port_one() {
    let mesh = cube_mesh(1.0);
    let dir = out_dir("boundary-vtu");
    let path = dir.join("boundary.vtu");
    write_boundary_vtu(&path, &mesh).unwrap();
    let xml = std::fs::read_to_string(&path).unwrap();
    assert!(xml.contains("NumberOfPoints=\"8\" NumberOfCells=\"12\""));
    let arrays = data_arrays(&xml);
    let tags = i32s(&array(&arrays, "tag").1);
    assert_eq!(tags.len(), 12);
    assert_eq!(tags.iter().filter(|&&t| t == 1).count(), 1);
    assert_eq!(tags.iter().filter(|&&t| t == 0).count(), 11);
    assert_eq!(array(&arrays, "types").1, vec![5u8; 12]);
    std::fs::remove_dir_all(dir).unwrap();
}

#[test]
fn field_piece_with_point_vectors_and_pvd_collection() {
    let mesh = cube_mesh(1.0);
    let dir = out_dir("fields");
    let e: Vec<[f64; 3]> = mesh.nodes.iter().map(|p| [p[1], -p[0], 0.0]).collect();
    let mag: Vec<f64> = e
        .iter()
        .map(|v| (v[0] * v[0] + v[1] * v[1]).sqrt())
        .collect();
    let mut files = Vec::new();
    for m in 0..2 {
        let name = format!("mode_{m:03}.vtu");
        write_vtu(
            &dir.join(&name),
            &VtuPiece {
                points: &mesh.nodes,
                cells: CellBlock::Tets(&mesh.tets),
                point_data: vec![
                    DataArray::Vectors {
                        name: "E_real",
                        values: &e,
                    },
                    DataArray::Scalars {
                        name: "|E|",
                        values: &mag,
                    },
                ],
                cell_data: vec![DataArray::UInts {
                    name: "region",
                    values: &mesh.tet_region,
                }],
            },
        )
        .unwrap();
        files.push((m as f64, name));
    }
    write_pvd(&dir.join("modes.pvd"), &files).unwrap();
    let pvd = std::fs::read_to_string(dir.join("modes.pvd")).unwrap();
    assert!(pvd.contains("type=\"Collection\""));
    assert!(pvd.contains("timestep=\"1\" group=\"\" part=\"0\" file=\"mode_001.vtu\""));
    let xml = std::fs::read_to_string(dir.join("mode_000.vtu")).unwrap();
    let arrays = data_arrays(&xml);
    let (attrs, e_bytes) = array(&arrays, "E_real");
    assert!(attrs.contains("NumberOfComponents=\"3\""));
    assert_eq!(f64s(e_bytes).len(), 24);
    assert_eq!(f64s(&array(&arrays, "|E|").1), mag);
    std::fs::remove_dir_all(dir).unwrap();
}

#[test]
fn vtu_rejects_inconsistent_data_and_writes_nothing() {
    let mesh = cube_mesh(1.0);
    let dir = out_dir("reject");
    let path = dir.join("bad.vtu");
    let short = vec![1.0; 5];
    let err = write_mesh_vtu(
        &path,
        &mesh,
        &[DataArray::Scalars {
            name: "quality",
            values: &short,
        }],
    )
    .unwrap_err();
    assert!(matches!(err, VtkError::Invalid { .. }));
    let msg = err.to_string();
    assert!(
        msg.contains("bad.vtu") && msg.contains("'quality' has 5 entries, expected 6"),
        "{msg}"
    );
    assert!(!path.exists());
    assert!(
        std::fs::read_dir(&dir).unwrap().next().is_none(),
        "no partial file"
    );

    let bad_tets = [[0u32, 1, 2, 8]];
    let err = write_vtu(
        &path,
        &VtuPiece {
            points: &mesh.nodes,
            cells: CellBlock::Tets(&bad_tets),
            point_data: vec![],
            cell_data: vec![],
        },
    )
    .unwrap_err();
    assert!(err.to_string().contains("refers to point 8"), "{err}");

    let err = write_pvd(&dir.join("x.pvd"), &[(f64::NAN, "a.vtu")]).unwrap_err();
    assert!(err.to_string().contains("not finite"), "{err}");
    std::fs::remove_dir_all(dir).unwrap();
}

#[test]
fn vtu_write_to_missing_folder_names_the_path() {
    let mesh = cube_mesh(1.0);
    let path = Path::new("/nonexistent-antinode-dir/mesh.vtu");
    let err = write_mesh_vtu(path, &mesh, &[]).unwrap_err();
    assert!(matches!(err, VtkError::Io { .. }));
    assert!(err
        .to_string()
        .contains("/nonexistent-antinode-dir/mesh.vtu"));
}

// ----- MSH import --------------------------------------------------------------------

fn sorted_boundary(mesh: &TetMesh) -> BTreeMap<[[u64; 3]; 3], BoundaryTag> {
    // Key: the sorted vertex coordinates (bit patterns), independent of node numbering.
    mesh.boundary
        .iter()
        .zip(&mesh.boundary_tag)
        .map(|(f, &t)| {
            let mut pts = f.map(|i| mesh.nodes[i as usize].map(f64::to_bits));
            pts.sort();
            (pts, t)
        })
        .collect()
}

#[test]
fn fixture_maps_two_volumes_and_a_port() {
    let mesh = import_fixture(FIXTURE).unwrap();
    assert_eq!(mesh.nodes.len(), 8, "unused node 100 dropped");
    assert_eq!(mesh.tets.len(), 6);
    assert_eq!(mesh.tet_region, vec![0, 0, 0, 1, 1, 1]);
    assert_eq!(
        mesh.regions
            .iter()
            .map(|r| r.name.as_str())
            .collect::<Vec<_>>(),
        ["air", "bowl"]
    );
    // mm → m
    assert!(mesh.nodes.iter().flatten().all(|&c| c == 0.0 || c == 1e-3));
    let vols = mesh.region_volumes();
    assert!((vols[0] - 0.5e-9).abs() < 1e-21 && (vols[1] - 0.5e-9).abs() < 1e-21);

    assert_eq!(mesh.boundary.len(), 12);
    let ports: Vec<usize> = (0..12)
        .filter(|&f| mesh.boundary_tag[f] == BoundaryTag::Port(0))
        .collect();
    assert_eq!(ports.len(), 1);
    assert!((mesh.boundary_area(ports[0]) - 0.5e-6).abs() < 1e-18);
    let total: f64 = (0..12).map(|f| mesh.boundary_area(f)).sum();
    assert!((total - 6e-6).abs() < 1e-17);

    // Outward normals: each boundary triangle's normal points away from the centre.
    for f in &mesh.boundary {
        let [a, b, c] = f.map(|i| mesh.nodes[i as usize]);
        let u = [b[0] - a[0], b[1] - a[1], b[2] - a[2]];
        let v = [c[0] - a[0], c[1] - a[1], c[2] - a[2]];
        let n = [
            u[1] * v[2] - u[2] * v[1],
            u[2] * v[0] - u[0] * v[2],
            u[0] * v[1] - u[1] * v[0],
        ];
        let centre_to_a = [a[0] - 0.5e-3, a[1] - 0.5e-3, a[2] - 0.5e-3];
        let d = n[0] * centre_to_a[0] + n[1] * centre_to_a[1] + n[2] * centre_to_a[2];
        assert!(d > 0.0, "inward boundary triangle {f:?}");
    }
}

#[test]
fn groups_named_after_targets_need_no_mapping_and_unit_scales() {
    let text = FIXTURE
        .replace("\"water_volume\"", "\"bowl\"")
        .replace("\"feed_aperture\"", "\"feed\"");
    let mesh = read_msh_str(
        &text,
        &mapping(&[], 1000.0),
        &names(&["bowl"]),
        &names(&["feed"]),
    )
    .unwrap();
    assert_eq!(mesh.tet_region, vec![0, 0, 0, 1, 1, 1]);
    assert!(mesh.nodes.iter().flatten().all(|&c| c == 0.0 || c == 1.0));
}

#[test]
fn msh_round_trip_keeps_nodes_regions_and_tags() {
    let mesh = cube_mesh(0.25);
    let dir = out_dir("roundtrip");
    let path = dir.join("cube.msh");
    let ports = names(&["feed"]);
    write_msh(&path, &mesh, &ports).unwrap();
    let back = import_msh(&path, &mapping(&[], 1000.0), &names(&["bowl"]), &ports).unwrap();
    assert_eq!(back.nodes, mesh.nodes, "coordinates exact");
    assert_eq!(back.tets, mesh.tets);
    assert_eq!(back.tet_region, mesh.tet_region);
    assert_eq!(sorted_boundary(&back), sorted_boundary(&mesh));
    std::fs::remove_dir_all(dir).unwrap();
}

// ----- MSH errors --------------------------------------------------------------------

fn err_of(text: &str) -> ImportError {
    match import_fixture(text) {
        Ok(_) => panic!("import should have failed"),
        Err(e) => e,
    }
}

fn line_of(text: &str, needle: &str) -> usize {
    text.lines().position(|l| l == needle).unwrap() + 1
}

#[test]
fn missing_section_is_reported() {
    let start = FIXTURE.find("$Elements").unwrap();
    let err = err_of(&FIXTURE[..start]);
    let msg = err.to_string();
    assert!(
        msg.contains("cube_two_volumes.msh") && msg.contains("no $Elements section"),
        "{msg}"
    );

    let err = err_of(&FIXTURE.replace("$EndNodes\n", ""));
    assert!(err.to_string().contains("expected $EndNodes"), "{err}");

    let err = err_of("$Nodes\n0 0 0 0\n$EndNodes\n");
    assert_eq!(err.line(), Some(1));
    assert!(err.to_string().contains("expected $MeshFormat"), "{err}");
}

#[test]
fn bad_number_names_its_line() {
    let text = FIXTURE.replace("\n1 0 1\n", "\n1 0 x1\n");
    let line = line_of(&text, "1 0 x1");
    let err = err_of(&text);
    assert_eq!(err.line(), Some(line), "{err}");
    let msg = err.to_string();
    assert!(msg.contains(&format!("line {line}")), "{msg}");
    assert!(
        msg.contains("node z coordinate") && msg.contains("'x1'"),
        "{msg}"
    );

    let text = FIXTURE.replace("5 1 3 4 8", "5 1 3 4 99");
    let err = err_of(&text);
    assert_eq!(err.line(), Some(line_of(&text, "5 1 3 4 99")));
    assert!(err.to_string().contains("node 99"), "{err}");
}

#[test]
fn unknown_and_unmapped_groups_are_named() {
    let err = read_msh_str(
        FIXTURE,
        &mapping(&[("water", "bowl")], 1.0),
        &names(&["bowl"]),
        &names(&[]),
    )
    .unwrap_err();
    let msg = err.to_string();
    assert!(
        msg.contains("\"water\"") && msg.contains("\"water_volume\" (volume)"),
        "{msg}"
    );

    // No mapping for water_volume: its tetrahedra have no region.
    let err =
        read_msh_str(FIXTURE, &mapping(&[], 1.0), &names(&["bowl"]), &names(&[])).unwrap_err();
    let msg = err.to_string();
    assert!(msg.contains("volume group \"water_volume\""), "{msg}");
    assert_eq!(err.line(), Some(line_of(FIXTURE, "3 2 \"water_volume\"")));

    // Mapping to something the geometry does not have.
    let err = read_msh_str(
        FIXTURE,
        &mapping(&[("water_volume", "soup")], 1.0),
        &names(&["bowl"]),
        &names(&[]),
    )
    .unwrap_err();
    assert!(err.to_string().contains("\"soup\""), "{err}");

    // A volume group mapped to a port.
    let err = read_msh_str(
        FIXTURE,
        &mapping(&[("water_volume", "feed")], 1.0),
        &names(&[]),
        &names(&["feed"]),
    )
    .unwrap_err();
    assert!(
        err.to_string().contains("volume group can only map"),
        "{err}"
    );

    // A declared port with no triangles.
    let err = read_msh_str(
        FIXTURE,
        &mapping(&[("water_volume", "bowl")], 1.0),
        &names(&["bowl"]),
        &names(&["feed"]),
    )
    .unwrap_err();
    assert!(
        err.to_string()
            .contains("port \"feed\" has no boundary triangles"),
        "{err}"
    );
}

#[test]
fn unsupported_elements_and_formats() {
    let text = FIXTURE.replace(
        "3 2 4 3\n6 1 3 7 8\n7 1 5 6 8\n8 1 5 7 8",
        "3 2 11 1\n6 1 3 7 8 1 2 3 4 5 6",
    );
    let text = text.replace("4 8 1 8", "4 6 1 8");
    let err = err_of(&text);
    let msg = err.to_string();
    assert!(msg.contains("only linear 4-node tetrahedra"), "{msg}");
    assert_eq!(err.line(), Some(line_of(&text, "3 2 11 1")));

    let err = err_of(&FIXTURE.replace("4.1 0 8", "2.2 0 8"));
    assert!(err.to_string().contains("version '2.2'"), "{err}");
    let err = err_of(&FIXTURE.replace("4.1 0 8", "4.1 1 8"));
    assert!(err.to_string().contains("binary"), "{err}");
}

#[test]
fn inconsistent_meshes_are_rejected() {
    // A port triangle that is not a face of any tetrahedron.
    let text = FIXTURE.replace("2 1 2 4\n", "2 1 6 7\n");
    let err = err_of(&text);
    assert!(
        err.to_string().contains("not a face of any tetrahedron"),
        "{err}"
    );
    assert_eq!(err.line(), Some(line_of(&text, "2 1 6 7")));

    // A port triangle inside the cube (shared by tets 3 and 4).
    let text = FIXTURE.replace("2 1 2 4\n", "2 1 4 8\n");
    let err = err_of(&text);
    assert!(err.to_string().contains("lies inside the mesh"), "{err}");

    // A flat tetrahedron.
    let text = FIXTURE.replace("4 1 2 6 8", "4 1 2 3 4");
    let err = err_of(&text);
    assert!(err.to_string().contains("zero volume"), "{err}");

    // Header count disagreeing with the blocks.
    let err = err_of(&FIXTURE.replace("3 9 1 100", "3 10 1 100"));
    assert!(err.to_string().contains("declares 10 nodes"), "{err}");
}

#[test]
fn import_reports_missing_file() {
    let err = import_msh(
        Path::new("/nonexistent/cavity.msh"),
        &mapping(&[], 1.0),
        &[],
        &[],
    )
    .unwrap_err();
    assert!(matches!(err, ImportError::Io { .. }));
    assert!(err.to_string().contains("/nonexistent/cavity.msh"));
}

#[test]
fn garbage_input_never_panics() {
    // Every prefix of the fixture is either a valid file or a clean error.
    for cut in 0..FIXTURE.len() {
        if FIXTURE.is_char_boundary(cut) {
            let _ = import_fixture(&FIXTURE[..cut]);
        }
    }
    let _ = import_fixture(
        "$MeshFormat\n4.1 0 8\n$EndMeshFormat\n$Nodes\n1 18446744073709551615 0 0\n",
    );
    let _ = import_fixture("\"unterminated");
}
