//! Type-2 compensation around the shunt reference with the optocoupler's fast lane: the zero
//! capacitor across the reference, the LED resistor that sets the mid-band gain, and the pole
//! capacitor at the controller's feedback pin, solved for a crossover and phase margin and
//! rounded to preferred values.

use super::divider::show;
use super::margins::{loop_margins, LoopMargins};
use super::plant::LoopPlant;
use crate::error::{Error, Result};
use crate::passives::e_series::nearest_value;
use crate::passives::ESeries;
use crate::report::{Field, Record};
use crate::units::validate::{non_negative, number_within, positive, positive_number};
use crate::units::{si, Capacitance, ElectricCurrent, ElectricalResistance, Frequency};
use num_complex::Complex64;
use std::f64::consts::PI;

/// Smallest pole capacitor worth fitting; below it none is fitted (common practice, no
/// published source: board capacitance is of this order).
pub const MIN_POLE_CAPACITANCE_F: f64 = 10e-12;
/// Smallest phase boost the network is designed for, degrees; a plant with more phase than
/// needed gets this boost and a phase margin above the target.
pub const MIN_PHASE_BOOST_DEG: f64 = 10.0;

/// The type-2 network with the fast lane, and the controller side of the loop.
///
/// Loop (negative-feedback sign removed): the LED current is
/// î_F = v̂_out·(1 + 1/(s·R_t·C_z))/R_LED (the output through R_LED, plus the shunt's
/// integrator −v̂_out/(s·R_t·C_z) at its cathode); the collector current CTR·î_F; the pin
/// node (R_pu with the optocoupler's capacitance and C_p) gives the pole
/// f_p = 1/(2π·R_pu·(C_opto + C_p)), C_opto = 1/(2π·R_pu·f_opto); the peak-current command
/// moves k_m = I_lim/(I_C,zero − I_C,full) amperes per ampere of collector current.
///
/// Without the fast lane (the LED resistor fed from a separate DC rail, `zero_resistor` set):
/// î_F = v̂_out·R_z/(R_t·R_LED)·(1 + 1/(s·R_z·C_z)), R_z in series with C_z from the cathode
/// to the reference input; the zero is 1/(2π·R_z·C_z) and the mid-band gain gains R_z/R_t.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Type2Network {
    /// Upper divider resistor R_t (sets the zero with C_z).
    pub upper_resistor: ElectricalResistance,
    /// LED resistor R_LED (the fast lane).
    pub led_resistor: ElectricalResistance,
    /// Zero capacitor C_z from the shunt's cathode to its reference input.
    pub zero_capacitor: Capacitance,
    /// Resistor R_z in series with C_z when the LED is fed from a separate rail (no fast
    /// lane); None: the LED resistor is fed from the output (the fast lane).
    pub zero_resistor: Option<ElectricalResistance>,
    /// Pole capacitor C_p at the feedback pin (zero: none fitted).
    pub pole_capacitor: Capacitance,
    /// Small-signal resistance at the feedback pin R_pu.
    pub pin_resistance: ElectricalResistance,
    /// The optocoupler's pole with R_pu alone.
    pub optocoupler_pole: Frequency,
    /// Peak-current command per collector current, k_m (A/A).
    pub modulator_gain: f64,
}

impl Type2Network {
    /// The modulator gain k_m = I_lim/(I_C,zero − I_C,full) (A/A): the collector current moves
    /// the peak-current command from the limit (full power) to zero (no switching) linearly.
    pub fn modulator_gain_for(
        current_limit: ElectricCurrent,
        zero_duty: ElectricCurrent,
        full_duty: ElectricCurrent,
    ) -> Result<f64> {
        let il = positive("current_limit", current_limit)?.value;
        let span = zero_duty.value - full_duty.value;
        if !(span > 0.0 && span.is_finite()) {
            return Err(Error::invalid(
                "the feedback pin's zero-duty current must be above its full-duty current",
            ));
        }
        Ok(il / span)
    }

    /// Checks the values, naming each.
    pub fn validate(&self) -> Result<()> {
        positive("upper_resistor", self.upper_resistor)?;
        positive("led_resistor", self.led_resistor)?;
        positive("zero_capacitor", self.zero_capacitor)?;
        if let Some(r) = self.zero_resistor {
            positive("zero_resistor", r)?;
        }
        non_negative("pole_capacitor", self.pole_capacitor)?;
        positive("feedback_pin_resistance", self.pin_resistance)?;
        positive("optocoupler_pole", self.optocoupler_pole)?;
        positive_number("modulator_gain", self.modulator_gain)?;
        Ok(())
    }

    /// The zero, 1/(2π·R_t·C_z) with the fast lane, 1/(2π·R_z·C_z) without.
    pub fn zero_frequency(&self) -> Frequency {
        let r = self.zero_resistor.unwrap_or(self.upper_resistor).value;
        si(1.0 / (2.0 * PI * r * self.zero_capacitor.value))
    }

    /// The pin pole, 1/(2π·R_pu·(C_opto + C_p)).
    pub fn pole_frequency(&self) -> Frequency {
        let rpu = self.pin_resistance.value;
        let c_opto = 1.0 / (2.0 * PI * rpu * self.optocoupler_pole.value);
        si(1.0 / (2.0 * PI * rpu * (c_opto + self.pole_capacitor.value)))
    }

    /// Mid-band gain from output volts to peak-current command, k_m·CTR/R_LED (A/V), times
    /// R_z/R_t without the fast lane.
    pub fn mid_band_gain(&self, ctr: f64) -> f64 {
        let k = match self.zero_resistor {
            Some(rz) => rz.value / self.upper_resistor.value,
            None => 1.0,
        };
        k * self.modulator_gain * ctr / self.led_resistor.value
    }

    /// The compensator at a frequency: peak-current command per output volt (A/V, complex),
    /// k_m·CTR/R_LED·(1 + 1/(s·R_t·C_z))/(1 + s/ω_p).
    /// Reference: the shunt-reference type-2 with the fast lane, Basso, *Designing Control
    /// Loops for Linear and Switching Power Supplies* (2012), the optocoupler chapter.
    pub fn response(&self, ctr: f64, frequency: Frequency) -> Complex64 {
        self.response_w(ctr, 2.0 * PI * frequency.value)
    }

    pub(crate) fn response_w(&self, ctr: f64, w: f64) -> Complex64 {
        let s = Complex64::new(0.0, w);
        let one = Complex64::new(1.0, 0.0);
        let wz = 2.0 * PI * self.zero_frequency().value;
        let wp = 2.0 * PI * self.pole_frequency().value;
        (one + wz / s) / (one + s / wp) * self.mid_band_gain(ctr)
    }
}

/// What the compensation is solved for.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct CompensationTarget {
    /// Wanted crossover frequency (below half the switching frequency).
    pub crossover_frequency: Frequency,
    /// Wanted phase margin, degrees (20 … 85).
    pub phase_margin: f64,
    /// CTR the crossover is placed at (the highest gives the highest crossover).
    pub ctr: f64,
    /// Series of the capacitors.
    pub capacitor_series: ESeries,
    /// Series of the LED resistor.
    pub resistor_series: ESeries,
    /// With the fast lane (LED resistor from the output) the LED resistor sets the gain; false:
    /// the LED resistor is the bias's and a zero resistor R_z sets the gain.
    pub fast_lane: bool,
    /// The LED resistor range the bias allows (min, max).
    pub led_resistor_range: (ElectricalResistance, ElectricalResistance),
    /// Highest zero frequency allowed (a lower crossover elsewhere may need the zero below
    /// the k-factor's place); None: no limit.
    pub zero_frequency_limit: Option<Frequency>,
}

/// A type-2 network solved for a target, with the result after rounding.
#[derive(Clone, Debug, PartialEq)]
pub struct Type2Design {
    /// The rounded network.
    pub network: Type2Network,
    /// Target crossover.
    pub target_crossover: Frequency,
    /// Target phase margin, degrees.
    pub target_phase_margin: f64,
    /// Plant phase at the target crossover, degrees.
    pub plant_phase: f64,
    /// Phase boost the network gives at the target, degrees.
    pub phase_boost: f64,
    /// Ideal zero capacitor before rounding.
    pub ideal_zero_capacitor: Capacitance,
    /// Ideal pole capacitor before rounding (zero when the optocoupler's pole is low enough).
    pub ideal_pole_capacitor: Capacitance,
    /// Ideal gain-setting resistor before rounding: R_LED with the fast lane, R_z without.
    pub ideal_gain_resistor: ElectricalResistance,
    /// CTR the design is placed at.
    pub design_ctr: f64,
    /// Margins with the rounded values at the design corner and CTR.
    pub achieved: LoopMargins,
}

/// Solves the type-2 network for a crossover and phase margin on a plant.
///
/// Method (the k-factor placement): the boost needed at f_c is
/// φ = PM − 90° − ∠G(f_c) (the network gives −90° from its integrator plus
/// atan(f_c/f_z) − atan(f_c/f_p)), at least [`MIN_PHASE_BOOST_DEG`]; k = tan(45° + φ/2),
/// f_z = f_c/k, f_p = k·f_c. The pin pole cannot be above the optocoupler's own pole: if
/// k·f_c > f_opto, no pole capacitor is fitted and f_z solves
/// atan(f_c/f_z) = φ + atan(f_c/f_opto); f_z is lowered to `zero_frequency_limit` if that is
/// below. C_z = 1/(2π·R_t·f_z) and
/// C_p = (1/f_p − 1/f_opto)/(2π·R_pu) are rounded to `capacitor_series` (C_p below
/// [`MIN_POLE_CAPACITANCE_F`] is left out); then with the fast lane
/// R_LED = k_m·CTR·|G(f_c)|·|1 + 1/(s·R_t·C_z)|/|1 + s/ω_p| at f_c (|T(f_c)| = 1), rounded to
/// `resistor_series`; without it R_LED is the bias's and R_z = R_t·R_LED/(k_m·CTR·|G|·|…|)
/// is rounded, then C_z = 1/(2π·R_z·f_z). The margins are found numerically with the rounded
/// values. Errors: `crossover_frequency` at or above f_s/2 or
/// needing a boost of 90° or more (`phase_margin`), an R_LED outside the bias range
/// (`crossover_frequency`, with the fix).
/// Reference: k-factor placement, Venable's method as presented in Basso, *Designing Control
/// Loops* (2012), the type-2 chapter; the network as in [`Type2Network`].
pub fn compensation_type2(
    plant: &LoopPlant,
    network: &Type2Network,
    target: &CompensationTarget,
) -> Result<Type2Design> {
    plant.validate()?;
    let fs = plant.switching_frequency.value;
    let fc = positive("crossover_frequency", target.crossover_frequency)?.value;
    if fc >= 0.5 * fs {
        return Err(Error::out_of_range(format!(
            "`crossover_frequency` {} must be below half the switching frequency ({}), where \
             the model holds",
            show(target.crossover_frequency),
            show(si::<Frequency>(0.5 * fs))
        )));
    }
    let pm = number_within("phase_margin", target.phase_margin, 20.0, 85.0)?;
    let ctr = positive_number("ctr", target.ctr)?;
    let rt = positive("upper_resistor", network.upper_resistor)?.value;
    let rpu = positive("feedback_pin_resistance", network.pin_resistance)?.value;
    let f_opto = positive("optocoupler_pole", network.optocoupler_pole)?.value;
    positive_number("modulator_gain", network.modulator_gain)?;
    let wc = 2.0 * PI * fc;
    let g = plant.response(wc);
    let plant_phase = g.arg().to_degrees();
    // wrap the plant phase into (−270°, 90°]: a plant rarely leads by more than 90°
    let plant_phase = if plant_phase > 90.0 {
        plant_phase - 360.0
    } else {
        plant_phase
    };
    let boost = (pm - 90.0 - plant_phase).max(MIN_PHASE_BOOST_DEG);
    if boost >= 89.0 {
        return Err(Error::infeasible(format!(
            "`phase_margin` {pm}° at `crossover_frequency` {} needs a phase boost of {boost:.1}°, \
             more than a type-2 network gives (the plant's phase there is {plant_phase:.1}°); \
             lower the crossover or the phase margin",
            show(target.crossover_frequency)
        )));
    }
    let k = (45.0 + boost / 2.0).to_radians().tan();
    let (fz, fp, cp_ideal) = if k * fc <= f_opto {
        let fp = k * fc;
        (fc / k, fp, (1.0 / fp - 1.0 / f_opto) / (2.0 * PI * rpu))
    } else {
        let lead = boost + (fc / f_opto).atan().to_degrees();
        if lead >= 89.0 {
            return Err(Error::infeasible(format!(
                "the optocoupler's pole at {} takes too much phase at `crossover_frequency` {}: \
                 the zero would need {lead:.1}° of lead; lower the crossover, or the pin \
                 resistance, or use a faster optocoupler",
                show(network.optocoupler_pole),
                show(target.crossover_frequency)
            )));
        }
        (fc / lead.to_radians().tan(), f_opto, 0.0)
    };
    let _ = fp;
    let fz = match target.zero_frequency_limit {
        Some(l) => fz.min(positive("zero_frequency_limit", l)?.value),
        None => fz,
    };
    let cp = if cp_ideal >= MIN_POLE_CAPACITANCE_F {
        nearest_value(cp_ideal, target.capacitor_series)?
    } else {
        0.0
    };
    let mut net = Type2Network {
        pole_capacitor: si(cp),
        ..*network
    };
    let (rmin, rmax) = (
        target.led_resistor_range.0.value,
        target.led_resistor_range.1.value,
    );
    let (cz_ideal, gain_ideal) = if target.fast_lane {
        let cz_ideal = 1.0 / (2.0 * PI * rt * fz);
        net.zero_capacitor = si(nearest_value(cz_ideal, target.capacitor_series)?);
        net.zero_resistor = None;
        net.led_resistor = si(1.0);
        let rled_ideal = (g * net.response_w(ctr, wc)).norm(); // |T| with R_LED = 1 Ω
        let rled = nearest_value(rled_ideal, target.resistor_series)?;
        if rled > rmax * (1.0 + 1e-9) {
            return Err(Error::infeasible(format!(
                "`crossover_frequency` {} at CTR {ctr} needs an LED resistor of {}, above the {} \
                 the bias allows (the fast lane's gain CTR·k_m/R_LED is too high): raise the \
                 crossover, or feed the LED from a separate rail (`led_supply_voltage`) to cut \
                 the fast lane",
                show(target.crossover_frequency),
                show(si::<ElectricalResistance>(rled_ideal)),
                show(target.led_resistor_range.1)
            )));
        }
        if rled < rmin * (1.0 - 1e-9) {
            return Err(Error::infeasible(format!(
                "`crossover_frequency` {} at CTR {ctr} needs an LED resistor of {}, below the {} \
                 that keeps the LED within its current rating: lower the crossover, or feed the \
                 LED from a separate rail (`led_supply_voltage`) to cut the fast lane",
                show(target.crossover_frequency),
                show(si::<ElectricalResistance>(rled_ideal)),
                show(target.led_resistor_range.0)
            )));
        }
        net.led_resistor = si(rled);
        (cz_ideal, rled_ideal)
    } else {
        // R_LED from the bias; R_z sets the gain: |T(f_c)| = 1 with R_z = R_t (unit factor)
        net.zero_resistor = Some(si(rt));
        net.zero_capacitor = si(1.0 / (2.0 * PI * rt * fz));
        let rz_ideal = rt / (g * net.response_w(ctr, wc)).norm();
        let rz = nearest_value(rz_ideal, target.resistor_series)?;
        let cz_ideal = 1.0 / (2.0 * PI * rz * fz);
        net.zero_resistor = Some(si(rz));
        net.zero_capacitor = si(nearest_value(cz_ideal, target.capacitor_series)?);
        (cz_ideal, rz_ideal)
    };
    let achieved = margins_of(plant, &net, ctr, super::regulation::DEFAULT_POINTS)?;
    Ok(Type2Design {
        network: net,
        target_crossover: target.crossover_frequency,
        target_phase_margin: pm,
        plant_phase,
        phase_boost: boost,
        ideal_zero_capacitor: si(cz_ideal),
        ideal_pole_capacitor: si(cp_ideal.max(0.0)),
        ideal_gain_resistor: si(gain_ideal),
        design_ctr: ctr,
        achieved,
    })
}

/// The loop gain T(f) = G(f)·H(f) of a plant and a network at a CTR (negative-feedback sign
/// removed).
pub fn loop_gain(
    plant: &LoopPlant,
    network: &Type2Network,
    ctr: f64,
    frequency: Frequency,
) -> Complex64 {
    let w = 2.0 * PI * frequency.value;
    plant.response(w) * network.response_w(ctr, w)
}

/// Margins of a plant with a network at a CTR over f_s/10⁴ … f_s/2 with `points` frequencies.
pub fn margins_of(
    plant: &LoopPlant,
    network: &Type2Network,
    ctr: f64,
    points: usize,
) -> Result<LoopMargins> {
    let fs = plant.switching_frequency.value;
    loop_margins(
        |f| loop_gain(plant, network, ctr, f),
        si(fs * 1e-4),
        si(fs * 0.5),
        points,
    )
}

impl Record for Type2Design {
    fn fields(&self) -> Vec<Field> {
        let n = &self.network;
        let mut v = vec![
            Field::quantity("upper_resistor", n.upper_resistor),
            Field::quantity("led_resistor", n.led_resistor),
            Field::new("fast_lane", n.zero_resistor.is_none()),
        ];
        if let Some(r) = n.zero_resistor {
            v.push(Field::quantity("zero_resistor", r));
        }
        v.extend([
            Field::quantity("zero_capacitor", n.zero_capacitor),
            Field::quantity("pole_capacitor", n.pole_capacitor),
            Field::quantity("zero_frequency", n.zero_frequency()),
            Field::quantity("pole_frequency", n.pole_frequency()),
            Field::new("modulator_gain", n.modulator_gain),
            Field::new("design_ctr", self.design_ctr),
            Field::quantity("target_crossover", self.target_crossover),
            Field::new("target_phase_margin_degrees", self.target_phase_margin),
            Field::new("plant_phase_degrees", self.plant_phase),
            Field::new("phase_boost_degrees", self.phase_boost),
            Field::quantity("ideal_zero_capacitor", self.ideal_zero_capacitor),
            Field::quantity("ideal_pole_capacitor", self.ideal_pole_capacitor),
            Field::quantity("ideal_gain_resistor", self.ideal_gain_resistor),
        ]);
        for f in self.achieved.fields() {
            v.push(Field {
                name: format!("achieved_{}", f.name),
                value: f.value,
            });
        }
        v
    }
}
