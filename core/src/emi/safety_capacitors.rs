//! The X capacitor's discharge resistor and its loss, and the touch current a Y capacitance
//! lets through at the line frequency.

use crate::error::{Error, Result};
use crate::report::{Field, Record};
use crate::units::validate::positive;
use crate::units::{
    format_number, si, Capacitance, ElectricCurrent, ElectricPotential, ElectricalResistance,
    Frequency, Power, Time,
};
use std::f64::consts::{PI, SQRT_2};

/// The discharge resistor across an X capacitor.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct XCapacitorDischarge {
    /// Total X capacitance across the line.
    pub x_capacitance: Capacitance,
    /// Starting voltage: the line crest √2·V_rms at the highest line voltage.
    pub initial_voltage: ElectricPotential,
    /// Largest resistance that discharges to `final_voltage` within `discharge_time`.
    pub maximum_resistance: ElectricalResistance,
    /// Time constant R·C with that resistance.
    pub time_constant: Time,
    /// Continuous loss of that resistance across the line, V_rms²/R.
    pub power_loss: Power,
}

impl Record for XCapacitorDischarge {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("x_capacitance", self.x_capacitance),
            Field::quantity("initial_voltage", self.initial_voltage),
            Field::quantity("maximum_resistance", self.maximum_resistance),
            Field::quantity("time_constant", self.time_constant),
            Field::quantity("power_loss", self.power_loss),
        ]
    }
}

/// The largest discharge resistor across the X capacitance, and its standing loss:
/// R ≤ t/(C·ln(V0/V_f)) with V0 = √2·V_rms; P = V_rms²/R.
///
/// `discharge_time` and `final_voltage` come from the safety standard the product is assessed
/// to (the safety domain computes them); the standard's own limits are not encoded here.
/// Valid: all inputs positive, final voltage below the crest voltage.
/// Reference: RC discharge, v(t) = V0·e^(−t/RC) (Erickson & Maksimović 2020, chapter 2
/// capacitor charge balance background); limits per IEC 62368-1 capacitor discharge clause.
pub fn x_capacitor_discharge(
    x_capacitance: Capacitance,
    line_voltage_rms: ElectricPotential,
    discharge_time: Time,
    final_voltage: ElectricPotential,
) -> Result<XCapacitorDischarge> {
    let c = positive("x_capacitance", x_capacitance)?.value;
    let vrms = positive("line_voltage_rms", line_voltage_rms)?.value;
    let t = positive("discharge_time", discharge_time)?.value;
    let vf = positive("final_voltage", final_voltage)?.value;
    let v0 = SQRT_2 * vrms;
    if vf >= v0 {
        return Err(Error::invalid(format!(
            "`final_voltage` ({} V) must be below the line crest ({} V); no resistor is needed",
            format_number(vf),
            format_number(v0)
        )));
    }
    let r = t / (c * (v0 / vf).ln());
    Ok(XCapacitorDischarge {
        x_capacitance,
        initial_voltage: si(v0),
        maximum_resistance: si(r),
        time_constant: si(r * c),
        power_loss: si(vrms * vrms / r),
    })
}

/// The touch current through a Y capacitance from the line: I = 2π·f·C·V_rms (RMS).
///
/// Assumes a sinusoidal line and a capacitive path only (a harmonic-rich line raises it). The
/// limit it must meet comes from the safety domain.
/// Reference: the reactance of a capacitor, I = V/X_C (Erickson & Maksimović 2020, ch. 8);
/// touch-current limits per IEC 62368-1.
pub fn y_capacitor_touch_current(
    y_capacitance: Capacitance,
    line_voltage_rms: ElectricPotential,
    line_frequency: Frequency,
) -> Result<ElectricCurrent> {
    let c = positive("y_capacitance", y_capacitance)?.value;
    let v = positive("line_voltage_rms", line_voltage_rms)?.value;
    let f = positive("line_frequency", line_frequency)?.value;
    Ok(si(2.0 * PI * f * c * v))
}

/// The largest Y capacitance that keeps the touch current at or below a limit:
/// C = I/(2π·f·V_rms). Reference: as [`y_capacitor_touch_current`].
pub fn y_capacitance_for_touch_current(
    touch_current_limit: ElectricCurrent,
    line_voltage_rms: ElectricPotential,
    line_frequency: Frequency,
) -> Result<Capacitance> {
    let i = positive("touch_current_limit", touch_current_limit)?.value;
    let v = positive("line_voltage_rms", line_voltage_rms)?.value;
    let f = positive("line_frequency", line_frequency)?.value;
    Ok(si(i / (2.0 * PI * f * v)))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn touch_current_and_its_inverse() {
        // I = 2π·f·C·V: 1 nF at 230 V, 50 Hz is 72.26 µA (hand calculation of the same formula)
        let i = y_capacitor_touch_current(si(1e-9), si(230.0), si(50.0)).unwrap();
        assert!((i.value - 72.26e-6).abs() < 0.01e-6);
        let c = y_capacitance_for_touch_current(i, si(230.0), si(50.0)).unwrap();
        assert!((c.value - 1e-9).abs() < 1e-18);
        assert!(y_capacitor_touch_current(si(-1e-9), si(230.0), si(50.0)).is_err());
    }

    #[test]
    fn discharge_reaches_the_final_voltage() {
        let x = x_capacitor_discharge(si(330e-9), si(264.0), si(2.0), si(60.0)).unwrap();
        let v = x.initial_voltage.value * (-2.0 / x.time_constant.value).exp();
        assert!((v - 60.0).abs() < 1e-9);
    }
}
