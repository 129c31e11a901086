//! The voltages across a flyback transformer's primary–secondary barrier, read from a flyback
//! design: bulk peak at high line, reflected voltage, clamp overshoot, the secondary's swing.

use super::working_voltage::{flyback_working_voltage, BarrierWorkingVoltage, FlybackBarrierSpec};
use crate::error::{Error, Result};
use crate::flyback::FlybackDesign;
use crate::units::{si, ElectricPotential};

fn largest(values: impl Iterator<Item = f64>) -> f64 {
    values.fold(f64::NEG_INFINITY, f64::max)
}

impl FlybackBarrierSpec {
    /// The barrier voltages of a flyback design, at its highest line.
    ///
    /// - `bulk_voltage_peak`: the largest bulk peak voltage over the corners (high line,
    ///   light load, where the ripple is smallest).
    /// - `reflected_voltage`: the design's reflected voltage n·(V_out + V_rectifier).
    /// - `clamp_overshoot`: the largest drain voltage above the bulk peak — the highest clamp
    ///   voltage (the clamp as sized, or any corner's, whichever is higher: the top of an RCD
    ///   clamp's ripple, a Zener's highest) plus the clamp diode's forward recovery and the
    ///   ringing allowance — minus the reflected voltage, never below zero.
    /// - `secondary_voltage_peak`: the largest rectifier reverse voltage over outputs and
    ///   corners, V_bulk,peak/n + V_out: the largest swing of any secondary winding end against
    ///   the secondary return, for the rectifier on either end of the winding (conservative).
    /// - `secondary_voltage_rms`: the largest over outputs and high-line corners of the
    ///   secondary winding's square wave, √(D·(V_bulk/n)² + (1 − D)·(V_r/n)²), with n the
    ///   output's turns ratio and D the corner's duty cycle (a DCM idle interval, where the
    ///   winding rests near zero, is counted as the flyback interval: on the safe side).
    /// - `duty_cycle`: the smallest duty cycle over the corners at the highest line voltage
    ///   (a smaller duty gives the larger RMS in [`flyback_working_voltage`]).
    /// - `switching_frequency`: the design's.
    ///
    /// Assumes the primary return is the reference for the primary side, as in
    /// [`flyback_working_voltage`]; measure the real waveform on the prototype.
    /// Valid for any design [`crate::flyback::flyback_design`] returns. Reference: the
    /// composition is common practice, no published source; the design's voltages follow
    /// Erickson & Maksimović, *Fundamentals of Power Electronics*, 3rd ed. (2020), ch. 6.
    pub fn from_flyback(design: &FlybackDesign) -> Result<Self> {
        if design.corners.is_empty() {
            return Err(Error::invalid(
                "the flyback design has no corners to read the barrier voltages from",
            ));
        }
        let vr = design.reflected_voltage.value;
        let bulk = largest(design.corners.iter().map(|c| c.bulk_peak_voltage.value));
        // the allowances above the clamp are the same at every corner
        let allowances = largest(design.corners.iter().map(|c| {
            c.drain_voltage_peak.value - c.bulk_peak_voltage.value - c.clamp_voltage_max.value
        }))
        .max(0.0);
        let clamp = allowances
            + largest(
                design
                    .corners
                    .iter()
                    .map(|c| c.clamp_voltage_max.value)
                    .chain(std::iter::once(design.clamp.clamp_voltage_max.value)),
            );
        let secondary = largest(design.corners.iter().flat_map(|c| {
            c.secondaries
                .iter()
                .map(|s| s.rectifier_reverse_voltage.value)
        }));
        let high_line = largest(design.corners.iter().map(|c| c.line_voltage.value));
        let high_line_corners = || {
            design
                .corners
                .iter()
                .filter(move |c| c.line_voltage.value >= high_line * (1.0 - 1e-12))
        };
        let duty = high_line_corners()
            .map(|c| c.duty_cycle)
            .fold(f64::INFINITY, f64::min);
        let secondary_rms = largest(high_line_corners().flat_map(|c| {
            design.turns_ratios.iter().map(move |n| {
                let on = c.bulk_peak_voltage.value / n;
                let off = vr / n;
                (c.duty_cycle * on * on + (1.0 - c.duty_cycle) * off * off).sqrt()
            })
        }));
        Ok(FlybackBarrierSpec {
            bulk_voltage_peak: si(bulk),
            reflected_voltage: design.reflected_voltage,
            clamp_overshoot: si((clamp - vr).max(0.0)),
            secondary_voltage_peak: si(secondary.max(0.0)),
            secondary_voltage_rms: Some(si(secondary_rms.clamp(0.0, secondary.max(0.0)))),
            duty_cycle: duty,
            switching_frequency: design.switching_frequency,
        })
    }
}

/// Primary–secondary working voltage (peak and RMS) of a flyback design:
/// [`flyback_working_voltage`] of [`FlybackBarrierSpec::from_flyback`].
///
/// Formula: peak = V_bulk,peak + V_r + V_overshoot + V_secondary,peak; RMS =
/// max(V_bulk, (V_bulk + V_r)·√(1 − D)) + V_secondary,rms, with the secondary's RMS from its
/// square wave (see [`FlybackBarrierSpec::from_flyback`]) (conservative sum, common practice,
/// no published source). Valid for any design [`crate::flyback::flyback_design`] returns.
pub fn flyback_design_working_voltage(design: &FlybackDesign) -> Result<BarrierWorkingVoltage> {
    flyback_working_voltage(&FlybackBarrierSpec::from_flyback(design)?)
}

/// The drain's highest voltage against the primary return that the working voltage includes,
/// V_bulk,peak + V_r + V_overshoot, of a barrier spec.
pub fn primary_swing_peak(spec: &FlybackBarrierSpec) -> ElectricPotential {
    spec.bulk_voltage_peak + spec.reflected_voltage + spec.clamp_overshoot
}
