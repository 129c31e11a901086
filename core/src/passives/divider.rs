//! A resistor divider from preferred values for a feedback reference.

use super::e_series::{nearest_value, ESeries};
use crate::error::{Error, Result};
use crate::report::{Field, Record};
use crate::units::validate::{non_negative, positive};
use crate::units::{si, ElectricCurrent, ElectricPotential, ElectricalResistance, Power, Quantity};

/// What the divider must do.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DividerSpec {
    /// The voltage to sense (the regulated output).
    pub output_voltage: ElectricPotential,
    /// The reference voltage at the divider's tap (e.g. 2.5 V for a programmable shunt reference).
    pub reference_voltage: ElectricPotential,
    /// The current wanted through the lower resistor; sets the resistance level.
    pub divider_current: ElectricCurrent,
    /// Current drawn by the reference input from the tap (flows through the upper resistor).
    pub reference_input_current: ElectricCurrent,
    /// The series both resistors come from.
    pub series: ESeries,
}

/// A divider chosen from preferred values.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Divider {
    /// Upper resistor (output to tap).
    pub upper_resistor: ElectricalResistance,
    /// Lower resistor (tap to ground).
    pub lower_resistor: ElectricalResistance,
    /// Output voltage the pair regulates to at the nominal reference.
    pub actual_output_voltage: ElectricPotential,
    /// (actual − wanted)/wanted.
    pub output_error: f64,
    /// Current through the lower resistor.
    pub divider_current: ElectricCurrent,
    /// Dissipation of the upper resistor.
    pub upper_power: Power,
    /// Dissipation of the lower resistor.
    pub lower_power: Power,
}

/// Chooses upper and lower resistors from a preferred series.
///
/// Formula: V_out = V_ref·(1 + R_upper/R_lower) + I_ref·R_upper. The lower resistor is taken
/// from the series within a factor of two of V_ref / I_divider; for each, the upper is the
/// nearest preferred value to (V_out − V_ref)·R_lower / (V_ref + I_ref·R_lower); the pair with
/// the smallest output error wins (ties: the current nearest the wish).
/// Assumes an ideal reference with its nominal voltage. Valid for V_out > V_ref > 0.
/// Reference: the divider equation of any circuits text, e.g. Basso, *Designing Control
/// Loops for Linear and Switching Power Supplies* (2012), chapter on the shunt regulator.
pub fn resistor_divider(spec: &DividerSpec) -> Result<Divider> {
    let vout = positive("output_voltage", spec.output_voltage)?.value;
    let vref = positive("reference_voltage", spec.reference_voltage)?.value;
    let idiv = positive("divider_current", spec.divider_current)?.value;
    let iref = non_negative("reference_input_current", spec.reference_input_current)?.value;
    if vout <= vref {
        return Err(Error::invalid(format!(
            "`output_voltage` ({}) must be above `reference_voltage` ({})",
            Quantity::from_typed(spec.output_voltage),
            Quantity::from_typed(spec.reference_voltage)
        )));
    }
    let target = vref / idiv;
    let lows = super::e_series::values_between(target / 2.0, target * 2.0, spec.series)?;
    let mut best: Option<(f64, f64, f64, f64)> = None; // (|err|, current distance, rl, ru)
    for rl in lows {
        let ideal = (vout - vref) * rl / (vref + iref * rl);
        let ru = nearest_value(ideal, spec.series)?;
        let v = vref * (1.0 + ru / rl) + iref * ru;
        let err = ((v - vout) / vout).abs();
        let dist = (rl / target).ln().abs();
        let better = match best {
            None => true,
            Some((e, d, _, _)) => err < e - 1e-12 || ((err - e).abs() <= 1e-12 && dist < d),
        };
        if better {
            best = Some((err, dist, rl, ru));
        }
    }
    let (_, _, rl, ru) =
        best.ok_or_else(|| Error::infeasible("no preferred value near the wanted lower resistor"))?;
    let v = vref * (1.0 + ru / rl) + iref * ru;
    let i_low = vref / rl;
    let i_up = i_low + iref;
    Ok(Divider {
        upper_resistor: si(ru),
        lower_resistor: si(rl),
        actual_output_voltage: si(v),
        output_error: (v - vout) / vout,
        divider_current: si(i_low),
        upper_power: si(i_up * i_up * ru),
        lower_power: si(i_low * i_low * rl),
    })
}

crate::serialize_as_record!(Divider);

impl Record for Divider {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("upper_resistor", self.upper_resistor),
            Field::quantity("lower_resistor", self.lower_resistor),
            Field::quantity("actual_output_voltage", self.actual_output_voltage),
            Field::new("output_error", self.output_error),
            Field::quantity("divider_current", self.divider_current),
            Field::quantity("upper_power", self.upper_power),
            Field::quantity("lower_power", self.lower_power),
        ]
    }
}
