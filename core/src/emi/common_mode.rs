//! Common-mode noise estimate: the drain node's voltage harmonics driving a parasitic
//! capacitance to earth, returning through the two LISN lines in parallel, with and without a
//! Y capacitor and a common-mode choke.

use super::complex::Complex;
use super::lisn::lisn_circuit;
use super::spectrum::{DrainVoltageShape, PeriodicWaveform};
use super::{check_switching_frequency, in_band_harmonics, level_of_peak, HarmonicLevel};
use crate::error::Result;
use crate::units::validate::positive;
use crate::units::{Capacitance, ElectricPotential, Frequency, Inductance};
use std::f64::consts::PI;

/// The converter as a common-mode noise source.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CommonModeSpec {
    /// Switching frequency (10 kHz … 2 MHz).
    pub switching_frequency: Frequency,
    /// The drain voltage over a period.
    pub drain_voltage: DrainVoltageShape,
    /// Parasitic capacitance from the drain node to earth (switch tab to heat sink, transformer
    /// inter-winding capacitance to a grounded secondary, …).
    pub parasitic_capacitance: Capacitance,
}

pub(crate) struct CheckedCm {
    pub(crate) fsw: f64,
    pub(crate) wave: PeriodicWaveform<ElectricPotential>,
    pub(crate) cp: f64,
}

impl CommonModeSpec {
    pub(crate) fn checked(&self) -> Result<CheckedCm> {
        let fsw = check_switching_frequency(self.switching_frequency)?;
        Ok(CheckedCm {
            fsw,
            wave: self.drain_voltage.waveform(self.switching_frequency)?,
            cp: positive("parasitic_capacitance", self.parasitic_capacitance)?.value,
        })
    }
}

impl CheckedCm {
    /// Peak voltage at one LISN receiver for harmonic n (V), with an optional Y capacitance
    /// (total, from the noisy side back to the converter's return) and choke.
    pub(crate) fn receiver_voltage(&self, y: Option<f64>, choke: Option<f64>, n: u32) -> f64 {
        let w = 2.0 * PI * self.fsw * f64::from(n);
        let (z_lisn, to_receiver) = lisn_circuit(w);
        let source = 2.0 * self.wave.coefficient(n).abs();
        let lisns = z_lisn.scale(0.5);
        let line = lisns + choke.map_or(Complex::real(0.0), |l| Complex::inductor(l, w));
        let load = match y {
            Some(c) => Complex::capacitor(c, w).parallel(line),
            None => line,
        };
        let total = Complex::real(source) / (Complex::capacitor(self.cp, w) + load);
        let through_lisns = match y {
            Some(c) => {
                let zy = Complex::capacitor(c, w);
                total * zy / (zy + line)
            }
            None => total,
        };
        // each of the two LISN lines carries half of the common-mode current
        (through_lisns.scale(0.5) * z_lisn * to_receiver).abs()
    }
}

/// Common-mode noise at each LISN receiver, per harmonic in the 150 kHz … 30 MHz band, in dBµV.
///
/// Model: harmonic n of the drain voltage V_n (peak, Fourier series of the trapezoid, see
/// [`DrainVoltageShape::harmonic_amplitude`]) drives the parasitic capacitance C_p into the
/// return path: I = V_n/(1/(jωC_p) + Z_return). The return path is the two LISN lines in
/// parallel (Z_LISN/2), in series with the choke jωL_cm if any, shunted by the Y capacitance
/// (total, from the noisy node's return to the converter's primary return) if any; the
/// current through the LISNs divides equally between the two lines. Level in dBµV (RMS),
/// floored at −100 dBµV.
/// Assumptions: one lumped parasitic capacitance; the LISNs' earth is the reference; leakage
/// spike and ringing of the drain voltage are left out (they add noise above a few MHz).
/// Valid range: switching frequency 10 kHz … 2 MHz.
/// Reference: Erickson & Maksimović (2020), input filter chapter, and the current-divider
/// model of common practice, no published source for the lumped model itself.
pub fn common_mode_noise(
    spec: &CommonModeSpec,
    y_capacitance: Option<Capacitance>,
    choke_inductance: Option<Inductance>,
) -> Result<Vec<HarmonicLevel>> {
    let c = spec.checked()?;
    let y = y_capacitance
        .map(|y| positive("y_capacitance", y).map(|q| q.value))
        .transpose()?;
    let l = choke_inductance
        .map(|l| positive("choke_inductance", l).map(|q| q.value))
        .transpose()?;
    in_band_harmonics(c.fsw)
        .map(|n| {
            let v = super::design::finite_level(c.receiver_voltage(y, l, n), "common-mode")?;
            Ok(HarmonicLevel::new(n, c.fsw, level_of_peak(v)))
        })
        .collect()
}
