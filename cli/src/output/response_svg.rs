//! `response.svg`: the driven response over the band, written by hand as SVG text.
//!
//! Left axis: |S_pp| in dB (20 log10 |S_pp|) of each port, the reflection it sees when
//! it alone is fed and the others are matched. Right axis: the fractions of the drive's
//! forward power absorbed in the loads and in the walls. Curves come from the reduced
//! model evaluated densely; the resonant frequencies of a `modes` run, when one is at
//! hand, are marked with their index.

use super::svg::{esc, frame_with_frequency_axis, tick_step};
use std::fmt::Write as _;

/// What to draw.
pub struct ResponsePlot<'a> {
    pub title: &'a str,
    pub band_ghz: [f64; 2],
    pub frequencies_ghz: Vec<f64>,
    /// Per port: |S_pp| in dB at each frequency.
    pub reflection_db: Vec<(String, Vec<f64>)>,
    /// Fractions of the forward power at each frequency.
    pub loads: Vec<f64>,
    pub walls: Vec<f64>,
    /// (index, frequency GHz) of modes from a `modes` run, and where they came from.
    pub modes: Option<(Vec<(usize, f64)>, String)>,
    pub notes: Vec<String>,
}

const W: f64 = 960.0;
/// Plot height (the picture grows with the legend below it).
const PH: f64 = 300.0;
const LEFT: f64 = 80.0;
const RIGHT: f64 = 80.0;
const TOP: f64 = 70.0;
const COLOURS: [&str; 4] = ["#d95f02", "#1b9e77", "#7570b3", "#e7298a"];

/// The SVG document.
pub fn svg(p: &ResponsePlot<'_>) -> String {
    let [lo, hi] = p.band_ghz;
    let (pw, ph) = (W - LEFT - RIGHT, PH);
    let legend_lines = p.reflection_db.len() + 2 + usize::from(p.modes.is_some());
    let h = TOP + ph + 60.0 + 16.0 * legend_lines as f64 + 14.0 * p.notes.len() as f64 + 10.0;
    // dB axis from the lowest value (rounded down to 10 dB, at least −40 dB shown) to 0.
    let lowest = p
        .reflection_db
        .iter()
        .flat_map(|(_, v)| v.iter().copied())
        .filter(|v| v.is_finite())
        .fold(0.0, f64::min);
    let db_min = (lowest / 10.0).floor().min(-1.0) * 10.0;
    let db_min = db_min.max(-80.0);
    let x = |f: f64| LEFT + pw * (f - lo) / (hi - lo);
    let y_db = |d: f64| TOP + ph * (d.clamp(db_min, 0.0) / db_min);
    let y_frac = |v: f64| TOP + ph * (1.0 - v.clamp(0.0, 1.0));
    let mut o = String::new();
    let _ = writeln!(
        o,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{W}" height="{h:.0}" viewBox="0 0 {W} {h:.0}" font-family="sans-serif" font-size="13">"#
    );
    let _ = writeln!(o, r#"<rect width="{W}" height="{h:.0}" fill="white"/>"#);
    let _ = writeln!(
        o,
        r#"<text x="{}" y="24" text-anchor="middle" font-size="15">{}</text>"#,
        W / 2.0,
        esc(p.title)
    );
    let _ = writeln!(
        o,
        r##"<text x="{}" y="44" text-anchor="middle" font-size="12" fill="#444">Driven response: reflection and absorbed power (computed by antinode)</text>"##,
        W / 2.0
    );
    axes(&mut o, [lo, hi], db_min, pw, ph);
    // Modes of a `modes` run.
    if let Some((modes, _)) = &p.modes {
        for &(index, f) in modes {
            if f < lo || f > hi {
                continue;
            }
            let xm = x(f);
            let _ = writeln!(
                o,
                r##"<line x1="{xm:.2}" y1="{TOP}" x2="{xm:.2}" y2="{:.2}" stroke="#4a6fb5" stroke-dasharray="2 3" opacity="0.7"/><text x="{xm:.2}" y="{:.2}" text-anchor="middle" font-size="10" fill="#4a6fb5">{index}</text>"##,
                TOP + ph,
                TOP - 4.0
            );
        }
    }
    let poly = |vals: &[f64], y: &dyn Fn(f64) -> f64| -> String {
        p.frequencies_ghz
            .iter()
            .zip(vals)
            .filter(|(_, v)| v.is_finite())
            .map(|(&f, &v)| format!("{:.2},{:.2}", x(f), y(v)))
            .collect::<Vec<_>>()
            .join(" ")
    };
    let mut legend: Vec<(String, String, &str)> = Vec::new();
    for (i, (name, db)) in p.reflection_db.iter().enumerate() {
        let c = COLOURS[i % COLOURS.len()];
        let _ = writeln!(
            o,
            r#"<polyline points="{}" fill="none" stroke="{c}" stroke-width="2"/>"#,
            poly(db, &y_db)
        );
        legend.push((
            c.to_string(),
            format!(
                "|S| at port {} (dB, left axis), that port fed alone",
                esc(name)
            ),
            "",
        ));
    }
    let _ = writeln!(
        o,
        r##"<polyline points="{}" fill="none" stroke="#222" stroke-width="2"/>"##,
        poly(&p.loads, &y_frac)
    );
    legend.push((
        "#222".into(),
        "absorbed in the loads (right axis)".into(),
        "",
    ));
    let _ = writeln!(
        o,
        r##"<polyline points="{}" fill="none" stroke="#888" stroke-width="1.5" stroke-dasharray="6 3"/>"##,
        poly(&p.walls, &y_frac)
    );
    legend.push((
        "#888".into(),
        "absorbed in the walls (right axis)".into(),
        "6 3",
    ));
    if let Some((_, from)) = &p.modes {
        legend.push((
            "#4a6fb5".into(),
            format!("resonances from {} (mode index)", esc(from)),
            "2 3",
        ));
    }
    let mut ly = TOP + ph + 60.0;
    for (c, text, dash) in &legend {
        let _ = writeln!(
            o,
            r#"<line x1="{LEFT}" y1="{:.2}" x2="{:.2}" y2="{:.2}" stroke="{c}" stroke-width="2" stroke-dasharray="{dash}"/><text x="{:.2}" y="{ly:.2}">{text}</text>"#,
            ly - 4.0,
            LEFT + 24.0,
            ly - 4.0,
            LEFT + 30.0
        );
        ly += 16.0;
    }
    for note in &p.notes {
        let _ = writeln!(
            o,
            r##"<text x="{LEFT}" y="{ly:.2}" font-size="11" fill="#444">{}</text>"##,
            esc(note)
        );
        ly += 14.0;
    }
    o.push_str("</svg>\n");
    o
}

/// The frequency grid, the dB ticks (left), the fraction ticks (right), the frame and
/// the axis labels.
fn axes(o: &mut String, [lo, hi]: [f64; 2], db_min: f64, pw: f64, ph: f64) {
    let x = |f: f64| LEFT + pw * (f - lo) / (hi - lo);
    let y_db = |d: f64| TOP + ph * (d.clamp(db_min, 0.0) / db_min);
    let y_frac = |v: f64| TOP + ph * (1.0 - v.clamp(0.0, 1.0));
    // Frequency grid.
    let step = tick_step(hi - lo, 10.0);
    let digits = (-step.log10().floor()).max(1.0) as usize;
    let mut t = (lo / step).ceil() * step;
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
    // dB ticks (left) and fraction ticks (right).
    let db_step = tick_step(-db_min, 6.0);
    let mut d = 0.0;
    while d >= db_min - 1e-9 {
        let yt = y_db(d);
        let _ = writeln!(
            o,
            r##"<line x1="{LEFT}" y1="{yt:.2}" x2="{:.2}" y2="{yt:.2}" stroke="#eee"/><text x="{:.2}" y="{:.2}" text-anchor="end">{d:.0}</text>"##,
            LEFT + pw,
            LEFT - 6.0,
            yt + 4.0
        );
        d -= db_step;
    }
    for i in 0..=5 {
        let v = i as f64 / 5.0;
        let _ = writeln!(
            o,
            r#"<text x="{:.2}" y="{:.2}">{v:.1}</text>"#,
            LEFT + pw + 6.0,
            y_frac(v) + 4.0
        );
    }
    frame_with_frequency_axis(o, [LEFT, TOP], pw, ph);
    let _ = writeln!(
        o,
        r#"<text transform="translate(24 {:.2}) rotate(-90)" text-anchor="middle">|S_pp| (dB)</text>"#,
        TOP + ph / 2.0
    );
    let _ = writeln!(
        o,
        r#"<text transform="translate({:.2} {:.2}) rotate(90)" text-anchor="middle">fraction of forward power</text>"#,
        W - 22.0,
        TOP + ph / 2.0
    );
}
