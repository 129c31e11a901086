//! Temperature rise of a wound transformer from its loss and surface, and insulation classes.

use crate::error::{Error, Result};
use crate::units::validate::{non_negative, positive};
use crate::units::{si, Area, Power, TemperatureInterval, ThermalResistance};

/// Temperature rise of a transformer by McLyman's surface-dissipation fit:
/// ΔT = 450·(P/At)^0.826 K, with P in W and At in cm². Assumes natural convection in free
/// air, a hot-spot a few kelvin above this average. Valid for ψ = P/At up to about
/// 0.1 W/cm² (above that is an error: the fit was not made for it). Reference: McLyman,
/// *Transformer and Inductor Design Handbook*, 4th ed. (2011), chapter 6 (temperature rise).
pub fn temperature_rise(loss: Power, surface_area: Area) -> Result<TemperatureInterval> {
    let p = non_negative("loss", loss)?.value;
    let at = positive("surface_area", surface_area)?.value * 1e4; // cm²
    let psi = p / at;
    if psi > 0.1 {
        return Err(Error::out_of_range(format!(
            "loss per surface {:.4} W/cm² is above 0.1 W/cm², where McLyman's fit ends; use a thermal resistance",
            psi
        )));
    }
    Ok(si(450.0 * psi.powf(0.826)))
}

/// Temperature rise with a known thermal resistance from the transformer to ambient:
/// ΔT = Rθ·P.
pub fn temperature_rise_thermal_resistance(
    loss: Power,
    thermal_resistance: ThermalResistance,
) -> Result<TemperatureInterval> {
    let p = non_negative("loss", loss)?.value;
    let r = positive("thermal_resistance", thermal_resistance)?.value;
    Ok(si(p * r))
}

/// Maximum hot-spot temperature in °C of an insulation thermal class: A 105, E 120, B 130,
/// F 155, H 180 (IEC 60085 thermal classes, value recalled from memory).
pub fn insulation_class_limit(class: &str) -> Result<f64> {
    match class.trim() {
        "A" | "105" => Ok(105.0),
        "E" | "120" => Ok(120.0),
        "B" | "130" => Ok(130.0),
        "F" | "155" => Ok(155.0),
        "H" | "180" => Ok(180.0),
        o => Err(Error::unknown(format!(
            "unknown insulation class '{o}'; expected A, E, B, F or H"
        ))),
    }
}
