//! Script API of magnetics: copper, skin depth, wire sizes, cores, materials, gaps, core
//! loss, windings, temperature rise and transformer design.

use super::convert::{dynamic_to_integer, dynamic_to_typed, lift, ScriptResult};
use super::docs::{Domain, FunctionDoc, ParamDoc, ParamKind};
use super::{def, overload, Api};
use crate::magnetics;
use crate::units::{Quantity, ThermodynamicTemperature};
use rhai::{Array, Dynamic};

mod design;

const TEMPERATURE: ParamDoc = ParamDoc::with_default(
    "temperature",
    ParamKind::Quantity("°C"),
    "20 °C",
    "conductor temperature (celsius(100))",
);

static SKIN: FunctionDoc = FunctionDoc {
    name: "skin_depth",
    domain: Domain::Magnetics,
    summary: "Skin depth in copper, δ = √(ρ(T)/(π·f·µ0)); resistivity per IEC 60028.",
    params: &[
        ParamDoc::required("frequency", ParamKind::Quantity("Hz"), "frequency"),
        TEMPERATURE,
    ],
    keys: &[],
    returns: "m",
    example: "skin_depth(100 * kHz, celsius(100))",
};
static RHO: FunctionDoc = FunctionDoc {
    name: "copper_resistivity",
    domain: Domain::Magnetics,
    summary: "Resistivity of annealed copper, ρ20·(1 + 0.00393·(T − 20 °C)) (IEC 60028).",
    params: &[TEMPERATURE],
    keys: &[],
    returns: "Ω·m",
    example: "copper_resistivity(celsius(100))",
};
static AWG_D: FunctionDoc = FunctionDoc {
    name: "awg_diameter",
    domain: Domain::Magnetics,
    summary: "Bare diameter of an AWG size, 0.127 mm·92^((36−n)/39) (ASTM B258); 0000 … 56, with 0000 written −3.",
    params: &[ParamDoc::required("gauge", ParamKind::Integer, "AWG number")],
    keys: &[],
    returns: "m",
    example: "awg_diameter(24)",
};
static AWG_A: FunctionDoc = FunctionDoc {
    name: "awg_area",
    domain: Domain::Magnetics,
    summary: "Bare copper cross-section of an AWG size (ASTM B258).",
    params: &[ParamDoc::required(
        "gauge",
        ParamKind::Integer,
        "AWG number",
    )],
    keys: &[],
    returns: "m²",
    example: "awg_area(24)",
};
static METRIC: FunctionDoc = FunctionDoc {
    name: "metric_wire_at_or_above",
    domain: Domain::Magnetics,
    summary: "The smallest metric nominal wire diameter (R20 series, 0.05 … 3.15 mm) not below the given one.",
    params: &[ParamDoc::required("diameter", ParamKind::Quantity("m"), "wanted bare diameter")],
    keys: &[],
    returns: "m",
    example: "metric_wire_at_or_above(0.43 * mm)",
};
static METRIC_ALL: FunctionDoc = FunctionDoc {
    name: "metric_wire_diameters",
    domain: Domain::Magnetics,
    summary: "Every metric nominal wire diameter gapwise knows (R20 series, 0.05 … 3.15 mm).",
    params: &[],
    keys: &[],
    returns: "array of lengths",
    example: "metric_wire_diameters()",
};
static RDC: FunctionDoc = FunctionDoc {
    name: "wire_dc_resistance",
    domain: Domain::Magnetics,
    summary: "DC resistance of a round copper wire, ρ(T)·l/(π·d²/4).",
    params: &[
        ParamDoc::required("diameter", ParamKind::Quantity("m"), "bare diameter"),
        ParamDoc::required("length", ParamKind::Quantity("m"), "wire length"),
        TEMPERATURE,
    ],
    keys: &[],
    returns: "Ω",
    example: "wire_dc_resistance(awg_diameter(26), 3 * m, celsius(100))",
};

fn room() -> ThermodynamicTemperature {
    Quantity::celsius(20.0)
        .to_typed("temperature")
        .expect("20 °C is a temperature")
}

fn temperature(t: &Dynamic) -> ScriptResult<ThermodynamicTemperature> {
    lift(dynamic_to_typed(t, "temperature"))
}

static FROM_FLYBACK: FunctionDoc = FunctionDoc {
    name: "transformer_inputs_from_flyback",
    domain: Domain::Magnetics,
    summary: "The transformer's operating point from a flyback design (corner with the highest primary peak), as a map of transformer_design keys; add the core and construction, then design.",
    params: &[ParamDoc::required("design", ParamKind::Any, "a result of flyback_design")],
    keys: &[],
    returns: "map: primary_inductance, switching_frequency, primary_peak_current, primary_valley_current, duty_cycle, secondary_conduction_fraction, current_limit, current_limit_tolerance, reflected_voltage, output_voltage, rectifier_drop, output_current (and additional_outputs with several outputs, bias_* keys with a bias winding)",
    example: "let t = transformer_inputs_from_flyback(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A})); t.core = \"EF25\"; transformer_design(t).design.primary_turns",
};

pub(crate) fn register(api: &mut Api) {
    design::register(api);
    def!(
        api,
        &FROM_FLYBACK,
        |d: super::api_flyback::ScriptFlyback| -> ScriptResult<rhai::Map> {
            let op = lift(magnetics::transformer_operating_point(d.spec(), d.design()))?;
            let mut map: rhai::Map = crate::report::Record::fields(&op)
                .iter()
                .map(|f| {
                    (
                        f.name.as_str().into(),
                        super::convert::value_to_dynamic(&f.value),
                    )
                })
                .collect();
            if !op.additional_outputs.is_empty() {
                let outputs: rhai::Array = op
                    .additional_outputs
                    .iter()
                    .map(|o| {
                        let mut m = rhai::Map::new();
                        m.insert(
                            "voltage".into(),
                            super::convert::quantity_to_dynamic(Quantity::from_typed(o.voltage)),
                        );
                        m.insert(
                            "rectifier_drop".into(),
                            super::convert::quantity_to_dynamic(Quantity::from_typed(
                                o.rectifier_drop,
                            )),
                        );
                        m.insert(
                            "current".into(),
                            super::convert::quantity_to_dynamic(Quantity::from_typed(o.current)),
                        );
                        Dynamic::from_map(m)
                    })
                    .collect();
                map.insert("additional_outputs".into(), Dynamic::from_array(outputs));
            }
            Ok(map)
        }
    );
    def!(api, &SKIN, |f: Dynamic,
                      t: Dynamic|
     -> ScriptResult<Quantity> {
        let f = lift(dynamic_to_typed(&f, "frequency"))?;
        lift(magnetics::skin_depth(f, temperature(&t)?)).map(Quantity::from_typed)
    });
    overload!(api, "skin_depth", |f: Dynamic| -> ScriptResult<Quantity> {
        let f = lift(dynamic_to_typed(&f, "frequency"))?;
        lift(magnetics::skin_depth(f, room())).map(Quantity::from_typed)
    });
    def!(api, &RHO, |t: Dynamic| -> ScriptResult<Quantity> {
        lift(magnetics::copper_resistivity(temperature(&t)?)).map(Quantity::from_typed)
    });
    overload!(api, "copper_resistivity", || -> ScriptResult<Quantity> {
        lift(magnetics::copper_resistivity(room())).map(Quantity::from_typed)
    });
    def!(api, &AWG_D, |n: Dynamic| -> ScriptResult<Quantity> {
        lift(dynamic_to_integer(&n, "gauge").and_then(magnetics::awg_diameter))
            .map(Quantity::from_typed)
    });
    def!(api, &AWG_A, |n: Dynamic| -> ScriptResult<Quantity> {
        lift(dynamic_to_integer(&n, "gauge").and_then(magnetics::awg_area))
            .map(Quantity::from_typed)
    });
    def!(api, &METRIC, |d: Dynamic| -> ScriptResult<Quantity> {
        let d = lift(dynamic_to_typed(&d, "diameter"))?;
        lift(magnetics::metric_wire_at_or_above(d)).map(Quantity::from_typed)
    });
    def!(api, &METRIC_ALL, || -> Array {
        magnetics::metric_wire_diameters()
            .into_iter()
            .map(|d| Dynamic::from(Quantity::from_typed(d)))
            .collect()
    });
    def!(api, &RDC, |d: Dynamic,
                     l: Dynamic,
                     t: Dynamic|
     -> ScriptResult<Quantity> {
        let d = lift(dynamic_to_typed(&d, "diameter"))?;
        let l = lift(dynamic_to_typed(&l, "length"))?;
        lift(magnetics::wire_dc_resistance(d, l, temperature(&t)?)).map(Quantity::from_typed)
    });
    overload!(api, "wire_dc_resistance", |d: Dynamic,
                                          l: Dynamic|
     -> ScriptResult<Quantity> {
        let d = lift(dynamic_to_typed(&d, "diameter"))?;
        let l = lift(dynamic_to_typed(&l, "length"))?;
        lift(magnetics::wire_dc_resistance(d, l, room())).map(Quantity::from_typed)
    });
}
