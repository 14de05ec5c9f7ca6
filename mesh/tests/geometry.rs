//! Geometry-file parsing and validation: every example parses, defaults apply, and each
//! kind of bad input is rejected with a message that names the file, the line, the
//! load/port and the offending value.

use antinode_mesh::error::GeometryError;
use antinode_mesh::geometry::{CavityShape, LoadShape, PortWall, WallMetal};
use antinode_mesh::material::Dielectric;
use antinode_mesh::Geometry;
use std::path::{Path, PathBuf};

const FILE: &str = "case.toml";

/// A valid box-cavity file; cases replace or append pieces of it.
const BASE: &str = r#"title = "test"
[cavity]
shape = "box"
size = [300.0, 300.0, 200.0]
walls = "copper"
"#;

const CYL: &str = r#"title = "test"
[cavity]
shape = "cylinder"
radius = 150.0
height = 200.0
walls = "pec"
"#;

fn parse(text: &str) -> Result<Geometry, GeometryError> {
    Geometry::from_toml_str(text, Some(Path::new(FILE)))
}

/// 1-based line of the first line containing `needle`.
fn line_of(text: &str, needle: &str) -> usize {
    text.lines()
        .position(|l| l.contains(needle))
        .map(|i| i + 1)
        .unwrap_or_else(|| panic!("test text has no line with {needle:?}"))
}

/// Asserts `text` is rejected, the message names the file, `line`, and every needle.
fn rejects(text: &str, line: usize, needles: &[&str]) -> GeometryError {
    let err = match parse(text) {
        Ok(_) => panic!("accepted bad input:\n{text}"),
        Err(e) => e,
    };
    let msg = err.to_string();
    assert!(msg.contains(FILE), "no file name in: {msg}");
    let pat = format!("line {line}");
    let has_line = msg.match_indices(&pat).any(|(i, _)| {
        !msg[i + pat.len()..]
            .chars()
            .next()
            .is_some_and(|c| c.is_ascii_digit())
    });
    assert!(has_line, "expected line {line} in: {msg}");
    assert_eq!(err.line(), Some(line), "{msg}");
    for n in needles {
        assert!(msg.contains(n), "expected {n:?} in: {msg}");
    }
    err
}

fn with_load(base: &str, load: &str) -> String {
    format!("{base}[[load]]\n{load}\n")
}

fn geometries_dir() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../geometries")
}

// ----- examples and defaults -------------------------------------------------------------

/// A sweep file names a base geometry at the top level; a geometry file has `[cavity]`.
fn is_sweep_file(path: &std::path::Path) -> bool {
    let text = std::fs::read_to_string(path).expect("example readable");
    let doc: toml::Table = text.parse().expect("example is TOML");
    doc.contains_key("geometry")
}

#[test]
fn every_example_parses() {
    let mut n = 0;
    let dir = std::fs::read_dir(geometries_dir()).expect("geometries/ exists");
    for entry in dir {
        let path = entry.expect("dir entry").path();
        if path.extension().is_some_and(|e| e == "toml") {
            if is_sweep_file(&path) {
                // A sweep example: every variant it expands to must be a valid geometry.
                let sweep = antinode_mesh::sweep::SweepFile::from_file(&path)
                    .unwrap_or_else(|e| panic!("{} does not parse: {e}", path.display()));
                let title = sweep.title.clone().unwrap_or_default();
                assert!(
                    title.contains("Invented demo"),
                    "{}: title must say it is an invented demo scenario",
                    path.display()
                );
                for v in sweep.variants(|k| path.with_extension(format!("variant{k}.toml"))) {
                    if let Err(e) = v.geometry {
                        panic!("{} variant {}: {e}", path.display(), v.index);
                    }
                }
                continue;
            }
            let g = Geometry::from_file(&path)
                .unwrap_or_else(|e| panic!("{} does not parse: {e}", path.display()));
            assert!(
                g.title.contains("Invented demo scenario"),
                "{}: title must say it is an invented demo scenario",
                path.display()
            );
            n += 1;
        }
    }
    assert!(n >= 4, "expected at least 4 example files, found {n}");
}

#[test]
fn bowl_on_plate_contents() {
    let g = Geometry::from_file(geometries_dir().join("bowl_on_plate.toml")).expect("parses");
    assert_eq!(g.loads.len(), 2);
    let water = g.load("water").expect("water load");
    assert_eq!(
        water.material.dielectric,
        Dielectric::WaterDebye {
            temperature_c: 20.0
        }
    );
    let feed = g.port("feed").expect("feed port");
    // WR-340: 86.36 x 43.18 mm (EIA standard waveguide dimensions, design.md §5).
    assert_eq!((feed.width, feed.height), (86.36, 43.18));
    assert_eq!(
        feed.wall,
        PortWall::BoxWall {
            axis: 0,
            positive: true
        }
    );
    assert_eq!(g.solve.band, Some([2.40, 2.50]));
}

/// Sizes not given follow the order and target: an explicit order 2 takes 5 per
/// wavelength, a 5 GHz target halves the default max_size; given sizes stay.
#[test]
fn size_defaults_follow_order_and_target() {
    let g = parse(&format!("{BASE}[mesh]\norder = 2\n[solve]\ntarget = 5.0\n")).expect("valid");
    assert_eq!(g.mesh.per_wavelength, 5.0);
    assert!((g.mesh.max_size - 299.792458 / 5.0 / 5.0).abs() < 1e-9);
    let mut g = parse(&format!("{BASE}[mesh]\nper_wavelength = 4.0\n")).expect("valid");
    assert_eq!((g.mesh.order, g.mesh.per_wavelength), (3, 4.0));
    assert!((g.mesh.max_size - 299.792458 / 2.45 / 4.0).abs() < 1e-9);
    // As `--order 1` does: the given per_wavelength stays, max_size follows it.
    g.mesh.order = 1;
    g.mesh.apply_defaults(2.45);
    assert_eq!(g.mesh.per_wavelength, 4.0);
    let mut g = parse(&format!("{BASE}[mesh]\nmax_size = 30.0\n")).expect("valid");
    g.mesh.order = 1;
    g.mesh.apply_defaults(2.45);
    assert_eq!((g.mesh.per_wavelength, g.mesh.max_size), (10.0, 30.0));
}

#[test]
fn defaults_apply() {
    let text = format!(
        "{BASE}[[port]]\nwall = \"+x\"\ncenter = [100.0, 100.0]\nwidth = 80\nheight = 40\n\
         [[port]]\nwall = \"-y\"\ncenter = [100.0, 100.0]\nwidth = 80\nheight = 40\n"
    );
    let g = parse(&text).expect("valid");
    // Defaults from the mesh-size study (README, Accuracy by order and mesh size): order 3
    // at 3 per wavelength, max_size λ0/3 at 2.45 GHz = 299.79/2.45/3 = 40.79 mm.
    assert_eq!(g.mesh.order, 3);
    assert_eq!(g.mesh.per_wavelength, 3.0);
    assert!(
        (g.mesh.max_size - 40.788).abs() < 1e-3,
        "{}",
        g.mesh.max_size
    );
    assert!(!g.mesh.per_wavelength_given && !g.mesh.max_size_given);
    assert_eq!(g.solve.target, 2.45);
    assert_eq!(g.solve.count, Some(20));
    assert_eq!(g.ports[0].name, "port1");
    assert_eq!(g.ports[1].name, "port2");
    assert!(!g.ports[0].rotated);
    assert_eq!(g.source.as_deref(), Some(Path::new(FILE)));
    assert_eq!(
        g.cavity.walls,
        WallMetal::Metal {
            name: "copper".into(),
            conductivity: 5.8e7
        }
    );
}

#[test]
fn band_without_count_leaves_count_unset() {
    let g = parse(&format!("{BASE}[solve]\nband = [2.4, 2.5]\n")).expect("valid");
    assert_eq!(g.solve.count, None);
}

#[test]
fn custom_materials_and_walls() {
    let text = format!(
        "{BASE}[[load]]\nname = \"a\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [10, 10, 10]\n\
         material = {{ permittivity = 4.0, loss_tangent = 0.01 }}\n\
         [[load]]\nname = \"b\"\nshape = \"box\"\nmin = [20, 0, 0]\nmax = [30, 10, 10]\n\
         material = {{ permittivity = 78, loss_factor = 10, permeability = 2 }}\n\
         [[load]]\nname = \"c\"\nshape = \"box\"\nmin = [40, 0, 0]\nmax = [50, 10, 10]\n\
         material = {{ permittivity = 3, conductivity = 0.5 }}\n"
    )
    .replace("walls = \"copper\"", "walls = { conductivity = 3.5e7 }");
    let g = parse(&text).expect("valid");
    assert_eq!(
        g.cavity.walls,
        WallMetal::Metal {
            name: "custom".into(),
            conductivity: 3.5e7
        }
    );
    let (er, ei) = g.loads[0].material.permittivity(2.45e9);
    assert_eq!(er, 4.0);
    assert!((ei - 0.04).abs() < 1e-15);
    assert_eq!(g.loads[1].material.permittivity(2.45e9), (78.0, 10.0));
    assert_eq!(g.loads[1].material.permeability, 2.0);
    // ε″ = σ / (ω ε0) (design.md §3).
    let (_, ei) = g.loads[2].material.permittivity(2.45e9);
    let expect = 0.5 / (2.0 * std::f64::consts::PI * 2.45e9 * 8.854_187_812_8e-12);
    assert!((ei - expect).abs() < 1e-12 * expect);
}

#[test]
fn touching_loads_are_allowed() {
    // A bowl standing on a plate shares the plate's top face; a box beside a box shares a face.
    let text = format!(
        "{BASE}[[load]]\nname = \"plate\"\nshape = \"cylinder\"\ncenter = [150, 150]\nradius = 100\n\
         bottom = 10\nheight = 6\nmaterial = \"borosilicate glass\"\n\
         [[load]]\nname = \"bowl\"\nshape = \"cylinder\"\ncenter = [150, 150]\nradius = 40\n\
         bottom = 16\nheight = 30\nmaterial = \"water\"\n\
         [[load]]\nname = \"b1\"\nshape = \"box\"\nmin = [0, 0, 100]\nmax = [10, 10, 110]\nmaterial = \"ptfe\"\n\
         [[load]]\nname = \"b2\"\nshape = \"box\"\nmin = [10, 0, 100]\nmax = [20, 10, 110]\nmaterial = \"ptfe\"\n\
         [[load]]\nname = \"c1\"\nshape = \"cylinder\"\ncenter = [40, 40]\nradius = 10\nbottom = 100\n\
         height = 10\nmaterial = \"ptfe\"\n"
    );
    let g = parse(&text).expect("touching is allowed");
    assert_eq!(g.loads.len(), 5);
    assert_eq!(
        g.loads[4].shape,
        Some(LoadShape::Cylinder {
            center: [40.0, 40.0],
            radius: 10.0,
            bottom: 100.0,
            height: 10.0
        })
    );
}

#[test]
fn import_lets_loads_omit_shape() {
    let text = format!(
        "{BASE}[[load]]\nname = \"meat\"\nmaterial = \"raw beef\"\n\
         [[port]]\nname = \"feed\"\nwall = \"+x\"\ncenter = [150, 100]\nwidth = 86.36\nheight = 43.18\n\
         [mesh]\nimport = \"shapes/roast.msh\"\nunit_mm = 1000\n\
         [mesh.groups]\nvol_air = \"air\"\nvol_meat = \"meat\"\nmetal = \"wall\"\ninlet = \"feed\"\n"
    );
    let g = Geometry::from_toml_str(&text, Some(Path::new("/some/dir/case.toml"))).expect("valid");
    assert_eq!(g.loads[0].shape, None);
    let imp = g.mesh.import.expect("import");
    assert_eq!(imp.file, Path::new("/some/dir/shapes/roast.msh"));
    assert_eq!(imp.unit_mm, 1000.0);
    assert_eq!(imp.groups.len(), 4);
    assert!(imp
        .groups
        .contains(&("vol_meat".to_string(), "meat".to_string())));
}

#[test]
fn cylinder_cavity_ports() {
    let text = format!(
        "{CYL}[[port]]\nname = \"t\"\nwall = \"top\"\ncenter = [0, 0]\nwidth = 86.36\nheight = 43.18\n\
         [[port]]\nname = \"s\"\nwall = \"side\"\nangle_deg = 90\ncenter = [10, 100]\nwidth = 86.36\n\
         height = 43.18\nrotated = true\n"
    );
    let g = parse(&text).expect("valid");
    assert_eq!(
        g.cavity.shape,
        CavityShape::Cylinder {
            radius: 150.0,
            height: 200.0
        }
    );
    assert_eq!(g.cavity.walls, WallMetal::Pec);
    assert_eq!(g.ports[1].wall, PortWall::Side { angle_deg: 90.0 });
    assert_eq!(g.ports[1].in_plane_extent(), [43.18, 86.36]);
}

// ----- error cases ----------------------------------------------------------------------

#[test]
fn syntax_error_has_line() {
    rejects_at(&format!("{BASE}[mesh]\norder = = 2\n"), "order = =", &[]);
}

#[test]
fn unknown_top_level_key() {
    rejects_at(
        &format!("{BASE}colour = \"red\"\n"),
        "colour",
        &["colour", "expected one of"],
    );
}

#[test]
fn unknown_key_in_load_names_the_load() {
    rejects_load(BASE, "name = \"bowl\"\nshape = \"box\"\nmin = [0,0,0]\nmax = [1,1,1]\nmaterial = \"ptfe\"\ncolour = 3", "colour", &["colour", "load \"bowl\""]);
}

#[test]
fn unknown_key_in_port_names_the_port() {
    rejects_at(&format!(
        "{BASE}[[port]]\nname = \"feed\"\nwall = \"+x\"\ncenter = [100, 100]\nwidth = 80\nheight = 40\nimpedance = 50\n"
    ), "impedance", &["impedance", "port \"feed\""]);
}

#[test]
fn unknown_key_in_cavity() {
    let text = BASE.replace("walls", "depth = 3\nwalls");
    rejects(&text, line_of(&text, "depth"), &["depth"]);
}

#[test]
fn non_positive_cavity_size() {
    let text = BASE.replace("[300.0, 300.0, 200.0]", "[300.0, -300.0, 200.0]");
    rejects(
        &text,
        line_of(&text, "size"),
        &["[cavity]", "size", "-300", "positive"],
    );
}

#[test]
fn non_finite_load_radius() {
    rejects_load(BASE, "name = \"cup\"\nshape = \"cylinder\"\ncenter = [100, 100]\nradius = nan\nbottom = 0\nheight = 10\nmaterial = \"water\"", "radius", &["load \"cup\"", "radius", "NaN", "finite"]);
}

#[test]
fn zero_cylinder_cavity_radius() {
    let text = CYL.replace("radius = 150.0", "radius = 0.0");
    rejects(
        &text,
        line_of(&text, "radius"),
        &["radius", "= 0", "positive"],
    );
}

#[test]
fn box_load_with_inverted_corners() {
    let text = with_load(
        BASE,
        "name = \"slab\"\nshape = \"box\"\nmin = [10, 10, 10]\nmax = [20, 5, 20]\nmaterial = \"ptfe\"",
    );
    rejects(
        &text,
        line_of(&text, "max ="),
        &["load \"slab\"", "[20, 5, 20]"],
    );
}

#[test]
fn load_outside_box_cavity() {
    rejects_load(BASE, "name = \"slab\"\nshape = \"box\"\nmin = [250, 10, 10]\nmax = [310, 50, 20]\nmaterial = \"ptfe\"", "[[load]]", &["load \"slab\"", "310", "outside"]);
}

#[test]
fn cylinder_load_outside_box_cavity_in_z() {
    rejects_load(BASE, "name = \"tall\"\nshape = \"cylinder\"\ncenter = [100, 100]\nradius = 20\nbottom = 150\nheight = 60\nmaterial = \"potato\"", "[[load]]", &["load \"tall\"", "210", "outside"]);
}

#[test]
fn cylinder_load_footprint_outside_box_cavity() {
    rejects_load(BASE, "name = \"cup\"\nshape = \"cylinder\"\ncenter = [15, 100]\nradius = 20\nbottom = 0\nheight = 10\nmaterial = \"water\"", "[[load]]", &["load \"cup\"", "-5", "outside"]);
}

#[test]
fn loads_outside_cylinder_cavity() {
    rejects_load(CYL, "name = \"cup\"\nshape = \"cylinder\"\ncenter = [100, 0]\nradius = 60\nbottom = 0\nheight = 10\nmaterial = \"water\"", "[[load]]", &["load \"cup\"", "160.000", "150"]);
    // A box whose corner (120, 120) is 169.7 mm from the axis.
    rejects_load(CYL, "name = \"tray\"\nshape = \"box\"\nmin = [-120, -120, 0]\nmax = [120, 120, 5]\nmaterial = \"ptfe\"", "[[load]]", &["load \"tray\"", "120", "169.706"]);
}

#[test]
fn overlapping_boxes() {
    let text = format!(
        "{BASE}[[load]]\nname = \"a\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [50, 50, 50]\nmaterial = \"ptfe\"\n\
         [[load]]\nname = \"b\"\nshape = \"box\"\nmin = [49, 49, 49]\nmax = [60, 60, 60]\nmaterial = \"ptfe\"\n"
    );
    let second = text
        .match_indices("[[load]]")
        .nth(1)
        .map(|(i, _)| i)
        .unwrap_or(0);
    let line = text[..second].lines().count() + 1;
    let err = rejects(
        &text,
        line,
        &["load \"b\"", "load \"a\"", "overlaps", "(line 6)"],
    );
    assert!(matches!(err, GeometryError::LoadsOverlap { .. }));
}

#[test]
fn overlapping_cylinders() {
    // Bowl sunk 1 mm into the plate.
    let text = format!(
        "{BASE}[[load]]\nname = \"plate\"\nshape = \"cylinder\"\ncenter = [150, 150]\nradius = 100\nbottom = 10\nheight = 6\nmaterial = \"borosilicate glass\"\n\
         [[load]]\nname = \"bowl\"\nshape = \"cylinder\"\ncenter = [150, 150]\nradius = 40\nbottom = 15\nheight = 30\nmaterial = \"water\"\n"
    );
    let line = line_of(&text, "name = \"bowl\"") - 1;
    rejects(
        &text,
        line,
        &["load \"bowl\"", "load \"plate\"", "z = 15 .. 16"],
    );
}

#[test]
fn overlapping_cylinder_and_box() {
    let text = format!(
        "{BASE}[[load]]\nname = \"block\"\nshape = \"box\"\nmin = [100, 100, 0]\nmax = [140, 140, 20]\nmaterial = \"ptfe\"\n\
         [[load]]\nname = \"cup\"\nshape = \"cylinder\"\ncenter = [150, 120]\nradius = 15\nbottom = 0\nheight = 20\nmaterial = \"water\"\n"
    );
    let line = line_of(&text, "name = \"cup\"") - 1;
    rejects(
        &text,
        line,
        &["load \"cup\"", "load \"block\"", "radius 15"],
    );
}

#[test]
fn port_does_not_fit_box_wall() {
    // +x wall, in-plane (y, z): z = 190 ± 21.59 pokes above 200.
    let text = format!(
        "{BASE}[[port]]\nname = \"feed\"\nwall = \"+x\"\ncenter = [150, 190]\nwidth = 86.36\nheight = 43.18\n"
    );
    let err = rejects(
        &text,
        line_of(&text, "[[port]]"),
        &["port \"feed\"", "+x", "211.59"],
    );
    assert!(matches!(err, GeometryError::PortDoesNotFit { .. }));
}

#[test]
fn rotated_port_does_not_fit() {
    // Rotated: broad side along z; on the -z wall (x, y) it is along y: 150 ± 43.18 fits,
    // but on the -y wall (x, z) z = 180 ± 43.18 does not.
    rejects_at(&format!(
        "{BASE}[[port]]\nwall = \"-y\"\ncenter = [150, 180]\nwidth = 86.36\nheight = 43.18\nrotated = true\n"
    ), "[[port]]", &["port \"port1\"", "223.18"]);
}

#[test]
fn port_does_not_fit_cylinder_top() {
    rejects_at(&format!(
        "{CYL}[[port]]\nname = \"lid\"\nwall = \"top\"\ncenter = [120, 0]\nwidth = 86.36\nheight = 43.18\n"
    ), "[[port]]", &["port \"lid\"", "top", "163.18"]);
}

#[test]
fn port_does_not_fit_cylinder_side() {
    rejects_at(&format!(
        "{CYL}[[port]]\nname = \"wide\"\nwall = \"side\"\ncenter = [0, 100]\nwidth = 480\nheight = 43.18\n"
    ), "[[port]]", &["port \"wide\"", "480", "471.239"]);
    rejects_at(&format!(
        "{CYL}[[port]]\nname = \"low\"\nwall = \"side\"\ncenter = [0, 10]\nwidth = 86.36\nheight = 43.18\n"
    ), "[[port]]", &["port \"low\"", "-11.59"]);
}

#[test]
fn port_on_wrong_wall_for_shape() {
    rejects_at(&format!(
        "{BASE}[[port]]\nname = \"feed\"\nwall = \"top\"\ncenter = [150, 150]\nwidth = 86.36\nheight = 43.18\n"
    ), "wall = \"top\"", &["port \"feed\"", "\"top\"", "\"+z\""]);
    rejects_at(&format!(
        "{CYL}[[port]]\nname = \"feed\"\nwall = \"+x\"\ncenter = [0, 100]\nwidth = 86.36\nheight = 43.18\n"
    ), "wall = \"+x\"", &["port \"feed\"", "\"+x\"", "\"side\""]);
}

#[test]
fn angle_only_on_side_wall() {
    rejects_at(&format!(
        "{CYL}[[port]]\nname = \"lid\"\nwall = \"top\"\nangle_deg = 30\ncenter = [0, 0]\nwidth = 86.36\nheight = 43.18\n"
    ), "angle_deg", &["port \"lid\"", "angle_deg", "30"]);
}

#[test]
fn narrow_side_larger_than_broad_side() {
    rejects_at(&format!(
        "{BASE}[[port]]\nname = \"feed\"\nwall = \"+x\"\ncenter = [150, 100]\nwidth = 43.18\nheight = 86.36\n"
    ), "height = 86.36", &["port \"feed\"", "86.36", "rotated"]);
}

#[test]
fn unknown_material_lists_known_ones() {
    let text = with_load(
        BASE,
        "name = \"soup\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [1, 1, 1]\nmaterial = \"gazpacho\"",
    );
    let err = rejects(
        &text,
        line_of(&text, "gazpacho"),
        &[
            "load \"soup\"",
            "gazpacho",
            "\"water\"",
            "\"ptfe\"",
            "\"borosilicate glass\"",
        ],
    );
    assert!(matches!(err, GeometryError::UnknownMaterial { .. }));
}

#[test]
fn metal_as_load_material() {
    rejects_load(BASE, "name = \"spoon\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [1, 1, 1]\nmaterial = \"copper\"", "material", &["load \"spoon\"", "copper", "metal"]);
}

#[test]
fn unknown_wall_metal() {
    let text = BASE.replace("\"copper\"", "\"unobtainium\"");
    let err = rejects(
        &text,
        line_of(&text, "walls"),
        &["unobtainium", "\"copper\"", "\"pec\""],
    );
    assert!(matches!(err, GeometryError::UnknownMetal { .. }));
}

#[test]
fn non_positive_wall_conductivity() {
    let text = BASE.replace("\"copper\"", "{ conductivity = -1.0 }");
    rejects(
        &text,
        line_of(&text, "walls"),
        &["conductivity", "-1", "pec"],
    );
}

#[test]
fn negative_losses() {
    for (key, value) in [
        ("loss_tangent", "-0.01"),
        ("loss_factor", "-2"),
        ("conductivity", "-0.5"),
    ] {
        let text = with_load(
            BASE,
            &format!(
                "name = \"neg\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [1, 1, 1]\nmaterial = {{ permittivity = 4, {key} = {value} }}"
            ),
        );
        rejects(
            &text,
            line_of(&text, "material"),
            &["load \"neg\"", key, value, ">= 0"],
        );
    }
}

#[test]
fn permittivity_below_one() {
    rejects_load(BASE, "name = \"foam\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [1, 1, 1]\nmaterial = { permittivity = 0.5 }", "material", &["load \"foam\"", "permittivity", "0.5", ">= 1"]);
}

/// [`rejects`] at the first line containing `line_needle`.
fn rejects_at(text: &str, line_needle: &str, needles: &[&str]) -> GeometryError {
    rejects(text, line_of(text, line_needle), needles)
}

/// [`rejects_at`] for `base` with one `[[load]]` table (body `load`) appended.
fn rejects_load(base: &str, load: &str, line_needle: &str, needles: &[&str]) -> GeometryError {
    rejects_at(&with_load(base, load), line_needle, needles)
}

#[test]
fn two_loss_kinds_and_unknown_material_key() {
    rejects_load(BASE, "name = \"x\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [1, 1, 1]\nmaterial = { permittivity = 4, loss_tangent = 0.1, loss_factor = 0.4 }", "material", &["load \"x\"", "only one"]);
    rejects_load(BASE, "name = \"y\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [1, 1, 1]\nmaterial = { permittivity = 4, tan_d = 0.1 }", "material", &["load \"y\"", "tan_d", "loss_tangent"]);
}

#[test]
fn water_temperature_checks() {
    rejects_load(BASE, "name = \"hot\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [1, 1, 1]\nmaterial = \"water\"\ntemperature = 120", "temperature", &["load \"hot\"", "120", "0..100"]);
    rejects_load(BASE, "name = \"warm\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [1, 1, 1]\nmaterial = \"ptfe\"\ntemperature = 40", "temperature", &["load \"warm\"", "40", "water"]);
}

/// An ice load takes a temperature in the ice model's accepted −60..0 °C (default −10):
/// −18 °C is kept, +5 °C (liquid) is refused with the range in the message.
#[test]
fn ice_temperature_checks() {
    let text = with_load(BASE, "name = \"block\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [10, 10, 10]\nmaterial = \"ice\"\ntemperature = -18");
    let g = parse(&text).expect("parses");
    assert_eq!(
        g.load("block").expect("block").material.dielectric,
        Dielectric::IceMaetzler {
            temperature_c: -18.0
        }
    );
    let text = with_load(BASE, "name = \"block\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [10, 10, 10]\nmaterial = \"ice\"");
    assert_eq!(
        parse(&text)
            .expect("parses")
            .load("block")
            .expect("block")
            .material
            .dielectric,
        Dielectric::IceMaetzler {
            temperature_c: -10.0
        }
    );
    rejects_load(BASE, "name = \"slush\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [1, 1, 1]\nmaterial = \"ice\"\ntemperature = 5", "temperature", &["load \"slush\"", "5", "-60..0"]);
}

#[test]
fn mesh_settings_checks() {
    let text = format!("{BASE}[mesh]\norder = 4\n");
    rejects(
        &text,
        line_of(&text, "order"),
        &["[mesh]", "order = 4", "1, 2 or 3"],
    );
    rejects_at(
        &format!("{BASE}[mesh]\nper_wavelength = 0\n"),
        "per_wavelength",
        &["per_wavelength = 0", "positive"],
    );
    rejects_at(
        &format!("{BASE}[mesh]\nmax_size = -20\n"),
        "max_size",
        &["max_size = -20"],
    );
    rejects_at(
        &format!("{BASE}[mesh]\nunit_mm = 1000\n"),
        "unit_mm",
        &["unit_mm = 1000", "import"],
    );
}

#[test]
fn solve_settings_checks() {
    let text = format!("{BASE}[solve]\ntarget = -2.45\n");
    rejects(
        &text,
        line_of(&text, "target"),
        &["[solve]", "target = -2.45", "positive"],
    );
    let text = format!("{BASE}[solve]\nband = [2.5, 2.4]\n");
    rejects(
        &text,
        line_of(&text, "band"),
        &["band = [2.5, 2.4]", "lo < hi"],
    );
    let text = format!("{BASE}[solve]\nband = [2.4, 2.4]\n");
    rejects(&text, line_of(&text, "band"), &["band = [2.4, 2.4]"]);
    rejects_at(
        &format!("{BASE}[solve]\ncount = 0\n"),
        "count",
        &["count = 0", "at least 1"],
    );
}

#[test]
fn duplicate_load_names() {
    let text = format!(
        "{BASE}[[load]]\nname = \"a\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [10, 10, 10]\nmaterial = \"ptfe\"\n\
         [[load]]\nname = \"a\"\nshape = \"box\"\nmin = [20, 0, 0]\nmax = [30, 10, 10]\nmaterial = \"ptfe\"\n"
    );
    let second = text
        .match_indices("name = \"a\"")
        .nth(1)
        .map(|(i, _)| i)
        .unwrap_or(0);
    let line = text[..second].lines().count() + 1;
    let err = rejects(
        &text,
        line,
        &["load name \"a\"", "twice", "first on line 6"],
    );
    assert!(matches!(err, GeometryError::DuplicateName { .. }));
}

#[test]
fn duplicate_port_names_including_defaults() {
    // The second port's default name "port2" collides with the first port's given name.
    let text = format!(
        "{BASE}[[port]]\nname = \"port2\"\nwall = \"+x\"\ncenter = [100, 100]\nwidth = 80\nheight = 40\n\
         [[port]]\nwall = \"-x\"\ncenter = [100, 100]\nwidth = 80\nheight = 40\n"
    );
    let second = text
        .match_indices("[[port]]")
        .nth(1)
        .map(|(i, _)| i)
        .unwrap_or(0);
    let line = text[..second].lines().count() + 1;
    rejects(&text, line, &["port name \"port2\"", "twice"]);
}

#[test]
fn load_without_shape_when_not_importing() {
    rejects_load(
        BASE,
        "name = \"blob\"\nmaterial = \"potato\"",
        "[[load]]",
        &["load \"blob\"", "shape", "import"],
    );
}

#[test]
fn bad_group_target() {
    let text = format!(
        "{BASE}[[load]]\nname = \"meat\"\nmaterial = \"raw beef\"\n[mesh]\nimport = \"a.msh\"\n\
         [mesh.groups]\nvol = \"meat\"\nother = \"gravy\"\n"
    );
    let err = rejects(
        &text,
        line_of(&text, "gravy"),
        &["other", "gravy", "\"meat\"", "\"air\""],
    );
    assert!(matches!(err, GeometryError::UnknownGroupTarget { .. }));
}

#[test]
fn imported_load_without_group() {
    let text = format!(
        "{BASE}[[load]]\nname = \"meat\"\nmaterial = \"raw beef\"\n[mesh]\nimport = \"a.msh\"\n\
         [mesh.groups]\nvol = \"air\"\n"
    );
    rejects(
        &text,
        line_of(&text, "[mesh.groups]"),
        &["load \"meat\"", "[mesh.groups]"],
    );
}

#[test]
fn missing_file_is_an_io_error() {
    let err = Geometry::from_file("/nonexistent/dir/none.toml").expect_err("no such file");
    assert!(matches!(err, GeometryError::Io { .. }));
    assert!(err.to_string().contains("none.toml"));
}

#[test]
fn missing_walls_says_what_to_write() {
    let text = BASE.replace("walls = \"copper\"\n", "");
    rejects(
        &text,
        line_of(&text, "[cavity]"),
        &["walls", "\"pec\"", "conductivity"],
    );
}

#[test]
fn port_drive_keys() {
    let g = parse(&format!(
        "{BASE}[[port]]\nname = \"a\"\nwall = \"+x\"\ncenter = [150, 100]\nwidth = 86.36\nheight = 43.18\n\
         power = 800\nphase_deg = -90\n[[port]]\nname = \"b\"\nwall = \"-x\"\ncenter = [150, 100]\n\
         width = 86.36\nheight = 43.18\n"
    ))
    .expect("valid drive keys");
    assert_eq!(
        (g.ports[0].power, g.ports[0].phase_deg),
        (Some(800.0), -90.0)
    );
    assert_eq!((g.ports[1].power, g.ports[1].phase_deg), (None, 0.0));
    rejects_at(&format!(
        "{BASE}[[port]]\nname = \"neg\"\nwall = \"+x\"\ncenter = [150, 100]\nwidth = 86.36\nheight = 43.18\npower = -5\n"
    ), "power", &["port \"neg\"", "power", "-5"]);
    rejects_at(&format!(
        "{BASE}[[port]]\nname = \"ph\"\nwall = \"+x\"\ncenter = [150, 100]\nwidth = 86.36\nheight = 43.18\nphase_deg = nan\n"
    ), "phase_deg", &["port \"ph\"", "phase_deg"]);
}

#[test]
fn thermal_properties() {
    let g = parse(&with_load(
        BASE,
        "name = \"dough\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [10, 10, 10]\n\
         material = { permittivity = 20, loss_factor = 8, density = 1100, specific_heat = 2800 }",
    ))
    .expect("valid thermal keys");
    let th = g.loads[0].material.thermal.as_ref().expect("thermal");
    assert_eq!((th.density, th.specific_heat), (1100.0, 2800.0));
    let w = parse(&with_load(
        BASE,
        "name = \"w\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [10, 10, 10]\nmaterial = \"water\"",
    ))
    .expect("water");
    assert!(
        w.loads[0].material.thermal.is_some(),
        "built-in water has thermal data"
    );
    rejects_load(BASE, "name = \"half\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [1, 1, 1]\nmaterial = { permittivity = 4, density = 1000 }", "material", &["load \"half\"", "density", "specific_heat"]);
    rejects_load(BASE, "name = \"neg\"\nshape = \"box\"\nmin = [0, 0, 0]\nmax = [1, 1, 1]\nmaterial = { permittivity = 4, density = 1000, specific_heat = 0 }", "material", &["load \"neg\"", "specific_heat", "> 0"]);
}
