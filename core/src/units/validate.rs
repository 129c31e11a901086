//! Input checks shared by every calculation: finite, positive, in range, with messages that
//! name the parameter and its unit.

use super::format::{format_number, unit_symbol};
use super::quantity::Quantity;
use super::typed::TypedQuantity;
use crate::error::{Error, Result};

fn show<Q: TypedQuantity>(q: Q) -> String {
    Quantity::from_typed(q).to_string()
}

/// The value must be finite and greater than zero.
pub fn positive<Q: TypedQuantity>(name: &str, q: Q) -> Result<Q> {
    let v = q.si_value();
    if v.is_finite() && v > 0.0 {
        Ok(q)
    } else {
        Err(Error::invalid(format!(
            "`{name}` must be a positive, finite {} in {}, got {}",
            Q::dimension(),
            unit_symbol(Q::dimension()),
            show(q)
        )))
    }
}

/// The value must be finite and not negative.
pub fn non_negative<Q: TypedQuantity>(name: &str, q: Q) -> Result<Q> {
    let v = q.si_value();
    if v.is_finite() && v >= 0.0 {
        Ok(q)
    } else {
        Err(Error::invalid(format!(
            "`{name}` must be a finite {} of zero or more in {}, got {}",
            Q::dimension(),
            unit_symbol(Q::dimension()),
            show(q)
        )))
    }
}

/// The value must be finite (any sign).
pub fn finite<Q: TypedQuantity>(name: &str, q: Q) -> Result<Q> {
    if q.si_value().is_finite() {
        Ok(q)
    } else {
        Err(Error::invalid(format!(
            "`{name}` must be finite, got {}",
            show(q)
        )))
    }
}

/// A computed result must be finite: an overflow from extreme inputs is an out-of-range error
/// naming the result and the inputs that drive it, never an infinity or NaN in a result.
pub fn finite_result<Q: TypedQuantity>(result: &str, q: Q, inputs: &str) -> Result<Q> {
    if q.si_value().is_finite() {
        Ok(q)
    } else {
        Err(Error::out_of_range(format!(
            "the {result} is not finite ({}): {inputs} beyond the range of the formula",
            show(q)
        )))
    }
}

/// The value must lie in `[low, high]`, both ends included; out of range is an error,
/// never clamped.
pub fn within<Q: TypedQuantity>(name: &str, q: Q, low: Q, high: Q) -> Result<Q> {
    let v = q.si_value();
    if v.is_finite() && v >= low.si_value() && v <= high.si_value() {
        Ok(q)
    } else {
        Err(Error::out_of_range(format!(
            "`{name}` = {} is outside the valid range {} … {}",
            show(q),
            show(low),
            show(high)
        )))
    }
}

/// A plain number that must be finite and greater than zero.
pub fn positive_number(name: &str, x: f64) -> Result<f64> {
    if x.is_finite() && x > 0.0 {
        Ok(x)
    } else {
        Err(Error::invalid(format!(
            "`{name}` must be a positive, finite number, got {}",
            format_number(x)
        )))
    }
}

/// A plain number that must lie in `[low, high]`.
pub fn number_within(name: &str, x: f64, low: f64, high: f64) -> Result<f64> {
    if x.is_finite() && x >= low && x <= high {
        Ok(x)
    } else {
        Err(Error::out_of_range(format!(
            "`{name}` = {} is outside the valid range {} … {}",
            format_number(x),
            format_number(low),
            format_number(high)
        )))
    }
}
