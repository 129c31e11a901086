//! Reactance of inductors and capacitors, and LC resonance.

use crate::error::Result;
use crate::units::validate::positive;
use crate::units::{si, Capacitance, ElectricalResistance, Frequency, Inductance};
use std::f64::consts::PI;

/// Reactance of an inductor: X_L = 2π·f·L.
///
/// Assumes an ideal inductor (no winding capacitance, so valid well below its
/// self-resonance). Inputs must be positive and finite.
/// Reference: Erickson & Maksimović, *Fundamentals of Power Electronics*, 3rd ed. (2020),
/// chapter 8 (impedances of L and C).
pub fn inductive_reactance(
    inductance: Inductance,
    frequency: Frequency,
) -> Result<ElectricalResistance> {
    let l = positive("inductance", inductance)?.value;
    let f = positive("frequency", frequency)?.value;
    Ok(si(2.0 * PI * f * l))
}

/// Reactance of a capacitor (magnitude): X_C = 1/(2π·f·C).
///
/// Assumes an ideal capacitor (no ESR or ESL). Reference: as [`inductive_reactance`].
pub fn capacitive_reactance(
    capacitance: Capacitance,
    frequency: Frequency,
) -> Result<ElectricalResistance> {
    let c = positive("capacitance", capacitance)?.value;
    let f = positive("frequency", frequency)?.value;
    Ok(si(1.0 / (2.0 * PI * f * c)))
}

/// Resonant (corner) frequency of an LC pair: f0 = 1/(2π·√(L·C)).
///
/// Reference: Erickson & Maksimović (2020), chapter 8, second-order response.
pub fn lc_resonant_frequency(
    inductance: Inductance,
    capacitance: Capacitance,
) -> Result<Frequency> {
    let l = positive("inductance", inductance)?.value;
    let c = positive("capacitance", capacitance)?.value;
    Ok(si(1.0 / (2.0 * PI * (l * c).sqrt())))
}

/// Characteristic impedance of an LC pair: Z0 = √(L/C), the reactance of either part at f0.
///
/// Reference: Erickson & Maksimović (2020), chapter 8 (R0 of the second-order system).
pub fn lc_characteristic_impedance(
    inductance: Inductance,
    capacitance: Capacitance,
) -> Result<ElectricalResistance> {
    let l = positive("inductance", inductance)?.value;
    let c = positive("capacitance", capacitance)?.value;
    Ok(si((l / c).sqrt()))
}

/// The capacitance that resonates with `inductance` at `frequency`: C = 1/((2π·f)²·L).
pub fn capacitance_for_resonance(
    inductance: Inductance,
    frequency: Frequency,
) -> Result<Capacitance> {
    let l = positive("inductance", inductance)?.value;
    let w = 2.0 * PI * positive("frequency", frequency)?.value;
    Ok(si(1.0 / (w * w * l)))
}

/// The inductance that resonates with `capacitance` at `frequency`: L = 1/((2π·f)²·C).
pub fn inductance_for_resonance(
    capacitance: Capacitance,
    frequency: Frequency,
) -> Result<Inductance> {
    let c = positive("capacitance", capacitance)?.value;
    let w = 2.0 * PI * positive("frequency", frequency)?.value;
    Ok(si(1.0 / (w * w * c)))
}
