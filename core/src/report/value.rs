//! A named value of a result: quantity, number, text, flag or decibel value.

use crate::units::{format_number, Decibel, Quantity};
use std::fmt;

/// One value of a result row.
#[derive(Clone, Debug, PartialEq)]
pub enum Value {
    /// A dimensioned quantity (or a dimensionless one).
    Quantity(Quantity),
    /// A plain number.
    Number(f64),
    /// A whole number (a count, a gauge).
    Integer(i64),
    /// Text (a mode name, a part description).
    Text(String),
    /// Yes / no.
    Flag(bool),
    /// A decibel value.
    Decibel(Decibel),
}

impl fmt::Display for Value {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Value::Quantity(q) => write!(f, "{q}"),
            Value::Number(x) => f.write_str(&format_number(*x)),
            Value::Integer(i) => write!(f, "{i}"),
            Value::Text(s) => f.write_str(s),
            Value::Flag(b) => write!(f, "{b}"),
            Value::Decibel(d) => write!(f, "{d}"),
        }
    }
}

impl From<Quantity> for Value {
    fn from(q: Quantity) -> Self {
        if q.is_dimensionless() {
            Value::Number(q.value())
        } else {
            Value::Quantity(q)
        }
    }
}

impl From<f64> for Value {
    fn from(x: f64) -> Self {
        Value::Number(x)
    }
}

impl From<&str> for Value {
    fn from(s: &str) -> Self {
        Value::Text(s.to_string())
    }
}

impl From<String> for Value {
    fn from(s: String) -> Self {
        Value::Text(s)
    }
}

impl From<bool> for Value {
    fn from(b: bool) -> Self {
        Value::Flag(b)
    }
}

impl From<i64> for Value {
    fn from(i: i64) -> Self {
        Value::Integer(i)
    }
}

impl From<Decibel> for Value {
    fn from(d: Decibel) -> Self {
        Value::Decibel(d)
    }
}

/// A named value.
#[derive(Clone, Debug, PartialEq)]
pub struct Field {
    /// Field name, snake_case; nested fields are joined with a dot (`corner.duty_cycle`).
    pub name: String,
    /// The value.
    pub value: Value,
}

impl Field {
    /// A field from a name and anything that converts into a [`Value`].
    pub fn new(name: impl Into<String>, value: impl Into<Value>) -> Self {
        Self {
            name: name.into(),
            value: value.into(),
        }
    }
    /// A field holding a `uom` quantity.
    pub fn quantity<Q: crate::units::TypedQuantity>(name: impl Into<String>, q: Q) -> Self {
        Self::new(name, Value::Quantity(Quantity::from_typed(q)))
    }
}

/// A result that can list its values by name, for scripts, tables, CSV and JSON.
pub trait Record {
    /// The named values, in the order a reviewer reads them.
    fn fields(&self) -> Vec<Field>;
}
