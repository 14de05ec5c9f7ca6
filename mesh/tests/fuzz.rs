//! Seeded fuzzing of the geometry parser and the MSH importer with proptest.
//!
//! Each case takes a seed file (the example geometries, `tests/data/fuzz/geometry/`,
//! `tests/data/fuzz/msh/`) and applies a few random edits: a line deleted, duplicated or
//! swapped, a byte range cut, a token from a dictionary of awkward values inserted or put
//! in place of a number (huge, tiny, negative, non-finite, overflowing, section names,
//! quotes, control characters). The parser must then either refuse the input with a
//! located message free of raw control characters, or return a result that passes
//! independent checks (below). A panic fails the case; a hang would stop the suite.
//!
//! Bounded and seeded: `PROPTEST_CASES` cases (default 2000 per target, under a second
//! each target in release), from `PROPTEST_RNG_SEED` (default fixed). A longer run:
//! `PROPTEST_CASES=100000 PROPTEST_RNG_SEED=7 cargo test --release -p antinode-mesh --test fuzz`.
//! Inputs that once failed are regression tests in `fuzz_regressions.rs`.

use antinode_mesh::geometry::bounds::{MAX_LENGTH_MM, MIN_LENGTH_MM};
use antinode_mesh::geometry::names::{check_name, check_title, unsafe_in_text};
use antinode_mesh::geometry::ports::ports_overlap;
use antinode_mesh::geometry::{CavityShape, MeshImport};
use antinode_mesh::gmsh::{read_msh_str, ImportError};
use antinode_mesh::{Geometry, TetMesh};
use proptest::prelude::*;
use proptest::test_runner::{Config, RngAlgorithm, TestRng, TestRunner};
use std::collections::HashMap;
use std::path::PathBuf;

/// Awkward values put into the text.
const DICTIONARY: &[&str] = &[
    "0",
    "-0",
    "-1",
    "1e308",
    "-1e308",
    "1e-308",
    "1e-30",
    "1e30",
    "nan",
    "inf",
    "-inf",
    "18446744073709551616",
    "18446744073709551615",
    "4294967296",
    "9999999999",
    "0.5",
    "2",
    "3",
    "4",
    "11",
    "\"",
    "\"\"",
    "[",
    "]",
    "{",
    "}",
    "=",
    ",",
    "\n",
    " ",
    "#",
    "$EndNodes",
    "$Nodes",
    "$Elements",
    "$EndElements",
    "$PhysicalNames",
    "$Entities",
    "$EndEntities",
    "\u{1b}[31m",
    "\u{7}",
    "\u{202e}",
    "air",
    "wall",
    "a b",
    "a,b",
    "\"box\"",
    "\"cylinder\"",
    "\"side\"",
    "[[port]]",
    "[[load]]",
    "[mesh]",
    "[solve]",
    "import = \"x.msh\"",
];

#[derive(Clone, Debug)]
enum Edit {
    DeleteLine(usize),
    DuplicateLine(usize),
    SwapLines(usize, usize),
    Cut(usize, usize),
    Insert(usize, usize),
    ReplaceNumber(usize, usize),
}

fn edit() -> impl Strategy<Value = Edit> {
    let d = DICTIONARY.len();
    prop_oneof![
        any::<usize>().prop_map(Edit::DeleteLine),
        any::<usize>().prop_map(Edit::DuplicateLine),
        (any::<usize>(), any::<usize>()).prop_map(|(a, b)| Edit::SwapLines(a, b)),
        (any::<usize>(), 1usize..40).prop_map(|(a, n)| Edit::Cut(a, n)),
        (any::<usize>(), 0..d).prop_map(|(a, k)| Edit::Insert(a, k)),
        (any::<usize>(), 0..d).prop_map(|(a, k)| Edit::ReplaceNumber(a, k)),
        (any::<usize>(), 0..d).prop_map(|(a, k)| Edit::ReplaceNumber(a, k)),
    ]
}

/// The nearest char boundary at or below `i`.
fn floor(s: &str, i: usize) -> usize {
    let mut i = i.min(s.len());
    while !s.is_char_boundary(i) {
        i -= 1;
    }
    i
}

fn apply(text: &str, e: &Edit) -> String {
    let mut lines: Vec<&str> = text.lines().collect();
    let n = lines.len().max(1);
    match *e {
        Edit::DeleteLine(i) if !lines.is_empty() => {
            lines.remove(i % n);
        }
        Edit::DuplicateLine(i) if !lines.is_empty() => lines.insert(i % n, lines[i % n]),
        Edit::SwapLines(a, b) if !lines.is_empty() => lines.swap(a % n, b % n),
        Edit::Cut(a, len) => {
            let a = floor(text, a % (text.len() + 1));
            let b = floor(text, a + len);
            return format!("{}{}", &text[..a], &text[b..]);
        }
        Edit::Insert(a, k) => {
            let a = floor(text, a % (text.len() + 1));
            return format!("{}{}{}", &text[..a], DICTIONARY[k], &text[a..]);
        }
        Edit::ReplaceNumber(a, k) => {
            // The number (run of digits, signs, dots, e) at or after position a.
            let is_num = |c: char| c.is_ascii_digit() || matches!(c, '.' | '-' | '+' | 'e');
            let starts: Vec<usize> = text
                .char_indices()
                .filter(|&(i, c)| {
                    c.is_ascii_digit() && (i == 0 || !is_num(text[..i].chars().last().unwrap()))
                })
                .map(|(i, _)| i)
                .collect();
            if starts.is_empty() {
                return text.to_string();
            }
            let s = starts[a % starts.len()];
            let end = text[s..]
                .find(|c: char| !is_num(c))
                .map_or(text.len(), |l| s + l);
            return format!("{}{}{}", &text[..s], DICTIONARY[k], &text[end..]);
        }
        _ => {}
    }
    lines.join("\n") + "\n"
}

fn runner() -> TestRunner {
    let env = |k: &str| std::env::var(k).ok().and_then(|v| v.parse::<u64>().ok());
    let cases = env("PROPTEST_CASES").unwrap_or(2000) as u32;
    let seed = env("PROPTEST_RNG_SEED").unwrap_or(0x0616_e746_96e6_f646);
    let mut bytes = [0u8; 32];
    for (i, b) in bytes.iter_mut().enumerate() {
        *b = (seed >> (8 * (i % 8))) as u8 ^ i as u8;
    }
    let config = Config {
        cases,
        failure_persistence: None,
        max_shrink_iters: 2000,
        ..Config::default()
    };
    TestRunner::new_with_rng(config, TestRng::from_seed(RngAlgorithm::ChaCha, &bytes))
}

fn seeds(dirs: &[PathBuf], ext: &str) -> Vec<(PathBuf, String)> {
    let mut out = Vec::new();
    for d in dirs {
        let mut files: Vec<PathBuf> = std::fs::read_dir(d)
            .unwrap_or_else(|e| panic!("{}: {e}", d.display()))
            .map(|e| e.unwrap().path())
            .filter(|p| p.extension().is_some_and(|x| x == ext))
            .collect();
        files.sort();
        for f in files {
            let text = std::fs::read_to_string(&f).unwrap();
            out.push((f, text));
        }
    }
    assert!(!out.is_empty(), "no seed files");
    out
}

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// A message fit for a terminal: no raw control characters or direction overrides.
pub fn assert_printable(msg: &str) {
    assert!(
        !msg.chars().any(|c| c != '\n' && unsafe_in_text(c)),
        "raw control character in message: {msg:?}"
    );
}

/// Independent checks of an accepted geometry.
pub fn check_geometry(g: &Geometry) {
    check_title(&g.title).expect("title");
    let in_range = |x: f64| x.is_finite() && (MIN_LENGTH_MM..=MAX_LENGTH_MM).contains(&x);
    match g.cavity.shape {
        CavityShape::Box { size } => assert!(size.iter().all(|&x| in_range(x)), "{size:?}"),
        CavityShape::Cylinder { radius, height } => {
            assert!(in_range(radius) && in_range(height))
        }
    }
    for l in &g.loads {
        check_name(&l.name).expect("load name");
    }
    let tol = 1e-9 * g.cavity.shape.scale();
    for (i, p) in g.ports.iter().enumerate() {
        check_name(&p.name).expect("port name");
        assert!(p.width.is_finite() && p.height.is_finite() && p.height <= p.width);
        for q in &g.ports[..i] {
            assert!(ports_overlap(p, q, &g.cavity.shape, tol).is_none());
        }
    }
    assert!(g.solve.target.is_finite() && g.solve.target > 0.0);
}

#[test]
fn fuzz_geometry_parser() {
    let seeds = seeds(
        &[
            root().join("../geometries"),
            root().join("tests/data/fuzz/geometry"),
        ],
        "toml",
    );
    let n = seeds.len();
    let strategy = (0..n, proptest::collection::vec(edit(), 1..6));
    runner()
        .run(&strategy, |(k, edits)| {
            let (path, text) = &seeds[k];
            let text = edits.iter().fold(text.clone(), |t, e| apply(&t, e));
            match Geometry::from_toml_str(&text, Some(path)) {
                Ok(g) => check_geometry(&g),
                Err(e) => {
                    let msg = e.to_string();
                    assert_printable(&msg);
                    if let Some(l) = e.line() {
                        assert!(l >= 1 && l <= text.lines().count() + 1, "line {l}: {msg}");
                    }
                }
            }
            Ok(())
        })
        .unwrap();
}

/// Independent checks of an accepted mesh: indices in range, finite coordinates, no flat
/// tetrahedron, no two nodes at one point, no face used more than twice, the boundary
/// exactly the faces used once.
pub fn check_mesh(m: &TetMesh, ports: usize) {
    let n = m.nodes.len();
    assert!(!m.tets.is_empty());
    assert_eq!(m.tets.len(), m.tet_region.len());
    assert_eq!(m.boundary.len(), m.boundary_tag.len());
    assert!(m.tet_region.iter().all(|&r| (r as usize) < m.regions.len()));
    assert!(m
        .nodes
        .iter()
        .flatten()
        .all(|x| x.is_finite() && x.abs() <= 100.0));
    let mut faces: HashMap<[u32; 3], usize> = HashMap::new();
    for (t, tet) in m.tets.iter().enumerate() {
        assert!(tet.iter().all(|&v| (v as usize) < n));
        assert!(m.signed_volume(t).abs() > 0.0, "flat tet {t}");
        for skip in 0..4 {
            let mut f: Vec<u32> = (0..4).filter(|&j| j != skip).map(|j| tet[j]).collect();
            f.sort();
            *faces.entry([f[0], f[1], f[2]]).or_default() += 1;
        }
    }
    assert!(faces.values().all(|&c| c <= 2), "face used thrice");
    assert_eq!(
        faces.values().filter(|&&c| c == 1).count(),
        m.boundary.len()
    );
    for tag in &m.boundary_tag {
        if let antinode_mesh::BoundaryTag::Port(p) = tag {
            assert!(*p < ports);
        }
    }
    if n <= 200 {
        let ext = m
            .nodes
            .iter()
            .flatten()
            .fold(0.0f64, |a, &x| a.max(x.abs()));
        for i in 0..n {
            for j in 0..i {
                let d: f64 = (0..3)
                    .map(|k| (m.nodes[i][k] - m.nodes[j][k]).powi(2))
                    .sum::<f64>()
                    .sqrt();
                assert!(d > 1e-12 * ext, "nodes {i} and {j} coincide");
            }
        }
    }
}

/// The importer on `text` with `cube_two_volumes.msh`'s mapping and with none.
pub fn import_both_ways(text: &str) {
    let with = MeshImport {
        file: PathBuf::from("fuzz.msh"),
        unit_mm: 1.0,
        groups: vec![
            ("water_volume".into(), "bowl".into()),
            ("feed_aperture".into(), "feed".into()),
        ],
    };
    let without = MeshImport {
        groups: Vec::new(),
        ..with.clone()
    };
    let names = |v: &[&str]| v.iter().map(|s| s.to_string()).collect::<Vec<_>>();
    for (mapping, loads, ports) in [
        (&with, names(&["bowl"]), names(&["feed"])),
        (&without, Vec::new(), Vec::new()),
    ] {
        match read_msh_str(text, mapping, &loads, &ports) {
            Ok(m) => check_mesh(&m, ports.len()),
            Err(e) => check_import_error(&e, text),
        }
    }
}

fn check_import_error(e: &ImportError, text: &str) {
    let msg = e.to_string();
    assert_printable(&msg);
    assert!(msg.starts_with("fuzz.msh"), "{msg}");
    if let Some(l) = e.line() {
        assert!(l >= 1 && l <= text.lines().count() + 1, "line {l}: {msg}");
    }
}

#[test]
fn fuzz_msh_importer() {
    let seeds = seeds(&[root().join("tests/data/fuzz/msh")], "msh");
    let strategy = (0..seeds.len(), proptest::collection::vec(edit(), 1..6));
    runner()
        .run(&strategy, |(k, edits)| {
            let text = edits.iter().fold(seeds[k].1.clone(), |t, e| apply(&t, e));
            import_both_ways(&text);
            Ok(())
        })
        .unwrap();
}
