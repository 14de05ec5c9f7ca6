//! `spectrum.svg`: the modes as Lorentzians of their bandwidth and, per port, each mode's
//! isolated-resonance coupled power, written by hand as SVG text.
//!
//! Curves (δ_i = (f − f_i)/f_i), computed by `antinode_solver::post::resonance`:
//!
//! * mode i: L_i(f) = 1 / (1 + (2 Q_L,i δ_i)²), peak normalised to 1, half-power width
//!   f_i/Q_L,i; a mode with infinite Q_L is drawn as a vertical line;
//! * port p, mode i: the single-mode response 4κ_i / ((1 + κ_i)² + (2 Q0_i δ_i)²)
//!   = (1 − |Γ(f_i)|²) L_i(f) (κ_i, Q0_i of mode i for that port, the other ports counted
//!   as losses; Q_L = Q0/(1 + κ)): the fraction of the forward power that would enter
//!   through the port if mode i were the only one. Each mode is drawn on its own: the
//!   modes' coupling phases are not known from the eigen solve, so where modes overlap
//!   their curves are not summed; the power that actually enters there is the driven
//!   response of `antinode drive`, which the picture's notes point to.

use super::svg::{esc, frame_with_frequency_axis, tick_step};
use antinode_solver::post::band::ISM_BAND_HZ;
use antinode_solver::post::resonance;
use std::fmt::Write as _;

/// One mode as the spectrum needs it.
pub struct SpectrumMode {
    pub index: usize,
    pub frequency_ghz: f64,
    pub q_loaded: f64,
    /// Coupling κ per port (other ports counted as losses).
    pub coupling: Vec<f64>,
    /// External Q per port.
    pub q_ports: Vec<f64>,
}

/// What to draw.
pub struct Spectrum<'a> {
    pub title: &'a str,
    /// Frequency range of the picture, GHz.
    pub range_ghz: [f64; 2],
    /// Why this range (printed under the picture).
    pub range_note: &'a str,
    pub modes: &'a [SpectrumMode],
    pub ports: &'a [String],
}

/// ISM band drawn shaded (ITU Radio Regulations No. 5.150), GHz.
pub const ISM_GHZ: [f64; 2] = [ISM_BAND_HZ[0] / 1e9, ISM_BAND_HZ[1] / 1e9];

const W: f64 = 960.0;
const H: f64 = 500.0;
const LEFT: f64 = 80.0;
const RIGHT: f64 = 30.0;
const TOP: f64 = 74.0;
const BOTTOM: f64 = 130.0;
const PORT_COLOURS: [&str; 4] = ["#d95f02", "#1b9e77", "#7570b3", "#e7298a"];

fn lorentz(m: &SpectrumMode, f: f64) -> f64 {
    resonance::energy_response(f, m.frequency_ghz, m.q_loaded)
}

/// Fraction of port `p`'s forward power mode `m` alone would take in at `f` (see the
/// module docs); None when the mode does not couple to the port.
pub fn single_mode_coupled(m: &SpectrumMode, p: usize, f: f64) -> Option<f64> {
    let kappa = m.coupling.get(p).copied().unwrap_or(0.0);
    let qe = m.q_ports.get(p).copied().unwrap_or(f64::INFINITY);
    resonance::coupled_fraction(f, m.frequency_ghz, kappa, qe)
}

/// Sample frequencies: a uniform grid plus dense points around each narrow mode so that
/// no peak falls between samples.
fn samples(s: &Spectrum) -> Vec<f64> {
    let [lo, hi] = s.range_ghz;
    let mut f: Vec<f64> = (0..=1500)
        .map(|i| lo + (hi - lo) * i as f64 / 1500.0)
        .collect();
    for m in s.modes {
        if !m.q_loaded.is_finite() {
            continue;
        }
        let bw = m.frequency_ghz / m.q_loaded;
        for k in -60..=60 {
            let x = m.frequency_ghz + bw * k as f64 / 12.0;
            if x > lo && x < hi {
                f.push(x);
            }
        }
    }
    f.sort_by(f64::total_cmp);
    f.dedup();
    f
}

/// Placement of the plot area: frequency and value to SVG coordinates.
struct Plot {
    lo: f64,
    hi: f64,
    pw: f64,
    ph: f64,
}

impl Plot {
    fn x(&self, f: f64) -> f64 {
        LEFT + self.pw * (f - self.lo) / (self.hi - self.lo)
    }
    fn y(&self, v: f64) -> f64 {
        TOP + self.ph * (1.0 - v.clamp(0.0, 1.0))
    }
}

/// The SVG document.
pub fn svg(s: &Spectrum) -> String {
    let [lo, hi] = s.range_ghz;
    let plot = Plot {
        lo,
        hi,
        pw: W - LEFT - RIGHT,
        ph: H - TOP - BOTTOM,
    };
    let mut o = String::new();
    let _ = writeln!(
        o,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{W}" height="{H}" viewBox="0 0 {W} {H}" font-family="sans-serif" font-size="13">"#
    );
    let _ = writeln!(o, r#"<rect width="{W}" height="{H}" fill="white"/>"#);
    let _ = writeln!(
        o,
        r#"<text x="{}" y="24" text-anchor="middle" font-size="15">{}</text>"#,
        W / 2.0,
        esc(s.title)
    );
    let _ = writeln!(
        o,
        r##"<text x="{}" y="44" text-anchor="middle" font-size="12" fill="#444">Resonant modes and coupled power (computed by antinode)</text>"##,
        W / 2.0
    );
    frame(&mut o, &plot);
    let fs = samples(s);
    mode_curves(&mut o, &plot, s, &fs);
    port_curves(&mut o, &plot, s, &fs);
    o.push_str("</svg>\n");
    o
}

/// ISM band, grid, axes and axis titles.
fn frame(o: &mut String, plot: &Plot) {
    let (lo, hi, pw, ph) = (plot.lo, plot.hi, plot.pw, plot.ph);
    let x = |f: f64| plot.x(f);
    let y = |v: f64| plot.y(v);
    // ISM band.
    let (a, b) = (ISM_GHZ[0].max(lo), ISM_GHZ[1].min(hi));
    if a < b {
        let _ = writeln!(
            o,
            r##"<rect x="{:.2}" y="{TOP}" width="{:.2}" height="{ph}" fill="#e8eefc"/>"##,
            x(a),
            x(b) - x(a)
        );
        let _ = writeln!(
            o,
            r##"<text x="{:.2}" y="{:.2}" font-size="11" fill="#3b5bab">ISM 2.40–2.50 GHz (ITU RR No. 5.150)</text>"##,
            x(a) + 4.0,
            TOP + 14.0
        );
    }
    // Grid and axes.
    let step = tick_step(hi - lo, 10.0);
    let mut t = (lo / step).ceil() * step;
    let digits = if step >= 0.1 {
        1
    } else if step >= 0.01 {
        2
    } else if step >= 0.001 {
        3
    } else {
        4
    };
    while t <= hi + 1e-12 {
        let xt = x(t);
        let _ = writeln!(
            o,
            r##"<line x1="{xt:.2}" y1="{TOP}" x2="{xt:.2}" y2="{:.2}" stroke="#ddd"/><text x="{xt:.2}" y="{:.2}" text-anchor="middle">{t:.digits$}</text>"##,
            TOP + ph,
            TOP + ph + 18.0
        );
        t += step;
    }
    for i in 0..=5 {
        let v = i as f64 / 5.0;
        let _ = writeln!(
            o,
            r##"<line x1="{LEFT}" y1="{:.2}" x2="{:.2}" y2="{:.2}" stroke="#ddd"/><text x="{:.2}" y="{:.2}" text-anchor="end">{v:.1}</text>"##,
            y(v),
            LEFT + pw,
            y(v),
            LEFT - 6.0,
            y(v) + 4.0
        );
    }
    frame_with_frequency_axis(o, [LEFT, TOP], pw, ph);
    let _ = writeln!(
        o,
        r#"<text transform="translate(22 {:.2}) rotate(-90)" text-anchor="middle">fraction (mode curves: peak = 1)</text>"#,
        TOP + ph / 2.0
    );
}

/// One curve (or a dashed line for infinite Q_L) and a label per mode.
fn mode_curves(o: &mut String, plot: &Plot, s: &Spectrum, fs: &[f64]) {
    let (lo, hi) = (plot.lo, plot.hi);
    let x = |f: f64| plot.x(f);
    let y = |v: f64| plot.y(v);
    let mut last_label = f64::NEG_INFINITY;
    let mut raised = false;
    for m in s.modes {
        if m.frequency_ghz < lo || m.frequency_ghz > hi {
            continue;
        }
        let xm = x(m.frequency_ghz);
        if m.q_loaded.is_finite() {
            let pts: Vec<String> = fs
                .iter()
                .filter(|&&f| (f - m.frequency_ghz).abs() < 40.0 * m.frequency_ghz / m.q_loaded)
                .map(|&f| format!("{:.2},{:.2}", x(f), y(lorentz(m, f))))
                .collect();
            let _ = writeln!(
                o,
                r##"<polyline points="{}" fill="none" stroke="#4a6fb5" stroke-width="1" opacity="0.8"/>"##,
                pts.join(" ")
            );
        } else {
            let _ = writeln!(
                o,
                r##"<line x1="{xm:.2}" y1="{:.2}" x2="{xm:.2}" y2="{:.2}" stroke="#4a6fb5" stroke-dasharray="3 2"/>"##,
                y(0.0),
                y(1.0)
            );
        }
        // Labels closer than 14 px to the previous one go one line up (alternating).
        raised = xm - last_label < 14.0 && !raised;
        last_label = xm;
        let _ = writeln!(
            o,
            r##"<text x="{xm:.2}" y="{:.2}" text-anchor="middle" font-size="10" fill="#4a6fb5">{}</text>"##,
            TOP - if raised { 14.0 } else { 3.0 },
            m.index
        );
    }
}

/// The coupled-power curve of each port, the legend and the notes.
fn port_curves(o: &mut String, plot: &Plot, s: &Spectrum, fs: &[f64]) {
    let ph = plot.ph;
    let x = |f: f64| plot.x(f);
    let y = |v: f64| plot.y(v);
    // Ports: each mode's own single-mode curve, not summed.
    for (p, name) in s.ports.iter().enumerate() {
        let colour = PORT_COLOURS[p % PORT_COLOURS.len()];
        for m in s.modes {
            let pts: Vec<String> = fs
                .iter()
                .filter(|&&f| {
                    m.q_loaded.is_finite()
                        && (f - m.frequency_ghz).abs() < 40.0 * m.frequency_ghz / m.q_loaded
                })
                .filter_map(|&f| {
                    single_mode_coupled(m, p, f).map(|v| format!("{:.2},{:.2}", x(f), y(v)))
                })
                .collect();
            if pts.len() > 1 {
                let _ = writeln!(
                    o,
                    r#"<polyline points="{}" fill="none" stroke="{colour}" stroke-width="1.5"/>"#,
                    pts.join(" ")
                );
            }
        }
        let ly = TOP + ph + 58.0 + 16.0 * p as f64;
        let _ = writeln!(
            o,
            r#"<line x1="{LEFT}" y1="{:.2}" x2="{:.2}" y2="{:.2}" stroke="{colour}" stroke-width="2"/><text x="{:.2}" y="{:.2}">port {}: each mode alone, 1 − |Γ|² = 4κ/((1 + κ)² + (2Q0δ)²), share of forward power it would take in</text>"#,
            ly - 4.0,
            LEFT + 24.0,
            ly - 4.0,
            LEFT + 30.0,
            ly,
            esc(name)
        );
    }
    let ly = TOP + ph + 58.0 + 16.0 * s.ports.len() as f64;
    let _ = writeln!(
        o,
        r##"<line x1="{LEFT}" y1="{:.2}" x2="{:.2}" y2="{:.2}" stroke="#4a6fb5"/><text x="{:.2}" y="{:.2}">each mode: 1/(1 + (2Q_L(f − f_i)/f_i)²), width f_i/Q_L, peak 1 (number = mode index; dashed: infinite Q_L)</text>"##,
        ly - 4.0,
        LEFT + 24.0,
        ly - 4.0,
        LEFT + 30.0,
        ly
    );
    let mut notes = vec![s.range_note.to_string()];
    if !s.ports.is_empty() {
        notes.push(
            "port curves: one per mode, exact for an isolated mode and not summed where modes \
             overlap (their coupling phases are unknown here); `antinode drive` computes the \
             power that enters"
                .to_string(),
        );
    }
    for (i, note) in notes.iter().enumerate() {
        let _ = writeln!(
            o,
            r##"<text x="{LEFT}" y="{:.2}" font-size="11" fill="#444">{}</text>"##,
            ly + 18.0 + 14.0 * i as f64,
            esc(note)
        );
    }
}
