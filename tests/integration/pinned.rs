//! Pinned results: the demo family and a few native designs against a committed reference
//! file, so that a change to how a solver iterates cannot change what it computes.
//!
//! Every numeric cell (in SI) must agree within 1e-6 relative; text and whole numbers exactly.
//! Solver diagnostics (`efficiency_iterations`, `efficiency_residual`) are left out: they say
//! how the answer was found, not what it is.
//!
//! The reference values are today's results of our own code (no published source): the test
//! pins behaviour, it does not check physics. When a change legitimately moves the numbers
//! (a new loss term, a changed default), regenerate the file and review its diff:
//!
//! ```text
//! GAPWISE_WRITE_PINNED=1 cargo test -p gapwise --test integration pinned
//! ```

use super::common::host;
use gapwise::flyback::{flyback_design, EfficiencyModel, FlybackSpec, ModeTarget, OutputWinding};
use gapwise::report::{Table, Value};
use gapwise::units::si;
use std::collections::BTreeMap;
use std::path::PathBuf;

/// Relative tolerance of a pinned number.
const RELATIVE: f64 = 1e-6;
/// Absolute floor (SI) for numbers that are zero or nearly so.
const ABSOLUTE: f64 = 1e-15;
/// Columns that describe the solver's path rather than the result.
const DIAGNOSTICS: [&str; 2] = ["efficiency_iterations", "efficiency_residual"];

fn reference_path() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("tests/data/fernbank_family_pinned.csv")
}

/// One cell of a pinned table, keyed by `table/row/column`.
#[derive(Clone, Debug, PartialEq)]
enum Cell {
    Number(f64),
    Exact(String),
}

impl Cell {
    fn of(v: &Value) -> Cell {
        match v {
            Value::Quantity(q) => Cell::Number(q.value()),
            Value::Number(x) => Cell::Number(*x),
            Value::Integer(i) => Cell::Exact(i.to_string()),
            Value::Text(s) => Cell::Exact(s.clone()),
            Value::Flag(b) => Cell::Exact(b.to_string()),
            Value::Decibel(d) => Cell::Number(d.value),
        }
    }
    fn encode(&self) -> String {
        match self {
            // `{:e}` of an f64 round-trips exactly
            Cell::Number(x) => format!("number,{x:e}"),
            Cell::Exact(s) => format!("exact,{}", s.replace(['\n', '\r'], " ")),
        }
    }
}

fn flatten(name: &str, table: &Table, into: &mut BTreeMap<String, Cell>) {
    for row in 0..table.len() {
        if let Some(e) = table.error(row) {
            into.insert(format!("{name}/{row}/error"), Cell::Exact(e.to_string()));
        }
        for column in table.column_names() {
            if DIAGNOSTICS.iter().any(|d| column.ends_with(d)) {
                continue;
            }
            if let Some(v) = table.get(row, column) {
                into.insert(format!("{name}/{row}/{column}"), Cell::of(v));
            }
        }
    }
}

/// Today's results: the demo family through the script host, and the corners and overload
/// points of three native designs (CCM universal, DCM universal, a fixed efficiency).
fn current_results() -> BTreeMap<String, Cell> {
    let mut cells = BTreeMap::new();
    let path = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("scripts/fernbank_family.rhai");
    let source = std::fs::read_to_string(&path).expect("the family recipe is readable");
    let h = host();
    let _ = h
        .eval(&source, "fernbank_family.rhai")
        .unwrap_or_else(|e| panic!("the family recipe runs:\n{e}"));
    let outputs = h.take_outputs();
    let (_, family) = outputs
        .iter()
        .find(|(n, _)| n == "fernbank_family")
        .expect("the recipe outputs its family table");
    flatten("family", family, &mut cells);

    let ccm = FlybackSpec::universal(OutputWinding::new(si(12.0), si(1.25)));
    let dcm = FlybackSpec {
        mode: Some(ModeTarget::Discontinuous { margin: 0.2 }),
        ..FlybackSpec::universal(OutputWinding::new(si(5.0), si(2.0)))
    };
    let fixed = FlybackSpec {
        efficiency: EfficiencyModel::Estimate(0.82),
        ..FlybackSpec::universal(OutputWinding::new(si(48.0), si(0.5)))
    };
    for (name, spec) in [("ccm_12v", ccm), ("dcm_5v", dcm), ("fixed_48v", fixed)] {
        let d = flyback_design(&spec).unwrap_or_else(|e| panic!("{name} designs: {e}"));
        flatten(&format!("{name}.corners"), &d.corner_table(), &mut cells);
        flatten(&format!("{name}.overload"), &d.overload_table(), &mut cells);
    }
    cells
}

fn encode(cells: &BTreeMap<String, Cell>) -> String {
    let mut out = String::from(
        "# pinned results (tests/integration/pinned.rs); regenerate with\n\
         # GAPWISE_WRITE_PINNED=1 cargo test -p gapwise --test integration pinned\n\
         key,kind,value\n",
    );
    for (k, c) in cells {
        out.push_str(k);
        out.push(',');
        out.push_str(&c.encode());
        out.push('\n');
    }
    out
}

fn decode(text: &str) -> BTreeMap<String, Cell> {
    let mut cells = BTreeMap::new();
    for line in text.lines().filter(|l| !l.starts_with('#')).skip(1) {
        let mut parts = line.splitn(3, ',');
        let (Some(key), Some(kind), Some(value)) = (parts.next(), parts.next(), parts.next())
        else {
            panic!("malformed pinned line: {line}");
        };
        let cell = match kind {
            "number" => Cell::Number(value.parse().expect("pinned number parses")),
            _ => Cell::Exact(value.to_string()),
        };
        cells.insert(key.to_string(), cell);
    }
    cells
}

fn near(a: f64, b: f64) -> bool {
    if a.is_nan() || b.is_nan() {
        return false;
    }
    a == b || (a - b).abs() <= RELATIVE * a.abs().max(b.abs()) + ABSOLUTE
}

#[test]
fn demo_family_matches_the_pinned_reference() {
    let now = current_results();
    if std::env::var_os("GAPWISE_WRITE_PINNED").is_some() {
        let path = reference_path();
        std::fs::create_dir_all(path.parent().expect("has a parent")).expect("mkdir");
        std::fs::write(&path, encode(&now)).expect("writes the pinned reference");
        eprintln!("wrote {} ({} cells)", path.display(), now.len());
        return;
    }
    let text = std::fs::read_to_string(reference_path())
        .expect("tests/data/fernbank_family_pinned.csv exists (GAPWISE_WRITE_PINNED=1 writes it)");
    let pinned = decode(&text);
    let mut problems = Vec::new();
    for (key, want) in &pinned {
        match (want, now.get(key)) {
            (_, None) => problems.push(format!("{key}: missing now (pinned {want:?})")),
            (Cell::Number(a), Some(Cell::Number(b))) if near(*a, *b) => {}
            (Cell::Number(a), Some(Cell::Number(b))) => problems.push(format!(
                "{key}: {b:e} now, pinned {a:e} (relative {:.2e})",
                (a - b).abs() / a.abs().max(b.abs())
            )),
            (w, Some(g)) if w == g => {}
            (w, Some(g)) => problems.push(format!("{key}: {g:?} now, pinned {w:?}")),
        }
    }
    for key in now.keys().filter(|k| !pinned.contains_key(*k)) {
        problems.push(format!("{key}: new, not pinned"));
    }
    assert!(
        problems.is_empty(),
        "{} of {} pinned cells differ (if the change is intended, regenerate with \
         GAPWISE_WRITE_PINNED=1 and review the diff):\n{}",
        problems.len(),
        pinned.len(),
        problems.join("\n")
    );
}

#[test]
fn the_comparison_can_fail() {
    // the tolerance itself: 1e-6 relative passes, 1e-5 does not, NaN never does
    assert!(near(1.0, 1.0 + 0.9e-6));
    assert!(!near(1.0, 1.0 + 1e-5));
    assert!(!near(f64::NAN, f64::NAN));
    assert!(near(0.0, 0.0));
    let cells = current_results();
    assert!(
        cells.len() > 100,
        "the pinned set covers the family and the corners"
    );
    assert_eq!(
        decode(&encode(&cells)),
        cells,
        "the reference file round-trips"
    );
}
