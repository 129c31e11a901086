//! Script API of conducted EMI: limit lines, LISN, spectra, DM/CM estimates, filter design,
//! damping, Middlebrook's criterion, X/Y capacitor helpers, and the one-call input filter.

use super::convert::{dynamic_to_integer, dynamic_to_typed, lift, ScriptResult};
use super::docs::{Domain, FunctionDoc, ParamDoc, ParamKind};
use super::host::HostState;
use super::record::ScriptRecord;
use super::spec::Spec;
use super::{def, Api};
use crate::emi::{
    self, Detector, DrainVoltageShape, EmissionClass, FilterStage, HarmonicLevel, InputFilterSpec,
    PrimaryCurrentShape,
};
use crate::error::{Error, Result};
use crate::report::{Field, Table};
use crate::units::{DbReference, Decibel, Quantity, TypedQuantity};
use rhai::{Dynamic, ImmutableString, Map, INT};
use std::sync::Arc;

const FSW: ParamDoc = ParamDoc::required(
    "switching_frequency",
    ParamKind::Quantity("Hz"),
    "switching frequency, 10 kHz … 2 MHz",
);
const MODE: ParamDoc = ParamDoc::with_default(
    "conduction_mode",
    ParamKind::Text,
    "ccm",
    "\"ccm\" (trapezoid from valley to peak) or \"dcm\" (triangle from zero)",
);
const PEAK: ParamDoc = ParamDoc::required(
    "peak_current",
    ParamKind::Quantity("A"),
    "primary current at turn-off",
);
const VALLEY: ParamDoc = ParamDoc::with_default(
    "valley_current",
    ParamKind::Quantity("A"),
    "0 A",
    "primary current at turn-on (CCM)",
);
const DUTY: ParamDoc = ParamDoc::required(
    "duty",
    ParamKind::Number,
    "on-time as a fraction of the period, 0 … 1",
);
const BULK_C: ParamDoc = ParamDoc::required(
    "bulk_capacitance",
    ParamKind::Quantity("F"),
    "bulk capacitor",
);
const BULK_ESR: ParamDoc = ParamDoc::with_default(
    "bulk_esr",
    ParamKind::Quantity("Ω"),
    "0.5 ohm",
    "bulk capacitor ESR at the switching frequency",
);
const BULK_ESL: ParamDoc = ParamDoc::with_default(
    "bulk_esl",
    ParamKind::Quantity("H"),
    "20 nH",
    "bulk capacitor ESL with its leads",
);
const DRAIN: ParamDoc = ParamDoc::required(
    "drain_voltage",
    ParamKind::Quantity("V"),
    "off-state drain voltage (bulk plus reflected)",
);
const RISE: ParamDoc = ParamDoc::with_default(
    "rise_time",
    ParamKind::Quantity("s"),
    "30 ns",
    "drain voltage rise time at turn-off",
);
const FALL: ParamDoc = ParamDoc::with_default(
    "fall_time",
    ParamKind::Quantity("s"),
    "30 ns",
    "drain voltage fall time at turn-on",
);
const CP: ParamDoc = ParamDoc::required(
    "parasitic_capacitance",
    ParamKind::Quantity("F"),
    "drain node to earth (tab to heat sink, inter-winding)",
);
const CLASS: ParamDoc = ParamDoc::with_default(
    "class",
    ParamKind::Text,
    "B",
    "CISPR 32 class, \"A\" or \"B\"",
);
const MARGIN: ParamDoc = ParamDoc::with_default(
    "margin",
    ParamKind::Any,
    "6 dB",
    "margin under the limit, 0 … 40 dB",
);
const STAGES: ParamDoc =
    ParamDoc::with_default("stages", ParamKind::Integer, "1", "DM LC stages, 1 or 2");
const CX: ParamDoc = ParamDoc::with_default(
    "x_capacitance",
    ParamKind::Quantity("F"),
    "220 nF",
    "X capacitance of each DM stage",
);
const RL: ParamDoc = ParamDoc::with_default(
    "inductor_resistance",
    ParamKind::Quantity("Ω"),
    "0.2 ohm",
    "series resistance of each DM inductor",
);
const CY_MAX: ParamDoc = ParamDoc::required(
    "max_y_capacitance",
    ParamKind::Quantity("F"),
    "largest total Y capacitance the touch-current limit allows (safety domain); 0 F for none",
);
const VIN_MIN: ParamDoc = ParamDoc::required(
    "minimum_input_voltage",
    ParamKind::Quantity("V"),
    "lowest DC bulk voltage at full power",
);
const PIN: ParamDoc = ParamDoc::required(
    "input_power",
    ParamKind::Quantity("W"),
    "converter input power at full load",
);
const MB_MARGIN: ParamDoc = ParamDoc::with_default(
    "middlebrook_margin",
    ParamKind::Any,
    "6 dB",
    "margin of |R_N| over the filter output impedance, dB",
);
const VLINE_MAX: ParamDoc = ParamDoc::with_default(
    "maximum_line_voltage",
    ParamKind::Quantity("V"),
    "264 V",
    "highest line voltage, RMS",
);
const FLINE: ParamDoc = ParamDoc::with_default(
    "line_frequency",
    ParamKind::Quantity("Hz"),
    "60 Hz",
    "line frequency for the touch current",
);
const T_DIS: ParamDoc = ParamDoc::with_default("discharge_time", ParamKind::Quantity("s"), "2 s", "time allowed to discharge the X capacitors (from the safety standard; value recalled from memory)");
const V_DIS: ParamDoc = ParamDoc::with_default(
    "discharge_voltage",
    ParamKind::Quantity("V"),
    "60 V",
    "voltage to reach within that time (from the safety standard; value recalled from memory)",
);
const ROWS: ParamDoc = ParamDoc::with_default(
    "table_rows",
    ParamKind::Integer,
    "12",
    "harmonics listed in the table (plus the worst), 0 for all",
);

static LIMIT: FunctionDoc = FunctionDoc {
    name: "emi_limit",
    domain: Domain::Emi,
    summary: "CISPR 32 conducted limit at the AC mains port, 150 kHz … 30 MHz (stricter value at a segment edge).",
    params: &[
        ParamDoc::required("frequency", ParamKind::Quantity("Hz"), "150 kHz … 30 MHz"),
        ParamDoc::required("class", ParamKind::Text, "\"A\" or \"B\""),
        ParamDoc::required("detector", ParamKind::Text, "\"quasi_peak\" or \"average\""),
    ],
    keys: &[],
    returns: "dBµV",
    example: "emi_limit(150 * kHz, \"B\", \"quasi_peak\")",
};
static LISN: FunctionDoc = FunctionDoc {
    name: "lisn_impedance",
    domain: Domain::Emi,
    summary: "Impedance of one line of the CISPR 16-1-2 50 Ω / 50 µH network at a frequency.",
    params: &[ParamDoc::required(
        "frequency",
        ParamKind::Quantity("Hz"),
        "150 kHz … 30 MHz",
    )],
    keys: &[],
    returns:
        "record: frequency, resistance, reactance, magnitude, phase_degrees, receiver_fraction",
    example: "lisn_impedance(1 * MHz)",
};
static CURRENT_HARMONIC: FunctionDoc = FunctionDoc {
    name: "primary_current_harmonic",
    domain: Domain::Emi,
    summary: "Peak amplitude of harmonic n of the primary current (CCM trapezoid or DCM triangle), by Fourier series.",
    params: &[
        ParamDoc::required("waveform", ParamKind::Map, "see keys"),
        ParamDoc::required("harmonic", ParamKind::Integer, "n ≥ 1"),
    ],
    keys: &[MODE, PEAK, VALLEY, DUTY],
    returns: "A (peak)",
    example: "primary_current_harmonic(#{conduction_mode: \"ccm\", valley_current: 0.4 * A, peak_current: 1 * A, duty: 0.45}, 1)",
};
static DRAIN_HARMONIC: FunctionDoc = FunctionDoc {
    name: "drain_voltage_harmonic",
    domain: Domain::Emi,
    summary: "Peak amplitude of harmonic n of the drain-voltage trapezoid with its rise and fall times.",
    params: &[
        ParamDoc::required("waveform", ParamKind::Map, "see keys"),
        ParamDoc::required("harmonic", ParamKind::Integer, "n ≥ 1"),
    ],
    keys: &[FSW, DRAIN, DUTY, RISE, FALL],
    returns: "V (peak)",
    example: "drain_voltage_harmonic(#{switching_frequency: 65 * kHz, drain_voltage: 480 * V, duty: 0.45}, 3)",
};
static DM_NOISE: FunctionDoc = FunctionDoc {
    name: "differential_mode_noise",
    domain: Domain::Emi,
    summary: "DM noise per harmonic in band: primary current shared between the bulk capacitor and the LISN (optionally through DM stages).",
    params: &[ParamDoc::required("converter", ParamKind::Map, "see keys")],
    keys: &[FSW, MODE, PEAK, VALLEY, DUTY, BULK_C, BULK_ESR, BULK_ESL,
        ParamDoc::optional("differential_inductance", ParamKind::Quantity("H"), "DM inductance of each stage (no filter when left out)"),
        CX, RL, STAGES],
    returns: "a Table: harmonic, frequency, level [dBµV]",
    example: "differential_mode_noise(#{switching_frequency: 65 * kHz, peak_current: 1 * A, valley_current: 0.4 * A, duty: 0.45, bulk_capacitance: 47 * uF})",
};
static CM_NOISE: FunctionDoc = FunctionDoc {
    name: "common_mode_noise",
    domain: Domain::Emi,
    summary: "CM noise per harmonic in band: drain dv/dt into the parasitic capacitance to earth, with an optional Y capacitor and choke.",
    params: &[ParamDoc::required("converter", ParamKind::Map, "see keys")],
    keys: &[FSW, DRAIN, DUTY, RISE, FALL, CP,
        ParamDoc::optional("y_capacitance", ParamKind::Quantity("F"), "total Y capacitance"),
        ParamDoc::optional("choke_inductance", ParamKind::Quantity("H"), "common-mode choke")],
    returns: "a Table: harmonic, frequency, level [dBµV]",
    example: "common_mode_noise(#{switching_frequency: 65 * kHz, drain_voltage: 480 * V, duty: 0.45, parasitic_capacitance: 20 * pF, y_capacitance: 2.2 * nF})",
};
static REQUIRED: FunctionDoc = FunctionDoc {
    name: "required_attenuation",
    domain: Domain::Emi,
    summary: "Attenuation a filter must give: estimate − limit + margin.",
    params: &[
        ParamDoc::required("estimate", ParamKind::Any, "dBµV"),
        ParamDoc::required("limit", ParamKind::Any, "dBµV"),
        ParamDoc::required("margin", ParamKind::Any, "dB"),
    ],
    keys: &[],
    returns: "dB",
    example: "required_attenuation(88 * dBuV, emi_limit(195 * kHz, \"B\", \"average\"), 6 * dB)",
};
static CORNER: FunctionDoc = FunctionDoc {
    name: "filter_corner_frequency",
    domain: Domain::Emi,
    summary: "Corner frequency a filter of given order needs for an attenuation at a frequency, f·10^(−A/(20·order)).",
    params: &[
        ParamDoc::required("frequency", ParamKind::Quantity("Hz"), "where the attenuation is needed"),
        ParamDoc::required("attenuation", ParamKind::Any, "dB"),
        ParamDoc::required("order", ParamKind::Integer, "reactive elements, 1 … 8 (2 per LC stage)"),
    ],
    keys: &[],
    returns: "Hz",
    example: "filter_corner_frequency(195 * kHz, 40 * dB, 2)",
};
static LC: FunctionDoc = FunctionDoc {
    name: "lc_filter_attenuation",
    domain: Domain::Emi,
    summary: "Second-order LC low-pass with a resistive load: corner, Q, resonance gain, attenuation at a frequency.",
    params: &[
        ParamDoc::required("inductance", ParamKind::Quantity("H"), "series inductance"),
        ParamDoc::required("capacitance", ParamKind::Quantity("F"), "shunt capacitance"),
        ParamDoc::required("load_resistance", ParamKind::Quantity("Ω"), "load across the capacitor"),
        ParamDoc::required("frequency", ParamKind::Quantity("Hz"), "frequency to evaluate"),
    ],
    keys: &[],
    returns: "record: corner_frequency, characteristic_impedance, quality_factor, resonance_gain, frequency, attenuation",
    example: "lc_filter_attenuation(1 * uH, 220 * uF, 12 * ohm, 65 * kHz)",
};
static DAMPING: FunctionDoc = FunctionDoc {
    name: "damping_network",
    domain: Domain::Emi,
    summary: "Optimum parallel R–C damping of an LC filter for a capacitance ratio n = C_d/C (Erickson & Maksimović).",
    params: &[
        ParamDoc::required("inductance", ParamKind::Quantity("H"), "filter inductance"),
        ParamDoc::required("capacitance", ParamKind::Quantity("F"), "filter capacitance at the converter"),
        ParamDoc::required("capacitance_ratio", ParamKind::Number, "n = C_d/C, 0.01 … 100"),
    ],
    keys: &[],
    returns: "record: capacitance_ratio, blocking_capacitance, damping_resistance, quality_factor, characteristic_impedance, peak_output_impedance",
    example: "damping_network(1 * mH, 10 * uF, 1)",
};
static ZPEAK: FunctionDoc = FunctionDoc {
    name: "filter_output_impedance_peak",
    domain: Domain::Emi,
    summary: "Peak output impedance of an LC filter seen from the converter (line side shorted), with optional R–C damping.",
    params: &[ParamDoc::required("filter", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::required("inductance", ParamKind::Quantity("H"), "series inductance"),
        ParamDoc::with_default("inductor_resistance", ParamKind::Quantity("Ω"), "0 ohm", "its series resistance"),
        ParamDoc::required("capacitance", ParamKind::Quantity("F"), "capacitance at the converter"),
        ParamDoc::with_default("capacitor_esr", ParamKind::Quantity("Ω"), "0 ohm", "its ESR"),
        ParamDoc::optional("damping_resistance", ParamKind::Quantity("Ω"), "R_d of an R–C damping branch"),
        ParamDoc::optional("damping_capacitance", ParamKind::Quantity("F"), "C_d of that branch"),
    ],
    returns: "record: magnitude, frequency",
    example: "filter_output_impedance_peak(#{inductance: 1 * mH, capacitance: 47 * uF, capacitor_esr: 1 * ohm})",
};
static MIDDLEBROOK: FunctionDoc = FunctionDoc {
    name: "middlebrook_criterion",
    domain: Domain::Emi,
    summary: "Middlebrook's criterion: filter output impedance against the converter's negative input resistance V²/P.",
    params: &[ParamDoc::required("check", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::required("peak_output_impedance", ParamKind::Quantity("Ω"), "the filter's peak output impedance"),
        ParamDoc::required("input_voltage", ParamKind::Quantity("V"), "lowest converter input voltage"),
        ParamDoc::required("input_power", ParamKind::Quantity("W"), "converter input power"),
        ParamDoc::with_default("required_margin", ParamKind::Any, "6 dB", "wanted margin, dB"),
    ],
    returns: "record: negative_input_resistance, peak_output_impedance, margin, required_margin, satisfied",
    example: "middlebrook_criterion(#{peak_output_impedance: 15 * ohm, input_voltage: 100 * V, input_power: 33 * W})",
};
static TOUCH: FunctionDoc = FunctionDoc {
    name: "y_capacitor_touch_current",
    domain: Domain::Safety,
    summary:
        "Touch current through a Y capacitance, 2π·f·C·V (the inverse is largest_y_capacitance).",
    params: &[
        ParamDoc::required("y_capacitance", ParamKind::Quantity("F"), "Y capacitance"),
        ParamDoc::required(
            "mains_voltage",
            ParamKind::Quantity("V"),
            "highest mains voltage, RMS",
        ),
        ParamDoc::required(
            "mains_frequency",
            ParamKind::Quantity("Hz"),
            "highest mains frequency",
        ),
    ],
    keys: &[],
    returns: "A (RMS)",
    example: "y_capacitor_touch_current(2.2 * nF, 264 * V, 60 * Hz)",
};

const DESIGN_EXAMPLE: &str = "input_filter_design(#{switching_frequency: 65 * kHz, peak_current: 1 * A, valley_current: 0.4 * A, duty: 0.45, bulk_capacitance: 47 * uF, drain_voltage: 480 * V, parasitic_capacitance: 20 * pF, max_y_capacitance: 2.2 * nF, minimum_input_voltage: 100 * V, input_power: 33 * W})";
const DESIGN_KEYS: &[ParamDoc] = &[
    FSW, MODE, PEAK, VALLEY, DUTY, BULK_C, BULK_ESR, BULK_ESL, DRAIN, RISE, FALL, CP, CLASS,
    MARGIN, STAGES, CX, RL, CY_MAX, VIN_MIN, PIN, MB_MARGIN, VLINE_MAX, FLINE, T_DIS, V_DIS, ROWS,
];
static DESIGN: FunctionDoc = FunctionDoc {
    name: "input_filter_design",
    domain: Domain::Emi,
    summary: "What input filter this converter needs: DM/CM estimate, DM stages and CM choke for the class with margin, damping, Middlebrook, X discharge; with the harmonic table and checks.",
    params: &[ParamDoc::required("converter", ParamKind::Map, "see keys")],
    keys: DESIGN_KEYS,
    returns: "map: summary (record), harmonics (Table: estimate, limit, margin with and without the filter), checks (array of CheckResult)",
    example: DESIGN_EXAMPLE,
};
static PLOT: FunctionDoc = FunctionDoc {
    name: "emi_spectrum_svg",
    domain: Domain::Emi,
    summary: "SVG plot of the estimated spectrum (without and with the designed filter) against the limit lines; hand it to output_text.",
    params: &[ParamDoc::required("converter", ParamKind::Map, "the keys of input_filter_design")],
    keys: DESIGN_KEYS,
    returns: "text (SVG)",
    example: "emi_spectrum_svg(#{switching_frequency: 65 * kHz, peak_current: 1 * A, duty: 0.45, bulk_capacitance: 47 * uF, drain_voltage: 480 * V, parasitic_capacitance: 20 * pF, max_y_capacitance: 2.2 * nF, minimum_input_voltage: 100 * V, input_power: 33 * W}).len() > 0",
};
static REPORT: FunctionDoc = FunctionDoc {
    name: "input_filter_report",
    domain: Domain::Emi,
    summary: "Markdown report of the input filter design (summary, harmonic table, checks, safety caution); hand it to output_text.",
    params: &[ParamDoc::required("converter", ParamKind::Map, "the keys of input_filter_design")],
    keys: DESIGN_KEYS,
    returns: "text (Markdown)",
    example: "input_filter_report(#{switching_frequency: 65 * kHz, peak_current: 1 * A, duty: 0.45, bulk_capacitance: 47 * uF, drain_voltage: 480 * V, parasitic_capacitance: 20 * pF, max_y_capacitance: 2.2 * nF, minimum_input_voltage: 100 * V, input_power: 33 * W}).len() > 0",
};

/// Reads a decibel value: a Decibel, a plain number (taken as dB), or text such as "6 dB".
fn to_decibel(d: &Dynamic, name: &str, reference: DbReference) -> Result<Decibel> {
    let got = if let Some(x) = d.read_lock::<Decibel>() {
        *x
    } else if let Ok(i) = d.as_int() {
        Decibel {
            value: i as f64,
            reference,
        }
    } else if let Ok(x) = d.as_float() {
        Decibel {
            value: x,
            reference,
        }
    } else if let Some(s) = d.read_lock::<ImmutableString>() {
        let t = s.trim();
        let (num, r) = if let Some(n) = t.strip_suffix("dBµV").or_else(|| t.strip_suffix("dBuV")) {
            (n, DbReference::MicroVolt)
        } else if let Some(n) = t.strip_suffix("dB") {
            (n, DbReference::Ratio)
        } else {
            (t, reference)
        };
        let value = num.trim().parse::<f64>().map_err(|_| {
            Error::parse(format!(
                "`{name}`: cannot read '{t}' as decibels (e.g. \"6 dB\")"
            ))
        })?;
        Decibel {
            value,
            reference: r,
        }
    } else {
        return Err(Error::dimension(format!(
            "`{name}` must be in {} (e.g. 6 * dB), got a value of type {}",
            reference.symbol(),
            d.type_name()
        )));
    };
    if got.reference != reference {
        return Err(Error::dimension(format!(
            "`{name}` must be in {}, got {got}",
            reference.symbol()
        )));
    }
    if !got.value.is_finite() {
        return Err(Error::invalid(format!(
            "`{name}` must be finite, got {got}"
        )));
    }
    Ok(got)
}

fn spec_decibel(s: &Spec, key: &str, reference: DbReference) -> Result<Decibel> {
    let v = s
        .value(key)?
        .ok_or_else(|| Error::missing(format!("missing key `{key}` ({})", reference.symbol())))?;
    to_decibel(&v, key, reference)
}

fn harmonic_number(d: &Dynamic) -> Result<u32> {
    let n = dynamic_to_integer(d, "harmonic")?;
    if (1..=1_000_000).contains(&n) {
        Ok(n as u32)
    } else {
        Err(Error::out_of_range(format!(
            "`harmonic` must be 1 … 1000000, got {n}"
        )))
    }
}

fn primary_current(s: &Spec) -> Result<PrimaryCurrentShape> {
    let duty = s.number("duty")?;
    match s
        .text("conduction_mode")?
        .trim()
        .to_ascii_lowercase()
        .as_str()
    {
        "ccm" | "continuous" => Ok(PrimaryCurrentShape::Continuous {
            valley: s.quantity("valley_current")?,
            peak: s.quantity("peak_current")?,
            duty,
        }),
        "dcm" | "discontinuous" => {
            // in DCM the current starts from zero: a zero valley agrees, any other is ignored
            let valley: crate::units::ElectricCurrent = s.quantity("valley_current")?;
            if valley.value != 0.0 {
                s.ignore("valley_current");
            }
            Ok(PrimaryCurrentShape::Discontinuous {
                peak: s.quantity("peak_current")?,
                duty,
            })
        }
        other => Err(Error::unknown(format!(
            "unknown `conduction_mode` '{other}'; expected \"ccm\" or \"dcm\""
        ))),
    }
}

fn drain_voltage(s: &Spec) -> Result<DrainVoltageShape> {
    Ok(DrainVoltageShape {
        amplitude: s.quantity("drain_voltage")?,
        duty: s.number("duty")?,
        rise_time: s.quantity("rise_time")?,
        fall_time: s.quantity("fall_time")?,
    })
}

fn stage_count(s: &Spec) -> Result<u32> {
    let n = s.integer("stages")?;
    if (1..=2).contains(&n) {
        Ok(n as u32)
    } else {
        Err(Error::out_of_range(format!(
            "`stages` must be 1 or 2, got {n}"
        )))
    }
}

fn levels_table(levels: &[HarmonicLevel]) -> Table {
    let mut t = Table::new();
    for l in levels {
        t.push_row(vec![
            Field::new("harmonic", i64::from(l.harmonic)),
            Field::quantity("frequency", l.frequency),
            Field::new("level", l.level),
        ]);
    }
    t
}

fn design_spec(doc: &'static FunctionDoc, m: &Map) -> Result<(InputFilterSpec, usize)> {
    let s = Spec::new(doc, m)?;
    let spec = InputFilterSpec {
        switching_frequency: s.quantity("switching_frequency")?,
        primary_current: primary_current(&s)?,
        drain_voltage: drain_voltage(&s)?,
        bulk_capacitance: s.quantity("bulk_capacitance")?,
        bulk_esr: s.quantity("bulk_esr")?,
        bulk_esl: s.quantity("bulk_esl")?,
        parasitic_capacitance: s.quantity("parasitic_capacitance")?,
        class: EmissionClass::parse(&s.text("class")?)?,
        margin: spec_decibel(&s, "margin", DbReference::Ratio)?,
        stages: stage_count(&s)?,
        x_capacitance: s.quantity("x_capacitance")?,
        inductor_resistance: s.quantity("inductor_resistance")?,
        max_y_capacitance: s.quantity("max_y_capacitance")?,
        minimum_input_voltage: s.quantity("minimum_input_voltage")?,
        input_power: s.quantity("input_power")?,
        middlebrook_margin: spec_decibel(&s, "middlebrook_margin", DbReference::Ratio)?,
        maximum_line_voltage: s.quantity("maximum_line_voltage")?,
        line_frequency: s.quantity("line_frequency")?,
        discharge_time: s.quantity("discharge_time")?,
        discharge_voltage: s.quantity("discharge_voltage")?,
    };
    let rows = s.integer("table_rows")?;
    if !(0..=100_000).contains(&rows) {
        return Err(Error::out_of_range(format!(
            "`table_rows` must be 0 … 100000, got {rows}"
        )));
    }
    Ok((spec, rows as usize))
}

fn three<A: TypedQuantity, B: TypedQuantity, C: TypedQuantity, R: TypedQuantity>(
    a: (&Dynamic, &str),
    b: (&Dynamic, &str),
    c: (&Dynamic, &str),
    f: fn(A, B, C) -> Result<R>,
) -> ScriptResult<Quantity> {
    let a = lift(dynamic_to_typed::<A>(a.0, a.1))?;
    let b = lift(dynamic_to_typed::<B>(b.0, b.1))?;
    let c = lift(dynamic_to_typed::<C>(c.0, c.1))?;
    lift(f(a, b, c)).map(Quantity::from_typed)
}

pub(crate) fn register(api: &mut Api, state: &Arc<HostState>) {
    def!(api, &LIMIT, |f: Dynamic,
                       class: ImmutableString,
                       detector: ImmutableString|
     -> ScriptResult<Decibel> {
        lift((|| {
            emi::emi_limit(
                dynamic_to_typed(&f, "frequency")?,
                EmissionClass::parse(&class)?,
                Detector::parse(&detector)?,
            )
        })())
    });
    def!(api, &LISN, |f: Dynamic| -> ScriptResult<ScriptRecord> {
        let z = lift(dynamic_to_typed(&f, "frequency").and_then(emi::lisn_impedance))?;
        Ok(ScriptRecord::from_record("lisn_impedance", &z))
    });
    def!(api, &CURRENT_HARMONIC, |m: Map,
                                  n: Dynamic|
     -> ScriptResult<Quantity> {
        lift((|| {
            let s = Spec::new(&CURRENT_HARMONIC, &m)?;
            let i = primary_current(&s)?.harmonic_amplitude(harmonic_number(&n)?)?;
            Ok(Quantity::from_typed(i))
        })())
    });
    def!(api, &DRAIN_HARMONIC, |m: Map,
                                n: Dynamic|
     -> ScriptResult<Quantity> {
        lift((|| {
            let s = Spec::new(&DRAIN_HARMONIC, &m)?;
            let v = drain_voltage(&s)?
                .harmonic_amplitude(s.quantity("switching_frequency")?, harmonic_number(&n)?)?;
            Ok(Quantity::from_typed(v))
        })())
    });
    def!(api, &DM_NOISE, |m: Map| -> ScriptResult<Table> {
        lift((|| {
            let s = Spec::new(&DM_NOISE, &m)?;
            let spec = emi::DifferentialModeSpec {
                switching_frequency: s.quantity("switching_frequency")?,
                primary_current: primary_current(&s)?,
                bulk_capacitance: s.quantity("bulk_capacitance")?,
                bulk_esr: s.quantity("bulk_esr")?,
                bulk_esl: s.quantity("bulk_esl")?,
            };
            let stages: Vec<FilterStage> = match s.optional_quantity("differential_inductance")? {
                Some(l) => {
                    let st = FilterStage {
                        inductance: l,
                        inductor_resistance: s.quantity("inductor_resistance")?,
                        capacitance: s.quantity("x_capacitance")?,
                    };
                    vec![st; stage_count(&s)? as usize]
                }
                None => Vec::new(),
            };
            Ok(levels_table(&emi::differential_mode_noise(&spec, &stages)?))
        })())
    });
    def!(api, &CM_NOISE, |m: Map| -> ScriptResult<Table> {
        lift((|| {
            let s = Spec::new(&CM_NOISE, &m)?;
            let spec = emi::CommonModeSpec {
                switching_frequency: s.quantity("switching_frequency")?,
                drain_voltage: drain_voltage(&s)?,
                parasitic_capacitance: s.quantity("parasitic_capacitance")?,
            };
            Ok(levels_table(&emi::common_mode_noise(
                &spec,
                s.optional_quantity("y_capacitance")?,
                s.optional_quantity("choke_inductance")?,
            )?))
        })())
    });
    def!(api, &REQUIRED, |e: Dynamic,
                          l: Dynamic,
                          m: Dynamic|
     -> ScriptResult<Decibel> {
        lift((|| {
            emi::required_attenuation(
                to_decibel(&e, "estimate", DbReference::MicroVolt)?,
                to_decibel(&l, "limit", DbReference::MicroVolt)?,
                to_decibel(&m, "margin", DbReference::Ratio)?,
            )
        })())
    });
    def!(api, &CORNER, |f: Dynamic,
                        a: Dynamic,
                        order: INT|
     -> ScriptResult<Quantity> {
        lift((|| {
            let order = u32::try_from(order)
                .map_err(|_| Error::out_of_range(format!("`order` must be 1 … 8, got {order}")))?;
            emi::filter_corner_frequency(
                dynamic_to_typed(&f, "frequency")?,
                to_decibel(&a, "attenuation", DbReference::Ratio)?,
                order,
            )
            .map(Quantity::from_typed)
        })())
    });
    def!(api, &LC, |l: Dynamic,
                    c: Dynamic,
                    r: Dynamic,
                    f: Dynamic|
     -> ScriptResult<ScriptRecord> {
        lift((|| {
            let x = emi::lc_filter_attenuation(
                dynamic_to_typed(&l, "inductance")?,
                dynamic_to_typed(&c, "capacitance")?,
                dynamic_to_typed(&r, "load_resistance")?,
                dynamic_to_typed(&f, "frequency")?,
            )?;
            Ok(ScriptRecord::from_record("lc_filter_attenuation", &x))
        })())
    });
    def!(api, &DAMPING, |l: Dynamic,
                         c: Dynamic,
                         n: Dynamic|
     -> ScriptResult<ScriptRecord> {
        lift((|| {
            let x = emi::damping_network(
                dynamic_to_typed(&l, "inductance")?,
                dynamic_to_typed(&c, "capacitance")?,
                super::convert::dynamic_to_number(&n, "capacitance_ratio")?,
            )?;
            Ok(ScriptRecord::from_record("damping_network", &x))
        })())
    });
    def!(api, &ZPEAK, |m: Map| -> ScriptResult<ScriptRecord> {
        lift((|| {
            let s = Spec::new(&ZPEAK, &m)?;
            let damping = match (
                s.optional_quantity("damping_resistance")?,
                s.optional_quantity("damping_capacitance")?,
            ) {
                (Some(r), Some(c)) => Some((r, c)),
                (None, None) => None,
                _ => {
                    return Err(Error::missing(
                        "filter_output_impedance_peak: give both `damping_resistance` and `damping_capacitance`, or neither",
                    ))
                }
            };
            let p = emi::filter_output_impedance_peak(
                s.quantity("inductance")?,
                s.quantity("inductor_resistance")?,
                s.quantity("capacitance")?,
                s.quantity("capacitor_esr")?,
                damping,
            )?;
            Ok(ScriptRecord::new(
                "filter_output_impedance_peak",
                vec![
                    Field::quantity("magnitude", p.magnitude),
                    Field::quantity("frequency", p.frequency),
                ],
            ))
        })())
    });
    def!(api, &MIDDLEBROOK, |m: Map| -> ScriptResult<ScriptRecord> {
        lift((|| {
            let s = Spec::new(&MIDDLEBROOK, &m)?;
            let x = emi::middlebrook_criterion(
                s.quantity("peak_output_impedance")?,
                s.quantity("input_voltage")?,
                s.quantity("input_power")?,
                spec_decibel(&s, "required_margin", DbReference::Ratio)?,
            )?;
            Ok(ScriptRecord::from_record("middlebrook_criterion", &x))
        })())
    });
    def!(api, &TOUCH, |c: Dynamic, v: Dynamic, f: Dynamic| three(
        (&c, "y_capacitance"),
        (&v, "mains_voltage"),
        (&f, "mains_frequency"),
        crate::safety::y_capacitor_touch_current
    ));
    def!(api, &DESIGN, move |m: Map| -> ScriptResult<Map> {
        let (spec, rows) = lift(design_spec(&DESIGN, &m))?;
        let d = lift(emi::input_filter_design(&spec))?;
        let checks = lift(emi::input_filter_checks(&d))?;
        let mut out = Map::new();
        out.insert(
            "summary".into(),
            Dynamic::from(ScriptRecord::from_record("input_filter_design", &d)),
        );
        out.insert(
            "harmonics".into(),
            Dynamic::from(emi::harmonic_table(&d, rows)),
        );
        out.insert(
            "checks".into(),
            Dynamic::from_array(super::api_rules::checks_to_array(checks)),
        );
        Ok(out)
    });
    def!(api, &PLOT, |m: Map| -> ScriptResult<String> {
        let (spec, _) = lift(design_spec(&PLOT, &m))?;
        Ok(emi::spectrum_svg(&lift(emi::input_filter_design(&spec))?))
    });
    let st = state.clone();
    def!(api, &REPORT, move |m: Map| -> ScriptResult<String> {
        let (spec, rows) = lift(design_spec(&REPORT, &m))?;
        let d = lift(emi::input_filter_design(&spec))?;
        let failed = super::api_rules::failed_count(&lift(emi::input_filter_checks(&d))?);
        Ok(st.verdict_text(lift(emi::input_filter_report(&d, rows))?, failed))
    });
}
