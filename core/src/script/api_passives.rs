//! Script API of passives: preferred values, dividers, reactance and resonance.

use super::convert::{
    dynamic_to_quantity, dynamic_to_typed, lift, quantity_to_dynamic, ScriptResult,
};
use super::docs::{Domain, FunctionDoc, ParamDoc, ParamKind};
use super::record::ScriptRecord;
use super::spec::Spec;
use super::{def, overload, Api};
use crate::passives::{self, DividerSpec, ESeries};
use crate::units::{Quantity, TypedQuantity};
use rhai::{Array, Dynamic, ImmutableString, Map};

const SERIES: ParamDoc = ParamDoc::with_default(
    "series",
    ParamKind::Text,
    "E24",
    "IEC 60063 series, E3 … E192",
);

static NEAREST: FunctionDoc = FunctionDoc {
    name: "nearest_preferred",
    domain: Domain::Passives,
    summary: "The IEC 60063 preferred value nearest by ratio; keeps the unit.",
    params: &[
        ParamDoc::required("value", ParamKind::Quantity("any unit"), "wanted value"),
        SERIES,
    ],
    keys: &[],
    returns: "the preferred value",
    example: "nearest_preferred(4.8 * kohm, \"E24\")",
};
static ABOVE: FunctionDoc = FunctionDoc {
    name: "preferred_at_or_above",
    domain: Domain::Passives,
    summary: "The smallest IEC 60063 preferred value not below the given one.",
    params: &[
        ParamDoc::required("value", ParamKind::Quantity("any unit"), "wanted value"),
        SERIES,
    ],
    keys: &[],
    returns: "the preferred value",
    example: "preferred_at_or_above(4.8 * uF, \"E6\")",
};
static BELOW: FunctionDoc = FunctionDoc {
    name: "preferred_at_or_below",
    domain: Domain::Passives,
    summary: "The largest IEC 60063 preferred value not above the given one.",
    params: &[
        ParamDoc::required("value", ParamKind::Quantity("any unit"), "wanted value"),
        SERIES,
    ],
    keys: &[],
    returns: "the preferred value",
    example: "preferred_at_or_below(4.8 * uF, \"E6\")",
};
static BETWEEN: FunctionDoc = FunctionDoc {
    name: "preferred_values_between",
    domain: Domain::Passives,
    summary: "Every IEC 60063 preferred value from low to high, inclusive.",
    params: &[
        ParamDoc::required("low", ParamKind::Quantity("any unit"), "lower end"),
        ParamDoc::required("high", ParamKind::Quantity("same unit"), "upper end"),
        SERIES,
    ],
    keys: &[],
    returns: "array of values",
    example: "preferred_values_between(1 * kohm, 10 * kohm, \"E12\")",
};
static DIVIDER: FunctionDoc = FunctionDoc {
    name: "resistor_divider",
    domain: Domain::Passives,
    summary: "Upper and lower resistors from a preferred series for an output voltage and a reference.",
    params: &[ParamDoc::required("spec", ParamKind::Map, "see keys")],
    keys: &[
        ParamDoc::required("output_voltage", ParamKind::Quantity("V"), "voltage to regulate"),
        ParamDoc::required("reference_voltage", ParamKind::Quantity("V"), "reference at the tap"),
        ParamDoc::with_default("divider_current", ParamKind::Quantity("A"), "250 uA", "wanted current in the lower resistor"),
        ParamDoc::with_default("reference_input_current", ParamKind::Quantity("A"), "0 A", "current the reference input draws"),
        SERIES,
    ],
    returns: "record: upper_resistor, lower_resistor, actual_output_voltage, output_error, divider_current, upper_power, lower_power",
    example: "resistor_divider(#{output_voltage: 12 * V, reference_voltage: 2.5 * V})",
};
static XL: FunctionDoc = FunctionDoc {
    name: "inductive_reactance",
    domain: Domain::Passives,
    summary: "Reactance of an inductor, X = 2π·f·L.",
    params: &[
        ParamDoc::required("inductance", ParamKind::Quantity("H"), "inductance"),
        ParamDoc::required("frequency", ParamKind::Quantity("Hz"), "frequency"),
    ],
    keys: &[],
    returns: "Ω",
    example: "inductive_reactance(1 * mH, 65 * kHz)",
};
static XC: FunctionDoc = FunctionDoc {
    name: "capacitive_reactance",
    domain: Domain::Passives,
    summary: "Reactance of a capacitor, X = 1/(2π·f·C).",
    params: &[
        ParamDoc::required("capacitance", ParamKind::Quantity("F"), "capacitance"),
        ParamDoc::required("frequency", ParamKind::Quantity("Hz"), "frequency"),
    ],
    keys: &[],
    returns: "Ω",
    example: "capacitive_reactance(100 * nF, 150 * kHz)",
};
static F0: FunctionDoc = FunctionDoc {
    name: "lc_resonant_frequency",
    domain: Domain::Passives,
    summary: "Resonant (corner) frequency of an LC pair, f0 = 1/(2π·√(L·C)).",
    params: &[
        ParamDoc::required("inductance", ParamKind::Quantity("H"), "inductance"),
        ParamDoc::required("capacitance", ParamKind::Quantity("F"), "capacitance"),
    ],
    keys: &[],
    returns: "Hz",
    example: "lc_resonant_frequency(1 * uH, 100 * uF)",
};
static Z0: FunctionDoc = FunctionDoc {
    name: "lc_characteristic_impedance",
    domain: Domain::Passives,
    summary: "Characteristic impedance of an LC pair, Z0 = √(L/C).",
    params: &[
        ParamDoc::required("inductance", ParamKind::Quantity("H"), "inductance"),
        ParamDoc::required("capacitance", ParamKind::Quantity("F"), "capacitance"),
    ],
    keys: &[],
    returns: "Ω",
    example: "lc_characteristic_impedance(1 * uH, 100 * uF)",
};
static C_FOR: FunctionDoc = FunctionDoc {
    name: "capacitance_for_resonance",
    domain: Domain::Passives,
    summary: "The capacitance resonating with an inductance at a frequency, C = 1/((2πf)²·L).",
    params: &[
        ParamDoc::required("inductance", ParamKind::Quantity("H"), "inductance"),
        ParamDoc::required("frequency", ParamKind::Quantity("Hz"), "resonant frequency"),
    ],
    keys: &[],
    returns: "F",
    example: "capacitance_for_resonance(1 * uH, 10 * kHz)",
};
static L_FOR: FunctionDoc = FunctionDoc {
    name: "inductance_for_resonance",
    domain: Domain::Passives,
    summary: "The inductance resonating with a capacitance at a frequency, L = 1/((2πf)²·C).",
    params: &[
        ParamDoc::required("capacitance", ParamKind::Quantity("F"), "capacitance"),
        ParamDoc::required("frequency", ParamKind::Quantity("Hz"), "resonant frequency"),
    ],
    keys: &[],
    returns: "H",
    example: "inductance_for_resonance(100 * uF, 10 * kHz)",
};

fn series(s: &str) -> ScriptResult<ESeries> {
    lift(ESeries::parse(s))
}

fn preferred(
    v: &Dynamic,
    s: &str,
    f: fn(f64, ESeries) -> crate::error::Result<f64>,
) -> ScriptResult<Dynamic> {
    let q = lift(dynamic_to_quantity(v, "value", None))?;
    let x = lift(f(q.value(), series(s)?))?;
    Ok(quantity_to_dynamic(Quantity::new(x, q.dimension())))
}

fn two<A: TypedQuantity, B: TypedQuantity, R: TypedQuantity>(
    a: &Dynamic,
    an: &str,
    b: &Dynamic,
    bn: &str,
    f: fn(A, B) -> crate::error::Result<R>,
) -> ScriptResult<Quantity> {
    let a = lift(dynamic_to_typed::<A>(a, an))?;
    let b = lift(dynamic_to_typed::<B>(b, bn))?;
    lift(f(a, b)).map(Quantity::from_typed)
}

pub(crate) fn register(api: &mut Api) {
    use crate::passives::e_series::{
        at_or_above_value, at_or_below_value, nearest_value, values_between,
    };
    def!(api, &NEAREST, |v: Dynamic, s: ImmutableString| preferred(
        &v,
        &s,
        nearest_value
    ));
    overload!(api, "nearest_preferred", |v: Dynamic| preferred(
        &v,
        "E24",
        nearest_value
    ));
    def!(api, &ABOVE, |v: Dynamic, s: ImmutableString| preferred(
        &v,
        &s,
        at_or_above_value
    ));
    overload!(api, "preferred_at_or_above", |v: Dynamic| preferred(
        &v,
        "E24",
        at_or_above_value
    ));
    def!(api, &BELOW, |v: Dynamic, s: ImmutableString| preferred(
        &v,
        &s,
        at_or_below_value
    ));
    overload!(api, "preferred_at_or_below", |v: Dynamic| preferred(
        &v,
        "E24",
        at_or_below_value
    ));
    def!(api, &BETWEEN, |lo: Dynamic,
                         hi: Dynamic,
                         s: ImmutableString|
     -> ScriptResult<Array> {
        let lo = lift(dynamic_to_quantity(&lo, "low", None))?;
        let hi = lift(dynamic_to_quantity(&hi, "high", None))?;
        let v = lift(values_between(lo.value(), hi.value(), series(&s)?))?;
        lift(lo.compare(&hi))?;
        Ok(v.into_iter()
            .map(|x| quantity_to_dynamic(Quantity::new(x, lo.dimension())))
            .collect())
    });
    def!(api, &DIVIDER, |m: Map| -> ScriptResult<ScriptRecord> {
        let s = lift(Spec::new(&DIVIDER, &m))?;
        let spec = lift((|| {
            Ok(DividerSpec {
                output_voltage: s.quantity("output_voltage")?,
                reference_voltage: s.quantity("reference_voltage")?,
                divider_current: s.quantity("divider_current")?,
                reference_input_current: s.quantity("reference_input_current")?,
                series: ESeries::parse(&s.text("series")?)?,
            })
        })())?;
        let d = lift(passives::resistor_divider(&spec))?;
        Ok(ScriptRecord::from_record("resistor_divider", &d))
    });
    def!(api, &XL, |l: Dynamic, f: Dynamic| two(
        &l,
        "inductance",
        &f,
        "frequency",
        passives::inductive_reactance
    ));
    def!(api, &XC, |c: Dynamic, f: Dynamic| two(
        &c,
        "capacitance",
        &f,
        "frequency",
        passives::capacitive_reactance
    ));
    def!(api, &F0, |l: Dynamic, c: Dynamic| two(
        &l,
        "inductance",
        &c,
        "capacitance",
        passives::lc_resonant_frequency
    ));
    def!(api, &Z0, |l: Dynamic, c: Dynamic| two(
        &l,
        "inductance",
        &c,
        "capacitance",
        passives::lc_characteristic_impedance
    ));
    def!(api, &C_FOR, |l: Dynamic, f: Dynamic| two(
        &l,
        "inductance",
        &f,
        "frequency",
        passives::capacitance_for_resonance
    ));
    def!(api, &L_FOR, |c: Dynamic, f: Dynamic| two(
        &c,
        "capacitance",
        &f,
        "frequency",
        passives::inductance_for_resonance
    ));
}
