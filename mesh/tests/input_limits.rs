//! Input files read with a size limit, and bytes that are not text: `/dev/zero`,
//! `/dev/urandom`, an oversized file and a binary MSH file are refused by name, at once,
//! without reading on.

use antinode_mesh::error::GeometryError;
use antinode_mesh::geometry::MeshImport;
use antinode_mesh::gmsh::{import_msh, ImportError};
use antinode_mesh::input::{MAX_GEOMETRY_BYTES, MAX_MSH_BYTES};
use antinode_mesh::Geometry;
use std::path::{Path, PathBuf};
use std::time::Instant;

fn data(name: &str) -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .join("tests/data/msh")
        .join(name)
}

fn import(path: &Path) -> Result<antinode_mesh::TetMesh, ImportError> {
    let mapping = MeshImport {
        file: path.to_path_buf(),
        unit_mm: 1.0,
        groups: Vec::new(),
    };
    import_msh(path, &mapping, &[], &[])
}

fn temp(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("antinode-limits-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    dir.join(name)
}

#[test]
fn devices_as_geometry_are_refused_at_the_limit() {
    for dev in ["/dev/zero", "/dev/urandom"] {
        if !Path::new(dev).exists() {
            panic!("{dev} is missing on this machine");
        }
        let t = Instant::now();
        let err = Geometry::from_file(dev).expect_err("a device is no geometry");
        // Printed, not asserted: timings are never asserted in tests.
        println!(
            "{dev} as geometry refused in {:.3} s",
            t.elapsed().as_secs_f64()
        );
        assert!(matches!(err, GeometryError::Input { .. }), "{err}");
        let msg = err.to_string();
        assert!(
            msg.contains(dev) && msg.contains("larger than 1 MiB"),
            "{msg}"
        );
    }
}

#[test]
fn devices_as_msh_are_refused_from_their_first_bytes() {
    let t = Instant::now();
    let err = import(Path::new("/dev/zero")).unwrap_err();
    println!(
        "/dev/zero as MSH refused in {:.3} s",
        t.elapsed().as_secs_f64()
    );
    let msg = err.to_string();
    assert!(
        msg.contains("/dev/zero") && msg.contains("expected $MeshFormat") && msg.contains("\\x00"),
        "{msg}"
    );
    assert_eq!(err.line(), Some(1));
    let err = import(Path::new("/dev/urandom")).unwrap_err();
    assert!(err.to_string().contains("not a Gmsh MSH file"), "{err}");
}

#[test]
fn oversized_files_are_refused_before_reading() {
    let path = temp("big.toml");
    let f = std::fs::File::create(&path).unwrap();
    f.set_len(MAX_GEOMETRY_BYTES + 1).unwrap();
    let err = Geometry::from_file(&path).unwrap_err();
    assert!(err.to_string().contains("larger than 1 MiB"), "{err}");

    let path = temp("big.msh");
    let f = std::fs::File::create(&path).unwrap();
    f.set_len(MAX_MSH_BYTES + 1).unwrap(); // sparse: no disk used
    let err = import(&path).unwrap_err();
    assert!(err.to_string().contains("larger than 1 GiB"), "{err}");
    std::fs::remove_file(&path).unwrap();
}

#[test]
fn binary_msh_is_named_as_unsupported() {
    let err = import(&data("binary_header.msh")).unwrap_err();
    let msg = err.to_string();
    assert!(
        msg.contains("binary MSH files are not supported") && msg.contains("Mesh.Binary = 0"),
        "{msg}"
    );
    assert_eq!(err.line(), Some(2), "{msg}");
}

#[test]
fn bytes_that_are_not_text_name_their_line() {
    let path = temp("latin1.toml");
    std::fs::write(&path, b"title = \"caf\xe9\"\n").unwrap();
    let err = Geometry::from_file(&path).unwrap_err();
    let msg = err.to_string();
    assert!(msg.contains("line 1") && msg.contains("UTF-8"), "{msg}");

    let path = temp("nul.msh");
    std::fs::write(&path, b"$MeshFormat\n4.1 0 8\n$EndMeshFormat\n$Nodes\n\0\n").unwrap();
    let err = import(&path).unwrap_err();
    assert_eq!(err.line(), Some(5), "{err}");
    assert!(err.to_string().contains("NUL"), "{err}");
}
