//! A result object for scripts: named values in the order a reviewer reads them.

use crate::report::{Field, Record, Value};
use std::sync::Arc;

/// An ordered, read-only set of named values returned by calculations. Fields read as
/// properties in scripts (`d.primary_inductance`) and print one per line with units.
#[derive(Clone, Debug, PartialEq)]
pub struct ScriptRecord {
    kind: &'static str,
    fields: Arc<Vec<Field>>,
}

impl ScriptRecord {
    /// A record from a calculation result; `kind` names it when printed.
    pub fn new(kind: &'static str, fields: Vec<Field>) -> Self {
        Self {
            kind,
            fields: Arc::new(fields),
        }
    }
    /// A record from anything that lists its fields.
    pub fn from_record(kind: &'static str, r: &impl Record) -> Self {
        Self::new(kind, r.fields())
    }
    /// What the record describes (`resistor_divider`).
    pub fn kind(&self) -> &'static str {
        self.kind
    }
    /// The fields, in order.
    pub fn fields(&self) -> &[Field] {
        &self.fields
    }
    /// The value of a field.
    pub fn get(&self, name: &str) -> Option<&Value> {
        self.fields
            .iter()
            .find(|f| f.name == name)
            .map(|f| &f.value)
    }
    /// Field names, in order.
    pub fn names(&self) -> Vec<&str> {
        self.fields.iter().map(|f| f.name.as_str()).collect()
    }
    /// One line per field: `name = value`, names aligned.
    pub fn to_text(&self) -> String {
        let w = self.fields.iter().map(|f| f.name.len()).max().unwrap_or(0);
        let mut s = format!("{}:\n", self.kind);
        for f in self.fields.iter() {
            s.push_str(&format!("  {:w$} = {}\n", f.name, f.value));
        }
        s
    }
}

/// Serialises as [`crate::report::serialize_record`] does: the fields in order, quantities
/// with their unit, so a host embedding the engine gets JSON from a script's result.
impl serde::Serialize for ScriptRecord {
    fn serialize<S: serde::Serializer>(&self, s: S) -> Result<S::Ok, S::Error> {
        use serde::ser::SerializeMap;
        let mut m = s.serialize_map(Some(self.fields.len()))?;
        for f in self.fields.iter() {
            m.serialize_entry(&f.name, &f.value)?;
        }
        m.end()
    }
}
