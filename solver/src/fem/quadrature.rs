//! Gauss quadrature on the tetrahedron and the triangle by the collapsed (Duffy)
//! coordinates, for the integrals that are not polynomials (curved elements).
//!
//! On [0, 1], n-point Gauss–Legendre integrates polynomials of degree ≤ 2n − 1 exactly
//! (Abramowitz & Stegun, 25.4.29; nodes are the zeros of P_n, weights
//! 2/((1 − x²) P_n′(x)²) on [−1, 1]). The tetrahedron ξ1 = u, ξ2 = (1 − u)v,
//! ξ3 = (1 − u)(1 − v)w has Jacobian (1 − u)²(1 − v); a polynomial of total degree d in ξ
//! becomes degree ≤ d + 2 in u, d + 1 in v and d in w, so the n³-point product rule is
//! exact for d ≤ 2n − 3 (Stroud, Approximate Calculation of Multiple Integrals, 1971,
//! conical product rules; from memory). The triangle ξ1 = u, ξ2 = (1 − u)v (Jacobian
//! 1 − u) with n² points is exact for d ≤ 2n − 2.
//!
//! Points are given as barycentric coordinates and weights as fractions of the simplex's
//! measure (they sum to 1).

/// Gauss–Legendre nodes and weights on [0, 1] (weights sum to 1), by Newton's method on
/// P_n from the Chebyshev-like initial guesses cos(π(i − 1/4)/(n + 1/2)).
pub fn gauss_legendre(n: usize) -> Vec<(f64, f64)> {
    assert!(n >= 1);
    let mut out = Vec::with_capacity(n);
    for i in 0..n {
        let mut x = (std::f64::consts::PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
        let mut dp = 1.0;
        for _ in 0..100 {
            // P_n(x) and P_n'(x) by the three-term recurrence.
            let (mut p0, mut p1) = (1.0, x);
            for k in 2..=n {
                let p2 = ((2 * k - 1) as f64 * x * p1 - (k - 1) as f64 * p0) / k as f64;
                p0 = p1;
                p1 = p2;
            }
            let pn = if n == 1 { x } else { p1 };
            let pm = if n == 1 { 1.0 } else { p0 };
            dp = n as f64 * (x * pn - pm) / (x * x - 1.0);
            let dx = pn / dp;
            x -= dx;
            if dx.abs() < 1e-16 {
                break;
            }
        }
        let w = 2.0 / ((1.0 - x * x) * dp * dp);
        out.push((0.5 * (1.0 - x), 0.5 * w));
    }
    out.sort_by(|a, b| a.0.total_cmp(&b.0));
    out
}

/// A rule on a simplex: barycentric points and weights (fractions of the measure).
#[derive(Clone, Debug)]
pub struct SimplexRule<const N: usize> {
    pub points: Vec<[f64; N]>,
    pub weights: Vec<f64>,
}

/// The n³-point collapsed Gauss rule on the tetrahedron, exact to degree 2n − 3.
pub fn tet_rule(n: usize) -> SimplexRule<4> {
    let g = gauss_legendre(n);
    let mut points = Vec::with_capacity(n * n * n);
    let mut weights = Vec::with_capacity(n * n * n);
    for &(u, wu) in &g {
        for &(v, wv) in &g {
            for &(w, ww) in &g {
                let x1 = u;
                let x2 = (1.0 - u) * v;
                let x3 = (1.0 - u) * (1.0 - v) * w;
                points.push([1.0 - x1 - x2 - x3, x1, x2, x3]);
                // Reference volume 1/6: weights as fractions of it.
                weights.push(6.0 * wu * wv * ww * (1.0 - u) * (1.0 - u) * (1.0 - v));
            }
        }
    }
    SimplexRule { points, weights }
}

/// The n²-point collapsed Gauss rule on the triangle, exact to degree 2n − 2.
pub fn triangle_rule(n: usize) -> SimplexRule<3> {
    let g = gauss_legendre(n);
    let mut points = Vec::with_capacity(n * n);
    let mut weights = Vec::with_capacity(n * n);
    for &(u, wu) in &g {
        for &(v, wv) in &g {
            let x1 = u;
            let x2 = (1.0 - u) * v;
            points.push([1.0 - x1 - x2, x1, x2]);
            weights.push(2.0 * wu * wv * (1.0 - u));
        }
    }
    SimplexRule { points, weights }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fem::barycentric::tet_monomial_integral;

    /// ∫_0^1 x^k dx = 1/(k + 1) exactly up to k = 2n − 1.
    #[test]
    fn gauss_legendre_degree() {
        for n in 1..=8 {
            let g = gauss_legendre(n);
            for k in 0..2 * n {
                let s: f64 = g.iter().map(|&(x, w)| w * x.powi(k as i32)).sum();
                assert!((s - 1.0 / (k + 1) as f64).abs() < 1e-14, "n {n} k {k}: {s}");
            }
        }
    }

    /// Barycentric monomials against the exact integrals of `barycentric` (the formula
    /// α!·3!/(|α| + 3)!), up to the stated degree 2n − 3.
    #[test]
    fn tet_rule_degree() {
        for n in 2..=7 {
            let r = tet_rule(n);
            let d = 2 * n - 3;
            for a in 0..=d {
                for b in 0..=d - a {
                    for c in 0..=d - a - b {
                        let e = [a as u8, b as u8, c as u8, 0];
                        let s: f64 = r
                            .points
                            .iter()
                            .zip(&r.weights)
                            .map(|(l, w)| {
                                w * l[0].powi(a as i32) * l[1].powi(b as i32) * l[2].powi(c as i32)
                            })
                            .sum();
                        let exact = tet_monomial_integral(e);
                        assert!(
                            (s - exact).abs() < 1e-13 * exact.max(1e-3),
                            "n {n} {e:?}: {s} vs {exact}"
                        );
                    }
                }
            }
        }
    }

    /// ∫_T λ0^a λ1^b dA / |T| = 2 a! b! / (a + b + 2)! (exact, same family of formula).
    #[test]
    fn triangle_rule_degree() {
        let fact = |k: usize| (1..=k).map(|i| i as f64).product::<f64>();
        for n in 1..=6 {
            let r = triangle_rule(n);
            let d = 2 * n - 2;
            for a in 0..=d {
                for b in 0..=d - a {
                    let s: f64 = r
                        .points
                        .iter()
                        .zip(&r.weights)
                        .map(|(l, w)| w * l[0].powi(a as i32) * l[1].powi(b as i32))
                        .sum();
                    let exact = 2.0 * fact(a) * fact(b) / fact(a + b + 2);
                    assert!((s - exact).abs() < 1e-14, "n {n} ({a},{b}): {s} vs {exact}");
                }
            }
        }
    }
}
