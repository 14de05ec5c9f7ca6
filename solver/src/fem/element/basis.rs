//! The hierarchical basis functions of orders 1, 2 and 3, each tied to one mesh entity.
//!
//! With λ0..λ3 the barycentric coordinates and w_ij = λi ∇λj − λj ∇λi (i < j, local
//! vertex numbers in ascending global order), order p adds to order p − 1:
//!
//! | order | edge (i, j) | face (i, j, k) | interior |
//! |---|---|---|---|
//! | 1 | w_ij | – | – |
//! | 2 | ∇(λiλj) | λk w_ij, λj w_ik | – |
//! | 3 | ∇(λiλj(λj − λi)) | ∇(λiλjλk), λk² w_ij, λj² w_ik, λjλk w_ij | λ2λ3 w01, λ1λ3 w02, λ1λ2 w03 |
//!
//! so 6, 20 and 45 functions: the dimensions p(p+2)(p+3)/2 of the first-kind Nédélec
//! spaces (Nédélec, Numer. Math. 35 (1980) 315; Monk, Finite Element Methods for
//! Maxwell's Equations, 2003, §5.5 — both from memory).
//!
//! Why these functions. The split into gradients of scalar bubbles (edge: λiλj,
//! λiλj(λj − λi); face: λiλjλk) and rotational functions follows the hierarchical
//! vector bases of Webb (IEEE Trans. Antennas Propag. 47 (1999) 1244, from memory): the
//! gradients span ∇P3 with the Whitney functions (3 + 12 + 4 = 19 = dim P3 − 1), so the
//! discrete kernel of the curl is explicit, as the spurious-field check in
//! [`crate::fem::dofmap`] needs. The rotational face and interior functions λ^α w_ab are
//! taken from the geometric decomposition of Arnold, Falk and Winther (Comput. Methods
//! Appl. Mech. Engrg. 198 (2009) 1660, from memory), whose order-3 face family is
//! λk{λi, λj, λk} w_ij and λj{λi, λj, λk} w_ik and interior family the three functions
//! above.
//!
//! Why they form a basis of the order-3 space and are conforming. Every edge function
//! has zero tangential trace on the faces not containing its edge (its scalar vanishes
//! there, or ∇λ of an absent vertex is normal to the face); every face function has
//! zero trace on the other faces and on all edges; every interior function has zero trace
//! on all faces. A vanishing combination therefore has zero edge coefficients (the edge
//! traces of the three edge functions, 1, ∂t(λiλj) and ∂t(λiλj(λj − λi)) times the
//! tangent, span P2 on the edge), then zero face coefficients: on the face,
//! λk w_ij + λj w_ik + 3λjλk ∇λi = ∇(λiλjλk), λjλk∇λi = −(λjλk w_ij + λjλk w_ik) and
//! λ_i + λ_j + λ_k = 1 turn the six face functions into the six face functions of the
//! decomposition above by an invertible map, and finally zero interior coefficients.
//! 45 independent functions of the 45-dimensional space are a basis.
//!
//! Orientation: all formulas use local vertex numbers in ascending global order, so the
//! trace of an edge or face function on its entity is the same formula in every element
//! sharing that entity (the antisymmetric λj − λi and the asymmetric face choices
//! included), and tangential continuity needs no sign or permutation bookkeeping.

use crate::fem::element::terms::{
    curl_of, gradient, merge_values, mono, scaled_whitney, CurlTerm, ValueTerm,
};
use crate::fem::element::{Entity, NedelecOrder, EDGES, FACES};

/// One local basis function with its curl.
#[derive(Clone, Debug)]
pub(super) struct BasisFunction {
    pub entity: Entity,
    pub value: Vec<ValueTerm>,
    pub curl: Vec<CurlTerm>,
}

fn function(entity: Entity, value: Vec<ValueTerm>) -> BasisFunction {
    let value = merge_values(value);
    BasisFunction {
        entity,
        curl: curl_of(&value),
        value,
    }
}

/// The local functions of `order`: order 1's, then what order 2 adds, then what order 3
/// adds (see the module docs for the table).
pub(super) fn functions(order: NedelecOrder) -> Vec<BasisFunction> {
    let p = order.as_int();
    let mut out = Vec::with_capacity(order.per_tet());
    for (e, &(i, j)) in EDGES.iter().enumerate() {
        let entity = Entity::Edge { edge: e, kind: 0 };
        out.push(function(entity, scaled_whitney(mono(&[]), i, j)));
    }
    if p >= 2 {
        for (e, &(i, j)) in EDGES.iter().enumerate() {
            let entity = Entity::Edge { edge: e, kind: 1 };
            out.push(function(entity, gradient(&[(1.0, mono(&[i, j]))])));
        }
        for (f, &(i, j, k)) in FACES.iter().enumerate() {
            let face = |kind| Entity::Face { face: f, kind };
            out.push(function(face(0), scaled_whitney(mono(&[k]), i, j)));
            out.push(function(face(1), scaled_whitney(mono(&[j]), i, k)));
        }
    }
    if p >= 3 {
        for (e, &(i, j)) in EDGES.iter().enumerate() {
            let entity = Entity::Edge { edge: e, kind: 2 };
            // λiλj(λj − λi) = λiλj² − λi²λj
            let scalar = [(1.0, mono(&[i, j, j])), (-1.0, mono(&[i, i, j]))];
            out.push(function(entity, gradient(&scalar)));
        }
        for (f, &(i, j, k)) in FACES.iter().enumerate() {
            let face = |kind| Entity::Face { face: f, kind };
            out.push(function(face(2), gradient(&[(1.0, mono(&[i, j, k]))])));
            out.push(function(face(3), scaled_whitney(mono(&[k, k]), i, j)));
            out.push(function(face(4), scaled_whitney(mono(&[j, j]), i, k)));
            out.push(function(face(5), scaled_whitney(mono(&[j, k]), i, j)));
        }
        let interior = [(0, 1, [2, 3]), (0, 2, [1, 3]), (0, 3, [1, 2])];
        for (kind, &(i, j, alpha)) in interior.iter().enumerate() {
            out.push(function(
                Entity::Interior { kind },
                scaled_whitney(mono(&alpha), i, j),
            ));
        }
    }
    assert_eq!(out.len(), order.per_tet());
    out
}
