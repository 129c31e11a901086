//! One switching cycle of the flyback's magnetising inductance: mode, duty cycle and the
//! primary current's peak, valley, average and RMS, for a power or for a peak current.

use crate::error::Result;
use crate::units::validate::positive;
use crate::units::{si, ElectricPotential, Frequency, Inductance, Power};

/// Conduction mode of the magnetising inductance.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ConductionMode {
    /// Continuous: the current never falls to zero.
    Continuous,
    /// Discontinuous: the current falls to zero before the next turn-on.
    Discontinuous,
    /// Boundary (critical): the current reaches zero exactly at the next turn-on.
    Boundary,
}

impl ConductionMode {
    /// Short name: `ccm`, `dcm` or `boundary` (the mode is classified by L/L_b at the operating
    /// point: within 1e-9 of 1 boundary, below DCM, above CCM; see [`boundary_inductance`]).
    pub fn as_str(self) -> &'static str {
        match self {
            ConductionMode::Continuous => "ccm",
            ConductionMode::Discontinuous => "dcm",
            ConductionMode::Boundary => "boundary",
        }
    }
}

/// Plain-number cycle values in SI (internal to the flyback module).
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct Cycle {
    pub mode: ConductionMode,
    /// On-time fraction.
    pub duty: f64,
    /// Demagnetising (secondary conduction) fraction.
    pub demag_duty: f64,
    pub i_peak: f64,
    pub i_valley: f64,
    /// Converter input power at the boundary between CCM and DCM, at this input voltage.
    pub boundary_power: f64,
    /// L / L_boundary at this input voltage and power: < 1 DCM, 1 boundary, > 1 CCM.
    pub inductance_ratio: f64,
}

/// Average of a trapezoidal pulse from `a` to `b` over a fraction `d` of the period.
pub(crate) fn trapezoid_avg(a: f64, b: f64, d: f64) -> f64 {
    d * (a + b) / 2.0
}

/// RMS of a trapezoidal pulse from `a` to `b` over a fraction `d` of the period.
pub(crate) fn trapezoid_rms(a: f64, b: f64, d: f64) -> f64 {
    (d * (a * a + a * b + b * b) / 3.0).max(0.0).sqrt()
}

/// Duty cycle at the CCM/DCM boundary: D_b = V_r/(V_in + V_r) (volt-second balance).
pub(crate) fn boundary_duty(vin: f64, vr: f64) -> f64 {
    vr / (vin + vr)
}

/// Boundary inductance: L_b = (V_in·D_b)²/(2·P·f).
pub(crate) fn boundary_inductance_si(vin: f64, p: f64, vr: f64, f: f64) -> f64 {
    let d = boundary_duty(vin, vr);
    (vin * d).powi(2) / (2.0 * p * f)
}

fn classify(ratio: f64) -> ConductionMode {
    if (ratio - 1.0).abs() <= 1e-9 {
        ConductionMode::Boundary
    } else if ratio < 1.0 {
        ConductionMode::Discontinuous
    } else {
        ConductionMode::Continuous
    }
}

/// The cycle that moves power `p` (W, drawn from the input) at input voltage `vin`.
///
/// DCM duty D = √(2·P·L·f)/V_in and I_pk = V_in·D/(L·f), so ½·L·I_pk²·f = P; CCM (when that
/// duty would exceed the boundary duty) D = D_b, I_mid = P/(V_in·D), ΔI = V_in·D/(L·f).
pub(crate) fn cycle_for_power(l: f64, vin: f64, p: f64, vr: f64, f: f64) -> Cycle {
    let db = boundary_duty(vin, vr);
    let lb = boundary_inductance_si(vin, p, vr, f);
    let ratio = l / lb;
    let ddcm = (2.0 * p * l * f).sqrt() / vin;
    if ddcm <= db {
        let ipk = vin * ddcm / (l * f);
        Cycle {
            mode: classify(ratio),
            duty: ddcm,
            demag_duty: (ipk * l * f / vr).min(1.0 - ddcm),
            i_peak: ipk,
            i_valley: 0.0,
            boundary_power: (vin * db).powi(2) / (2.0 * l * f),
            inductance_ratio: ratio,
        }
    } else {
        let imid = p / (vin * db);
        let di = vin * db / (l * f);
        Cycle {
            mode: classify(ratio),
            duty: db,
            demag_duty: 1.0 - db,
            i_peak: imid + di / 2.0,
            i_valley: (imid - di / 2.0).max(0.0),
            boundary_power: (vin * db).powi(2) / (2.0 * l * f),
            inductance_ratio: ratio,
        }
    }
}

/// Converter input power moved when the primary current peaks at `ipk`.
#[cfg(test)]
pub(crate) fn power_at_peak(l: f64, vin: f64, ipk: f64, vr: f64, f: f64) -> f64 {
    let db = boundary_duty(vin, vr);
    let ipk_b = vin * db / (l * f);
    if ipk <= ipk_b {
        0.5 * l * ipk * ipk * f
    } else {
        let iv = ipk - ipk_b;
        vin * trapezoid_avg(ipk, iv, db)
    }
}

/// The primary inductance at the CCM/DCM boundary for an input voltage, a converter input
/// power, a reflected voltage and a switching frequency.
///
/// Formula: L_b = (V_in·D_b)²/(2·P·f) with D_b = V_r/(V_in + V_r) (volt-second balance on the
/// magnetising inductance; at the boundary ½·L·I_pk²·f = P with I_pk = V_in·D_b/(L·f)).
/// Assumes ideal switch and rectifiers, fixed frequency. Valid for positive finite inputs.
/// Reference: Erickson & Maksimović, *Fundamentals of Power Electronics*, 3rd ed. (2020),
/// chapter 5 (the DCM boundary K_crit of the buck-boost, of which the flyback is the isolated form).
pub fn boundary_inductance(
    input_voltage: ElectricPotential,
    input_power: Power,
    reflected_voltage: ElectricPotential,
    switching_frequency: Frequency,
) -> Result<Inductance> {
    let vin = positive("input_voltage", input_voltage)?.value;
    let p = positive("input_power", input_power)?.value;
    let vr = positive("reflected_voltage", reflected_voltage)?.value;
    let f = positive("switching_frequency", switching_frequency)?.value;
    Ok(si(boundary_inductance_si(vin, p, vr, f)))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn boundary_is_continuous() {
        let (vin, vr, f, p) = (100.0, 100.0, 65e3, 20.0);
        let lb = boundary_inductance_si(vin, p, vr, f);
        let a = cycle_for_power(lb * (1.0 - 1e-7), vin, p, vr, f);
        let b = cycle_for_power(lb * (1.0 + 1e-7), vin, p, vr, f);
        assert!((a.i_peak - b.i_peak).abs() < 1e-4 * a.i_peak);
        assert!((a.duty - b.duty).abs() < 1e-4);
        assert_eq!(a.mode, ConductionMode::Discontinuous);
        assert_eq!(b.mode, ConductionMode::Continuous);
        // power at peak is the inverse of the cycle for power
        for l in [lb * 0.5, lb * 3.0] {
            let c = cycle_for_power(l, vin, p, vr, f);
            let back = power_at_peak(l, vin, c.i_peak, vr, f);
            assert!((back - p).abs() < 1e-9 * p, "{back}");
        }
    }
}
