//! Tables of results: one row per variant, columns with a unit each, error rows kept.

use super::value::{Field, Value};
use crate::units::{
    column_unit, format_number, si_unit_symbol, DbReference, Dimension, CELSIUS_OFFSET,
    SIGNIFICANT_DIGITS,
};

/// A column: its name, what it holds and, for quantity and decibel columns, the unit its
/// numbers are written in.
#[derive(Clone, Debug, PartialEq)]
pub struct Column {
    /// Column name.
    pub name: String,
    /// Unit symbol for quantity and decibel columns (`µH`, `°C`, `dB`), empty otherwise.
    pub unit: String,
    /// What the column holds.
    pub kind: ColumnKind,
    /// What the numbers measure (`inductance`, `absolute temperature`, `number`, `text`).
    pub dimension: String,
    /// One written unit in coherent SI (1e-6 for µH).
    pub scale: f64,
    /// Offset of the written unit's zero in coherent SI (273.15 for °C, else 0).
    pub offset: f64,
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

    /// The columns with the unit each is written in, fixed by the column's dimension
    /// ([`crate::units::COLUMN_UNITS`], or coherent SI with `options.si`) and never by its
    /// values. A column whose numbers have more than one dimension (or decibel reference,
    /// or mixes absolute temperatures with differences) is an error naming the column and
    /// the rows (counted from 0, as `row(i)` counts them).
    pub fn columns(&self, options: &WriteOptions) -> crate::Result<Vec<Column>> {
        (0..self.names.len())
            .map(|c| self.column(c, options))
            .collect()
    }

    fn column(&self, c: usize, options: &WriteOptions) -> crate::Result<Column> {
        let name = self.names[c].clone();
        // the numeric kinds met in this column, each with the rows it was met in
        let mut kinds: Vec<(Numeric, Vec<usize>)> = Vec::new();
        let (mut text, mut flag) = (false, false);
        for (i, r) in self.rows.iter().enumerate() {
            let k = match r.get(c) {
                Some(Some(Value::Text(_))) => {
                    text = true;
                    continue;
                }
                Some(Some(Value::Flag(_))) => {
                    flag = true;
                    continue;
                }
                Some(Some(v)) => Numeric::of(v),
                _ => continue,
            };
            match kinds.iter_mut().find(|(n, _)| n.joins(k)) {
                Some((n, rows)) => {
                    *n = n.join(k);
                    rows.push(i);
                }
                None => kinds.push((k, vec![i])),
            }
        }
        if kinds.len() > 1 {
            let parts: Vec<String> = kinds
                .iter()
                .map(|(k, rows)| format!("{} in {}", k.describe(), rows_text(rows)))
                .collect();
            return Err(crate::Error::dimension(format!(
                "column `{name}` mixes {}; a column holds one dimension (rows counted from 0)",
                parts.join(" and ")
            )));
        }
        let column = |kind, unit: String, dimension: String, scale, offset| Column {
            name: name.clone(),
            unit,
            kind,
            dimension,
            scale,
            offset,
        };
        Ok(match kinds.first().map(|k| k.0) {
            Some(Numeric::Quantity(d)) => {
                let (unit, scale) = column_unit(d, options.si);
                column(ColumnKind::Quantity, unit, d.to_string(), scale, 0.0)
            }
            Some(Numeric::AbsoluteTemperature) if options.si => column(
                ColumnKind::Quantity,
                "K".into(),
                "absolute temperature".into(),
                1.0,
                0.0,
            ),
            Some(Numeric::AbsoluteTemperature) => column(
                ColumnKind::Quantity,
                "°C".into(),
                "absolute temperature".into(),
                1.0,
                CELSIUS_OFFSET,
            ),
            Some(Numeric::Decibel(r)) => column(
                ColumnKind::Decibel,
                r.symbol().into(),
                "decibel".into(),
                1.0,
                0.0,
            ),
            Some(Numeric::Number) => {
                column(ColumnKind::Number, String::new(), "number".into(), 1.0, 0.0)
            }
            Some(Numeric::Integer) => column(
                ColumnKind::Integer,
                String::new(),
                "number".into(),
                1.0,
                0.0,
            ),
            None if text || !flag => {
                column(ColumnKind::Text, String::new(), "text".into(), 1.0, 0.0)
            }
            None => column(ColumnKind::Flag, String::new(), "flag".into(), 1.0, 0.0),
        })
    }

    /// The columns for the aligned text: as [`Table::columns`], but a mixed column is
    /// shown without a unit in its header, each cell with its own unit.
    fn text_columns(&self) -> Vec<Column> {
        let options = WriteOptions::default();
        (0..self.names.len())
            .map(|c| {
                self.column(c, &options).unwrap_or_else(|_| Column {
                    name: self.names[c].clone(),
                    unit: String::new(),
                    kind: ColumnKind::Mixed,
                    dimension: "mixed".into(),
                    scale: 1.0,
                    offset: 0.0,
                })
            })
            .collect()
    }

    /// A cell as a number in its column's unit, if the cell is numeric and fits the column.
    fn cell_number(col: &Column, v: &Value) -> Option<Number> {
        match (col.kind, v) {
            (ColumnKind::Quantity, Value::Quantity(q)) => {
                Some(Number::Float((q.value() - col.offset) / col.scale))
            }
            (ColumnKind::Number | ColumnKind::Integer, Value::Number(x)) => Some(Number::Float(*x)),
            (ColumnKind::Number, Value::Quantity(q)) if q.is_dimensionless() => {
                Some(Number::Float(q.value()))
            }
            (ColumnKind::Number | ColumnKind::Integer, Value::Integer(i)) => {
                Some(Number::Integer(*i))
            }
            (ColumnKind::Decibel, Value::Decibel(d)) => Some(Number::Float(d.value)),
            _ => None,
        }
    }

    fn cell_text(col: &Column, v: &Option<Value>) -> String {
        match v {
            None => String::new(),
            Some(v) => match Self::cell_number(col, v) {
                Some(Number::Float(x)) => format_number(x),
                Some(Number::Integer(i)) => i.to_string(),
                None => v.to_string(),
            },
        }
    }

    fn header(col: &Column) -> String {
        if col.unit.is_empty() {
            col.name.clone()
        } else {
            format!("{} [{}]", col.name, col.unit)
        }
    }

    /// The table as a Markdown pipe table: a header row of the column names, then one row per
    /// variant with each value as it prints (units with the values); empty cells where a row
    /// has no value. No calculation; used by the domains' Markdown reports.
    pub fn to_markdown(&self) -> String {
        use std::fmt::Write;
        let cols = self.column_names().to_vec();
        let mut s = String::new();
        let _ = writeln!(s, "| {} |", cols.join(" | "));
        let _ = writeln!(s, "|{}", "---|".repeat(cols.len()));
        for r in 0..self.len() {
            let cells: Vec<String> = cols
                .iter()
                .map(|c| self.get(r, c).map(|v| v.to_string()).unwrap_or_default())
                .collect();
            let _ = writeln!(s, "| {} |", cells.join(" | "));
        }
        s
    }

    /// Aligned text: a header with units, numbers right-aligned, an `error` column when
    /// any variant failed. Units are the fixed column units; a column that mixes
    /// dimensions shows each cell with its own unit.
    pub fn to_text(&self) -> String {
        let cols = self.text_columns();
        let has_errors = self.has_errors();
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
        if has_errors {
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

    /// CSV: a header row of `name [unit]`, numbers in that unit (rounded to
    /// [`SIGNIFICANT_DIGITS`] significant digits unless `options.exact`), an `error` column
    /// when any variant failed. RFC 4180 quoting, `\n` line ends, a byte-order mark first
    /// with `options.bom`. Text cells a spreadsheet would evaluate (starting with `=`, `+`,
    /// `-`, `@`, tab or carriage return) are prefixed with `'`; numbers are never touched.
    /// Linear in the number of cells.
    pub fn to_csv(&self, options: &WriteOptions) -> crate::Result<String> {
        let cols = self.columns(options)?;
        let has_errors = self.has_errors();
        let mut out = String::with_capacity(16 * (self.rows.len() + 1) * (cols.len() + 1));
        if options.bom {
            out.push('\u{FEFF}');
        }
        let mut header: Vec<String> = cols.iter().map(|c| csv_text(&Self::header(c))).collect();
        if has_errors {
            header.push("error".into());
        }
        out.push_str(&header.join(","));
        out.push('\n');
        for (r, e) in self.rows.iter().zip(&self.errors) {
            for (i, (c, v)) in cols.iter().zip(r).enumerate() {
                if i > 0 {
                    out.push(',');
                }
                match v {
                    None => {}
                    Some(v) => match Self::cell_number(c, v) {
                        Some(n) => out.push_str(&n.write(options.exact)),
                        None => out.push_str(&csv_text(&v.to_string())),
                    },
                }
            }
            if has_errors {
                out.push(',');
                out.push_str(&csv_text(e.as_deref().unwrap_or("")));
            }
            out.push('\n');
        }
        Ok(out)
    }

    /// JSON, layout `gapwise-table` version 1 (documented in the README):
    /// `{"format": "gapwise-table", "version": 1, "units": "preferred"|"si",
    /// "significant_digits": 4|null, "columns": [{"name", "unit", "kind", "dimension",
    /// "si_factor", "si_offset"}], "rows": [[…], …]}`. Each row lists its cells in column
    /// order: numbers in the column's unit (integers as integers), text, true/false, or
    /// null where the row has no value; a failed row has its message in the last column,
    /// `error`. `value_in_si = number * si_factor + si_offset`.
    pub fn to_json(&self, options: &WriteOptions) -> crate::Result<String> {
        let cols = self.columns(options)?;
        let has_errors = self.has_errors();
        let mut columns: Vec<JsonColumn> = cols
            .iter()
            .map(|c| JsonColumn {
                name: &c.name,
                unit: &c.unit,
                kind: c.kind.name(),
                dimension: &c.dimension,
                si_factor: (c.kind == ColumnKind::Quantity).then_some(c.scale),
                si_offset: (c.kind == ColumnKind::Quantity).then_some(c.offset),
            })
            .collect();
        if has_errors {
            columns.push(JsonColumn {
                name: "error",
                unit: "",
                kind: "text",
                dimension: "text",
                si_factor: None,
                si_offset: None,
            });
        }
        let text = |v: &dyn erased::Json| v.json();
        let mut out = String::from("{\n");
        out.push_str("  \"format\": \"gapwise-table\",\n  \"version\": 1,\n");
        out.push_str(&format!(
            "  \"units\": \"{}\",\n  \"significant_digits\": {},\n",
            if options.si { "si" } else { "preferred" },
            if options.exact {
                "null".to_string()
            } else {
                SIGNIFICANT_DIGITS.to_string()
            }
        ));
        out.push_str("  \"columns\": [");
        for (i, c) in columns.iter().enumerate() {
            out.push_str(if i == 0 { "\n    " } else { ",\n    " });
            out.push_str(&text(c));
        }
        out.push_str(if columns.is_empty() {
            "],\n"
        } else {
            "\n  ],\n"
        });
        out.push_str("  \"rows\": [");
        for (i, (r, e)) in self.rows.iter().zip(&self.errors).enumerate() {
            out.push_str(if i == 0 { "\n    [" } else { ",\n    [" });
            for (j, (c, v)) in cols.iter().zip(r).enumerate() {
                if j > 0 {
                    out.push_str(", ");
                }
                let cell = match v {
                    None => "null".to_string(),
                    Some(Value::Text(s)) => text(s),
                    Some(Value::Flag(b)) => b.to_string(),
                    Some(v) => match Self::cell_number(c, v) {
                        Some(n) => n.json(options.exact),
                        None => text(&v.to_string()),
                    },
                };
                out.push_str(&cell);
            }
            if has_errors {
                if !cols.is_empty() {
                    out.push_str(", ");
                }
                out.push_str(&e.as_deref().map_or("null".to_string(), |e| text(&e)));
            }
            out.push(']');
        }
        out.push_str(if self.rows.is_empty() {
            "]\n}\n"
        } else {
            "\n  ]\n}\n"
        });
        Ok(out)
    }
}

/// How a table is written to CSV and JSON.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct WriteOptions {
    /// Every quantity column in coherent SI (V, H, F, Hz, m, K) instead of its preferred unit.
    pub si: bool,
    /// Numbers written exactly (the shortest text that reads back as the same `f64` in the
    /// column's unit) instead of rounded to [`SIGNIFICANT_DIGITS`] significant digits.
    /// With `si` too, the numbers are the computed values bit for bit.
    pub exact: bool,
    /// CSV only: a UTF-8 byte-order mark first, for spreadsheets that need it.
    pub bom: bool,
}

/// What a column holds.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ColumnKind {
    /// Quantities of one dimension, in the column's unit.
    Quantity,
    /// Plain numbers.
    Number,
    /// Whole numbers only.
    Integer,
    /// Decibel values of one reference (dB, dBµV or dBµA).
    Decibel,
    /// Text (or text mixed with flags).
    Text,
    /// true / false.
    Flag,
    /// More than one dimension (only in the aligned text; CSV and JSON refuse it).
    Mixed,
}

impl ColumnKind {
    /// The name written in JSON's `kind`.
    pub fn name(self) -> &'static str {
        match self {
            ColumnKind::Quantity => "quantity",
            ColumnKind::Number => "number",
            ColumnKind::Integer => "integer",
            ColumnKind::Decibel => "decibel",
            ColumnKind::Text => "text",
            ColumnKind::Flag => "flag",
            ColumnKind::Mixed => "mixed",
        }
    }
}

/// The numeric kind of a cell, to check that a column holds one.
#[derive(Clone, Copy, Debug, PartialEq)]
enum Numeric {
    Quantity(Dimension),
    AbsoluteTemperature,
    Number,
    Integer,
    Decibel(DbReference),
}

impl Numeric {
    fn of(v: &Value) -> Numeric {
        match v {
            Value::Quantity(q) if q.is_absolute_temperature() => Numeric::AbsoluteTemperature,
            Value::Quantity(q) if q.is_dimensionless() => Numeric::Number,
            Value::Quantity(q) => Numeric::Quantity(q.dimension()),
            Value::Integer(_) => Numeric::Integer,
            Value::Decibel(d) => Numeric::Decibel(d.reference),
            _ => Numeric::Number,
        }
    }
    /// Whole and fractional numbers share a column.
    fn joins(self, other: Numeric) -> bool {
        self == other
            || matches!(
                (self, other),
                (
                    Numeric::Number | Numeric::Integer,
                    Numeric::Number | Numeric::Integer
                )
            )
    }
    fn join(self, other: Numeric) -> Numeric {
        if self == other {
            self
        } else {
            Numeric::Number
        }
    }
    fn describe(self) -> String {
        match self {
            Numeric::Quantity(d) => format!("{d} ({})", si_unit_symbol(d)),
            Numeric::AbsoluteTemperature => "absolute temperature (°C)".into(),
            Numeric::Number | Numeric::Integer => "plain numbers".into(),
            Numeric::Decibel(r) => format!("decibels ({})", r.symbol()),
        }
    }
}

/// A number ready to write.
#[derive(Clone, Copy, Debug)]
enum Number {
    Float(f64),
    Integer(i64),
}

impl Number {
    /// CSV text: integers as written; floats rounded (or exact), without exponent, `-0`
    /// written `0`; NaN and infinities as `NaN`, `inf`, `-inf`.
    fn write(self, exact: bool) -> String {
        match self {
            Number::Integer(i) => i.to_string(),
            Number::Float(x) if x.is_nan() => "NaN".into(),
            Number::Float(x) if x.is_infinite() => {
                if x > 0.0 {
                    "inf".into()
                } else {
                    "-inf".into()
                }
            }
            Number::Float(x) => {
                let r = if exact { x } else { round_to_written(x) };
                if r == 0.0 {
                    "0".into()
                } else {
                    format!("{r}")
                }
            }
        }
    }
    /// JSON text: as [`Number::write`], with null for NaN and infinities.
    fn json(self, exact: bool) -> String {
        match self {
            Number::Float(x) if !x.is_finite() => "null".into(),
            n => n.write(exact),
        }
    }
}

/// Rounds to [`SIGNIFICANT_DIGITS`] significant digits through decimal text, so that the
/// result is the `f64` nearest the rounded decimal and prints as it (`9.6`, never
/// `9.600000000000001`).
fn round_to_written(x: f64) -> f64 {
    let digits = (SIGNIFICANT_DIGITS - 1) as usize;
    format!("{x:.digits$e}").parse().unwrap_or(x)
}

fn rows_text(rows: &[usize]) -> String {
    let shown: Vec<String> = rows.iter().take(5).map(usize::to_string).collect();
    let more = if rows.len() > 5 {
        format!(" and {} more", rows.len() - 5)
    } else {
        String::new()
    };
    format!(
        "{} {}{more}",
        if rows.len() == 1 { "row" } else { "rows" },
        shown.join(", ")
    )
}

#[derive(serde::Serialize)]
struct JsonColumn<'a> {
    name: &'a str,
    unit: &'a str,
    kind: &'a str,
    dimension: &'a str,
    si_factor: Option<f64>,
    si_offset: Option<f64>,
}

mod erased {
    /// Anything written as one line of JSON.
    pub trait Json {
        fn json(&self) -> String;
    }
    impl<T: serde::Serialize + ?Sized> Json for T {
        fn json(&self) -> String {
            serde_json::to_string(self).unwrap_or_else(|_| "null".into())
        }
    }
}

/// A CSV text cell: neutralised for spreadsheets, then quoted when it needs to be.
fn csv_text(s: &str) -> String {
    let s = if s.starts_with(['=', '+', '-', '@', '\t', '\r']) {
        format!("'{s}")
    } else {
        s.to_string()
    };
    csv_field(&s)
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
    use crate::units::{Decibel, Quantity};

    fn q(v: f64, d: Dimension) -> Value {
        Value::Quantity(Quantity::new(v, d))
    }

    fn csv(t: &Table) -> String {
        t.to_csv(&WriteOptions::default()).unwrap()
    }

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
        let csv = csv(&t);
        let mut lines = csv.lines();
        assert_eq!(
            lines.next(),
            Some("output_voltage [V],primary_inductance [µH],error")
        );
        assert_eq!(lines.next(), Some("5,1100,"));
        assert_eq!(lines.next(), Some("48,,\"duty cycle, limit exceeded\""));
        let j: serde_json::Value =
            serde_json::from_str(&t.to_json(&WriteOptions::default()).unwrap()).unwrap();
        assert_eq!(j["format"], "gapwise-table");
        assert_eq!(j["version"], 1);
        assert_eq!(j["columns"][1]["unit"], "µH");
        assert_eq!(j["columns"][2]["name"], "error");
        assert_eq!(j["rows"][1][2], "duty cycle, limit exceeded");
        assert_eq!(j["rows"][0][1], 1100);
        assert!(t.to_text().contains("primary_inductance [µH]"));
    }

    #[test]
    fn a_column_unit_does_not_depend_on_the_values_issue_10() {
        // the same dimension gives the same header whether the values are µH or mH
        let header = |v: f64| {
            let mut t = Table::new();
            t.push_row(vec![Field::new(
                "l",
                Quantity::new(v, Dimension::INDUCTANCE),
            )]);
            csv(&t).lines().next().unwrap().to_string()
        };
        assert_eq!(header(2.2e-6), header(1.5e-3));
        let mut t = Table::new();
        t.push_row(vec![Field::new(
            "l",
            Quantity::new(1.5e-3, Dimension::INDUCTANCE),
        )]);
        let si = t
            .to_csv(&WriteOptions {
                si: true,
                ..WriteOptions::default()
            })
            .unwrap();
        assert_eq!(si, "l [H]\n0.0015\n");
    }

    #[test]
    fn numbers_are_rounded_or_exact_never_float_noise_issue_10() {
        let mut t = Table::new();
        // 0.1 + 0.2 µH is 0.30000000000000004 µH in f64
        let l = (0.1 + 0.2) * 1e-6;
        assert_ne!(format!("{}", l / 1e-6), "0.3");
        t.push_row(vec![
            Field::new("l", Quantity::new(l, Dimension::INDUCTANCE)),
            Field::new("turns", 12i64),
            Field::new("ratio", 1.0 / 3.0),
        ]);
        assert_eq!(csv(&t), "l [µH],turns,ratio\n0.3,12,0.3333\n");
        let exact = t
            .to_csv(&WriteOptions {
                exact: true,
                si: true,
                ..WriteOptions::default()
            })
            .unwrap();
        let cells: Vec<f64> = exact
            .lines()
            .nth(1)
            .unwrap()
            .split(',')
            .map(|c| c.parse().unwrap())
            .collect();
        assert_eq!(cells, [l, 12.0, 1.0 / 3.0]);
        let j = t.to_json(&WriteOptions::default()).unwrap();
        assert!(j.contains("[0.3, 12, 0.3333]"), "{j}");
    }

    #[test]
    fn decibel_and_temperature_columns_carry_their_unit_issue_10() {
        let mut t = Table::new();
        t.push_row(vec![
            Field::new("margin", Decibel::ratio(6.5)),
            Field::new("ambient", Quantity::celsius(40.0)),
            Field::new("rise", Quantity::new(30.0, Dimension::TEMPERATURE)),
        ]);
        assert_eq!(csv(&t), "margin [dB],ambient [°C],rise [K]\n6.5,40,30\n");
    }

    #[test]
    fn a_column_with_mixed_dimensions_is_an_error_naming_it_and_its_rows_issue_16() {
        let mut t = Table::new();
        t.push_row(vec![Field::new(
            "x",
            Quantity::new(12.0, Dimension::VOLTAGE),
        )]);
        t.push_row(vec![Field::new(
            "x",
            Quantity::new(3.0, Dimension::CURRENT),
        )]);
        t.push_row(vec![Field::new(
            "x",
            Quantity::new(5.0, Dimension::VOLTAGE),
        )]);
        let e = t.to_csv(&WriteOptions::default()).unwrap_err();
        let m = e.to_string();
        assert!(m.contains("column `x`"), "{m}");
        assert!(m.contains("voltage (V) in rows 0, 2"), "{m}");
        assert!(m.contains("current (A) in row 1"), "{m}");
        assert!(t.to_json(&WriteOptions::default()).is_err());
        // the text shows each cell with its own unit
        let text = t.to_text();
        assert!(text.contains("3 A") && text.contains("12 V"), "{text}");
        // decibel references do not mix either
        let mut t = Table::new();
        t.push_row(vec![Field::new("x", Decibel::ratio(3.0))]);
        t.push_row(vec![Field::new("x", 3.0)]);
        assert!(t.to_csv(&WriteOptions::default()).is_err());
    }

    #[test]
    fn text_cells_a_spreadsheet_would_evaluate_are_neutralised_issue_16() {
        let mut t = Table::new();
        t.push_row(vec![
            Field::new("note", "=1+2"),
            Field::new("v", q(-5.0, Dimension::VOLTAGE)),
        ]);
        t.push_row(vec![
            Field::new("note", "@sum"),
            Field::new("v", q(-2.5, Dimension::VOLTAGE)),
        ]);
        t.push_row(vec![Field::new("note", "-x, +y")]);
        assert_eq!(csv(&t), "note,v [V]\n'=1+2,-5\n'@sum,-2.5\n\"'-x, +y\",\n");
    }

    #[test]
    fn bom_is_optional() {
        let mut t = Table::new();
        t.push_row(vec![Field::new("a", 1i64)]);
        assert!(!csv(&t).starts_with('\u{FEFF}'));
        let b = t
            .to_csv(&WriteOptions {
                bom: true,
                ..WriteOptions::default()
            })
            .unwrap();
        assert_eq!(b, "\u{FEFF}a\n1\n");
    }

    proptest::proptest! {
        /// A column's header depends on its dimension only, never on the values in it
        /// (issue 10: `[µH]` in one run, `[mH]` in the next).
        #[test]
        fn csv_headers_do_not_depend_on_the_values(
            dim in 0usize..8,
            a in proptest::collection::vec(-1e6f64..1e6, 1..6),
            b in proptest::collection::vec(-1e6f64..1e6, 1..6),
            exponent_a in -12i32..4,
            exponent_b in -12i32..4,
        ) {
            let dims = [
                Dimension::INDUCTANCE, Dimension::CAPACITANCE, Dimension::FREQUENCY,
                Dimension::LENGTH, Dimension::VOLTAGE, Dimension::TIME,
                Dimension::FLUX_DENSITY, Dimension::VOLTAGE / Dimension::LENGTH,
            ];
            let header = |values: &[f64], e: i32| {
                let mut t = Table::new();
                for v in values {
                    t.push_row(vec![Field::new("x", Quantity::new(v * 10f64.powi(e), dims[dim]))]);
                }
                csv(&t).lines().next().unwrap().to_string()
            };
            proptest::prop_assert_eq!(header(&a, exponent_a), header(&b, exponent_b));
        }
    }

    #[test]
    fn design_records_serialise_with_units_in_review_order() {
        struct Demo;
        impl super::super::Record for Demo {
            fn fields(&self) -> Vec<Field> {
                vec![
                    Field::new("output_voltage", Quantity::new(12.0, Dimension::VOLTAGE)),
                    Field::new("turns", 7i64),
                    Field::new("mode", "dcm"),
                ]
            }
        }
        crate::serialize_as_record!(Demo);
        let j = serde_json::to_string(&Demo).unwrap();
        assert_eq!(
            j,
            r#"{"output_voltage":{"value":12.0,"unit":"V","dimension":"voltage"},"turns":7,"mode":"dcm"}"#
        );
    }
}
