//! Helpers shared by the hand-written SVG pictures (`spectrum.svg`, `response.svg`).

use std::fmt::Write as _;

/// Text escaped for SVG/XML.
pub fn esc(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

/// A "nice" tick step (1, 2 or 5 × 10^k) for about `n` ticks over `span`.
pub fn tick_step(span: f64, n: f64) -> f64 {
    let raw = span / n;
    let p = 10f64.powf(raw.log10().floor());
    let m = raw / p;
    p * if m < 1.5 {
        1.0
    } else if m < 3.5 {
        2.0
    } else if m < 7.5 {
        5.0
    } else {
        10.0
    }
}

/// The plot area's frame (top-left corner `[left, top]`, `pw` × `ph`) and the frequency
/// axis label under it.
pub fn frame_with_frequency_axis(o: &mut String, [left, top]: [f64; 2], pw: f64, ph: f64) {
    let _ = writeln!(
        o,
        r##"<rect x="{left}" y="{top}" width="{pw}" height="{ph}" fill="none" stroke="#333"/>"##
    );
    let _ = writeln!(
        o,
        r#"<text x="{:.2}" y="{:.2}" text-anchor="middle">frequency (GHz)</text>"#,
        left + pw / 2.0,
        top + ph + 38.0
    );
}
