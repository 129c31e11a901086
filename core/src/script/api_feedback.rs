//! Script API of regulation: the output divider (and the output of a given one), shunt
//! reference and optocoupler bias, the control-to-output model of a flyback corner, the whole
//! regulation of a flyback design (compensation, margins at every corner, Bode data and plot,
//! rules), line sensing and the bias-winding Zener's over-voltage trip.

use super::api_flyback::ScriptFlyback;
use super::api_rules::checks_to_array;
use super::convert::{dynamic_to_quantity, lift, ScriptResult};
use super::docs::{Domain, FunctionDoc, ParamDoc, ParamKind};
use super::host::HostState;
use super::record::ScriptRecord;
use super::spec::Spec;
use super::{def, overload, Api};
use crate::error::{Error, Result};
use crate::feedback::{
    self, BiasSpec, BiasZenerSpec, FeedbackInput, LineSenseInput, LineSenseSpec, Optocoupler,
    OutputDividerSpec, OvervoltageZener, RegulationSpec, ShuntReference, Trim, TrimPosition,
};
use crate::passives::ESeries;
use crate::units::Quantity;
use rhai::{Dynamic, ImmutableString, Map};
use std::sync::Arc;

use ParamKind::{Flag, Integer, Number, Quantity as Q, Text};

const VREF: ParamDoc = ParamDoc::with_default(
    "reference_voltage",
    Q("V"),
    "2.5 V",
    "shunt reference voltage",
);
const VREF_TOL: ParamDoc = ParamDoc::with_default(
    "reference_tolerance",
    Number,
    "0.01",
    "relative tolerance of the reference voltage",
);
const IREF: ParamDoc = ParamDoc::with_default(
    "reference_input_current",
    Q("A"),
    "2 uA",
    "current into the reference input (flows through the upper resistor)",
);
const IKMIN: ParamDoc = ParamDoc::with_default(
    "minimum_cathode_current",
    Q("A"),
    "1 mA",
    "least cathode current at which the reference regulates",
);
const VKMIN: ParamDoc = ParamDoc::with_default(
    "minimum_cathode_voltage",
    Q("V"),
    "2.5 V",
    "least cathode voltage at which the reference regulates",
);
const IDIV: ParamDoc = ParamDoc::with_default(
    "divider_current",
    Q("A"),
    "250 uA",
    "wanted current in the lower resistor",
);
const RSERIES: ParamDoc =
    ParamDoc::with_default("series", Text, "E96", "IEC 60063 series of the resistors");
const RTOL: ParamDoc = ParamDoc::with_default(
    "resistor_tolerance",
    Number,
    "0.01",
    "relative tolerance of each resistor",
);
const TRIM: ParamDoc = ParamDoc::with_default(
    "trim",
    Flag,
    "true",
    "add a third resistor across one of the pair when it lands closer",
);
const CTR_MIN: ParamDoc = ParamDoc::with_default(
    "ctr_min",
    Number,
    "0.5",
    "lowest CTR after ageing, at temperature",
);
const CTR_MAX: ParamDoc = ParamDoc::with_default("ctr_max", Number, "2", "highest CTR");
const VF: ParamDoc = ParamDoc::with_default(
    "led_forward_voltage",
    Q("V"),
    "1 V",
    "optocoupler LED forward voltage",
);
const IF_MIN: ParamDoc = ParamDoc::with_default(
    "led_current_min",
    Q("A"),
    "0 A",
    "least LED current at which the CTR range holds",
);
const IF_MAX: ParamDoc = ParamDoc::with_default(
    "led_current_max",
    Q("A"),
    "20 mA",
    "highest LED current allowed",
);
const OPTO_POLE: ParamDoc = ParamDoc::with_default(
    "optocoupler_pole",
    Q("Hz"),
    "5 kHz",
    "optocoupler pole with the feedback pin's resistance",
);
const FB_KIND: ParamDoc = ParamDoc::with_default(
    "feedback_input",
    Text,
    "pull_up",
    "controller feedback pin: \"pull_up\" (voltage pin with a pull-up) or \"current\"",
);
const VPU: ParamDoc = ParamDoc::with_default(
    "pull_up_voltage",
    Q("V"),
    "5 V",
    "pull_up: voltage of the pull-up",
);
const RPU: ParamDoc = ParamDoc::with_default(
    "pull_up_resistance",
    Q("Ω"),
    "20 kohm",
    "pull_up: pull-up resistance",
);
const VFB0: ParamDoc = ParamDoc::with_default(
    "feedback_voltage_zero_duty",
    Q("V"),
    "1 V",
    "pull_up: pin voltage where switching stops",
);
const VFB1: ParamDoc = ParamDoc::with_default(
    "feedback_voltage_full_duty",
    Q("V"),
    "3.5 V",
    "pull_up: pin voltage for full power (current limit)",
);
const IFB0: ParamDoc = ParamDoc::optional(
    "feedback_current_zero_duty",
    Q("A"),
    "current: pin current where switching stops",
);
const IFB1: ParamDoc = ParamDoc::optional(
    "feedback_current_full_duty",
    Q("A"),
    "current: pin current for full power",
);
const RFB: ParamDoc = ParamDoc::optional(
    "feedback_pin_resistance",
    Q("Ω"),
    "current: small-signal resistance at the pin",
);
const LED_RAIL: ParamDoc = ParamDoc::optional(
    "led_supply_voltage",
    Q("V"),
    "a separate DC rail feeding the LED resistor (cuts the fast lane); else the output",
);
const HEADROOM: ParamDoc = ParamDoc::with_default(
    "bias_headroom",
    Number,
    "0.2",
    "extra LED current over the least that stops the controller at ctr_min",
);

static VOUT_OF: FunctionDoc = FunctionDoc {
    name: "divider_output_voltage",
    domain: Domain::Feedback,
    summary: "The output a given divider sets on a shunt reference, V_ref·(1 + R_t/R_b) + I_ref·R_t (with an optional trim resistor).",
    params: &[ParamDoc::required("divider", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::required("upper_resistor", Q("Ω"), "output to tap"),
        ParamDoc::required("lower_resistor", Q("Ω"), "tap to ground"),
        ParamDoc::optional("trim_resistor", Q("Ω"), "third resistor in parallel"),
        ParamDoc::with_default("trim_position", Text, "upper", "\"upper\" or \"lower\": which resistor the trim parallels"),
        VREF,
        VREF_TOL,
        IREF,
        IKMIN,
        VKMIN,
    ],
    returns: "V",
    example: "divider_output_voltage(#{upper_resistor: 38.3 * kohm, lower_resistor: 10 * kohm, reference_input_current: 2 * uA})",
};

static DIVIDER: FunctionDoc = FunctionDoc {
    name: "output_divider",
    domain: Domain::Feedback,
    summary: "The output divider for a target on a shunt reference: best pair from a series, an optional trim resistor, the output's extreme and root-sum-square range, current and power.",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::required("output_voltage", Q("V"), "target output"),
        VREF,
        VREF_TOL,
        IREF,
        IKMIN,
        VKMIN,
        IDIV,
        RSERIES,
        RTOL,
        TRIM,
    ],
    returns: "record: target_voltage, upper_resistor, lower_resistor, pair_output_voltage, trim_position, trim_resistor, output_voltage, output_error, output_voltage_min, output_voltage_max, output_voltage_rss_deviation, divider_current, divider_power",
    example: "output_divider(#{output_voltage: 12 * V, series: \"E24\"})",
};

static BIAS: FunctionDoc = FunctionDoc {
    name: "optocoupler_bias",
    domain: Domain::Feedback,
    summary: "LED resistor and bias resistor of a shunt reference driving an optocoupler, checked at both CTR extremes from no load to full load.",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::required("output_voltage", Q("V"), "regulated output feeding the LED resistor"),
        VREF,
        VREF_TOL,
        IREF,
        IKMIN,
        VKMIN,
        CTR_MIN,
        CTR_MAX,
        VF,
        IF_MIN,
        IF_MAX,
        OPTO_POLE,
        FB_KIND,
        VPU,
        RPU,
        VFB0,
        VFB1,
        IFB0,
        IFB1,
        RFB,
        RSERIES,
        HEADROOM,
        LED_RAIL,
        ParamDoc::optional("led_resistor", Q("Ω"), "a chosen LED resistor to check (else chosen)"),
    ],
    returns: "map: summary (record: led_resistor, led_resistor_max, led_resistor_min, bias_resistor, collector currents, cathode_current_min, cathode_voltage_min, all_cases_within_limits), cases (Table, one row per CTR extreme and load)",
    example: "optocoupler_bias(#{output_voltage: 12 * V}).summary.led_resistor",
};

const REG_KEYS: &[ParamDoc] = &[
    VREF,
    VREF_TOL,
    IREF,
    IKMIN,
    VKMIN,
    IDIV,
    RSERIES,
    RTOL,
    TRIM,
    CTR_MIN,
    CTR_MAX,
    VF,
    IF_MIN,
    IF_MAX,
    OPTO_POLE,
    FB_KIND,
    VPU,
    RPU,
    VFB0,
    VFB1,
    IFB0,
    IFB1,
    RFB,
    HEADROOM,
    LED_RAIL,
    ParamDoc::with_default("capacitor_series", Text, "E12", "IEC 60063 series of the capacitors"),
    ParamDoc::optional("crossover_frequency", Q("Hz"), "crossover target at ctr_max on the design corner (below f_s/2); else 15 % of the lowest RHP zero, at most 5 % of f_s"),
    ParamDoc::with_default("phase_margin", Number, "60", "target phase margin, degrees (20 … 85)"),
    ParamDoc::with_default("ramp_fraction", Number, "0.5", "slope compensation as a fraction of the primary off-slope V_r/L_p"),
    ParamDoc::with_default("points", Integer, "200", "frequencies per loop analysis"),
    ParamDoc::optional("ovp_zener_voltage", Q("V"), "bias-winding Zener for output over-voltage protection (needs a bias winding)"),
    ParamDoc::with_default("ovp_zener_tolerance", Number, "0.05", "its relative tolerance"),
    ParamDoc::with_default("ovp_trip_threshold", Q("V"), "1 V", "protection input threshold in series with the Zener"),
    ParamDoc::with_default("bias_overshoot_max", Number, "0.1", "largest bias rise by leakage-spike peak charging"),
    ParamDoc::optional("bode_corner", Text, "corner of the Bode data and plot; else the case with the least phase margin"),
    ParamDoc::with_default("bode_ctr", Text, "ctr_min", "\"ctr_min\" or \"ctr_max\" for bode_corner"),
    ParamDoc::optional("rule_limits", ParamKind::Map, "rule id → limit: phase_margin_minimum (degrees), gain_margin_minimum (dB), crossover_rhp_zero_ratio, crossover_switching_ratio, crossover_count_minimum, crossover_count_maximum, output_setpoint_error, overvoltage_trip_margin (numbers)"),
];

static REGULATION: FunctionDoc = FunctionDoc {
    name: "flyback_regulation",
    domain: Domain::Feedback,
    summary: "Regulates a flyback design: divider, bias, type-2 compensation with the fast lane, margins at every line/load corner and both CTR extremes, Bode data and SVG, over-voltage Zener, rules.",
    params: &[
        ParamDoc::required("design", ParamKind::Any, "a FlybackDesign"),
        ParamDoc::required("options", ParamKind::Map, "see keys (every key has a default)"),
    ],
    keys: REG_KEYS,
    returns: "map: summary (record), divider (record), bias (record), bias_cases (Table), compensation (record), margins (Table, one row per corner and CTR extreme), checks (array of CheckResult), bode (Table), bode_svg (text), report (Markdown with the safety caution)",
    example: "flyback_regulation(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}), #{}).summary.phase_margin_worst_degrees",
};

static PLANT: FunctionDoc = FunctionDoc {
    name: "control_to_output",
    domain: Domain::Feedback,
    summary: "The peak-current-mode control-to-output model at a corner of a flyback design (CCM/DCM, RHP zero, Ridley's double pole, post filter), with its Bode data.",
    params: &[
        ParamDoc::required("design", ParamKind::Any, "a FlybackDesign"),
        ParamDoc::required("corner", Text, "low_line_full_load, low_line_light_load, high_line_full_load or high_line_light_load"),
        ParamDoc::required("options", ParamKind::Map, "see keys"),
    ],
    keys: &[
        ParamDoc::with_default("ramp_fraction", Number, "0.5", "slope compensation as a fraction of the primary off-slope"),
        ParamDoc::with_default("points", Integer, "200", "frequencies from f_s/10⁴ to f_s/2"),
    ],
    returns: "map: plant (record: mode, load pole, ESR zero, RHP zero, slope factor, sampling Q, DC gain), response (Table: frequency, magnitude_db re 1 V/A, phase_deg)",
    example: "control_to_output(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}), \"low_line_full_load\", #{}).plant.rhp_zero_frequency",
};

static LINE: FunctionDoc = FunctionDoc {
    name: "line_sense_resistors",
    domain: Domain::Feedback,
    summary: "Line-sense resistors for a brown-in threshold (current or voltage input), the brown-out and line over-voltage that follow with their tolerance, dissipation and standby power.",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::with_default("sense_input", Text, "current", "\"current\" (pin held at pin_voltage) or \"voltage\" (divider to a threshold)"),
        ParamDoc::required("brown_in_line_voltage", Q("V"), "line (RMS) for brown-in"),
        ParamDoc::with_default("max_line_voltage", Q("V"), "264 V", "highest line (RMS)"),
        ParamDoc::with_default("sense_drop", Q("V"), "0 V", "drop from the line peak to the sensed node"),
        ParamDoc::with_default("pin_voltage", Q("V"), "0.5 V", "current: pin voltage while sensing"),
        ParamDoc::optional("brown_in_current", Q("A"), "current: pin current for brown-in"),
        ParamDoc::optional("brown_out_current", Q("A"), "current: pin current for brown-out"),
        ParamDoc::optional("overvoltage_current", Q("A"), "current: pin current for line over-voltage"),
        ParamDoc::optional("brown_in_threshold", Q("V"), "voltage: pin threshold for brown-in"),
        ParamDoc::optional("brown_out_threshold", Q("V"), "voltage: pin threshold for brown-out"),
        ParamDoc::optional("overvoltage_threshold", Q("V"), "voltage: pin threshold for line over-voltage"),
        ParamDoc::with_default("string_current", Q("A"), "10 uA", "voltage: string current at brown-in"),
        ParamDoc::with_default("series", Text, "E96", "IEC 60063 series"),
        ParamDoc::with_default("resistor_tolerance", Number, "0.01", "relative tolerance of each resistor"),
        ParamDoc::with_default("threshold_tolerance", Number, "0.05", "relative tolerance of the pin thresholds"),
        ParamDoc::with_default("max_voltage_per_resistor", Q("V"), "200 V", "largest voltage across one string resistor"),
    ],
    returns: "record: string_count, string_resistor, lower_resistor, brown_in/brown_out/line_overvoltage _line_voltage with _min and _max, resistor_power, standby_power",
    example: "line_sense_resistors(#{brown_in_line_voltage: 80 * V, brown_in_current: 60 * uA, brown_out_current: 50 * uA})",
};

static OVP: FunctionDoc = FunctionDoc {
    name: "bias_zener_trip",
    domain: Domain::Feedback,
    summary: "Output voltage at which a Zener on the bias winding trips the over-voltage protection, from the turns ratio, drops and tolerances.",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::required("zener_voltage", Q("V"), "Zener voltage"),
        ParamDoc::with_default("zener_tolerance", Number, "0.05", "its relative tolerance"),
        ParamDoc::with_default("trip_threshold", Q("V"), "1 V", "protection input threshold in series"),
        ParamDoc::required("bias_turns_per_output_turn", Number, "N_b/N_s"),
        ParamDoc::with_default("output_rectifier_drop", Q("V"), "0.5 V", "regulated output rectifier drop"),
        ParamDoc::with_default("bias_rectifier_drop", Q("V"), "0.7 V", "bias rectifier drop"),
        ParamDoc::with_default("bias_overshoot_max", Number, "0.1", "largest bias rise by peak charging"),
    ],
    returns: "record: bias_trip_voltage, output_trip_voltage, output_trip_voltage_min, output_trip_voltage_max",
    example: "bias_zener_trip(#{zener_voltage: 22 * V, bias_turns_per_output_turn: 1.25})",
};

fn series_of(s: &Spec, key: &str) -> Result<ESeries> {
    ESeries::parse(&s.text(key)?)
}

fn reference_of(s: &Spec) -> Result<ShuntReference> {
    Ok(ShuntReference {
        reference_voltage: s.quantity("reference_voltage")?,
        reference_tolerance: s.number("reference_tolerance")?,
        reference_input_current: s.quantity("reference_input_current")?,
        minimum_cathode_current: s.quantity("minimum_cathode_current")?,
        minimum_cathode_voltage: s.quantity("minimum_cathode_voltage")?,
    })
}

fn optocoupler_of(s: &Spec) -> Result<Optocoupler> {
    Ok(Optocoupler {
        ctr_min: s.number("ctr_min")?,
        ctr_max: s.number("ctr_max")?,
        led_forward_voltage: s.quantity("led_forward_voltage")?,
        led_current_min: s.quantity("led_current_min")?,
        led_current_max: s.quantity("led_current_max")?,
        pole_frequency: s.quantity("optocoupler_pole")?,
    })
}

fn feedback_of(s: &Spec) -> Result<FeedbackInput> {
    match s.text("feedback_input")?.as_str() {
        "pull_up" => Ok(FeedbackInput::PullUp {
            pull_up_voltage: s.quantity("pull_up_voltage")?,
            pull_up_resistance: s.quantity("pull_up_resistance")?,
            zero_duty_voltage: s.quantity("feedback_voltage_zero_duty")?,
            full_duty_voltage: s.quantity("feedback_voltage_full_duty")?,
        }),
        "current" => Ok(FeedbackInput::Current {
            zero_duty: s.quantity("feedback_current_zero_duty")?,
            full_duty: s.quantity("feedback_current_full_duty")?,
            pin_resistance: s.quantity("feedback_pin_resistance")?,
        }),
        other => Err(Error::unknown(format!(
            "`feedback_input` must be \"pull_up\" or \"current\", got \"{other}\""
        ))),
    }
}

fn points_of(s: &Spec) -> Result<usize> {
    let p = s.integer("points")?;
    if !(feedback::MIN_POINTS as i64..=feedback::MAX_POINTS as i64).contains(&p) {
        return Err(Error::out_of_range(format!(
            "`points` must be {} … {}, got {p}",
            feedback::MIN_POINTS,
            feedback::MAX_POINTS
        )));
    }
    Ok(p as usize)
}

fn regulation_spec(s: &Spec) -> Result<RegulationSpec> {
    let mut rule_limits = Vec::new();
    if let Some(v) = s.value("rule_limits")? {
        let rm = v
            .try_cast::<Map>()
            .ok_or_else(|| Error::invalid("`rule_limits` must be a map of rule id → limit"))?;
        for (id, lim) in rm.iter() {
            rule_limits.push((id.to_string(), dynamic_to_quantity(lim, id, None)?));
        }
    }
    let overvoltage = match s.optional_quantity("ovp_zener_voltage")? {
        Some(z) => Some(OvervoltageZener {
            zener_voltage: z,
            zener_tolerance: s.number("ovp_zener_tolerance")?,
            trip_threshold: s.quantity("ovp_trip_threshold")?,
            bias_overshoot_max: s.number("bias_overshoot_max")?,
        }),
        None => None,
    };
    Ok(RegulationSpec {
        reference: reference_of(s)?,
        optocoupler: optocoupler_of(s)?,
        feedback: feedback_of(s)?,
        divider_current: s.quantity("divider_current")?,
        resistor_series: series_of(s, "series")?,
        resistor_tolerance: s.number("resistor_tolerance")?,
        capacitor_series: series_of(s, "capacitor_series")?,
        trim: s.flag("trim")?,
        bias_headroom: s.number("bias_headroom")?,
        led_supply_voltage: s.optional_quantity("led_supply_voltage")?,
        crossover_frequency: s.optional_quantity("crossover_frequency")?,
        phase_margin: s.number("phase_margin")?,
        ramp_fraction: s.number("ramp_fraction")?,
        points: points_of(s)?,
        overvoltage,
        rule_limits,
    })
}

fn regulation(st: &HostState, d: &ScriptFlyback, m: &Map) -> Result<Map> {
    let s = Spec::new(&REGULATION, m)?;
    let spec = regulation_spec(&s)?;
    let r = feedback::flyback_regulation(d.design(), d.spec(), &spec)
        .map_err(|e| e.context("flyback_regulation"))?;
    let case = match s.optional_text("bode_corner")? {
        Some(c) => r.case(&c, &s.text("bode_ctr")?)?,
        None => r.worst_case(),
    };
    let pts = feedback::bode_points(&case.plant, &r.compensation.network, case.ctr, spec.points)?;
    let volts =
        crate::units::format_number(d.spec().outputs[d.spec().regulated_output].voltage.value);
    let title = format!(
        "Loop of the {volts} V output at {} ({}, CTR {})",
        case.corner,
        case.ctr_case,
        crate::units::format_number(case.ctr)
    );
    let mut out = Map::new();
    let records = [
        ScriptRecord::from_record("flyback_regulation", &r),
        ScriptRecord::from_record("output_divider", &r.divider),
        ScriptRecord::from_record("optocoupler_bias", &r.bias),
        ScriptRecord::from_record("compensation_type2", &r.compensation),
    ];
    for (k, v) in ["summary", "divider", "bias", "compensation"]
        .into_iter()
        .zip(records)
    {
        out.insert(k.into(), Dynamic::from(v));
    }
    out.insert("bias_cases".into(), Dynamic::from(r.bias.table()));
    out.insert("margins".into(), Dynamic::from(r.margins_table()));
    out.insert("bode".into(), Dynamic::from(feedback::bode_table(&pts)));
    out.insert(
        "bode_svg".into(),
        Dynamic::from(feedback::bode_svg(&pts, &case.margins, &title)),
    );
    out.insert(
        "report".into(),
        Dynamic::from(st.verdict_text(
            feedback::regulation_report_markdown(
                &r,
                &format!("Regulation of the {volts} V output"),
            ),
            super::api_rules::failed_count(&r.checks),
        )),
    );
    out.insert(
        "checks".into(),
        Dynamic::from_array(checks_to_array(r.checks.clone())),
    );
    Ok(out)
}

pub(crate) fn register(api: &mut Api, state: &Arc<HostState>) {
    def!(api, &VOUT_OF, |m: Map| -> ScriptResult<Quantity> {
        lift((|| {
            let s = Spec::new(&VOUT_OF, &m)?;
            let trim = match s.optional_quantity("trim_resistor")? {
                Some(r) => Some(Trim {
                    position: match s.text("trim_position")?.as_str() {
                        "upper" => TrimPosition::Upper,
                        "lower" => TrimPosition::Lower,
                        other => {
                            return Err(Error::unknown(format!(
                                "`trim_position` must be \"upper\" or \"lower\", got \"{other}\""
                            )))
                        }
                    },
                    resistor: r,
                }),
                None => None,
            };
            let v = feedback::divider_output_voltage(
                s.quantity("upper_resistor")?,
                s.quantity("lower_resistor")?,
                trim,
                &reference_of(&s)?,
            )
            .map_err(|e| e.context("divider_output_voltage"))?;
            Ok(Quantity::from_typed(v))
        })())
    });
    def!(api, &DIVIDER, |m: Map| -> ScriptResult<ScriptRecord> {
        lift((|| {
            let s = Spec::new(&DIVIDER, &m)?;
            let d = feedback::output_divider(&OutputDividerSpec {
                output_voltage: s.quantity("output_voltage")?,
                reference: reference_of(&s)?,
                divider_current: s.quantity("divider_current")?,
                series: series_of(&s, "series")?,
                resistor_tolerance: s.number("resistor_tolerance")?,
                trim: s.flag("trim")?,
            })
            .map_err(|e| e.context("output_divider"))?;
            Ok(ScriptRecord::from_record("output_divider", &d))
        })())
    });
    def!(api, &BIAS, |m: Map| -> ScriptResult<Map> {
        lift((|| {
            let s = Spec::new(&BIAS, &m)?;
            let b = feedback::optocoupler_bias(
                &BiasSpec {
                    output_voltage: s.quantity("output_voltage")?,
                    reference: reference_of(&s)?,
                    optocoupler: optocoupler_of(&s)?,
                    feedback: feedback_of(&s)?,
                    series: series_of(&s, "series")?,
                    headroom: s.number("bias_headroom")?,
                    led_supply_voltage: s.optional_quantity("led_supply_voltage")?,
                },
                s.optional_quantity("led_resistor")?,
            )
            .map_err(|e| e.context("optocoupler_bias"))?;
            let mut out = Map::new();
            out.insert(
                "summary".into(),
                Dynamic::from(ScriptRecord::from_record("optocoupler_bias", &b)),
            );
            out.insert("cases".into(), Dynamic::from(b.table()));
            Ok(out)
        })())
    });
    let st = state.clone();
    def!(api, &REGULATION, move |d: ScriptFlyback,
                                 m: Map|
          -> ScriptResult<Map> {
        lift(regulation(&st, &d, &m))
    });
    let st = state.clone();
    overload!(
        api,
        "flyback_regulation",
        move |d: ScriptFlyback| -> ScriptResult<Map> { lift(regulation(&st, &d, &Map::new())) }
    );
    def!(api, &PLANT, |d: ScriptFlyback,
                       corner: ImmutableString,
                       m: Map|
     -> ScriptResult<Map> {
        lift((|| {
            let s = Spec::new(&PLANT, &m)?;
            let p = feedback::loop_plant_from_flyback(
                d.design(),
                d.spec(),
                &corner,
                s.number("ramp_fraction")?,
            )
            .map_err(|e| e.context("control_to_output"))?;
            let n = points_of(&s)?;
            let fs = p.switching_frequency.value;
            let mut t = crate::report::Table::new();
            for k in 0..n {
                let f = fs * 1e-4 * (5000f64.ln() * k as f64 / (n - 1) as f64).exp();
                let g = p.control_to_output(crate::units::si(f));
                t.push_row(vec![
                    crate::report::Field::quantity(
                        "frequency",
                        crate::units::si::<crate::units::Frequency>(f),
                    ),
                    crate::report::Field::new("magnitude_db", 20.0 * g.norm().log10()),
                    crate::report::Field::new("phase_deg", g.arg().to_degrees()),
                ]);
            }
            let mut out = Map::new();
            out.insert(
                "plant".into(),
                Dynamic::from(ScriptRecord::from_record("control_to_output", &p)),
            );
            out.insert("response".into(), Dynamic::from(t));
            Ok(out)
        })())
    });
    def!(api, &LINE, |m: Map| -> ScriptResult<ScriptRecord> {
        lift((|| {
            let s = Spec::new(&LINE, &m)?;
            let input = match s.text("sense_input")?.as_str() {
                "current" => LineSenseInput::Current {
                    pin_voltage: s.quantity("pin_voltage")?,
                    brown_in_current: s.quantity("brown_in_current")?,
                    brown_out_current: s.quantity("brown_out_current")?,
                    overvoltage_current: s.optional_quantity("overvoltage_current")?,
                },
                "voltage" => LineSenseInput::Voltage {
                    brown_in_threshold: s.quantity("brown_in_threshold")?,
                    brown_out_threshold: s.quantity("brown_out_threshold")?,
                    overvoltage_threshold: s.optional_quantity("overvoltage_threshold")?,
                },
                other => {
                    return Err(Error::unknown(format!(
                        "`sense_input` must be \"current\" or \"voltage\", got \"{other}\""
                    )))
                }
            };
            let r = feedback::line_sense_resistors(&LineSenseSpec {
                input,
                brown_in_line_voltage: s.quantity("brown_in_line_voltage")?,
                max_line_voltage: s.quantity("max_line_voltage")?,
                sense_drop: s.quantity("sense_drop")?,
                series: series_of(&s, "series")?,
                resistor_tolerance: s.number("resistor_tolerance")?,
                threshold_tolerance: s.number("threshold_tolerance")?,
                max_voltage_per_resistor: s.quantity("max_voltage_per_resistor")?,
                string_current: s.quantity("string_current")?,
            })
            .map_err(|e| e.context("line_sense_resistors"))?;
            Ok(ScriptRecord::from_record("line_sense_resistors", &r))
        })())
    });
    def!(api, &OVP, |m: Map| -> ScriptResult<ScriptRecord> {
        lift((|| {
            let s = Spec::new(&OVP, &m)?;
            let t = feedback::bias_zener_trip(&BiasZenerSpec {
                zener_voltage: s.quantity("zener_voltage")?,
                zener_tolerance: s.number("zener_tolerance")?,
                trip_threshold: s.quantity("trip_threshold")?,
                bias_turns_per_output_turn: s.number("bias_turns_per_output_turn")?,
                output_rectifier_drop: s.quantity("output_rectifier_drop")?,
                bias_rectifier_drop: s.quantity("bias_rectifier_drop")?,
                bias_overshoot_max: s.number("bias_overshoot_max")?,
            })
            .map_err(|e| e.context("bias_zener_trip"))?;
            Ok(ScriptRecord::from_record("bias_zener_trip", &t))
        })())
    });
}
