//! Helpers shared by the hand-written SVG pictures (`spectrum.svg`, `response.svg`).

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
