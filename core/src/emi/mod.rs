//! Conducted EMI of an offline flyback: CISPR 32 limit lines, the CISPR 16-1-2 LISN, harmonic
//! spectra of the converter's waveforms, differential- and common-mode noise estimates, the
//! input filter that brings them under the limit with margin (with its damping and
//! Middlebrook's criterion), the X capacitor's discharge resistor (from the safety domain), the harmonic table and an
//! SVG plot of the spectrum against the limit lines.
//!
//! The converter is described by its own waveforms ([`PrimaryCurrentShape`],
//! [`DrainVoltageShape`]), so any power-stage calculation can feed it.
//!
//! ```
//! use gapwise_core::emi::{emi_limit, Detector, EmissionClass};
//! use gapwise_core::units::si;
//! let l = emi_limit(si(150e3), EmissionClass::B, Detector::QuasiPeak).unwrap();
//! assert_eq!(l.value, 66.0);
//! ```
//!
//! Results are design aids; verify by a conducted emission scan.

mod common_mode;
mod complex;
mod design;
mod differential_mode;
mod filter;
mod from_flyback;
mod limits;
mod lisn;
mod plot;
mod spectrum;

pub use common_mode::{common_mode_noise, CommonModeSpec};
pub use design::{
    harmonic_table, input_filter_checks, input_filter_design, input_filter_report, HarmonicRow,
    InputFilterDesign, InputFilterSpec, MAX_CHOKE_INDUCTANCE_H, MAX_DIFFERENTIAL_INDUCTANCE_H,
};
pub use differential_mode::{differential_mode_noise, DifferentialModeSpec, FilterStage};
pub use filter::{
    damping_network, filter_corner_frequency, filter_output_impedance_peak, lc_filter_attenuation,
    middlebrook_criterion, required_attenuation, DampingNetwork, ImpedancePeak, LcFilterResponse,
    MiddlebrookCheck,
};
pub use from_flyback::{
    emi_source_from_flyback, FlybackEmiSource, DEFAULT_DRAIN_RISE_TIME_S,
    MAX_EDGE_SHARE_OF_OFF_TIME,
};
pub use limits::{
    conducted_band_end, conducted_band_start, emi_limit, limit_segments, Detector, EmissionClass,
    LimitSegment, LIMIT_TABLE_SOURCE,
};
pub use lisn::{
    lisn_impedance, LisnImpedance, LISN_COUPLING_CAPACITANCE, LISN_INDUCTANCE,
    LISN_MAINS_CAPACITANCE, LISN_RECEIVER_RESISTANCE,
};
pub use plot::spectrum_svg;
pub use spectrum::{DrainVoltageShape, PeriodicWaveform, PrimaryCurrentShape};

use crate::error::{Error, Result};
use crate::units::{format_number, si, DbReference, Decibel, Frequency};

/// The level of one harmonic at the receiver.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct HarmonicLevel {
    /// Harmonic number n (frequency n·f_sw).
    pub harmonic: u32,
    /// Frequency of the harmonic.
    pub frequency: Frequency,
    /// Level at the receiver, dBµV.
    pub level: Decibel,
}

impl HarmonicLevel {
    pub(crate) fn new(n: u32, fsw: f64, level: Decibel) -> Self {
        Self {
            harmonic: n,
            frequency: si(fsw * f64::from(n)),
            level,
        }
    }
}

/// Lowest level reported, dBµV: far below any receiver's noise floor.
pub const LEVEL_FLOOR: f64 = -100.0;

/// dBµV (RMS) of a sine of peak amplitude `peak` volts, floored at [`LEVEL_FLOOR`].
pub(crate) fn level_of_peak(peak: f64) -> Decibel {
    let rms = peak / std::f64::consts::SQRT_2;
    let v = if rms.is_finite() && rms > 0.0 {
        (20.0 * (rms.log10() + 6.0)).max(LEVEL_FLOOR)
    } else {
        LEVEL_FLOOR
    };
    Decibel {
        value: v,
        reference: DbReference::MicroVolt,
    }
}

/// Checks a switching frequency: 10 kHz … 2 MHz.
pub(crate) fn check_switching_frequency(f: Frequency) -> Result<f64> {
    let x = f.value;
    if x.is_finite() && (10e3..=2e6).contains(&x) {
        Ok(x)
    } else {
        Err(Error::out_of_range(format!(
            "`switching_frequency` = {} Hz is outside the range 10 kHz … 2 MHz this estimate covers",
            format_number(x)
        )))
    }
}

/// Harmonic numbers whose frequency lies in 150 kHz … 30 MHz (n·f_sw checked in floating
/// point, so a rounding error never puts a harmonic just outside the limit table).
pub(crate) fn in_band_harmonics(fsw: f64) -> impl Iterator<Item = u32> {
    let mut first = (150e3 / fsw).ceil().max(1.0) as u32;
    while first > 1 && fsw * f64::from(first - 1) >= 150e3 {
        first -= 1;
    }
    while fsw * f64::from(first) < 150e3 {
        first += 1;
    }
    let mut last = (30e6 / fsw).floor() as u32;
    while fsw * f64::from(last + 1) <= 30e6 {
        last += 1;
    }
    while last > 0 && fsw * f64::from(last) > 30e6 {
        last -= 1;
    }
    first..=last
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn band_edges_are_inside_the_band() {
        for fsw in [10e3, 50e3, 65e3, 75e3, 100e3, 132.7e3, 30e6 / 461.0, 2e6] {
            let ns: Vec<u32> = in_band_harmonics(fsw).collect();
            let lo = fsw * f64::from(ns[0]);
            let hi = fsw * f64::from(*ns.last().unwrap());
            assert!(lo >= 150e3 && fsw * f64::from(ns[0] - 1) < 150e3, "{fsw}");
            assert!(
                hi <= 30e6 && fsw * f64::from(ns.last().unwrap() + 1) > 30e6,
                "{fsw}"
            );
        }
    }

    #[test]
    fn levels_are_rms_dbuv() {
        // 1 mV RMS = 60 dBµV by definition; a sine of √2 mV peak has 1 mV RMS
        assert!((level_of_peak(std::f64::consts::SQRT_2 * 1e-3).value - 60.0).abs() < 1e-9);
        assert_eq!(level_of_peak(0.0).value, LEVEL_FLOOR);
        assert_eq!(level_of_peak(f64::NAN).value, LEVEL_FLOOR);
        // a huge but finite peak still gives a finite level (no overflow dividing by 1 µV)
        assert!(
            (level_of_peak(1e307).value - (20.0 * (1e307f64 / 2f64.sqrt()).log10() + 120.0)).abs()
                < 1e-9
        );
    }
}
