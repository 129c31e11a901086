//! Tables of results: one row per variant, columns with a unit each, error rows kept.

use super::value::{Field, Value};
use crate::units::{choose_unit, format_number, CELSIUS_OFFSET};
use serde_json::json;

/// A column: its name and, for quantity columns, the unit its numbers are written in.
#[derive(Clone, Debug, PartialEq)]
pub struct Column {
    /// Column name.
    pub name: String,
    /// Unit symbol for quantity columns (`µH`, `°C`), empty otherwise.
    pub unit: String,
    scale: f64,
    celsius: bool,
}

/// A table of named values: a row per variant, with an error message where a variant failed.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Table {
    names: Vec<String>,
    rows: Vec<Vec<Option<Value>>>,
    errors: Vec<Option<String>>,
}

impl Table {
    /// An empty table.
    pub fn new() -> Self {
        Self::default()
    }

    fn column_index(&mut self, name: &str) -> usize {
        if let Some(i) = self.names.iter().position(|n| n == name) {
            return i;
        }
        self.names.push(name.to_string());
        for r in &mut self.rows {
            r.push(None);
        }
        self.names.len() - 1
    }

    /// Appends a row of fields; new field names add columns.
    pub fn push_row(&mut self, fields: Vec<Field>) {
        self.push(fields, None);
    }

    /// Appends a row for a variant that failed: its inputs and the error message.
    pub fn push_error_row(&mut self, inputs: Vec<Field>, message: impl Into<String>) {
        self.push(inputs, Some(message.into()));
    }

    fn push(&mut self, fields: Vec<Field>, error: Option<String>) {
        let mut row = vec![None; self.names.len()];
        for f in fields {
            let i = self.column_index(&f.name);
            if row.len() < self.names.len() {
                row.resize(self.names.len(), None);
            }
            row[i] = Some(f.value);
        }
        self.rows.push(row);
        self.errors.push(error);
    }

    /// A table with only the named columns, in the order given (error messages are kept).
    /// Unknown names are an error that suggests the nearest column.
    pub fn select(&self, names: &[&str]) -> crate::Result<Table> {
        let mut index = Vec::with_capacity(names.len());
        for n in names {
            let i = self.names.iter().position(|c| c == n).ok_or_else(|| {
                let have: Vec<&str> = self.names.iter().map(String::as_str).collect();
                crate::Error::unknown(format!(
                    "the table has no column `{n}`{}",
                    crate::script::suggest::did_you_mean(n, &have)
                ))
            })?;
            index.push(i);
        }
        Ok(Table {
            names: names.iter().map(|n| n.to_string()).collect(),
            rows: self
                .rows
                .iter()
                .map(|r| index.iter().map(|i| r[*i].clone()).collect())
                .collect(),
            errors: self.errors.clone(),
        })
    }

    /// Number of rows.
    pub fn len(&self) -> usize {
        self.rows.len()
    }
    /// True when there are no rows.
    pub fn is_empty(&self) -> bool {
        self.rows.is_empty()
    }
    /// Column names, in order of first appearance.
    pub fn column_names(&self) -> &[String] {
        &self.names
    }
    /// The value at a row and column name, if present.
    pub fn get(&self, row: usize, column: &str) -> Option<&Value> {
        let c = self.names.iter().position(|n| n == column)?;
        self.rows.get(row)?.get(c)?.as_ref()
    }
    /// The error message of a row, if that variant failed.
    pub fn error(&self, row: usize) -> Option<&str> {
        self.errors.get(row)?.as_deref()
    }
    /// Number of rows whose variant failed.
    pub fn error_count(&self) -> usize {
        self.errors.iter().filter(|e| e.is_some()).count()
    }
    /// Whether any row has an error (adds the `error` column to outputs).
    fn has_errors(&self) -> bool {
        self.error_count() > 0
    }

    /// The columns with the unit each is written in: the unit chosen for the largest
    /// magnitude in the column, so that every row of a column shares one unit.
    pub fn columns(&self) -> Vec<Column> {
        (0..self.names.len())
            .map(|c| {
                let mut best: Option<(f64, crate::units::Dimension, bool)> = None;
                for r in &self.rows {
                    if let Some(Value::Quantity(q)) = &r[c] {
                        let a = q.value().abs();
                        if a.is_finite() && best.is_none_or(|b| a > b.0) {
                            best = Some((a, q.dimension(), q.is_absolute_temperature()));
                        }
                    }
                }
                match best {
                    Some((_, _, true)) => Column {
                        name: self.names[c].clone(),
                        unit: "°C".into(),
                        scale: 1.0,
                        celsius: true,
                    },
                    Some((a, d, false)) => {
                        let (unit, scale) = choose_unit(a, d);
                        Column {
                            name: self.names[c].clone(),
                            unit,
                            scale,
                            celsius: false,
                        }
                    }
                    None => Column {
                        name: self.names[c].clone(),
                        unit: String::new(),
                        scale: 1.0,
                        celsius: false,
                    },
                }
            })
            .collect()
    }

    fn cell_number(col: &Column, v: &Value) -> Option<f64> {
        match v {
            Value::Quantity(q) if col.celsius => Some(q.value() - CELSIUS_OFFSET),
            Value::Quantity(q) => Some(q.value() / col.scale),
            Value::Number(x) => Some(*x),
            Value::Integer(i) => Some(*i as f64),
            Value::Decibel(d) => Some(d.value),
            _ => None,
        }
    }

    fn cell_text(col: &Column, v: &Option<Value>) -> String {
        match v {
            None => String::new(),
            Some(Value::Quantity(q))
                if !col.unit.is_empty() && q.is_absolute_temperature() == col.celsius =>
            {
                Self::cell_number(col, &Value::Quantity(*q))
                    .map(format_number)
                    .unwrap_or_default()
            }
            Some(v) => v.to_string(),
        }
    }

    fn header(col: &Column) -> String {
        if col.unit.is_empty() {
            col.name.clone()
        } else {
            format!("{} [{}]", col.name, col.unit)
        }
    }

    /// Aligned text: a header with units, numbers right-aligned, an `error` column when
    /// any variant failed.
    pub fn to_text(&self) -> String {
        let cols = self.columns();
        let mut headers: Vec<String> = cols.iter().map(Self::header).collect();
        let mut cells: Vec<Vec<String>> = self
            .rows
            .iter()
            .map(|r| {
                cols.iter()
                    .zip(r)
                    .map(|(c, v)| Self::cell_text(c, v))
                    .collect()
            })
            .collect();
        if self.has_errors() {
            headers.push("error".into());
            for (row, e) in cells.iter_mut().zip(&self.errors) {
                row.push(e.clone().unwrap_or_default());
            }
        }
        let width: Vec<usize> = (0..headers.len())
            .map(|i| {
                cells
                    .iter()
                    .map(|r| r[i].chars().count())
                    .chain([headers[i].chars().count()])
                    .max()
                    .unwrap_or(0)
            })
            .collect();
        let numeric: Vec<bool> = (0..headers.len())
            .map(|i| {
                cells
                    .iter()
                    .all(|r| r[i].is_empty() || r[i].parse::<f64>().is_ok())
            })
            .collect();
        let line = |items: &[String], out: &mut String| {
            let mut parts = Vec::new();
            for (i, s) in items.iter().enumerate() {
                let pad = width[i].saturating_sub(s.chars().count());
                let last = i + 1 == items.len();
                if numeric[i] {
                    parts.push(format!("{}{}", " ".repeat(pad), s));
                } else if last {
                    parts.push(s.clone());
                } else {
                    parts.push(format!("{}{}", s, " ".repeat(pad)));
                }
            }
            out.push_str(parts.join("  ").trim_end());
            out.push('\n');
        };
        let mut out = String::new();
        line(&headers, &mut out);
        let rule: Vec<String> = width.iter().map(|w| "-".repeat(*w)).collect();
        line(&rule, &mut out);
        for r in &cells {
            line(r, &mut out);
        }
        out
    }

    /// CSV with a header row of `name [unit]`, numbers in that unit, and an `error` column
    /// when any variant failed (RFC 4180 quoting).
    pub fn to_csv(&self) -> String {
        let cols = self.columns();
        let mut out = String::new();
        let mut header: Vec<String> = cols.iter().map(|c| csv_field(&Self::header(c))).collect();
        if self.has_errors() {
            header.push("error".into());
        }
        out.push_str(&header.join(","));
        out.push('\n');
        for (r, e) in self.rows.iter().zip(&self.errors) {
            let mut fields: Vec<String> = cols
                .iter()
                .zip(r)
                .map(|(c, v)| match v {
                    None => String::new(),
                    Some(v) => match Self::cell_number(c, v) {
                        Some(x) if !matches!(v, Value::Quantity(q) if q.is_absolute_temperature() != c.celsius) => {
                            format!("{x}")
                        }
                        _ => csv_field(&v.to_string()),
                    },
                })
                .collect();
            if self.has_errors() {
                fields.push(csv_field(e.as_deref().unwrap_or("")));
            }
            out.push_str(&fields.join(","));
            out.push('\n');
        }
        out
    }

    /// JSON: `{"columns": [{"name", "unit"}], "rows": [{name: number|string|bool|null}]}`,
    /// numbers in the column's unit; a failed row carries `"error"`.
    pub fn to_json(&self) -> serde_json::Value {
        let cols = self.columns();
        let columns: Vec<serde_json::Value> = cols
            .iter()
            .map(|c| json!({"name": c.name, "unit": c.unit}))
            .collect();
        let rows: Vec<serde_json::Value> = self
            .rows
            .iter()
            .zip(&self.errors)
            .map(|(r, e)| {
                let mut m = serde_json::Map::new();
                for (c, v) in cols.iter().zip(r) {
                    let j = match v {
                        None => serde_json::Value::Null,
                        Some(Value::Text(s)) => json!(s),
                        Some(Value::Flag(b)) => json!(b),
                        Some(v) => Self::cell_number(c, v)
                            .filter(|x| x.is_finite())
                            .map(|x| json!(x))
                            .unwrap_or(serde_json::Value::Null),
                    };
                    m.insert(c.name.clone(), j);
                }
                if let Some(e) = e {
                    m.insert("error".into(), json!(e));
                }
                serde_json::Value::Object(m)
            })
            .collect();
        json!({"columns": columns, "rows": rows})
    }
}

fn csv_field(s: &str) -> String {
    if s.contains([',', '"', '\n', '\r']) {
        format!("\"{}\"", s.replace('"', "\"\""))
    } else {
        s.to_string()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::units::{Dimension, Quantity};

    #[test]
    fn units_in_headers_and_error_rows() {
        let mut t = Table::new();
        t.push_row(vec![
            Field::new("output_voltage", Quantity::new(5.0, Dimension::VOLTAGE)),
            Field::new(
                "primary_inductance",
                Quantity::new(1.1e-3, Dimension::INDUCTANCE),
            ),
        ]);
        t.push_error_row(
            vec![Field::new(
                "output_voltage",
                Quantity::new(48.0, Dimension::VOLTAGE),
            )],
            "duty cycle, limit exceeded",
        );
        let csv = t.to_csv();
        let mut lines = csv.lines();
        assert_eq!(
            lines.next(),
            Some("output_voltage [V],primary_inductance [mH],error")
        );
        assert_eq!(lines.next(), Some("5,1.1,"));
        assert_eq!(lines.next(), Some("48,,\"duty cycle, limit exceeded\""));
        let j = t.to_json();
        assert_eq!(j["columns"][1]["unit"], "mH");
        assert_eq!(j["rows"][1]["error"], "duty cycle, limit exceeded");
        assert!(t.to_text().contains("primary_inductance [mH]"));
    }
}
