//! Safety capacitors across the barriers: X and Y subclasses (IEC 60384-14), the largest Y
//! capacitance for a touch-current limit, and the X-capacitor discharge resistor.

use super::tables::{
    CapacitorClassRow, CAPACITOR_CLASS_SOURCE, DISCHARGE_SOURCE, SAFETY_CAPACITOR_CLASSES,
    TOUCH_CURRENT_SOURCE,
};
use crate::error::{Error, Result};
use crate::report::{Field, Record};
use crate::units::validate::positive;
use crate::units::{
    si, Capacitance, ElectricCurrent, ElectricPotential, ElectricalResistance, Frequency, Power,
    Quantity, Time,
};
use std::f64::consts::{PI, SQRT_2};

/// A computed result must be a positive, finite number: inputs at the ends of the f64 range can
/// overflow to infinity or underflow to zero, and both are refused naming the inputs.
fn sane_result(what: &str, unit: &str, value: f64, inputs: &str) -> Result<f64> {
    if value.is_finite() && value > 0.0 {
        Ok(value)
    } else {
        Err(Error::out_of_range(format!(
            "the {what} ({unit}) comes out as {value}, not a positive finite number: check {inputs} for values at the ends of the number range"
        )))
    }
}

/// A subclass of safety capacitor and where it may be used.
#[derive(Clone, Debug, PartialEq)]
pub struct SafetyCapacitorClass {
    /// `X1` … `Y4`.
    pub name: String,
    /// Peak impulse voltage in service, or the insulation it is meant for.
    pub service_impulse: String,
    /// Impulse test voltage (peak); zero where the subclass has none.
    pub impulse_test_voltage_peak: ElectricPotential,
    /// Highest rated AC voltage of the subclass (RMS); zero where none is set.
    pub rated_voltage_max_rms: ElectricPotential,
    /// Which insulation it may bridge.
    pub bridges: String,
    /// Standard, edition, table and provenance.
    pub source: String,
}

/// The X or Y subclass with a name (`"Y1"`, case-insensitive).
///
/// Reference: IEC 60384-14:2013 subclasses X1, X2, X3, Y1, Y2, Y3, Y4 with their impulse test
/// voltages and rated voltages (value recalled from memory). A capacitor bridging reinforced
/// insulation is one Y1, or two Y2 in series (IEC 62368-1:2018 5.5.2.1; value recalled from memory).
pub fn safety_capacitor_class(name: &str) -> Result<SafetyCapacitorClass> {
    let key = name.trim().to_ascii_uppercase();
    let row: &CapacitorClassRow = SAFETY_CAPACITOR_CLASSES
        .iter()
        .find(|r| r.name == key)
        .ok_or_else(|| {
            Error::unknown(format!(
                "unknown safety capacitor `subclass` \"{name}\"; expected X1, X2, X3, Y1, Y2, Y3 or Y4"
            ))
        })?;
    Ok(SafetyCapacitorClass {
        name: row.name.into(),
        service_impulse: row.service_impulse.into(),
        impulse_test_voltage_peak: si(row.impulse_test_voltage),
        rated_voltage_max_rms: si(row.rated_voltage_max),
        bridges: row.bridges.into(),
        source: CAPACITOR_CLASS_SOURCE.cite(),
    })
}

crate::serialize_as_record!(SafetyCapacitorClass);

impl Record for SafetyCapacitorClass {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::new("name", self.name.as_str()),
            Field::new("service_impulse", self.service_impulse.as_str()),
            Field::quantity("impulse_test_voltage_peak", self.impulse_test_voltage_peak),
            Field::quantity("rated_voltage_max_rms", self.rated_voltage_max_rms),
            Field::new("bridges", self.bridges.as_str()),
            Field::new("source", self.source.as_str()),
        ]
    }
}

/// The largest total Y capacitance for a touch-current limit.
#[derive(Clone, Debug, PartialEq)]
pub struct YCapacitanceLimit {
    /// The largest total capacitance across the barrier.
    pub capacitance: Capacitance,
    /// The touch-current limit used (RMS).
    pub touch_current_limit_rms: ElectricCurrent,
    /// The highest mains voltage (RMS).
    pub mains_voltage_rms: ElectricPotential,
    /// The highest mains frequency.
    pub mains_frequency: Frequency,
    /// Formula and the limit's source.
    pub rule: String,
}

/// Touch current through a Y capacitance from the mains: I = 2π·f·C·V (RMS).
///
/// Assumes the whole mains voltage across the capacitance (the worst case), a sinusoidal
/// mains, and a capacitive path only (a harmonic-rich mains raises it); ignores the measuring
/// network. The inverse is [`largest_y_capacitance`]. Valid for positive, finite inputs.
/// Reference: the reactance of a capacitor, I = V/X_C (Erickson & Maksimović, 3rd ed. 2020,
/// ch. 8); the limit to compare with comes from IEC 62368-1 (value recalled from memory).
pub fn y_capacitor_touch_current(
    y_capacitance: Capacitance,
    mains_voltage: ElectricPotential,
    mains_frequency: Frequency,
) -> Result<ElectricCurrent> {
    let c = positive("y_capacitance", y_capacitance)?.value;
    let v = positive("mains_voltage", mains_voltage)?.value;
    let f = positive("mains_frequency", mains_frequency)?.value;
    Ok(si(sane_result(
        "touch current",
        "A",
        2.0 * PI * f * c * v,
        "`y_capacitance` (F), `mains_voltage` (V) and `mains_frequency` (Hz)",
    )?))
}

/// Largest total Y capacitance from primary to the touchable secondary (class II) so that the
/// touch current stays within a limit.
///
/// Formula: I = 2π·f·C·V, so C_max = I_limit / (2π·f_max·V_max). Assumes the whole mains
/// voltage appears across the capacitors (the worst case) and a sinusoidal mains; ignores the
/// network of the measuring instrument and any other leakage path.
/// Limit: give your own, or the ES1 limit of IEC 62368-1:2018 (0.5 mA RMS, value recalled
/// from memory); common practice, no published source, keeps class II designs near 0.25 mA.
pub fn largest_y_capacitance(
    touch_current_limit: ElectricCurrent,
    mains_voltage: ElectricPotential,
    mains_frequency: Frequency,
) -> Result<YCapacitanceLimit> {
    let i = positive("touch_current_limit", touch_current_limit)?.value;
    let v = positive("mains_voltage", mains_voltage)?.value;
    let f = positive("mains_frequency", mains_frequency)?.value;
    let c = sane_result(
        "largest Y capacitance",
        "F",
        i / (2.0 * PI * f * v),
        "`touch_current_limit` (A), `mains_voltage` (V) and `mains_frequency` (Hz)",
    )?;
    Ok(YCapacitanceLimit {
        capacitance: si(c),
        touch_current_limit_rms: touch_current_limit,
        mains_voltage_rms: mains_voltage,
        mains_frequency,
        rule: format!(
            "C = I / (2π·f·V); ES1 touch-current limit for comparison: {}",
            TOUCH_CURRENT_SOURCE.cite()
        ),
    })
}

crate::serialize_as_record!(YCapacitanceLimit);

impl Record for YCapacitanceLimit {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("capacitance", self.capacitance),
            Field::quantity("touch_current_limit_rms", self.touch_current_limit_rms),
            Field::quantity("mains_voltage_rms", self.mains_voltage_rms),
            Field::quantity("mains_frequency", self.mains_frequency),
            Field::new("rule", self.rule.as_str()),
        ]
    }
}

/// What the X-capacitor discharge must achieve.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DischargeSpec {
    /// Total capacitance across the mains input after the switch (X capacitors).
    pub x_capacitance: Capacitance,
    /// Highest mains voltage (RMS); the capacitor may be left at its peak.
    pub mains_voltage: ElectricPotential,
    /// Time within which the plug pins must be at or below the limit.
    pub discharge_time: Time,
    /// The voltage the pins must reach.
    pub residual_voltage_limit: ElectricPotential,
}

/// A discharge resistor and what it costs.
#[derive(Clone, Debug, PartialEq)]
pub struct DischargeResistor {
    /// The largest resistance that discharges in time.
    pub resistance: ElectricalResistance,
    /// R·C of that resistance.
    pub time_constant: Time,
    /// Loss in the resistor at the mains voltage (standby loss it adds).
    pub standby_loss: Power,
    /// Formula and source of the limits.
    pub rule: String,
}

/// Largest discharge resistor across the X capacitors for a discharge time.
///
/// Formula: V(t) = √2·V_rms·e^(−t/RC), so R_max = t / (C · ln(√2·V_rms / V_limit));
/// standby loss P = V_rms² / R. Assumes the worst disconnection instant (capacitor at the peak)
/// and no other discharge path. The limits in the standard: 60 V within 2 s for a plug an
/// ordinary person handles (IEC 62368-1:2018 5.5.2.2, value recalled from memory).
/// Valid where the peak is above the limit (else no resistor is needed: an error says so).
pub fn x_discharge_resistor(spec: &DischargeSpec) -> Result<DischargeResistor> {
    let c = positive("x_capacitance", spec.x_capacitance)?.value;
    let v = positive("mains_voltage", spec.mains_voltage)?.value;
    let t = positive("discharge_time", spec.discharge_time)?.value;
    let lim = positive("residual_voltage_limit", spec.residual_voltage_limit)?.value;
    let peak = SQRT_2 * v;
    if peak <= lim {
        return Err(Error::invalid(format!(
            "the mains peak ({}) is already at or below `residual_voltage_limit` ({}); no discharge resistor is needed",
            Quantity::from_typed(si::<ElectricPotential>(peak)),
            Quantity::from_typed(spec.residual_voltage_limit)
        )));
    }
    let inputs = "`x_capacitance` (F), `mains_voltage` (V), `discharge_time` (s) and `residual_voltage_limit` (V)";
    let r = sane_result(
        "discharge resistance",
        "Ω",
        t / (c * (peak / lim).ln()),
        inputs,
    )?;
    sane_result("standby loss", "W", v * v / r, inputs)?;
    sane_result("time constant", "s", r * c, inputs)?;
    Ok(DischargeResistor {
        resistance: si(r),
        time_constant: si(r * c),
        standby_loss: si(v * v / r),
        rule: format!(
            "R = t / (C·ln(√2·V / V_limit)); P = V² / R; limits of {}",
            DISCHARGE_SOURCE.cite()
        ),
    })
}

crate::serialize_as_record!(DischargeResistor);

impl Record for DischargeResistor {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("resistance", self.resistance),
            Field::quantity("time_constant", self.time_constant),
            Field::quantity("standby_loss", self.standby_loss),
            Field::new("rule", self.rule.as_str()),
        ]
    }
}
