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
    let mut labelled = Vec::new();
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
        labelled.push((xm, m.index));
    }
    for l in label_layout(&labelled) {
        let _ = writeln!(
            o,
            r##"<text x="{:.2}" y="{:.2}" text-anchor="middle" font-size="10" fill="#4a6fb5">{}</text>"##,
            l.x,
            TOP - if l.raised { 14.0 } else { 3.0 },
            l.text
        );
    }
}

/// Modes whose marks are closer than this (px) to the previous one share one label.
const LABEL_MERGE_PX: f64 = 14.0;
/// Width of one label character at font size 10 (px), for the overlap test.
const LABEL_CHAR_PX: f64 = 6.0;

/// A placed mode label.
#[derive(Debug, PartialEq)]
struct Label {
    x: f64,
    text: String,
    raised: bool,
}

/// Labels for marks at (x px, mode index), sorted by x: marks within
/// [`LABEL_MERGE_PX`] of the previous one (near-degenerate modes) share one label at
/// their mean x ("5–8" for consecutive indices, "5,7" otherwise); a label that would
/// overlap the previous one goes one line up, and right of the upper line's last label
/// when that is taken too, so no two labels overprint.
fn label_layout(marks: &[(f64, usize)]) -> Vec<Label> {
    let mut clusters: Vec<Vec<(f64, usize)>> = Vec::new();
    for &m in marks {
        match clusters.last_mut() {
            Some(c) if m.0 - c.last().map_or(f64::NEG_INFINITY, |l| l.0) < LABEL_MERGE_PX => {
                c.push(m)
            }
            _ => clusters.push(vec![m]),
        }
    }
    let mut right_edge = [f64::NEG_INFINITY; 2];
    clusters
        .iter()
        .map(|c| {
            let x = c.iter().map(|m| m.0).sum::<f64>() / c.len() as f64;
            let idx: Vec<usize> = c.iter().map(|m| m.1).collect();
            let consecutive = idx.windows(2).all(|w| w[1] == w[0] + 1);
            let text = match idx.as_slice() {
                [one] => one.to_string(),
                [first, .., last] if consecutive => format!("{first}–{last}"),
                _ => idx
                    .iter()
                    .map(|i| i.to_string())
                    .collect::<Vec<_>>()
                    .join(","),
            };
            let half = 0.5 * LABEL_CHAR_PX * text.chars().count() as f64;
            let raised = x - half < right_edge[0] + 2.0;
            // Both lines taken: shift right of the upper line's last label.
            let x = if raised {
                x.max(right_edge[1] + 2.0 + half)
            } else {
                x
            };
            right_edge[raised as usize] = x + half;
            Label { x, text, raised }
        })
        .collect()
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

#[cfg(test)]
mod tests {
    use super::*;

    /// A 4-fold near-degenerate group (marks 0.5 px apart) gets one label "5–8"; a mode
    /// 100 px away its own.
    #[test]
    fn near_degenerate_modes_share_a_label() {
        let marks = [(100.0, 5), (100.5, 6), (101.0, 7), (101.5, 8), (201.5, 9)];
        let l = label_layout(&marks);
        assert_eq!(l.len(), 2);
        assert_eq!(l[0].text, "5–8");
        assert!((l[0].x - 100.75).abs() < 1e-12);
        assert_eq!((l[1].text.as_str(), l[1].raised), ("9", false));
    }

    /// Labels 15–30 px apart never overlap on one line: each label's extent (character
    /// width estimate) is checked against every other label on the same line.
    #[test]
    fn labels_never_overprint() {
        let marks: Vec<(f64, usize)> = (0..40).map(|i| (15.0 * i as f64, 100 + i)).collect();
        let l = label_layout(&marks);
        for (i, a) in l.iter().enumerate() {
            for b in &l[i + 1..] {
                if a.raised == b.raised {
                    let ha = 0.5 * LABEL_CHAR_PX * a.text.chars().count() as f64;
                    let hb = 0.5 * LABEL_CHAR_PX * b.text.chars().count() as f64;
                    assert!(b.x - hb >= a.x + ha, "{a:?} and {b:?} overlap");
                }
            }
        }
    }
}
