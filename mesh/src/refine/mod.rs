//! Local refinement of a conforming tetrahedral mesh: the graded 3-D mesh.
//!
//! [`bisect`] implements Rivara's conforming longest-edge bisection (Int. J. Numer.
//! Meth. Eng. 20 (1984) 745; SIAM J. Numer. Anal. 21 (1984) 604): tetrahedra are cut
//! at the midpoint of their longest edge and neighbours are cut in turn until no hanging
//! node is left, so the mesh stays conforming, region ids pass to the children and
//! tracked faces (boundary triangles, curved-surface faces) are split with them.
//! Longest-edge bisection produces finitely many similarity classes of tetrahedra from
//! each starting one in practice, which keeps the element quality bounded below.

//! [`surface`] moves new vertices on cylinder sides onto the true surface and describes
//! those surfaces ([`CurvedSurface`]) for later curved elements.

pub mod bisect;
pub mod surface;

pub use bisect::{Bisection, Parent};
pub use surface::{curved_surfaces, surface_faces, CurvedSurface, SurfaceOwner};
