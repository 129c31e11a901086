//! The small-signal model of a peak-current-mode flyback, CCM and DCM: control-to-output
//! transfer function with the load pole, the output capacitor's ESR zero, the CCM
//! right-half-plane zero, Ridley's sampling double pole at half the switching frequency with
//! slope compensation, and the post LC filter, as complex values over frequency.

use crate::error::{Error, Result};
use crate::flyback::ConductionMode;
use crate::report::{Field, Record};
use crate::units::validate::{non_negative, number_within, positive, positive_number};
use crate::units::{
    si, Capacitance, ElectricCurrent, ElectricPotential, ElectricalResistance, Frequency,
    Inductance,
};
use num_complex::Complex64;
use std::f64::consts::PI;

/// The power stage at one operating point, as the loop sees it.
///
/// Every value is at the corner's bulk valley (the worst duty cycle). Several outputs are
/// folded into one equivalent load on the regulated output, R = V_out²/P_total (ideal
/// coupling between the secondaries).
#[derive(Clone, Debug, PartialEq)]
pub struct LoopPlant {
    /// Corner name (`low_line_full_load`, …) or a label of your own.
    pub corner: String,
    /// Conduction mode (boundary is treated as DCM).
    pub mode: ConductionMode,
    /// Switching frequency.
    pub switching_frequency: Frequency,
    /// Input (bulk) voltage.
    pub input_voltage: ElectricPotential,
    /// Reflected voltage n·(V_out + V_F).
    pub reflected_voltage: ElectricPotential,
    /// Turns ratio N_p/N_s of the regulated output.
    pub turns_ratio: f64,
    /// Primary inductance.
    pub primary_inductance: Inductance,
    /// Duty cycle.
    pub duty_cycle: f64,
    /// Regulated output voltage.
    pub output_voltage: ElectricPotential,
    /// Equivalent load resistance on the regulated output, V_out²/P_total.
    pub load_resistance: ElectricalResistance,
    /// Primary peak current.
    pub primary_current_peak: ElectricCurrent,
    /// Primary current at turn-on (zero in DCM).
    pub primary_current_valley: ElectricCurrent,
    /// Output capacitance (at the rectifier).
    pub output_capacitance: Capacitance,
    /// Its ESR.
    pub output_esr: ElectricalResistance,
    /// LC post filter (inductance, capacitance), the output sensed after it.
    pub post_filter: Option<(Inductance, Capacitance)>,
    /// Slope-compensation ramp as a fraction of the primary off-slope V_r/L_p (0.5 = half).
    pub ramp_fraction: f64,
}

fn z_cap(c: f64, s: Complex64) -> Complex64 {
    Complex64::new(1.0, 0.0) / (s * c)
}

fn par(a: Complex64, b: Complex64) -> Complex64 {
    a * b / (a + b)
}

impl LoopPlant {
    /// Checks every field, naming it and its unit: positive values, 0 < D < 1, a ramp of
    /// 0 … 5 times the off-slope.
    pub fn validate(&self) -> Result<()> {
        positive("switching_frequency", self.switching_frequency)?;
        positive("input_voltage", self.input_voltage)?;
        positive("reflected_voltage", self.reflected_voltage)?;
        positive_number("turns_ratio", self.turns_ratio)?;
        positive("primary_inductance", self.primary_inductance)?;
        number_within("duty_cycle", self.duty_cycle, 1e-3, 0.999)?;
        positive("output_voltage", self.output_voltage)?;
        positive("load_resistance", self.load_resistance)?;
        positive("primary_current_peak", self.primary_current_peak)?;
        non_negative("primary_current_valley", self.primary_current_valley)?;
        positive("output_capacitance", self.output_capacitance)?;
        non_negative("output_esr", self.output_esr)?;
        if let Some((l, c)) = self.post_filter {
            positive("post_filter_inductance", l)?;
            positive("post_filter_capacitance", c)?;
        }
        number_within("ramp_fraction", self.ramp_fraction, 0.0, 5.0)?;
        Ok(())
    }

    fn is_ccm(&self) -> bool {
        self.mode == ConductionMode::Continuous
    }

    /// Slope-compensation factor m_c = 1 + S_e/S_n, with S_n = V_in/L_p the primary on-slope
    /// and S_e = ramp_fraction·V_r/L_p (Ridley 1991).
    pub fn slope_factor(&self) -> f64 {
        1.0 + self.ramp_fraction * self.reflected_voltage.value / self.input_voltage.value
    }

    /// CCM right-half-plane zero, f = n²·R·(1 − D)²/(2π·D·L_p) (the buck-boost RHP zero with
    /// the load referred to the primary); None in DCM.
    /// Reference: Erickson & Maksimović, 3rd ed. (2020), section 8.2 / Table 8.2 (buck-boost
    /// ω_z = D'²R/(D·L)), with the transformer's n² (equation number recalled from memory).
    pub fn rhp_zero_frequency(&self) -> Option<Frequency> {
        if !self.is_ccm() {
            return None;
        }
        let d = self.duty_cycle;
        let n = self.turns_ratio;
        Some(si(n * n * self.load_resistance.value * (1.0 - d).powi(2)
            / (2.0 * PI * d * self.primary_inductance.value)))
    }

    /// Load pole of the simple current-mode model: CCM (1 + D)/(2π·R·C), DCM 2/(2π·R·C).
    /// Reference: Erickson & Maksimović, 3rd ed. (2020), ch. 18 (current-programmed control,
    /// simple approximation; the DCM result from the power balance ½·L·i_pk²·f = v·i).
    pub fn load_pole_frequency(&self) -> Frequency {
        let rc = self.load_resistance.value * self.output_capacitance.value;
        let k = if self.is_ccm() {
            1.0 + self.duty_cycle
        } else {
            2.0
        };
        si(k / (2.0 * PI * rc))
    }

    /// ESR zero of the output capacitor, 1/(2π·ESR·C); None without ESR.
    pub fn esr_zero_frequency(&self) -> Option<Frequency> {
        let r = self.output_esr.value;
        (r > 0.0).then(|| si(1.0 / (2.0 * PI * r * self.output_capacitance.value)))
    }

    /// Quality factor of the sampling double pole at f_s/2, Q_p = 1/(π·(m_c·D' − 0.5)); None
    /// in DCM (the current starts from zero each cycle) and when m_c·D' ≤ 0.5 (subharmonic
    /// oscillation: the current loop is unstable).
    /// Reference: Ridley, "A new, continuous-time model for current-mode control", IEEE Trans.
    /// Power Electronics, 1991.
    pub fn sampling_quality_factor(&self) -> Option<f64> {
        if !self.is_ccm() {
            return None;
        }
        let x = self.slope_factor() * (1.0 - self.duty_cycle) - 0.5;
        (x > 0.0).then(|| 1.0 / (PI * x))
    }

    /// Control-to-output transfer function at a frequency: output volts per ampere of the
    /// peak-current command (V/A, complex).
    ///
    /// CCM (Ridley 1991 with the averaged flyback): d̂ = F_m·(î_c − H_e(s)·î_L − k_r·v̂₁),
    /// F_m = 1/((S_n + S_e)·T_s), H_e(s) = 1 + s/(ω_n·Q_z) + s²/ω_n², ω_n = π/T_s,
    /// Q_z = −2/π, k_r = n·D'²·T_s/(2·L_p); s·L_p·î_L = (V_in + V_r)·d̂ − n·D'·v̂₁;
    /// î_d = n·(D'·î_L − I_L·d̂); v̂₁ = Z·î_d with Z the output capacitor (with ESR) in
    /// parallel with the load path (post filter and load). The three equations are solved at
    /// each frequency. DCM: î_pk = î_c/m_c, î_d = (2·I_o/I_pk)·î_pk − (I_o/V)·v̂₁ from the
    /// power balance ½·L·i_pk²·f = v·i_d. The post filter divides v̂₁ by
    /// (s·L_f + Z_load)/Z_load. Valid up to f_s/2. Ideal transformer coupling; the
    /// rectifier's drop is constant; line held constant.
    /// Reference: Ridley (1991); Erickson & Maksimović, 3rd ed. (2020), ch. 18 (the averaged
    /// current-programmed model, k_r as the output-voltage term of the more accurate model —
    /// recalled from memory); Basso, *Designing Control Loops* (2012), the current-mode
    /// flyback chapter.
    pub fn control_to_output(&self, frequency: Frequency) -> Complex64 {
        self.response(2.0 * PI * frequency.value)
    }

    pub(crate) fn response(&self, w: f64) -> Complex64 {
        let s = Complex64::new(0.0, w);
        let one = Complex64::new(1.0, 0.0);
        let r = self.load_resistance.value;
        let c1 = self.output_capacitance.value;
        let z1 = z_cap(c1, s) + self.output_esr.value;
        let (z2, h_filter) = match self.post_filter {
            Some((lf, cf)) => {
                let zl = par(Complex64::new(r, 0.0), z_cap(cf.value, s));
                let z2 = s * lf.value + zl;
                (z2, zl / z2)
            }
            None => (Complex64::new(r, 0.0), one),
        };
        let z = par(z1, z2);
        let v = self.output_voltage.value;
        let io = v / r;
        let ipk = self.primary_current_peak.value;
        let g1 = if self.is_ccm() {
            let t = 1.0 / self.switching_frequency.value;
            let l = self.primary_inductance.value;
            let n = self.turns_ratio;
            let d = self.duty_cycle;
            let dp = 1.0 - d;
            let vg = self.input_voltage.value;
            let vr = self.reflected_voltage.value;
            let i_l = 0.5 * (ipk + self.primary_current_valley.value);
            let sn = vg / l;
            let se = self.ramp_fraction * vr / l;
            let fm = 1.0 / ((sn + se) * t);
            let wn = PI / t;
            let qz = -2.0 / PI;
            let he = one + s / (wn * qz) + s * s / (wn * wn);
            let kr = n * dp * dp * t / (2.0 * l);
            let a = (vg + vr) * fm;
            let p = s * l + he * a;
            let b = a * kr + n * dp;
            let e = he * (n * i_l * fm) + n * dp;
            let num = e * a / p - n * i_l * fm;
            let den = one / z - n * i_l * fm * kr + e * b / p;
            num / den
        } else {
            let k = 2.0 * io / ipk / self.slope_factor();
            Complex64::new(k, 0.0) / (one / z + io / v)
        };
        g1 * h_filter
    }

    /// Current loop alone (output held, v̂₁ = 0), î_L/î_c = A/(s·L_p + A·H_e(s)) with
    /// A = F_m·(V_in + V_r) = L_p/(D'·m_c·T_s): exactly Ridley's double pole
    /// 1/(1 + s/(ω_n·Q_p) + s²/ω_n²), Q_p = 1/(π·(m_c·D' − 0.5)), ω_n = π/T_s, with H_e in its
    /// quadratic form. CCM only; None in DCM. Reference: Ridley (1991).
    pub fn current_loop(&self, frequency: Frequency) -> Option<Complex64> {
        if !self.is_ccm() {
            return None;
        }
        let s = Complex64::new(0.0, 2.0 * PI * frequency.value);
        let one = Complex64::new(1.0, 0.0);
        let t = 1.0 / self.switching_frequency.value;
        let l = self.primary_inductance.value;
        let vg = self.input_voltage.value;
        let vr = self.reflected_voltage.value;
        let fm = 1.0 / ((vg / l + self.ramp_fraction * vr / l) * t);
        let wn = PI / t;
        let he = one + s / (wn * (-2.0 / PI)) + s * s / (wn * wn);
        let a = (vg + vr) * fm;
        Some(Complex64::new(a, 0.0) / (s * l + he * a))
    }

    /// Errors when the current loop is unstable (CCM with m_c·D' ≤ 0.5), naming the ramp.
    pub fn check_current_loop(&self) -> Result<()> {
        if self.is_ccm() && self.sampling_quality_factor().is_none() {
            return Err(Error::infeasible(format!(
                "corner {}: subharmonic oscillation, m_c·(1 − D) = {:.3} ≤ 0.5 at D = {:.3}; \
                 raise `ramp_fraction` (now {})",
                self.corner,
                self.slope_factor() * (1.0 - self.duty_cycle),
                self.duty_cycle,
                self.ramp_fraction
            )));
        }
        Ok(())
    }
}

impl Record for LoopPlant {
    fn fields(&self) -> Vec<Field> {
        let mut v = vec![
            Field::new("corner", self.corner.as_str()),
            Field::new("mode", self.mode.as_str()),
            Field::new("duty_cycle", self.duty_cycle),
            Field::quantity("load_resistance", self.load_resistance),
            Field::quantity("load_pole_frequency", self.load_pole_frequency()),
        ];
        if let Some(f) = self.esr_zero_frequency() {
            v.push(Field::quantity("esr_zero_frequency", f));
        }
        if let Some(f) = self.rhp_zero_frequency() {
            v.push(Field::quantity("rhp_zero_frequency", f));
        }
        v.push(Field::new("slope_factor", self.slope_factor()));
        if let Some(q) = self.sampling_quality_factor() {
            v.push(Field::new("sampling_quality_factor", q));
        }
        let dc = self.response(2.0 * PI * 1e-3 * self.load_pole_frequency().value);
        v.push(Field::new("dc_gain_volts_per_ampere", dc.norm()));
        v
    }
}
