//! One corner of line and load: bulk voltage, duty cycle, mode, currents on every winding,
//! stresses and the loss budget, with the efficiency iterated until it settles.

use super::clamp::{clamp_at, ClampDesign};
use super::losses::LossBudget;
use super::output::{secondary_point, SecondaryPoint, SecondaryWave};
use super::spec::{EfficiencyModel, FlybackSpec, InputRange};
use super::waveform::{cycle_for_power, trapezoid_avg, trapezoid_rms, ConductionMode, Cycle};
use crate::error::{Error, Result};
use crate::mains::{bulk_capacitor_near, BulkCapacitorSpec};
use crate::report::{Field, Record};
use crate::units::{si, ElectricCurrent, ElectricPotential, Frequency, Power, Quantity, Time};

/// Largest number of efficiency iterations before giving up.
pub const MAX_EFFICIENCY_ITERATIONS: usize = 200;
/// The efficiency iteration stops when the converter input power changes by less than this
/// fraction in a step (about the precision results are reported and pinned to, with margin).
pub const EFFICIENCY_TOLERANCE: f64 = 1e-9;

/// The flyback at one corner of line and load.
#[derive(Clone, Debug, PartialEq)]
pub struct OperatingPoint {
    /// Corner name (`low_line_full_load`, `current_limit_high_line`, …).
    pub corner: String,
    /// Line voltage (RMS for an AC input, the bus voltage for DC).
    pub line_voltage: ElectricPotential,
    /// Load as a fraction of full load on every output.
    pub load_fraction: f64,
    /// Power delivered to the loads.
    pub output_power: Power,
    /// Power drawn from the line.
    pub input_power: Power,
    /// Power drawn from the bulk capacitor by the converter.
    pub converter_input_power: Power,
    /// Power stored in and released by the magnetising inductance each second, ½·L·(I_pk² −
    /// I_v²)·f: the converter input power less the losses drawn from the input outside it
    /// (switch conduction, capacitive and overlap losses, the leakage inductance's own energy
    /// ½·L_lk·I_pk²·f, and the controller supply when there is no bias winding). With a fixed
    /// efficiency estimate the losses are unknown and the whole converter input power is taken.
    /// The cycle (duty, currents) is the one that moves this power.
    pub magnetising_power: Power,
    /// Bulk capacitor peak voltage.
    pub bulk_peak_voltage: ElectricPotential,
    /// Bulk capacitor valley voltage; the operating point is computed here (worst duty and current).
    pub bulk_valley_voltage: ElectricPotential,
    /// Bridge conduction time per half line cycle (zero for DC).
    pub bulk_conduction_time: Time,
    /// Bulk capacitor ripple current, RMS: line-frequency and switching-frequency parts together,
    /// √(I_lf² + I_hf²) with I_hf = √(I_rms² − I_avg²) of the primary current (the two parts are
    /// at unrelated frequencies, so their squares add).
    pub bulk_ripple_current_rms: ElectricCurrent,
    /// Conduction mode.
    pub mode: ConductionMode,
    /// Duty cycle: CCM D = V_r/(V_valley + V_r) (volt-second balance); DCM
    /// D = √(2·P·L·f)/V_valley (½·L·I_pk²·f = P). Erickson & Maksimović, 3rd ed. (2020), ch. 5–6.
    pub duty_cycle: f64,
    /// Fraction of the period the secondaries conduct: CCM 1 − D; DCM I_pk·L·f/V_r.
    pub demagnetising_duty: f64,
    /// Switch on-time.
    pub on_time: Time,
    /// Switching frequency here: the fixed one, or where a foldback controller has lowered it,
    /// or in burst the average pulse rate.
    pub switching_frequency: Frequency,
    /// Primary inductance over the boundary inductance at this point: < 1 DCM, > 1 CCM.
    pub inductance_ratio: f64,
    /// Magnetising power at which the mode changes between CCM and DCM at this line.
    pub boundary_power: Power,
    /// Primary (switch) current, peak.
    pub primary_current_peak: ElectricCurrent,
    /// Primary current at turn-on (zero in DCM).
    pub primary_current_valley: ElectricCurrent,
    /// Primary current, RMS, of the trapezoid (triangle in DCM) over the on-time:
    /// √(D·(I_pk² + I_pk·I_v + I_v²)/3).
    pub primary_current_rms: ElectricCurrent,
    /// Primary current, average over the period: D·(I_pk + I_v)/2 (= P/V_valley).
    pub primary_current_avg: ElectricCurrent,
    /// Each output winding, in the order of the spec.
    pub secondaries: Vec<SecondaryPoint>,
    /// Clamp voltage here (RCD: average; Zener: nominal).
    pub clamp_voltage: ElectricPotential,
    /// Highest clamp voltage here: RCD the top of the capacitor ripple, Zener the highest of
    /// its tolerance and heating.
    pub clamp_voltage_max: ElectricPotential,
    /// Drain voltage peak: bulk peak + highest clamp voltage + the clamp diode's forward
    /// recovery + the ringing allowance.
    pub drain_voltage_peak: ElectricPotential,
    /// Loss budget; sums to `input_power`.
    pub losses: LossBudget,
    /// Output power over input power.
    pub efficiency: f64,
    /// Iterations the efficiency took to settle.
    pub efficiency_iterations: usize,
    /// Relative change of the converter input power in the last efficiency iteration.
    pub efficiency_residual: f64,
}

/// Everything fixed while corners are evaluated (SI numbers, inputs already validated).
pub(crate) struct Context<'a> {
    pub spec: &'a FlybackSpec,
    pub f: f64,
    pub vr: f64,
    pub l: f64,
    pub llk: f64,
    pub bulk_capacitance: f64,
    pub clamp: ClampDesign,
    /// Turns ratio N_p/N_s per output.
    pub turns: Vec<f64>,
    /// Post filter gain at f per output.
    pub filter_gain: Vec<Option<f64>>,
    /// Least peak current of a foldback or burst controller (zero: none, or not yet known).
    pub min_peak: f64,
}

impl Context<'_> {
    /// The switching frequency (the average pulse rate in burst) at which the controller
    /// moves `p` at input voltage `vin`: the fixed frequency unless a foldback or burst
    /// controller holds its least peak current I_min, where DCM needs ½·L·I_min²·f = P, so
    /// f = 2·P/(L·I_min²) (foldback: at least its minimum frequency).
    pub fn operating_frequency(&self, vin: f64, p: f64) -> f64 {
        use super::spec::LightLoadControl as C;
        let floor = match self.spec.light_load_control {
            C::FixedFrequency => return self.f,
            C::FrequencyFoldback {
                minimum_frequency, ..
            } => minimum_frequency.value,
            C::Burst { .. } => 0.0,
        };
        let imin = self.min_peak;
        if imin <= 0.0 || p <= 0.0 {
            return self.f;
        }
        let c = cycle_for_power(self.l, vin, p, self.vr, self.f);
        if c.mode == ConductionMode::Continuous || c.i_peak >= imin {
            return self.f;
        }
        (2.0 * p / (self.l * imin * imin)).clamp(floor.min(self.f), self.f)
    }

    /// Load power (without bias) at a load fraction.
    pub fn output_power(&self, load: f64) -> f64 {
        load * self
            .spec
            .outputs
            .iter()
            .map(|o| o.power().value)
            .sum::<f64>()
    }

    /// Evaluates a corner at a line voltage (RMS for AC, bus for DC) and a load fraction.
    pub fn evaluate(&self, corner: &str, line: f64, load: f64) -> Result<OperatingPoint> {
        self.evaluate_near(corner, line, load, None)
    }

    /// [`Context::evaluate`] started from `warm`, the converter input power per watt of output
    /// an earlier, nearby evaluation settled at (see [`OperatingPoint::warm_start`]). The result
    /// is the same to the iteration's tolerance; only the number of iterations changes.
    ///
    /// Method: the loss model closes on one unknown, the converter input power x = P_dc. One
    /// evaluation at x gives the losses and with them G(x) = P_out + P_losses(x) − P_front(x)
    /// (computed efficiency) or P_line − P_front(x) (a fixed efficiency estimate), where
    /// P_front are the bridge and bulk-capacitor losses ahead of the converter. The fixed point
    /// x = G(x) is found by Wegstein's acceleration of the plain iteration x ← G(x): with the
    /// secant slope s of G over the last two points, x ← (G − s·x)/(1 − s) (the first step takes
    /// the losses as proportional to the power, s = (G − G(0))/x). A secant slope of
    /// magnitude one or more means the plain iteration cannot settle (the losses rise as fast
    /// as the power): that is reported as losses running away, as before. An accelerated step
    /// that lands where the bulk capacitor gives out is retried as a plain step.
    pub fn evaluate_near(
        &self,
        corner: &str,
        line: f64,
        load: f64,
        warm: Option<f64>,
    ) -> Result<OperatingPoint> {
        let s = self.spec;
        let lp = &s.losses;
        let pout = self.output_power(load);
        let rect_loss: f64 = load
            * s.outputs
                .iter()
                .map(|o| (o.rectifier_drop * o.current).value)
                .sum::<f64>();
        let controller = match &s.bias {
            Some(b) => ((b.voltage + b.rectifier_drop) * b.current).value,
            None => lp.controller_power.value,
        };
        let transformer = lp.transformer_loss_fraction * pout;
        let (eta_start, fixed) = match s.efficiency {
            EfficiencyModel::Estimate(x) => (x, true),
            EfficiencyModel::Computed { start } => (start, false),
        };
        let p_line_fixed = pout / eta_start;
        // the plain iteration's first point, P_out/η_start with no input-side losses yet
        let x_first = pout / eta_start;
        let mut x = warm
            .map(|r| r * pout)
            .filter(|x| *x > 0.0 && x.is_finite() && !fixed)
            .unwrap_or(x_first);
        let mut front = 0.0;
        let mut iterations = 0;
        let mut residual = f64::INFINITY;
        let mut last: Option<OperatingPoint> = None;
        // the last point of the iteration, (x, G(x)), and whether x was an accelerated step
        let mut previous: Option<(f64, f64)> = None;
        let mut accelerated = false;
        // the conduction time of the last step starts the next valley solve
        let mut valley_hint = None;
        // losses drawn from the input outside the magnetising inductance (from the last step)
        let mut direct = 0.0;
        let bias_supplies_controller = s.bias.is_some();
        while iterations < MAX_EFFICIENCY_ITERATIONS {
            iterations += 1;
            let p_line = if fixed { p_line_fixed } else { x + front };
            let p_dc = x;
            if !(p_dc > 0.0 && p_dc.is_finite()) {
                return Err(Error::infeasible(format!(
                    "corner {corner}: the input-side losses exceed the input power; check `bridge_diode_drop` and `bulk_esr`"
                )));
            }
            let bulk = match s.input {
                InputRange::Ac { line_frequency, .. } => bulk_capacitor_near(
                    &BulkCapacitorSpec {
                        line_voltage_rms: si(line),
                        line_frequency,
                        input_power: si(p_dc),
                        capacitance: si(self.bulk_capacitance),
                        bridge_diode_drop: s.bridge_diode_drop,
                    },
                    valley_hint,
                )
                .map(|b| {
                    (
                        b.peak_voltage.value,
                        b.valley_voltage.value,
                        b.conduction_time.value,
                        b.ripple_current_rms.value,
                        b.bridge_current_avg.value,
                    )
                }),
                InputRange::Dc { .. } => Ok((line, line, 0.0, 0.0, 0.0)),
            };
            let (vpk, vval, tc, i_lf, i_bridge_avg) = match bulk {
                Ok(b) => b,
                // an accelerated step overshot where the capacitor gives out: step plainly
                Err(_) if accelerated => {
                    if let Some((_, g)) = previous {
                        x = g;
                    }
                    accelerated = false;
                    continue;
                }
                // the bulk capacitor gave out while the iteration was pushing the input power
                // up: that is the losses running away
                Err(e) => {
                    return Err(match &last {
                        Some(op) if !fixed && p_dc > 1.5 * x_first => {
                            runaway(corner, &op.losses, pout)
                        }
                        _ => e.context(&format!("corner {corner}")),
                    })
                }
            };
            valley_hint = Some(tc);
            // the magnetising cycle carries the power through the inductance: the converter
            // input less what the switch, the leakage and (without a bias winding) the
            // controller draw outside it
            let p_mag = if fixed {
                p_dc
            } else {
                (p_dc - direct).max(1e-6 * p_dc)
            };
            let f_op = self.operating_frequency(vval, p_mag);
            let cyc = cycle_for_power(self.l, vval, p_mag, self.vr, f_op);
            // the secondaries' vector of the last point is reused: no allocation per step
            let spare = last
                .as_mut()
                .map(|op| std::mem::take(&mut op.secondaries))
                .unwrap_or_default();
            let mut op = self.assemble(
                spare, line, load, pout, p_line, p_dc, p_mag, vpk, vval, tc, i_lf, &cyc, f_op,
            );
            let b = &mut op.losses;
            b.output_rectifiers = si(rect_loss);
            b.controller = si(controller);
            b.transformer = si(transformer);
            b.bridge = si(2.0 * s.bridge_diode_drop.value * i_bridge_avg);
            b.bulk_capacitor = si(op.bulk_ripple_current_rms.value.powi(2) * lp.bulk_esr.value);
            front = b.bridge.value + b.bulk_capacitor.value;
            let g = if fixed {
                p_line_fixed - front
            } else {
                pout + b.modelled_losses().value - front
            };
            let ipk = op.primary_current_peak.value;
            let direct_new = b.switch_conduction.value
                + b.switch_capacitive.value
                + b.switch_overlap.value
                + 0.5 * self.llk * ipk * ipk * op.switching_frequency.value
                + if bias_supplies_controller {
                    0.0
                } else {
                    controller
                };
            // two unknowns settle together: the converter input power x (accelerated) and
            // the direct losses (taken from the last step)
            let direct_step = if fixed {
                0.0
            } else {
                (direct_new - direct).abs() / x
            };
            residual = (g - x).abs() / x + direct_step;
            direct = direct_new;
            let converged = residual < EFFICIENCY_TOLERANCE;
            // while the direct losses still move, G itself moves between steps: a secant over
            // two of its versions is no slope, so such a step is taken plainly and starts a
            // new secant
            let direct_moving = direct_step > 1e-6;
            if direct_moving {
                previous = None;
            }
            let slope = previous.and_then(|(x0, g0)| {
                // a secant over a step below 1e-7 relative is round-off, not slope
                ((x - x0).abs() > 1e-7 * x).then(|| (g - g0) / (x - x0))
            });
            if !fixed && !converged {
                if let Some(sl) = slope {
                    // |G′| ≥ 1: the plain iteration's steps grow, no efficiency satisfies
                    // the model
                    if sl.abs() >= 1.0 && (g - x).abs() > 1e-6 * x {
                        return Err(runaway(corner, b, pout));
                    }
                }
            }
            last = Some(op);
            if converged {
                break;
            }
            // before a secant exists, take the losses as proportional to the power drawn: the
            // slope of G is then (G − G(0))/x, with G(0) = P_out, or P_line for a fixed estimate
            let first_slope = (previous.is_none() && !direct_moving)
                .then(|| (g - if fixed { p_line_fixed } else { pout }) / x);
            previous = Some((x, g));
            match slope
                .or(first_slope)
                .filter(|sl| sl.is_finite() && sl.abs() < 0.95)
            {
                Some(sl) => {
                    x = (g - sl * x) / (1.0 - sl);
                    accelerated = true;
                }
                None => {
                    x = g;
                    accelerated = false;
                }
            }
        }
        let mut op = last.ok_or_else(|| Error::infeasible("no efficiency iteration ran"))?;
        if residual >= EFFICIENCY_TOLERANCE {
            return Err(Error::infeasible(format!(
                "corner {corner}: the efficiency did not settle in {MAX_EFFICIENCY_ITERATIONS} iterations (residual {residual:.2e})"
            )));
        }
        op.corner = corner.to_string();
        let b = &mut op.losses;
        b.unaccounted = si(op.input_power.value - pout - b.modelled_losses().value);
        if !fixed {
            // the model closes the budget; what is left is the iteration residual
            b.unaccounted = si(0.0);
            op.input_power = b.total();
        }
        op.efficiency = pout / op.input_power.value;
        op.efficiency_iterations = iterations;
        op.efficiency_residual = residual;
        Ok(op)
    }

    #[allow(clippy::too_many_arguments)]
    fn assemble(
        &self,
        spare: Vec<SecondaryPoint>,
        line: f64,
        load: f64,
        pout: f64,
        p_line: f64,
        p_dc: f64,
        p_mag: f64,
        vpk: f64,
        vval: f64,
        tc: f64,
        i_lf: f64,
        cyc: &Cycle,
        f: f64,
    ) -> OperatingPoint {
        let s = self.spec;
        let lp = &s.losses;
        let (ipk, iv, d) = (cyc.i_peak, cyc.i_valley, cyc.duty);
        let i_avg = trapezoid_avg(ipk, iv, d);
        let i_rms = trapezoid_rms(ipk, iv, d).max(i_avg);
        let i_hf = (i_rms * i_rms - i_avg * i_avg).max(0.0).sqrt();
        // ampere-turn shares by winding power (equal volts per turn with ideal coupling)
        let winding_power = |o: &super::spec::OutputWinding| {
            load * ((o.voltage + o.rectifier_drop) * o.current).value
        };
        let bias_power = s
            .bias
            .as_ref()
            .map(|b| ((b.voltage + b.rectifier_drop) * b.current).value)
            .unwrap_or(0.0);
        let all_power = s.outputs.iter().map(winding_power).sum::<f64>() + bias_power;
        let clamp = clamp_at(&self.clamp, self.vr, self.llk, ipk, f);
        let (vc, p_clamp) = (clamp.voltage, clamp.power);
        // leakage reset: the leakage current falls at (V_c − V_r)/L_lk while the secondaries
        // take over; meanwhile the magnetising current falls at V_r/L (at most the whole
        // demagnetising time)
        let t_dem = cyc.demag_duty / f;
        let t_reset = if self.llk > 0.0 && vc > self.vr {
            (self.llk * ipk / (vc - self.vr)).min(t_dem)
        } else {
            0.0
        };
        let wave = SecondaryWave {
            ipk,
            iv,
            t_reset,
            i_after_reset: (ipk - self.vr * t_reset / self.l).max(0.0),
            t_dem,
        };
        let mut secondaries = spare;
        secondaries.clear();
        secondaries.extend(s.outputs.iter().enumerate().map(|(k, o)| {
            secondary_point(
                load * o.current.value,
                if all_power > 0.0 {
                    winding_power(o) / all_power
                } else {
                    0.0
                },
                &wave,
                f,
                vpk,
                self.turns[k],
                o.voltage.value,
                o.capacitance.value,
                o.esr.value,
                self.filter_gain[k],
            )
        }));
        let rds = lp.switch_on_resistance.value * lp.on_resistance_hot_factor;
        let coss = lp.switch_output_capacitance.value;
        // CCM: the switch turns on at V_in + V_r. DCM: after demagnetisation the drain rings
        // about V_in with amplitude V_r at ω = 1/√(L·C_oss); within the first quarter period the
        // turn-on voltage follows the ring, later it is taken as V_in (no valley-switching credit).
        // This keeps the loss continuous across the boundary.
        let v_turn_on = match cyc.mode {
            ConductionMode::Continuous => vval + self.vr,
            _ => {
                let idle = (1.0 - d - cyc.demag_duty).max(0.0) / f;
                let phase = if coss > 0.0 {
                    (idle / (self.l * coss).sqrt()).min(std::f64::consts::FRAC_PI_2)
                } else {
                    std::f64::consts::FRAC_PI_2
                };
                vval + self.vr * phase.cos()
            }
        };
        let tt = lp.transition_time.value;
        let overlap = 0.5 * (vval + vc) * ipk * tt * f + 0.5 * (vval + self.vr) * iv * tt * f;
        let out_caps: f64 = s
            .outputs
            .iter()
            .zip(&secondaries)
            .map(|(o, sp)| sp.capacitor_ripple_current_rms.value.powi(2) * o.esr.value)
            .sum();
        let losses = LossBudget {
            output: si(pout),
            switch_conduction: si(i_rms * i_rms * rds),
            switch_capacitive: si(0.5 * coss * v_turn_on * v_turn_on * f),
            switch_overlap: si(overlap),
            clamp: si(p_clamp),
            output_capacitors: si(out_caps),
            ..LossBudget::default()
        };
        OperatingPoint {
            // named once the iteration has settled (no allocation per step)
            corner: String::new(),
            line_voltage: si(line),
            load_fraction: load,
            output_power: si(pout),
            input_power: si(p_line),
            converter_input_power: si(p_dc),
            magnetising_power: si(p_mag),
            bulk_peak_voltage: si(vpk),
            bulk_valley_voltage: si(vval),
            bulk_conduction_time: si(tc),
            bulk_ripple_current_rms: si((i_lf * i_lf + i_hf * i_hf).sqrt()),
            mode: cyc.mode,
            duty_cycle: d,
            demagnetising_duty: cyc.demag_duty,
            on_time: si(d / f),
            switching_frequency: si(f),
            inductance_ratio: cyc.inductance_ratio,
            boundary_power: si(cyc.boundary_power),
            primary_current_peak: si(ipk),
            primary_current_valley: si(iv),
            primary_current_rms: si(i_rms),
            primary_current_avg: si(i_avg),
            secondaries,
            clamp_voltage: si(vc),
            clamp_voltage_max: si(clamp.voltage_max),
            drain_voltage_peak: si(vpk
                + clamp.voltage_max
                + s.clamp_diode_forward_recovery.value
                + s.drain_ringing_allowance.value),
            losses,
            efficiency: pout / p_line,
            efficiency_iterations: 0,
            efficiency_residual: 0.0,
        }
    }
}

crate::serialize_as_record!(OperatingPoint);

impl OperatingPoint {
    /// Converter input power per watt of output at this point: the warm start for
    /// `Context::evaluate_near` at a nearby corner or load.
    pub(crate) fn warm_start(&self) -> f64 {
        self.converter_input_power.value / self.output_power.value
    }
}

impl Record for OperatingPoint {
    fn fields(&self) -> Vec<Field> {
        let mut v = vec![
            Field::new("corner", self.corner.as_str()),
            Field::quantity("line_voltage", self.line_voltage),
            Field::new("load_fraction", self.load_fraction),
            Field::quantity("output_power", self.output_power),
            Field::quantity("input_power", self.input_power),
            Field::new("efficiency", self.efficiency),
            Field::quantity("bulk_peak_voltage", self.bulk_peak_voltage),
            Field::quantity("bulk_valley_voltage", self.bulk_valley_voltage),
            Field::quantity("bulk_ripple_current_rms", self.bulk_ripple_current_rms),
            Field::new("mode", self.mode.as_str()),
            Field::new("duty_cycle", self.duty_cycle),
            Field::quantity("on_time", self.on_time),
            Field::quantity("switching_frequency", self.switching_frequency),
            Field::quantity("primary_current_peak", self.primary_current_peak),
            Field::quantity("primary_current_valley", self.primary_current_valley),
            Field::quantity("primary_current_rms", self.primary_current_rms),
            Field::quantity("primary_current_avg", self.primary_current_avg),
            Field::quantity("boundary_power", self.boundary_power),
            Field::quantity("clamp_voltage", self.clamp_voltage),
            Field::quantity("clamp_voltage_max", self.clamp_voltage_max),
            Field::quantity("drain_voltage_peak", self.drain_voltage_peak),
        ];
        for (k, sp) in self.secondaries.iter().enumerate() {
            v.extend(sp.fields(&format!("output_{}.", k + 1)));
        }
        v.push(Field::quantity(
            "total_losses",
            self.losses.modelled_losses(),
        ));
        v.push(Field::new(
            "efficiency_iterations",
            self.efficiency_iterations as i64,
        ));
        v.push(Field::new("efficiency_residual", self.efficiency_residual));
        v
    }
}

#[cold]
fn runaway(corner: &str, b: &LossBudget, pout: f64) -> Error {
    let (name, worst) = b
        .items()
        .into_iter()
        .skip(1)
        .fold(
            ("", 0.0),
            |acc, (n, p)| {
                if p.value > acc.1 {
                    (n, p.value)
                } else {
                    acc
                }
            },
        );
    Error::infeasible(format!(
        "corner {corner}: the losses run away ({} of losses for {} out, the largest `{name}` at \
         {}); the leakage inductance, the currents or the switch are unsuited to this power",
        Quantity::new(b.modelled_losses().value, crate::units::Dimension::POWER),
        Quantity::new(pout, crate::units::Dimension::POWER),
        Quantity::new(worst, crate::units::Dimension::POWER),
    ))
}

/// Shows a quantity for messages.
pub(crate) fn show<Q: crate::units::TypedQuantity>(q: Q) -> Quantity {
    Quantity::from_typed(q)
}
