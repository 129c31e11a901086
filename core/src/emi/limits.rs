//! Conducted emission limits at the AC mains port (CISPR 32), classes A and B, quasi-peak and
//! average, 150 kHz – 30 MHz.

use crate::error::{Error, Result};
use crate::units::validate::within;
use crate::units::{si, DbReference, Decibel, Frequency};
use std::fmt;

/// The equipment class of CISPR 32 (class A: commercial / industrial; class B: residential).
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum EmissionClass {
    /// Class A equipment (not for residential use).
    A,
    /// Class B equipment (residential environments).
    B,
}

impl EmissionClass {
    /// Reads `"A"` or `"B"` (also `"class_a"`, `"class b"`, any case).
    pub fn parse(text: &str) -> Result<Self> {
        let t = text.trim().to_ascii_lowercase().replace(['_', ' '], "");
        match t.as_str() {
            "a" | "classa" => Ok(EmissionClass::A),
            "b" | "classb" => Ok(EmissionClass::B),
            _ => Err(Error::unknown(format!(
                "unknown emission class '{text}'; expected \"A\" or \"B\""
            ))),
        }
    }
}

impl fmt::Display for EmissionClass {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            EmissionClass::A => "class A",
            EmissionClass::B => "class B",
        })
    }
}

/// The measuring receiver's detector the limit applies to.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum Detector {
    /// Quasi-peak detector.
    QuasiPeak,
    /// Average detector.
    Average,
}

impl Detector {
    /// Reads `"quasi_peak"` (also `"qp"`, `"quasi-peak"`) or `"average"` (also `"avg"`, `"av"`).
    pub fn parse(text: &str) -> Result<Self> {
        let t = text.trim().to_ascii_lowercase().replace(['-', ' '], "_");
        match t.as_str() {
            "quasi_peak" | "quasipeak" | "qp" => Ok(Detector::QuasiPeak),
            "average" | "avg" | "av" => Ok(Detector::Average),
            _ => Err(Error::unknown(format!(
                "unknown detector '{text}'; expected \"quasi_peak\" or \"average\""
            ))),
        }
    }
}

impl fmt::Display for Detector {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(match self {
            Detector::QuasiPeak => "quasi_peak",
            Detector::Average => "average",
        })
    }
}

/// One segment of a limit line: from `start` to `end` (Hz) the limit goes from `start_level` to
/// `end_level` (dBµV) linearly with the logarithm of frequency (constant when equal).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LimitSegment {
    /// Lower frequency of the segment, Hz.
    pub start_hz: f64,
    /// Upper frequency of the segment, Hz.
    pub end_hz: f64,
    /// Limit at the lower frequency, dBµV.
    pub start_level: f64,
    /// Limit at the upper frequency, dBµV.
    pub end_level: f64,
}

/// The source of the limit table, printed with every limit lookup.
pub const LIMIT_TABLE_SOURCE: &str = "CISPR 32:2015 (edition 2), Annex A, Table A.9 (class A) and \
Table A.10 (class B), AC mains power port; the same values as CISPR 22:2008 (edition 6), \
Tables 1 and 2 (values recalled from memory)";

const fn seg(start_hz: f64, end_hz: f64, start_level: f64, end_level: f64) -> LimitSegment {
    LimitSegment {
        start_hz,
        end_hz,
        start_level,
        end_level,
    }
}

// CISPR 32:2015, Table A.9: class A, AC mains port (values recalled from memory).
const CLASS_A_QUASI_PEAK: &[LimitSegment] =
    &[seg(150e3, 500e3, 79.0, 79.0), seg(500e3, 30e6, 73.0, 73.0)];
const CLASS_A_AVERAGE: &[LimitSegment] =
    &[seg(150e3, 500e3, 66.0, 66.0), seg(500e3, 30e6, 60.0, 60.0)];
// CISPR 32:2015, Table A.10: class B, AC mains port; 150–500 kHz falls linearly with
// log10(f) (values recalled from memory).
const CLASS_B_QUASI_PEAK: &[LimitSegment] = &[
    seg(150e3, 500e3, 66.0, 56.0),
    seg(500e3, 5e6, 56.0, 56.0),
    seg(5e6, 30e6, 60.0, 60.0),
];
const CLASS_B_AVERAGE: &[LimitSegment] = &[
    seg(150e3, 500e3, 56.0, 46.0),
    seg(500e3, 5e6, 46.0, 46.0),
    seg(5e6, 30e6, 50.0, 50.0),
];

/// The segments of a limit line, in order of frequency (data of [`LIMIT_TABLE_SOURCE`]).
pub fn limit_segments(class: EmissionClass, detector: Detector) -> &'static [LimitSegment] {
    match (class, detector) {
        (EmissionClass::A, Detector::QuasiPeak) => CLASS_A_QUASI_PEAK,
        (EmissionClass::A, Detector::Average) => CLASS_A_AVERAGE,
        (EmissionClass::B, Detector::QuasiPeak) => CLASS_B_QUASI_PEAK,
        (EmissionClass::B, Detector::Average) => CLASS_B_AVERAGE,
    }
}

/// Lowest frequency of the conducted band, 150 kHz.
pub fn conducted_band_start() -> Frequency {
    si(150e3)
}
/// Highest frequency of the conducted band, 30 MHz.
pub fn conducted_band_end() -> Frequency {
    si(30e6)
}

/// The conducted emission limit at the AC mains port at a frequency, in dBµV.
///
/// Formula: within a segment from f1 to f2 with limits L1 and L2,
/// L(f) = L1 + (L2 − L1)·log10(f/f1)/log10(f2/f1); at a segment edge the lower (stricter)
/// limit applies.
/// Valid range: 150 kHz … 30 MHz inclusive; outside it is an out-of-range error (the limits
/// below 150 kHz are not defined by CISPR 32, and nothing is extrapolated).
/// Reference: CISPR 32:2015, Tables A.9 and A.10; CISPR 22:2008, Tables 1 and 2
/// (see [`LIMIT_TABLE_SOURCE`]).
pub fn emi_limit(
    frequency: Frequency,
    class: EmissionClass,
    detector: Detector,
) -> Result<Decibel> {
    let f = within(
        "frequency",
        frequency,
        conducted_band_start(),
        conducted_band_end(),
    )?
    .value;
    let mut best: Option<f64> = None;
    for s in limit_segments(class, detector) {
        if f >= s.start_hz && f <= s.end_hz {
            let x = (f / s.start_hz).log10() / (s.end_hz / s.start_hz).log10();
            let level = s.start_level + (s.end_level - s.start_level) * x;
            best = Some(best.map_or(level, |b: f64| b.min(level)));
        }
    }
    let level = best.ok_or_else(|| {
        Error::out_of_range(format!(
            "`frequency` = {} Hz is not covered by the {class} {detector} limit table",
            f
        ))
    })?;
    Ok(Decibel {
        value: level,
        reference: DbReference::MicroVolt,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn tables_are_ordered_and_contiguous() {
        for c in [EmissionClass::A, EmissionClass::B] {
            for d in [Detector::QuasiPeak, Detector::Average] {
                let s = limit_segments(c, d);
                assert_eq!(s[0].start_hz, 150e3);
                assert_eq!(s[s.len() - 1].end_hz, 30e6);
                for w in s.windows(2) {
                    assert_eq!(w[0].end_hz, w[1].start_hz);
                }
            }
        }
    }

    #[test]
    fn parse_names() {
        assert_eq!(EmissionClass::parse("class_b").unwrap(), EmissionClass::B);
        assert_eq!(Detector::parse("QP").unwrap(), Detector::QuasiPeak);
        assert!(Detector::parse("peak").is_err());
    }
}
