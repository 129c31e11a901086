//! What a flyback must do: input range, outputs, switching, mode target, stresses, losses.

use super::thermal::ThermalPath;
use crate::error::{Error, Result};
use crate::units::validate::{non_negative, number_within, positive};
use crate::units::{
    si, Capacitance, ElectricCurrent, ElectricPotential, ElectricalResistance, Frequency,
    Inductance, Power, Quantity, ThermodynamicTemperature, Time,
};

/// The supply's input.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum InputRange {
    /// Mains through a full-wave bridge into a bulk capacitor.
    Ac {
        /// Lowest line voltage, RMS.
        min_rms: ElectricPotential,
        /// Highest line voltage, RMS.
        max_rms: ElectricPotential,
        /// Line frequency (use the lowest one the supply must work at: 50 Hz for universal).
        line_frequency: Frequency,
    },
    /// A DC bus (no bridge, no line ripple).
    Dc {
        /// Lowest bus voltage.
        min: ElectricPotential,
        /// Highest bus voltage.
        max: ElectricPotential,
    },
}

/// How the bulk capacitor is given.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum BulkChoice {
    /// This capacitance.
    Capacitance(Capacitance),
    /// Size it (rounded up to the E12 series) so that the valley at low line and full load is
    /// at least this voltage.
    TargetValley(ElectricPotential),
    /// Size it for a valley derived from the specification:
    /// [`DEFAULT_VALLEY_FRACTION`] × the lowest rectified line peak (√2·V_min − 2·V_bridge),
    /// so that a narrow-range supply gets a valley that fits its line.
    DerivedValley,
}

/// Bulk valley target over the lowest rectified line peak when none is given: 0.64, i.e.
/// about 80 V at 90 V RMS, the usual 2–3 µF/W of universal input, and about 160 V at 180 V
/// RMS (common practice, no published source).
pub const DEFAULT_VALLEY_FRACTION: f64 = 0.64;
/// Clamp voltage above the reflected voltage when none is given, as a fraction of the
/// reflected voltage (V_c = 1.5·V_r), unless the switch rating leaves less (common practice,
/// no published source).
pub const DEFAULT_CLAMP_OVERSHOOT_FRACTION: f64 = 0.5;
/// Least clamp voltage above the reflected voltage the derived default accepts, as a fraction
/// of the reflected voltage: below it the clamp takes most of the magnetising energy
/// (P ∝ V_c/(V_c − V_r)) (common practice, no published source).
pub const MIN_CLAMP_OVERSHOOT_FRACTION: f64 = 0.25;

/// One output winding with its rectifier and capacitor.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct OutputWinding {
    /// Output voltage (at the capacitor, before a post filter).
    pub voltage: ElectricPotential,
    /// Full-load output current.
    pub current: ElectricCurrent,
    /// Forward drop of the output rectifier at full load.
    pub rectifier_drop: ElectricPotential,
    /// Reverse voltage rating of the rectifier, if a part is chosen (for the derating rule).
    pub rectifier_voltage_rating: Option<ElectricPotential>,
    /// Output capacitance.
    pub capacitance: Capacitance,
    /// Equivalent series resistance of the output capacitance (at the switching frequency).
    pub esr: ElectricalResistance,
    /// Ripple current rating of the output capacitance, if chosen (for its rule).
    pub ripple_current_rating: Option<ElectricCurrent>,
    /// Post filter inductance (with `post_filter_capacitance`), if there is an LC post filter.
    pub post_filter_inductance: Option<Inductance>,
    /// Post filter capacitance.
    pub post_filter_capacitance: Option<Capacitance>,
}

impl OutputWinding {
    /// An output with a rectifier drop of 0.5 V, 1000 µF of 30 mΩ, no ratings and no post filter.
    pub fn new(voltage: ElectricPotential, current: ElectricCurrent) -> Self {
        Self {
            voltage,
            current,
            rectifier_drop: si(0.5),
            rectifier_voltage_rating: None,
            capacitance: si(1000e-6),
            esr: si(0.03),
            ripple_current_rating: None,
            post_filter_inductance: None,
            post_filter_capacitance: None,
        }
    }
    /// Power delivered to the load at full load, V_o·I_o (definition).
    pub fn power(&self) -> Power {
        self.voltage * self.current
    }
}

/// The auxiliary winding that supplies the controller.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BiasWinding {
    /// Wanted bias voltage at full load.
    pub voltage: ElectricPotential,
    /// Current the controller draws.
    pub current: ElectricCurrent,
    /// Forward drop of the bias rectifier.
    pub rectifier_drop: ElectricPotential,
}

/// Which operating mode the primary inductance is chosen for (at low line, full load).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum ModeTarget {
    /// Discontinuous: the inductance is (1 − margin) times the boundary inductance.
    Discontinuous {
        /// Relative margin below the boundary inductance, 0 … 0.9.
        margin: f64,
    },
    /// Continuous with the given peak-to-peak ripple over the mid (average on-time) current,
    /// 0 < ripple_ratio < 2 (2 is the boundary).
    Continuous {
        /// ΔI / I_mid at low line, full load.
        ripple_ratio: f64,
    },
    /// Boundary (critical) conduction at low line, full load.
    Boundary,
}

/// What the controller does at light load (a description of its behaviour by parameters).
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum LightLoadControl {
    /// Fixed frequency at every load: the peak current falls with the load.
    FixedFrequency,
    /// The peak current is held at `minimum_peak_fraction` × the nominal current limit while
    /// the frequency falls with the load (DCM, ½·L·I_min²·f = P), down to `minimum_frequency`;
    /// below that the peak falls again at the minimum frequency.
    FrequencyFoldback {
        /// Least peak current over the nominal current limit (0.05 … 0.9).
        minimum_peak_fraction: f64,
        /// Lowest switching frequency.
        minimum_frequency: Frequency,
    },
    /// Burst (skip) mode: pulses of `minimum_peak_fraction` × the nominal limit at the
    /// switching frequency, in bursts whose average pulse rate carries the load,
    /// f_avg = P/(½·L·I_min²).
    Burst {
        /// Pulse peak current over the nominal current limit (0.05 … 0.9).
        minimum_peak_fraction: f64,
    },
}

/// The primary clamp against the leakage spike.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ClampKind {
    /// Resistor, capacitor and diode: the clamp voltage follows the leakage energy.
    Rcd,
    /// A Zener (transient suppressor) and diode: the clamp voltage is fixed.
    Zener,
}

/// The leakage inductance of the transformer, referred to the primary.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Leakage {
    /// A fraction of the primary inductance (common practice: 1–3 %).
    Fraction(f64),
    /// A value (for example from the transformer design).
    Value(Inductance),
}

/// How efficiency is obtained.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum EfficiencyModel {
    /// A fixed estimate; the loss budget then shows the difference as unaccounted.
    Estimate(f64),
    /// Computed from the loss model, iterating until it settles (the estimate starts it).
    Computed {
        /// Starting estimate.
        start: f64,
    },
}

/// Parameters of the loss model.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct LossParameters {
    /// Switch on-resistance at 25 °C.
    pub switch_on_resistance: ElectricalResistance,
    /// Ratio of on-resistance hot to 25 °C (about 1.8–2.2 at 100–125 °C for high-voltage
    /// switches; common practice, no published source).
    pub on_resistance_hot_factor: f64,
    /// Switch output capacitance (energy-equivalent), discharged at each turn-on.
    pub switch_output_capacitance: Capacitance,
    /// Current-voltage overlap time of each switching transition.
    pub transition_time: Time,
    /// Controller supply power (drawn from the bias winding).
    pub controller_power: Power,
    /// Equivalent series resistance of the bulk capacitor.
    pub bulk_esr: ElectricalResistance,
    /// Transformer copper and core loss as a fraction of output power (an estimate until the
    /// transformer is designed).
    pub transformer_loss_fraction: f64,
}

impl Default for LossParameters {
    fn default() -> Self {
        Self {
            switch_on_resistance: si(1.5),
            on_resistance_hot_factor: 2.0,
            switch_output_capacitance: si(20e-12),
            transition_time: si(30e-9),
            controller_power: si(0.1),
            bulk_esr: si(1.0),
            transformer_loss_fraction: 0.02,
        }
    }
}

/// The house limit on the switch and rectifier junction temperatures that
/// [`FlybackSpec::universal`] starts from, in °C (common practice, no published source); a
/// specification with another limit is reported as overridden in the design's checks.
pub const HOUSE_MAX_JUNCTION_CELSIUS: f64 = 125.0;

/// The specification of an offline flyback power stage.
#[derive(Clone, Debug, PartialEq)]
pub struct FlybackSpec {
    /// Input voltage range.
    pub input: InputRange,
    /// Bulk capacitor, given or sized for a valley (ignored for a DC input).
    pub bulk: BulkChoice,
    /// Forward drop of one bridge diode.
    pub bridge_diode_drop: ElectricPotential,
    /// Ripple current rating of the bulk capacitor, if chosen (for its rule).
    pub bulk_ripple_current_rating: Option<ElectricCurrent>,
    /// Output windings; the first with `regulated` is the one the loop regulates.
    pub outputs: Vec<OutputWinding>,
    /// Index into `outputs` of the regulated output.
    pub regulated_output: usize,
    /// Controller supply winding, if any.
    pub bias: Option<BiasWinding>,
    /// Switching frequency (fixed).
    pub switching_frequency: Frequency,
    /// Nominal peak current limit of the controller; None: chosen 10 % above the peak current
    /// at low line and full load, at the low end of its tolerance.
    pub current_limit: Option<ElectricCurrent>,
    /// Relative tolerance of the current limit (0.1 = ±10 %).
    pub current_limit_tolerance: f64,
    /// Delay from the current sense reaching the limit to the switch turning off.
    pub current_sense_delay: Time,
    /// Largest duty cycle the controller can give.
    pub max_duty_cycle: f64,
    /// Shortest on-time the controller gives (leading-edge blanking and its own delay): with
    /// the output shorted it decides whether the current settles at the limit.
    pub minimum_on_time: Time,
    /// How long the controller runs at the current limit before its fault timer stops it
    /// (auto-restart).
    pub fault_time: Time,
    /// How long the controller stays off before it tries again (auto-restart).
    pub restart_off_time: Time,
    /// Switching frequency while the output is shorted, where the controller folds its
    /// frequency back; None: the switching frequency.
    pub short_circuit_frequency: Option<Frequency>,
    /// Mode target for choosing the primary inductance; with `primary_inductance` given, it
    /// becomes a check.
    pub mode: Option<ModeTarget>,
    /// A given primary inductance (else chosen from `mode`).
    pub primary_inductance: Option<Inductance>,
    /// Reflected output voltage on the primary, n·(V_out + V_rectifier) of the regulated output.
    pub reflected_voltage: ElectricPotential,
    /// Drain-source voltage rating of the switch.
    pub switch_voltage_rating: ElectricPotential,
    /// Clamp type.
    pub clamp: ClampKind,
    /// Clamp voltage above the reflected voltage, at the worst case (current limit); None:
    /// derived from the reflected voltage and the switch rating (see
    /// [`DEFAULT_CLAMP_OVERSHOOT_FRACTION`] and the design's `defaults`).
    pub clamp_voltage_above_reflected: Option<ElectricPotential>,
    /// Overshoot of the clamp diode's forward recovery on top of the clamp voltage, added to
    /// the drain peak.
    pub clamp_diode_forward_recovery: ElectricPotential,
    /// Allowance for the ringing of the leakage inductance with the drain capacitance on top
    /// of the clamp, added to the drain peak (a stated allowance, not a model).
    pub drain_ringing_allowance: ElectricPotential,
    /// Relative tolerance of a Zener clamp's voltage (0.05 = ±5 %).
    pub zener_tolerance: f64,
    /// Relative rise of a Zener clamp's voltage from 25 °C to its hot junction: temperature
    /// coefficient × temperature rise (0.1 %/K × 75 K = 0.075); negative for a falling one.
    pub zener_rise_hot: f64,
    /// Leakage inductance.
    pub leakage: Leakage,
    /// Efficiency estimate or loss model.
    pub efficiency: EfficiencyModel,
    /// Loss model parameters.
    pub losses: LossParameters,
    /// Air temperature around the switch and rectifiers (inside the enclosure).
    pub ambient_temperature: ThermodynamicTemperature,
    /// The switch's thermal path and junction limit.
    pub switch_thermal: ThermalPath,
    /// Every output rectifier's thermal path and junction limit (one description for all).
    pub rectifier_thermal: ThermalPath,
    /// Light load as a fraction of full load on every output (0 < x < 1).
    pub light_load_fraction: f64,
    /// The controller's light-load behaviour.
    pub light_load_control: LightLoadControl,
    /// Bulk voltage down to which the supply must keep regulating after the line drops
    /// (for the hold-up time); None: the lowest voltage at which the duty limit is met.
    pub hold_up_end_voltage: Option<ElectricPotential>,
    /// Required hold-up time, if any (adds the `hold_up_time` rule).
    pub hold_up_time: Option<Time>,
    /// Rule limits overridden by rule id.
    pub rule_limits: Vec<(String, Quantity)>,
}

impl FlybackSpec {
    /// A universal-input (90–264 V AC, 50 Hz) spec at 65 kHz with a 650 V switch, one output,
    /// reflected voltage 100 V, CCM with ripple ratio 0.8 … every default as documented on the
    /// fields' script keys (`help flyback_design`); the bulk valley target and the clamp
    /// voltage are derived from the specification when the design is made.
    pub fn universal(output: OutputWinding) -> Self {
        Self {
            input: InputRange::Ac {
                min_rms: si(90.0),
                max_rms: si(264.0),
                line_frequency: si(50.0),
            },
            bulk: BulkChoice::DerivedValley,
            bridge_diode_drop: si(1.0),
            bulk_ripple_current_rating: None,
            outputs: vec![output],
            regulated_output: 0,
            bias: None,
            switching_frequency: si(65e3),
            current_limit: None,
            current_limit_tolerance: 0.1,
            current_sense_delay: si(100e-9),
            max_duty_cycle: 0.7,
            minimum_on_time: si(150e-9),
            fault_time: si(50e-3),
            restart_off_time: si(450e-3),
            short_circuit_frequency: None,
            mode: Some(ModeTarget::Continuous { ripple_ratio: 0.8 }),
            primary_inductance: None,
            reflected_voltage: si(100.0),
            switch_voltage_rating: si(650.0),
            clamp: ClampKind::Rcd,
            clamp_voltage_above_reflected: None,
            clamp_diode_forward_recovery: si(5.0),
            drain_ringing_allowance: si(10.0),
            zener_tolerance: 0.05,
            zener_rise_hot: 0.075,
            leakage: Leakage::Fraction(0.02),
            efficiency: EfficiencyModel::Computed { start: 0.85 },
            losses: LossParameters::default(),
            ambient_temperature: si(273.15 + 50.0),
            // a through-hole power package in free air: about 2.5 K/W junction to case and
            // 60 K/W case to ambient (common practice, no published source); 125 °C house limit
            switch_thermal: ThermalPath {
                junction_to_case: si(2.5),
                case_to_ambient: si(60.0),
                max_junction_temperature: si(273.15 + HOUSE_MAX_JUNCTION_CELSIUS),
            },
            rectifier_thermal: ThermalPath {
                junction_to_case: si(3.0),
                case_to_ambient: si(60.0),
                max_junction_temperature: si(273.15 + HOUSE_MAX_JUNCTION_CELSIUS),
            },
            light_load_fraction: 0.1,
            light_load_control: LightLoadControl::FixedFrequency,
            hold_up_end_voltage: None,
            hold_up_time: None,
            rule_limits: Vec::new(),
        }
    }

    /// Total output power at full load, Σ V_o·I_o over the outputs plus V_bias·I_bias
    /// (definition; the bias rectifier's drop is not included).
    pub fn output_power(&self) -> Power {
        let mut p: f64 = self.outputs.iter().map(|o| o.power().value).sum();
        if let Some(b) = &self.bias {
            p += (b.voltage * b.current).value;
        }
        si(p)
    }

    /// Checks every field: finite, positive where needed, ranges consistent (min line at most
    /// max line, the current-sense delay shorter than the longest on-time D_max/f, the
    /// transition time shorter than half the period). Each error names the field and its unit.
    pub fn validate(&self) -> Result<()> {
        match self.input {
            InputRange::Ac {
                min_rms,
                max_rms,
                line_frequency,
            } => {
                positive("min_line_voltage", min_rms)?;
                positive("max_line_voltage", max_rms)?;
                positive("line_frequency", line_frequency)?;
                if min_rms > max_rms {
                    return Err(Error::invalid(format!(
                        "`min_line_voltage` ({}) is above `max_line_voltage` ({})",
                        Quantity::from_typed(min_rms),
                        Quantity::from_typed(max_rms)
                    )));
                }
            }
            InputRange::Dc { min, max } => {
                positive("min_line_voltage", min)?;
                positive("max_line_voltage", max)?;
                if min > max {
                    return Err(Error::invalid(format!(
                        "`min_line_voltage` ({}) of the DC bus is above `max_line_voltage` ({})",
                        Quantity::from_typed(min),
                        Quantity::from_typed(max)
                    )));
                }
            }
        }
        match self.bulk {
            BulkChoice::Capacitance(c) => {
                positive("bulk_capacitance", c)?;
            }
            BulkChoice::TargetValley(v) => {
                positive("target_valley_voltage", v)?;
                if let InputRange::Ac { min_rms, .. } = self.input {
                    let peak = std::f64::consts::SQRT_2 * min_rms.value
                        - 2.0 * self.bridge_diode_drop.value;
                    if v.value >= peak {
                        return Err(Error::invalid(format!(
                            "`target_valley_voltage` ({}) must be below the lowest rectified line \
                             peak, √2·`min_line_voltage` − 2·`bridge_diode_drop` = {}",
                            Quantity::from_typed(v),
                            Quantity::new(peak, crate::units::Dimension::VOLTAGE)
                        )));
                    }
                }
            }
            BulkChoice::DerivedValley => {}
        }
        non_negative("bridge_diode_drop", self.bridge_diode_drop)?;
        if let Some(r) = self.bulk_ripple_current_rating {
            positive("bulk_ripple_current_rating", r)?;
        }
        if self.outputs.is_empty() {
            return Err(Error::invalid("`outputs` must list at least one output"));
        }
        if self.regulated_output >= self.outputs.len() {
            return Err(Error::invalid(format!(
                "`regulated_output` {} is not an output index (0 … {})",
                self.regulated_output,
                self.outputs.len() - 1
            )));
        }
        for (i, o) in self.outputs.iter().enumerate() {
            let n = |k: &str| format!("outputs[{i}].{k}");
            positive(&n("voltage"), o.voltage)?;
            positive(&n("current"), o.current)?;
            non_negative(&n("rectifier_drop"), o.rectifier_drop)?;
            if let Some(r) = o.rectifier_voltage_rating {
                positive(&n("rectifier_voltage_rating"), r)?;
            }
            positive(&n("capacitance"), o.capacitance)?;
            non_negative(&n("esr"), o.esr)?;
            if let Some(r) = o.ripple_current_rating {
                positive(&n("ripple_current_rating"), r)?;
            }
            match (o.post_filter_inductance, o.post_filter_capacitance) {
                (Some(l), Some(c)) => {
                    positive(&n("post_filter_inductance"), l)?;
                    positive(&n("post_filter_capacitance"), c)?;
                }
                (None, None) => {}
                _ => {
                    return Err(Error::invalid(format!(
                        "`{}` and `{}` must be given together",
                        n("post_filter_inductance"),
                        n("post_filter_capacitance")
                    )))
                }
            }
        }
        if let Some(b) = &self.bias {
            positive("bias_voltage", b.voltage)?;
            non_negative("bias_current", b.current)?;
            non_negative("bias_rectifier_drop", b.rectifier_drop)?;
        }
        positive("switching_frequency", self.switching_frequency)?;
        if let Some(i) = self.current_limit {
            positive("current_limit", i)?;
        }
        number_within(
            "current_limit_tolerance",
            self.current_limit_tolerance,
            0.0,
            0.5,
        )?;
        non_negative("current_sense_delay", self.current_sense_delay)?;
        number_within("max_duty_cycle", self.max_duty_cycle, 0.05, 0.95)?;
        // the switch must be able to turn off within its longest on-time, and two transitions
        // must fit in one period; longer values make the overshoot and overlap formulas
        // meaningless (they would describe a converter that cannot switch at this frequency)
        let longest_on = self.max_duty_cycle / self.switching_frequency.value;
        if self.current_sense_delay.value >= longest_on {
            return Err(Error::invalid(format!(
                "`current_sense_delay` ({}) must be shorter than the longest on-time, \
                 `max_duty_cycle`/`switching_frequency` = {}",
                Quantity::from_typed(self.current_sense_delay),
                Quantity::new(longest_on, crate::units::Dimension::TIME)
            )));
        }
        non_negative("minimum_on_time", self.minimum_on_time)?;
        if self.minimum_on_time.value >= longest_on {
            return Err(Error::invalid(format!(
                "`minimum_on_time` ({}) must be shorter than the longest on-time, \
                 `max_duty_cycle`/`switching_frequency` = {}",
                Quantity::from_typed(self.minimum_on_time),
                Quantity::new(longest_on, crate::units::Dimension::TIME)
            )));
        }
        positive("fault_time", self.fault_time)?;
        non_negative("restart_off_time", self.restart_off_time)?;
        let f_short = match self.short_circuit_frequency {
            Some(fs) => {
                positive("short_circuit_frequency", fs)?;
                if fs > self.switching_frequency {
                    return Err(Error::invalid(format!(
                        "`short_circuit_frequency` ({}) must be at most `switching_frequency` ({}): \
                         a controller folds its frequency back, not up",
                        Quantity::from_typed(fs),
                        Quantity::from_typed(self.switching_frequency)
                    )));
                }
                fs.value
            }
            None => self.switching_frequency.value,
        };
        if self.fault_time.value * f_short > 1e7 {
            return Err(Error::out_of_range(format!(
                "`fault_time` ({}) spans more than 10 million switching cycles",
                Quantity::from_typed(self.fault_time)
            )));
        }
        let half_period = 0.5 / self.switching_frequency.value;
        if self.losses.transition_time.value >= half_period {
            return Err(Error::invalid(format!(
                "`transition_time` ({}) must be shorter than half the switching period ({})",
                Quantity::from_typed(self.losses.transition_time),
                Quantity::new(half_period, crate::units::Dimension::TIME)
            )));
        }
        match self.mode {
            Some(ModeTarget::Discontinuous { margin }) => {
                number_within("dcm_margin", margin, 0.0, 0.9)?;
            }
            Some(ModeTarget::Continuous { ripple_ratio }) => {
                number_within("ripple_ratio", ripple_ratio, 0.05, 1.99)?;
            }
            _ => {}
        }
        if let Some(l) = self.primary_inductance {
            positive("primary_inductance", l)?;
        } else if self.mode.is_none() {
            return Err(Error::missing(
                "give either a `mode` target or a `primary_inductance` (H)",
            ));
        }
        positive("reflected_voltage", self.reflected_voltage)?;
        positive("switch_voltage_rating", self.switch_voltage_rating)?;
        if let Some(v) = self.clamp_voltage_above_reflected {
            positive("clamp_voltage_above_reflected", v)?;
        }
        non_negative(
            "clamp_diode_forward_recovery",
            self.clamp_diode_forward_recovery,
        )?;
        non_negative("drain_ringing_allowance", self.drain_ringing_allowance)?;
        number_within("zener_tolerance", self.zener_tolerance, 0.0, 0.3)?;
        number_within("zener_rise_hot", self.zener_rise_hot, -0.3, 0.3)?;
        match self.leakage {
            Leakage::Fraction(x) => {
                number_within("leakage_fraction", x, 0.0, 0.2)?;
            }
            Leakage::Value(l) => {
                non_negative("leakage_inductance", l)?;
            }
        }
        match self.efficiency {
            EfficiencyModel::Estimate(x) | EfficiencyModel::Computed { start: x } => {
                number_within("efficiency", x, 0.3, 1.0)?;
            }
        }
        let l = &self.losses;
        non_negative("switch_on_resistance", l.switch_on_resistance)?;
        number_within(
            "on_resistance_hot_factor",
            l.on_resistance_hot_factor,
            1.0,
            4.0,
        )?;
        non_negative("switch_output_capacitance", l.switch_output_capacitance)?;
        non_negative("transition_time", l.transition_time)?;
        non_negative("controller_power", l.controller_power)?;
        non_negative("bulk_esr", l.bulk_esr)?;
        number_within(
            "transformer_loss_fraction",
            l.transformer_loss_fraction,
            0.0,
            0.3,
        )?;
        number_within("light_load_fraction", self.light_load_fraction, 0.01, 0.99)?;
        match self.light_load_control {
            LightLoadControl::FixedFrequency => {}
            LightLoadControl::Burst {
                minimum_peak_fraction,
            } => {
                number_within("minimum_peak_fraction", minimum_peak_fraction, 0.05, 0.9)?;
            }
            LightLoadControl::FrequencyFoldback {
                minimum_peak_fraction,
                minimum_frequency,
            } => {
                number_within("minimum_peak_fraction", minimum_peak_fraction, 0.05, 0.9)?;
                positive("minimum_frequency", minimum_frequency)?;
                if minimum_frequency > self.switching_frequency {
                    return Err(Error::invalid(format!(
                        "`minimum_frequency` ({}) must be at most `switching_frequency` ({})",
                        Quantity::from_typed(minimum_frequency),
                        Quantity::from_typed(self.switching_frequency)
                    )));
                }
            }
        }
        for (name, p) in [
            ("switch", &self.switch_thermal),
            ("rectifier", &self.rectifier_thermal),
        ] {
            non_negative(&format!("{name}_junction_to_case"), p.junction_to_case)?;
            non_negative(&format!("{name}_case_to_ambient"), p.case_to_ambient)?;
            positive(
                &format!("{name}_max_junction_temperature"),
                p.max_junction_temperature,
            )?;
            if p.max_junction_temperature <= self.ambient_temperature {
                return Err(Error::invalid(format!(
                    "`{name}_max_junction_temperature` ({}) must be above `ambient_temperature` ({})",
                    Quantity::from_typed(p.max_junction_temperature),
                    Quantity::from_typed(self.ambient_temperature)
                )));
            }
        }
        positive("ambient_temperature", self.ambient_temperature)?;
        if let Some(v) = self.hold_up_end_voltage {
            positive("hold_up_end_voltage", v)?;
        }
        if let Some(t) = self.hold_up_time {
            positive("hold_up_time", t)?;
        }
        Ok(())
    }
}
