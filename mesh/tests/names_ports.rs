//! Names, titles, port overlap and cutoff, and keys that conflict with an import: each
//! refused with the file, the line, the entry and the value.

use antinode_mesh::error::GeometryError;
use antinode_mesh::Geometry;
use std::path::Path;

const FILE: &str = "case.toml";

const BOX: &str = "title = \"t\"\n[cavity]\nshape = \"box\"\nsize = [300.0, 300.0, 200.0]\n\
                   walls = \"copper\"\n";
const CYL: &str = "title = \"t\"\n[cavity]\nshape = \"cylinder\"\nradius = 150.0\n\
                   height = 200.0\nwalls = \"pec\"\n";

fn parse(text: &str) -> Result<Geometry, GeometryError> {
    Geometry::from_toml_str(text, Some(Path::new(FILE)))
}

fn line_of(text: &str, needle: &str) -> usize {
    text.lines()
        .position(|l| l.contains(needle))
        .map(|i| i + 1)
        .unwrap_or_else(|| panic!("no line with {needle:?}"))
}

/// `text` is refused at the first line holding `at`, and the message holds every needle.
fn refused(text: &str, at: &str, needles: &[&str]) -> GeometryError {
    refused_at(text, line_of(text, at), needles)
}

/// `text` is refused at `line`, and the message holds every needle.
fn refused_at(text: &str, line: usize, needles: &[&str]) -> GeometryError {
    let err = match parse(text) {
        Ok(_) => panic!("accepted:\n{text}"),
        Err(e) => e,
    };
    let msg = err.to_string();
    assert_eq!(err.line(), Some(line), "{msg}");
    assert!(msg.contains(FILE), "{msg}");
    for n in needles {
        assert!(msg.contains(n), "expected {n:?} in: {msg}");
    }
    err
}

fn load(name: &str) -> String {
    format!(
        "[[load]]\nname = \"{name}\"\nshape = \"box\"\nmin = [10, 10, 0]\nmax = [20, 20, 10]\n\
         material = \"water\"\n"
    )
}

fn port(name: &str, wall: &str, center: [f64; 2], extra: &str) -> String {
    format!(
        "[[port]]\nname = \"{name}\"\nwall = \"{wall}\"\ncenter = [{}, {}]\nwidth = 86.36\n\
         height = 43.18\n{extra}",
        center[0], center[1]
    )
}

#[test]
fn names_that_would_collide_as_columns_are_refused() {
    for bad in ["a b", "a,b", "q\\\"x"] {
        let text = format!("{BOX}{}", load(bad));
        refused(&text, "name =", &["load name", "not allowed in a name"]);
    }
    let text = format!("{BOX}{}", port("in put", "+x", [150.0, 100.0], ""));
    refused(&text, "name = \"in put\"", &["a space", "letters, digits"]);
}

#[test]
fn reserved_and_shared_names_are_refused() {
    let text = format!("{BOX}{}", load("air"));
    refused(&text, "name = \"air\"", &["background region"]);
    let text = format!("{BOX}{}", load("Wall"));
    refused(&text, "name = \"Wall\"", &["metal wall"]);
    let text = format!(
        "{BOX}{}{}",
        load("feed"),
        port("feed", "+x", [150.0, 100.0], "")
    );
    let err = refused(
        &text,
        "[[port]]",
        &["\"feed\"", "used twice", "first on line 6"],
    );
    assert!(matches!(err, GeometryError::DuplicateName { .. }));
}

#[test]
fn control_characters_in_the_title_are_refused_and_escaped() {
    let text = BOX.replace("title = \"t\"", "title = \"oven \\u001b[2J\\u001b[31mred\"");
    let err = refused(&text, "title", &["title", "U+001B", "\\u{001b}[2J"]);
    assert!(!err.to_string().contains('\u{1b}'), "raw escape printed");
    let text = BOX.replace("title = \"t\"", "title = \"a\\u202Eb\"");
    refused(&text, "title", &["U+202E"]);
}

#[test]
fn overlapping_ports_are_refused_on_every_wall_type() {
    // Box wall: two WR-340 apertures 50 mm apart on the same wall.
    let text = format!(
        "{BOX}{}{}",
        port("a", "+x", [150.0, 100.0], ""),
        port("b", "+x", [200.0, 100.0], "")
    );
    let second = line_of(&text, "name = \"b\"") - 1;
    let err = refused_at(&text, second, &["\"b\" overlaps port \"a\"", "\"+x\""]);
    assert!(matches!(err, GeometryError::PortsOverlap { .. }));
    // Touching edges are allowed: 86.36 mm apart.
    let text = format!(
        "{BOX}{}{}",
        port("a", "+x", [100.0, 100.0], ""),
        port("b", "+x", [186.36, 100.0], "")
    );
    parse(&text).expect("touching ports");
    // Same centre on different walls is no overlap.
    let text = format!(
        "{BOX}{}{}",
        port("a", "+x", [150.0, 100.0], ""),
        port("b", "-x", [150.0, 100.0], "")
    );
    parse(&text).expect("opposite walls");
    // Cylinder top.
    let text = format!(
        "{CYL}{}{}",
        port("a", "top", [0.0, 0.0], ""),
        port("b", "top", [30.0, 0.0], "")
    );
    refused_at(&text, line_of(&text, "name = \"b\"") - 1, &["wall \"top\""]);
    // Cylinder side: the same aperture at 0° and at 360°.
    let text = format!(
        "{CYL}{}{}",
        port("a", "side", [0.0, 100.0], "angle_deg = 0\n"),
        port("b", "side", [0.0, 100.0], "angle_deg = 360\n")
    );
    let second = line_of(&text, "name = \"b\"") - 1;
    refused_at(&text, second, &["side wall", "modulo 360"]);
    // Side ports half a turn apart do not overlap.
    let text = format!(
        "{CYL}{}{}",
        port("a", "side", [0.0, 100.0], "angle_deg = 0\n"),
        port("b", "side", [0.0, 100.0], "angle_deg = 180\n")
    );
    parse(&text).expect("opposite side ports");
}

#[test]
fn port_below_cutoff_in_the_band_is_refused() {
    // Broad side 50 mm: TE10 cutoff c/(2a) = 2.998 GHz (Pozar 4th ed., §3.3, eq. 3.84),
    // above the band 2.4-2.5 GHz.
    let text = format!(
        "{BOX}[[port]]\nname = \"slot\"\nwall = \"+x\"\ncenter = [150, 100]\nwidth = 50\n\
         height = 20\n[solve]\nband = [2.4, 2.5]\n"
    );
    refused(
        &text,
        "width = 50",
        &["port \"slot\"", "TE10 cutoff", "2.9979 GHz", "59.96 mm"],
    );
    // 70 mm: cutoff 2.141 GHz, below the band: accepted.
    let text = text.replace("width = 50", "width = 70");
    parse(&text).expect("port above cutoff");
}

#[test]
fn load_shape_with_an_import_is_refused() {
    let text = format!(
        "{BOX}{}[mesh]\nimport = \"a.msh\"\n[mesh.groups]\nv = \"cup\"\n",
        load("cup")
    );
    refused_at(
        &text,
        line_of(&text, "name = \"cup\"") + 1,
        &[
            "load \"cup\"",
            "shape = \"box\"",
            "conflicts with [mesh] import",
        ],
    );
    let text = format!(
        "{BOX}[[load]]\nname = \"cup\"\nradius = 3\nmaterial = \"water\"\n[mesh]\n\
         import = \"a.msh\"\n[mesh.groups]\nv = \"cup\"\n"
    );
    refused(&text, "radius = 3", &["radius = 3"]);
    let text = format!("{BOX}[mesh]\nimport = \"a.msh\"\nmax_size = 5\n");
    refused(&text, "max_size", &["max_size", "fixes the element sizes"]);
}
