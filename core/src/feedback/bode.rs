//! Bode data (magnitude and phase of control-to-output, compensator and loop) as a table, and
//! an SVG Bode plot with the crossover and margins marked (our own simple layout; the text goes
//! to the runner, core writes no file).

use super::compensation::{Type2Network, MIN_PHASE_BOOST_DEG};
use super::margins::LoopMargins;
use super::plant::LoopPlant;
use crate::error::{Error, Result};
use crate::report::{Field, Table, SAFETY_CAUTION};
use crate::units::{si, Frequency};
use std::f64::consts::PI;
use std::fmt::Write;

/// One frequency of a Bode plot.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BodePoint {
    /// Frequency.
    pub frequency: Frequency,
    /// Control-to-output magnitude, dB re 1 V/A.
    pub plant_magnitude_db: f64,
    /// Control-to-output phase, degrees (unwrapped from the low end).
    pub plant_phase_deg: f64,
    /// Compensator magnitude, dB re 1 A/V.
    pub compensator_magnitude_db: f64,
    /// Compensator phase, degrees.
    pub compensator_phase_deg: f64,
    /// Loop magnitude, dB.
    pub loop_magnitude_db: f64,
    /// Loop phase, degrees.
    pub loop_phase_deg: f64,
}

fn unwrap(p: f64, last: Option<f64>) -> f64 {
    let Some(l) = last else { return p };
    let mut p = p;
    while p - l > 180.0 {
        p -= 360.0;
    }
    while p - l < -180.0 {
        p += 360.0;
    }
    p
}

/// Bode data of a plant with a network at a CTR: `points` frequencies spaced logarithmically
/// from f_s/10⁴ to f_s/2 (the band of the margins).
///
/// Formula: 20·log10|X| and ∠X for X = G (V/A), H (A/V) and T = G·H, each phase unwrapped
/// from the low end. Errors: `points` outside 16 … 100 000.
pub fn bode_points(
    plant: &LoopPlant,
    network: &Type2Network,
    ctr: f64,
    points: usize,
) -> Result<Vec<BodePoint>> {
    if !(super::margins::MIN_POINTS..=super::margins::MAX_POINTS).contains(&points) {
        return Err(Error::out_of_range(format!(
            "`points` must be {} … {}, got {points}",
            super::margins::MIN_POINTS,
            super::margins::MAX_POINTS
        )));
    }
    let fs = plant.switching_frequency.value;
    let (lo, hi) = (fs * 1e-4, fs * 0.5);
    let mut out: Vec<BodePoint> = Vec::with_capacity(points);
    for k in 0..points {
        let f = lo * ((hi / lo).ln() * k as f64 / (points - 1) as f64).exp();
        let w = 2.0 * PI * f;
        let g = plant.response(w);
        let h = network.response_w(ctr, w);
        let t = g * h;
        let last = out.last();
        out.push(BodePoint {
            frequency: si(f),
            plant_magnitude_db: 20.0 * g.norm().log10(),
            plant_phase_deg: unwrap(g.arg().to_degrees(), last.map(|p| p.plant_phase_deg)),
            compensator_magnitude_db: 20.0 * h.norm().log10(),
            compensator_phase_deg: unwrap(
                h.arg().to_degrees(),
                last.map(|p| p.compensator_phase_deg),
            ),
            loop_magnitude_db: 20.0 * t.norm().log10(),
            loop_phase_deg: unwrap(t.arg().to_degrees(), last.map(|p| p.loop_phase_deg)),
        });
    }
    Ok(out)
}

/// The Bode data as a table (one row per frequency; dB and degree columns are plain numbers).
pub fn bode_table(points: &[BodePoint]) -> Table {
    let mut t = Table::new();
    for p in points {
        t.push_row(vec![
            Field::quantity("frequency", p.frequency),
            Field::new("plant_magnitude_db", p.plant_magnitude_db),
            Field::new("plant_phase_deg", p.plant_phase_deg),
            Field::new("compensator_magnitude_db", p.compensator_magnitude_db),
            Field::new("compensator_phase_deg", p.compensator_phase_deg),
            Field::new("loop_magnitude_db", p.loop_magnitude_db),
            Field::new("loop_phase_deg", p.loop_phase_deg),
        ]);
    }
    t
}

use crate::report::xml_escape as escape;

fn freq_label(f: f64) -> String {
    if f >= 1e3 {
        format!("{} kHz", crate::units::format_number(f / 1e3))
    } else {
        format!("{} Hz", crate::units::format_number(f))
    }
}

/// A Bode plot as an SVG document: magnitude (dB) above, phase (degrees) below, on a shared
/// logarithmic frequency axis; control-to-output in grey, compensator in green, loop in blue;
/// the crossover marked with a dashed line and the phase and gain margins written beside it;
/// the safety caution as a footnote.
pub fn bode_svg(points: &[BodePoint], margins: &LoopMargins, title: &str) -> String {
    const W: f64 = 880.0;
    const H: f64 = 700.0;
    const L: f64 = 70.0;
    const R: f64 = 850.0;
    const MT: f64 = 50.0;
    const MB: f64 = 330.0;
    const PT: f64 = 370.0;
    const PB: f64 = 610.0;
    let mut s = String::new();
    if points.len() < 2 {
        return s;
    }
    let f0 = points[0].frequency.value;
    let f1 = points[points.len() - 1].frequency.value;
    let x_of = |f: f64| L + (R - L) * (f / f0).ln() / (f1 / f0).ln();
    let finite = |x: f64| if x.is_finite() { x } else { 0.0 };
    let mags = points.iter().flat_map(|p| {
        [
            p.plant_magnitude_db,
            p.compensator_magnitude_db,
            p.loop_magnitude_db,
        ]
    });
    let (mut dmin, mut dmax) = (f64::INFINITY, f64::NEG_INFINITY);
    for m in mags.map(finite) {
        dmin = dmin.min(m);
        dmax = dmax.max(m);
    }
    let dmin = ((dmin.max(-120.0)) / 20.0).floor() * 20.0;
    let dmax = ((dmax.min(160.0)) / 20.0).ceil() * 20.0;
    let dmax = if dmax <= dmin { dmin + 20.0 } else { dmax };
    let phases = points
        .iter()
        .flat_map(|p| [p.plant_phase_deg, p.compensator_phase_deg, p.loop_phase_deg]);
    let (mut pmin, mut pmax) = (f64::INFINITY, f64::NEG_INFINITY);
    for p in phases.map(finite) {
        pmin = pmin.min(p);
        pmax = pmax.max(p);
    }
    let pmin = (pmin.max(-360.0) / 45.0).floor() * 45.0;
    let pmax = (pmax.min(180.0) / 45.0).ceil() * 45.0;
    let pmax = if pmax <= pmin { pmin + 45.0 } else { pmax };
    let ym = |d: f64| MB - (MB - MT) * (finite(d).clamp(dmin, dmax) - dmin) / (dmax - dmin);
    let yp = |p: f64| PB - (PB - PT) * (finite(p).clamp(pmin, pmax) - pmin) / (pmax - pmin);
    let _ = writeln!(
        s,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{W}" height="{H}" viewBox="0 0 {W} {H}" font-family="sans-serif" font-size="12">"#
    );
    let _ = writeln!(s, "<desc>{}</desc>", escape(SAFETY_CAUTION));
    let _ = writeln!(
        s,
        r#"<rect x="0" y="0" width="{W}" height="{H}" fill="white"/>"#
    );
    let _ = writeln!(
        s,
        r#"<text x="{L}" y="28" font-size="15">{}</text>"#,
        escape(title)
    );
    // frequency grid: decades
    let mut dec = 10f64.powf(f0.log10().ceil());
    while dec <= f1 * (1.0 + 1e-9) {
        let x = x_of(dec);
        for (top, bottom) in [(MT, MB), (PT, PB)] {
            let _ = writeln!(
                s,
                r##"<line x1="{x:.1}" y1="{top}" x2="{x:.1}" y2="{bottom}" stroke="#ddd"/>"##
            );
        }
        let _ = writeln!(
            s,
            r#"<text x="{x:.1}" y="{:.1}" text-anchor="middle">{}</text>"#,
            PB + 16.0,
            freq_label(dec)
        );
        dec *= 10.0;
    }
    let mut d = dmin;
    while d <= dmax + 1e-9 {
        let y = ym(d);
        let _ = writeln!(
            s,
            r##"<line x1="{L}" y1="{y:.1}" x2="{R}" y2="{y:.1}" stroke="{}"/><text x="{:.1}" y="{:.1}" text-anchor="end">{d}</text>"##,
            if d == 0.0 { "#999" } else { "#ddd" },
            L - 6.0,
            y + 4.0
        );
        d += 20.0;
    }
    let mut p = pmin;
    while p <= pmax + 1e-9 {
        let y = yp(p);
        let _ = writeln!(
            s,
            r##"<line x1="{L}" y1="{y:.1}" x2="{R}" y2="{y:.1}" stroke="{}"/><text x="{:.1}" y="{:.1}" text-anchor="end">{p}</text>"##,
            if p == -180.0 { "#999" } else { "#ddd" },
            L - 6.0,
            y + 4.0
        );
        p += 45.0;
    }
    for (top, bottom) in [(MT, MB), (PT, PB)] {
        let _ = writeln!(
            s,
            r#"<rect x="{L}" y="{top}" width="{}" height="{}" fill="none" stroke="black"/>"#,
            R - L,
            bottom - top
        );
    }
    let _ = writeln!(
        s,
        r#"<text x="18" y="{0:.1}" transform="rotate(-90 18 {0:.1})" text-anchor="middle">magnitude [dB]</text>"#,
        (MT + MB) / 2.0
    );
    let _ = writeln!(
        s,
        r#"<text x="18" y="{0:.1}" transform="rotate(-90 18 {0:.1})" text-anchor="middle">phase [°]</text>"#,
        (PT + PB) / 2.0
    );
    let _ = writeln!(
        s,
        r#"<text x="{:.1}" y="{:.1}" text-anchor="middle">frequency</text>"#,
        (L + R) / 2.0,
        PB + 34.0
    );
    type Pick = fn(&BodePoint) -> (f64, f64);
    let curves: [(&str, &str, Pick); 3] = [
        ("#888", "control to output (dB re 1 V/A)", |p| {
            (p.plant_magnitude_db, p.plant_phase_deg)
        }),
        ("#080", "compensator (dB re 1 A/V)", |p| {
            (p.compensator_magnitude_db, p.compensator_phase_deg)
        }),
        ("#06c", "loop gain", |p| {
            (p.loop_magnitude_db, p.loop_phase_deg)
        }),
    ];
    for (colour, _, pick) in &curves {
        let mag: Vec<String> = points
            .iter()
            .map(|p| format!("{:.1},{:.1}", x_of(p.frequency.value), ym(pick(p).0)))
            .collect();
        let ph: Vec<String> = points
            .iter()
            .map(|p| format!("{:.1},{:.1}", x_of(p.frequency.value), yp(pick(p).1)))
            .collect();
        for pts in [mag, ph] {
            let _ = writeln!(
                s,
                r#"<polyline points="{}" fill="none" stroke="{colour}" stroke-width="1.6"/>"#,
                pts.join(" ")
            );
        }
    }
    // crossover and margins
    let mut note = Vec::new();
    for (f, pm) in margins.crossovers.iter().zip(&margins.phase_margins) {
        let x = x_of(f.value.clamp(f0, f1));
        let _ = writeln!(
            s,
            r##"<line x1="{x:.1}" y1="{MT}" x2="{x:.1}" y2="{PB}" stroke="#c00" stroke-dasharray="5 4"/>"##
        );
        note.push(format!(
            "crossover {} Hz, phase margin {:.1}°",
            crate::units::format_number(f.value),
            pm
        ));
    }
    if margins.crossovers.is_empty() {
        note.push("no crossover in the band".to_string());
    }
    match margins.phase_crossover {
        Some(f) => {
            let x = x_of(f.value.clamp(f0, f1));
            let _ = writeln!(
                s,
                r##"<line x1="{x:.1}" y1="{MT}" x2="{x:.1}" y2="{PB}" stroke="#a60" stroke-dasharray="2 3"/>"##
            );
            note.push(format!(
                "phase −180° at {} Hz, gain margin {:.1} dB",
                crate::units::format_number(f.value),
                margins.gain_margin
            ));
        }
        None => note.push(format!(
            "phase above −180° up to f_s/2; gain margin there {:.1} dB",
            margins.gain_margin
        )),
    }
    for (i, line) in note.iter().enumerate() {
        let _ = writeln!(
            s,
            r##"<text x="{:.1}" y="{:.1}" fill="#c00">{}</text>"##,
            L + 8.0,
            MT + 16.0 + 15.0 * i as f64,
            escape(line)
        );
    }
    let lx = R - 250.0;
    for (i, (colour, label, _)) in curves.iter().enumerate() {
        let y = MT + 16.0 + 16.0 * i as f64;
        let _ = writeln!(
            s,
            r#"<line x1="{lx:.1}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="{colour}" stroke-width="2"/><text x="{:.1}" y="{:.1}">{label}</text>"#,
            lx + 24.0,
            lx + 30.0,
            y + 4.0
        );
    }
    let _ = writeln!(
        s,
        r#"<text x="{L}" y="{:.1}" font-size="10">{}</text>"#,
        H - 50.0,
        escape(&format!(
            "Small-signal model (Ridley's sampling double pole; valid to f_s/2); network phase boost at least {MIN_PHASE_BOOST_DEG}°. Confirm on the bench with a loop analyser."
        ))
    );
    s.push_str(&crate::report::svg_caution(L, H - 34.0));
    s.push_str("</svg>\n");
    s
}
