//! Exact integration of barycentric monomials on a tetrahedron.
//!
//! For a tetrahedron T with barycentric coordinates λ0..λ3,
//!
//!   ∫_T λ0^a λ1^b λ2^c λ3^d dV = a! b! c! d! 3! |T| / (a + b + c + d + 3)!
//!
//! (the Dirichlet-integral formula; Eisenberg & Malvern, "On finite element integration in
//! natural co-ordinates", Int. J. Numer. Meth. Eng. 7 (1973) 574, reference from memory).
//! On a triangle the same formula holds with 2! and (… + 2)!. Element matrices built from
//! it are exact, so no quadrature rule has to be trusted.

/// Exponents of λ0..λ3 in a monomial.
pub type Exponents = [u8; 4];

fn factorial(n: u32) -> f64 {
    (1..=n).map(f64::from).product()
}

/// ∫_T λ^α dV / |T| for the exponents `alpha`.
pub fn tet_monomial_integral(alpha: Exponents) -> f64 {
    let num: f64 = alpha.iter().map(|&a| factorial(a as u32)).product::<f64>() * 6.0;
    let total: u32 = alpha.iter().map(|&a| a as u32).sum();
    num / factorial(total + 3)
}

/// ∫_F λ^α dS / |F| on a triangle, exponents of its three barycentric coordinates.
pub fn tri_monomial_integral(alpha: [u8; 3]) -> f64 {
    let num: f64 = alpha.iter().map(|&a| factorial(a as u32)).product::<f64>() * 2.0;
    let total: u32 = alpha.iter().map(|&a| a as u32).sum();
    num / factorial(total + 2)
}

/// Sum of two exponent vectors (product of monomials).
pub fn add(a: Exponents, b: Exponents) -> Exponents {
    [a[0] + b[0], a[1] + b[1], a[2] + b[2], a[3] + b[3]]
}

/// Value of λ^α at the barycentric point `l`.
pub fn eval(alpha: Exponents, l: [f64; 4]) -> f64 {
    let mut v = 1.0;
    for i in 0..4 {
        for _ in 0..alpha[i] {
            v *= l[i];
        }
    }
    v
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn constant_and_linear_moments() {
        // ∫ 1 = |T|, ∫ λi = |T|/4, ∫ λi² = |T|/10, ∫ λiλj = |T|/20 (analytic).
        assert!((tet_monomial_integral([0, 0, 0, 0]) - 1.0).abs() < 1e-15);
        assert!((tet_monomial_integral([1, 0, 0, 0]) - 0.25).abs() < 1e-15);
        assert!((tet_monomial_integral([2, 0, 0, 0]) - 0.1).abs() < 1e-15);
        assert!((tet_monomial_integral([1, 1, 0, 0]) - 0.05).abs() < 1e-15);
        assert!((tri_monomial_integral([1, 0, 0]) - 1.0 / 3.0).abs() < 1e-15);
        assert!((tri_monomial_integral([1, 1, 0]) - 1.0 / 12.0).abs() < 1e-15);
    }

    #[test]
    fn agrees_with_monte_carlo_free_midpoint_sum() {
        // Consistency: a fine uniform sub-simplex midpoint sum of λ0²λ1λ3 converges to
        // the closed form (2!·1!·0!·1!·6/(4+3)! = 12/5040).
        let exact = tet_monomial_integral([2, 1, 0, 1]);
        let n = 60;
        let mut sum = 0.0;
        let mut count = 0.0;
        // Sample the reference simplex on a lattice of cube centres, keeping those inside.
        for i in 0..n {
            for j in 0..n {
                for k in 0..n {
                    let (x, y, z) = (
                        (i as f64 + 0.5) / n as f64,
                        (j as f64 + 0.5) / n as f64,
                        (k as f64 + 0.5) / n as f64,
                    );
                    if x + y + z < 1.0 {
                        let l = [1.0 - x - y - z, x, y, z];
                        sum += eval([2, 1, 0, 1], l);
                        count += 1.0;
                    }
                }
            }
        }
        let approx = sum / count;
        assert!(
            ((approx - exact) / exact).abs() < 0.02,
            "{approx} vs {exact}"
        );
    }
}
