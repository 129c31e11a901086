//! Script API of mains isolation: impulse voltage, clearance, creepage, altitude, grooves,
//! barrier requirements, working voltage, safety capacitors, transformer insulation and the
//! isolation report.

use super::api_rules::checks_to_array;
use super::convert::{dynamic_to_number, dynamic_to_typed, lift, ScriptResult};
use super::docs::{Domain, FunctionDoc, ParamDoc, ParamKind};
use super::host::HostState;
use super::record::ScriptRecord;
use super::spec::Spec;
use super::{def, overload, Api};
use crate::error::{Error, Result};
use crate::report::Table;
use crate::safety::{
    self, Barrier, BarrierRequirement, BarrierSpec, ClearanceSpec, CreepageSpec, DischargeSpec,
    FieldCase, FlybackBarrierSpec, HighFrequencySpec, InsulationGrade, MaterialGroup,
    OvervoltageCategory, PollutionDegree, ProvidedInsulation, WindingConstruction,
    WorkingClearanceSpec,
};
use crate::units::{ElectricPotential, Length};
use rhai::{Array, Dynamic, ImmutableString, Map};
use std::sync::Arc;

const POLLUTION: ParamDoc = ParamDoc::with_default(
    "pollution_degree",
    ParamKind::Integer,
    "2",
    "pollution degree 1, 2 or 3 (IEC 60664-1 4.5.2)",
);
const GROUP: ParamDoc = ParamDoc::with_default(
    "material_group",
    ParamKind::Text,
    "IIIb",
    "\"I\", \"II\", \"IIIa\" or \"IIIb\" (IIIb when the CTI is unknown)",
);
const INSULATION: ParamDoc = ParamDoc::with_default(
    "insulation",
    ParamKind::Text,
    "basic",
    "\"functional\", \"basic\", \"supplementary\", \"reinforced\" or \"double\"",
);
const FIELD: ParamDoc = ParamDoc::with_default(
    "field",
    ParamKind::Text,
    "inhomogeneous",
    "\"inhomogeneous\" (case A) or \"homogeneous\" (case B)",
);
const ALTITUDE: ParamDoc = ParamDoc::with_default(
    "altitude",
    ParamKind::Quantity("m"),
    "0 m",
    "altitude of installation, 0 … 10000 m",
);
const CATEGORY: ParamDoc = ParamDoc::with_default(
    "overvoltage_category",
    ParamKind::Text,
    "II",
    "\"I\" … \"IV\"",
);

/// The keys of a barrier description, with extra keys appended.
macro_rules! barrier_keys {
    ($($extra:expr),* $(,)?) => {
        &[
            ParamDoc::required("barrier", ParamKind::Text, "\"primary_secondary\", \"primary_earth\", \"secondary_earth\" or \"line_neutral_before_fuse\""),
            INSULATION,
            ParamDoc::with_default("mains_voltage", ParamKind::Quantity("V"), "230 V", "nominal line-to-neutral mains voltage, RMS"),
            CATEGORY,
            POLLUTION,
            GROUP,
            ALTITUDE,
            FIELD,
            ParamDoc::optional("working_voltage_peak", ParamKind::Quantity("V"), "peak working voltage across the barrier (for primary_earth in a flyback, the switch node's highest voltage); default √2 × mains_voltage"),
            ParamDoc::optional("working_voltage_rms", ParamKind::Quantity("V"), "RMS working voltage across the barrier; default mains_voltage"),
            ParamDoc::with_default("working_frequency", ParamKind::Quantity("Hz"), "50 Hz", "frequency of the working voltage"),
            ParamDoc::optional("impulse_voltage", ParamKind::Quantity("V"), "impulse withstand voltage for basic insulation, when not the mains' rated impulse voltage"),
            $($extra),*
        ]
    };
}

const PROVIDED_CLEARANCE: ParamDoc = ParamDoc::optional(
    "provided_clearance",
    ParamKind::Quantity("m"),
    "shortest clearance measured across the barrier",
);
const PROVIDED_CREEPAGE: ParamDoc = ParamDoc::optional(
    "provided_creepage",
    ParamKind::Quantity("m"),
    "shortest creepage in the product (bobbin, housing)",
);
const PROVIDED_BOARD: ParamDoc = ParamDoc::optional(
    "provided_creepage_printed_board",
    ParamKind::Quantity("m"),
    "shortest creepage on the printed board",
);
const PROVIDED_DTI: ParamDoc = ParamDoc::optional(
    "provided_distance_through_insulation",
    ParamKind::Quantity("m"),
    "thickness of solid insulation",
);
const PROVIDED_LAYERS: ParamDoc = ParamDoc::optional(
    "provided_thin_sheet_layers",
    ParamKind::Integer,
    "thin-sheet (tape) layers used",
);
const PROVIDED_EACH_TESTED: ParamDoc = ParamDoc::with_default(
    "provided_thin_sheet_each_layer_tested",
    ParamKind::Flag,
    "false",
    "true when each tape layer alone passes the grade's electric strength test (2 layers suffice for reinforced instead of 3)",
);

static IMPULSE: FunctionDoc = FunctionDoc {
    name: "rated_impulse_voltage",
    domain: Domain::Safety,
    summary: "Rated impulse voltage for mains-connected equipment (IEC 60664-1:2020 Table F.1); rows step up.",
    params: &[
        ParamDoc::required("mains_voltage", ParamKind::Quantity("V"), "nominal line-to-neutral voltage, RMS"),
        ParamDoc::with_default("overvoltage_category", ParamKind::Text, "II", "\"I\" … \"IV\""),
    ],
    keys: &[],
    returns: "record: impulse_voltage_peak, table_row, source",
    example: "rated_impulse_voltage(230 * V, \"II\")",
};
static CLEARANCE: FunctionDoc = FunctionDoc {
    name: "clearance_distance",
    domain: Domain::Safety,
    summary: "Required clearance (IEC 60664-1:2020 Table F.2, steps up to the next row; reinforced one impulse step higher or 160 %; × altitude factor of Table A.2).",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::optional("impulse_voltage", ParamKind::Quantity("V"), "impulse withstand voltage for basic insulation (or give mains_voltage)"),
        ParamDoc::optional("mains_voltage", ParamKind::Quantity("V"), "nominal line-to-neutral mains voltage, for the rated impulse voltage"),
        CATEGORY,
        POLLUTION,
        INSULATION,
        FIELD,
        ALTITUDE,
    ],
    returns: "record: clearance, clearance_up_to_2000m, withstand_voltage_peak, altitude_factor, rule, table_row, source",
    example: "clearance_distance(#{mains_voltage: 230 * V, insulation: \"reinforced\", altitude: 3000 * m})",
};
static CREEPAGE: FunctionDoc = FunctionDoc {
    name: "creepage_distance",
    domain: Domain::Safety,
    summary: "Required creepage (IEC 60664-1:2020 Table F.5, interpolated between rows; reinforced twice basic; never below the given clearance).",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::required("working_voltage", ParamKind::Quantity("V"), "RMS working voltage, 10 … 1000 V"),
        POLLUTION,
        GROUP,
        INSULATION,
        ParamDoc::with_default("printed_board", ParamKind::Flag, "false", "true for a path on printed-wiring material"),
        ParamDoc::optional("minimum_clearance", ParamKind::Quantity("m"), "required clearance across the same path"),
        ParamDoc::with_default("round_interpolated", ParamKind::Flag, "false", "true: round an interpolated value up to the next 0.1 mm (IEC 62368-1:2018 Table 17 note), never above the upper row's value"),
    ],
    returns: "record: creepage, basic_creepage, interpolated, set_by_clearance, rule, table_row, source",
    example: "creepage_distance(#{working_voltage: 250 * V, pollution_degree: 2, material_group: \"IIIb\", insulation: \"reinforced\"})",
};
static WORKING_CLEARANCE: FunctionDoc = FunctionDoc {
    name: "clearance_for_working_voltage",
    domain: Domain::Safety,
    summary: "Clearance for the peak working voltage up to 30 kHz (IEC 62368-1:2018 procedure 1; IEC 60664-1:2020 steady-state table, steps up; reinforced for 160 %; pollution minimum; × altitude factor).",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::required("working_voltage_peak", ParamKind::Quantity("V"), "peak working voltage across the clearance, 0 … 50 kV (after the reinforced 160 %)"),
        POLLUTION,
        INSULATION,
        FIELD,
        ALTITUDE,
    ],
    returns: "record: clearance, clearance_up_to_2000m, withstand_voltage_peak, altitude_factor, rule, table_row, source",
    example: "clearance_for_working_voltage(#{working_voltage_peak: 600 * V, insulation: \"reinforced\", altitude: 3000 * m})",
};
const HIGH_FREQUENCY_KEYS: &[ParamDoc] = &[
    ParamDoc::required(
        "working_voltage_peak",
        ParamKind::Quantity("V"),
        "peak working voltage across the path, 0 … 1 kV",
    ),
    ParamDoc::required(
        "frequency",
        ParamKind::Quantity("Hz"),
        "frequency of the working voltage, above 30 kHz",
    ),
    POLLUTION,
    INSULATION,
    ALTITUDE,
];
static HF_CLEARANCE: FunctionDoc = FunctionDoc {
    name: "high_frequency_clearance",
    domain: Domain::Safety,
    summary: "Clearance for a working voltage above 30 kHz (IEC 62368-1:2018 Table 11 from IEC 60664-4:2005; steps up; reinforced twice basic; × altitude factor), 30 kHz < f ≤ 10 MHz.",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: HIGH_FREQUENCY_KEYS,
    returns: "record: clearance, clearance_up_to_2000m, withstand_voltage_peak, altitude_factor, rule, table_row, source",
    example: "high_frequency_clearance(#{working_voltage_peak: 600 * V, frequency: 65 * kHz, insulation: \"reinforced\"})",
};
static HF_CREEPAGE: FunctionDoc = FunctionDoc {
    name: "high_frequency_creepage",
    domain: Domain::Safety,
    summary: "Creepage for a working voltage above 30 kHz up to 100 kHz (IEC 62368-1:2018 Table 18 from IEC 60664-4:2005; steps up; ×1.2 at PD2, ×1.4 at PD3; reinforced twice basic).",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: HIGH_FREQUENCY_KEYS,
    returns: "record: creepage, basic_creepage, interpolated, set_by_clearance, rule, table_row, source",
    example: "high_frequency_creepage(#{working_voltage_peak: 600 * V, frequency: 65 * kHz, insulation: \"reinforced\"})",
};
static ALT: FunctionDoc = FunctionDoc {
    name: "altitude_correction",
    domain: Domain::Safety,
    summary: "Clearance multiplication factor for an altitude (IEC 60664-1:2020 Table A.2), interpolated between rows.",
    params: &[ParamDoc::required("altitude", ParamKind::Quantity("m"), "0 … 10000 m")],
    keys: &[],
    returns: "record: altitude, factor, table_row, source",
    example: "altitude_correction(3000 * m)",
};
static CTI: FunctionDoc = FunctionDoc {
    name: "material_group_for_cti",
    domain: Domain::Safety,
    summary: "Material group from a comparative tracking index (IEC 60664-1:2020 4.8.1.3).",
    params: &[ParamDoc::required(
        "cti",
        ParamKind::Number,
        "comparative tracking index in volts, as a plain number (100 or more)",
    )],
    keys: &[],
    returns: "text: \"I\", \"II\", \"IIIa\" or \"IIIb\"",
    example: "material_group_for_cti(175)",
};
static GROOVE: FunctionDoc = FunctionDoc {
    name: "minimum_groove_width",
    domain: Domain::Safety,
    summary: "Narrowest groove that counts in a creepage path (IEC 60664-1:2020 6.8): 0.25/1.0/1.5 mm, or a third of a clearance below 3 mm.",
    params: &[
        ParamDoc::required("pollution_degree", ParamKind::Integer, "1, 2 or 3"),
        ParamDoc::optional("associated_clearance", ParamKind::Quantity("m"), "the clearance across the groove"),
    ],
    keys: &[],
    returns: "record: minimum_width, rule, source",
    example: "minimum_groove_width(2, 1.5 * mm)",
};
static BARRIER: FunctionDoc = FunctionDoc {
    name: "barrier_requirements",
    domain: Domain::Safety,
    summary: "Clearance (the largest for transients, for the peak working voltage and above 30 kHz), creepage (product and printed board, at least the high-frequency value), solid and thin-sheet insulation and test voltage of a barrier, each with its rule and table row.",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: barrier_keys!(),
    returns: "record: barrier, grade, impulse_voltage_peak, clearance, clearance_for_transients, clearance_for_working_voltage, clearance_for_high_frequency, creepage, creepage_printed_board, creepage_for_high_frequency, distance_through_insulation, thin_sheet_layers_*, test_voltage_peak, test_voltage_rms, *_rule, not_covered",
    example: "barrier_requirements(#{barrier: \"primary_secondary\", insulation: \"reinforced\", altitude: 3000 * m, working_voltage_peak: 600 * V, working_voltage_rms: 300 * V, working_frequency: 65 * kHz})",
};
static CHECKS: FunctionDoc = FunctionDoc {
    name: "barrier_checks",
    domain: Domain::Safety,
    summary: "Checks provided distances of a barrier against its requirements; one check per provided value (strict mode counts failures).",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: barrier_keys!(PROVIDED_CLEARANCE, PROVIDED_CREEPAGE, PROVIDED_BOARD, PROVIDED_DTI, PROVIDED_LAYERS, PROVIDED_EACH_TESTED),
    returns: "array of CheckResult (print with checks_table)",
    example: "checks_table(barrier_checks(#{barrier: \"primary_secondary\", insulation: \"reinforced\", provided_clearance: 6.5 * mm, provided_creepage: 6.5 * mm}))",
};
static TABLE: FunctionDoc = FunctionDoc {
    name: "isolation_table",
    domain: Domain::Safety,
    summary: "One row per barrier: required against provided clearance and creepage, test voltage and status.",
    params: &[ParamDoc::required("barriers", ParamKind::List, "array of maps with the keys of barrier_checks")],
    keys: &[],
    returns: "a Table",
    example: "isolation_table([#{barrier: \"primary_secondary\", insulation: \"reinforced\", provided_clearance: 6.5 * mm}])",
};
static REPORT: FunctionDoc = FunctionDoc {
    name: "isolation_report",
    domain: Domain::Safety,
    summary: "Text report of the barriers with the safety caution, the table, each governing rule and what is not covered.",
    params: &[ParamDoc::required("barriers", ParamKind::List, "array of maps with the keys of barrier_checks")],
    keys: &[],
    returns: "text",
    example: "isolation_report([#{barrier: \"primary_secondary\", insulation: \"reinforced\"}])",
};
static WORKING: FunctionDoc = FunctionDoc {
    name: "flyback_working_voltage",
    domain: Domain::Safety,
    summary: "Peak and RMS working voltage of a flyback's primary–secondary barrier from its voltages at high line (conservative sum).",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::required("bulk_voltage_peak", ParamKind::Quantity("V"), "bulk capacitor voltage at the highest line"),
        ParamDoc::required("reflected_voltage", ParamKind::Quantity("V"), "reflected output voltage"),
        ParamDoc::with_default("clamp_overshoot", ParamKind::Quantity("V"), "0 V", "leakage spike above the reflected voltage"),
        ParamDoc::required("secondary_voltage_peak", ParamKind::Quantity("V"), "peak secondary winding voltage"),
        ParamDoc::optional("secondary_voltage_rms", ParamKind::Quantity("V"), "RMS secondary winding voltage; default the peak (conservative)"),
        ParamDoc::required("duty_cycle", ParamKind::Number, "duty cycle at the highest line, 0 … 1"),
        ParamDoc::required("switching_frequency", ParamKind::Quantity("Hz"), "switching frequency"),
    ],
    returns: "record: working_voltage_peak, working_voltage_rms, working_frequency, rule",
    example: "flyback_working_voltage(#{bulk_voltage_peak: 373 * V, reflected_voltage: 100 * V, clamp_overshoot: 60 * V, secondary_voltage_peak: 40 * V, duty_cycle: 0.2, switching_frequency: 65 * kHz})",
};
static CAP_CLASS: FunctionDoc = FunctionDoc {
    name: "safety_capacitor_class",
    domain: Domain::Safety,
    summary: "An X or Y safety capacitor subclass (IEC 60384-14): impulse test voltage, rated voltage and what it may bridge.",
    params: &[ParamDoc::required("subclass", ParamKind::Text, "X1, X2, X3, Y1, Y2, Y3 or Y4")],
    keys: &[],
    returns: "record: name, service_impulse, impulse_test_voltage_peak, rated_voltage_max_rms, bridges, source",
    example: "safety_capacitor_class(\"Y1\")",
};
static Y_MAX: FunctionDoc = FunctionDoc {
    name: "largest_y_capacitance",
    domain: Domain::Safety,
    summary: "Largest total Y capacitance for a touch-current limit, C = I / (2π·f·V).",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::with_default("touch_current_limit", ParamKind::Quantity("A"), "0.25 mA", "RMS limit (IEC 62368-1:2018 ES1 is 0.5 mA)"),
        ParamDoc::with_default("mains_voltage", ParamKind::Quantity("V"), "264 V", "highest mains voltage, RMS"),
        ParamDoc::with_default("mains_frequency", ParamKind::Quantity("Hz"), "60 Hz", "highest mains frequency"),
    ],
    returns: "record: capacitance, touch_current_limit_rms, mains_voltage_rms, mains_frequency, rule",
    example: "largest_y_capacitance(#{touch_current_limit: 0.25 * mA, mains_voltage: 264 * V, mains_frequency: 60 * Hz})",
};
static X_DISCHARGE: FunctionDoc = FunctionDoc {
    name: "x_discharge_resistor",
    domain: Domain::Safety,
    summary: "Largest X-capacitor discharge resistor, R = t / (C·ln(√2·V / V_limit)), and its standby loss V²/R.",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::required("x_capacitance", ParamKind::Quantity("F"), "total X capacitance"),
        ParamDoc::with_default("mains_voltage", ParamKind::Quantity("V"), "264 V", "highest mains voltage, RMS"),
        ParamDoc::with_default("discharge_time", ParamKind::Quantity("s"), "2 s", "time to reach the limit (IEC 62368-1:2018 5.5.2.2)"),
        ParamDoc::with_default("residual_voltage_limit", ParamKind::Quantity("V"), "60 V", "voltage to reach (ES1)"),
    ],
    returns: "record: resistance, time_constant, standby_loss, rule",
    example: "x_discharge_resistor(#{x_capacitance: 220 * nF})",
};
static TRANSFORMER: FunctionDoc = FunctionDoc {
    name: "transformer_insulation",
    domain: Domain::Safety,
    summary: "Margin width and tape layers (or fully insulated wire) for a barrier through the transformer, for the winding build sheet.",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: barrier_keys!(ParamDoc::with_default(
        "construction",
        ParamKind::Text,
        "margin_tape",
        "\"margin_tape\" or \"triple_insulated_wire\""
    )),
    returns: "record: construction, margin_width_each_side, interwinding_tape_layers, outer_tape_layers, creepage_required, rule",
    example: "transformer_insulation(#{barrier: \"primary_secondary\", insulation: \"reinforced\", working_voltage_rms: 300 * V, working_voltage_peak: 600 * V})",
};

fn pollution(s: &Spec) -> Result<PollutionDegree> {
    PollutionDegree::from_number(s.integer("pollution_degree")?)
}

fn high_frequency_spec(doc: &'static FunctionDoc, m: &Map) -> Result<HighFrequencySpec> {
    let s = Spec::new(doc, m)?;
    Ok(HighFrequencySpec {
        working_voltage_peak: s.quantity("working_voltage_peak")?,
        frequency: s.quantity("frequency")?,
        pollution_degree: pollution(&s)?,
        grade: InsulationGrade::parse(&s.text("insulation")?)?,
        altitude: s.quantity("altitude")?,
    })
}

fn barrier_spec(s: &Spec) -> Result<BarrierSpec> {
    let mains: ElectricPotential = s.quantity("mains_voltage")?;
    let rms = s.optional_quantity("working_voltage_rms")?.unwrap_or(mains);
    let peak = s
        .optional_quantity::<ElectricPotential>("working_voltage_peak")?
        .unwrap_or(mains * std::f64::consts::SQRT_2);
    Ok(BarrierSpec {
        barrier: Barrier::parse(&s.text("barrier")?)?,
        grade: InsulationGrade::parse(&s.text("insulation")?)?,
        mains_voltage: mains,
        overvoltage_category: OvervoltageCategory::parse(&s.text("overvoltage_category")?)?,
        pollution_degree: pollution(s)?,
        material_group: MaterialGroup::parse(&s.text("material_group")?)?,
        altitude: s.quantity("altitude")?,
        field: FieldCase::parse(&s.text("field")?)?,
        working_voltage_peak: peak,
        working_voltage_rms: rms,
        working_frequency: s.quantity("working_frequency")?,
        impulse_voltage: s.optional_quantity("impulse_voltage")?,
    })
}

fn provided(s: &Spec) -> Result<ProvidedInsulation> {
    Ok(ProvidedInsulation {
        clearance: s.optional_quantity("provided_clearance")?,
        creepage: s.optional_quantity("provided_creepage")?,
        creepage_printed_board: s.optional_quantity("provided_creepage_printed_board")?,
        distance_through_insulation: s.optional_quantity("provided_distance_through_insulation")?,
        thin_sheet_layers: s
            .value("provided_thin_sheet_layers")?
            .map(|_| s.integer("provided_thin_sheet_layers"))
            .transpose()?,
        thin_sheet_each_layer_tested: s.flag("provided_thin_sheet_each_layer_tested")?,
    })
}

fn barrier_rows(a: &Array) -> Result<Vec<(BarrierRequirement, ProvidedInsulation)>> {
    a.iter()
        .enumerate()
        .map(|(i, d)| {
            let m = d.read_lock::<Map>().ok_or_else(|| {
                Error::invalid(format!(
                    "barrier {i}: expected an object map with the keys of barrier_checks, found a value of type {}",
                    d.type_name()
                ))
            })?;
            let s = Spec::new(&CHECKS, &m)?;
            let r = safety::barrier_requirements(&barrier_spec(&s)?)?;
            Ok((r, provided(&s)?))
        })
        .collect()
}

pub(crate) fn register(api: &mut Api, state: &Arc<HostState>) {
    def!(api, &IMPULSE, |v: Dynamic,
                         c: ImmutableString|
     -> ScriptResult<ScriptRecord> {
        let v = lift(dynamic_to_typed(&v, "mains_voltage"))?;
        let c = lift(OvervoltageCategory::parse(&c))?;
        let r = lift(safety::rated_impulse_voltage(v, c))?;
        Ok(ScriptRecord::from_record("rated_impulse_voltage", &r))
    });
    overload!(api, "rated_impulse_voltage", |v: Dynamic| -> ScriptResult<
        ScriptRecord,
    > {
        let v = lift(dynamic_to_typed(&v, "mains_voltage"))?;
        let r = lift(safety::rated_impulse_voltage(v, OvervoltageCategory::II))?;
        Ok(ScriptRecord::from_record("rated_impulse_voltage", &r))
    });
    def!(api, &CLEARANCE, |m: Map| -> ScriptResult<ScriptRecord> {
        let r = lift((|| {
            let s = Spec::new(&CLEARANCE, &m)?;
            let given: Option<ElectricPotential> = s.optional_quantity("impulse_voltage")?;
            let mains: Option<ElectricPotential> = s.optional_quantity("mains_voltage")?;
            let impulse = match (given, mains) {
                (Some(u), None) => u,
                (None, Some(v)) => {
                    let c = OvervoltageCategory::parse(&s.text("overvoltage_category")?)?;
                    safety::rated_impulse_voltage(v, c)?.impulse_voltage_peak
                }
                (Some(_), Some(_)) => {
                    return Err(Error::invalid(
                        "clearance_distance: give `impulse_voltage` or `mains_voltage`, not both",
                    ))
                }
                (None, None) => {
                    return Err(Error::missing(
                        "clearance_distance: missing key `impulse_voltage` (V, peak) or `mains_voltage` (V, RMS)",
                    ))
                }
            };
            safety::clearance_distance(&ClearanceSpec {
                impulse_voltage: impulse,
                field: FieldCase::parse(&s.text("field")?)?,
                pollution_degree: pollution(&s)?,
                grade: InsulationGrade::parse(&s.text("insulation")?)?,
                altitude: s.quantity("altitude")?,
            })
        })())?;
        Ok(ScriptRecord::from_record("clearance_distance", &r))
    });
    def!(api, &CREEPAGE, |m: Map| -> ScriptResult<ScriptRecord> {
        let r = lift((|| {
            let s = Spec::new(&CREEPAGE, &m)?;
            safety::creepage_distance(&CreepageSpec {
                working_voltage_rms: s.quantity("working_voltage")?,
                pollution_degree: pollution(&s)?,
                material_group: MaterialGroup::parse(&s.text("material_group")?)?,
                grade: InsulationGrade::parse(&s.text("insulation")?)?,
                printed_board: s.flag("printed_board")?,
                minimum_clearance: s.optional_quantity("minimum_clearance")?,
                round_interpolated: s.flag("round_interpolated")?,
            })
        })())?;
        Ok(ScriptRecord::from_record("creepage_distance", &r))
    });
    def!(
        api,
        &WORKING_CLEARANCE,
        |m: Map| -> ScriptResult<ScriptRecord> {
            let r = lift((|| {
                let s = Spec::new(&WORKING_CLEARANCE, &m)?;
                safety::clearance_for_working_voltage(&WorkingClearanceSpec {
                    working_voltage_peak: s.quantity("working_voltage_peak")?,
                    field: FieldCase::parse(&s.text("field")?)?,
                    pollution_degree: pollution(&s)?,
                    grade: InsulationGrade::parse(&s.text("insulation")?)?,
                    altitude: s.quantity("altitude")?,
                })
            })())?;
            Ok(ScriptRecord::from_record(
                "clearance_for_working_voltage",
                &r,
            ))
        }
    );
    def!(api, &HF_CLEARANCE, |m: Map| -> ScriptResult<ScriptRecord> {
        let r = lift(
            high_frequency_spec(&HF_CLEARANCE, &m)
                .and_then(|h| safety::high_frequency_clearance(&h)),
        )?;
        Ok(ScriptRecord::from_record("high_frequency_clearance", &r))
    });
    def!(api, &HF_CREEPAGE, |m: Map| -> ScriptResult<ScriptRecord> {
        let r = lift(
            high_frequency_spec(&HF_CREEPAGE, &m).and_then(|h| safety::high_frequency_creepage(&h)),
        )?;
        Ok(ScriptRecord::from_record("high_frequency_creepage", &r))
    });
    def!(api, &ALT, |h: Dynamic| -> ScriptResult<ScriptRecord> {
        let h = lift(dynamic_to_typed(&h, "altitude"))?;
        let r = lift(safety::altitude_correction(h))?;
        Ok(ScriptRecord::from_record("altitude_correction", &r))
    });
    def!(api, &CTI, |c: Dynamic| -> ScriptResult<String> {
        let c = lift(dynamic_to_number(&c, "cti"))?;
        Ok(lift(MaterialGroup::from_cti(c))?.as_str().to_string())
    });
    fn groove(pd: Dynamic, c: Option<Dynamic>) -> ScriptResult<ScriptRecord> {
        let pd = lift(super::convert::dynamic_to_integer(&pd, "pollution_degree"))?;
        let pd = lift(PollutionDegree::from_number(pd))?;
        let c: Option<Length> = match c {
            Some(c) => Some(lift(dynamic_to_typed(&c, "associated_clearance"))?),
            None => None,
        };
        let r = lift(safety::minimum_groove_width(pd, c))?;
        Ok(ScriptRecord::from_record("minimum_groove_width", &r))
    }
    def!(api, &GROOVE, |pd: Dynamic, c: Dynamic| groove(pd, Some(c)));
    overload!(api, "minimum_groove_width", |pd: Dynamic| groove(pd, None));
    def!(api, &BARRIER, |m: Map| -> ScriptResult<ScriptRecord> {
        let r = lift((|| {
            let s = Spec::new(&BARRIER, &m)?;
            safety::barrier_requirements(&barrier_spec(&s)?)
        })())?;
        Ok(ScriptRecord::from_record("barrier_requirements", &r))
    });
    def!(api, &CHECKS, move |m: Map| -> ScriptResult<Array> {
        let checks = lift((|| {
            let s = Spec::new(&CHECKS, &m)?;
            let r = safety::barrier_requirements(&barrier_spec(&s)?)?;
            safety::barrier_checks(&r, &provided(&s)?)
        })())?;
        Ok(checks_to_array(checks))
    });
    def!(api, &TABLE, |a: Array| -> ScriptResult<Table> {
        lift(barrier_rows(&a).and_then(|rows| safety::isolation_table(&rows)))
    });
    let st = state.clone();
    def!(api, &REPORT, move |a: Array| -> ScriptResult<String> {
        let rows = lift(barrier_rows(&a))?;
        let text = lift(safety::isolation_report(&rows))?;
        let mut failed = 0;
        for (r, p) in &rows {
            failed += super::api_rules::failed_count(&lift(safety::barrier_checks(r, p))?);
        }
        Ok(st.verdict_text(text, failed))
    });
    def!(api, &WORKING, |m: Map| -> ScriptResult<ScriptRecord> {
        let r = lift((|| {
            let s = Spec::new(&WORKING, &m)?;
            safety::flyback_working_voltage(&FlybackBarrierSpec {
                bulk_voltage_peak: s.quantity("bulk_voltage_peak")?,
                reflected_voltage: s.quantity("reflected_voltage")?,
                clamp_overshoot: s.quantity("clamp_overshoot")?,
                secondary_voltage_peak: s.quantity("secondary_voltage_peak")?,
                secondary_voltage_rms: s.optional_quantity("secondary_voltage_rms")?,
                duty_cycle: s.number("duty_cycle")?,
                switching_frequency: s.quantity("switching_frequency")?,
            })
        })())?;
        Ok(ScriptRecord::from_record("flyback_working_voltage", &r))
    });
    def!(
        api,
        &CAP_CLASS,
        |n: ImmutableString| -> ScriptResult<ScriptRecord> {
            let r = lift(safety::safety_capacitor_class(&n))?;
            Ok(ScriptRecord::from_record("safety_capacitor_class", &r))
        }
    );
    def!(api, &Y_MAX, |m: Map| -> ScriptResult<ScriptRecord> {
        let r = lift((|| {
            let s = Spec::new(&Y_MAX, &m)?;
            safety::largest_y_capacitance(
                s.quantity("touch_current_limit")?,
                s.quantity("mains_voltage")?,
                s.quantity("mains_frequency")?,
            )
        })())?;
        Ok(ScriptRecord::from_record("largest_y_capacitance", &r))
    });
    def!(api, &X_DISCHARGE, |m: Map| -> ScriptResult<ScriptRecord> {
        let r = lift((|| {
            let s = Spec::new(&X_DISCHARGE, &m)?;
            safety::x_discharge_resistor(&DischargeSpec {
                x_capacitance: s.quantity("x_capacitance")?,
                mains_voltage: s.quantity("mains_voltage")?,
                discharge_time: s.quantity("discharge_time")?,
                residual_voltage_limit: s.quantity("residual_voltage_limit")?,
            })
        })())?;
        Ok(ScriptRecord::from_record("x_discharge_resistor", &r))
    });
    def!(api, &TRANSFORMER, |m: Map| -> ScriptResult<ScriptRecord> {
        let r = lift((|| {
            let s = Spec::new(&TRANSFORMER, &m)?;
            let req = safety::barrier_requirements(&barrier_spec(&s)?)?;
            safety::transformer_insulation(
                &req,
                WindingConstruction::parse(&s.text("construction")?)?,
            )
        })())?;
        Ok(ScriptRecord::from_record("transformer_insulation", &r))
    });
}
