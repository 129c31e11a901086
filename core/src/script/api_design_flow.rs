//! Script API that connects the flyback design to the EMI and isolation work:
//! `flyback_emi_source` (the converter keys of `input_filter_design` from a corner) and
//! `flyback_barrier_voltage` (the primary–secondary working voltage from the design), and
//! `transformer_build_inputs` (the isolation's tape and margins handed to the winding build).

use super::api_flyback::ScriptFlyback;
use super::convert::{dynamic_to_typed, lift, value_to_dynamic, ScriptResult};
use super::docs::{Domain, FunctionDoc, ParamDoc, ParamKind};
use super::record::ScriptRecord;
use super::{def, overload, Api};
use crate::emi::{emi_source_from_flyback, FlybackEmiSource, DEFAULT_DRAIN_RISE_TIME_S};
use crate::report::{Field, Record, Value};
use crate::safety::FlybackBarrierSpec;
use crate::units::{si, Time};
use rhai::{Dynamic, ImmutableString, Map};

static EMI_SOURCE: FunctionDoc = FunctionDoc {
    name: "flyback_emi_source",
    domain: Domain::Emi,
    summary: "The converter keys of input_filter_design read from one corner of a flyback design: switching frequency, primary current (CCM trapezoid or DCM triangle), drain trapezoid (bulk peak + reflected), bulk capacitance, lowest bulk voltage and input power at full load, highest line. Add the filter keys (parasitic_capacitance, max_y_capacitance, class, margin, …) and pass it to input_filter_design.",
    params: &[
        ParamDoc::required("design", ParamKind::Any, "a FlybackDesign"),
        ParamDoc::required("corner", ParamKind::Text, "corner name, e.g. \"low_line_full_load\" or \"high_line_full_load\""),
        ParamDoc::with_default("rise_time", ParamKind::Quantity("s"), "30 ns", "drain rise and fall time (shortened to fit half the off-time)"),
    ],
    keys: &[],
    returns: "map with the keys switching_frequency, conduction_mode, peak_current, valley_current, duty, drain_voltage, rise_time, fall_time, bulk_capacitance, minimum_input_voltage, input_power, maximum_line_voltage",
    example: "input_filter_design(flyback_emi_source(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}), \"low_line_full_load\") + #{parasitic_capacitance: 15 * pF, max_y_capacitance: 1 * nF}).summary",
};

static BARRIER_VOLTAGE: FunctionDoc = FunctionDoc {
    name: "flyback_barrier_voltage",
    domain: Domain::Safety,
    summary: "Primary–secondary working voltage (peak and RMS) of a flyback design, two ways: the conservative sum (bulk peak at high line + reflected voltage + clamp overshoot + the secondary's largest swing; the default) and from the waveforms (the worst pair of primary and secondary nodes over a period, peak and true RMS); working_voltage_peak/rms are the chosen one's, and both are shown. Its fields feed barrier_requirements.",
    params: &[
        ParamDoc::required("design", ParamKind::Any, "a FlybackDesign"),
        ParamDoc::with_default("method", ParamKind::Text, "conservative_sum", "\"conservative_sum\" or \"waveform\": which estimate the barrier uses"),
    ],
    keys: &[],
    returns: "record: bulk_voltage_peak, reflected_voltage, clamp_overshoot, secondary_voltage_peak, secondary_voltage_rms, duty_cycle, working_voltage_peak, working_voltage_rms, working_frequency, rule (of the chosen estimate), method, conservative_sum_peak, conservative_sum_rms, waveform_peak, waveform_rms",
    example: "flyback_barrier_voltage(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A})).working_voltage_peak",
};

static BUILD_INPUTS: FunctionDoc = FunctionDoc {
    name: "transformer_build_inputs",
    domain: Domain::Magnetics,
    summary: "The insulation keys of transformer_design from a transformer_insulation result (tape layers between the windings, margin width, the creepage to check the margins against, triple-insulated secondary); add them to the transformer inputs: `inputs += transformer_build_inputs(t)`.",
    params: &[ParamDoc::required("insulation", ParamKind::Any, "a transformer_insulation record")],
    keys: &[],
    returns: "map with the keys insulation_layers, margin_width, required_creepage, secondary_triple_insulated",
    example: "transformer_build_inputs(transformer_insulation(#{barrier: \"primary_secondary\", insulation: \"reinforced\", working_voltage_peak: 600 * V, working_voltage_rms: 300 * V}))",
};

/// The transformer_design keys of a transformer_insulation record.
fn build_inputs(d: &Dynamic) -> crate::error::Result<Map> {
    let wrong = || {
        crate::error::Error::invalid(format!(
            "`insulation` must be the record transformer_insulation returns, got a value of type {}",
            d.type_name()
        ))
    };
    let r = d.read_lock::<ScriptRecord>().ok_or_else(wrong)?;
    if r.kind() != "transformer_insulation" {
        return Err(wrong());
    }
    let field = |name: &str| {
        r.get(name).cloned().ok_or_else(|| {
            crate::error::Error::invalid(format!(
                "the transformer_insulation record has no `{name}`"
            ))
        })
    };
    let triple = matches!(field("construction")?, Value::Text(t) if t == "triple_insulated_wire");
    let mut m = Map::new();
    m.insert(
        "insulation_layers".into(),
        value_to_dynamic(&field("interwinding_tape_layers")?),
    );
    m.insert(
        "required_creepage".into(),
        value_to_dynamic(&field("creepage_required")?),
    );
    if !triple {
        // with a triple-insulated secondary the build needs no margins (and ignores the key)
        m.insert(
            "margin_width".into(),
            value_to_dynamic(&field("margin_width_each_side")?),
        );
    }
    m.insert("secondary_triple_insulated".into(), Dynamic::from(triple));
    Ok(m)
}

fn source_map(s: &FlybackEmiSource) -> Map {
    let mut m = Map::new();
    for f in s.fields() {
        if f.name == "corner" {
            continue;
        }
        m.insert(f.name.as_str().into(), value_to_dynamic(&f.value));
    }
    m
}

fn emi_source(d: &ScriptFlyback, corner: &str, rise: Time) -> ScriptResult<Map> {
    let s = lift(
        emi_source_from_flyback(d.design(), corner, rise)
            .map_err(|e| e.context("flyback_emi_source")),
    )?;
    Ok(source_map(&s))
}

pub(crate) fn register(api: &mut Api) {
    def!(api, &EMI_SOURCE, |d: ScriptFlyback,
                            corner: ImmutableString|
     -> ScriptResult<Map> {
        emi_source(&d, &corner, si(DEFAULT_DRAIN_RISE_TIME_S))
    });
    overload!(api, "flyback_emi_source", |d: ScriptFlyback,
                                          corner: ImmutableString,
                                          rise: Dynamic|
     -> ScriptResult<Map> {
        let rise: Time = lift(dynamic_to_typed(&rise, "rise_time"))?;
        emi_source(&d, &corner, rise)
    });
    fn barrier_voltage(d: &ScriptFlyback, method: &str) -> ScriptResult<ScriptRecord> {
        let (spec, w) = lift(
            (|| {
                let spec = FlybackBarrierSpec::from_flyback(d.design())?;
                let m = crate::safety::WorkingVoltageMethod::parse(method)?;
                let w = crate::safety::BarrierVoltageEstimates::of(d.design(), m)?;
                Ok((spec, w))
            })()
            .map_err(|e: crate::error::Error| e.context("flyback_barrier_voltage")),
        )?;
        let mut fields = vec![
            Field::quantity("bulk_voltage_peak", spec.bulk_voltage_peak),
            Field::quantity("reflected_voltage", spec.reflected_voltage),
            Field::quantity("clamp_overshoot", spec.clamp_overshoot),
            Field::quantity("secondary_voltage_peak", spec.secondary_voltage_peak),
        ];
        if let Some(rms) = spec.secondary_voltage_rms {
            fields.push(Field::quantity("secondary_voltage_rms", rms));
        }
        fields.push(Field::new("duty_cycle", spec.duty_cycle));
        fields.extend(w.fields());
        Ok(ScriptRecord::new("flyback_barrier_voltage", fields))
    }
    def!(
        api,
        &BARRIER_VOLTAGE,
        |d: ScriptFlyback| -> ScriptResult<ScriptRecord> {
            barrier_voltage(&d, "conservative_sum")
        }
    );
    overload!(api, "flyback_barrier_voltage", |d: ScriptFlyback,
                                               method: ImmutableString|
     -> ScriptResult<
        ScriptRecord,
    > {
        barrier_voltage(&d, &method)
    });
    def!(api, &BUILD_INPUTS, |d: Dynamic| -> ScriptResult<Map> {
        lift(build_inputs(&d))
    });
}
