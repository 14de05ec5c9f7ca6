//! Inputs the fuzzer (`fuzz.rs`) once found wrong, kept as regression tests.

use antinode_mesh::geometry::MeshImport;
use antinode_mesh::gmsh::read_msh_str;
use antinode_mesh::Geometry;
use std::path::{Path, PathBuf};

fn printable(msg: &str) {
    assert!(
        !msg.chars().any(|c| c.is_control() && c != '\n'),
        "raw control character in: {msg:?}"
    );
}

/// Found by `fuzz_msh_importer` (seed default): a terminal escape inserted before the
/// file type was quoted raw in the message.
#[test]
fn escape_sequence_in_an_msh_token_is_escaped() {
    let text = "$MeshFormat\n4.1 \u{1b}[31m0 8\n$EndMeshFormat\n";
    let mapping = MeshImport {
        file: PathBuf::from("fuzz.msh"),
        unit_mm: 1.0,
        groups: Vec::new(),
    };
    let err = read_msh_str(text, &mapping, &[], &[]).unwrap_err();
    let msg = err.to_string();
    printable(&msg);
    assert!(msg.contains("\\u{001b}[31m0"), "{msg}");
    // The same in a physical group name, quoted by the mapping error.
    let text =
        "$MeshFormat\n4.1 0 8\n$EndMeshFormat\n$PhysicalNames\n1\n3 1 \"x\u{1b}]0;pwned\u{7}\"\n\
                $EndPhysicalNames\n$Nodes\n0 0 0 0\n$EndNodes\n$Elements\n0 0 0 0\n$EndElements\n";
    let err = read_msh_str(text, &mapping, &[], &[]).unwrap_err();
    printable(&err.to_string());
}

/// Same class in a geometry file: an unknown material name with an escape sequence.
#[test]
fn escape_sequence_in_a_geometry_value_is_escaped() {
    let text = "[cavity]\nshape = \"box\"\nsize = [1, 1, 1]\nwalls = \"\\u001b[2J\"\n";
    let err = Geometry::from_toml_str(text, Some(Path::new("f.toml"))).unwrap_err();
    let msg = err.to_string();
    printable(&msg);
    assert!(msg.contains("\\u{001b}[2J"), "{msg}");
}
