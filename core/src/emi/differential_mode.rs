//! Differential-mode noise estimate: the primary current's harmonics shared between the bulk
//! capacitor and the two lines of the LISN, optionally through an LC input filter.

use super::complex::Complex;
use super::lisn::lisn_circuit;
use super::spectrum::{PeriodicWaveform, PrimaryCurrentShape};
use super::{check_switching_frequency, in_band_harmonics, level_of_peak, HarmonicLevel};
use crate::error::Result;
use crate::units::validate::{non_negative, positive};
use crate::units::{Capacitance, ElectricCurrent, ElectricalResistance, Frequency, Inductance};
use std::f64::consts::PI;

/// The converter as a differential-mode noise source.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DifferentialModeSpec {
    /// Switching frequency (10 kHz … 2 MHz).
    pub switching_frequency: Frequency,
    /// The primary current over a period.
    pub primary_current: PrimaryCurrentShape,
    /// Bulk (input) capacitance.
    pub bulk_capacitance: Capacitance,
    /// Equivalent series resistance of the bulk capacitor at the switching frequency.
    pub bulk_esr: ElectricalResistance,
    /// Equivalent series inductance of the bulk capacitor and its leads.
    pub bulk_esl: Inductance,
}

/// One LC section of a differential-mode input filter: a series inductance (with its
/// resistance) towards the converter and a shunt (X) capacitance towards the line.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FilterStage {
    /// Differential inductance of the stage (in one line, or the sum of both lines).
    pub inductance: Inductance,
    /// Series resistance of the inductor(s).
    pub inductor_resistance: ElectricalResistance,
    /// Shunt capacitance across the line (X capacitor) on the line side of the inductor.
    pub capacitance: Capacitance,
}

impl FilterStage {
    pub(crate) fn check(&self) -> Result<()> {
        positive("differential_inductance", self.inductance)?;
        non_negative("inductor_resistance", self.inductor_resistance)?;
        positive("x_capacitance", self.capacitance)?;
        Ok(())
    }
}

pub(crate) struct CheckedDm {
    pub(crate) fsw: f64,
    pub(crate) wave: PeriodicWaveform<ElectricCurrent>,
    pub(crate) c: f64,
    pub(crate) esr: f64,
    pub(crate) esl: f64,
}

impl DifferentialModeSpec {
    pub(crate) fn checked(&self) -> Result<CheckedDm> {
        Ok(CheckedDm {
            fsw: check_switching_frequency(self.switching_frequency)?,
            wave: self.primary_current.waveform()?,
            c: positive("bulk_capacitance", self.bulk_capacitance)?.value,
            esr: non_negative("bulk_esr", self.bulk_esr)?.value,
            esl: non_negative("bulk_esl", self.bulk_esl)?.value,
        })
    }
}

impl CheckedDm {
    pub(crate) fn bulk_impedance(&self, w: f64) -> Complex {
        Complex::real(self.esr) + Complex::inductor(self.esl, w) + Complex::capacitor(self.c, w)
    }

    /// Peak voltage at one LISN receiver for harmonic n (V).
    pub(crate) fn receiver_voltage(&self, stages: &[FilterStage], n: u32) -> f64 {
        let f = self.fsw * f64::from(n);
        let w = 2.0 * PI * f;
        let (z_lisn, to_receiver) = lisn_circuit(w);
        let source = 2.0 * self.wave.coefficient(n).abs();
        // impedance seen from each node towards the line, built from the LISN outwards
        let load = z_lisn.scale(2.0);
        // nodes: bulk, then after each stage's inductor the stage's X capacitor
        let mut towards_line = vec![load];
        for s in stages.iter().rev() {
            let last = *towards_line.last().unwrap_or(&load);
            let shunt = Complex::capacitor(s.capacitance.value, w);
            let node = shunt.parallel(last);
            let series = Complex::real(s.inductor_resistance.value)
                + Complex::inductor(s.inductance.value, w);
            towards_line.push(series + node);
        }
        towards_line.reverse(); // [0] is seen from the bulk capacitor
        let z_bulk = self.bulk_impedance(w);
        let mut current = Complex::real(source) * z_bulk / (z_bulk + towards_line[0]);
        for (i, s) in stages.iter().enumerate() {
            let shunt = Complex::capacitor(s.capacitance.value, w);
            let rest = towards_line[i + 1];
            current = current * shunt / (shunt + rest);
        }
        (current * z_lisn * to_receiver).abs()
    }
}

/// Differential-mode noise at each LISN receiver, per harmonic of the switching frequency in
/// the 150 kHz … 30 MHz band, in dBµV.
///
/// Model: the converter draws the harmonic current I_n (peak amplitude from the Fourier series
/// of `primary_current`, see [`PrimaryCurrentShape::harmonic_amplitude`]); it divides between
/// the bulk capacitor Z_b = ESR + jωESL + 1/(jωC) and the path to the line, which is the
/// filter (if any) and the two LISN lines in series (2·Z_LISN):
/// I_line = I_n·Z_b/(Z_b + Z_line). The receiver reads I_line·Z_LISN times the network's
/// terminal-to-receiver ratio. Levels are RMS (a receiver reads the RMS value of a sine):
/// dBµV = 20·log10(|V|/√2 / 1 µV), floored at −100 dBµV.
/// Assumptions: the rectifier conducts (worst case near the line crest); each harmonic is
/// resolved separately (9 kHz bandwidth much narrower than the harmonic spacing); filter
/// stages are listed from the converter towards the line.
/// Valid range: switching frequency 10 kHz … 2 MHz.
/// Reference: Erickson & Maksimović, *Fundamentals of Power Electronics*, 3rd ed. (2020),
/// input filter chapter (converter input current harmonics and the input filter).
pub fn differential_mode_noise(
    spec: &DifferentialModeSpec,
    stages: &[FilterStage],
) -> Result<Vec<HarmonicLevel>> {
    let c = spec.checked()?;
    for s in stages {
        s.check()?;
    }
    in_band_harmonics(c.fsw)
        .map(|n| {
            let v =
                super::design::finite_level(c.receiver_voltage(stages, n), "differential-mode")?;
            Ok(HarmonicLevel::new(n, c.fsw, level_of_peak(v)))
        })
        .collect()
}
