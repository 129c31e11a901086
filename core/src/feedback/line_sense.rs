//! Line sensing: the resistor string from the rectified line into a controller's line-sense
//! input for chosen brown-in (and line over-voltage) thresholds, the brown-out that follows,
//! the line thresholds from preferred values with their tolerance, dissipation and the standby
//! power the string costs.

use super::divider::show;
use crate::error::{Error, Result};
use crate::passives::e_series::nearest_value;
use crate::passives::ESeries;
use crate::report::{Field, Record};
use crate::units::validate::{non_negative, number_within, positive};
use crate::units::{si, ElectricCurrent, ElectricPotential, ElectricalResistance, Power};
use std::f64::consts::SQRT_2;

/// The controller's line-sense input, as its data describes it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum LineSenseInput {
    /// A current input held at a pin voltage: switching starts above the brown-in current.
    Current {
        /// Pin voltage while sensing.
        pin_voltage: ElectricPotential,
        /// Current into the pin for brown-in.
        brown_in_current: ElectricCurrent,
        /// Current below which it browns out.
        brown_out_current: ElectricCurrent,
        /// Current above which it stops for line over-voltage, if it has that.
        overvoltage_current: Option<ElectricCurrent>,
    },
    /// A voltage input behind a divider (string to the pin, a lower resistor to ground).
    Voltage {
        /// Pin voltage for brown-in.
        brown_in_threshold: ElectricPotential,
        /// Pin voltage below which it browns out.
        brown_out_threshold: ElectricPotential,
        /// Pin voltage above which it stops for line over-voltage, if it has that.
        overvoltage_threshold: Option<ElectricPotential>,
    },
}

/// What the line sensing must do.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LineSenseSpec {
    /// The input.
    pub input: LineSenseInput,
    /// Line voltage (RMS) for brown-in.
    pub brown_in_line_voltage: ElectricPotential,
    /// Highest line voltage (RMS), for dissipation and standby power.
    pub max_line_voltage: ElectricPotential,
    /// Drop between the line peak and the sensed node (bridge or sense diodes).
    pub sense_drop: ElectricPotential,
    /// Series of the resistors.
    pub series: ESeries,
    /// Relative tolerance of every resistor.
    pub resistor_tolerance: f64,
    /// Relative tolerance of the input's thresholds.
    pub threshold_tolerance: f64,
    /// Largest voltage across one resistor of the string.
    pub max_voltage_per_resistor: ElectricPotential,
    /// For a voltage input: current in the string at brown-in (sets the resistance level).
    pub string_current: ElectricCurrent,
}

/// A line threshold with its range.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LineThreshold {
    /// Nominal line voltage (RMS).
    pub nominal: ElectricPotential,
    /// Lowest with the tolerances.
    pub min: ElectricPotential,
    /// Highest with the tolerances.
    pub max: ElectricPotential,
}

/// The line-sense string.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LineSense {
    /// Resistors in series in the string (each takes at most `max_voltage_per_resistor`).
    pub string_count: u32,
    /// Value of each string resistor.
    pub string_resistor: ElectricalResistance,
    /// Lower resistor (voltage input only).
    pub lower_resistor: Option<ElectricalResistance>,
    /// Brown-in line voltage from the preferred values.
    pub brown_in: LineThreshold,
    /// Brown-out line voltage.
    pub brown_out: LineThreshold,
    /// Line over-voltage, if the input has it.
    pub overvoltage: Option<LineThreshold>,
    /// Dissipation of one string resistor at the highest line.
    pub resistor_power: Power,
    /// Power the whole sense network takes at the highest line (standby cost).
    pub standby_power: Power,
}

/// Designs the line-sense string.
///
/// Formulas: the sensed voltage V_s = √2·V_line − V_drop (the bulk at its peak, as at light
/// load). Current input: R = (V_s,bi − V_pin)/I_bi split into the fewest equal resistors of at
/// most `max_voltage_per_resistor` each at the highest line, each the nearest preferred value;
/// the thresholds that follow are V_line = (I·R + V_pin + V_drop)/√2 for I_bi, I_bo and I_ov.
/// Voltage input: R_low the nearest preferred to V_th,bi/I_string, the string
/// R = R_low·(V_s,bi/V_th,bi − 1) split as above; V_line = (V_th·(1 + R/R_low) + V_drop)/√2.
/// Ranges: resistors at (1 ± tol_R) and thresholds at (1 ± tol_th), the extreme combinations.
/// Dissipation at the highest line: P = V_s,max²/R_total of the network.
/// Assumes the pin draws no current besides the sensed one. Errors name each parameter.
/// Reference: Ohm's law and the rectified peak √2·V_rms; splitting the string by voltage is
/// common practice, no published source.
pub fn line_sense_resistors(spec: &LineSenseSpec) -> Result<LineSense> {
    let vbi = positive("brown_in_line_voltage", spec.brown_in_line_voltage)?.value;
    let vmax = positive("max_line_voltage", spec.max_line_voltage)?.value;
    let drop = non_negative("sense_drop", spec.sense_drop)?.value;
    let tr = number_within("resistor_tolerance", spec.resistor_tolerance, 0.0, 0.2)?;
    let tt = number_within("threshold_tolerance", spec.threshold_tolerance, 0.0, 0.5)?;
    let vper = positive("max_voltage_per_resistor", spec.max_voltage_per_resistor)?.value;
    if vmax < vbi {
        return Err(Error::invalid(format!(
            "`max_line_voltage` ({}) is below `brown_in_line_voltage` ({})",
            show(spec.max_line_voltage),
            show(spec.brown_in_line_voltage)
        )));
    }
    let sensed = |v: f64| SQRT_2 * v - drop;
    let vs_bi = sensed(vbi);
    let vs_max = sensed(vmax);
    if vs_bi <= 0.0 {
        return Err(Error::invalid(format!(
            "`sense_drop` ({}) leaves nothing to sense at brown-in",
            show(spec.sense_drop)
        )));
    }
    let line_of = |vs: f64| (vs + drop) / SQRT_2;
    let range = |f: &dyn Fn(f64, f64) -> f64| -> LineThreshold {
        // f(resistor factor, threshold factor) → sensed voltage
        let mut lo = f64::INFINITY;
        let mut hi = f64::NEG_INFINITY;
        for a in [1.0 - tr, 1.0 + tr] {
            for b in [1.0 - tt, 1.0 + tt] {
                let v = line_of(f(a, b));
                lo = lo.min(v);
                hi = hi.max(v);
            }
        }
        LineThreshold {
            nominal: si(line_of(f(1.0, 1.0))),
            min: si(lo),
            max: si(hi),
        }
    };
    let split = |total: f64, across: f64| -> Result<(u32, f64)> {
        let count = (across / vper).ceil().max(1.0);
        if count > 20.0 {
            return Err(Error::out_of_range(format!(
                "the string would need {count} resistors; raise `max_voltage_per_resistor`"
            )));
        }
        Ok((count as u32, nearest_value(total / count, spec.series)?))
    };
    match spec.input {
        LineSenseInput::Current {
            pin_voltage,
            brown_in_current,
            brown_out_current,
            overvoltage_current,
        } => {
            let vpin = non_negative("pin_voltage", pin_voltage)?.value;
            let ibi = positive("brown_in_current", brown_in_current)?.value;
            let ibo = positive("brown_out_current", brown_out_current)?.value;
            if ibo > ibi {
                return Err(Error::invalid(format!(
                    "`brown_out_current` ({}) is above `brown_in_current` ({})",
                    show(brown_out_current),
                    show(brown_in_current)
                )));
            }
            if vs_bi <= vpin {
                return Err(Error::invalid(format!(
                    "the sensed voltage at brown-in is below `pin_voltage` ({})",
                    show(pin_voltage)
                )));
            }
            let (count, r1) = split((vs_bi - vpin) / ibi, vs_max - vpin)?;
            let r = r1 * count as f64;
            let at = |i: f64| move |a: f64, b: f64| i * b * r * a + vpin;
            let ov = match overvoltage_current {
                Some(i) => Some(range(&at(positive("overvoltage_current", i)?.value))),
                None => None,
            };
            let p_total = (vs_max - vpin).powi(2) / r + vpin * (vs_max - vpin) / r;
            Ok(LineSense {
                string_count: count,
                string_resistor: si(r1),
                lower_resistor: None,
                brown_in: range(&at(ibi)),
                brown_out: range(&at(ibo)),
                overvoltage: ov,
                resistor_power: si((vs_max - vpin).powi(2) / r / count as f64),
                standby_power: si(p_total),
            })
        }
        LineSenseInput::Voltage {
            brown_in_threshold,
            brown_out_threshold,
            overvoltage_threshold,
        } => {
            let tbi = positive("brown_in_threshold", brown_in_threshold)?.value;
            let tbo = positive("brown_out_threshold", brown_out_threshold)?.value;
            let istr = positive("string_current", spec.string_current)?.value;
            if tbo > tbi {
                return Err(Error::invalid(format!(
                    "`brown_out_threshold` ({}) is above `brown_in_threshold` ({})",
                    show(brown_out_threshold),
                    show(brown_in_threshold)
                )));
            }
            if vs_bi <= tbi {
                return Err(Error::invalid(format!(
                    "`brown_in_threshold` ({}) is above the sensed voltage at brown-in",
                    show(brown_in_threshold)
                )));
            }
            let rlow = nearest_value(tbi / istr, spec.series)?;
            let (count, r1) = split(rlow * (vs_bi / tbi - 1.0), vs_max)?;
            let r = r1 * count as f64;
            // string resistors at factor a, lower resistor at 1/a (the worst pairing)
            let at = |t: f64| move |a: f64, b: f64| t * b * (1.0 + r * a / (rlow / a));
            let ov = match overvoltage_threshold {
                Some(t) => Some(range(&at(positive("overvoltage_threshold", t)?.value))),
                None => None,
            };
            let p_total = vs_max * vs_max / (r + rlow);
            Ok(LineSense {
                string_count: count,
                string_resistor: si(r1),
                lower_resistor: Some(si(rlow)),
                brown_in: range(&at(tbi)),
                brown_out: range(&at(tbo)),
                overvoltage: ov,
                resistor_power: si(p_total * r / (r + rlow) / count as f64),
                standby_power: si(p_total),
            })
        }
    }
}

impl Record for LineSense {
    fn fields(&self) -> Vec<Field> {
        let mut v = vec![
            Field::new("string_count", self.string_count as i64),
            Field::quantity("string_resistor", self.string_resistor),
        ];
        if let Some(r) = self.lower_resistor {
            v.push(Field::quantity("lower_resistor", r));
        }
        for (name, t) in [("brown_in", self.brown_in), ("brown_out", self.brown_out)]
            .into_iter()
            .chain(self.overvoltage.map(|t| ("line_overvoltage", t)))
        {
            v.push(Field::quantity(format!("{name}_line_voltage"), t.nominal));
            v.push(Field::quantity(format!("{name}_line_voltage_min"), t.min));
            v.push(Field::quantity(format!("{name}_line_voltage_max"), t.max));
        }
        v.push(Field::quantity("resistor_power", self.resistor_power));
        v.push(Field::quantity("standby_power", self.standby_power));
        v
    }
}
