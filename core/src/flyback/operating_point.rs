//! One corner of line and load: bulk voltage, duty cycle, mode, currents on every winding,
//! stresses and the loss budget, with the efficiency iterated until it settles.

use super::clamp::{clamp_at, ClampDesign};
use super::losses::LossBudget;
use super::output::{secondary_point, SecondaryPoint, SecondaryWave};
use super::spec::{EfficiencyModel, FlybackSpec, InputRange};
use super::waveform::{cycle_for_power, trapezoid_avg, trapezoid_rms, ConductionMode, Cycle};
use crate::error::{Error, Result};
use crate::mains::{bulk_capacitor, BulkCapacitorSpec};
use crate::report::{Field, Record};
use crate::units::{si, ElectricCurrent, ElectricPotential, Frequency, Power, Quantity, Time};

/// Largest number of efficiency iterations before giving up.
pub const MAX_EFFICIENCY_ITERATIONS: usize = 200;
/// The efficiency iteration stops when the change per step falls below this.
pub const EFFICIENCY_TOLERANCE: f64 = 1e-10;

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
    /// Change of efficiency in the last iteration.
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
        let (mut eta, fixed) = match s.efficiency {
            EfficiencyModel::Estimate(x) => (x, true),
            EfficiencyModel::Computed { start } => (start, false),
        };
        let mut front = 0.0;
        let mut iterations = 0;
        let mut residual = f64::INFINITY;
        let mut last: Option<OperatingPoint> = None;
        let mut last_step = f64::INFINITY;
        let mut first_p_line = None;
        // losses drawn from the input outside the magnetising inductance (from the last step)
        let mut direct = 0.0;
        let bias_supplies_controller = s.bias.is_some();
        while iterations < MAX_EFFICIENCY_ITERATIONS {
            iterations += 1;
            let p_line = pout / eta;
            first_p_line.get_or_insert(p_line);
            let p_dc = p_line - front;
            if !(p_dc > 0.0 && p_dc.is_finite()) {
                return Err(Error::infeasible(format!(
                    "corner {corner}: the input-side losses exceed the input power; check `bridge_diode_drop` and `bulk_esr`"
                )));
            }
            let (vpk, vval, tc, i_lf, i_bridge_avg) = match s.input {
                InputRange::Ac { line_frequency, .. } => {
                    let b = bulk_capacitor(&BulkCapacitorSpec {
                        line_voltage_rms: si(line),
                        line_frequency,
                        input_power: si(p_dc),
                        capacitance: si(self.bulk_capacitance),
                        bridge_diode_drop: s.bridge_diode_drop,
                    })
                    .map_err(|e| {
                        // the bulk capacitor gave out while the iteration was pushing the
                        // input power up: that is the losses running away
                        match (&last, first_p_line) {
                            (Some(op), Some(p0)) if !fixed && p_line > 1.5 * p0 => {
                                runaway(corner, &op.losses, pout)
                            }
                            _ => e.context(&format!("corner {corner}")),
                        }
                    })?;
                    (
                        b.peak_voltage.value,
                        b.valley_voltage.value,
                        b.conduction_time.value,
                        b.ripple_current_rms.value,
                        b.bridge_current_avg.value,
                    )
                }
                InputRange::Dc { .. } => (line, line, 0.0, 0.0, 0.0),
            };
            let p_mag = if fixed {
                p_dc
            } else {
                (p_dc - direct).max(1e-6 * p_dc)
            };
            let f_op = self.operating_frequency(vval, p_mag);
            let cyc = cycle_for_power(self.l, vval, p_mag, self.vr, f_op);
            let point = self.assemble(
                corner, line, load, pout, p_line, p_dc, p_mag, vpk, vval, tc, i_lf, &cyc, f_op,
            );
            let (mut op, bridge_avg) = (point, i_bridge_avg);
            let b = &mut op.losses;
            b.output_rectifiers = si(rect_loss);
            b.controller = si(controller);
            b.transformer = si(transformer);
            b.bridge = si(2.0 * s.bridge_diode_drop.value * bridge_avg);
            b.bulk_capacitor = si(op.bulk_ripple_current_rms.value.powi(2) * lp.bulk_esr.value);
            let front_new = b.bridge.value + b.bulk_capacitor.value;
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
            let total = b.modelled_losses().value;
            let eta_new = if fixed { eta } else { pout / (pout + total) };
            // a converging iteration shrinks its steps; growing steps mean the losses rise
            // faster than the power (no efficiency satisfies the model)
            let step = (eta_new - eta).abs();
            if !fixed && iterations >= 4 && step > 1.2 * last_step && step > 1e-6 {
                return Err(runaway(corner, b, pout));
            }
            last_step = step;
            residual = (eta_new - eta).abs()
                + (front_new - front).abs() / p_line
                + if fixed {
                    0.0
                } else {
                    (direct_new - direct).abs() / p_line
                };
            eta = eta_new;
            front = front_new;
            direct = direct_new;
            last = Some(op);
            if residual < EFFICIENCY_TOLERANCE {
                break;
            }
        }
        let mut op = last.ok_or_else(|| Error::infeasible("no efficiency iteration ran"))?;
        if residual >= EFFICIENCY_TOLERANCE {
            return Err(Error::infeasible(format!(
                "corner {corner}: the efficiency did not settle in {MAX_EFFICIENCY_ITERATIONS} iterations (residual {residual:.2e})"
            )));
        }
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
        corner: &str,
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
        let secondaries: Vec<SecondaryPoint> = s
            .outputs
            .iter()
            .enumerate()
            .map(|(k, o)| {
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
            })
            .collect();
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
            corner: corner.to_string(),
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
