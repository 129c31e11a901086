//! Results leaving the calculation layer: named values, records and tables, written as
//! aligned text, CSV (units in the headers) or JSON. Writing files is the runner's job.

mod svg;
mod table;
mod value;

pub use svg::{svg_caution, xml_escape};
pub use table::{Column, ColumnKind, Table, WriteOptions};
pub use value::{serialize_record, Field, Record, Value};

/// The caution every design report carries.
pub const SAFETY_CAUTION: &str =
    "Caution: mains voltages are lethal. gapwise results are design aids only; \
the current edition of the applicable standard, local codes and a qualified person decide. \
Verify every design by measurement and a hipot test.";

/// The editions of the standards whose tables gapwise carries as data, for `--version`
/// and the provenance of every output. Each table in the code names its edition and table
/// number beside it; this list must agree with them.
pub const DATA_TABLE_EDITIONS: &[&str] = &[
    crate::safety::tables::IEC_60664_1,
    crate::safety::tables::IEC_62368_1,
    "CISPR 32:2015 (edition 2), with CISPR 22:2008 (edition 6)",
    "CISPR 16-1-2 (LISN)",
    "IEC 60063:2015",
    "IEC 60384-14:2013",
    "IEC 60205 (effective core parameters)",
    "ASTM B258 (wire gauge)",
    "IEC 60317-0-1 (winding wire)",
];
