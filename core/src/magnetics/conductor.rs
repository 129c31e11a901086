//! Copper resistivity versus temperature and skin depth versus frequency.

use crate::error::Result;
use crate::units::validate::{positive, within};
use crate::units::{si, ElectricalResistivity, Frequency, Length, ThermodynamicTemperature};
use std::f64::consts::PI;

/// Resistivity of annealed copper at 20 °C: 1/58 Ω·mm²/m = 1.7241e-8 Ω·m (IEC 60028, the
/// international annealed copper standard).
pub const COPPER_RESISTIVITY_20C: f64 = 1.0 / 58.0e6;

/// Temperature coefficient of resistance of annealed copper at 20 °C: 0.00393 per kelvin
/// (IEC 60028).
pub const COPPER_TEMPERATURE_COEFFICIENT: f64 = 0.00393;

/// Magnetic constant µ0 = 4π·10⁻⁷ H/m (the pre-2019 exact value; the 2019 SI value differs
/// by less than one part in 10⁹).
pub const VACUUM_PERMEABILITY: f64 = 4.0e-7 * PI;

const T_LOW_C: f64 = -60.0;
const T_HIGH_C: f64 = 250.0;

fn celsius(t: ThermodynamicTemperature) -> f64 {
    t.value - crate::units::CELSIUS_OFFSET
}

/// Resistivity of annealed copper at a temperature: ρ(T) = ρ20·(1 + α20·(T − 20 °C)).
///
/// Assumes the linear IEC 60028 model, valid from −60 °C to 250 °C (beyond that the
/// linear model drifts; such temperatures are errors). Reference: IEC 60028.
pub fn copper_resistivity(temperature: ThermodynamicTemperature) -> Result<ElectricalResistivity> {
    let lo = crate::units::Quantity::celsius(T_LOW_C).to_typed("temperature")?;
    let hi = crate::units::Quantity::celsius(T_HIGH_C).to_typed("temperature")?;
    let t = within("temperature", temperature, lo, hi)?;
    Ok(si(COPPER_RESISTIVITY_20C
        * (1.0
            + COPPER_TEMPERATURE_COEFFICIENT
                * (celsius(t) - 20.0))))
}

/// Skin depth in copper: δ = √(ρ(T) / (π·f·µ0)).
///
/// Assumes a non-magnetic conductor (µr = 1) and a sinusoidal current; valid for any
/// positive frequency and temperatures from −60 °C to 250 °C. At 100 kHz and 20 °C it is
/// about 0.209 mm. Reference: Kazimierczuk, *High-Frequency Magnetic Components*, 2nd ed.
/// (2014), chapter 3 (skin depth); resistivity from IEC 60028.
pub fn skin_depth(frequency: Frequency, temperature: ThermodynamicTemperature) -> Result<Length> {
    let f = positive("frequency", frequency)?.value;
    let rho = copper_resistivity(temperature)?.value;
    Ok(si((rho / (PI * f * VACUUM_PERMEABILITY)).sqrt()))
}
