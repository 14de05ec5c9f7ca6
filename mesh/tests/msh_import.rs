//! Malformed, adversarial and mis-scaled MSH files (hand-made, in `tests/data/msh/`):
//! each gives an error naming the file and, where it has one, the line.

use antinode_mesh::geometry::MeshImport;
use antinode_mesh::gmsh::{import_msh, read_msh_str, ImportError};
use antinode_mesh::{make_mesh, Geometry, TetMesh};
use std::path::{Path, PathBuf};

fn dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("tests/data/msh")
}

fn mapping(file: &str) -> MeshImport {
    MeshImport {
        file: dir().join(file),
        unit_mm: 1.0,
        groups: Vec::new(),
    }
}

fn import_file(file: &str) -> Result<TetMesh, ImportError> {
    import_msh(&dir().join(file), &mapping(file), &[], &[])
}

fn import_text(text: &str) -> Result<TetMesh, ImportError> {
    read_msh_str(text, &mapping("cube.msh"), &[], &[])
}

fn base() -> String {
    std::fs::read_to_string(dir().join("cube.msh")).unwrap()
}

fn line_of(text: &str, needle: &str) -> usize {
    text.lines().position(|l| l == needle).expect(needle) + 1
}

/// The error of `r`, which must name `line` (if given) and hold every needle.
fn refused(r: Result<TetMesh, ImportError>, line: Option<usize>, needles: &[&str]) {
    let err = match r {
        Ok(_) => panic!("accepted; expected {needles:?}"),
        Err(e) => e,
    };
    let msg = err.to_string();
    assert!(msg.contains(".msh"), "no file in: {msg}");
    if line.is_some() {
        assert_eq!(err.line(), line, "{msg}");
    }
    for n in needles {
        assert!(msg.contains(n), "expected {n:?} in: {msg}");
    }
}

#[test]
fn the_base_file_imports() {
    let mesh = import_file("cube.msh").expect("valid");
    assert_eq!((mesh.nodes.len(), mesh.tets.len()), (8, 6));
    // Closed cube: 2 boundary triangles per face.
    assert_eq!(mesh.boundary.len(), 12);
}

#[test]
fn cracked_mesh_with_a_duplicate_node_is_refused() {
    let text = std::fs::read_to_string(dir().join("cube_cracked.msh")).unwrap();
    // The duplicate's coordinates: the second "1 1 1" line.
    let second = text
        .lines()
        .enumerate()
        .filter(|(_, l)| *l == "1 1 1")
        .nth(1)
        .unwrap()
        .0
        + 1;
    refused(
        import_file("cube_cracked.msh"),
        Some(second),
        &[
            "nodes 8 (line",
            "and 9 lie at the same point (1, 1, 1)",
            "crack",
        ],
    );
}

#[test]
fn folded_mesh_is_refused() {
    let text = std::fs::read_to_string(dir().join("cube_folded.msh")).unwrap();
    refused(
        import_file("cube_folded.msh"),
        Some(line_of(&text, "7 1 2 4 9")),
        &["tetrahedra 1 (line", "and 7 share a face", "same side"],
    );
}

#[test]
fn hanging_node_is_refused() {
    let text = std::fs::read_to_string(dir().join("cube_hanging.msh")).unwrap();
    refused(
        import_file("cube_hanging.msh"),
        Some(line_of(&text, "0.5 0 0")),
        &[
            "node 6 lies on the boundary triangle of nodes 1 3 2",
            "hanging node",
        ],
    );
}

#[test]
fn truncated_file_names_the_last_line() {
    let text = base();
    for cut in ["$Elements", "4 1 3 7 8", "$EndNodes"] {
        let end = text.find(cut).unwrap() + cut.len();
        let t = &text[..end];
        refused(import_text(t), Some(t.lines().count()), &["truncated"]);
    }
}

#[test]
fn wrong_version_and_second_order_elements() {
    let text = base().replace("4.1 0 8", "2.2 0 8");
    refused(import_text(&text), Some(2), &["version '2.2'", "4.1"]);
    let text = base().replace("3 1 4 6\n", "3 1 11 6\n");
    refused(
        import_text(&text),
        Some(line_of(&text, "3 1 11 6")),
        &["10-node second-order tetrahedron", "element order 1"],
    );
}

#[test]
fn unmapped_group_is_named() {
    let text = base().replace("3 1 \"air\"", "3 1 \"soup\"");
    refused(
        import_text(&text),
        Some(line_of(&text, "3 1 \"soup\"")),
        &["volume group \"soup\"", "not mapped"],
    );
}

#[test]
fn duplicate_and_huge_node_ids() {
    let text = base().replacen("\n2\n", "\n1\n", 1);
    refused(import_text(&text), None, &["node tag 1 is defined twice"]);
    let text = base().replacen("\n8\n", "\n99999999999999999999\n", 1);
    refused(
        import_text(&text),
        Some(line_of(&text, "99999999999999999999")),
        &["a node tag", "99999999999999999999"],
    );
    // The largest tag a file can hold is fine: tags are looked up, never indexed.
    let whole = base();
    let (nodes, elements) = whole.split_at(whole.find("$Elements").unwrap());
    let text = nodes.replacen("\n8\n", "\n18446744073709551615\n", 1)
        + &elements.replace(" 8\n", " 18446744073709551615\n");
    import_text(&text).expect("tag u64::MAX");
    // A header announcing 10^18 nodes allocates nothing up front.
    let text = base().replace("1 8 1 8\n", "1 1000000000000000000 1 8\n");
    refused(
        import_text(&text),
        None,
        &["declares 1000000000000000000 nodes"],
    );
}

#[test]
fn far_away_coordinates_are_refused() {
    let text = base().replacen("\n1 1 1\n", "\n1 1 1e300\n", 1);
    refused(
        import_text(&text),
        Some(line_of(&text, "1 1 1e300")),
        &["node 8 lies", "beyond the 100 m"],
    );
}

/// A 1 mm cube cavity importing `cube.msh` with `unit_mm`.
fn cube_geometry(unit_mm: f64, size: [f64; 3]) -> Geometry {
    let text = format!(
        "title = \"invented\"\n[cavity]\nshape = \"box\"\nsize = [{}, {}, {}]\nwalls = \"pec\"\n\
         [mesh]\nimport = \"cube.msh\"\nunit_mm = {unit_mm}\n[solve]\ntarget = 200\n",
        size[0], size[1], size[2]
    );
    Geometry::from_toml_str(&text, Some(&dir().join("cube.toml"))).expect("geometry")
}

#[test]
fn mis_scaled_or_misplaced_import_is_refused_with_both_volumes() {
    make_mesh(&cube_geometry(1.0, [1.0, 1.0, 1.0])).expect("fits");
    // unit_mm = 1000 makes it a 1 m cube: 1000 L against 1e-6 L.
    let err = make_mesh(&cube_geometry(1000.0, [1.0, 1.0, 1.0])).unwrap_err();
    let msg = err.to_string();
    assert!(
        msg.contains("cube.msh")
            && msg.contains("meshed volume is 1000.0000 L")
            && msg.contains("[cavity] holds 1.000e-6 L")
            && msg.contains("unit_mm"),
        "{msg}"
    );
    // Within the allowed offsets (10 % of the largest extent) and volume ratio (1.5).
    let err = make_mesh(&cube_geometry(1.0, [1.0, 0.9, 1.1])).map(|_| ());
    assert!(err.is_ok(), "a 10 % difference fits: {err:?}");
    // Same volume, other shape: the mesh does not fill the cavity.
    let err = make_mesh(&cube_geometry(1.0, [2.0, 0.5, 1.0])).unwrap_err();
    assert!(
        err.to_string()
            .contains("the mesh spans x = 0.0000 .. 1.0000 mm"),
        "{err}"
    );
}
