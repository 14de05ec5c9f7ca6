//! Which Ritz values of θ = 1/(λ − σ) the iteration must converge and return.

/// Which eigenvalues are wanted, in terms of θ = 1/(λ − σ): at least the `nearest`
/// ones with largest |θ|, and every one with |θ| ≥ `theta_min` (|λ − σ| ≤ 1/theta_min),
/// but never more than `max`. Ritz values within a relative 1e-6 of `kernel_theta`
/// (θ = −1/σ, the image of λ = 0: gradient fields) are never wanted; without this, a
/// shift below the lowest resonance would return the kernel instead of modes.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Wanted {
    pub nearest: usize,
    pub theta_min: Option<f64>,
    pub max: usize,
    pub kernel_theta: Option<f64>,
}

impl Wanted {
    /// Whether the Ritz value `theta` (given by its distance to the kernel image and its
    /// size) belongs to the kernel.
    pub fn is_kernel(&self, distance_to_kernel: f64) -> bool {
        self.kernel_theta
            .is_some_and(|k| distance_to_kernel <= 1e-6 * k.abs())
    }

    /// Order Ritz values by decreasing |θ|, kernel images last.
    pub fn order(&self, abs_theta: &[f64], distance_to_kernel: &[f64]) -> Vec<usize> {
        let mut order: Vec<usize> = (0..abs_theta.len()).collect();
        order.sort_by(|&a, &b| {
            let (ka, kb) = (
                self.is_kernel(distance_to_kernel[a]),
                self.is_kernel(distance_to_kernel[b]),
            );
            ka.cmp(&kb).then(abs_theta[b].total_cmp(&abs_theta[a]))
        });
        order
    }

    /// How many of the ordered Ritz values (|θ| given, decreasing, the first `usable` not
    /// kernel images) must converge: the `nearest`, and with a radius all inside it plus
    /// one beyond, which must also have converged so that nothing inside can still be
    /// missing.
    pub fn active(&self, abs_theta: &[f64], usable: usize) -> usize {
        match self.theta_min {
            None => self.nearest.min(usable),
            Some(t) => {
                let inside = abs_theta.iter().take(usable).filter(|&&a| a >= t).count();
                self.nearest.max(inside + 1).min(self.max + 1).min(usable)
            }
        }
    }

    /// How many of the `active` converged Ritz values to return (the guard beyond the
    /// radius is dropped).
    pub fn returned(&self, abs_theta: &[f64], active: usize) -> usize {
        match self.theta_min {
            None => active,
            Some(t) => abs_theta
                .iter()
                .take(active)
                .filter(|&&a| a >= t)
                .count()
                .max(self.nearest.min(active)),
        }
    }

    /// Ritz vectors kept at a restart: the active ones plus a block, at least half the
    /// basis, leaving room for one block.
    pub fn keep(active: usize, block: usize, capacity: usize, used: usize) -> usize {
        (active + block)
            .max(capacity / 2)
            .min(used.saturating_sub(block).max(active))
            .min(used)
    }

    /// Number of leading (ordered) Ritz values that are not kernel images.
    pub fn usable(&self, ordered_distance: &[f64]) -> usize {
        ordered_distance
            .iter()
            .take_while(|&&d| !self.is_kernel(d))
            .count()
    }
}
