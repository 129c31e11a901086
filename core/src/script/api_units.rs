//! Script API of units: the Quantity and Decibel types, their operators, unit constants,
//! parsing, conversion and display.

use super::convert::{dynamic_to_quantity, lift, quantity_to_dynamic, ScriptResult};
use super::docs::{Domain, FunctionDoc, ParamDoc, ParamKind};
use super::record::ScriptRecord;
use super::{def, overload, Api};
use crate::error::Error;
use crate::units::{parse_quantity, DbReference, Decibel, Quantity, SCRIPT_CONSTANTS};
use rhai::{Dynamic, Engine, ImmutableString, FLOAT, INT};
use std::collections::HashMap;
use std::sync::OnceLock;

const Q: ParamKind = ParamKind::Quantity("any unit");

static QUANTITY: FunctionDoc = FunctionDoc {
    name: "quantity",
    domain: Domain::Units,
    summary: "Reads a quantity from text: \"4.7 uF\", \"4.7µF\", \"100 mΩ\", \"2.2 kohm\", \"1e-3 H\", \"25 °C\".",
    params: &[ParamDoc::required("text", ParamKind::Text, "a number and a unit")],
    keys: &[],
    returns: "the quantity (a plain number when there is no unit)",
    example: "quantity(\"4.7 µF\")",
};
static TO: FunctionDoc = FunctionDoc {
    name: "to",
    domain: Domain::Units,
    summary: "Writes a quantity in a chosen unit (display only).",
    params: &[
        ParamDoc::required("value", Q, "the quantity"),
        ParamDoc::required(
            "unit",
            ParamKind::Text,
            "unit text such as \"nF\", \"V/us\", \"°C\"",
        ),
    ],
    keys: &[],
    returns: "text, e.g. \"4700 nF\"",
    example: "(4.7 * uF).to(\"nF\")",
};
static VALUE_IN: FunctionDoc = FunctionDoc {
    name: "value_in",
    domain: Domain::Units,
    summary: "The number a quantity has in a chosen unit.",
    params: &[
        ParamDoc::required("value", Q, "the quantity"),
        ParamDoc::required("unit", ParamKind::Text, "unit text such as \"mH\""),
    ],
    keys: &[],
    returns: "a plain number",
    example: "(1.1 * mH).value_in(\"uH\")",
};
static SQRT: FunctionDoc = FunctionDoc {
    name: "sqrt",
    domain: Domain::Units,
    summary: "Square root; the dimension's exponents must be even (√(L·C) works, √V does not).",
    params: &[ParamDoc::required("value", Q, "quantity or number")],
    keys: &[],
    returns: "the root, with halved exponents",
    example: "sqrt(1 * mH * (100 * nF))",
};
static ABS: FunctionDoc = FunctionDoc {
    name: "abs",
    domain: Domain::Units,
    summary: "Magnitude of a quantity.",
    params: &[ParamDoc::required("value", Q, "quantity")],
    keys: &[],
    returns: "the magnitude, same unit",
    example: "abs(-3 * V)",
};
static MIN: FunctionDoc = FunctionDoc {
    name: "min",
    domain: Domain::Units,
    summary: "The smaller of two quantities of the same dimension.",
    params: &[
        ParamDoc::required("a", Q, "quantity"),
        ParamDoc::required("b", Q, "quantity"),
    ],
    keys: &[],
    returns: "the smaller one",
    example: "min(3 * V, 2500 * mV)",
};
static MAX: FunctionDoc = FunctionDoc {
    name: "max",
    domain: Domain::Units,
    summary: "The larger of two quantities of the same dimension.",
    params: &[
        ParamDoc::required("a", Q, "quantity"),
        ParamDoc::required("b", Q, "quantity"),
    ],
    keys: &[],
    returns: "the larger one",
    example: "max(3 * V, 2500 * mV)",
};
static CELSIUS: FunctionDoc = FunctionDoc {
    name: "celsius",
    domain: Domain::Units,
    summary: "An absolute temperature from degrees Celsius (differences are written in K).",
    params: &[ParamDoc::required(
        "degrees",
        ParamKind::Number,
        "temperature in °C",
    )],
    keys: &[],
    returns: "an absolute temperature, printed in °C",
    example: "celsius(100) - celsius(25)",
};
static EXACTLY_EQUAL: FunctionDoc = FunctionDoc {
    name: "exactly_equal",
    domain: Domain::Units,
    summary: "Exact equality of two quantities (same dimension, same value to the last bit); `==` allows a relative 1e-9.",
    params: &[
        ParamDoc::required("a", Q, "quantity or number"),
        ParamDoc::required("b", Q, "quantity or number"),
    ],
    keys: &[],
    returns: "true or false (an error when the dimensions differ)",
    example: "exactly_equal(22 * uF, 22000 * nF)",
};
static DIV_FLOOR: FunctionDoc = FunctionDoc {
    name: "div_floor",
    domain: Domain::Units,
    summary:
        "Whole-number division rounded down (`/` between whole numbers gives the real quotient).",
    params: &[
        ParamDoc::required("a", ParamKind::Integer, "dividend"),
        ParamDoc::required("b", ParamKind::Integer, "divisor, not zero"),
    ],
    keys: &[],
    returns: "a whole number",
    example: "div_floor(7, 2)",
};
static ANGULAR_FREQUENCY: FunctionDoc = FunctionDoc {
    name: "angular_frequency",
    domain: Domain::Units,
    summary: "The angular frequency of a frequency: ω = 2π·f, in rad/s (angles are a dimension of their own, so rad/s is never read as Hz).",
    params: &[ParamDoc::required("frequency", ParamKind::Quantity("Hz"), "frequency")],
    keys: &[],
    returns: "angular frequency (rad/s)",
    example: "angular_frequency(50 * Hz)",
};
static FREQUENCY_FROM_ANGULAR: FunctionDoc = FunctionDoc {
    name: "frequency_from_angular",
    domain: Domain::Units,
    summary: "The frequency of an angular frequency: f = ω / 2π.",
    params: &[ParamDoc::required(
        "angular_frequency",
        ParamKind::Quantity("rad/s"),
        "angular frequency",
    )],
    keys: &[],
    returns: "frequency (Hz)",
    example: "frequency_from_angular(314.16 * rad / s)",
};
static SIN: FunctionDoc = FunctionDoc {
    name: "sin",
    domain: Domain::Units,
    summary: "Sine of an angle (rad or deg; a plain number is radians).",
    params: &[ParamDoc::required(
        "angle",
        ParamKind::Quantity("rad"),
        "angle",
    )],
    keys: &[],
    returns: "a plain number",
    example: "sin(30 * deg)",
};
static COS: FunctionDoc = FunctionDoc {
    name: "cos",
    domain: Domain::Units,
    summary: "Cosine of an angle (rad or deg; a plain number is radians).",
    params: &[ParamDoc::required(
        "angle",
        ParamKind::Quantity("rad"),
        "angle",
    )],
    keys: &[],
    returns: "a plain number",
    example: "cos(60 * deg)",
};
static TAN: FunctionDoc = FunctionDoc {
    name: "tan",
    domain: Domain::Units,
    summary: "Tangent of an angle (rad or deg; a plain number is radians).",
    params: &[ParamDoc::required(
        "angle",
        ParamKind::Quantity("rad"),
        "angle",
    )],
    keys: &[],
    returns: "a plain number",
    example: "tan(45 * deg)",
};
static DIMENSION_OF: FunctionDoc = FunctionDoc {
    name: "dimension_of",
    domain: Domain::Units,
    summary: "What a quantity measures (\"inductance\") or its base units when it has no name.",
    params: &[ParamDoc::required("value", Q, "quantity")],
    keys: &[],
    returns: "text",
    example: "dimension_of(12 * V / (2 * A))",
};
static DB_AMPLITUDE: FunctionDoc = FunctionDoc {
    name: "db_from_amplitude_ratio",
    domain: Domain::Units,
    summary: "Decibels of a voltage or current ratio: 20·log10(x).",
    params: &[ParamDoc::required(
        "ratio",
        ParamKind::Number,
        "positive ratio",
    )],
    keys: &[],
    returns: "dB",
    example: "db_from_amplitude_ratio(100)",
};
static DB_POWER: FunctionDoc = FunctionDoc {
    name: "db_from_power_ratio",
    domain: Domain::Units,
    summary: "Decibels of a power ratio: 10·log10(x).",
    params: &[ParamDoc::required(
        "ratio",
        ParamKind::Number,
        "positive ratio",
    )],
    keys: &[],
    returns: "dB",
    example: "db_from_power_ratio(2)",
};
static AMPLITUDE_RATIO: FunctionDoc = FunctionDoc {
    name: "amplitude_ratio",
    domain: Domain::Units,
    summary: "The amplitude ratio of a value in dB: 10^(dB/20).",
    params: &[ParamDoc::required(
        "decibels",
        ParamKind::Any,
        "a ratio in dB",
    )],
    keys: &[],
    returns: "a plain number",
    example: "amplitude_ratio(40 * dB)",
};
static LEVEL_DB: FunctionDoc = FunctionDoc {
    name: "level_db",
    domain: Domain::Units,
    summary: "A voltage as dBµV or a current as dBµA: 20·log10(|x| / 1 µ).",
    params: &[ParamDoc::required(
        "value",
        ParamKind::Quantity("V or A"),
        "voltage or current",
    )],
    keys: &[],
    returns: "dBµV or dBµA",
    example: "level_db(1 * mV)",
};
static LEVEL_VALUE: FunctionDoc = FunctionDoc {
    name: "level_value",
    domain: Domain::Units,
    summary: "The voltage of a dBµV level or the current of a dBµA level.",
    params: &[ParamDoc::required("level", ParamKind::Any, "dBµV or dBµA")],
    keys: &[],
    returns: "V or A",
    example: "level_value(66 * dBuV)",
};
static FIELDS: FunctionDoc = FunctionDoc {
    name: "field_names",
    domain: Domain::Units,
    summary: "Names of the fields of a result record, in order.",
    params: &[ParamDoc::required(
        "record",
        ParamKind::Any,
        "a result of a calculation",
    )],
    keys: &[],
    returns: "array of text",
    example: "field_names(resistor_divider(#{output_voltage: 12 * V, reference_voltage: 2.5 * V}))",
};
static TO_MAP: FunctionDoc = FunctionDoc {
    name: "to_map",
    domain: Domain::Units,
    summary: "A result record as an object map (keys sorted, values with units).",
    params: &[ParamDoc::required(
        "record",
        ParamKind::Any,
        "a result of a calculation",
    )],
    keys: &[],
    returns: "map",
    example: "to_map(resistor_divider(#{output_voltage: 12 * V, reference_voltage: 2.5 * V}))",
};

static ASSERT: FunctionDoc = FunctionDoc {
    name: "assert",
    domain: Domain::Units,
    summary:
        "Stops the script with the message when the condition is false (recipes end in asserts).",
    params: &[
        ParamDoc::required("condition", ParamKind::Flag, "what must hold"),
        ParamDoc::required("message", ParamKind::Text, "what failed"),
    ],
    keys: &[],
    returns: "nothing",
    example: "assert(12 * V > 5 * V, \"ordering\")",
};
static ASSERT_NEAR: FunctionDoc = FunctionDoc {
    name: "assert_near",
    domain: Domain::Units,
    summary: "Stops the script unless two quantities agree within a relative tolerance.",
    params: &[
        ParamDoc::required("actual", ParamKind::Quantity("any unit"), "computed value"),
        ParamDoc::required(
            "expected",
            ParamKind::Quantity("same unit"),
            "expected value",
        ),
        ParamDoc::required(
            "tolerance",
            ParamKind::Number,
            "relative, e.g. 0.01 for 1 %",
        ),
    ],
    keys: &[],
    returns: "nothing",
    example: "assert_near(1 * mH, 1000 * uH, 1e-9)",
};

fn constants() -> &'static HashMap<&'static str, Dynamic> {
    static C: OnceLock<HashMap<&'static str, Dynamic>> = OnceLock::new();
    C.get_or_init(|| {
        let mut m = HashMap::new();
        for (name, text) in SCRIPT_CONSTANTS {
            if let Ok(q) = parse_quantity(&format!("1 {text}"), None) {
                m.insert(*name, quantity_to_dynamic(q));
            }
        }
        m.insert("dB", Dynamic::from(Decibel::ratio(1.0)));
        m.insert(
            "dBuV",
            Dynamic::from(Decibel {
                value: 1.0,
                reference: DbReference::MicroVolt,
            }),
        );
        m.insert(
            "dBuA",
            Dynamic::from(Decibel {
                value: 1.0,
                reference: DbReference::MicroAmpere,
            }),
        );
        m.insert("pi", Dynamic::from_float(std::f64::consts::PI));
        m
    })
}

/// The unit a unit constant stands for (`"mm"` → `"mm"`, `"ohm"` → `"ohm"`), or None.
pub(crate) fn constant_text(name: &str) -> Option<&'static str> {
    SCRIPT_CONSTANTS
        .iter()
        .find(|(n, _)| *n == name)
        .map(|(_, t)| *t)
        .or(match name {
            "dB" => Some("dB"),
            "dBuV" => Some("dBµV"),
            "dBuA" => Some("dBµA"),
            _ => None,
        })
}

/// Names of the unit constants, sorted.
pub(crate) fn constant_names() -> Vec<&'static str> {
    let mut v: Vec<&'static str> = constants().keys().copied().collect();
    v.sort_unstable();
    v
}

fn q(d: &Dynamic, name: &str) -> ScriptResult<Quantity> {
    lift(dynamic_to_quantity(d, name, None))
}

/// Refuses a non-finite quantity, naming the parameter.
fn finite_in(v: Quantity, name: &str) -> ScriptResult<Quantity> {
    if v.value().is_finite() {
        Ok(v)
    } else {
        Err(super::convert::script_error(Error::invalid(format!(
            "`{name}` must be finite, got {v}"
        ))))
    }
}

fn num(x: INT) -> Quantity {
    Quantity::number(x as f64)
}

fn flt(x: FLOAT) -> Quantity {
    Quantity::number(x)
}

fn to_dyn(r: crate::error::Result<Quantity>) -> ScriptResult<Dynamic> {
    lift(r).map(quantity_to_dynamic)
}

fn cmp(a: Quantity, b: Quantity, f: fn(std::cmp::Ordering) -> bool) -> ScriptResult<bool> {
    lift(a.compare_tolerant(&b)).map(f)
}

/// Whole-number arithmetic that would truncate gives the real quotient instead: `3 / 2` is
/// 1.5 in a recipe, as an engineer reads it. Integer division only by `div_floor`.
fn register_number_division(engine: &mut Engine) {
    engine.register_fn("/", |a: INT, b: INT| -> ScriptResult<FLOAT> {
        if b == 0 {
            return Err(super::convert::script_error(Error::invalid(format!(
                "division by zero: {a} / 0"
            ))));
        }
        Ok(a as FLOAT / b as FLOAT)
    });
    // `x /= n` on a whole number turns x into the real quotient, like `x = x / n`
    engine.register_fn("/=", |a: &mut Dynamic, b: INT| -> ScriptResult<()> {
        let x = if let Ok(i) = a.as_int() {
            i as FLOAT
        } else if let Ok(f) = a.as_float() {
            f
        } else {
            return Err(super::convert::script_error(Error::invalid(format!(
                "cannot divide a value of type {} by {b}",
                a.type_name()
            ))));
        };
        if b == 0 {
            return Err(super::convert::script_error(Error::invalid(format!(
                "division by zero: {x} / 0"
            ))));
        }
        *a = Dynamic::from_float(x / b as FLOAT);
        Ok(())
    });
}

fn register_quantity_operators(engine: &mut Engine) {
    engine.register_type_with_name::<Quantity>("Quantity");
    macro_rules! both_orders {
        ($op:literal, $f:expr) => {{
            let f = $f;
            engine.register_fn($op, move |a: Quantity, b: Quantity| f(a, b));
            engine.register_fn($op, move |a: Quantity, b: INT| f(a, num(b)));
            engine.register_fn($op, move |a: INT, b: Quantity| f(num(a), b));
            engine.register_fn($op, move |a: Quantity, b: FLOAT| f(a, flt(b)));
            engine.register_fn($op, move |a: FLOAT, b: Quantity| f(flt(a), b));
        }};
    }
    both_orders!("+", |a: Quantity, b: Quantity| to_dyn(a.add(&b)));
    both_orders!("-", |a: Quantity, b: Quantity| to_dyn(a.sub(&b)));
    both_orders!("*", |a: Quantity, b: Quantity| to_dyn(a.checked_mul(&b)));
    both_orders!("/", |a: Quantity, b: Quantity| to_dyn(a.checked_div(&b)));
    // `==` and `!=` hold within COMPARISON_TOLERANCE (relative); `<=` and `>=` agree with
    // them, `<` and `>` are strict beyond it, so `22 * uF == 22000 * nF` and the ordering
    // never contradict each other. `exactly_equal` compares the bits.
    both_orders!("==", |a: Quantity, b: Quantity| lift(a.approx_eq(&b)));
    both_orders!("!=", |a: Quantity, b: Quantity| lift(a.approx_eq(&b))
        .map(|e| !e));
    both_orders!("<", |a: Quantity, b: Quantity| cmp(a, b, |o| o.is_lt()));
    both_orders!("<=", |a: Quantity, b: Quantity| cmp(a, b, |o| o.is_le()));
    both_orders!(">", |a: Quantity, b: Quantity| cmp(a, b, |o| o.is_gt()));
    both_orders!(">=", |a: Quantity, b: Quantity| cmp(a, b, |o| o.is_ge()));
    engine.register_fn("-", |a: Quantity| -> ScriptResult<Dynamic> {
        lift(a.checked_mul(&Quantity::number(-1.0)))?;
        Ok(quantity_to_dynamic(a.neg()))
    });
    engine.register_fn("+", |a: Quantity| a);
    engine.register_fn("**", |a: Quantity, n: INT| -> ScriptResult<Dynamic> {
        let n = i32::try_from(n)
            .map_err(|_| super::convert::script_error(Error::out_of_range("exponent too large")))?;
        lift(a.checked_mul(&Quantity::number(1.0)))?;
        Ok(quantity_to_dynamic(a.powi(n)))
    });
    engine.register_fn("to_string", |a: &mut Quantity| a.to_string());
    engine.register_fn("to_debug", |a: &mut Quantity| a.to_string());
    engine.register_get("value", |a: &mut Quantity| a.value());
    engine.register_get("unit", |a: &mut Quantity| {
        crate::units::choose_unit(a.value(), a.dimension()).0
    });
    engine.register_get("dimension", |a: &mut Quantity| a.dimension().to_string());
}

fn register_decibel(engine: &mut Engine) {
    engine.register_type_with_name::<Decibel>("Decibel");
    engine.register_fn("+", |a: Decibel, b: Decibel| lift(a.add(&b)));
    engine.register_fn("-", |a: Decibel, b: Decibel| lift(a.sub(&b)));
    engine.register_fn("-", |a: Decibel| Decibel {
        value: -a.value,
        reference: a.reference,
    });
    engine.register_fn("*", |a: INT, b: Decibel| Decibel {
        value: a as f64 * b.value,
        reference: b.reference,
    });
    engine.register_fn("*", |a: FLOAT, b: Decibel| Decibel {
        value: a * b.value,
        reference: b.reference,
    });
    engine.register_fn("*", |b: Decibel, a: INT| Decibel {
        value: a as f64 * b.value,
        reference: b.reference,
    });
    engine.register_fn("*", |b: Decibel, a: FLOAT| Decibel {
        value: a * b.value,
        reference: b.reference,
    });
    engine.register_fn("<", |a: Decibel, b: Decibel| {
        lift(a.compare(&b)).map(|o| o.is_lt())
    });
    engine.register_fn("<=", |a: Decibel, b: Decibel| {
        lift(a.compare(&b)).map(|o| o.is_le())
    });
    engine.register_fn(">", |a: Decibel, b: Decibel| {
        lift(a.compare(&b)).map(|o| o.is_gt())
    });
    engine.register_fn(">=", |a: Decibel, b: Decibel| {
        lift(a.compare(&b)).map(|o| o.is_ge())
    });
    engine.register_fn("==", |a: Decibel, b: Decibel| {
        lift(a.compare(&b)).map(|o| o.is_eq())
    });
    engine.register_fn("!=", |a: Decibel, b: Decibel| {
        lift(a.compare(&b)).map(|o| o.is_ne())
    });
    engine.register_fn("to_string", |a: &mut Decibel| a.to_string());
    engine.register_fn("to_debug", |a: &mut Decibel| a.to_string());
    engine.register_get("value", |a: &mut Decibel| a.value);
}

fn register_record(engine: &mut Engine) {
    engine.register_type_with_name::<ScriptRecord>("Record");
    engine.register_indexer_get(
        |r: &mut ScriptRecord, name: ImmutableString| -> ScriptResult<Dynamic> {
            match r.get(name.as_str()) {
                Some(v) => Ok(super::convert::value_to_dynamic(v)),
                None => Err(super::convert::script_error(Error::unknown(format!(
                    "{} has no field `{name}`{}",
                    r.kind(),
                    super::suggest::did_you_mean(&name, &r.names())
                )))),
            }
        },
    );
    engine.register_fn("to_string", |r: &mut ScriptRecord| r.to_text());
    engine.register_fn("to_debug", |r: &mut ScriptRecord| r.to_text());
}

pub(crate) fn register(api: &mut Api, state: &std::sync::Arc<super::host::HostState>) {
    let state = state.clone();
    register_number_division(api.engine);
    register_quantity_operators(api.engine);
    register_decibel(api.engine);
    register_record(api.engine);
    #[allow(deprecated)] // on_var is marked volatile, not deprecated
    api.engine.on_var(move |name, _, ctx| {
        if ctx.scope().contains(name) {
            return Ok(None);
        }
        if let Some(v) = constants().get(name) {
            return Ok(Some(v.clone()));
        }
        // one scope: the recipe's top-level constants (and the session's) are visible in
        // every function, closure and family variant
        if let Some(c) = &ctx.global_runtime_state().constants {
            if let Some(v) = c.read().ok().and_then(|m| m.get(name).cloned()) {
                return Ok(Some(v));
            }
        }
        Ok(state.session_constant(name))
    });

    def!(
        api,
        &QUANTITY,
        |s: ImmutableString| -> ScriptResult<Dynamic> {
            let q = lift(parse_quantity(s.as_str(), None))?;
            Ok(if q.is_absolute_temperature() {
                Dynamic::from(q)
            } else {
                quantity_to_dynamic(q)
            })
        }
    );
    def!(api, &TO, |v: Dynamic,
                    unit: ImmutableString|
     -> ScriptResult<String> {
        lift(q(&v, "value")?.to_unit_string(unit.as_str()))
    });
    def!(api, &VALUE_IN, |v: Dynamic,
                          unit: ImmutableString|
     -> ScriptResult<FLOAT> {
        lift(q(&v, "value")?.value_in(unit.as_str()))
    });
    def!(api, &SQRT, |v: Quantity| to_dyn(
        finite_in(v, "value")?.sqrt()
    ));
    def!(api, &ABS, |v: Quantity| -> ScriptResult<Dynamic> {
        Ok(quantity_to_dynamic(finite_in(v, "value")?.abs()))
    });
    def!(api, &MIN, |a: Dynamic, b: Dynamic| to_dyn(
        finite_in(q(&a, "a")?, "a")?.min(&finite_in(q(&b, "b")?, "b")?)
    )
    .map(|d| keep_temperature(d, &a, &b)));
    def!(api, &MAX, |a: Dynamic, b: Dynamic| to_dyn(
        finite_in(q(&a, "a")?, "a")?.max(&finite_in(q(&b, "b")?, "b")?)
    )
    .map(|d| keep_temperature(d, &a, &b)));
    def!(api, &CELSIUS, |t: Dynamic| -> ScriptResult<Quantity> {
        let x = lift(super::convert::dynamic_to_number(&t, "degrees"))?;
        lift(Quantity::celsius_checked(x))
    });
    def!(api, &EXACTLY_EQUAL, |a: Dynamic,
                               b: Dynamic|
     -> ScriptResult<bool> {
        let (a, b) = (q(&a, "a")?, q(&b, "b")?);
        lift(a.compare(&b))?;
        Ok(a.exactly_equal(&b))
    });
    def!(api, &DIV_FLOOR, |a: INT, b: INT| -> ScriptResult<INT> {
        if b == 0 {
            return Err(super::convert::script_error(Error::invalid(format!(
                "`b` must not be zero in div_floor({a}, 0)"
            ))));
        }
        a.checked_div(b)
            .map(|x| {
                if a % b != 0 && ((a < 0) != (b < 0)) {
                    x - 1
                } else {
                    x
                }
            })
            .ok_or_else(|| {
                super::convert::script_error(Error::out_of_range(format!(
                    "div_floor({a}, {b}) overflows"
                )))
            })
    });
    def!(
        api,
        &ANGULAR_FREQUENCY,
        |f: Dynamic| -> ScriptResult<Dynamic> {
            let f = lift(super::convert::dynamic_to_quantity(
                &f,
                "frequency",
                Some(crate::units::Dimension::FREQUENCY),
            ))?;
            if f.dimension() != crate::units::Dimension::FREQUENCY {
                return Err(super::convert::script_error(Error::dimension(format!(
                    "`frequency` must be a frequency (Hz), got {}",
                    f.describe()
                ))));
            }
            let f = finite_in(f, "frequency")?;
            Ok(Dynamic::from(Quantity::new(
                2.0 * std::f64::consts::PI * f.value(),
                crate::units::Dimension::ANGULAR_FREQUENCY,
            )))
        }
    );
    def!(
        api,
        &FREQUENCY_FROM_ANGULAR,
        |w: Dynamic| -> ScriptResult<Dynamic> {
            let w = lift(super::convert::dynamic_to_quantity(
                &w,
                "angular_frequency",
                Some(crate::units::Dimension::ANGULAR_FREQUENCY),
            ))?;
            if w.dimension() != crate::units::Dimension::ANGULAR_FREQUENCY {
                return Err(super::convert::script_error(Error::dimension(format!(
                    "`angular_frequency` must be an angular frequency (rad/s), got {}",
                    w.describe()
                ))));
            }
            let w = finite_in(w, "angular_frequency")?;
            Ok(Dynamic::from(Quantity::new(
                w.value() / (2.0 * std::f64::consts::PI),
                crate::units::Dimension::FREQUENCY,
            )))
        }
    );
    // trigonometry of angles (plain numbers are radians, as in the standard library)
    for (doc, f) in [
        (&SIN, f64::sin as fn(f64) -> f64),
        (&COS, f64::cos),
        (&TAN, f64::tan),
    ] {
        let name = doc.name;
        api.add_doc(doc);
        api.engine
            .register_fn(name, move |a: Quantity| -> ScriptResult<FLOAT> {
                if a.dimension() != crate::units::Dimension::ANGLE {
                    return Err(super::convert::script_error(Error::dimension(format!(
                        "{name} takes an angle (rad or deg) or a plain number, got {}",
                        a.describe()
                    ))));
                }
                Ok(f(finite_in(a, "angle")?.value()))
            });
    }
    def!(api, &DIMENSION_OF, |v: Dynamic| -> ScriptResult<String> {
        Ok(q(&v, "value")?.dimension().to_string())
    });
    def!(api, &DB_AMPLITUDE, |x: Dynamic| -> ScriptResult<Decibel> {
        lift(super::convert::dynamic_to_number(&x, "ratio").and_then(Decibel::from_amplitude_ratio))
    });
    def!(api, &DB_POWER, |x: Dynamic| -> ScriptResult<Decibel> {
        lift(super::convert::dynamic_to_number(&x, "ratio").and_then(Decibel::from_power_ratio))
    });
    def!(api, &AMPLITUDE_RATIO, |d: Decibel| -> ScriptResult<FLOAT> {
        if d.reference != DbReference::Ratio {
            return Err(super::convert::script_error(Error::dimension(format!(
                "{d} is a level, not a ratio; use level_value"
            ))));
        }
        let r = d.amplitude_ratio();
        if !r.is_finite() {
            return Err(super::convert::script_error(Error::out_of_range(format!(
                "`decibels` must be finite and below about 6000 dB, got {d}"
            ))));
        }
        Ok(r)
    });
    def!(api, &LEVEL_DB, |v: Dynamic| -> ScriptResult<Decibel> {
        lift(Decibel::level_of(&q(&v, "value")?))
    });
    def!(api, &LEVEL_VALUE, |d: Decibel| -> ScriptResult<Quantity> {
        let v = lift(d.to_quantity())?;
        finite_in(v, "level").map_err(|_| {
            super::convert::script_error(Error::out_of_range(format!(
                "`level` must be finite and below about 6000 dB, got {d}"
            )))
        })
    });
    def!(api, &FIELDS, |r: ScriptRecord| -> rhai::Array {
        r.names()
            .into_iter()
            .map(|n| Dynamic::from(n.to_string()))
            .collect()
    });
    def!(api, &TO_MAP, |r: ScriptRecord| -> rhai::Map {
        r.fields()
            .iter()
            .map(|f| {
                (
                    f.name.as_str().into(),
                    super::convert::value_to_dynamic(&f.value),
                )
            })
            .collect()
    });
    def!(api, &ASSERT, |ok: bool,
                        message: ImmutableString|
     -> ScriptResult<()> {
        if ok {
            Ok(())
        } else {
            Err(super::convert::script_error(Error::invalid(format!(
                "assertion failed: {message}"
            ))))
        }
    });
    def!(api, &ASSERT_NEAR, |a: Dynamic,
                             b: Dynamic,
                             tol: Dynamic|
     -> ScriptResult<()> {
        let a = q(&a, "actual")?;
        let b = q(&b, "expected")?;
        let tol = lift(super::convert::dynamic_to_number(&tol, "tolerance"))?;
        let a = finite_in(a, "actual")?;
        let b = finite_in(b, "expected")?;
        if !(tol.is_finite() && tol >= 0.0) {
            return Err(super::convert::script_error(Error::invalid(format!(
                "`tolerance` must be a finite fraction of zero or more, got {}",
                crate::units::format_number(tol)
            ))));
        }
        lift(a.compare(&b))?;
        let scale = a.value().abs().max(b.value().abs());
        if (a.value() - b.value()).abs() <= tol * scale {
            Ok(())
        } else {
            Err(super::convert::script_error(Error::invalid(format!(
                "assertion failed: {a} is not within {} % of {b}",
                crate::units::format_number(tol * 100.0)
            ))))
        }
    });
    // plain-number overloads so that sqrt/abs/min/max keep working on FLOAT and INT
    overload!(api, "sqrt", |x: FLOAT| x.sqrt());
    overload!(api, "sqrt", |x: INT| (x as FLOAT).sqrt());
}

/// min/max of absolute temperatures stay absolute temperatures.
fn keep_temperature(d: Dynamic, a: &Dynamic, b: &Dynamic) -> Dynamic {
    let abs = |x: &Dynamic| {
        x.read_lock::<Quantity>()
            .is_some_and(|q| q.is_absolute_temperature())
    };
    if abs(a) && abs(b) {
        if let Some(q) = d.read_lock::<Quantity>() {
            return Dynamic::from(q.with_absolute_temperature(true));
        }
    }
    d
}

/// Formats any script value for display at the prompt; text shows without quotes at the
/// top level and quoted inside arrays and maps.
pub(crate) fn display_value(v: &Dynamic) -> String {
    if let Some(s) = v.read_lock::<ImmutableString>() {
        return s.to_string();
    }
    display_nested(v)
}

fn display_nested(v: &Dynamic) -> String {
    if let Some(q) = v.read_lock::<Quantity>() {
        return q.to_string();
    }
    if let Some(d) = v.read_lock::<Decibel>() {
        return d.to_string();
    }
    if let Some(r) = v.read_lock::<ScriptRecord>() {
        return r.to_text().trim_end().to_string();
    }
    if let Some(t) = v.read_lock::<crate::report::Table>() {
        return t.to_text().trim_end().to_string();
    }
    if let Some(c) = v.read_lock::<crate::rules::CheckResult>() {
        return super::api_rules::check_line(&c);
    }
    if let Some(b) = v.read_lock::<crate::rules::RuleBook>() {
        return super::api_rules::rule_book_text(&b);
    }
    if let Some(d) = v.read_lock::<super::api_flyback::ScriptFlyback>() {
        return d.summary().to_text().trim_end().to_string();
    }
    if let Ok(x) = v.as_float() {
        return crate::units::format_number(x);
    }
    if let Some(m) = v.read_lock::<rhai::Map>() {
        let w = m.keys().map(|k| k.len()).max().unwrap_or(0);
        let mut s = String::from("#{\n");
        for (k, x) in m.iter() {
            s.push_str(&format!("  {:w$}: {},\n", k.as_str(), display_nested(x)));
        }
        s.push('}');
        return s;
    }
    if let Some(a) = v.read_lock::<rhai::Array>() {
        let items: Vec<String> = a.iter().map(display_nested).collect();
        return format!("[{}]", items.join(", "));
    }
    if let Some(s) = v.read_lock::<ImmutableString>() {
        return format!("{:?}", s.as_str());
    }
    v.to_string()
}
