//! The geometry description an engineer writes (TOML; lengths in mm, frequencies in
//! GHz, z vertical) and its validated in-memory form.
//!
//! The in-memory types keep the file's units (mm, GHz); the mesher converts to metres.
//!
//! # File format
//!
//! ```toml
//! title = "..."
//! [cavity]
//! shape = "box"                  # "box": size = [x, y, z], corner at the origin
//! size = [300.0, 300.0, 200.0]   # "cylinder": radius = R, height = H, axis on z, centre at x = y = 0
//! walls = "copper"               # metal from the built-in list, { conductivity = 3.5e7 } (S/m), or "pec"
//! [[load]]                       # zero or more
//! name = "bowl"
//! shape = "cylinder"             # vertical axis: center = [x, y], radius, bottom (z of base), height
//! center = [150.0, 150.0]
//! radius = 60.0
//! bottom = 10.0
//! height = 40.0
//! material = "water"             # built-in name, or { permittivity = 4.0, loss_tangent = 0.01 },
//!                                # or { permittivity = 78.0, loss_factor = 10.0 } (eps''), optional permeability
//! # shape = "box" uses min = [x, y, z] and max = [x, y, z], and optionally angle_deg
//! # (turn counter-clockwise seen from above about the vertical axis through its centre)
//! [[port]]                       # zero or more feed apertures (used by the solver later)
//! wall = "+x"                    # box: "-x" "+x" "-y" "+y" "-z" "+z"; cylinder: "top", "bottom", "side" (+ angle_deg)
//! center = [150.0, 100.0]        # position on that wall, in the wall's two in-plane coordinates (mm)
//! width = 86.36                  # broad side (mm)
//! height = 43.18                 # narrow side (mm)
//! [mesh]
//! order = 3                      # element order the solver will use (1, 2 or 3)
//! per_wavelength = 3.0           # elements per local wavelength at the target frequency
//! max_size = 41.0                # mm, upper bound on element size anywhere
//! method = "extruded"            # or "graded": fine only in and near the loads (optional)
//! [solve]
//! target = 2.45                  # GHz
//! band = [2.40, 2.50]            # GHz, optional
//! count = 20                     # modes to find near the target (optional if band is given)
//! ```
//!
//! Extensions implemented here:
//! - load `material` may also be `{ permittivity, conductivity }` (S/m); every material
//!   table may carry `permeability` (default 1);
//! - load `temperature` (°C) sets the temperature of `material = "water"` (0–100, default
//!   20) or `material = "ice"` (−60–0, default −10);
//! - port `name` (default "port1", "port2", … by position), `angle_deg` for `wall = "side"`
//!   (azimuth of the arc coordinate's origin, default 0), `rotated = true` to put the broad
//!   side along the wall's second in-plane axis (see [`PortWall`]); `power` (W, ≥ 0) and
//!   `phase_deg` of the incident wave for a driven solve (default: the first port fed at
//!   the solve's power, the others matched and idle);
//! - `[mesh]` `import = "file.msh"` (Gmsh MSH 4.1, relative to the geometry file),
//!   `unit_mm` (mm per file unit, default 1) and a `[mesh.groups]` table mapping physical
//!   group names to "air", "wall", a load name or a port name; loads need no shape then;
//! - defaults: `[mesh]` order 3; per_wavelength by order ([`default_per_wavelength`]:
//!   10, 5 and 3 at orders 1, 2 and 3, from the mesh-size study), max_size
//!   λ0/per_wavelength at the target ([`default_max_size_mm`]; 41 mm at order 3 and
//!   2.45 GHz), each taken only when not given, after `--order`/`--target`;
//!   `[solve]` target 2.45 GHz, count 20 when no band is given.
//!
//! - `[turntable]`: loads riding on a turning plate, with the angles a sweep runs
//!   ([`turntable`]); the file's placement is plate angle 0.
//!
//! Every key is checked: unknown keys, out-of-range values, loads outside the cavity or
//! overlapping each other (touching is allowed), ports that do not fit on their wall and
//! duplicate names are rejected with a [`GeometryError`](crate::error::GeometryError) naming file, line, entry and value.

pub mod bounds;
mod context;
mod load;
mod model;
pub mod names;
mod parse;
pub mod ports;
mod raw;
mod settings;
pub mod turntable;
mod validate;

pub use model::*;
pub use turntable::Turntable;
