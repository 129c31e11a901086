//! Results leaving the calculation layer: named values, records and tables, written as
//! aligned text, CSV (units in the headers) or JSON. Writing files is the runner's job.

mod table;
mod value;

pub use table::{Column, ColumnKind, Table, WriteOptions};
pub use value::{serialize_record, Field, Record, Value};

/// The caution every design report carries.
pub const SAFETY_CAUTION: &str =
    "Caution: mains voltages are lethal. gapwise results are design aids only; \
the current edition of the applicable standard, local codes and a qualified person decide. \
Verify every design by measurement and a hipot test.";
