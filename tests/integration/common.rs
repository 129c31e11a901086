//! Helpers shared by every area: one engine per test, tolerant comparisons.

use gapwise::script::{EngineLimits, ScriptError, ScriptHost};
use gapwise::units::{parse_quantity, Quantity};

/// A host with default limits.
pub fn host() -> ScriptHost {
    ScriptHost::new(EngineLimits::default())
}

/// Evaluates a script and returns the displayed result.
pub fn eval(source: &str) -> String {
    let h = host();
    match h.eval(source, "<test>") {
        Ok(v) => h.display(&v),
        Err(e) => panic!("script failed: {source}\n{e}"),
    }
}

/// Evaluates a script that must fail, returning the error.
pub fn eval_err(source: &str) -> ScriptError {
    let h = host();
    match h.eval(source, "<test>") {
        Ok(v) => panic!("script should fail: {source}, gave {}", h.display(&v)),
        Err(e) => e,
    }
}

/// Evaluates a script returning a quantity, as a runtime quantity.
pub fn eval_quantity(source: &str) -> Quantity {
    let h = host();
    let v = h
        .eval(source, "<test>")
        .unwrap_or_else(|e| panic!("{source}\n{e}"));
    if let Some(q) = v.read_lock::<Quantity>() {
        return *q;
    }
    if let Ok(x) = v.as_float() {
        return Quantity::number(x);
    }
    panic!("{source} did not give a quantity but {}", v.type_name())
}

/// Checks that `actual` is within a relative tolerance of the quantity written in `expected`.
#[track_caller]
pub fn check_near(actual: Quantity, expected: &str, rel: f64) {
    let e = parse_quantity(expected, None).expect("expected value parses");
    assert_eq!(
        actual.dimension(),
        e.dimension(),
        "dimension of {actual} vs {expected}"
    );
    let err = (actual.value() - e.value()).abs() / e.value().abs().max(f64::MIN_POSITIVE);
    assert!(
        err <= rel,
        "{actual} differs from {expected} by {:.3e} (allowed {rel:e})",
        err
    );
}
