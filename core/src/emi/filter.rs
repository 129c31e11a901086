//! Input and output filter arithmetic: required attenuation, the corner a filter of given
//! order needs, second-order LC response, output impedance peak and its damping network, and
//! Middlebrook's stability criterion.

use super::complex::Complex;
use crate::error::{Error, Result};
use crate::passives::{lc_characteristic_impedance, lc_resonant_frequency};
use crate::report::{Field, Record};
use crate::units::validate::{non_negative, positive, positive_number};
use crate::units::{
    format_number, si, Capacitance, DbReference, Decibel, ElectricPotential, ElectricalResistance,
    Frequency, Inductance, Power,
};
use std::f64::consts::PI;

fn level(name: &str, d: Decibel) -> Result<Decibel> {
    if d.value.is_finite() {
        Ok(d)
    } else {
        Err(Error::invalid(format!(
            "`{name}` must be a finite decibel value"
        )))
    }
}

/// The attenuation a filter must give at one frequency: A = estimate − limit + margin (dB).
///
/// `estimate` and `limit` are levels of the same reference (dBµV); `margin` is a ratio in dB.
/// A negative result means no attenuation is needed there.
/// Reference: common practice, no published source (the usual filter design budget).
pub fn required_attenuation(estimate: Decibel, limit: Decibel, margin: Decibel) -> Result<Decibel> {
    let e = level("estimate", estimate)?;
    let l = level("limit", limit)?;
    let m = level("margin", margin)?;
    if e.reference != l.reference || e.reference == DbReference::Ratio {
        return Err(Error::dimension(format!(
            "`estimate` ({e}) and `limit` ({l}) must be levels of the same kind (dBµV)"
        )));
    }
    if m.reference != DbReference::Ratio {
        return Err(Error::dimension(format!(
            "`margin` must be a ratio in dB, got {m}"
        )));
    }
    e.sub(&l)?.add(&m)
}

/// The corner frequency a filter of `order` (number of reactive elements; 20·order dB per
/// decade above the corner) needs to give `attenuation` at `frequency`:
/// f_c = f·10^(−A/(20·order)).
///
/// A non-positive attenuation gives a corner at or above `frequency` (no filtering needed
/// there). Valid: frequency > 0, order 1 … 8, finite attenuation.
/// Reference: Erickson & Maksimović, *Fundamentals of Power Electronics*, 3rd ed. (2020),
/// input filter chapter (asymptotes of an n-th order low-pass filter).
pub fn filter_corner_frequency(
    frequency: Frequency,
    attenuation: Decibel,
    order: u32,
) -> Result<Frequency> {
    let f = positive("frequency", frequency)?.value;
    let a = level("attenuation", attenuation)?;
    if a.reference != DbReference::Ratio {
        return Err(Error::dimension(format!(
            "`attenuation` must be a ratio in dB, got {a}"
        )));
    }
    if !(1..=8).contains(&order) {
        return Err(Error::out_of_range(format!(
            "`order` must be 1 … 8, got {order}"
        )));
    }
    let fc = f * 10f64.powf(-a.value / (20.0 * f64::from(order)));
    if !(fc.is_finite() && fc > 0.0) {
        return Err(Error::out_of_range(format!(
            "`attenuation` = {a} is too large to give a usable corner frequency"
        )));
    }
    Ok(si(fc))
}

/// Response of a second-order LC low-pass filter loaded by a resistance.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LcFilterResponse {
    /// Corner (resonant) frequency f0 = 1/(2π√(LC)).
    pub corner_frequency: Frequency,
    /// Characteristic impedance R0 = √(L/C).
    pub characteristic_impedance: ElectricalResistance,
    /// Quality factor Q = R_load/R0.
    pub quality_factor: f64,
    /// Gain at the corner, |H(f0)| = Q, in dB.
    pub resonance_gain: Decibel,
    /// The frequency evaluated.
    pub frequency: Frequency,
    /// Attenuation at that frequency, −20·log10|H(f)|, in dB (negative: gain).
    pub attenuation: Decibel,
}

crate::serialize_as_record!(LcFilterResponse);

impl Record for LcFilterResponse {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("corner_frequency", self.corner_frequency),
            Field::quantity("characteristic_impedance", self.characteristic_impedance),
            Field::new("quality_factor", self.quality_factor),
            Field::new("resonance_gain", self.resonance_gain),
            Field::quantity("frequency", self.frequency),
            Field::new("attenuation", self.attenuation),
        ]
    }
}

/// Second-order LC low-pass (series L, shunt C, load R across C):
/// H(f) = 1/(1 − (f/f0)² + j·(f/f0)/Q), f0 = 1/(2π√(LC)), Q = R/√(L/C).
/// Above the corner it falls 40 dB per decade; at the corner |H| = Q.
/// Use it for the output post filter (its corner and attenuation at the switching frequency)
/// or any LC section. Assumes ideal L and C and a resistive load.
/// Reference: Erickson & Maksimović (2020), chapter 8 (second-order response) and the input
/// filter chapter.
pub fn lc_filter_attenuation(
    inductance: Inductance,
    capacitance: Capacitance,
    load_resistance: ElectricalResistance,
    frequency: Frequency,
) -> Result<LcFilterResponse> {
    let f0 = lc_resonant_frequency(inductance, capacitance)?;
    let r0 = lc_characteristic_impedance(inductance, capacitance)?;
    let r = positive("load_resistance", load_resistance)?.value;
    let f = positive("frequency", frequency)?.value;
    let q = r / r0.value;
    let x = f / f0.value;
    let h = Complex::new(1.0 - x * x, x / q).recip();
    let attenuation = -20.0 * h.abs().log10();
    let resonance_gain = 20.0 * q.log10();
    if !(attenuation.is_finite() && resonance_gain.is_finite() && q > 0.0) {
        return Err(Error::out_of_range(format!(
            "the LC response cannot be computed for `inductance` = {} H, `capacitance` = {} F, \
             `load_resistance` = {} Ω at `frequency` = {} Hz: the values are too far apart",
            format_number(inductance.value),
            format_number(capacitance.value),
            format_number(r),
            format_number(f)
        )));
    }
    Ok(LcFilterResponse {
        corner_frequency: f0,
        characteristic_impedance: r0,
        quality_factor: q,
        resonance_gain: Decibel::ratio(resonance_gain),
        frequency,
        attenuation: Decibel::ratio(attenuation),
    })
}

/// An R–C damping branch (R_d in series with a blocking capacitor C_d) across a filter
/// capacitor.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct DampingNetwork {
    /// Ratio n = C_d / C.
    pub capacitance_ratio: f64,
    /// Blocking capacitor C_d = n·C.
    pub blocking_capacitance: Capacitance,
    /// Damping resistor R_d = R0·Q_opt.
    pub damping_resistance: ElectricalResistance,
    /// Optimum Q_opt = √((2+n)(4+3n) / (2n²(4+n))).
    pub quality_factor: f64,
    /// Characteristic impedance R0 = √(L/C) of the undamped filter.
    pub characteristic_impedance: ElectricalResistance,
    /// Peak output impedance with the optimum damping, R0·√(2(2+n))/n.
    pub peak_output_impedance: ElectricalResistance,
}

crate::serialize_as_record!(DampingNetwork);

impl Record for DampingNetwork {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::new("capacitance_ratio", self.capacitance_ratio),
            Field::quantity("blocking_capacitance", self.blocking_capacitance),
            Field::quantity("damping_resistance", self.damping_resistance),
            Field::new("quality_factor", self.quality_factor),
            Field::quantity("characteristic_impedance", self.characteristic_impedance),
            Field::quantity("peak_output_impedance", self.peak_output_impedance),
        ]
    }
}

/// The optimum parallel R–C_d damping of an LC filter (L in series, C across the converter's
/// input) for a chosen capacitance ratio n = C_d/C:
/// Q_opt = √((2+n)(4+3n) / (2n²(4+n))), R_d = R0·Q_opt, peak output impedance
/// ‖Z_o‖ = R0·√(2(2+n))/n, R0 = √(L/C).
/// Larger n damps better at the cost of a larger blocking capacitor.
/// Valid: n = 0.01 … 100 (below, the branch hardly damps; above, the blocking capacitor is
/// absurdly large; outside it is an out-of-range error).
/// Reference: Erickson & Maksimović (2020), input filter chapter, optimal R–C_b parallel
/// damping (value recalled from memory).
pub fn damping_network(
    inductance: Inductance,
    capacitance: Capacitance,
    capacitance_ratio: f64,
) -> Result<DampingNetwork> {
    let r0 = lc_characteristic_impedance(inductance, capacitance)?;
    let n = positive_number("capacitance_ratio", capacitance_ratio)?;
    if !(0.01..=100.0).contains(&n) {
        return Err(Error::out_of_range(format!(
            "`capacitance_ratio` n = C_d/C = {} is outside 0.01 … 100",
            format_number(n)
        )));
    }
    let q = ((2.0 + n) * (4.0 + 3.0 * n) / (2.0 * n * n * (4.0 + n))).sqrt();
    let cd = n * capacitance.value;
    let rd = r0.value * q;
    let peak = r0.value * (2.0 * (2.0 + n)).sqrt() / n;
    if !(cd.is_finite() && rd.is_finite() && peak.is_finite()) {
        return Err(Error::out_of_range(format!(
            "the damping network overflows for `inductance` = {} H and `capacitance` = {} F",
            format_number(inductance.value),
            format_number(capacitance.value)
        )));
    }
    Ok(DampingNetwork {
        capacitance_ratio: n,
        blocking_capacitance: si(cd),
        damping_resistance: si(rd),
        quality_factor: q,
        characteristic_impedance: r0,
        peak_output_impedance: si(peak),
    })
}

/// The peak of a filter's output impedance and where it occurs.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ImpedancePeak {
    /// Largest |Z_o| found.
    pub magnitude: ElectricalResistance,
    /// Frequency of that peak.
    pub frequency: Frequency,
}

/// The output impedance of an LC filter seen from the converter, and its peak:
/// Z_o = (R_L + jωL) ∥ (ESR + 1/(jωC)) ∥ (R_d + 1/(jωC_d)), with the line side shorted
/// (the worst case for the filter's resonance). The peak is found by scanning 4000
/// logarithmically spaced points from f0/100 to 100·f0.
/// Assumptions: ideal parts apart from the series resistances given. Valid: L, C > 0,
/// resistances ≥ 0 (all zero gives an unbounded peak, which is reported as an error). When a
/// resistance larger than √(L/C) leaves no resonance and the largest |Z_o| lies at an end of
/// the scan, the asymptote there is the peak: R_L towards DC, ESR ∥ R_d towards high frequency.
/// Reference: Erickson & Maksimović (2020), input filter chapter (filter output impedance).
pub fn filter_output_impedance_peak(
    inductance: Inductance,
    inductor_resistance: ElectricalResistance,
    capacitance: Capacitance,
    capacitor_esr: ElectricalResistance,
    damping: Option<(ElectricalResistance, Capacitance)>,
) -> Result<ImpedancePeak> {
    let f0 = lc_resonant_frequency(inductance, capacitance)?.value;
    let l = inductance.value;
    let c = capacitance.value;
    let rl = non_negative("inductor_resistance", inductor_resistance)?.value;
    let esr = non_negative("capacitor_esr", capacitor_esr)?.value;
    let damp = match damping {
        Some((r, cd)) => Some((
            non_negative("damping_resistance", r)?.value,
            positive("blocking_capacitance", cd)?.value,
        )),
        None => None,
    };
    if rl == 0.0 && esr == 0.0 && !matches!(damp, Some((r, _)) if r > 0.0) {
        return Err(Error::invalid(
            "the filter has no damping at all (`inductor_resistance` and `capacitor_esr` are zero, and no damping branch): its output impedance peak is unbounded",
        ));
    }
    let mut best = (0.0f64, f0);
    let mut best_index = 0;
    let points = 4000;
    for i in 0..=points {
        let f = f0 * 10f64.powf(-2.0 + 4.0 * f64::from(i) / f64::from(points));
        let w = 2.0 * PI * f;
        let mut y = (Complex::real(rl) + Complex::inductor(l, w)).recip()
            + (Complex::real(esr) + Complex::capacitor(c, w)).recip();
        if let Some((r, cd)) = damp {
            y = y + (Complex::real(r) + Complex::capacitor(cd, w)).recip();
        }
        let z = y.recip().abs();
        if z.is_finite() && z > best.0 {
            best = (z, f);
            best_index = i;
        }
    }
    // A resistance larger than √(L/C) leaves no resonance peak: |Z_o| keeps rising towards an
    // end of the scan, and its supremum is the asymptote there (R_L towards DC with the line
    // shorted, ESR ∥ R_d towards high frequency).
    if best_index == 0 {
        best.0 = best.0.max(rl);
    } else if best_index == points {
        let high = match damp {
            Some((r, _)) if r + esr > 0.0 => r * esr / (r + esr),
            Some(_) => 0.0,
            None => esr,
        };
        best.0 = best.0.max(high);
    }
    if !(best.0.is_finite() && best.0 > 0.0) || best.0 > 1e12 {
        return Err(Error::invalid(
            "the filter's output impedance peak is unbounded or above 1 TΩ: it has no usable \
             damping (`inductor_resistance`, `capacitor_esr` or a damping branch, Ω)",
        ));
    }
    Ok(ImpedancePeak {
        magnitude: si(best.0),
        frequency: si(best.1),
    })
}

/// Middlebrook's criterion: the filter's output impedance must stay well below the magnitude of
/// the converter's negative input resistance.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct MiddlebrookCheck {
    /// |R_N| = V_in²/P_in, the magnitude of the converter's negative incremental input
    /// resistance at the lowest input voltage and full power.
    pub negative_input_resistance: ElectricalResistance,
    /// The filter's peak output impedance.
    pub peak_output_impedance: ElectricalResistance,
    /// 20·log10(|R_N| / ‖Z_o‖).
    pub margin: Decibel,
    /// The margin asked for.
    pub required_margin: Decibel,
    /// True when the margin is at least the required margin.
    pub satisfied: bool,
}

crate::serialize_as_record!(MiddlebrookCheck);

impl Record for MiddlebrookCheck {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("negative_input_resistance", self.negative_input_resistance),
            Field::quantity("peak_output_impedance", self.peak_output_impedance),
            Field::new("margin", self.margin),
            Field::new("required_margin", self.required_margin),
            Field::new("satisfied", self.satisfied),
        ]
    }
}

/// Middlebrook's criterion for an input filter ahead of a regulated converter:
/// ‖Z_o‖ ≪ |R_N| with |R_N| = V_in²/P_in; margin = 20·log10(|R_N|/‖Z_o‖) must be at least
/// `required_margin` (6 dB is usual). Assumes the converter draws constant power (a tightly
/// regulated output) at the lowest input voltage.
/// Reference: R. D. Middlebrook, "Input filter considerations in design and application of
/// switching regulators", IEEE IAS, 1976; Erickson & Maksimović (2020), input filter chapter.
pub fn middlebrook_criterion(
    peak_output_impedance: ElectricalResistance,
    input_voltage: ElectricPotential,
    input_power: Power,
    required_margin: Decibel,
) -> Result<MiddlebrookCheck> {
    let z = positive("peak_output_impedance", peak_output_impedance)?.value;
    let v = positive("input_voltage", input_voltage)?.value;
    let p = positive("input_power", input_power)?.value;
    let m = level("required_margin", required_margin)?;
    if m.reference != DbReference::Ratio {
        return Err(Error::dimension(format!(
            "`required_margin` must be a ratio in dB, got {m}"
        )));
    }
    let rn = v * v / p;
    let margin = Decibel::from_amplitude_ratio(rn / z).map_err(|_| {
        Error::invalid(format!(
            "cannot compare |R_N| = {} Ω with the filter impedance {} Ω",
            format_number(rn),
            format_number(z)
        ))
    })?;
    Ok(MiddlebrookCheck {
        negative_input_resistance: si(rn),
        peak_output_impedance,
        margin,
        required_margin: m,
        satisfied: margin.value >= m.value,
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn corner_round_trip() {
        // 20·order·log10(f/f_c) gives back the attenuation (the formula's own inverse)
        let fc = filter_corner_frequency(si(300e3), Decibel::ratio(52.0), 4).unwrap();
        assert!((80.0 * (300e3 / fc.value).log10() - 52.0).abs() < 1e-9);
    }

    #[test]
    fn attenuation_needs_levels() {
        let uv = |v| Decibel {
            value: v,
            reference: DbReference::MicroVolt,
        };
        assert_eq!(
            required_attenuation(uv(80.0), uv(56.0), Decibel::ratio(6.0)).unwrap(),
            Decibel::ratio(30.0)
        );
        assert!(required_attenuation(uv(80.0), Decibel::ratio(56.0), Decibel::ratio(6.0)).is_err());
        assert!(required_attenuation(uv(80.0), uv(56.0), uv(6.0)).is_err());
    }

    #[test]
    fn light_load_filter_peaks() {
        // Q = R/R0; at Q = 10 the gain at the corner is +20 dB (Erickson & Maksimović 2020, ch. 8)
        let r = lc_filter_attenuation(si(1e-6), si(100e-6), si(1.0), si(1e3)).unwrap();
        assert!((r.quality_factor - 10.0).abs() < 1e-9);
        assert!((r.resonance_gain.value - 20.0).abs() < 1e-9);
    }
}
