//! Round winding wire: American Wire Gauge and metric nominal diameters, DC resistance.

use super::conductor::copper_resistivity;
use crate::error::{Error, Result};
use crate::units::validate::positive;
use crate::units::{si, Area, ElectricalResistance, Length, ThermodynamicTemperature};
use std::f64::consts::PI;

/// The gauges ASTM B258 covers: 0000 (written −3) to 56.
pub const AWG_RANGE: (i64, i64) = (-3, 56);

fn check_gauge(gauge: i64) -> Result<i64> {
    if gauge < AWG_RANGE.0 || gauge > AWG_RANGE.1 {
        return Err(Error::out_of_range(format!(
            "`gauge` = {gauge} is outside the AWG range 0000 (-3) … 56 of ASTM B258"
        )));
    }
    Ok(gauge)
}

/// Bare copper diameter of an AWG size: d = 0.127 mm · 92^((36 − n)/39).
///
/// Gauges 0, 00, 000, 0000 are written 0, −1, −2, −3. Valid from 0000 to 56; other gauges
/// are errors. Reference: ASTM B258 (defining formula of the gauge).
pub fn awg_diameter(gauge: i64) -> Result<Length> {
    let n = check_gauge(gauge)? as f64;
    Ok(si(0.127e-3 * 92f64.powf((36.0 - n) / 39.0)))
}

/// Bare copper cross-section of an AWG size: A = π·d²/4, d from [`awg_diameter`].
pub fn awg_area(gauge: i64) -> Result<Area> {
    let d = awg_diameter(gauge)?.value;
    Ok(si(PI * d * d / 4.0))
}

/// Nominal conductor diameters of metric winding wire, in mm: the R20 series of preferred
/// numbers from 0.05 mm to 3.15 mm, as used by IEC 60317-0-1 (value recalled from memory).
const METRIC_DIAMETERS_MM: [f64; 37] = [
    0.050, 0.056, 0.063, 0.071, 0.080, 0.090, 0.100, 0.112, 0.125, 0.140, 0.160, 0.180, 0.200,
    0.224, 0.250, 0.280, 0.315, 0.355, 0.400, 0.450, 0.500, 0.560, 0.630, 0.710, 0.800, 0.900,
    1.000, 1.120, 1.250, 1.400, 1.600, 1.800, 2.000, 2.240, 2.500, 2.800, 3.150,
];

/// The metric nominal conductor diameters gapwise knows (0.05 mm … 3.15 mm, R20 series).
pub fn metric_wire_diameters() -> Vec<Length> {
    METRIC_DIAMETERS_MM.iter().map(|d| si(d * 1e-3)).collect()
}

/// The smallest metric nominal diameter not below `diameter`.
///
/// Valid from 0.05 mm to 3.15 mm; a wanted diameter above the largest size is an error
/// (use parallel strands or litz wire).
pub fn metric_wire_at_or_above(diameter: Length) -> Result<Length> {
    let d = positive("diameter", diameter)?.value * 1e3;
    METRIC_DIAMETERS_MM
        .iter()
        .find(|m| **m >= d * (1.0 - 1e-9))
        .map(|m| si(m * 1e-3))
        .ok_or_else(|| {
            Error::out_of_range(format!(
                "`diameter` = {} mm is above the largest metric size known, 3.15 mm; use parallel strands",
                crate::units::format_number(d)
            ))
        })
}

/// DC resistance of a round copper conductor: R = ρ(T)·l / (π·d²/4).
///
/// Assumes annealed copper (IEC 60028) and a uniform current (no skin effect, see
/// [`super::skin_depth`]). Valid from −60 °C to 250 °C.
pub fn wire_dc_resistance(
    diameter: Length,
    length: Length,
    temperature: ThermodynamicTemperature,
) -> Result<ElectricalResistance> {
    let d = positive("diameter", diameter)?.value;
    let l = positive("length", length)?.value;
    let rho = copper_resistivity(temperature)?.value;
    Ok(si(rho * l / (PI * d * d / 4.0)))
}
