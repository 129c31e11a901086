//! Output over-voltage protection by a Zener on the bias winding: the output voltage at which
//! it trips, from the turns ratio, the rectifier drops and the tolerances.

use super::divider::show;
use crate::error::{Error, Result};
use crate::report::{Field, Record};
use crate::units::validate::{non_negative, number_within, positive, positive_number};
use crate::units::{si, ElectricPotential};

/// A Zener from the bias rail into the controller's protection input.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BiasZenerSpec {
    /// Zener voltage, nominal.
    pub zener_voltage: ElectricPotential,
    /// Relative tolerance of the Zener voltage (0.05 = ±5 %).
    pub zener_tolerance: f64,
    /// Voltage of the protection input (or of an optocoupler LED) in series with the Zener at
    /// which it trips.
    pub trip_threshold: ElectricPotential,
    /// Bias turns per turn of the regulated output's winding, N_b/N_s.
    pub bias_turns_per_output_turn: f64,
    /// Forward drop of the regulated output's rectifier.
    pub output_rectifier_drop: ElectricPotential,
    /// Forward drop of the bias rectifier.
    pub bias_rectifier_drop: ElectricPotential,
    /// Largest rise of the bias voltage above the turns-ratio value by leakage-spike peak
    /// charging (0.1 = 10 %), which makes the protection trip at a lower output.
    pub bias_overshoot_max: f64,
}

/// Where the protection trips.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BiasZenerTrip {
    /// Bias voltage at which it trips at the nominal Zener, V_Z + V_th.
    pub bias_trip_voltage: ElectricPotential,
    /// Output voltage at which it trips, nominal Zener, no overshoot.
    pub output_trip_voltage: ElectricPotential,
    /// Lowest output trip: Zener at its low end, the largest overshoot.
    pub output_trip_voltage_min: ElectricPotential,
    /// Highest output trip: Zener at its high end, no overshoot.
    pub output_trip_voltage_max: ElectricPotential,
}

/// The output voltage at which a bias-winding Zener trips the protection.
///
/// Formula: the bias winding follows the output through the turns ratio,
/// V_bias = (1 + k)·((V_out + V_F,out)·N_b/N_s − V_F,bias) with k the peak-charging overshoot,
/// so the output trips at V_out = ((V_Z + V_th)/(1 + k) + V_F,bias)·N_s/N_b − V_F,out.
/// Range: V_Z·(1 ∓ tol) with k = k_max (lowest) and k = 0 (highest).
/// Assumes the bias capacitor charges to the plateau of the winding voltage (flyback in
/// regulation). Errors name each parameter.
/// Reference: the transformer's volts-per-turn relation (Erickson & Maksimović, 3rd ed.
/// (2020), ch. 6, flyback); the overshoot allowance is common practice, no published source.
pub fn bias_zener_trip(spec: &BiasZenerSpec) -> Result<BiasZenerTrip> {
    let vz = positive("ovp_zener_voltage", spec.zener_voltage)?.value;
    let tol = number_within("ovp_zener_tolerance", spec.zener_tolerance, 0.0, 0.3)?;
    let vth = non_negative("ovp_trip_threshold", spec.trip_threshold)?.value;
    let nb = positive_number(
        "bias_turns_per_output_turn",
        spec.bias_turns_per_output_turn,
    )?;
    let vfo = non_negative("output_rectifier_drop", spec.output_rectifier_drop)?.value;
    let vfb = non_negative("bias_rectifier_drop", spec.bias_rectifier_drop)?.value;
    let k = number_within("bias_overshoot_max", spec.bias_overshoot_max, 0.0, 1.0)?;
    let out = |z: f64, k: f64| ((z + vth) / (1.0 + k) + vfb) / nb - vfo;
    let nominal = out(vz, 0.0);
    let lo = out(vz * (1.0 - tol), k);
    if lo <= 0.0 {
        return Err(Error::invalid(format!(
            "the Zener ({}) trips below zero output; check `ovp_zener_voltage` and \
             `bias_turns_per_output_turn`",
            show(spec.zener_voltage)
        )));
    }
    Ok(BiasZenerTrip {
        bias_trip_voltage: si(vz + vth),
        output_trip_voltage: si(nominal),
        output_trip_voltage_min: si(lo),
        output_trip_voltage_max: si(out(vz * (1.0 + tol), 0.0)),
    })
}

impl Record for BiasZenerTrip {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("bias_trip_voltage", self.bias_trip_voltage),
            Field::quantity("output_trip_voltage", self.output_trip_voltage),
            Field::quantity("output_trip_voltage_min", self.output_trip_voltage_min),
            Field::quantity("output_trip_voltage_max", self.output_trip_voltage_max),
        ]
    }
}
