//! An SVG plot of the estimated conducted spectrum against the CISPR 32 limit lines (our own
//! simple layout; the text is handed to the runner, core writes no file).

use super::design::InputFilterDesign;
use super::limits::{limit_segments, Detector};
use crate::report::SAFETY_CAUTION;
use std::fmt::Write;

const WIDTH: f64 = 880.0;
const HEIGHT: f64 = 540.0;
const LEFT: f64 = 70.0;
const RIGHT: f64 = 850.0;
const TOP: f64 = 50.0;
const BOTTOM: f64 = 450.0;
const F_MIN: f64 = 150e3;
const F_MAX: f64 = 30e6;

use crate::report::xml_escape as escape;

fn x_of(f: f64) -> f64 {
    LEFT + (RIGHT - LEFT) * (f / F_MIN).log10() / (F_MAX / F_MIN).log10()
}

fn frequency_label(f: f64) -> String {
    if f >= 1e6 {
        format!("{} MHz", f / 1e6)
    } else {
        format!("{} kHz", f / 1e3)
    }
}

/// The estimated spectrum (unfiltered and filtered, one point per harmonic) against the
/// quasi-peak and average limit lines of the design's class, as an SVG document.
///
/// Layout: frequency on a logarithmic axis 150 kHz … 30 MHz, level in dBµV on a linear axis
/// from 0 dBµV to at least 100 dBµV (levels below the axis are drawn on it); limit lines in
/// red (solid quasi-peak, dashed average), the unfiltered estimate in grey and the filtered
/// one in blue; the safety caution as a footnote.
pub fn spectrum_svg(design: &InputFilterDesign) -> String {
    let top_level = design
        .harmonics
        .iter()
        .map(|h| h.estimate_unfiltered.value)
        .fold(100.0f64, f64::max);
    let y_max = ((top_level + 10.0) / 10.0).ceil() * 10.0;
    let y_min = 0.0;
    let y_of = |d: f64| {
        let d = d.clamp(y_min, y_max);
        BOTTOM - (BOTTOM - TOP) * (d - y_min) / (y_max - y_min)
    };
    let mut s = String::new();
    let _ = writeln!(
        s,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{WIDTH}" height="{HEIGHT}" viewBox="0 0 {WIDTH} {HEIGHT}" font-family="sans-serif" font-size="12">"#
    );
    let _ = writeln!(s, "<desc>{}</desc>", escape(SAFETY_CAUTION));
    let _ = writeln!(
        s,
        r#"<rect x="0" y="0" width="{WIDTH}" height="{HEIGHT}" fill="white"/>"#
    );
    let _ = writeln!(
        s,
        r#"<text x="{LEFT}" y="28" font-size="15">Conducted emission estimate, CISPR 32 {} (margin target {})</text>"#,
        design.spec.class,
        escape(&design.spec.margin.to_string())
    );
    // grid
    for f in [150e3, 300e3, 500e3, 1e6, 2e6, 3e6, 5e6, 10e6, 20e6, 30e6] {
        let x = x_of(f);
        let _ = writeln!(
            s,
            r##"<line x1="{x:.1}" y1="{TOP}" x2="{x:.1}" y2="{BOTTOM}" stroke="#ddd"/><text x="{x:.1}" y="{:.1}" text-anchor="middle">{}</text>"##,
            BOTTOM + 16.0,
            frequency_label(f)
        );
    }
    let mut d = y_min;
    while d <= y_max + 1e-9 {
        let y = y_of(d);
        let _ = writeln!(
            s,
            r##"<line x1="{LEFT}" y1="{y:.1}" x2="{RIGHT}" y2="{y:.1}" stroke="#ddd"/><text x="{:.1}" y="{:.1}" text-anchor="end">{d}</text>"##,
            LEFT - 6.0,
            y + 4.0
        );
        d += 10.0;
    }
    let _ = writeln!(
        s,
        r#"<rect x="{LEFT}" y="{TOP}" width="{}" height="{}" fill="none" stroke="black"/>"#,
        RIGHT - LEFT,
        BOTTOM - TOP
    );
    let _ = writeln!(
        s,
        r#"<text x="{:.1}" y="{:.1}" text-anchor="middle">frequency</text>"#,
        (LEFT + RIGHT) / 2.0,
        BOTTOM + 36.0
    );
    let _ = writeln!(
        s,
        r#"<text x="18" y="{:.1}" transform="rotate(-90 18 {:.1})" text-anchor="middle">level [dBµV]</text>"#,
        (TOP + BOTTOM) / 2.0,
        (TOP + BOTTOM) / 2.0
    );
    // limit lines
    for (detector, dash) in [
        (Detector::QuasiPeak, ""),
        (Detector::Average, r#" stroke-dasharray="6 4""#),
    ] {
        let mut pts = Vec::new();
        for seg in limit_segments(design.spec.class, detector) {
            pts.push(format!(
                "{:.1},{:.1}",
                x_of(seg.start_hz),
                y_of(seg.start_level)
            ));
            pts.push(format!(
                "{:.1},{:.1}",
                x_of(seg.end_hz),
                y_of(seg.end_level)
            ));
        }
        let _ = writeln!(
            s,
            r##"<polyline points="{}" fill="none" stroke="#c00" stroke-width="2"{dash}/>"##,
            pts.join(" ")
        );
    }
    // estimates
    for (colour, pick) in [
        (
            "#888",
            (|h: &super::design::HarmonicRow| h.estimate_unfiltered.value) as fn(&_) -> f64,
        ),
        ("#06c", |h: &super::design::HarmonicRow| {
            h.estimate_filtered.value
        }),
    ] {
        let pts: Vec<String> = design
            .harmonics
            .iter()
            .map(|h| format!("{:.1},{:.1}", x_of(h.frequency.value), y_of(pick(h))))
            .collect();
        let _ = writeln!(
            s,
            r#"<polyline points="{}" fill="none" stroke="{colour}" stroke-width="1.2"/>"#,
            pts.join(" ")
        );
    }
    // legend
    let lx = RIGHT - 230.0;
    let items = [
        ("#c00", "", "limit, quasi-peak"),
        ("#c00", r#" stroke-dasharray="6 4""#, "limit, average"),
        ("#888", "", "estimate without filter"),
        ("#06c", "", "estimate with filter"),
    ];
    for (i, (colour, dash, label)) in items.iter().enumerate() {
        let y = TOP + 16.0 + 16.0 * i as f64;
        let _ = writeln!(
            s,
            r#"<line x1="{lx:.1}" y1="{y:.1}" x2="{:.1}" y2="{y:.1}" stroke="{colour}" stroke-width="2"{dash}/><text x="{:.1}" y="{:.1}">{label}</text>"#,
            lx + 28.0,
            lx + 34.0,
            y + 4.0
        );
    }
    let _ = writeln!(
        s,
        r#"<text x="{LEFT}" y="{:.1}" font-size="10">{}</text>"#,
        HEIGHT - 40.0,
        escape(
            "Estimate from the converter's waveforms (DM + CM in phase); ideal filter parts, so \
             filtered levels above a few MHz are optimistic; confirm with a scan.",
        )
    );
    s.push_str(&crate::report::svg_caution(LEFT, HEIGHT - 26.0));
    s.push_str("</svg>\n");
    s
}
