//! Script API of the flyback power stage: `flyback_design(#{...})`, its summary, corner table,
//! loss budget, overload table, rule results and a Markdown report.

use super::api_rules::checks_to_array;
use super::convert::{dynamic_to_quantity, dynamic_to_typed, lift, script_error, ScriptResult};
use super::docs::{Domain, FunctionDoc, ParamDoc, ParamKind};
use super::host::HostState;
use super::record::ScriptRecord;
use super::spec::Spec;
use super::{def, Api};
use crate::error::{Error, Result};
use crate::flyback::{
    boundary_inductance, design_report_markdown, flyback_design, post_filter, BiasWinding,
    BulkChoice, ClampKind, EfficiencyModel, FlybackDesign, FlybackSpec, InputRange, Leakage,
    LossParameters, ModeTarget, OutputWinding,
};
use crate::report::{Field, Table};
use crate::units::{Frequency, Inductance};
use rhai::{Array, Dynamic, ImmutableString, Map};
use std::sync::Arc;

use ParamKind::{Flag, List, Number, Quantity as Q, Text};

const DESIGN_EXAMPLE: &str = "flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A})";

static DESIGN: FunctionDoc = FunctionDoc {
    name: "flyback_design",
    domain: Domain::Flyback,
    summary: "Designs an offline flyback power stage: inductance, current limit, turns ratios, bulk capacitor, clamp, every corner of line and load, losses, overload power and design rules.",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::with_default("input", Text, "ac", "\"ac\" (mains through a bridge) or \"dc\" (a DC bus)"),
        ParamDoc::with_default("min_line_voltage", Q("V"), "90 V", "lowest line (RMS) or bus voltage"),
        ParamDoc::with_default("max_line_voltage", Q("V"), "264 V", "highest line (RMS) or bus voltage"),
        ParamDoc::with_default("line_frequency", Q("Hz"), "50 Hz", "lowest line frequency"),
        ParamDoc::optional("bulk_capacitance", Q("F"), "bulk capacitance; else sized for target_valley_voltage"),
        ParamDoc::optional("target_valley_voltage", Q("V"), "bulk valley at low line, full load when sizing the bulk capacitor (rounded up to E12); else 0.64 × the lowest rectified line peak (about 80 V at 90 V, 160 V at 180 V), listed in derived_defaults"),
        ParamDoc::with_default("bridge_diode_drop", Q("V"), "1 V", "drop of one bridge diode"),
        ParamDoc::with_default("bulk_esr", Q("Ω"), "1 ohm", "bulk capacitor ESR"),
        ParamDoc::optional("bulk_ripple_current_rating", Q("A"), "bulk capacitor ripple current rating (checks its rule; without it the rule is listed as not applicable)"),
        ParamDoc::optional("output_voltage", Q("V"), "single output: voltage (or use `outputs`)"),
        ParamDoc::optional("output_current", Q("A"), "single output: full-load current"),
        ParamDoc::with_default("rectifier_drop", Q("V"), "0.5 V", "single output: rectifier forward drop"),
        ParamDoc::optional("rectifier_voltage_rating", Q("V"), "single output: rectifier reverse rating (checks its rule; without it the rule is listed as not applicable)"),
        ParamDoc::with_default("output_capacitance", Q("F"), "1000 uF", "single output: output capacitance"),
        ParamDoc::with_default("output_esr", Q("Ω"), "30 mohm", "single output: output capacitor ESR"),
        ParamDoc::optional("output_ripple_current_rating", Q("A"), "single output: capacitor ripple rating (checks its rule; without it the rule is listed as not applicable)"),
        ParamDoc::optional("post_filter_inductance", Q("H"), "single output: LC post filter inductance"),
        ParamDoc::optional("post_filter_capacitance", Q("F"), "single output: LC post filter capacitance"),
        ParamDoc::optional("outputs", List, "several outputs: array of maps with keys voltage, current, rectifier_drop, rectifier_voltage_rating, capacitance, esr, ripple_current_rating, post_filter_inductance, post_filter_capacitance, regulated (defaults as the single-output keys; the first output is regulated unless one says regulated: true)"),
        ParamDoc::optional("bias_voltage", Q("V"), "controller supply winding voltage"),
        ParamDoc::with_default("bias_current", Q("A"), "5 mA", "controller supply current"),
        ParamDoc::with_default("bias_rectifier_drop", Q("V"), "0.7 V", "bias rectifier drop"),
        ParamDoc::with_default("switching_frequency", Q("Hz"), "65 kHz", "fixed switching frequency"),
        ParamDoc::optional("current_limit", Q("A"), "nominal peak current limit; else 10 % above the low-line full-load peak at its low tolerance"),
        ParamDoc::with_default("current_limit_tolerance", Number, "0.1", "relative tolerance of the current limit"),
        ParamDoc::with_default("current_sense_delay", Q("s"), "100 ns", "delay from limit to turn-off"),
        ParamDoc::with_default("max_duty_cycle", Number, "0.7", "controller's largest duty cycle"),
        ParamDoc::with_default("minimum_on_time", Q("s"), "150 ns", "controller's shortest on-time (blanking and delay); decides whether a shorted output's current settles"),
        ParamDoc::with_default("fault_time", Q("s"), "50 ms", "auto-restart: time at the current limit before the controller stops"),
        ParamDoc::with_default("restart_off_time", Q("s"), "450 ms", "auto-restart: time off before it tries again"),
        ParamDoc::optional("short_circuit_frequency", Q("Hz"), "switching frequency with the output shorted (frequency foldback); else switching_frequency"),
        ParamDoc::with_default("mode", Text, "ccm", "inductance target at low line, full load: \"ccm\", \"dcm\" or \"boundary\"; with primary_inductance it is checked instead"),
        ParamDoc::with_default("ripple_ratio", Number, "0.8", "CCM: ΔI / I_mid at low line, full load (0.05 … 1.99)"),
        ParamDoc::with_default("dcm_margin", Number, "0.1", "DCM: relative margin below the boundary inductance"),
        ParamDoc::optional("primary_inductance", Q("H"), "a given primary inductance"),
        ParamDoc::with_default("reflected_voltage", Q("V"), "100 V", "reflected voltage of the regulated output, n·(V_out + V_rectifier)"),
        ParamDoc::optional("turns_ratio", Number, "primary to regulated-secondary turns ratio N_p/N_s (instead of reflected_voltage)"),
        ParamDoc::with_default("switch_voltage_rating", Q("V"), "650 V", "switch drain-source rating"),
        ParamDoc::with_default("clamp", Text, "rcd", "\"rcd\" or \"zener\""),
        ParamDoc::optional("clamp_voltage_above_reflected", Q("V"), "clamp overshoot above the reflected voltage at the worst case; else 0.5 × reflected_voltage, or what the drain limit (85 % of switch_voltage_rating) leaves above the highest bulk peak, the allowances and the clamp's spread if less (an error below 0.25 × reflected_voltage), listed in derived_defaults"),
        ParamDoc::with_default("clamp_diode_forward_recovery", Q("V"), "5 V", "clamp diode forward-recovery overshoot, added to the drain peak"),
        ParamDoc::with_default("drain_ringing_allowance", Q("V"), "10 V", "stated allowance for leakage ringing above the clamp, added to the drain peak"),
        ParamDoc::with_default("zener_tolerance", Number, "0.05", "zener clamp: relative voltage tolerance"),
        ParamDoc::with_default("zener_rise_hot", Number, "0.075", "zener clamp: relative voltage rise from 25 °C to its hot junction, temperature coefficient × rise (0.1 %/K × 75 K)"),
        ParamDoc::with_default("leakage_fraction", Number, "0.02", "leakage inductance as a fraction of the primary"),
        ParamDoc::optional("leakage_inductance", Q("H"), "leakage inductance (instead of the fraction)"),
        ParamDoc::with_default("efficiency", Number, "0.85", "efficiency estimate (starting value when computed)"),
        ParamDoc::with_default("efficiency_model", Text, "computed", "\"computed\" (iterate the loss model) or \"estimate\" (fixed)"),
        ParamDoc::with_default("switch_on_resistance", Q("Ω"), "1.5 ohm", "switch on-resistance at 25 °C"),
        ParamDoc::with_default("on_resistance_hot_factor", Number, "2", "on-resistance hot over 25 °C"),
        ParamDoc::with_default("switch_output_capacitance", Q("F"), "20 pF", "switch output capacitance"),
        ParamDoc::with_default("transition_time", Q("s"), "30 ns", "switching overlap time"),
        ParamDoc::with_default("controller_power", Q("W"), "0.1 W", "controller supply power without a bias winding"),
        ParamDoc::with_default("transformer_loss_fraction", Number, "0.02", "transformer loss estimate as a fraction of output power"),
        ParamDoc::with_default("light_load_fraction", Number, "0.1", "light load as a fraction of full load"),
        ParamDoc::with_default("light_load_control", Text, "fixed", "controller at light load: \"fixed\" frequency, \"foldback\" (peak held at minimum_peak_fraction of the limit, frequency falling to minimum_frequency) or \"burst\" (pulses of that peak, average rate carrying the load)"),
        ParamDoc::with_default("minimum_peak_fraction", Number, "0.25", "foldback and burst: least peak current over the nominal current limit"),
        ParamDoc::with_default("minimum_frequency", Q("Hz"), "20 kHz", "foldback: lowest switching frequency"),
        ParamDoc::with_default("ambient_temperature", Q("°C"), "50 °C", "air around the switch and rectifiers"),
        ParamDoc::with_default("switch_junction_to_case", Q("K/W"), "2.5 K/W", "switch junction-to-case thermal resistance"),
        ParamDoc::with_default("switch_case_to_ambient", Q("K/W"), "60 K/W", "switch case to ambient: heat sink and interface, or the package in free air"),
        ParamDoc::with_default("switch_max_junction_temperature", Q("°C"), "125 °C", "house limit of the switch junction"),
        ParamDoc::with_default("rectifier_junction_to_case", Q("K/W"), "3 K/W", "output rectifier junction-to-case thermal resistance (every output)"),
        ParamDoc::with_default("rectifier_case_to_ambient", Q("K/W"), "60 K/W", "output rectifier case to ambient (every output)"),
        ParamDoc::with_default("rectifier_max_junction_temperature", Q("°C"), "125 °C", "house limit of the rectifier junctions"),
        ParamDoc::optional("hold_up_end_voltage", Q("V"), "bulk voltage ending hold-up; else where the duty limit is reached"),
        ParamDoc::optional("hold_up_time", Q("s"), "required hold-up time (checks its rule; without it the rule is listed as not applicable)"),
        ParamDoc::optional("rule_limits", ParamKind::Map, "rule id → limit, overriding the default rule book: duty_cycle_limit (number), drain_voltage_derating (V), rectifier_voltage_derating (reverse voltage over rating), output_capacitor_ripple_current and bulk_capacitor_ripple_current (ripple over rating), mode_target (L over the boundary inductance), bulk_valley_minimum (V), hold_up_time (s), short_circuit_settles (shortest over balance on-time), switch_junction_temperature and rectifier_junction_temperature (°C)"),
    ],
    returns: "a FlybackDesign; its summary fields read as properties (d.primary_inductance)",
    example: DESIGN_EXAMPLE,
};

/// Keys of one map in `outputs` (not a function; used to check the keys).
static OUTPUT_KEYS: FunctionDoc = FunctionDoc {
    name: "flyback_design outputs[]",
    domain: Domain::Flyback,
    summary: "one output winding",
    params: &[],
    keys: &[
        ParamDoc::required("voltage", Q("V"), "output voltage"),
        ParamDoc::required("current", Q("A"), "full-load current"),
        ParamDoc::with_default("rectifier_drop", Q("V"), "0.5 V", "rectifier forward drop"),
        ParamDoc::optional(
            "rectifier_voltage_rating",
            Q("V"),
            "rectifier reverse rating",
        ),
        ParamDoc::with_default("capacitance", Q("F"), "1000 uF", "output capacitance"),
        ParamDoc::with_default("esr", Q("Ω"), "30 mohm", "output capacitor ESR"),
        ParamDoc::optional("ripple_current_rating", Q("A"), "capacitor ripple rating"),
        ParamDoc::optional(
            "post_filter_inductance",
            Q("H"),
            "LC post filter inductance",
        ),
        ParamDoc::optional(
            "post_filter_capacitance",
            Q("F"),
            "LC post filter capacitance",
        ),
        ParamDoc::with_default("regulated", Flag, "false", "the loop regulates this output"),
    ],
    returns: "",
    example: "",
};

static SUMMARY: FunctionDoc = FunctionDoc {
    name: "flyback_summary",
    domain: Domain::Flyback,
    summary: "The design's summary as a record (one row in a family table).",
    params: &[ParamDoc::required("design", ParamKind::Any, "a FlybackDesign")],
    keys: &[],
    returns: "record: inductance, turns ratios, currents, stresses, clamp, efficiency, overload power, worst_status …",
    example: "flyback_summary(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}))",
};
static CORNERS: FunctionDoc = FunctionDoc {
    name: "corner_table",
    domain: Domain::Flyback,
    summary: "One row per corner of line and load (and the current-limit corners): bulk voltages, mode, duty, currents on every winding, stresses, efficiency.",
    params: &[ParamDoc::required("design", ParamKind::Any, "a FlybackDesign")],
    keys: &[],
    returns: "a Table",
    example: "corner_table(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}))",
};
static CORNER: FunctionDoc = FunctionDoc {
    name: "flyback_corner",
    domain: Domain::Flyback,
    summary: "One corner as a record: low_line_full_load, low_line_light_load, high_line_full_load, high_line_light_load, current_limit_low_line, current_limit_high_line.",
    params: &[
        ParamDoc::required("design", ParamKind::Any, "a FlybackDesign"),
        ParamDoc::required("name", Text, "corner name"),
    ],
    keys: &[],
    returns: "record of the operating point",
    example: "flyback_corner(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}), \"high_line_full_load\")",
};
static LOSSES: FunctionDoc = FunctionDoc {
    name: "loss_table",
    domain: Domain::Flyback,
    summary: "The loss budget of a corner: one row per loss, summing to the input power.",
    params: &[
        ParamDoc::required("design", ParamKind::Any, "a FlybackDesign"),
        ParamDoc::required("name", Text, "corner name"),
    ],
    keys: &[],
    returns: "a Table",
    example: "loss_table(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}), \"low_line_full_load\")",
};
static OVERLOAD: FunctionDoc = FunctionDoc {
    name: "overload_table",
    domain: Domain::Flyback,
    summary: "Output power at the current limit at low and high line, at both ends of the limit's tolerance, stopping where the duty limit binds.",
    params: &[ParamDoc::required("design", ParamKind::Any, "a FlybackDesign")],
    keys: &[],
    returns: "a Table, one row per line and tolerance end, with duty_cycle and limited_by (current_limit or max_duty_cycle)",
    example: "overload_table(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}))",
};
static DEFAULTS: FunctionDoc = FunctionDoc {
    name: "flyback_defaults",
    domain: Domain::Flyback,
    summary: "The values the specification left open and the design derived from it (bulk valley target, clamp voltage, current limit), with how each was derived.",
    params: &[ParamDoc::required("design", ParamKind::Any, "a FlybackDesign")],
    keys: &[],
    returns: "a Table with key, value and derivation",
    example: "flyback_defaults(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, min_line_voltage: 180 * V, max_line_voltage: 265 * V}))",
};
static SHORT: FunctionDoc = FunctionDoc {
    name: "short_circuit_table",
    domain: Domain::Flyback,
    summary: "The regulated output shorted, at low and high line: the primary current's staircase to the highest limit plus the sense-delay overshoot (or its runaway when the shortest on-time exceeds the volt-second balance), and the power and rectifier current the auto-restart lets through.",
    params: &[ParamDoc::required("design", ParamKind::Any, "a FlybackDesign")],
    keys: &[],
    returns: "a Table, one row per line: bus_voltage, balance_on_time, shortest_on_time, on_time_ratio, settles, cycles_to_limit, primary_current_peak, power_during_fault, power_average, rectifier currents",
    example: "short_circuit_table(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}))",
};
static JUNCTIONS: FunctionDoc = FunctionDoc {
    name: "junction_table",
    domain: Domain::Flyback,
    summary: "Junction temperature of the switch and each output rectifier at its worst corner, T_a + P·(R_θjc + R_θca), with the case-to-ambient thermal resistance (heat sink) that holds the junction limit.",
    params: &[ParamDoc::required("design", ParamKind::Any, "a FlybackDesign")],
    keys: &[],
    returns: "a Table, one row per part: part, corner, loss, junction_temperature, max_junction_temperature, case_to_ambient_needed",
    example: "junction_table(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}))",
};
static CHECKS: FunctionDoc = FunctionDoc {
    name: "flyback_checks",
    domain: Domain::Flyback,
    summary: "The design's rule results; their failures count once per design toward the runner's strict mode, however often they are asked for; print with checks_table.",
    params: &[ParamDoc::required("design", ParamKind::Any, "a FlybackDesign")],
    keys: &[],
    returns: "array of CheckResult",
    example: "checks_table(flyback_checks(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A})))",
};
static REPORT: FunctionDoc = FunctionDoc {
    name: "flyback_report",
    domain: Domain::Flyback,
    summary: "The design as a Markdown report with the safety caution (hand it to the runner with output_text).",
    params: &[
        ParamDoc::required("design", ParamKind::Any, "a FlybackDesign"),
        ParamDoc::required("title", Text, "report title"),
    ],
    keys: &[],
    returns: "text",
    example: "flyback_report(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}), \"12 V supply\")",
};
static BOUNDARY: FunctionDoc = FunctionDoc {
    name: "boundary_inductance",
    domain: Domain::Flyback,
    summary:
        "Primary inductance at the CCM/DCM boundary, L_b = (V·D_b)²/(2·P·f), D_b = V_r/(V + V_r).",
    params: &[
        ParamDoc::required("input_voltage", Q("V"), "input (bulk) voltage"),
        ParamDoc::required("input_power", Q("W"), "converter input power"),
        ParamDoc::required("reflected_voltage", Q("V"), "reflected voltage"),
        ParamDoc::required("switching_frequency", Q("Hz"), "switching frequency"),
    ],
    keys: &[],
    returns: "H",
    example: "boundary_inductance(100 * V, 20 * W, 100 * V, 65 * kHz)",
};
static POST: FunctionDoc = FunctionDoc {
    name: "post_filter",
    domain: Domain::Flyback,
    summary: "Corner frequency and attenuation at the switching frequency of an LC post filter, 20·log10|1 − (f/f₀)²|.",
    params: &[
        ParamDoc::required("inductance", Q("H"), "filter inductance"),
        ParamDoc::required("capacitance", Q("F"), "filter capacitance"),
        ParamDoc::required("switching_frequency", Q("Hz"), "switching frequency"),
    ],
    keys: &[],
    returns: "record: corner_frequency, attenuation (dB), gain",
    example: "post_filter(1 * uH, 100 * uF, 65 * kHz)",
};

/// A flyback design in scripts: the native design plus its summary record.
#[derive(Clone, Debug)]
pub struct ScriptFlyback {
    design: Arc<FlybackDesign>,
    summary: ScriptRecord,
    spec: Arc<crate::flyback::FlybackSpec>,
}

impl ScriptFlyback {
    /// The specification the design was made from.
    pub(crate) fn spec(&self) -> &crate::flyback::FlybackSpec {
        &self.spec
    }
    /// The summary record (what `d.field` reads).
    pub(crate) fn summary(&self) -> &ScriptRecord {
        &self.summary
    }
    /// The native design.
    pub(crate) fn design(&self) -> &FlybackDesign {
        &self.design
    }
}

fn output_from(s: &Spec, prefix_single: bool) -> Result<(OutputWinding, bool)> {
    let k = |single: &'static str, multi: &'static str| if prefix_single { single } else { multi };
    let mut o = OutputWinding::new(
        s.quantity(k("output_voltage", "voltage"))?,
        s.quantity(k("output_current", "current"))?,
    );
    o.rectifier_drop = s.quantity("rectifier_drop")?;
    o.rectifier_voltage_rating = s.optional_quantity("rectifier_voltage_rating")?;
    o.capacitance = s.quantity(k("output_capacitance", "capacitance"))?;
    o.esr = s.quantity(k("output_esr", "esr"))?;
    o.ripple_current_rating =
        s.optional_quantity(k("output_ripple_current_rating", "ripple_current_rating"))?;
    o.post_filter_inductance = s.optional_quantity("post_filter_inductance")?;
    o.post_filter_capacitance = s.optional_quantity("post_filter_capacitance")?;
    let regulated = if prefix_single {
        true
    } else {
        s.flag("regulated")?
    };
    Ok((o, regulated))
}

fn spec_from_map(m: &Map) -> Result<FlybackSpec> {
    let s = Spec::new(&DESIGN, m)?;
    let given = |k: &str| m.get(k).is_some_and(|v| !v.is_unit());
    let (lo, hi) = (
        s.quantity("min_line_voltage")?,
        s.quantity("max_line_voltage")?,
    );
    let input = match s.text("input")?.as_str() {
        "ac" => InputRange::Ac {
            min_rms: lo,
            max_rms: hi,
            line_frequency: s.quantity("line_frequency")?,
        },
        "dc" => InputRange::Dc { min: lo, max: hi },
        other => {
            return Err(Error::unknown(format!(
                "flyback_design: `input` must be \"ac\" or \"dc\", got \"{other}\""
            )))
        }
    };
    let bulk = match s.optional_quantity("bulk_capacitance")? {
        Some(c) => {
            if given("target_valley_voltage") {
                return Err(Error::invalid(
                    "flyback_design: give `bulk_capacitance` (F) or `target_valley_voltage` (V), not both",
                ));
            }
            BulkChoice::Capacitance(c)
        }
        None => match s.optional_quantity("target_valley_voltage")? {
            Some(v) => BulkChoice::TargetValley(v),
            None => BulkChoice::DerivedValley,
        },
    };
    let mut outputs = Vec::new();
    let mut regulated_output = 0;
    match s.value("outputs")? {
        Some(v) => {
            if given("output_voltage") || given("output_current") {
                return Err(Error::invalid(
                    "flyback_design: give `outputs` or `output_voltage`/`output_current`, not both",
                ));
            }
            let arr = v.try_cast::<Array>().ok_or_else(|| {
                Error::invalid("flyback_design: `outputs` must be an array of maps")
            })?;
            let mut found = false;
            for (i, d) in arr.iter().enumerate() {
                let om = d.read_lock::<Map>().ok_or_else(|| {
                    Error::invalid(format!("flyback_design: `outputs[{i}]` must be a map"))
                })?;
                let os = Spec::new(&OUTPUT_KEYS, &om)
                    .map_err(|e| e.context(&format!("outputs[{i}]")))?;
                let (o, reg) =
                    output_from(&os, false).map_err(|e| e.context(&format!("outputs[{i}]")))?;
                if reg && !found {
                    regulated_output = i;
                    found = true;
                }
                outputs.push(o);
            }
        }
        None => outputs.push(output_from(&s, true)?.0),
    }
    let bias = match s.optional_quantity("bias_voltage")? {
        Some(v) => Some(BiasWinding {
            voltage: v,
            current: s.quantity("bias_current")?,
            rectifier_drop: s.quantity("bias_rectifier_drop")?,
        }),
        None => None,
    };
    let target = match s.text("mode")?.as_str() {
        "ccm" => ModeTarget::Continuous {
            ripple_ratio: s.number("ripple_ratio")?,
        },
        "dcm" => ModeTarget::Discontinuous {
            margin: s.number("dcm_margin")?,
        },
        "boundary" => ModeTarget::Boundary,
        other => {
            return Err(Error::unknown(format!(
                "flyback_design: `mode` must be \"ccm\", \"dcm\" or \"boundary\", got \"{other}\""
            )))
        }
    };
    let primary_inductance = s.optional_quantity("primary_inductance")?;
    let mode = if primary_inductance.is_some() && !given("mode") {
        None
    } else {
        Some(target)
    };
    let clamp = match s.text("clamp")?.as_str() {
        "rcd" => ClampKind::Rcd,
        "zener" => ClampKind::Zener,
        other => {
            return Err(Error::unknown(format!(
                "flyback_design: `clamp` must be \"rcd\" or \"zener\", got \"{other}\""
            )))
        }
    };
    let leakage = match s.optional_quantity("leakage_inductance")? {
        Some(l) => Leakage::Value(l),
        None => Leakage::Fraction(s.number("leakage_fraction")?),
    };
    let eta = s.number("efficiency")?;
    let efficiency = match s.text("efficiency_model")?.as_str() {
        "computed" => EfficiencyModel::Computed { start: eta },
        "estimate" => EfficiencyModel::Estimate(eta),
        other => {
            return Err(Error::unknown(format!(
                "flyback_design: `efficiency_model` must be \"computed\" or \"estimate\", got \"{other}\""
            )))
        }
    };
    let mut rule_limits = Vec::new();
    if let Some(v) = s.value("rule_limits")? {
        let rm = v.try_cast::<Map>().ok_or_else(|| {
            Error::invalid("flyback_design: `rule_limits` must be a map of rule id → limit")
        })?;
        for (id, lim) in rm.iter() {
            rule_limits.push((id.to_string(), dynamic_to_quantity(lim, id, None)?));
        }
    }
    let reflected_voltage = match s.optional_number("turns_ratio")? {
        Some(n) => {
            if given("reflected_voltage") {
                return Err(Error::invalid(
                    "flyback_design: give `reflected_voltage` (V) or `turns_ratio`, not both",
                ));
            }
            crate::units::validate::positive_number("turns_ratio", n)?;
            let o = &outputs[regulated_output.min(outputs.len().saturating_sub(1))];
            (o.voltage + o.rectifier_drop) * n
        }
        None => s.quantity("reflected_voltage")?,
    };
    let spec = FlybackSpec {
        input,
        bulk,
        bridge_diode_drop: s.quantity("bridge_diode_drop")?,
        bulk_ripple_current_rating: s.optional_quantity("bulk_ripple_current_rating")?,
        outputs,
        regulated_output,
        bias,
        switching_frequency: s.quantity("switching_frequency")?,
        current_limit: s.optional_quantity("current_limit")?,
        current_limit_tolerance: s.number("current_limit_tolerance")?,
        current_sense_delay: s.quantity("current_sense_delay")?,
        max_duty_cycle: s.number("max_duty_cycle")?,
        minimum_on_time: s.quantity("minimum_on_time")?,
        fault_time: s.quantity("fault_time")?,
        restart_off_time: s.quantity("restart_off_time")?,
        short_circuit_frequency: s.optional_quantity("short_circuit_frequency")?,
        mode,
        primary_inductance,
        reflected_voltage,
        switch_voltage_rating: s.quantity("switch_voltage_rating")?,
        clamp,
        clamp_voltage_above_reflected: s.optional_quantity("clamp_voltage_above_reflected")?,
        clamp_diode_forward_recovery: s.quantity("clamp_diode_forward_recovery")?,
        drain_ringing_allowance: s.quantity("drain_ringing_allowance")?,
        zener_tolerance: s.number("zener_tolerance")?,
        zener_rise_hot: s.number("zener_rise_hot")?,
        leakage,
        efficiency,
        losses: LossParameters {
            switch_on_resistance: s.quantity("switch_on_resistance")?,
            on_resistance_hot_factor: s.number("on_resistance_hot_factor")?,
            switch_output_capacitance: s.quantity("switch_output_capacitance")?,
            transition_time: s.quantity("transition_time")?,
            controller_power: s.quantity("controller_power")?,
            bulk_esr: s.quantity("bulk_esr")?,
            transformer_loss_fraction: s.number("transformer_loss_fraction")?,
        },
        light_load_fraction: s.number("light_load_fraction")?,
        light_load_control: match s.text("light_load_control")?.as_str() {
            "fixed" => crate::flyback::LightLoadControl::FixedFrequency,
            "foldback" => crate::flyback::LightLoadControl::FrequencyFoldback {
                minimum_peak_fraction: s.number("minimum_peak_fraction")?,
                minimum_frequency: s.quantity("minimum_frequency")?,
            },
            "burst" => crate::flyback::LightLoadControl::Burst {
                minimum_peak_fraction: s.number("minimum_peak_fraction")?,
            },
            other => {
                return Err(Error::unknown(format!(
                    "flyback_design: `light_load_control` must be \"fixed\", \"foldback\" or \"burst\", got \"{other}\""
                )))
            }
        },
        ambient_temperature: s.quantity("ambient_temperature")?,
        switch_thermal: crate::flyback::ThermalPath {
            junction_to_case: s.quantity("switch_junction_to_case")?,
            case_to_ambient: s.quantity("switch_case_to_ambient")?,
            max_junction_temperature: s.quantity("switch_max_junction_temperature")?,
        },
        rectifier_thermal: crate::flyback::ThermalPath {
            junction_to_case: s.quantity("rectifier_junction_to_case")?,
            case_to_ambient: s.quantity("rectifier_case_to_ambient")?,
            max_junction_temperature: s.quantity("rectifier_max_junction_temperature")?,
        },
        hold_up_end_voltage: s.optional_quantity("hold_up_end_voltage")?,
        hold_up_time: s.optional_quantity("hold_up_time")?,
        rule_limits,
    };
    if clamp == ClampKind::Rcd {
        // read for the record, used only by a Zener clamp: reported as ignored when given
        s.ignore("zener_tolerance");
        s.ignore("zener_rise_hot");
    }
    Ok(spec)
}

/// With a single output given by top-level keys, errors name those keys, not `outputs[0].…`.
fn single_output_names(e: Error, single: bool) -> Error {
    if !single {
        return e;
    }
    let mut msg = e.message().to_string();
    for (native, key) in [
        ("outputs[0].voltage", "output_voltage"),
        ("outputs[0].current", "output_current"),
        ("outputs[0].capacitance", "output_capacitance"),
        ("outputs[0].esr", "output_esr"),
        (
            "outputs[0].ripple_current_rating",
            "output_ripple_current_rating",
        ),
        ("outputs[0].", ""),
    ] {
        msg = msg.replace(native, key);
    }
    Error::new(e.kind(), msg)
}

fn corner_of(d: &ScriptFlyback, name: &str) -> ScriptResult<crate::flyback::OperatingPoint> {
    d.design.corner(name).cloned().ok_or_else(|| {
        let names: Vec<&str> = d.design.corners.iter().map(|c| c.corner.as_str()).collect();
        script_error(Error::unknown(format!(
            "no corner `{name}`{}",
            super::suggest::did_you_mean(name, &names)
        )))
    })
}

pub(crate) fn register(api: &mut Api, state: &Arc<HostState>) {
    let e = &mut *api.engine;
    e.register_type_with_name::<ScriptFlyback>("FlybackDesign");
    e.register_indexer_get(
        |d: &mut ScriptFlyback, name: ImmutableString| -> ScriptResult<Dynamic> {
            match d.summary.get(name.as_str()) {
                Some(v) => Ok(super::convert::value_to_dynamic(v)),
                None => Err(script_error(Error::unknown(format!(
                    "FlybackDesign has no field `{name}`{}",
                    super::suggest::did_you_mean(&name, &d.summary.names())
                )))),
            }
        },
    );
    e.register_fn("to_string", |d: &mut ScriptFlyback| d.summary.to_text());
    e.register_fn("to_debug", |d: &mut ScriptFlyback| d.summary.to_text());

    def!(api, &DESIGN, |m: Map| -> ScriptResult<ScriptFlyback> {
        let spec = lift(spec_from_map(&m))?;
        let single = !m.contains_key("outputs");
        let d = lift(
            flyback_design(&spec)
                .map_err(|e| single_output_names(e, single).context("flyback_design")),
        )?;
        let summary = ScriptRecord::from_record("flyback_design", &d);
        Ok(ScriptFlyback {
            design: Arc::new(d),
            summary,
            spec: Arc::new(spec),
        })
    });
    def!(api, &SUMMARY, |d: ScriptFlyback| d.summary.clone());
    def!(api, &CORNERS, |d: ScriptFlyback| d.design.corner_table());
    def!(api, &CORNER, |d: ScriptFlyback,
                        name: ImmutableString|
     -> ScriptResult<ScriptRecord> {
        Ok(ScriptRecord::from_record(
            "operating_point",
            &corner_of(&d, &name)?,
        ))
    });
    def!(api, &LOSSES, |d: ScriptFlyback,
                        name: ImmutableString|
     -> ScriptResult<Table> {
        Ok(corner_of(&d, &name)?.losses.table())
    });
    def!(api, &OVERLOAD, |d: ScriptFlyback| d.design.overload_table());
    def!(api, &DEFAULTS, |d: ScriptFlyback| d.design.defaults_table());
    def!(api, &SHORT, |d: ScriptFlyback| d
        .design
        .short_circuit_table());
    def!(api, &JUNCTIONS, |d: ScriptFlyback| d
        .design
        .junction_table());
    def!(api, &CHECKS, move |d: ScriptFlyback| {
        checks_to_array(d.design.checks.clone())
    });
    let st = state.clone();
    def!(
        api,
        &REPORT,
        move |d: ScriptFlyback, title: ImmutableString| {
            st.verdict_text(
                design_report_markdown(&d.design, &title),
                super::api_rules::failed_count(&d.design.checks),
            )
        }
    );
    def!(
        api,
        &BOUNDARY,
        |v: Dynamic, p: Dynamic, vr: Dynamic, f: Dynamic| -> ScriptResult<crate::units::Quantity> {
            let l: Inductance = lift((|| {
                boundary_inductance(
                    dynamic_to_typed(&v, "input_voltage")?,
                    dynamic_to_typed(&p, "input_power")?,
                    dynamic_to_typed(&vr, "reflected_voltage")?,
                    dynamic_to_typed(&f, "switching_frequency")?,
                )
            })())?;
            Ok(crate::units::Quantity::from_typed(l))
        }
    );
    def!(api, &POST, |l: Dynamic,
                      c: Dynamic,
                      f: Dynamic|
     -> ScriptResult<ScriptRecord> {
        let p = lift((|| {
            let f: Frequency = dynamic_to_typed(&f, "switching_frequency")?;
            post_filter(
                dynamic_to_typed(&l, "inductance")?,
                dynamic_to_typed(&c, "capacitance")?,
                f,
            )
        })())?;
        Ok(ScriptRecord::new(
            "post_filter",
            vec![
                Field::quantity("corner_frequency", p.corner_frequency),
                Field::new("attenuation", p.attenuation),
                Field::new("gain", p.gain),
            ],
        ))
    });
}
