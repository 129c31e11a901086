//! Working voltage across a flyback transformer's primary–secondary barrier, from explicit
//! voltages of the design (to be filled from the flyback result when one exists).

use crate::error::{Error, Result};
use crate::report::{Field, Record};
use crate::units::validate::{non_negative, number_within, positive};
use crate::units::{si, ElectricPotential, Frequency};

/// The flyback voltages that set the primary–secondary working voltage, at the highest line.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct FlybackBarrierSpec {
    /// Bulk capacitor voltage at the highest line (≈ √2 · highest mains RMS).
    pub bulk_voltage_peak: ElectricPotential,
    /// Reflected output voltage on the primary, n·(V_out + V_rectifier).
    pub reflected_voltage: ElectricPotential,
    /// Leakage spike above the reflected voltage, limited by the clamp.
    pub clamp_overshoot: ElectricPotential,
    /// Peak voltage of the secondary winding relative to the secondary return.
    pub secondary_voltage_peak: ElectricPotential,
    /// RMS voltage of the secondary winding relative to the secondary return; when absent the
    /// peak is used (conservative).
    pub secondary_voltage_rms: Option<ElectricPotential>,
    /// Duty cycle at the highest line (0 … 1), for the RMS value.
    pub duty_cycle: f64,
    /// Switching frequency (the frequency of the working voltage).
    pub switching_frequency: Frequency,
}

/// The working voltage across the barrier.
#[derive(Clone, Debug, PartialEq)]
pub struct BarrierWorkingVoltage {
    /// Peak working voltage.
    pub working_voltage_peak: ElectricPotential,
    /// RMS working voltage.
    pub working_voltage_rms: ElectricPotential,
    /// Its frequency.
    pub working_frequency: Frequency,
    /// How it was found.
    pub rule: String,
}

/// Primary–secondary working voltage of a flyback transformer.
///
/// Formula (a conservative sum; common practice, no published source):
/// - peak = V_bulk + V_reflected + V_overshoot + V_secondary,peak (the switch node at its
///   highest against the secondary terminal of opposite swing);
/// - RMS = max(V_bulk, (V_bulk + V_reflected)·√(1 − D)) + V_secondary,rms: the larger of the
///   bulk rail and the RMS of the switch-node square wave, plus the secondary's RMS (its peak
///   when no RMS value is given).
///
/// Assumes the measurement convention of IEC 62368-1:2018 5.4.1.8 is approximated by taking the
/// primary return as the reference; measure the real waveform on the prototype.
/// Valid for D in 0 … 1 and non-negative voltages.
pub fn flyback_working_voltage(spec: &FlybackBarrierSpec) -> Result<BarrierWorkingVoltage> {
    let vb = positive("bulk_voltage_peak", spec.bulk_voltage_peak)?.value;
    let vr = non_negative("reflected_voltage", spec.reflected_voltage)?.value;
    let vo = non_negative("clamp_overshoot", spec.clamp_overshoot)?.value;
    let vs = non_negative("secondary_voltage_peak", spec.secondary_voltage_peak)?.value;
    let vs_rms = match spec.secondary_voltage_rms {
        Some(v) => non_negative("secondary_voltage_rms", v)?.value,
        None => vs,
    };
    if vs_rms > vs * (1.0 + 1e-9) {
        return Err(Error::invalid(
            "`secondary_voltage_rms` cannot exceed `secondary_voltage_peak`",
        ));
    }
    let d = number_within("duty_cycle", spec.duty_cycle, 0.0, 1.0)?;
    let f = positive("switching_frequency", spec.switching_frequency)?;
    let peak = vb + vr + vo + vs;
    let rms = vb.max((vb + vr) * (1.0 - d).sqrt()) + vs_rms;
    if !(peak.is_finite() && rms.is_finite()) {
        return Err(Error::out_of_range(
            "the working voltage (V) is not finite: `bulk_voltage_peak`, `reflected_voltage`, `clamp_overshoot` and `secondary_voltage_peak` (V) add up beyond the number range",
        ));
    }
    Ok(BarrierWorkingVoltage {
        working_voltage_peak: si(peak),
        working_voltage_rms: si(rms),
        working_frequency: f,
        rule: "peak = bulk + reflected + overshoot + secondary; rms = max(bulk, (bulk + reflected)·√(1 − D)) + secondary rms (conservative sum, common practice, no published source)".into(),
    })
}

crate::serialize_as_record!(BarrierWorkingVoltage);

impl Record for BarrierWorkingVoltage {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("working_voltage_peak", self.working_voltage_peak),
            Field::quantity("working_voltage_rms", self.working_voltage_rms),
            Field::quantity("working_frequency", self.working_frequency),
            Field::new("rule", self.rule.as_str()),
        ]
    }
}
