//! The output side: secondary currents per winding, rectifier stress, output capacitor ripple
//! current and ripple voltage (from capacitance and ESR), and the LC post filter.

use super::waveform::{trapezoid_avg, trapezoid_rms};
use crate::error::{Error, Result};
use crate::report::{Field, Value};
use crate::units::validate::positive;
use crate::units::{
    si, Capacitance, Decibel, ElectricCurrent, ElectricPotential, Frequency, Inductance, Quantity,
};
use std::f64::consts::PI;

/// One output winding at one operating point.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct SecondaryPoint {
    /// Load current at this point.
    pub current_avg: ElectricCurrent,
    /// Peak secondary (rectifier) current: the primary pulse scaled so that its average over
    /// the demagnetising time equals the load current, I_s,pk = I_o·I_pk/(D₂·(I_pk + I_v)/2)
    /// (= n·I_pk for one output without losses; Hart 2011, section 7.2).
    pub current_peak: ElectricCurrent,
    /// RMS secondary (rectifier) current, √(D₂·(I_pk² + I_pk·I_v + I_v²)/3) of the scaled
    /// trapezoid (a triangle in DCM).
    pub current_rms: ElectricCurrent,
    /// Rectifier reverse voltage while the switch is on: V_bulk,peak/n + V_out.
    pub rectifier_reverse_voltage: ElectricPotential,
    /// RMS ripple current in the output capacitor: √(I_rms² − I_avg²).
    pub capacitor_ripple_current_rms: ElectricCurrent,
    /// Output ripple voltage at the capacitor, peak to peak: ΔQ/C + ESR·I_s,pk, where ΔQ is the
    /// charge the capacitor gains while the rectifier current exceeds the load current (Hart
    /// 2011, section 7.2: ΔQ = I_o·D·T when the secondary valley stays above I_o). The two parts
    /// are added although they peak at different times: an upper bound.
    pub ripple_voltage_pp: ElectricPotential,
    /// Ripple after the post filter, if there is one.
    pub filtered_ripple_voltage_pp: Option<ElectricPotential>,
}

impl SecondaryPoint {
    /// Named values with a prefix (`output_1.`), with units; no calculation.
    pub fn fields(&self, prefix: &str) -> Vec<Field> {
        let mut v = vec![
            Field::quantity(format!("{prefix}current_avg"), self.current_avg),
            Field::quantity(format!("{prefix}current_peak"), self.current_peak),
            Field::quantity(format!("{prefix}current_rms"), self.current_rms),
            Field::quantity(
                format!("{prefix}rectifier_reverse_voltage"),
                self.rectifier_reverse_voltage,
            ),
            Field::quantity(
                format!("{prefix}capacitor_ripple_current_rms"),
                self.capacitor_ripple_current_rms,
            ),
            Field::quantity(format!("{prefix}ripple_voltage_pp"), self.ripple_voltage_pp),
        ];
        if let Some(r) = self.filtered_ripple_voltage_pp {
            v.push(Field::quantity(
                format!("{prefix}filtered_ripple_voltage_pp"),
                r,
            ));
        }
        v
    }
}

/// Peak-to-peak ripple charge on an output capacitor fed by a trapezoidal pulse.
///
/// The secondary current falls linearly from `pk` to `v` over `t2`, then is zero; the load
/// draws `io` throughout. The capacitor charges from the start of the pulse until the current
/// falls to `io` (or the pulse ends) and discharges for the rest of the period, so
/// ΔQ = (I_pk − I_o)·t_e − s·t_e²/2, with s = (I_pk − I_v)/t₂ and t_e = min(t₂, (I_pk − I_o)/s).
/// With the valley above I_o this is I_o·D·T (Hart 2011, eq. for the flyback output ripple).
pub(crate) fn ripple_charge(pk: f64, v: f64, t2: f64, io: f64) -> f64 {
    if t2 <= 0.0 || pk <= io {
        return 0.0;
    }
    let s = (pk - v) / t2;
    let te = if s > 0.0 { t2.min((pk - io) / s) } else { t2 };
    (pk - io) * te - s * te * te / 2.0
}

/// Secondary values from the primary-referred pulse shape (SI numbers).
#[allow(clippy::too_many_arguments)]
pub(crate) fn secondary_point(
    io: f64,
    ipk_pri: f64,
    iv_pri: f64,
    demag_duty: f64,
    f: f64,
    vbulk_peak: f64,
    n: f64,
    vo: f64,
    c: f64,
    esr: f64,
    filter_gain: Option<f64>,
) -> SecondaryPoint {
    // scale so that the rectifier's average equals the load current (charge balance)
    let shape_avg = trapezoid_avg(ipk_pri, iv_pri, demag_duty);
    let k = if shape_avg > 0.0 { io / shape_avg } else { 0.0 };
    let pk = k * ipk_pri;
    let v = k * iv_pri;
    let rms = trapezoid_rms(pk, v, demag_duty).max(io);
    let ripple_i = (rms * rms - io * io).max(0.0).sqrt();
    let dq = ripple_charge(pk, v, demag_duty / f, io);
    let ripple_v = dq / c + esr * pk;
    SecondaryPoint {
        current_avg: si(io),
        current_peak: si(pk),
        current_rms: si(rms),
        rectifier_reverse_voltage: si(vbulk_peak / n + vo),
        capacitor_ripple_current_rms: si(ripple_i),
        ripple_voltage_pp: si(ripple_v),
        filtered_ripple_voltage_pp: filter_gain.map(|g| si(ripple_v * g)),
    }
}

/// An LC post filter after the output capacitor.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct PostFilter {
    /// Corner (resonant) frequency, 1/(2π·√(L·C)).
    pub corner_frequency: Frequency,
    /// Attenuation at the switching frequency, 20·log10|1 − (f/f₀)²|.
    pub attenuation: Decibel,
    /// Amplitude gain at the switching frequency, 1/|1 − (f/f₀)²|.
    pub gain: f64,
}

/// The corner frequency and the attenuation at the switching frequency of an undamped LC
/// post filter driving a light load.
///
/// Formula: f₀ = 1/(2π·√(L·C)); |H(f)| = 1/|1 − (f/f₀)²|; attenuation 20·log10|1 − (f/f₀)²| dB.
/// Assumes ideal parts and a load much larger than √(L/C) (no damping): near f₀ the real filter
/// peaks less. Valid for f ≠ f₀; a filter resonating within 1 % of f is an error.
/// Reference: second-order LC low-pass, Erickson & Maksimović, 3rd ed. (2020), chapter 8.
pub fn post_filter(
    inductance: Inductance,
    capacitance: Capacitance,
    switching_frequency: Frequency,
) -> Result<PostFilter> {
    let l = positive("post_filter_inductance", inductance)?.value;
    let c = positive("post_filter_capacitance", capacitance)?.value;
    let f = positive("switching_frequency", switching_frequency)?.value;
    let f0 = 1.0 / (2.0 * PI * (l * c).sqrt());
    let x = f / f0;
    let d = (1.0 - x * x).abs();
    if (x - 1.0).abs() < 0.01 {
        return Err(Error::invalid(format!(
            "the post filter ({}, {}) resonates at {}, within 1 % of the switching frequency {}",
            Quantity::from_typed(inductance),
            Quantity::from_typed(capacitance),
            Quantity::new(f0, crate::units::Dimension::FREQUENCY),
            Quantity::from_typed(switching_frequency)
        )));
    }
    Ok(PostFilter {
        corner_frequency: si(f0),
        attenuation: Decibel::from_amplitude_ratio(d)?,
        gain: 1.0 / d,
    })
}

impl PostFilter {
    /// Named values with a prefix (corner frequency and attenuation), with units; no calculation.
    pub fn fields(&self, prefix: &str) -> Vec<Field> {
        vec![
            Field::quantity(
                format!("{prefix}post_filter_corner_frequency"),
                self.corner_frequency,
            ),
            Field::new(
                format!("{prefix}post_filter_attenuation"),
                Value::Decibel(self.attenuation),
            ),
        ]
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn ripple_charge_matches_the_ccm_formula_when_the_valley_is_above_the_load() {
        // hand check of the same formula: ΔQ = I_o·D·T when I_v > I_o
        let (io, d, t) = (1.0, 0.4, 1e-5);
        let dq = ripple_charge(3.0, 1.5, (1.0 - d) * t, io);
        // the pulse average over the period must be io: (3+1.5)/2·0.6 = 1.35 ≠ 1; use the
        // general identity instead: ΔQ = ∫(i − I_o) over the pulse = (avg_pulse − I_o·(1−D))·T
        let expect = ((3.0 + 1.5) / 2.0 * (1.0 - d) - io * (1.0 - d)) * t;
        assert!((dq - expect).abs() < 1e-15, "{dq} vs {expect}");
    }
}
