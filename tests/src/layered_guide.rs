//! Exact reference for driven solves: a rectangular waveguide carrying TE10, closed by a
//! short circuit (or continued by a matched guide), with dielectric layers filling the
//! cross-section, fed from its open end.
//!
//! Geometry: broad side a along x, narrow side b along y, axis z. The feed (air) meets
//! the layered section at the port plane z = 0; layer i fills z ∈ [z_i, z_i + d_i] with
//! relative permittivity εr,i = ε′ − jε″ (μr = 1); a perfect short closes the guide at
//! z = L = Σ d_i (or an empty matched guide continues there: V(L) = Z0 I(L)).
//!
//! With every layer filling the cross-section, the TE10 field keeps its transverse
//! shape everywhere: E = V(z) sin(πx/a) ŷ, and V(z) obeys transmission-line equations
//! with, per layer, the propagation constant and the TE10 wave impedance
//!
//!   β_i = √(k0² εr,i − (π/a)²)  (complex in lossy layers),   Z_i = ωμ0 / β_i
//!
//! (Pozar, Microwave Engineering, 4th ed., §3.3 for the TE10 mode and its wave
//! impedance; §2.3–2.4 for the line equations, the shorted line and the input impedance
//! of a cascade). Across a layer of thickness d, the line voltage V (= the E_y amplitude)
//! and current I (= the H_x amplitude, up to sign) transfer as
//!
//!   [V(z0); I(z0)] = [[cos βd, jZ sin βd], [j sin βd / Z, cos βd]] [V(z0 + d); I(z0 + d)],
//!
//! which is even in β, so the branch of the square root does not matter. The short gives
//! V(L) = 0. At the port plane the feed carries an incident wave a and a reflected wave
//! b: V(0) = a + b, Z0 I(0) = a − b, Γ = b/a, with Z0 = ωμ0/β0 of the empty feed.
//!
//! Power: a TE10 wave of amplitude A carries P = |A|² a b / (4 Z) (Pozar §3.3, with
//! ∫ sin²(πx/a) dx dy = ab/2). The density absorbed in a layer is
//! q = ½ ω ε0 ε″ |E|² = ½ ω ε0 ε″ sin²(πx/a) |V(z)|², and the layer absorbs
//! P_i = ½ ω ε0 ε″ (ab/2) ∫ |V|² dz, integrated in closed form below. Energy balance
//! (Poynting's theorem): 1 − |Γ|² − |T|² = Σ P_i / P_fwd (T = 0 for the short).
//!
//! This module holds no reference values, only the exact solution of the stated problem.

use faer::c64;
use std::f64::consts::PI;

pub use antinode_solver::constants::{C0, EPS0, MU0};

/// One dielectric layer filling the cross-section.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Layer {
    /// Thickness along the guide axis (m).
    pub thickness: f64,
    /// Relative permittivity ε′ − jε″ (ε″ ≥ 0 is loss).
    pub eps: c64,
}

impl Layer {
    /// A layer of relative permittivity ε′ − jε″.
    pub fn new(thickness: f64, eps_real: f64, eps_imag: f64) -> Self {
        Self {
            thickness,
            eps: c64::new(eps_real, -eps_imag),
        }
    }
}

/// How the layered section ends at z = L.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Termination {
    /// A perfect short: V(L) = 0.
    Short,
    /// An empty guide continuing without reflection (a matched second port at z = L):
    /// V(L) = Z0 I(L).
    Matched,
}

/// A rectangular guide with layers from the port plane to its termination.
#[derive(Clone, Debug, PartialEq)]
pub struct LayeredGuide {
    /// Broad side a (m).
    pub width: f64,
    /// Narrow side b (m).
    pub height: f64,
    /// Layers in order from the port plane (z = 0) to the end.
    pub layers: Vec<Layer>,
    pub termination: Termination,
}

/// The exact TE10 solution at one frequency, for unit incident amplitude (a = 1 V/m at
/// the centre line of the port plane).
#[derive(Clone, Debug)]
pub struct LayeredResponse {
    /// Frequency (Hz).
    pub freq_hz: f64,
    /// Reflection coefficient Γ = b/a at the port plane (= S11 with the port's
    /// reference plane at z = 0).
    pub gamma: c64,
    /// With a matched end: the transmitted amplitude V(L)/a (= S21 with the second port's
    /// reference plane at z = L; the same guide, so no impedance scaling). Zero for a
    /// short.
    pub transmission: c64,
    /// Forward power of the unit incident wave (W).
    pub forward_w: f64,
    /// Per layer: start z (m), β, and the forward/backward amplitudes (A, B) with
    /// V(z) = A e^{−jβ(z − z0)} + B e^{jβ(z − z0)} inside the layer.
    pub layers: Vec<LayerWave>,
    /// ω (rad/s).
    omega: f64,
    width: f64,
    height: f64,
}

/// The wave inside one layer.
#[derive(Clone, Copy, Debug)]
pub struct LayerWave {
    pub z0: f64,
    pub thickness: f64,
    pub eps: c64,
    pub beta: c64,
    /// Forward amplitude at z0.
    pub forward: c64,
    /// Backward amplitude at z0.
    pub backward: c64,
}

/// TE10 propagation constant √(k0² εr − (π/a)²), principal branch (Re ≥ 0).
pub fn beta(k0: f64, eps: c64, width: f64) -> c64 {
    (eps * (k0 * k0) - c64::new((PI / width).powi(2), 0.0)).sqrt()
}

impl LayeredGuide {
    /// Total length from the port plane to the short (m).
    pub fn length(&self) -> f64 {
        self.layers.iter().map(|l| l.thickness).sum()
    }

    /// TE10 cutoff of the empty feed, Hz.
    pub fn cutoff_hz(&self) -> f64 {
        C0 / (2.0 * self.width)
    }

    /// The exact solution at `freq_hz` (above the feed's cutoff).
    pub fn solve(&self, freq_hz: f64) -> LayeredResponse {
        assert!(freq_hz > self.cutoff_hz(), "feed below TE10 cutoff");
        let omega = 2.0 * PI * freq_hz;
        let k0 = omega / C0;
        let j = c64::new(0.0, 1.0);
        let beta0 = beta(k0, c64::new(1.0, 0.0), self.width);
        let z0 = omega * MU0 / beta0;
        // Walk from the end (short: V = 0, I = 1; matched: V = 1, I = 1/Z0) to the port
        // plane, keeping (V, I) at every interface.
        let (v_end, i_end) = match self.termination {
            Termination::Short => (c64::new(0.0, 0.0), c64::new(1.0, 0.0)),
            Termination::Matched => (c64::new(1.0, 0.0), c64::new(1.0, 0.0) / z0),
        };
        let mut v = v_end;
        let mut i = i_end;
        let mut at_start = vec![(v, i); self.layers.len()];
        for (n, layer) in self.layers.iter().enumerate().rev() {
            let b = beta(k0, layer.eps, self.width);
            let z = omega * MU0 / b;
            let (c, s) = ((b * layer.thickness).cos(), (b * layer.thickness).sin());
            let v0 = c * v + j * z * s * i;
            let i0 = j * s / z * v + c * i;
            v = v0;
            i = i0;
            at_start[n] = (v, i);
        }
        // V = a + b, Z0 I = a − b.
        let a = 0.5 * (v + z0 * i);
        let b = 0.5 * (v - z0 * i);
        let scale = c64::new(1.0, 0.0) / a;
        let gamma = b / a;
        let mut z_start = 0.0;
        let layers = self
            .layers
            .iter()
            .zip(&at_start)
            .map(|(layer, &(vs, is))| {
                let b = beta(k0, layer.eps, self.width);
                let zl = omega * MU0 / b;
                // V = A + B, Z I = A − B at the layer's start.
                let wave = LayerWave {
                    z0: z_start,
                    thickness: layer.thickness,
                    eps: layer.eps,
                    beta: b,
                    forward: 0.5 * (vs + zl * is) * scale,
                    backward: 0.5 * (vs - zl * is) * scale,
                };
                z_start += layer.thickness;
                wave
            })
            .collect();
        LayeredResponse {
            freq_hz,
            gamma,
            transmission: v_end * scale,
            forward_w: self.width * self.height / (4.0 * z0.re),
            layers,
            omega,
            width: self.width,
            height: self.height,
        }
    }
}

impl LayerWave {
    /// V(z) for z inside the layer.
    pub fn voltage(&self, z: f64) -> c64 {
        let j = c64::new(0.0, 1.0);
        let t = z - self.z0;
        self.forward * (-j * self.beta * t).exp() + self.backward * (j * self.beta * t).exp()
    }

    /// ∫ |V|² dz over the layer, in closed form. With β = β_r + jβ_i, t = z − z0:
    /// |V|² = |A|² e^{2β_i t} + |B|² e^{−2β_i t} + 2 Re(A B̄ e^{−2jβ_r t}).
    pub fn v2_integral(&self) -> f64 {
        let d = self.thickness;
        let (br, bi) = (self.beta.re, self.beta.im);
        // ∫0^d e^{c t} dt, continuous at c = 0.
        let exp_int = |c: f64| {
            if (c * d).abs() < 1e-8 {
                d * (1.0 + 0.5 * c * d)
            } else {
                ((c * d).exp() - 1.0) / c
            }
        };
        let osc = if (br * d).abs() < 1e-8 {
            c64::new(d, 0.0)
        } else {
            // ∫0^d e^{−2jβ_r t} dt = (1 − e^{−2jβ_r d}) / (2jβ_r)
            (c64::new(1.0, 0.0) - c64::new(0.0, -2.0 * br * d).exp()) / c64::new(0.0, 2.0 * br)
        };
        self.forward.norm_sqr() * exp_int(2.0 * bi)
            + self.backward.norm_sqr() * exp_int(-2.0 * bi)
            + 2.0 * (self.forward * self.backward.conj() * osc).re
    }

    /// ∫ |V|⁴ dz over the layer by composite Gauss–Legendre quadrature (`panels` panels of
    /// 8 points each; |V|⁴ is a smooth sum of exponentials, so the rule converges
    /// exponentially in the number of points per wavelength).
    pub fn v4_integral(&self, panels: usize) -> f64 {
        gauss_legendre(
            |z| self.voltage(z).norm_sqr().powi(2),
            self.z0,
            self.z0 + self.thickness,
            panels,
        )
    }

    /// ∫ |V|² dz by the same quadrature (to check the closed form).
    pub fn v2_quadrature(&self, panels: usize) -> f64 {
        gauss_legendre(
            |z| self.voltage(z).norm_sqr(),
            self.z0,
            self.z0 + self.thickness,
            panels,
        )
    }
}

impl LayeredResponse {
    /// The layer holding z (the last one for z at the short).
    pub fn layer_at(&self, z: f64) -> &LayerWave {
        self.layers
            .iter()
            .find(|l| z <= l.z0 + l.thickness)
            .unwrap_or_else(|| self.layers.last().expect("at least one layer"))
    }

    /// E_y at (x, z) for unit incident amplitude (V/m).
    pub fn e_y(&self, x: f64, z: f64) -> c64 {
        self.layer_at(z).voltage(z) * (PI * x / self.width).sin()
    }

    /// Absorbed power density q = ½ ω ε0 ε″ |E|² at (x, z) per watt of forward power
    /// (W/m³ per W).
    pub fn heating_per_watt(&self, x: f64, z: f64) -> f64 {
        let l = self.layer_at(z);
        let eps_imag = -l.eps.im;
        0.5 * self.omega * EPS0 * eps_imag * self.e_y(x, z).norm_sqr() / self.forward_w
    }

    /// ∫ q dV over the slab z ∈ [z0, z1] of one layer per watt forward:
    /// ½ω ε0 ε″ (ab/2) ∫|V|² dz / P_fwd (composite Gauss–Legendre in z, `panels` panels).
    pub fn slab_fraction(&self, z0: f64, z1: f64, panels: usize) -> f64 {
        let l = self.layer_at(0.5 * (z0 + z1));
        let eps_imag = -l.eps.im;
        0.5 * self.omega
            * EPS0
            * eps_imag
            * 0.5
            * self.width
            * self.height
            * gauss_legendre(|z| l.voltage(z).norm_sqr(), z0, z1, panels)
            / self.forward_w
    }

    /// Power absorbed in each layer as a fraction of the forward power.
    pub fn absorbed_fractions(&self) -> Vec<f64> {
        self.layers
            .iter()
            .map(|l| {
                let eps_imag = -l.eps.im;
                0.5 * self.omega
                    * EPS0
                    * eps_imag
                    * 0.5
                    * self.width
                    * self.height
                    * l.v2_integral()
                    / self.forward_w
            })
            .collect()
    }

    /// Volume-weighted coefficient of variation of q over one layer:
    /// q ∝ sin²(πx/a)|V(z)|² factorises, the x-average of sin² is 1/2 and of sin⁴ is 3/8,
    /// so COV² = (3/8)/(1/4) · ⟨|V|⁴⟩/⟨|V|²⟩² − 1 with ⟨·⟩ the mean over the thickness.
    pub fn layer_cov(&self, layer: usize, panels: usize) -> f64 {
        let l = &self.layers[layer];
        let m2 = l.v2_integral() / l.thickness;
        let m4 = l.v4_integral(panels) / l.thickness;
        (1.5 * m4 / (m2 * m2) - 1.0).max(0.0).sqrt()
    }
}

/// Composite 8-point Gauss–Legendre rule on [lo, hi] (nodes and weights from Abramowitz &
/// Stegun, Table 25.4, n = 8).
pub fn gauss_legendre(f: impl Fn(f64) -> f64, lo: f64, hi: f64, panels: usize) -> f64 {
    const X: [f64; 4] = [
        0.183_434_642_495_649_8,
        0.525_532_409_916_329,
        0.796_666_477_413_626_7,
        0.960_289_856_497_536_3,
    ];
    const W: [f64; 4] = [
        0.362_683_783_378_362,
        0.313_706_645_877_887_3,
        0.222_381_034_453_374_5,
        0.101_228_536_290_376_3,
    ];
    let h = (hi - lo) / panels as f64;
    let mut s = 0.0;
    for p in 0..panels {
        let c = lo + h * (p as f64 + 0.5);
        for k in 0..4 {
            s += W[k] * (f(c - 0.5 * h * X[k]) + f(c + 0.5 * h * X[k]));
        }
    }
    0.5 * h * s
}
