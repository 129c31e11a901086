//! The boundary between script values and typed Rust values.

use crate::error::Error;
use crate::report::{Field, Value};
use crate::units::{parse_quantity, Decibel, Dimension, Quantity, TypedQuantity};
use rhai::{Dynamic, EvalAltResult, Map, Position, INT};

/// A script error built from a core error (cold path, one place).
#[cold]
pub fn script_error(e: Error) -> Box<EvalAltResult> {
    Box::new(EvalAltResult::ErrorRuntime(
        Dynamic::from(e.message().to_string()),
        Position::NONE,
    ))
}

/// Result type of registered functions.
pub type ScriptResult<T> = Result<T, Box<EvalAltResult>>;

/// Converts a core result into a script result.
pub fn lift<T>(r: crate::error::Result<T>) -> ScriptResult<T> {
    r.map_err(script_error)
}

/// A quantity or plain number as a script value: dimensionless results become FLOAT so that
/// they mix with ordinary numbers.
pub fn quantity_to_dynamic(q: Quantity) -> Dynamic {
    if q.is_dimensionless() {
        Dynamic::from_float(q.value())
    } else {
        Dynamic::from(q)
    }
}

/// Reads a script value as a runtime quantity: a Quantity, an INT or FLOAT (a plain number),
/// or text such as "4.7 uF". `name` is used in the error.
pub fn dynamic_to_quantity(
    d: &Dynamic,
    name: &str,
    expected: Option<Dimension>,
) -> crate::error::Result<Quantity> {
    if let Some(q) = d.read_lock::<Quantity>() {
        return Ok(*q);
    }
    if let Ok(i) = d.as_int() {
        return Ok(Quantity::number(i as f64));
    }
    if let Ok(x) = d.as_float() {
        return Ok(Quantity::number(x));
    }
    if let Some(s) = d.read_lock::<rhai::ImmutableString>() {
        return parse_quantity(s.as_str(), expected).map_err(|e| e.context(&format!("`{name}`")));
    }
    Err(Error::dimension(format!(
        "`{name}` must be a quantity or a number, got a value of type {}",
        d.type_name()
    )))
}

/// Reads a script value as a typed `uom` quantity, checking the dimension.
pub fn dynamic_to_typed<Q: TypedQuantity>(d: &Dynamic, name: &str) -> crate::error::Result<Q> {
    let q = dynamic_to_quantity(d, name, Some(Q::dimension()))?;
    if q.is_dimensionless() && !Q::dimension().is_dimensionless() {
        return Err(Error::dimension(format!(
            "`{name}` must be a {} ({}), got the plain number {}; write a unit, e.g. `{} * {}`",
            Q::dimension(),
            crate::units::unit_symbol(Q::dimension()),
            q,
            q,
            crate::units::unit_symbol(Q::dimension())
        )));
    }
    q.to_typed(name)
}

/// Reads a plain number (INT, FLOAT, or a dimensionless quantity).
pub fn dynamic_to_number(d: &Dynamic, name: &str) -> crate::error::Result<f64> {
    let q = dynamic_to_quantity(d, name, Some(Dimension::NONE))?;
    if !q.is_dimensionless() {
        return Err(Error::dimension(format!(
            "`{name}` must be a plain number, got {}",
            q.describe()
        )));
    }
    Ok(q.value())
}

/// Reads a whole number (INT, or a FLOAT with no fractional part).
pub fn dynamic_to_integer(d: &Dynamic, name: &str) -> crate::error::Result<INT> {
    if let Ok(i) = d.as_int() {
        return Ok(i);
    }
    let x = dynamic_to_number(d, name)?;
    if x.fract() == 0.0 && x.abs() < 9e15 {
        Ok(x as INT)
    } else {
        Err(Error::invalid(format!(
            "`{name}` must be a whole number, got {x}"
        )))
    }
}

/// A result value as a script value.
pub fn value_to_dynamic(v: &Value) -> Dynamic {
    match v {
        Value::Quantity(q) => quantity_to_dynamic(*q),
        Value::Number(x) => Dynamic::from_float(*x),
        Value::Integer(i) => Dynamic::from_int(*i),
        Value::Text(s) => Dynamic::from(s.clone()),
        Value::Flag(b) => Dynamic::from_bool(*b),
        Value::Decibel(d) => Dynamic::from(*d),
    }
}

/// A script value as a result value, if it is one of the kinds a table holds.
pub fn dynamic_to_value(d: &Dynamic) -> Option<Value> {
    if let Some(q) = d.read_lock::<Quantity>() {
        return Some(Value::Quantity(*q));
    }
    if let Some(x) = d.read_lock::<Decibel>() {
        return Some(Value::Decibel(*x));
    }
    if let Ok(i) = d.as_int() {
        return Some(Value::Integer(i));
    }
    if let Ok(x) = d.as_float() {
        return Some(Value::Number(x));
    }
    if let Ok(b) = d.as_bool() {
        return Some(Value::Flag(b));
    }
    if let Some(s) = d.read_lock::<rhai::ImmutableString>() {
        return Some(Value::Text(s.to_string()));
    }
    if let Some(s) = d.read_lock::<crate::rules::Status>() {
        return Some(Value::Text(s.to_string()));
    }
    None
}

/// Flattens a script value into named fields for a table row: maps by key (nested maps as
/// `outer.inner`), records by field, other values under `name`; `()` is an empty cell.
/// A value a table cannot hold (an array, a range, a function, a design object) is not
/// dropped: it is reported in the returned list, one message per field, and the caller
/// turns the list into an error (`table`) or an error row (`family`).
/// Map keys come in the order the recipe's literal wrote them (see
/// [`super::key_order::KeyOrders`]), sorted when no literal matches.
#[must_use]
pub fn flatten(
    name: &str,
    d: &Dynamic,
    out: &mut Vec<Field>,
    orders: &super::key_order::KeyOrders,
) -> Vec<String> {
    let mut problems = Vec::new();
    flatten_into(name, d, out, &mut problems, orders);
    problems
}

fn flatten_into(
    name: &str,
    d: &Dynamic,
    out: &mut Vec<Field>,
    problems: &mut Vec<String>,
    orders: &super::key_order::KeyOrders,
) {
    let join = |k: &str| {
        if name.is_empty() {
            k.to_string()
        } else {
            format!("{name}.{k}")
        }
    };
    if let Some(m) = d.read_lock::<Map>() {
        for k in orders.keys_of(&m) {
            if let Some(v) = m.get(k) {
                flatten_into(&join(k), v, out, problems, orders);
            }
        }
        return;
    }
    if let Some(fb) = d.read_lock::<super::api_flyback::ScriptFlyback>() {
        // a design flattens as its summary (the fields `flyback_summary` gives)
        for f in fb.summary().fields() {
            out.push(Field {
                name: join(&f.name),
                value: f.value.clone(),
            });
        }
        return;
    }
    if let Some(r) = d.read_lock::<super::record::ScriptRecord>() {
        for f in r.fields() {
            out.push(Field {
                name: join(&f.name),
                value: f.value.clone(),
            });
        }
        return;
    }
    let field_name = if name.is_empty() { "value" } else { name };
    if let Some(v) = dynamic_to_value(d) {
        out.push(Field {
            name: field_name.to_string(),
            value: v,
        });
        return;
    }
    if d.is_unit() {
        return;
    }
    let what = if d.is_array() {
        "an array; write its items as fields of their own or as text (`a.to_string()`)".to_string()
    } else if d.is_fnptr() {
        "a function".to_string()
    } else {
        format!(
            "a value of type {}; turn it into a record first (e.g. `flyback_summary(d)`) or into text",
            d.type_name()
        )
    };
    problems.push(format!(
        "field `{field_name}` is {what}: a table cannot hold it"
    ));
}
