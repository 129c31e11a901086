//! The output side: secondary currents per winding, rectifier stress, output capacitor ripple
//! current and ripple voltage (from capacitance and ESR), and the LC post filter.

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
    /// Share of the magnetising ampere-turns this winding carries while the secondaries
    /// conduct: its power (V_o + V_f)·I_o over the power of every secondary winding and the
    /// bias winding (1 for a single output without bias). With ideal coupling every winding
    /// sees the same volts per turn, so its ampere-turns are in proportion to its power.
    pub ampere_turn_share: f64,
    /// Peak secondary (rectifier) current by ampere-turns: at turn-off the magnetising current
    /// I_pk moves to the secondaries, so I_s,pk = s·n·I_pk with n = N_p/N_s and s the
    /// [`SecondaryPoint::ampere_turn_share`] (Erickson & Maksimović, 3rd ed. (2020), ch. 6;
    /// Basso 2014, flyback chapter) — without leakage. With leakage L_lk the primary current
    /// falls through the clamp for t_r = L_lk·I_pk/(V_c − V_r) while the secondary current
    /// rises from zero; the magnetising current meanwhile falls by V_r·t_r/L, so the peak is
    /// s·n·(I_pk − V_r·t_r/L), reached at the end of t_r.
    pub current_peak: ElectricCurrent,
    /// Secondary current at the end of the off-time: s·n·I_v in CCM (the magnetising current
    /// at the next turn-on), zero in DCM and at the boundary.
    pub current_valley: ElectricCurrent,
    /// RMS secondary (rectifier) current of the waveform: a ramp from zero to the peak over
    /// the leakage reset t_r, then a fall at the off-time volt-seconds, (V_o + V_f)/L_s, to the
    /// valley at the end of the demagnetising time D₂/f:
    /// √(f·(t_r·I_pk²/3 + t₂·(I_pk² + I_pk·I_v + I_v²)/3)), t₂ = D₂/f − t_r.
    pub current_rms: ElectricCurrent,
    /// Average of that waveform, f·(t_r·I_pk/2 + t₂·(I_pk + I_v)/2). Charge balance makes it the
    /// load current; the difference is the share of the transformer and output-capacitor losses
    /// this winding carries and the model's approximations (a check, not an input).
    pub current_avg_waveform: ElectricCurrent,
    /// Rectifier reverse voltage while the switch is on: V_bulk,peak/n + V_out.
    pub rectifier_reverse_voltage: ElectricPotential,
    /// RMS ripple current in the output capacitor: √(I_rms² − I_o²) with the load current I_o
    /// (at least the AC content √(I_rms² − I_avg²) of the rectifier current: an upper bound).
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
            Field::new(format!("{prefix}ampere_turn_share"), self.ampere_turn_share),
            Field::quantity(format!("{prefix}current_peak"), self.current_peak),
            Field::quantity(format!("{prefix}current_valley"), self.current_valley),
            Field::quantity(format!("{prefix}current_rms"), self.current_rms),
            Field::quantity(
                format!("{prefix}current_avg_waveform"),
                self.current_avg_waveform,
            ),
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

/// The magnetising current's path through the secondaries in one period (primary-referred,
/// SI numbers): at turn-off it is `ipk`; during the leakage reset `t_reset` the secondaries'
/// share rises from zero to `i_after_reset`; it then falls to `iv` (CCM) or zero at `t_dem`.
#[derive(Clone, Copy, Debug, PartialEq)]
pub(crate) struct SecondaryWave {
    pub ipk: f64,
    pub iv: f64,
    pub t_reset: f64,
    pub i_after_reset: f64,
    pub t_dem: f64,
}

/// Peak-to-peak swing of the charge on a capacitor fed by a piecewise-linear current
/// (segments of duration, start and end current over one period) and drained by a constant
/// load current `io`: q(t) = ∫(i − I_o)dt is piecewise quadratic, its extremes lie at segment
/// ends or where i = I_o; ΔQ = max q − min q (exact for the waveform; a net drift over the
/// period, when the waveform's average differs from I_o, is included: an upper bound).
pub(crate) fn charge_swing(segments: &[(f64, f64, f64)], io: f64) -> f64 {
    let (mut q, mut lo, mut hi) = (0.0f64, 0.0f64, 0.0f64);
    for &(dt, a, b) in segments {
        if dt <= 0.0 {
            continue;
        }
        let s = (b - a) / dt;
        // interior point where the current crosses the load current
        if s != 0.0 {
            let tx = (io - a) / s;
            if tx > 0.0 && tx < dt {
                let qx = q + (a - io) * tx + s * tx * tx / 2.0;
                lo = lo.min(qx);
                hi = hi.max(qx);
            }
        }
        q += (a - io) * dt + s * dt * dt / 2.0;
        lo = lo.min(q);
        hi = hi.max(q);
    }
    hi - lo
}

/// Secondary values by ampere-turns from the magnetising current (SI numbers): the winding
/// of turns ratio `n` = N_p/N_s carrying `share` of the ampere-turns rises to
/// share·n·I_after_reset over the leakage reset and falls to share·n·I_v at the end of the
/// demagnetising time.
#[allow(clippy::too_many_arguments)]
pub(crate) fn secondary_point(
    io: f64,
    share: f64,
    w: &SecondaryWave,
    f: f64,
    vbulk_peak: f64,
    n: f64,
    vo: f64,
    c: f64,
    esr: f64,
    filter_gain: Option<f64>,
) -> SecondaryPoint {
    let k = share * n;
    let pk = k * w.i_after_reset;
    let v = if w.ipk > w.iv { k * w.iv } else { 0.0 };
    let t2 = (w.t_dem - w.t_reset).max(0.0);
    let ms = f * (w.t_reset * pk * pk / 3.0 + t2 * (pk * pk + pk * v + v * v) / 3.0);
    let avg = f * (w.t_reset * pk / 2.0 + t2 * (pk + v) / 2.0);
    let rms = ms.max(0.0).sqrt().max(io);
    let ripple_i = (rms * rms - io * io).max(0.0).sqrt();
    let period = 1.0 / f;
    let idle = (period - w.t_dem).max(0.0);
    let dq = charge_swing(&[(w.t_reset, 0.0, pk), (t2, pk, v), (idle, 0.0, 0.0)], io);
    let ripple_v = dq / c + esr * pk;
    SecondaryPoint {
        current_avg: si(io),
        ampere_turn_share: share,
        current_peak: si(pk),
        current_valley: si(v),
        current_rms: si(rms),
        current_avg_waveform: si(avg),
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
    fn charge_swing_is_the_hart_ccm_ripple_charge_in_steady_state() {
        // Hart 2011, section 7.2: in CCM with the secondary valley above the load current the
        // capacitor loses I_o·D·T while the switch is on, and regains it during the pulse.
        // A pulse 3 A → 1.5 A over 0.6·T averages 1.35 A; with I_o = 1.35 A the charge is
        // balanced and ΔQ = 1.35 × 0.4 × 10 µs = 5.4 µC (hand calculation of the formula).
        let (d, t) = (0.4, 1e-5);
        let io = (3.0 + 1.5) / 2.0 * (1.0 - d);
        let dq = charge_swing(&[((1.0 - d) * t, 3.0, 1.5), (d * t, 0.0, 0.0)], io);
        assert!((dq - io * d * t).abs() < 1e-15, "{dq}");
        // DCM triangle 2 A → 0 over 0.5·T, I_o = 0.5 A: the capacitor charges until the
        // current falls to I_o (t = 0.375·T), gaining ½·(2 − 0.5)·0.375·T = 0.28125·T
        let dq = charge_swing(&[(0.5 * t, 2.0, 0.0), (0.5 * t, 0.0, 0.0)], 0.5);
        assert!((dq - 0.28125 * t).abs() < 1e-15, "{dq}");
    }
}
