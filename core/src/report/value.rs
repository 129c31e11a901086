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

/// Written by serde as: a quantity `{"value": number in coherent SI, "unit": "H",
/// "dimension": "inductance"}` (an absolute temperature in K, dimension `absolute
/// temperature`), a decibel value `{"value": 6.5, "unit": "dB"}`, a plain number as a
/// number, a whole number as an integer, text as a string, a flag as a boolean.
impl serde::Serialize for Value {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeStruct;
        match self {
            Value::Quantity(q) if q.is_dimensionless() => s.serialize_f64(q.value()),
            Value::Quantity(q) => {
                let mut st = s.serialize_struct("Quantity", 3)?;
                st.serialize_field("value", &q.value())?;
                st.serialize_field("unit", &crate::units::si_unit_symbol(q.dimension()))?;
                let dimension = if q.is_absolute_temperature() {
                    "absolute temperature".to_string()
                } else {
                    q.dimension().to_string()
                };
                st.serialize_field("dimension", &dimension)?;
                st.end()
            }
            Value::Number(x) => s.serialize_f64(*x),
            Value::Integer(i) => s.serialize_i64(*i),
            Value::Text(t) => s.serialize_str(t),
            Value::Flag(b) => s.serialize_bool(*b),
            Value::Decibel(d) => {
                let mut st = s.serialize_struct("Decibel", 2)?;
                st.serialize_field("value", &d.value)?;
                st.serialize_field("unit", d.reference.symbol())?;
                st.end()
            }
        }
    }
}

impl serde::Serialize for Field {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeMap;
        let mut m = s.serialize_map(Some(1))?;
        m.serialize_entry(&self.name, &self.value)?;
        m.end()
    }
}

/// Serialises a record as a map of its fields in review order (values as [`Value`] writes
/// them). Every design record implements `serde::Serialize` through this, so an embedder
/// gets JSON with units from `serde_json::to_string(&design)`.
pub fn serialize_record<R: Record + ?Sized, S: serde::Serializer>(
    record: &R,
    s: S,
) -> Result<S::Ok, S::Error> {
    use serde::ser::SerializeMap;
    let fields = record.fields();
    let mut m = s.serialize_map(Some(fields.len()))?;
    for f in &fields {
        m.serialize_entry(&f.name, &f.value)?;
    }
    m.end()
}

/// Implements `serde::Serialize` for record types through [`serialize_record`].
#[macro_export]
#[doc(hidden)]
macro_rules! serialize_as_record {
    ($($t:ty),* $(,)?) => {
        $(impl serde::Serialize for $t {
            fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
                $crate::report::serialize_record(self, s)
            }
        })*
    };
}
