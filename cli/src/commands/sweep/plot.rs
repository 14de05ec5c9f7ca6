//! `sweep.svg`: tracked mode frequencies and loaded Q against the last parameter (the
//! ISM band shaded), and for `drive` the absorbed fraction and |S11| at the operating
//! frequency. A parameter whose values are not single numbers is plotted against the
//! value's position in its list.
//!
//! A turntable sweep is plotted against the plate angle: the absorbed fraction and |S11|
//! at the operating (first `--at`) frequency per angle with their means over the angles
//! as dashed lines, and each riding load's heating COV at every fixed angle with the COV
//! of the rotation-averaged pattern as a dashed line (what the plate evens out).

use super::plate::PlotGroup;
use super::tables::{AtLine, ModeLine};
use crate::output::svg::{esc, tick_step};
use antinode_mesh::sweep::{value_number, Combine, SweepFile, Variant};
use antinode_solver::post::band::ISM_BAND_HZ;
use std::collections::BTreeMap;
use std::fmt::Write as _;

const WIDTH: f64 = 760.0;
const LEFT: f64 = 80.0;
const PLOT_W: f64 = 560.0;
const PANEL_H: f64 = 220.0;
const GAP: f64 = 70.0;
const COLOURS: [&str; 8] = [
    "#1f77b4", "#d62728", "#2ca02c", "#9467bd", "#ff7f0e", "#8c564b", "#e377c2", "#17becf",
];

struct Series {
    label: String,
    points: Vec<(f64, f64)>,
    colour: &'static str,
}

struct Panel {
    title: String,
    y_label: String,
    log: bool,
    /// Shaded horizontal band (y values).
    band: Option<[f64; 2]>,
    series: Vec<Series>,
    /// Dashed horizontal lines across the panel: (y, colour, label).
    lines: Vec<(f64, &'static str, String)>,
}

/// The plot's x value of each variant.
fn x_values(sweep: &SweepFile, variants: &[Variant]) -> (Vec<f64>, String) {
    if sweep.plate_angles.is_some() {
        // The plate angle varies fastest: plot against it.
        let xs = variants
            .iter()
            .map(|v| v.values.last().and_then(value_number).unwrap_or(f64::NAN))
            .collect();
        return (xs, antinode_mesh::sweep::PLATE_ANGLE_KEY.to_string());
    }
    let last = sweep.parameters.len() - 1;
    let p = &sweep.parameters[last];
    let numeric = p.values.iter().all(|v| value_number(v).is_some());
    let xs = variants
        .iter()
        .map(|v| {
            let i = sweep.value_indices(v.index)[last];
            if numeric {
                value_number(&p.values[i]).unwrap_or(i as f64)
            } else {
                (i + 1) as f64
            }
        })
        .collect();
    let label = if numeric {
        p.key.clone()
    } else {
        format!("{} (value number)", p.key)
    };
    (xs, label)
}

pub fn svg(
    sweep: &SweepFile,
    variants: &[Variant],
    modes: &[ModeLine],
    at: &[AtLine],
    plate: &[PlotGroup],
) -> String {
    let (xs, x_label) = x_values(sweep, variants);
    // One line per track and value of the other parameters (a track spans rows of a
    // grid; each row is drawn against the last parameter).
    type Lines = BTreeMap<(usize, Vec<usize>), Vec<(f64, f64)>>;
    // With `combine = "zip"` (no turntable) the variants are one row.
    let one_row = sweep.combine == Combine::Zip && sweep.plate_angles.is_none();
    let row = |variant: usize| {
        if one_row {
            return Vec::new();
        }
        let mut idx = sweep.value_indices(variant - 1);
        idx.pop();
        idx
    };
    let mut freq: Lines = BTreeMap::new();
    let mut q: Lines = BTreeMap::new();
    for m in modes {
        let x = xs[m.variant - 1];
        let key = (m.track, row(m.variant));
        freq.entry(key.clone())
            .or_default()
            .push((x, m.frequency_ghz));
        if let Some(ql) = m.q_loaded.filter(|v| *v > 0.0) {
            q.entry(key).or_default().push((x, ql));
        }
    }
    let tracks = |map: Lines| -> Vec<Series> {
        map.into_iter()
            .map(|((t, _), points)| Series {
                label: format!("track {t}"),
                points,
                colour: COLOURS[t % COLOURS.len()],
            })
            .collect()
    };
    let mut panels = Vec::new();
    if !modes.is_empty() {
        panels.push(Panel {
            title: "tracked mode frequencies (ISM band shaded)".into(),
            y_label: "frequency (GHz)".into(),
            log: false,
            band: Some(ISM_BAND_HZ.map(|f| f / 1e9)),
            series: tracks(freq),
            lines: Vec::new(),
        });
        panels.push(Panel {
            title: "loaded Q per track".into(),
            y_label: "Q_L (log scale)".into(),
            log: true,
            band: None,
            series: tracks(q),
            lines: Vec::new(),
        });
    }
    if !plate.is_empty() {
        panels.extend(plate_panels(plate));
    } else if !at.is_empty() {
        let pts =
            |f: &dyn Fn(&AtLine) -> f64| at.iter().map(|a| (xs[a.variant - 1], f(a))).collect();
        panels.push(Panel {
            title: "drive at the operating frequency: absorbed fraction (blue), |S11| (red)".into(),
            y_label: "fraction".into(),
            log: false,
            band: None,
            series: vec![
                Series {
                    label: "absorbed fraction".into(),
                    points: pts(&|a| a.absorbed_fraction),
                    colour: COLOURS[0],
                },
                Series {
                    label: "|S11|".into(),
                    points: pts(&|a| a.s11_abs),
                    colour: COLOURS[1],
                },
            ],
            lines: Vec::new(),
        });
    }
    let height = 50.0 + panels.len() as f64 * (PANEL_H + GAP) + 20.0;
    let mut o = String::new();
    let _ = writeln!(
        o,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{WIDTH}" height="{height}" font-family="sans-serif" font-size="12">"#
    );
    let _ = writeln!(o, r#"<rect width="100%" height="100%" fill="white"/>"#);
    let title = sweep
        .title
        .clone()
        .unwrap_or_else(|| sweep.path.display().to_string());
    let _ = writeln!(
        o,
        r#"<text x="{LEFT}" y="20" font-size="14">{}</text>"#,
        esc(&title)
    );
    let x_range = range(xs.iter().copied(), false);
    for (i, p) in panels.iter().enumerate() {
        let top = 50.0 + i as f64 * (PANEL_H + GAP);
        draw_panel(&mut o, p, top, x_range, &x_label);
    }
    o.push_str("</svg>\n");
    o
}

/// The turntable panels (see the module docs); one colour pair per parameter combination.
fn plate_panels(plate: &[PlotGroup]) -> Vec<Panel> {
    let f = plate[0].frequency_ghz;
    let pts = |g: &PlotGroup, v: &[f64]| -> Vec<(f64, f64)> {
        g.angles_deg
            .iter()
            .copied()
            .zip(v.iter().copied())
            .collect()
    };
    let suffix = |g: &PlotGroup| {
        if g.label.is_empty() {
            String::new()
        } else {
            format!(" ({})", g.label)
        }
    };
    let mut drive = Panel {
        title: format!(
            "drive at {f} GHz against the plate angle: absorbed fraction (blue), |S11| (red); \
             dashed: mean over the angles"
        ),
        y_label: "fraction".into(),
        log: false,
        band: None,
        series: Vec::new(),
        lines: Vec::new(),
    };
    let mut cov = Panel {
        title: "heating COV in the load at each fixed angle; dashed: COV of the \
                rotation-averaged pattern"
            .into(),
        y_label: "COV (std/mean)".into(),
        log: false,
        band: None,
        series: Vec::new(),
        lines: Vec::new(),
    };
    let mut colour = 2;
    for (gi, g) in plate.iter().enumerate() {
        let (ca, cs) = if gi == 0 {
            (COLOURS[0], COLOURS[1])
        } else {
            (COLOURS[(2 * gi) % 8], COLOURS[(2 * gi + 1) % 8])
        };
        let s = suffix(g);
        drive.series.push(Series {
            label: format!("absorbed fraction{s}"),
            points: pts(g, &g.absorbed_fraction),
            colour: ca,
        });
        drive.series.push(Series {
            label: format!("|S11|{s}"),
            points: pts(g, &g.s11_abs),
            colour: cs,
        });
        drive.lines.push((
            g.absorbed_mean,
            ca,
            format!("mean absorbed fraction {}{s}", g.absorbed_mean),
        ));
        drive
            .lines
            .push((g.s11_mean, cs, format!("mean |S11| {}{s}", g.s11_mean)));
        for l in &g.loads {
            let c = COLOURS[colour % COLOURS.len()];
            colour += 1;
            cov.series.push(Series {
                label: format!("{} at fixed angles{s}", l.name),
                points: pts(g, &l.fixed_cov),
                colour: c,
            });
            cov.lines.push((
                l.averaged_cov,
                c,
                format!("{} rotation-averaged COV {}{s}", l.name, l.averaged_cov),
            ));
        }
    }
    vec![drive, cov]
}

/// Data range, padded; log10 of the values when `log`.
fn range(v: impl Iterator<Item = f64>, log: bool) -> [f64; 2] {
    let (mut lo, mut hi) = (f64::INFINITY, f64::NEG_INFINITY);
    for x in v.filter(|x| x.is_finite()) {
        let x = if log { x.log10() } else { x };
        lo = lo.min(x);
        hi = hi.max(x);
    }
    if !lo.is_finite() {
        return [0.0, 1.0];
    }
    let pad = if hi > lo {
        0.05 * (hi - lo)
    } else {
        0.5 * lo.abs().max(1.0)
    };
    [lo - pad, hi + pad]
}

fn draw_panel(o: &mut String, p: &Panel, top: f64, xr: [f64; 2], x_label: &str) {
    let all = p
        .series
        .iter()
        .flat_map(|s| s.points.iter().map(|q| q.1))
        .chain(p.lines.iter().map(|l| l.0));
    let yr = range(
        all.chain(p.band.into_iter().flatten().filter(|_| !p.log)),
        p.log,
    );
    let sx = |x: f64| LEFT + (x - xr[0]) / (xr[1] - xr[0]) * PLOT_W;
    let sy = |y: f64| {
        let y = if p.log { y.log10() } else { y };
        top + PANEL_H - (y - yr[0]) / (yr[1] - yr[0]) * PANEL_H
    };
    let _ = writeln!(
        o,
        r#"<text x="{LEFT}" y="{:.1}">{}</text>"#,
        top - 6.0,
        esc(&p.title)
    );
    if let Some([a, b]) = p.band {
        let (ya, yb) = (sy(a).min(top + PANEL_H), sy(b).max(top));
        if yb < ya {
            let _ = writeln!(
                o,
                r##"<rect x="{LEFT}" y="{yb:.1}" width="{PLOT_W}" height="{:.1}" fill="#f3e3a0"/>"##,
                ya - yb
            );
        }
    }
    let _ = writeln!(
        o,
        r##"<rect x="{LEFT}" y="{top}" width="{PLOT_W}" height="{PANEL_H}" fill="none" stroke="#333"/>"##
    );
    let step = tick_step(xr[1] - xr[0], 6.0);
    let mut t = (xr[0] / step).ceil() * step;
    while t <= xr[1] {
        let _ = writeln!(
            o,
            r#"<text x="{:.1}" y="{:.1}" text-anchor="middle">{}</text>"#,
            sx(t),
            top + PANEL_H + 16.0,
            fmt_tick(t, step)
        );
        t += step;
    }
    let ystep = tick_step(yr[1] - yr[0], 5.0).max(if p.log { 1.0 } else { 0.0 });
    let mut t = (yr[0] / ystep).ceil() * ystep;
    while t <= yr[1] {
        let v = if p.log { 10f64.powf(t) } else { t };
        let _ = writeln!(
            o,
            r#"<text x="{:.1}" y="{:.1}" text-anchor="end">{}</text>"#,
            LEFT - 6.0,
            sy(v) + 4.0,
            fmt_tick(v, if p.log { v } else { ystep })
        );
        t += ystep;
    }
    let _ = writeln!(
        o,
        r#"<text x="{:.1}" y="{:.1}" text-anchor="middle">{}</text>"#,
        LEFT + PLOT_W / 2.0,
        top + PANEL_H + 34.0,
        esc(x_label)
    );
    let _ = writeln!(
        o,
        r#"<text transform="translate(18 {:.1}) rotate(-90)" text-anchor="middle">{}</text>"#,
        top + PANEL_H / 2.0,
        esc(&p.y_label)
    );
    for (y, colour, label) in &p.lines {
        let _ = writeln!(
            o,
            r#"<line x1="{LEFT}" y1="{yy:.1}" x2="{:.1}" y2="{yy:.1}" stroke="{colour}" stroke-width="1.2" stroke-dasharray="6 4"><title>{}</title></line>"#,
            LEFT + PLOT_W,
            esc(label),
            yy = sy(*y)
        );
    }
    for s in &p.series {
        let pts: Vec<String> = s
            .points
            .iter()
            .map(|&(x, y)| format!("{:.1},{:.1}", sx(x), sy(y)))
            .collect();
        let _ = writeln!(
            o,
            r#"<polyline points="{}" fill="none" stroke="{}" stroke-width="1.5"><title>{}</title></polyline>"#,
            pts.join(" "),
            s.colour,
            esc(&s.label)
        );
        for &(x, y) in &s.points {
            let _ = writeln!(
                o,
                r#"<circle cx="{:.1}" cy="{:.1}" r="2.5" fill="{}"/>"#,
                sx(x),
                sy(y),
                s.colour
            );
        }
    }
}

fn fmt_tick(v: f64, step: f64) -> String {
    let digits = (-step.abs().log10().floor()).max(0.0) as usize;
    // A value within half a step of zero is printed as 0, never as −0.
    let v = if v.abs() < 0.5 * step.abs() { 0.0 } else { v };
    format!("{v:.digits$}")
}
