//! Shunt-reference and optocoupler bias: the LED series resistor and the bias resistor across
//! the LED so that, over the optocoupler's whole CTR range, the shunt reference keeps its
//! minimum cathode current and voltage and the controller's feedback input gets the current it
//! needs from no load to full load.

use super::divider::{show, ShuntReference};
use crate::error::{Error, Result};
use crate::passives::e_series::at_or_below_value;
use crate::passives::ESeries;
use crate::report::{Field, Record, Table};
use crate::units::validate::{non_negative, number_within, positive};
use crate::units::{si, ElectricCurrent, ElectricPotential, ElectricalResistance, Frequency};

/// An optocoupler described by its parameters (no part).
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Optocoupler {
    /// Lowest current transfer ratio I_C/I_F, after ageing and at temperature (0.5 = 50 %).
    pub ctr_min: f64,
    /// Highest current transfer ratio.
    pub ctr_max: f64,
    /// LED forward voltage at the currents of the loop.
    pub led_forward_voltage: ElectricPotential,
    /// Lowest LED current at which the CTR range holds (0 A: no lower bound).
    pub led_current_min: ElectricCurrent,
    /// Highest LED current allowed.
    pub led_current_max: ElectricCurrent,
    /// Pole of the optocoupler with the feedback pin's resistance (its collector-base
    /// capacitance times the pull-up, measured or from the part's response data).
    pub pole_frequency: Frequency,
}

impl Optocoupler {
    /// CTR 50–200 %, LED 1 V, 0 … 20 mA, pole 5 kHz with the pin's pull-up (common practice,
    /// no published source; measure the pole on the board).
    pub fn generic() -> Self {
        Self {
            ctr_min: 0.5,
            ctr_max: 2.0,
            led_forward_voltage: si(1.0),
            led_current_min: si(0.0),
            led_current_max: si(20e-3),
            pole_frequency: si(5e3),
        }
    }

    /// Checks every field: CTRs positive and at most 10 with `ctr_min` ≤ `ctr_max`, the LED
    /// current range ordered, the pole positive.
    pub fn validate(&self) -> Result<()> {
        number_within("ctr_min", self.ctr_min, 1e-3, 10.0)?;
        number_within("ctr_max", self.ctr_max, 1e-3, 10.0)?;
        if self.ctr_min > self.ctr_max {
            return Err(Error::invalid(format!(
                "`ctr_min` ({}) is above `ctr_max` ({})",
                self.ctr_min, self.ctr_max
            )));
        }
        positive("led_forward_voltage", self.led_forward_voltage)?;
        non_negative("led_current_min", self.led_current_min)?;
        positive("led_current_max", self.led_current_max)?;
        if self.led_current_min >= self.led_current_max {
            return Err(Error::invalid(format!(
                "`led_current_min` ({}) must be below `led_current_max` ({})",
                show(self.led_current_min),
                show(self.led_current_max)
            )));
        }
        positive("optocoupler_pole", self.pole_frequency)?;
        Ok(())
    }
}

/// The controller's feedback input, as its data describes it.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum FeedbackInput {
    /// By the current the optocoupler must draw from the pin.
    Current {
        /// Pin current at which the controller stops switching (no load).
        zero_duty: ElectricCurrent,
        /// Pin current at which the controller gives full power (its current limit).
        full_duty: ElectricCurrent,
        /// Small-signal resistance at the pin (its internal pull-up), which sets the pole with
        /// the optocoupler's and a pole capacitor's capacitance.
        pin_resistance: ElectricalResistance,
    },
    /// A pin pulled up to a voltage through a resistor; the pin voltage sets the peak current.
    PullUp {
        /// Voltage the pull-up goes to.
        pull_up_voltage: ElectricPotential,
        /// The pull-up resistance (internal or external).
        pull_up_resistance: ElectricalResistance,
        /// Pin voltage at which switching stops.
        zero_duty_voltage: ElectricPotential,
        /// Pin voltage at which the controller gives full power (its current limit).
        full_duty_voltage: ElectricPotential,
    },
}

/// The feedback input reduced to what the loop needs.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct ControllerFeedback {
    /// Collector current for zero duty (no load).
    pub current_zero_duty: ElectricCurrent,
    /// Collector current for full power.
    pub current_full_duty: ElectricCurrent,
    /// Small-signal resistance at the pin.
    pub pin_resistance: ElectricalResistance,
}

impl FeedbackInput {
    /// A pin pulled up to 5 V through 20 kΩ, no switching below 1 V, full power at 3.5 V
    /// (common practice for peak-current-mode controllers, no published source).
    pub fn generic_pull_up() -> Self {
        FeedbackInput::PullUp {
            pull_up_voltage: si(5.0),
            pull_up_resistance: si(20e3),
            zero_duty_voltage: si(1.0),
            full_duty_voltage: si(3.5),
        }
    }

    /// The collector currents and pin resistance: for a pull-up, I = (V_pu − V_pin)/R_pu.
    /// Errors: the zero-duty current must be above the full-duty one (the optocoupler pulls
    /// the pin down to stop switching), each named with its unit.
    pub fn resolve(&self) -> Result<ControllerFeedback> {
        let fb = match *self {
            FeedbackInput::Current {
                zero_duty,
                full_duty,
                pin_resistance,
            } => {
                positive("feedback_current_zero_duty", zero_duty)?;
                non_negative("feedback_current_full_duty", full_duty)?;
                positive("feedback_pin_resistance", pin_resistance)?;
                if full_duty >= zero_duty {
                    return Err(Error::invalid(format!(
                        "`feedback_current_full_duty` ({}) must be below `feedback_current_zero_duty` ({})",
                        show(full_duty),
                        show(zero_duty)
                    )));
                }
                ControllerFeedback {
                    current_zero_duty: zero_duty,
                    current_full_duty: full_duty,
                    pin_resistance,
                }
            }
            FeedbackInput::PullUp {
                pull_up_voltage,
                pull_up_resistance,
                zero_duty_voltage,
                full_duty_voltage,
            } => {
                let vpu = positive("pull_up_voltage", pull_up_voltage)?.value;
                let rpu = positive("pull_up_resistance", pull_up_resistance)?.value;
                let vz = non_negative("feedback_voltage_zero_duty", zero_duty_voltage)?.value;
                let vf = positive("feedback_voltage_full_duty", full_duty_voltage)?.value;
                if !(vz < vf && vf <= vpu) {
                    return Err(Error::invalid(format!(
                        "the feedback pin needs `feedback_voltage_zero_duty` ({}) < \
                         `feedback_voltage_full_duty` ({}) ≤ `pull_up_voltage` ({})",
                        show(zero_duty_voltage),
                        show(full_duty_voltage),
                        show(pull_up_voltage)
                    )));
                }
                ControllerFeedback {
                    current_zero_duty: si((vpu - vz) / rpu),
                    current_full_duty: si((vpu - vf) / rpu),
                    pin_resistance: pull_up_resistance,
                }
            }
        };
        Ok(fb)
    }
}

/// What the bias must do.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BiasSpec {
    /// The regulated output, which feeds the LED resistor (the fast lane).
    pub output_voltage: ElectricPotential,
    /// The shunt reference.
    pub reference: ShuntReference,
    /// The optocoupler.
    pub optocoupler: Optocoupler,
    /// The controller's feedback input.
    pub feedback: FeedbackInput,
    /// Series of the resistors.
    pub series: ESeries,
    /// Extra LED current over the least that reaches zero duty at `ctr_min` (0.2 = 20 %).
    pub headroom: f64,
    /// A separate DC rail feeding the LED resistor (no fast lane); None: the output feeds it.
    pub led_supply_voltage: Option<ElectricPotential>,
}

/// One of the four bias cases: CTR extreme × no load / full load.
#[derive(Clone, Debug, PartialEq)]
pub struct BiasPoint {
    /// `ctr_min_no_load`, `ctr_min_full_load`, `ctr_max_no_load`, `ctr_max_full_load`.
    pub case: String,
    /// CTR of the case.
    pub ctr: f64,
    /// Collector current the controller needs.
    pub collector_current: ElectricCurrent,
    /// LED current, I_C/CTR.
    pub led_current: ElectricCurrent,
    /// Shunt cathode current, I_F + V_F/R_bias.
    pub cathode_current: ElectricCurrent,
    /// Shunt cathode voltage, V_out − V_F − R_LED·I_K.
    pub cathode_voltage: ElectricPotential,
    /// Every limit holds in this case.
    pub within_limits: bool,
}

/// LED and bias resistors with the four bias cases.
#[derive(Clone, Debug, PartialEq)]
pub struct OptocouplerBias {
    /// LED series resistor from the output (the fast lane).
    pub led_resistor: ElectricalResistance,
    /// Largest LED resistor that reaches zero duty at `ctr_min` with the headroom.
    pub led_resistor_max: ElectricalResistance,
    /// Smallest LED resistor that keeps the LED within `led_current_max` with the shunt at its
    /// minimum cathode voltage.
    pub led_resistor_min: ElectricalResistance,
    /// Bias resistor across the LED.
    pub bias_resistor: ElectricalResistance,
    /// The controller's feedback input, resolved to collector currents.
    pub feedback: ControllerFeedback,
    /// The four cases.
    pub points: Vec<BiasPoint>,
}

/// Chooses the bias resistor across the LED and the LED resistor, and checks the four cases.
///
/// V_out below is the LED resistor's supply: the output (the fast lane) or
/// `led_supply_voltage`.
/// Formulas: R_bias = the preferred value at or below V_F / I_K,min (the shunt keeps its
/// minimum current with the LED dark); the most LED current the resistor can give, with the
/// shunt at its minimum cathode voltage, is (V_out − V_F − V_K,min)/R_LED − V_F/R_bias, which
/// must reach I_C,zero/CTR_min with the headroom: R_LED ≤ (V_out − V_F − V_K,min) /
/// ((1 + headroom)·I_C,zero/CTR_min + V_F/R_bias); it must keep the LED within its rating:
/// R_LED ≥ (V_out − V_F − V_K,min)/(I_F,max + V_F/R_bias). `led_resistor` given: checked;
/// else the preferred value at or below the largest. Cases: I_F = I_C/CTR, I_K = I_F + V_F/R_bias,
/// V_K = V_out − V_F − R_LED·I_K, each within I_K ≥ I_K,min, V_K ≥ V_K,min and
/// I_F,min ≤ I_F ≤ I_F,max.
/// Assumes the LED voltage constant at V_F and the CTR independent of current within the
/// LED current range. Errors name `ctr_min`, `ctr_max` (a CTR spread the LED current range
/// cannot carry), `output_voltage` (too low for LED and shunt), `led_resistor`.
/// Reference: the bias of a shunt reference with an optocoupler as in Basso, *Designing
/// Control Loops for Linear and Switching Power Supplies* (2012), chapter on the
/// optocoupler-based loop.
pub fn optocoupler_bias(
    spec: &BiasSpec,
    led_resistor: Option<ElectricalResistance>,
) -> Result<OptocouplerBias> {
    spec.reference.validate()?;
    spec.optocoupler.validate()?;
    let fb = spec.feedback.resolve()?;
    let headroom = number_within("bias_headroom", spec.headroom, 0.0, 2.0)?;
    positive("output_voltage", spec.output_voltage)?;
    let vout = match spec.led_supply_voltage {
        Some(v) => positive("led_supply_voltage", v)?.value,
        None => spec.output_voltage.value,
    };
    let o = &spec.optocoupler;
    let vf = o.led_forward_voltage.value;
    let vkmin = spec.reference.minimum_cathode_voltage.value;
    let ikmin = spec.reference.minimum_cathode_current.value;
    let (iz, ifull) = (fb.current_zero_duty.value, fb.current_full_duty.value);
    let (ifmin, ifmax) = (o.led_current_min.value, o.led_current_max.value);
    let need_hi = iz / o.ctr_min;
    let need_lo = ifull / o.ctr_max;
    if need_hi > ifmax && need_lo < ifmin {
        return Err(Error::infeasible(format!(
            "the CTR spread `ctr_min` {} … `ctr_max` {} needs LED currents from {} to {}, wider \
             than the optocoupler's range {} … {}",
            o.ctr_min,
            o.ctr_max,
            show(si::<ElectricCurrent>(need_lo)),
            show(si::<ElectricCurrent>(need_hi)),
            show(o.led_current_min),
            show(o.led_current_max)
        )));
    }
    if need_hi > ifmax {
        return Err(Error::infeasible(format!(
            "`ctr_min` {} needs an LED current of {} to stop the controller, above \
             `led_current_max` {}",
            o.ctr_min,
            show(si::<ElectricCurrent>(need_hi)),
            show(o.led_current_max)
        )));
    }
    if need_lo < ifmin {
        return Err(Error::infeasible(format!(
            "`ctr_max` {} gives full power at an LED current of {}, below `led_current_min` {} \
             where the CTR range holds",
            o.ctr_max,
            show(si::<ElectricCurrent>(need_lo)),
            show(o.led_current_min)
        )));
    }
    let head = vout - vf - vkmin;
    if head <= 0.0 {
        return Err(Error::infeasible(format!(
            "`{}` {} is too low to feed the LED ({}) and the shunt reference's \
             minimum cathode voltage ({}) from the output; supply the LED resistor from a \
             higher rail (`led_supply_voltage`)",
            if spec.led_supply_voltage.is_some() {
                "led_supply_voltage"
            } else {
                "output_voltage"
            },
            show(si::<ElectricPotential>(vout)),
            show(o.led_forward_voltage),
            show(spec.reference.minimum_cathode_voltage)
        )));
    }
    let rbias = at_or_below_value(vf / ikmin, spec.series)?;
    let i_bias = vf / rbias;
    let rled_max = head / ((1.0 + headroom) * need_hi + i_bias);
    let rled_min = head / (ifmax + i_bias);
    if rled_min > rled_max {
        return Err(Error::infeasible(format!(
            "no LED resistor reaches zero duty at `ctr_min` {} (at most {}) and keeps the LED \
             within `led_current_max` {} (at least {})",
            o.ctr_min,
            show(si::<ElectricalResistance>(rled_max)),
            show(o.led_current_max),
            show(si::<ElectricalResistance>(rled_min))
        )));
    }
    let rled = match led_resistor {
        Some(r) => {
            let r = positive("led_resistor", r)?.value;
            if r > rled_max * (1.0 + 1e-9) || r < rled_min * (1.0 - 1e-9) {
                return Err(Error::infeasible(format!(
                    "`led_resistor` {} is outside {} … {}, the range that reaches zero duty at \
                     `ctr_min` and keeps the LED within `led_current_max`",
                    show(si::<ElectricalResistance>(r)),
                    show(si::<ElectricalResistance>(rled_min)),
                    show(si::<ElectricalResistance>(rled_max))
                )));
            }
            r
        }
        None => {
            let r = at_or_below_value(rled_max, spec.series)?;
            if r < rled_min {
                return Err(Error::infeasible(format!(
                    "no {} value lies between {} and {} for the LED resistor",
                    spec.series.name(),
                    show(si::<ElectricalResistance>(rled_min)),
                    show(si::<ElectricalResistance>(rled_max))
                )));
            }
            r
        }
    };
    let mut points = Vec::new();
    for (cname, ctr) in [("ctr_min", o.ctr_min), ("ctr_max", o.ctr_max)] {
        for (lname, ic) in [("no_load", iz), ("full_load", ifull)] {
            let i_f = ic / ctr;
            let ik = i_f + i_bias;
            let vk = vout - vf - rled * ik;
            let ok = ik >= ikmin * (1.0 - 1e-9)
                && vk >= vkmin - 1e-9
                && i_f >= ifmin * (1.0 - 1e-9)
                && i_f <= ifmax * (1.0 + 1e-9);
            points.push(BiasPoint {
                case: format!("{cname}_{lname}"),
                ctr,
                collector_current: si(ic),
                led_current: si(i_f),
                cathode_current: si(ik),
                cathode_voltage: si(vk),
                within_limits: ok,
            });
        }
    }
    Ok(OptocouplerBias {
        led_resistor: si(rled),
        led_resistor_max: si(rled_max),
        led_resistor_min: si(rled_min),
        bias_resistor: si(rbias),
        feedback: fb,
        points,
    })
}

impl OptocouplerBias {
    /// One row per bias case.
    pub fn table(&self) -> Table {
        let mut t = Table::new();
        for p in &self.points {
            t.push_row(vec![
                Field::new("case", p.case.as_str()),
                Field::new("ctr", p.ctr),
                Field::quantity("collector_current", p.collector_current),
                Field::quantity("led_current", p.led_current),
                Field::quantity("cathode_current", p.cathode_current),
                Field::quantity("cathode_voltage", p.cathode_voltage),
                Field::new("within_limits", p.within_limits),
            ]);
        }
        t
    }
    /// The smallest cathode current over the cases.
    pub fn cathode_current_min(&self) -> ElectricCurrent {
        si(self
            .points
            .iter()
            .map(|p| p.cathode_current.value)
            .fold(f64::INFINITY, f64::min))
    }
    /// The smallest cathode voltage over the cases.
    pub fn cathode_voltage_min(&self) -> ElectricPotential {
        si(self
            .points
            .iter()
            .map(|p| p.cathode_voltage.value)
            .fold(f64::INFINITY, f64::min))
    }
}

impl Record for OptocouplerBias {
    fn fields(&self) -> Vec<Field> {
        vec![
            Field::quantity("led_resistor", self.led_resistor),
            Field::quantity("led_resistor_max", self.led_resistor_max),
            Field::quantity("led_resistor_min", self.led_resistor_min),
            Field::quantity("bias_resistor", self.bias_resistor),
            Field::quantity(
                "collector_current_zero_duty",
                self.feedback.current_zero_duty,
            ),
            Field::quantity(
                "collector_current_full_duty",
                self.feedback.current_full_duty,
            ),
            Field::quantity("feedback_pin_resistance", self.feedback.pin_resistance),
            Field::quantity("cathode_current_min", self.cathode_current_min()),
            Field::quantity("cathode_voltage_min", self.cathode_voltage_min()),
            Field::new(
                "all_cases_within_limits",
                self.points.iter().all(|p| p.within_limits),
            ),
        ]
    }
}
