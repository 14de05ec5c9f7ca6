//! The discretisation: first-kind Nédélec elements on a tetrahedral mesh.
//!
//! In pipeline order: exact integrals of barycentric monomials ([`barycentric`]), the
//! geometric factors of a tetrahedron ([`tet_geometry`]), the reference element and its
//! element and face matrices ([`element`]), the mesh's edges and faces with global
//! orientation ([`topology`]), the global unknowns with the PEC walls eliminated
//! ([`dofmap`]), the global matrices K, M′, M″ ([`assembly`]) and the TE10 port
//! apertures ([`port`]), with the surface-impedance walls beside them ([`impedance`]). A [`Space`] bundles the mesh with its topology and unknown
//! map: it is the finite-element space every later stage (assembly, ports, field
//! evaluation, losses) works on.
//!
//! Nothing here knows the geometry file: port apertures arrive as [`port::PortFrame`]s
//! in metres, built by [`crate::problem`].

pub mod assembly;
pub mod barycentric;
pub mod curved;
pub mod dofmap;
pub mod element;
pub mod impedance;
pub mod port;
pub mod quadrature;
pub mod tet_geometry;
pub mod topology;

pub use element::NedelecOrder;

use antinode_mesh::{BoundaryTag, TetMesh};
use curved::{CurvedBoundary, CurvedGeometry, CurvedTet};
use dofmap::DofMap;
use element::NedelecTet;
use std::sync::Arc;
use tet_geometry::TetGeometry;
use topology::Topology;

/// The edge-element space of one order on one mesh: the mesh, its oriented edges and
/// faces, and the numbering of the free unknowns.
#[derive(Clone, Debug)]
pub struct Space<'m> {
    pub mesh: &'m TetMesh,
    pub topology: Topology,
    pub dofs: DofMap,
    /// Curved tetrahedra along the cylinder sides (None: every tetrahedron straight).
    pub curved: Option<Arc<CurvedGeometry>>,
}

impl<'m> Space<'m> {
    /// The space of `order` on `mesh`, with the unknowns of every boundary face whose tag
    /// satisfies `is_pec` eliminated (n × E = 0 there).
    pub fn new(
        mesh: &'m TetMesh,
        order: NedelecOrder,
        is_pec: impl Fn(BoundaryTag) -> bool,
    ) -> Self {
        let topology = Topology::new(mesh);
        let dofs = DofMap::new(&topology, mesh.nodes.len(), order, is_pec);
        Self {
            mesh,
            topology,
            dofs,
            curved: None,
        }
    }

    /// The space with the tetrahedra along `boundary`'s surfaces curved (see
    /// [`curved`]); an empty boundary leaves every tetrahedron straight.
    pub fn with_curved(mut self, boundary: &CurvedBoundary) -> Result<Self, crate::SolverError> {
        if boundary.faces.is_empty() {
            self.curved = None;
            return Ok(self);
        }
        let g = CurvedGeometry::new(self.mesh, &self.topology, self.order(), boundary)?;
        self.curved = (g.n_curved() > 0).then(|| Arc::new(g));
        Ok(self)
    }

    /// The curved data of tetrahedron `t` (None when straight).
    pub fn curved_tet(&self, t: usize) -> Option<&CurvedTet> {
        self.curved.as_ref().and_then(|c| c.tet(t))
    }

    /// Element matrices (∫ ∇×φa·∇×φb, ∫ φa·φb) of tetrahedron `t`: exact on straight
    /// tetrahedra, by quadrature of the mapped functions on curved ones.
    pub fn element_matrices(
        &self,
        element: &NedelecTet,
        t: usize,
        curl_out: &mut [f64],
        mass_out: &mut [f64],
    ) {
        let geo = self.tet_geometry(t);
        match (&self.curved, self.curved_tet(t)) {
            (Some(g), Some(c)) => g.matrices(element, &geo, c, curl_out, mass_out),
            _ => element.matrices(&geo, curl_out, mass_out),
        }
    }

    /// Volume of tetrahedron `t` (of the curved one where curved).
    pub fn tet_volume(&self, t: usize) -> f64 {
        let geo = self.tet_geometry(t);
        match (&self.curved, self.curved_tet(t)) {
            (Some(g), Some(c)) => g.volume(c, &geo),
            _ => geo.volume,
        }
    }

    /// The space with metal walls and the first `n_ports` port apertures open (their
    /// TE10 constraint is applied by [`port::port_constraint`]); faces tagged with a port
    /// beyond those are metal.
    pub fn with_ports(mesh: &'m TetMesh, order: NedelecOrder, n_ports: usize) -> Self {
        Self::new(mesh, order, |tag| match tag {
            BoundaryTag::Wall => true,
            BoundaryTag::Port(p) => p >= n_ports,
        })
    }

    /// Element order.
    pub fn order(&self) -> NedelecOrder {
        self.dofs.order
    }

    /// Number of free unknowns.
    pub fn n_dofs(&self) -> usize {
        self.dofs.n_dofs
    }

    /// Number of tetrahedra.
    pub fn n_tets(&self) -> usize {
        self.topology.n_tets()
    }

    /// Vertex coordinates of tetrahedron `t` in ascending global vertex order (the
    /// orientation the element functions assume).
    pub fn tet_vertices(&self, t: usize) -> [[f64; 3]; 4] {
        self.topology.tets[t].map(|v| self.mesh.nodes[v as usize])
    }

    /// Geometric factors of tetrahedron `t`.
    pub fn tet_geometry(&self, t: usize) -> TetGeometry {
        TetGeometry::new(self.tet_vertices(t))
    }
}
