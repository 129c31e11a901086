//! The voltages across a flyback transformer's primary–secondary barrier, read from a flyback
//! design: bulk peak at high line, reflected voltage, clamp overshoot, the secondary's swing —
//! as a conservative sum, and from the waveforms of the worst node pair.

use super::working_voltage::{flyback_working_voltage, BarrierWorkingVoltage, FlybackBarrierSpec};
use crate::error::{Error, Result};
use crate::flyback::FlybackDesign;
use crate::report::{Field, Record};
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

/// Which working-voltage estimate a barrier uses.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum WorkingVoltageMethod {
    /// [`flyback_design_working_voltage`]: the conservative sum of the parts' peaks (default).
    ConservativeSum,
    /// [`flyback_waveform_working_voltage`]: the worst node pair's waveform over a period.
    Waveform,
}

impl WorkingVoltageMethod {
    /// Reads `conservative_sum` or `waveform`.
    pub fn parse(text: &str) -> Result<Self> {
        match text.trim() {
            "conservative_sum" | "sum" => Ok(Self::ConservativeSum),
            "waveform" | "waveforms" => Ok(Self::Waveform),
            other => Err(Error::unknown(format!(
                "unknown working-voltage `method` '{other}'; expected \"conservative_sum\" or \"waveform\""
            ))),
        }
    }
    /// `conservative_sum` or `waveform`.
    pub fn as_str(self) -> &'static str {
        match self {
            Self::ConservativeSum => "conservative_sum",
            Self::Waveform => "waveform",
        }
    }
}

/// Primary–secondary working voltage of a flyback design from its waveforms: the largest
/// peak and the largest true RMS, over every corner and output, of the voltage between a
/// primary node (the drain, the bulk rail, the primary return) and a secondary node (the
/// winding's rectifier end, the secondary return).
///
/// Waveforms per corner over the on-time D, the demagnetising time D₂ and the DCM idle time
/// 1 − D − D₂: the drain 0, V_b + V_r, V_b (its peak the corner's drain peak, clamp and
/// allowances included, at the start of D₂); the secondary winding end −V_b/n, +V_r/n, 0; the
/// rails fixed. So drain–return (0, V_b + V_r, V_b), drain–winding (V_b/n, V_b + V_r − V_r/n,
/// V_b), bulk–return V_b, bulk–winding (V_b·(1 + 1/n), V_b − V_r/n, V_b); RMS
/// √(D·a² + D₂·b² + (1 − D − D₂)·c²). Assumes the two returns at the same potential (a Y
/// capacitor ties them at the switching frequency) and ideal square edges (ringing only in
/// the drain's peak). Lower than the conservative sum, which adds peaks that never coincide;
/// measure the real waveform on the prototype (IEC 62368-1:2018 5.4.1.8). Reference: the
/// waveforms follow Erickson & Maksimović, 3rd ed. (2020), ch. 6; the pairing is common
/// practice, no published source.
pub fn flyback_waveform_working_voltage(design: &FlybackDesign) -> Result<BarrierWorkingVoltage> {
    if design.corners.is_empty() {
        return Err(Error::invalid(
            "the flyback design has no corners to read the barrier voltages from",
        ));
    }
    let vr = design.reflected_voltage.value;
    let (mut peak, mut rms) = (0.0f64, 0.0f64);
    for c in &design.corners {
        let vb = c.bulk_peak_voltage.value;
        let d = c.duty_cycle.clamp(0.0, 1.0);
        let d2 = c.demagnetising_duty.clamp(0.0, 1.0 - d);
        let idle = (1.0 - d - d2).max(0.0);
        let drain_peak = c.drain_voltage_peak.value;
        let rms_of = |a: f64, b: f64, z: f64| (d * a * a + d2 * b * b + idle * z * z).sqrt();
        peak = peak.max(drain_peak).max(vb);
        rms = rms.max(rms_of(0.0, vb + vr, vb)).max(vb);
        for n in &design.turns_ratios {
            let (on, off) = (vb / n, vr / n);
            peak = peak.max(drain_peak - off).max(on).max(vb + on);
            rms = rms
                .max(rms_of(on, vb + vr - off, vb))
                .max(rms_of(vb + on, vb - off, vb));
        }
    }
    if !(peak.is_finite() && rms.is_finite()) {
        return Err(Error::out_of_range(
            "the working voltage (V) from the waveforms is not finite",
        ));
    }
    Ok(BarrierWorkingVoltage {
        working_voltage_peak: si(peak),
        working_voltage_rms: si(rms),
        working_frequency: design.switching_frequency,
        rule: "worst pair of primary node (drain, bulk rail) and secondary node (winding end, return): peak and true RMS over a period at every corner (waveform estimate, common practice, no published source)".into(),
    })
}

/// Both working-voltage estimates of a flyback design and the one the barrier uses.
#[derive(Clone, Debug, PartialEq)]
pub struct BarrierVoltageEstimates {
    /// The conservative sum ([`flyback_design_working_voltage`]).
    pub conservative_sum: BarrierWorkingVoltage,
    /// From the waveforms ([`flyback_waveform_working_voltage`]).
    pub waveform: BarrierWorkingVoltage,
    /// The one used.
    pub method: WorkingVoltageMethod,
}

impl BarrierVoltageEstimates {
    /// Both estimates of a design, with the method the barrier uses.
    pub fn of(design: &FlybackDesign, method: WorkingVoltageMethod) -> Result<Self> {
        Ok(Self {
            conservative_sum: flyback_design_working_voltage(design)?,
            waveform: flyback_waveform_working_voltage(design)?,
            method,
        })
    }
    /// The estimate the barrier uses.
    pub fn used(&self) -> &BarrierWorkingVoltage {
        match self.method {
            WorkingVoltageMethod::ConservativeSum => &self.conservative_sum,
            WorkingVoltageMethod::Waveform => &self.waveform,
        }
    }
}

impl Record for BarrierVoltageEstimates {
    /// The used estimate's fields first (what a barrier reads), then both estimates and the
    /// method.
    fn fields(&self) -> Vec<Field> {
        let mut v = self.used().fields();
        v.push(Field::new("method", self.method.as_str()));
        v.push(Field::quantity(
            "conservative_sum_peak",
            self.conservative_sum.working_voltage_peak,
        ));
        v.push(Field::quantity(
            "conservative_sum_rms",
            self.conservative_sum.working_voltage_rms,
        ));
        v.push(Field::quantity(
            "waveform_peak",
            self.waveform.working_voltage_peak,
        ));
        v.push(Field::quantity(
            "waveform_rms",
            self.waveform.working_voltage_rms,
        ));
        v
    }
}
