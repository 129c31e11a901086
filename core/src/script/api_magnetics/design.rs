//! Script API of magnetics design: cores, materials, gaps, bench workflow, core loss,
//! Dowell factor, temperature rise, core selection and the transformer design.

use super::super::api_rules::checks_to_array;
use super::super::convert::{
    dynamic_to_integer, dynamic_to_number, dynamic_to_typed, lift, ScriptResult,
};
use super::super::docs::{Domain, FunctionDoc, ParamDoc, ParamKind};
use super::super::record::ScriptRecord;
use super::super::spec::Spec;
use super::super::{def, overload, Api};
use crate::error::{Error, Result};
use crate::magnetics::{
    self, Core, CoreFamily, CoreSelectionSpec, FerriteMaterial, GapPlacement, SteinmetzBand,
    TransformerSpec, WindingOrder, WireSystem,
};
use crate::report::{Field, Table, Value};
use crate::units::{si, Quantity};
use rhai::{Dynamic, ImmutableString, Map};

const CORE: ParamDoc = ParamDoc::required(
    "core",
    ParamKind::Any,
    "a size name (\"ETD29\") or a core record from core_by_size / core_from_dimensions / core_from_effective",
);
const TURNS: ParamDoc = ParamDoc::required("turns", ParamKind::Number, "turns of the winding");
const PLACEMENT: ParamDoc = ParamDoc::with_default(
    "gap_placement",
    ParamKind::Text,
    "centre_leg",
    "\"centre_leg\" (ground) or \"spacer\" (under all legs: twice in the path)",
);
const PERMEABILITY: ParamDoc = ParamDoc::with_default(
    "relative_permeability",
    ParamKind::Number,
    "2000",
    "working relative permeability of the ungapped core",
);

static SHAPES: FunctionDoc = FunctionDoc {
    name: "core_shapes",
    domain: Domain::Magnetics,
    summary: "Every built-in ferrite core (E, EF, EFD, ETD, EQ, RM, PQ, toroid) with effective parameters by the IEC 60205 summation method; dimensions recalled from memory.",
    params: &[],
    keys: &[],
    returns: "Table, one row per core, smallest volume first",
    example: "core_shapes()",
};
static BY_SIZE: FunctionDoc = FunctionDoc {
    name: "core_by_size",
    domain: Domain::Magnetics,
    summary: "A built-in core by size name: Ae, le, Ve, Amin (makers' handbook values where the size has them, else IEC 60205 from the dimensions; `effective_parameters_from` says which), window, bobbin width and height, mean turn length, surface.",
    params: &[ParamDoc::required("name", ParamKind::Text, "size name, e.g. \"ETD29\", \"E19/8/5\", \"T25/15/10\"")],
    keys: &[],
    returns: "core record",
    example: "core_by_size(\"ETD29\")",
};
static FROM_DIMS: FunctionDoc = FunctionDoc {
    name: "core_from_dimensions",
    domain: Domain::Magnetics,
    summary: "A user core from the dimensions of a mated pair of E-type halves, or of a toroid (IEC 60205 method).",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::with_default("name", ParamKind::Text, "custom", "name shown in results"),
        ParamDoc::with_default("family", ParamKind::Text, "E", "E, EF, EFD, ETD, EQ, RM, PQ or toroid"),
        ParamDoc::optional("overall_width", ParamKind::Quantity("m"), "width across the outer legs (pairs)"),
        ParamDoc::optional("overall_height", ParamKind::Quantity("m"), "height of the mated pair"),
        ParamDoc::optional("depth", ParamKind::Quantity("m"), "yoke depth"),
        ParamDoc::optional("window_height", ParamKind::Quantity("m"), "window height of the pair"),
        ParamDoc::optional("window_width", ParamKind::Quantity("m"), "between the outer legs' inner faces"),
        ParamDoc::optional("centre_leg_width", ParamKind::Quantity("m"), "width or diameter of the centre leg"),
        ParamDoc::optional("centre_leg_depth", ParamKind::Quantity("m"), "depth of a rectangular centre leg (default: depth)"),
        ParamDoc::with_default("round_centre_leg", ParamKind::Flag, "false", "true for a round centre leg"),
        ParamDoc::optional("outer_leg_area", ParamKind::Quantity("m²"), "total outer-leg area when not rectangular"),
        ParamDoc::optional("outer_diameter", ParamKind::Quantity("m"), "toroid outer diameter"),
        ParamDoc::optional("inner_diameter", ParamKind::Quantity("m"), "toroid inner diameter"),
        ParamDoc::optional("height", ParamKind::Quantity("m"), "toroid height"),
    ],
    returns: "core record",
    example: "core_from_dimensions(#{family: \"toroid\", outer_diameter: 25 * mm, inner_diameter: 15 * mm, height: 10 * mm})",
};
static FROM_EFF: FunctionDoc = FunctionDoc {
    name: "core_from_effective",
    domain: Domain::Magnetics,
    summary: "A user core from its effective parameters (a maker's data sheet values or a measurement).",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::with_default("name", ParamKind::Text, "custom", "name shown in results"),
        ParamDoc::required("effective_area", ParamKind::Quantity("m²"), "Ae"),
        ParamDoc::required("effective_length", ParamKind::Quantity("m"), "le"),
        ParamDoc::required("window_area", ParamKind::Quantity("m²"), "winding window area"),
        ParamDoc::required("winding_width", ParamKind::Quantity("m"), "bobbin winding width"),
        ParamDoc::required("winding_height", ParamKind::Quantity("m"), "bobbin winding height"),
        ParamDoc::required("mean_turn_length", ParamKind::Quantity("m"), "mean length of a turn"),
        ParamDoc::required("surface_area", ParamKind::Quantity("m²"), "outer surface of the wound part"),
    ],
    returns: "core record",
    example: "core_from_effective(#{effective_area: 52 * mm2, effective_length: 58 * mm, window_area: 60 * mm2, winding_width: 14 * mm, winding_height: 4 * mm, mean_turn_length: 50 * mm, surface_area: 2000 * mm2})",
};
static MATERIAL: FunctionDoc = FunctionDoc {
    name: "ferrite_material",
    domain: Domain::Magnetics,
    summary: "A generic MnZn power-ferrite class (typical values recalled from memory, no maker's grade); a second argument edits any field.",
    params: &[
        ParamDoc::required("name", ParamKind::Text, "mnzn_power_100khz, mnzn_power_300khz or mnzn_high_saturation"),
        ParamDoc::optional("edits", ParamKind::Map, "fields to replace, e.g. #{saturation_100c: 0.37 * T, band1_k: 5.0}"),
    ],
    keys: &[],
    returns: "material record (saturation, permeability, Steinmetz bands, ct0/ct1/ct2)",
    example: "ferrite_material(\"mnzn_power_100khz\", #{saturation_100c: 0.37 * T})",
};
static GAP: FunctionDoc = FunctionDoc {
    name: "air_gap_for_inductance",
    domain: Domain::Magnetics,
    summary: "Gap for a target inductance with the core's own reluctance and McLyman's fringing factor, iterated.",
    params: &[
        CORE,
        TURNS,
        ParamDoc::required("inductance", ParamKind::Quantity("H"), "target inductance"),
        PLACEMENT,
        PERMEABILITY,
    ],
    keys: &[],
    returns: "record: gap, gap_in_path, inductance_factor, effective_permeability, fringing_factor, inductance",
    example: "air_gap_for_inductance(\"ETD29\", 60, 800 * uH, \"centre_leg\")",
};
static L_GAP: FunctionDoc = FunctionDoc {
    name: "inductance_for_air_gap",
    domain: Domain::Magnetics,
    summary:
        "Inductance of N turns with a gap: N²/(le/(µ0·µr·Ae) + lg/(µ0·A·F)), fringing per McLyman.",
    params: &[
        CORE,
        TURNS,
        ParamDoc::required(
            "gap",
            ParamKind::Quantity("m"),
            "gap per leg (ground depth or spacer thickness)",
        ),
        PLACEMENT,
        PERMEABILITY,
    ],
    keys: &[],
    returns: "H",
    example: "inductance_for_air_gap(\"ETD29\", 60, 0.5 * mm, \"centre_leg\")",
};
static SPACER: FunctionDoc = FunctionDoc {
    name: "spacer_for_target_inductance",
    domain: Domain::Magnetics,
    summary: "Bench workflow: spacer (or ground gap) from a measured ungapped inductance and a target.",
    params: &[
        CORE,
        TURNS,
        ParamDoc::required("measured_ungapped", ParamKind::Quantity("H"), "inductance measured with the halves mated, no gap"),
        ParamDoc::required("target", ParamKind::Quantity("H"), "wanted inductance"),
        ParamDoc::with_default("gap_placement", ParamKind::Text, "spacer", "\"spacer\" or \"centre_leg\""),
    ],
    keys: &[],
    returns: "record: gap, gap_in_path, inductance_factor, effective_permeability, fringing_factor, inductance",
    example: "spacer_for_target_inductance(\"E19/8/5\", 96, 3 * mH, 1.1 * mH)",
};
static EFF_GAP: FunctionDoc = FunctionDoc {
    name: "effective_gap_from_inductance",
    domain: Domain::Magnetics,
    summary: "Bench workflow: the effective gap from a measured gapped inductance (and the ungapped one, if measured).",
    params: &[
        CORE,
        TURNS,
        ParamDoc::required("measured_gapped", ParamKind::Quantity("H"), "inductance measured with the gap"),
        ParamDoc::optional("measured_ungapped", ParamKind::Quantity("H"), "inductance measured without a gap"),
        ParamDoc::with_default("gap_placement", ParamKind::Text, "spacer", "\"spacer\" or \"centre_leg\""),
    ],
    keys: &[],
    returns: "record: gap, gap_in_path, inductance_factor, effective_permeability, fringing_factor, inductance",
    example: "effective_gap_from_inductance(\"E19/8/5\", 96, 1.1 * mH, 3 * mH)",
};
static LOSS: FunctionDoc = FunctionDoc {
    name: "core_loss_igse",
    domain: Domain::Magnetics,
    summary: "Core loss of a flyback flux waveform (CCM trapezoid or DCM with dead time) by the iGSE (Venkatachalam et al. 2002).",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::with_default("material", ParamKind::Any, "mnzn_power_100khz", "material name or record"),
        ParamDoc::optional("core", ParamKind::Any, "core name or record (gives the loss in W)"),
        ParamDoc::required("frequency", ParamKind::Quantity("Hz"), "switching frequency"),
        ParamDoc::required("flux_swing", ParamKind::Quantity("T"), "peak-to-peak flux swing ΔB"),
        ParamDoc::required("duty_cycle", ParamKind::Number, "rise fraction of the period"),
        ParamDoc::optional("fall_fraction", ParamKind::Number, "fall fraction (default 1 − duty_cycle: CCM)"),
        ParamDoc::with_default("temperature", ParamKind::Quantity("°C"), "100 °C", "core temperature"),
    ],
    returns: "record: loss_density, sine_loss_density (same ΔB, classic Steinmetz), temperature_factor, core_loss (with a core)",
    example: "core_loss_igse(#{frequency: 65 * kHz, flux_swing: 0.2 * T, duty_cycle: 0.4, fall_fraction: 0.4, core: \"EF25\"})",
};
static DOWELL: FunctionDoc = FunctionDoc {
    name: "dowell_resistance_factor",
    domain: Domain::Magnetics,
    summary: "Dowell's AC/DC resistance ratio Fr for penetration ratio Δ = h/δ and m layers (Dowell 1966).",
    params: &[
        ParamDoc::required("penetration_ratio", ParamKind::Number, "Δ, conductor thickness over skin depth (porosity included)"),
        ParamDoc::required("layers", ParamKind::Number, "number of layers m ≥ 1"),
    ],
    keys: &[],
    returns: "number",
    example: "dowell_resistance_factor(1.0, 3)",
};
static WIRE: FunctionDoc = FunctionDoc {
    name: "winding_wire",
    domain: Domain::Magnetics,
    summary: "Wire for an RMS current by current density, with strands in parallel (or litz) when one strand would exceed the strand limit.",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::required("rms_current", ParamKind::Quantity("A"), "RMS current of the winding"),
        ParamDoc::with_default("max_current_density", ParamKind::Quantity("A/m²"), "6 A/mm2", "current density allowed"),
        ParamDoc::optional("max_strand_diameter", ParamKind::Quantity("m"), "largest strand (default two skin depths at `frequency`)"),
        ParamDoc::with_default("frequency", ParamKind::Quantity("Hz"), "100 kHz", "switching frequency for the skin depth"),
        ParamDoc::with_default("temperature", ParamKind::Quantity("°C"), "100 °C", "copper temperature for the skin depth"),
        ParamDoc::with_default("wire_system", ParamKind::Text, "metric", "\"metric\" or \"awg\""),
        ParamDoc::with_default("insulation", ParamKind::Text, "enamel", "\"enamel\", \"triple_insulated\" or \"litz\""),
        ParamDoc::with_default("enamel_grade", ParamKind::Integer, "2", "enamel grade 1 … 3"),
    ],
    returns: "record: description, strand_diameter, gauge (AWG, or 0), strands, overall_diameter, copper_area, current_density",
    example: "winding_wire(#{rms_current: 2.6 * A, frequency: 65 * kHz})",
};
static RISE: FunctionDoc = FunctionDoc {
    name: "transformer_temperature_rise",
    domain: Domain::Magnetics,
    summary: "Temperature rise from loss and surface, ΔT = 450·(P/At)^0.826, At in cm² (McLyman 2011, ch. 6).",
    params: &[
        ParamDoc::required("loss", ParamKind::Quantity("W"), "total transformer loss"),
        ParamDoc::required("surface_area", ParamKind::Quantity("m²"), "outer surface, or a core record"),
    ],
    keys: &[],
    returns: "K",
    example: "transformer_temperature_rise(1.2 * W, core_by_size(\"EF25\").surface_area)",
};
static SELECT: FunctionDoc = FunctionDoc {
    name: "core_selection",
    domain: Domain::Magnetics,
    summary: "Built-in cores whose area product covers the design, smallest first (McLyman's area-product method); optionally only a stock list.",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::required("primary_inductance", ParamKind::Quantity("H"), "primary inductance"),
        ParamDoc::required("peak_current", ParamKind::Quantity("A"), "worst-case peak current (current limit)"),
        ParamDoc::required("primary_rms_current", ParamKind::Quantity("A"), "primary RMS current"),
        ParamDoc::required("secondary_rms_current_referred", ParamKind::Quantity("A"), "Σ I_s,rms·Ns/Np"),
        ParamDoc::with_default("max_flux_density", ParamKind::Quantity("T"), "0.3 T", "peak flux density allowed"),
        ParamDoc::with_default("max_current_density", ParamKind::Quantity("A/m²"), "6 A/mm2", "current density allowed"),
        ParamDoc::with_default("window_utilisation", ParamKind::Number, "0.25", "copper over window, Ku"),
        ParamDoc::optional("stock", ParamKind::List, "size names to choose from"),
    ],
    returns: "Table: name, area_product, area_product_ratio, effective_volume, energy",
    example: "core_selection(#{primary_inductance: 1 * mH, peak_current: 0.5 * A, primary_rms_current: 0.2 * A, secondary_rms_current_referred: 0.25 * A})",
};
/// Keys of one map in `additional_outputs` (not a function; used to check the keys).
static ADDITIONAL_OUTPUT_KEYS: FunctionDoc = FunctionDoc {
    name: "transformer_design additional_outputs[]",
    domain: Domain::Magnetics,
    summary: "one further output winding",
    params: &[],
    keys: &[
        ParamDoc::required("voltage", ParamKind::Quantity("V"), "output voltage"),
        ParamDoc::required("current", ParamKind::Quantity("A"), "full-load current"),
        ParamDoc::with_default(
            "rectifier_drop",
            ParamKind::Quantity("V"),
            "0.5 V",
            "rectifier forward drop",
        ),
    ],
    returns: "",
    example: "",
};

fn additional_outputs(s: &Spec) -> Result<Vec<magnetics::AdditionalOutput>> {
    let Some(v) = s.value("additional_outputs")? else {
        return Ok(Vec::new());
    };
    let arr = v
        .try_cast::<rhai::Array>()
        .ok_or_else(|| Error::invalid("`additional_outputs` must be an array of maps"))?;
    let mut out = Vec::with_capacity(arr.len());
    for (i, d) in arr.iter().enumerate() {
        let om = d
            .read_lock::<Map>()
            .ok_or_else(|| Error::invalid(format!("`additional_outputs[{i}]` must be a map")))?;
        let os = Spec::new(&ADDITIONAL_OUTPUT_KEYS, &om)
            .map_err(|e| e.context(&format!("additional_outputs[{i}]")))?;
        let read = || -> Result<magnetics::AdditionalOutput> {
            Ok(magnetics::AdditionalOutput {
                voltage: os.quantity("voltage")?,
                rectifier_drop: os.quantity("rectifier_drop")?,
                current: os.quantity("current")?,
            })
        };
        out.push(read().map_err(|e| e.context(&format!("additional_outputs[{i}]")))?);
    }
    Ok(out)
}

static DESIGN: FunctionDoc = FunctionDoc {
    name: "transformer_design",
    domain: Domain::Magnetics,
    summary: "A flyback transformer from an operating point: turns, gap, flux at the current limit, losses, windings, insulation build, leakage, rise, checks and a build sheet.",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        CORE,
        ParamDoc::with_default("material", ParamKind::Any, "mnzn_power_100khz", "material name or record (ferrite_material)"),
        ParamDoc::required("primary_inductance", ParamKind::Quantity("H"), "nominal primary inductance"),
        ParamDoc::with_default("inductance_tolerance", ParamKind::Number, "0.1", "relative tolerance of L"),
        ParamDoc::required("switching_frequency", ParamKind::Quantity("Hz"), "switching frequency"),
        ParamDoc::required("primary_peak_current", ParamKind::Quantity("A"), "peak primary current at the design point"),
        ParamDoc::with_default("primary_valley_current", ParamKind::Quantity("A"), "0 A", "start of the primary ramp (0 in DCM)"),
        ParamDoc::required("duty_cycle", ParamKind::Number, "switch duty cycle at the design point"),
        ParamDoc::optional("secondary_conduction_fraction", ParamKind::Number, "secondary conduction over the period (default 1 − duty_cycle: CCM)"),
        ParamDoc::optional("current_limit", ParamKind::Quantity("A"), "controller peak-current limit (default: primary_peak_current)"),
        ParamDoc::with_default("current_limit_tolerance", ParamKind::Number, "0.1", "relative tolerance of the current limit"),
        ParamDoc::with_default("current_limit_overshoot", ParamKind::Quantity("A"), "0 A", "rise of the primary current past the highest limit during the sense delay, V·t_d/L (from the flyback design)"),
        ParamDoc::optional("short_circuit_peak_current", ParamKind::Quantity("A"), "highest primary peak with the output shorted (from the flyback design); adds the saturation_in_short_circuit rule"),
        ParamDoc::required("reflected_voltage", ParamKind::Quantity("V"), "reflected voltage target"),
        ParamDoc::required("output_voltage", ParamKind::Quantity("V"), "regulated output voltage"),
        ParamDoc::with_default("rectifier_drop", ParamKind::Quantity("V"), "0.5 V", "output rectifier forward drop"),
        ParamDoc::optional("output_current", ParamKind::Quantity("A"), "full-load current of the regulated output (needed with additional_outputs)"),
        ParamDoc::optional("additional_outputs", ParamKind::List, "further output windings: array of maps with keys voltage, current, rectifier_drop (default 0.5 V)"),
        ParamDoc::optional("bias_voltage", ParamKind::Quantity("V"), "bias winding voltage (none when left out)"),
        ParamDoc::with_default("bias_rectifier_drop", ParamKind::Quantity("V"), "0.7 V", "bias rectifier drop"),
        ParamDoc::with_default("bias_current", ParamKind::Quantity("A"), "5 mA", "bias load current"),
        ParamDoc::with_default("max_flux_density", ParamKind::Quantity("T"), "0.3 T", "limit at the worst-case current limit, hot"),
        ParamDoc::with_default("saturation_margin", ParamKind::Number, "0.1", "required margin below Bsat at 100 °C"),
        ParamDoc::with_default("core_temperature", ParamKind::Quantity("°C"), "100 °C", "core temperature for loss"),
        ParamDoc::with_default("winding_temperature", ParamKind::Quantity("°C"), "100 °C", "copper temperature"),
        ParamDoc::with_default("ambient_temperature", ParamKind::Quantity("°C"), "40 °C", "air around the transformer"),
        PLACEMENT,
        ParamDoc::with_default("wire_system", ParamKind::Text, "metric", "\"metric\" or \"awg\""),
        ParamDoc::with_default("enamel_grade", ParamKind::Integer, "2", "enamel grade 1 … 3"),
        ParamDoc::with_default("secondary_triple_insulated", ParamKind::Flag, "false", "triple-insulated secondary (no margin tape)"),
        ParamDoc::with_default("primary_litz", ParamKind::Flag, "false", "litz primary"),
        ParamDoc::with_default("secondary_litz", ParamKind::Flag, "false", "litz secondary"),
        ParamDoc::with_default("litz_strand_diameter", ParamKind::Quantity("m"), "0.1 mm", "strand diameter of litz windings"),
        ParamDoc::optional("max_strand_diameter", ParamKind::Quantity("m"), "largest strand (default two skin depths)"),
        ParamDoc::with_default("max_current_density", ParamKind::Quantity("A/m²"), "6 A/mm2", "house limit"),
        ParamDoc::with_default("max_window_fill", ParamKind::Number, "0.35", "house limit, copper over window"),
        ParamDoc::with_default("max_temperature_rise", ParamKind::Quantity("K"), "40 K", "house limit"),
        ParamDoc::with_default("max_layers", ParamKind::Integer, "3", "house limit per winding section"),
        ParamDoc::with_default("insulation_layers", ParamKind::Integer, "3", "tape layers required primary to secondary (from the safety analysis); at least 1 unless the secondary is triple-insulated"),
        ParamDoc::with_default("functional_tape_layers", ParamKind::Integer, "1", "tape layers between same-side windings"),
        ParamDoc::with_default("tape_thickness", ParamKind::Quantity("m"), "0.05 mm", "one tape layer (above zero)"),
        ParamDoc::with_default("margin_width", ParamKind::Quantity("m"), "2.5 mm", "margin tape each side (half the creepage)"),
        ParamDoc::optional("required_creepage", ParamKind::Quantity("m"), "creepage along the bobbin from the safety analysis (checked against 2 × margin; without it the check is listed as not applicable)"),
        ParamDoc::optional("thermal_resistance", ParamKind::Quantity("K/W"), "transformer-to-ambient (default: McLyman's surface fit)"),
        ParamDoc::with_default("winding_order", ParamKind::Text, "split_primary", "\"split_primary\" or \"primary_secondary_bias\""),
        ParamDoc::with_default("insulation_class", ParamKind::Text, "B", "thermal class A, E, B, F or H"),
    ],
    returns: "map: design (record), build_sheet (text, with the safety caution), checks (array of CheckResult)",
    example: "transformer_design(#{core: \"EF25\", primary_inductance: 1.2 * mH, switching_frequency: 65 * kHz, primary_peak_current: 0.5 * A, duty_cycle: 0.4, secondary_conduction_fraction: 0.45, reflected_voltage: 90 * V, output_voltage: 12 * V, margin_width: 2 * mm}).design",
};

static CHECK: FunctionDoc = FunctionDoc {
    name: "transformer_check",
    domain: Domain::Magnetics,
    summary: "Checks a transformer that already exists (given turns on a given core, with its gap or a measured inductance) at an operating point: flux at full load and at the worst-case current limit with the sense-delay overshoot, saturation margin hot, window fill, losses, temperature rise and the rules of transformer_design, plus the inductance against the design's. Takes every key of transformer_design and these.",
    params: &[ParamDoc::required("spec", ParamKind::Map, "the keys of transformer_design, and these")],
    keys: &[
        ParamDoc::required("primary_turns", ParamKind::Integer, "primary turns in all (both halves of a split primary)"),
        ParamDoc::optional("primary_first_half_turns", ParamKind::Integer, "split primary: turns of the half next to the centre leg (default half, rounded up)"),
        ParamDoc::required("secondary_turns", ParamKind::Integer, "turns of the regulated secondary"),
        ParamDoc::optional("additional_output_turns", ParamKind::List, "turns of each additional output, in the order of additional_outputs"),
        ParamDoc::optional("bias_turns", ParamKind::Integer, "bias turns (needed with bias_voltage)"),
        ParamDoc::optional("gap", ParamKind::Quantity("m"), "the gap as built (per gap_placement); or give measured_inductance"),
        ParamDoc::optional("measured_inductance", ParamKind::Quantity("H"), "the primary inductance measured on the bench; or give gap"),
    ],
    returns: "map: check (record: inductance, inductance_error and every transformer_design field), build_sheet (text, with the safety caution), checks (array of CheckResult)",
    example: "transformer_check(#{core: \"EF25\", primary_inductance: 1.2 * mH, switching_frequency: 65 * kHz, primary_peak_current: 0.5 * A, duty_cycle: 0.4, secondary_conduction_fraction: 0.45, reflected_voltage: 90 * V, output_voltage: 12 * V, margin_width: 2 * mm, primary_turns: 50, secondary_turns: 7, gap: 0.13 * mm}).check.flux_density_limit_peak",
};

/// The given transformer from the check keys of a `transformer_check` map.
fn given_transformer(s: &Spec) -> Result<magnetics::GivenTransformer> {
    let turns = |k: &str, v: i64| -> Result<u32> {
        u32::try_from(v)
            .ok()
            .filter(|t| *t >= 1)
            .ok_or_else(|| Error::out_of_range(format!("`{k}` = {v} must be at least 1 turn")))
    };
    let optional_turns = |k: &str| -> Result<Option<u32>> {
        match s.value(k)? {
            Some(v) => {
                let n = dynamic_to_integer(&v, k)?;
                Ok(Some(turns(k, n)?))
            }
            None => Ok(None),
        }
    };
    let mut additional = Vec::new();
    if let Some(v) = s.value("additional_output_turns")? {
        let arr = v.try_cast::<rhai::Array>().ok_or_else(|| {
            Error::invalid("`additional_output_turns` must be an array of turn counts")
        })?;
        for (i, t) in arr.iter().enumerate() {
            let k = format!("additional_output_turns[{i}]");
            additional.push(turns(&k, dynamic_to_integer(t, &k)?)?);
        }
    }
    let magnetising = match (
        s.optional_quantity("gap")?,
        s.optional_quantity("measured_inductance")?,
    ) {
        (Some(g), None) => magnetics::GivenMagnetising::Gap(g),
        (None, Some(l)) => magnetics::GivenMagnetising::MeasuredInductance(l),
        (Some(_), Some(_)) => {
            return Err(Error::invalid(
                "give `gap` (m) or `measured_inductance` (H), not both",
            ))
        }
        (None, None) => {
            return Err(Error::missing(
                "give the transformer's `gap` (m) or its `measured_inductance` (H)",
            ))
        }
    };
    Ok(magnetics::GivenTransformer {
        primary_turns: turns("primary_turns", s.integer("primary_turns")?)?,
        primary_first_half_turns: optional_turns("primary_first_half_turns")?,
        secondary_turns: turns("secondary_turns", s.integer("secondary_turns")?)?,
        additional_output_turns: additional,
        bias_turns: optional_turns("bias_turns")?,
        magnetising,
    })
}

fn rec_quantity(r: &ScriptRecord, name: &str) -> Result<f64> {
    match r.get(name) {
        Some(Value::Quantity(q)) => Ok(q.value()),
        Some(Value::Number(x)) => Ok(*x),
        _ => Err(Error::invalid(format!(
            "the {} record has no numeric field `{name}`",
            r.kind()
        ))),
    }
}

fn family(text: &str) -> Result<CoreFamily> {
    Ok(match text.trim().to_ascii_uppercase().as_str() {
        "E" => CoreFamily::E,
        "EF" => CoreFamily::Ef,
        "EFD" => CoreFamily::Efd,
        "ETD" => CoreFamily::Etd,
        "EQ" => CoreFamily::Eq,
        "RM" => CoreFamily::Rm,
        "PQ" => CoreFamily::Pq,
        "TOROID" => CoreFamily::Toroid,
        "CUSTOM" => CoreFamily::Custom,
        o => {
            return Err(Error::unknown(format!(
                "unknown core family '{o}'; expected E, EF, EFD, ETD, EQ, RM, PQ or toroid"
            )))
        }
    })
}

/// A core from a size name or a core record.
fn core_arg(d: &Dynamic) -> Result<Core> {
    if let Some(s) = d.read_lock::<ImmutableString>() {
        return magnetics::core_by_size(s.as_str());
    }
    if let Some(r) = d.read_lock::<ScriptRecord>() {
        if r.kind() == "core" {
            let text = |n: &str| match r.get(n) {
                Some(Value::Text(t)) => t.clone(),
                _ => "custom".into(),
            };
            let ae = rec_quantity(&r, "effective_area")?;
            let le = rec_quantity(&r, "effective_length")?;
            return Ok(Core {
                name: text("name"),
                family: family(&text("family")).unwrap_or(CoreFamily::Custom),
                effective_area: si(ae),
                effective_length: si(le),
                effective_volume: si(rec_quantity(&r, "effective_volume")?),
                minimum_area: si(rec_quantity(&r, "minimum_area")?),
                centre_leg_area: si(rec_quantity(&r, "centre_leg_area")?),
                outer_leg_area: si(rec_quantity(&r, "outer_leg_area")?),
                window_area: si(rec_quantity(&r, "window_area")?),
                window_height: si(rec_quantity(&r, "window_height")?),
                winding_width: si(rec_quantity(&r, "winding_width")?),
                winding_height: si(rec_quantity(&r, "winding_height")?),
                mean_turn_length: si(rec_quantity(&r, "mean_turn_length")?),
                surface_area: si(rec_quantity(&r, "surface_area")?),
                effective_parameters_from: match r.get("effective_parameters_from") {
                    Some(Value::Text(t)) => t.clone(),
                    _ => "the core record".into(),
                },
            });
        }
    }
    Err(Error::invalid(format!(
        "`core` must be a size name or a core record, got a value of type {}",
        d.type_name()
    )))
}

fn material_from_record(r: &ScriptRecord) -> Result<FerriteMaterial> {
    let name = match r.get("name") {
        Some(Value::Text(t)) => t.clone(),
        _ => "custom".into(),
    };
    let mut bands = Vec::new();
    let mut i = 1;
    while r.get(&format!("band{i}_k")).is_some() {
        let g = |f: &str| rec_quantity(r, &format!("band{i}_{f}"));
        bands.push(SteinmetzBand {
            frequency_low: si(g("frequency_low")?),
            frequency_high: si(g("frequency_high")?),
            k: g("k")?,
            alpha: g("alpha")?,
            beta: g("beta")?,
        });
        i += 1;
    }
    let m = FerriteMaterial {
        name,
        initial_permeability: rec_quantity(r, "initial_permeability")?,
        working_permeability: rec_quantity(r, "working_permeability")?,
        saturation_25c: si(rec_quantity(r, "saturation_25c")?),
        saturation_100c: si(rec_quantity(r, "saturation_100c")?),
        bands,
        temperature_coefficients: [
            rec_quantity(r, "ct0")?,
            rec_quantity(r, "ct1")?,
            rec_quantity(r, "ct2")?,
        ],
    };
    m.validate()?;
    Ok(m)
}

/// A material from a class name or a material record.
fn material_arg(d: &Dynamic) -> Result<FerriteMaterial> {
    if let Some(s) = d.read_lock::<ImmutableString>() {
        return magnetics::ferrite_material(s.as_str());
    }
    if let Some(r) = d.read_lock::<ScriptRecord>() {
        if r.kind() == "ferrite_material" {
            return material_from_record(&r);
        }
    }
    Err(Error::invalid(format!(
        "`material` must be a class name or a record from ferrite_material, got a value of type {}",
        d.type_name()
    )))
}

/// Replaces fields of a material record by name; the dimension of each edit must match.
fn edit_material(base: &FerriteMaterial, edits: &Map) -> Result<FerriteMaterial> {
    let rec = ScriptRecord::from_record("ferrite_material", base);
    let mut fields: Vec<Field> = rec.fields().to_vec();
    for (k, v) in edits {
        let f = fields
            .iter_mut()
            .find(|f| f.name == k.as_str())
            .ok_or_else(|| {
                let names: Vec<&str> = rec.names();
                Error::unknown(format!(
                    "ferrite_material: unknown field `{k}`{}",
                    crate::script::suggest::did_you_mean(k, &names)
                ))
            })?;
        f.value = match &f.value {
            Value::Quantity(old) => {
                let q = super::super::convert::dynamic_to_quantity(v, k, Some(old.dimension()))?;
                if q.dimension() != old.dimension() {
                    return Err(Error::dimension(format!(
                        "ferrite_material: `{k}` must be {}, got {}",
                        old.describe(),
                        q.describe()
                    )));
                }
                Value::Quantity(q)
            }
            Value::Text(_) => Value::Text(
                v.clone()
                    .into_immutable_string()
                    .map_err(|t| Error::invalid(format!("`{k}` must be text, got {t}")))?
                    .to_string(),
            ),
            _ => Value::Number(dynamic_to_number(v, k)?),
        };
    }
    material_from_record(&ScriptRecord::new("ferrite_material", fields))
}

fn core_record(c: &Core) -> ScriptRecord {
    ScriptRecord::from_record("core", c)
}

fn placement(text: &str) -> ScriptResult<GapPlacement> {
    lift(GapPlacement::parse(text))
}

fn dims_core(s: &Spec) -> Result<Core> {
    let name = s.text("name")?;
    let fam = family(&s.text("family")?)?;
    if fam == CoreFamily::Toroid {
        return Core::toroid(
            &name,
            &magnetics::ToroidDimensions {
                outer_diameter: s.quantity("outer_diameter")?,
                inner_diameter: s.quantity("inner_diameter")?,
                height: s.quantity("height")?,
            },
        );
    }
    let depth = s.quantity("depth")?;
    let round = s.flag("round_centre_leg")?;
    let width = s.quantity("centre_leg_width")?;
    Core::paired(
        &name,
        fam,
        &magnetics::PairedCoreDimensions {
            overall_width: s.quantity("overall_width")?,
            overall_height: s.quantity("overall_height")?,
            depth,
            window_height: s.quantity("window_height")?,
            window_width: s.quantity("window_width")?,
            centre_leg_width: width,
            centre_leg_depth: if round {
                width
            } else {
                s.optional_quantity("centre_leg_depth")?.unwrap_or(depth)
            },
            round_centre_leg: round,
            outer_leg_area: s.optional_quantity("outer_leg_area")?,
        },
    )
}

fn transformer_spec(s: &Spec) -> Result<TransformerSpec> {
    let core = core_arg(&s.value("core")?.unwrap_or(Dynamic::UNIT))?;
    let material = material_arg(&s.value("material")?.unwrap_or(Dynamic::UNIT))?;
    let duty = s.number("duty_cycle")?;
    let peak = s.quantity("primary_peak_current")?;
    let bias = match s.optional_quantity("bias_voltage")? {
        Some(v) => Some(magnetics::BiasWinding {
            voltage: v,
            rectifier_drop: s.quantity("bias_rectifier_drop")?,
            current: s.quantity("bias_current")?,
        }),
        None => None,
    };
    let grade = s.integer("enamel_grade")?;
    if !(1..=3).contains(&grade) {
        return Err(Error::out_of_range(format!(
            "`enamel_grade` = {grade} is outside 1 … 3"
        )));
    }
    let count = |k: &str| -> Result<u32> {
        let v = s.integer(k)?;
        u32::try_from(v)
            .map_err(|_| Error::out_of_range(format!("`{k}` = {v} must be a count from 0 up")))
    };
    let spec = TransformerSpec {
        core,
        material,
        primary_inductance: s.quantity("primary_inductance")?,
        inductance_tolerance: s.number("inductance_tolerance")?,
        switching_frequency: s.quantity("switching_frequency")?,
        primary_peak_current: peak,
        primary_valley_current: s.quantity("primary_valley_current")?,
        duty_cycle: duty,
        secondary_conduction_fraction: s
            .optional_number("secondary_conduction_fraction")?
            .unwrap_or(1.0 - duty),
        current_limit: s.optional_quantity("current_limit")?.unwrap_or(peak),
        current_limit_tolerance: s.number("current_limit_tolerance")?,
        current_limit_overshoot: s.quantity("current_limit_overshoot")?,
        short_circuit_peak_current: s.optional_quantity("short_circuit_peak_current")?,
        reflected_voltage: s.quantity("reflected_voltage")?,
        output_voltage: s.quantity("output_voltage")?,
        rectifier_drop: s.quantity("rectifier_drop")?,
        output_current: s.optional_quantity("output_current")?,
        additional_outputs: additional_outputs(s)?,
        bias,
        max_flux_density: s.quantity("max_flux_density")?,
        saturation_margin: s.number("saturation_margin")?,
        core_temperature: s.quantity("core_temperature")?,
        winding_temperature: s.quantity("winding_temperature")?,
        ambient_temperature: s.quantity("ambient_temperature")?,
        gap_placement: GapPlacement::parse(&s.text("gap_placement")?)?,
        wire_system: WireSystem::parse(&s.text("wire_system")?)?,
        enamel_grade: grade as u8,
        secondary_triple_insulated: s.flag("secondary_triple_insulated")?,
        primary_litz: s.flag("primary_litz")?,
        secondary_litz: s.flag("secondary_litz")?,
        litz_strand_diameter: s.quantity("litz_strand_diameter")?,
        max_strand_diameter: s.optional_quantity("max_strand_diameter")?,
        max_current_density: s.quantity("max_current_density")?,
        max_window_fill: s.number("max_window_fill")?,
        max_temperature_rise: s.quantity("max_temperature_rise")?,
        max_layers: count("max_layers")?,
        insulation_layers: count("insulation_layers")?,
        functional_tape_layers: count("functional_tape_layers")?,
        tape_thickness: s.quantity("tape_thickness")?,
        margin_width: s.quantity("margin_width")?,
        required_creepage: s.optional_quantity("required_creepage")?,
        thermal_resistance: s.optional_quantity("thermal_resistance")?,
        winding_order: WindingOrder::parse(&s.text("winding_order")?)?,
        insulation_class: s.text("insulation_class")?,
    };
    if spec.secondary_triple_insulated {
        // no margin tape with a triple-insulated secondary: reported as ignored when given
        s.ignore("margin_width");
    }
    Ok(spec)
}

fn core_loss(s: &Spec) -> Result<ScriptRecord> {
    let mat = material_arg(&s.value("material")?.unwrap_or(Dynamic::UNIT))?;
    mat.validate()?;
    let f: crate::units::Frequency = s.quantity("frequency")?;
    let swing: crate::units::MagneticFluxDensity = s.quantity("flux_swing")?;
    let duty =
        crate::units::validate::number_within("duty_cycle", s.number("duty_cycle")?, 0.001, 0.999)?;
    let fall = match s.optional_number("fall_fraction")? {
        Some(x) => crate::units::validate::number_within("fall_fraction", x, 0.001, 0.999)?,
        None => 1.0 - duty,
    };
    let t = crate::units::validate::positive("frequency", f)?
        .value
        .recip();
    let band = mat.band_at(f)?;
    let segs = magnetics::flyback_flux_segments(swing, si(duty * t), si(fall * t), si(t))?;
    let ct = mat.temperature_factor(s.quantity("temperature")?)?;
    let pv = magnetics::igse_loss_density(&band, &segs)?.value * ct;
    let sine = magnetics::steinmetz_loss_density(&band, f, si(swing.value / 2.0))?.value * ct;
    let mut fields = vec![
        Field::quantity(
            "loss_density",
            si::<crate::units::VolumetricPowerDensity>(pv),
        ),
        Field::quantity(
            "sine_loss_density",
            si::<crate::units::VolumetricPowerDensity>(sine),
        ),
        Field::new("temperature_factor", ct),
    ];
    if let Some(c) = s.value("core")? {
        let c = core_arg(&c)?;
        fields.push(Field::quantity(
            "core_loss",
            si::<crate::units::Power>(pv * c.effective_volume.value),
        ));
    }
    Ok(ScriptRecord::new("core_loss_igse", fields))
}

fn wire(s: &Spec) -> Result<ScriptRecord> {
    use crate::magnetics::WireInsulation;
    let i: crate::units::ElectricCurrent = s.quantity("rms_current")?;
    let j: crate::units::ElectricCurrentDensity = s.quantity("max_current_density")?;
    let dmax = match s.optional_quantity("max_strand_diameter")? {
        Some(d) => d,
        None => si(2.0
            * magnetics::skin_depth(s.quantity("frequency")?, s.quantity("temperature")?)?.value),
    };
    let grade = s.integer("enamel_grade")?;
    if !(1..=3).contains(&grade) {
        return Err(Error::out_of_range(format!(
            "`enamel_grade` = {grade} is outside 1 … 3"
        )));
    }
    let ins = match s.text("insulation")?.as_str() {
        "enamel" => WireInsulation::Enamel(grade as u8),
        "triple_insulated" => WireInsulation::TripleInsulated,
        "litz" => WireInsulation::Litz(0),
        o => {
            return Err(Error::unknown(format!(
                "unknown `insulation` '{o}'; expected \"enamel\", \"triple_insulated\" or \"litz\""
            )))
        }
    };
    let w = magnetics::choose_wire(i, j, dmax, WireSystem::parse(&s.text("wire_system")?)?, ins)?;
    Ok(ScriptRecord::new(
        "winding_wire",
        vec![
            Field::new("description", w.describe()),
            Field::quantity("strand_diameter", w.strand_diameter),
            Field::new("gauge", w.gauge.unwrap_or(0)),
            Field::new("strands", w.strands as i64),
            Field::quantity("overall_diameter", w.overall_diameter),
            Field::quantity("copper_area", si::<crate::units::Area>(w.copper_area())),
            Field::quantity(
                "current_density",
                si::<crate::units::ElectricCurrentDensity>(i.value / w.copper_area()),
            ),
        ],
    ))
}

fn selection(s: &Spec) -> Result<Table> {
    let stock = match s.value("stock")? {
        Some(v) => {
            let a = v.into_array().map_err(|t| {
                Error::invalid(format!("`stock` must be an array of size names, got {t}"))
            })?;
            a.into_iter()
                .map(|x| {
                    x.into_immutable_string()
                        .map(|s| s.to_string())
                        .map_err(|t| {
                            Error::invalid(format!("`stock` entries must be text, got {t}"))
                        })
                })
                .collect::<Result<Vec<_>>>()?
        }
        None => Vec::new(),
    };
    let list = magnetics::core_selection(&CoreSelectionSpec {
        primary_inductance: s.quantity("primary_inductance")?,
        peak_current: s.quantity("peak_current")?,
        primary_rms_current: s.quantity("primary_rms_current")?,
        secondary_rms_current_referred: s.quantity("secondary_rms_current_referred")?,
        max_flux_density: s.quantity("max_flux_density")?,
        max_current_density: s.quantity("max_current_density")?,
        window_utilisation: s.number("window_utilisation")?,
        stock,
    })?;
    let m4 = crate::units::Dimension {
        exponents: [4, 0, 0, 0, 0, 0, 0, 0],
    };
    let mut t = Table::new();
    for c in list {
        t.push_row(vec![
            Field::new("name", c.core.name.as_str()),
            Field::new("area_product", Quantity::new(c.area_product, m4)),
            Field::new("area_product_ratio", c.area_product_ratio),
            Field::quantity("effective_area", c.core.effective_area),
            Field::quantity("effective_volume", c.core.effective_volume),
            Field::quantity("energy", si::<crate::units::Energy>(c.energy)),
        ]);
    }
    Ok(t)
}

pub(crate) fn register(api: &mut Api) {
    def!(api, &SHAPES, || -> ScriptResult<Table> {
        let mut t = Table::new();
        for c in lift(magnetics::core_shapes())? {
            use crate::report::Record;
            t.push_row(c.fields());
        }
        Ok(t)
    });
    def!(
        api,
        &BY_SIZE,
        |n: ImmutableString| -> ScriptResult<ScriptRecord> {
            lift(magnetics::core_by_size(&n)).map(|c| core_record(&c))
        }
    );
    def!(api, &FROM_DIMS, |m: Map| -> ScriptResult<ScriptRecord> {
        let s = lift(Spec::new(&FROM_DIMS, &m))?;
        lift(dims_core(&s)).map(|c| core_record(&c))
    });
    def!(api, &FROM_EFF, |m: Map| -> ScriptResult<ScriptRecord> {
        let s = lift(Spec::new(&FROM_EFF, &m))?;
        lift((|| {
            Core::from_effective(
                &s.text("name")?,
                s.quantity("effective_area")?,
                s.quantity("effective_length")?,
                s.quantity("window_area")?,
                s.quantity("winding_width")?,
                s.quantity("winding_height")?,
                s.quantity("mean_turn_length")?,
                s.quantity("surface_area")?,
            )
        })())
        .map(|c| core_record(&c))
    });
    def!(
        api,
        &MATERIAL,
        |n: ImmutableString| -> ScriptResult<ScriptRecord> {
            lift(magnetics::ferrite_material(&n))
                .map(|m| ScriptRecord::from_record("ferrite_material", &m))
        }
    );
    overload!(api, "ferrite_material", |n: ImmutableString,
                                        edits: Map|
     -> ScriptResult<ScriptRecord> {
        let base = lift(magnetics::ferrite_material(&n))?;
        lift(edit_material(&base, &edits))
            .map(|m| ScriptRecord::from_record("ferrite_material", &m))
    });
    overload!(api, "ferrite_material", |base: ScriptRecord,
                                        edits: Map|
     -> ScriptResult<ScriptRecord> {
        let base = lift(material_from_record(&base))?;
        lift(edit_material(&base, &edits))
            .map(|m| ScriptRecord::from_record("ferrite_material", &m))
    });

    fn gap_fn(
        c: &Dynamic,
        n: &Dynamic,
        l: &Dynamic,
        p: &str,
        mu: f64,
    ) -> ScriptResult<ScriptRecord> {
        let core = lift(core_arg(c))?;
        let n = lift(dynamic_to_number(n, "turns"))?;
        let l = lift(dynamic_to_typed(l, "inductance"))?;
        let g = lift(magnetics::air_gap_for_inductance(
            &core,
            n,
            l,
            placement(p)?,
            mu,
        ))?;
        Ok(ScriptRecord::from_record("air_gap", &g))
    }
    def!(api, &GAP, |c: Dynamic,
                     n: Dynamic,
                     l: Dynamic,
                     p: ImmutableString,
                     mu: Dynamic| {
        let mu = lift(dynamic_to_number(&mu, "relative_permeability"))?;
        gap_fn(&c, &n, &l, &p, mu)
    });
    overload!(
        api,
        "air_gap_for_inductance",
        |c: Dynamic, n: Dynamic, l: Dynamic, p: ImmutableString| gap_fn(&c, &n, &l, &p, 2000.0)
    );
    overload!(
        api,
        "air_gap_for_inductance",
        |c: Dynamic, n: Dynamic, l: Dynamic| gap_fn(&c, &n, &l, "centre_leg", 2000.0)
    );

    fn l_fn(c: &Dynamic, n: &Dynamic, g: &Dynamic, p: &str, mu: f64) -> ScriptResult<Quantity> {
        let core = lift(core_arg(c))?;
        let n = lift(dynamic_to_number(n, "turns"))?;
        let g = lift(dynamic_to_typed(g, "gap"))?;
        lift(magnetics::inductance_for_air_gap(
            &core,
            n,
            g,
            placement(p)?,
            mu,
        ))
        .map(Quantity::from_typed)
    }
    def!(api, &L_GAP, |c: Dynamic,
                       n: Dynamic,
                       g: Dynamic,
                       p: ImmutableString,
                       mu: Dynamic| {
        let mu = lift(dynamic_to_number(&mu, "relative_permeability"))?;
        l_fn(&c, &n, &g, &p, mu)
    });
    overload!(
        api,
        "inductance_for_air_gap",
        |c: Dynamic, n: Dynamic, g: Dynamic, p: ImmutableString| l_fn(&c, &n, &g, &p, 2000.0)
    );
    overload!(
        api,
        "inductance_for_air_gap",
        |c: Dynamic, n: Dynamic, g: Dynamic| l_fn(&c, &n, &g, "centre_leg", 2000.0)
    );

    fn spacer_fn(
        c: &Dynamic,
        n: &Dynamic,
        l0: &Dynamic,
        l: &Dynamic,
        p: &str,
    ) -> ScriptResult<ScriptRecord> {
        let core = lift(core_arg(c))?;
        let n = lift(dynamic_to_number(n, "turns"))?;
        let l0 = lift(dynamic_to_typed(l0, "measured_ungapped"))?;
        let l = lift(dynamic_to_typed(l, "target"))?;
        let g = lift(magnetics::spacer_for_target_inductance(
            &core,
            n,
            l0,
            l,
            placement(p)?,
        ))?;
        Ok(ScriptRecord::from_record("air_gap", &g))
    }
    def!(api, &SPACER, |c: Dynamic,
                        n: Dynamic,
                        l0: Dynamic,
                        l: Dynamic,
                        p: ImmutableString| {
        spacer_fn(&c, &n, &l0, &l, &p)
    });
    overload!(
        api,
        "spacer_for_target_inductance",
        |c: Dynamic, n: Dynamic, l0: Dynamic, l: Dynamic| spacer_fn(&c, &n, &l0, &l, "spacer")
    );

    fn eff_fn(
        c: &Dynamic,
        n: &Dynamic,
        lg: &Dynamic,
        l0: Option<&Dynamic>,
        p: &str,
    ) -> ScriptResult<ScriptRecord> {
        let core = lift(core_arg(c))?;
        let n = lift(dynamic_to_number(n, "turns"))?;
        let lg = lift(dynamic_to_typed(lg, "measured_gapped"))?;
        let l0 = match l0 {
            Some(d) => Some(lift(dynamic_to_typed(d, "measured_ungapped"))?),
            None => None,
        };
        let g = lift(magnetics::effective_gap_from_inductance(
            &core,
            n,
            lg,
            l0,
            placement(p)?,
            2000.0,
        ))?;
        Ok(ScriptRecord::from_record("air_gap", &g))
    }
    def!(api, &EFF_GAP, |c: Dynamic,
                         n: Dynamic,
                         lg: Dynamic,
                         l0: Dynamic,
                         p: ImmutableString| {
        eff_fn(&c, &n, &lg, Some(&l0), &p)
    });
    overload!(
        api,
        "effective_gap_from_inductance",
        |c: Dynamic, n: Dynamic, lg: Dynamic, l0: Dynamic| eff_fn(&c, &n, &lg, Some(&l0), "spacer")
    );
    overload!(
        api,
        "effective_gap_from_inductance",
        |c: Dynamic, n: Dynamic, lg: Dynamic| eff_fn(&c, &n, &lg, None, "spacer")
    );

    def!(api, &LOSS, |m: Map| -> ScriptResult<ScriptRecord> {
        let s = lift(Spec::new(&LOSS, &m))?;
        lift(core_loss(&s))
    });
    def!(api, &DOWELL, |d: Dynamic,
                        m: Dynamic|
     -> ScriptResult<f64> {
        let d = lift(dynamic_to_number(&d, "penetration_ratio"))?;
        let m = lift(dynamic_to_number(&m, "layers"))?;
        lift(magnetics::dowell_resistance_factor(d, m))
    });
    def!(api, &WIRE, |m: Map| -> ScriptResult<ScriptRecord> {
        let s = lift(Spec::new(&WIRE, &m))?;
        lift(wire(&s))
    });
    def!(api, &RISE, |p: Dynamic,
                      a: Dynamic|
     -> ScriptResult<Quantity> {
        let p = lift(dynamic_to_typed(&p, "loss"))?;
        let a = lift(dynamic_to_typed(&a, "surface_area"))?;
        lift(magnetics::temperature_rise(p, a)).map(Quantity::from_typed)
    });
    def!(api, &SELECT, |m: Map| -> ScriptResult<Table> {
        let s = lift(Spec::new(&SELECT, &m))?;
        lift(selection(&s))
    });
    def!(api, &CHECK, |m: Map| -> ScriptResult<Map> {
        // the check keys go to CHECK's doc, the rest to transformer_design's, so an unknown
        // key is reported against the design's keys
        let (mut own, mut rest) = (Map::new(), Map::new());
        for (k, v) in m {
            if CHECK.keys.iter().any(|p| p.name == k.as_str()) {
                own.insert(k, v);
            } else {
                rest.insert(k, v);
            }
        }
        let given = lift(Spec::new(&CHECK, &own).and_then(|s| given_transformer(&s)))?;
        let s = lift(Spec::new(&DESIGN, &rest))?;
        let spec = lift(transformer_spec(&s))?;
        let c = lift(magnetics::transformer_check(&spec, &given))?;
        let checks = lift(magnetics::transformer_check_rules(&spec, &c))?;
        let sheet = magnetics::build_sheet(&spec, &c.design);
        let mut out = Map::new();
        out.insert(
            "check".into(),
            Dynamic::from(ScriptRecord::from_record("transformer_check", &c)),
        );
        out.insert("build_sheet".into(), Dynamic::from(sheet));
        out.insert(
            "checks".into(),
            Dynamic::from_array(checks_to_array(checks)),
        );
        Ok(out)
    });
    def!(api, &DESIGN, move |m: Map| -> ScriptResult<Map> {
        let s = lift(Spec::new(&DESIGN, &m))?;
        let spec = lift(transformer_spec(&s))?;
        let d = lift(magnetics::transformer_design(&spec))?;
        let checks = lift(magnetics::transformer_checks(&spec, &d))?;
        let sheet = magnetics::build_sheet(&spec, &d);
        let mut out = Map::new();
        out.insert(
            "design".into(),
            Dynamic::from(ScriptRecord::from_record("transformer_design", &d)),
        );
        out.insert("build_sheet".into(), Dynamic::from(sheet));
        out.insert(
            "checks".into(),
            Dynamic::from_array(checks_to_array(checks)),
        );
        Ok(out)
    });
}
