//! IEC 60063:2015 preferred number series E3 … E192 and the nearest preferred value.

use crate::error::{Error, Result};
use crate::units::{format_number, TypedQuantity};
use std::sync::OnceLock;

/// A preferred number series of IEC 60063.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum ESeries {
    /// 3 values per decade (±40 %, obsolete but still used for capacitors).
    E3,
    /// 6 values per decade (±20 %).
    E6,
    /// 12 values per decade (±10 %).
    E12,
    /// 24 values per decade (±5 %).
    E24,
    /// 48 values per decade (±2 %).
    E48,
    /// 96 values per decade (±1 %).
    E96,
    /// 192 values per decade (±0.5 % and tighter).
    E192,
}

/// E24 as tabulated in IEC 60063 (two significant figures; eight values differ from the
/// rounded geometric series, e.g. 2.7 instead of 2.6).
const E24: [f64; 24] = [
    1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1, 5.6,
    6.2, 6.8, 7.5, 8.2, 9.1,
];

impl ESeries {
    /// All series, coarse to fine.
    pub const ALL: [ESeries; 7] = [
        ESeries::E3,
        ESeries::E6,
        ESeries::E12,
        ESeries::E24,
        ESeries::E48,
        ESeries::E96,
        ESeries::E192,
    ];

    /// Reads a series name: `E24`, `e24` or `24`.
    pub fn parse(name: &str) -> Result<Self> {
        let n = name.trim().trim_start_matches(['E', 'e']);
        Ok(match n {
            "3" => ESeries::E3,
            "6" => ESeries::E6,
            "12" => ESeries::E12,
            "24" => ESeries::E24,
            "48" => ESeries::E48,
            "96" => ESeries::E96,
            "192" => ESeries::E192,
            _ => {
                return Err(Error::unknown(format!(
                    "unknown preferred-number series '{name}'; expected one of E3, E6, E12, E24, E48, E96, E192"
                )))
            }
        })
    }

    /// Values per decade.
    pub fn count(self) -> usize {
        match self {
            ESeries::E3 => 3,
            ESeries::E6 => 6,
            ESeries::E12 => 12,
            ESeries::E24 => 24,
            ESeries::E48 => 48,
            ESeries::E96 => 96,
            ESeries::E192 => 192,
        }
    }

    /// The series name, `E24`.
    pub fn name(self) -> String {
        format!("E{}", self.count())
    }

    /// The mantissas of one decade, 1 ≤ m < 10.
    ///
    /// E3 … E24: the IEC 60063 table (E3, E6, E12 are every 8th, 4th, 2nd value of E24).
    /// E48 … E192: 10^(i/n) rounded to three significant figures, which reproduces the
    /// standard's table except E192's 9.20 (the formula gives 9.19), kept as the standard has it.
    pub fn mantissas(self) -> &'static [f64] {
        static TABLES: OnceLock<Vec<Vec<f64>>> = OnceLock::new();
        let tables = TABLES.get_or_init(|| {
            ESeries::ALL
                .iter()
                .map(|s| match s {
                    ESeries::E3 | ESeries::E6 | ESeries::E12 | ESeries::E24 => {
                        let step = 24 / s.count();
                        E24.iter().step_by(step).copied().collect()
                    }
                    _ => {
                        let n = s.count();
                        (0..n)
                            .map(|i| {
                                let v = (10f64.powf(i as f64 / n as f64) * 100.0).round() / 100.0;
                                if *s == ESeries::E192 && i == 185 {
                                    9.20
                                } else {
                                    v
                                }
                            })
                            .collect()
                    }
                })
                .collect()
        });
        let i = ESeries::ALL.iter().position(|s| *s == self).unwrap_or(0);
        &tables[i]
    }
}

fn check_value(x: f64) -> Result<f64> {
    if x.is_finite() && x > 0.0 {
        Ok(x)
    } else {
        Err(Error::invalid(format!(
            "a preferred value needs a positive, finite value, got {}",
            format_number(x)
        )))
    }
}

/// Candidate preferred values around `x`: the decade of x, one below and one above, as
/// m·10^d with binary noise left in (the caller rounds the one it picks with [`round_to`]:
/// the noise is some 1e-16 relative, far below every comparison's 1e-9 margin).
fn candidates(x: f64, series: ESeries) -> impl Iterator<Item = f64> {
    let decade = x.log10().floor() as i32;
    (decade - 1..=decade + 1).flat_map(move |d| {
        let p = 10f64.powi(d);
        series.mantissas().iter().map(move |m| m * p)
    })
}

/// Removes binary noise from m·10^d so that 4.7 × 1e3 prints as 4700.
fn round_to(x: f64) -> f64 {
    crate::units::round_significant(x, 6)
}

/// Nearest preferred value by ratio (geometric distance), the way tolerance bands are spaced.
pub(crate) fn nearest_value(x: f64, series: ESeries) -> Result<f64> {
    let x = check_value(x)?;
    candidates(x, series)
        .min_by(|a, b| {
            let da = (a / x).ln().abs();
            let db = (b / x).ln().abs();
            da.total_cmp(&db)
        })
        .map(round_to)
        .ok_or_else(|| Error::invalid("empty series"))
}

pub(crate) fn at_or_above_value(x: f64, series: ESeries) -> Result<f64> {
    let x = check_value(x)?;
    candidates(x, series)
        .filter(|c| *c >= x * (1.0 - 1e-9))
        .min_by(f64::total_cmp)
        .map(round_to)
        .ok_or_else(|| Error::invalid("empty series"))
}

pub(crate) fn at_or_below_value(x: f64, series: ESeries) -> Result<f64> {
    let x = check_value(x)?;
    candidates(x, series)
        .filter(|c| *c <= x * (1.0 + 1e-9))
        .max_by(f64::total_cmp)
        .map(round_to)
        .ok_or_else(|| Error::invalid("empty series"))
}

/// Every preferred value of a series from `low` to `high` inclusive.
pub(crate) fn values_between(low: f64, high: f64, series: ESeries) -> Result<Vec<f64>> {
    let low = check_value(low).map_err(|e| e.context("`low`"))?;
    let high = check_value(high).map_err(|e| e.context("`high`"))?;
    if high < low {
        return Err(Error::invalid(format!(
            "the upper end ({}) is below the lower end ({})",
            format_number(high),
            format_number(low)
        )));
    }
    if high / low > 1e12 {
        return Err(Error::out_of_range(
            "a range of preferred values may span at most 12 decades",
        ));
    }
    let mut out = Vec::new();
    let d0 = low.log10().floor() as i32;
    let d1 = high.log10().floor() as i32;
    for d in d0..=d1 {
        for m in series.mantissas() {
            let v = round_to(m * 10f64.powi(d));
            if v >= low * (1.0 - 1e-9) && v <= high * (1.0 + 1e-9) {
                out.push(v);
            }
        }
    }
    Ok(out)
}

/// The preferred value of `series` nearest to `value` by ratio.
///
/// Formula: the value m·10^d of the series that minimises |ln(m·10^d / value)|.
/// Valid for any positive, finite value; the result has the value's unit.
/// Reference: IEC 60063:2015 (series tables).
pub fn nearest_preferred<Q: TypedQuantity>(value: Q, series: ESeries) -> Result<Q> {
    Ok(Q::from_si(nearest_value(value.si_value(), series)?))
}

/// The smallest preferred value not below `value` (IEC 60063:2015).
pub fn preferred_at_or_above<Q: TypedQuantity>(value: Q, series: ESeries) -> Result<Q> {
    Ok(Q::from_si(at_or_above_value(value.si_value(), series)?))
}

/// The largest preferred value not above `value` (IEC 60063:2015).
pub fn preferred_at_or_below<Q: TypedQuantity>(value: Q, series: ESeries) -> Result<Q> {
    Ok(Q::from_si(at_or_below_value(value.si_value(), series)?))
}

/// Every preferred value from `low` to `high`, inclusive (IEC 60063:2015).
pub fn preferred_values_between<Q: TypedQuantity>(
    low: Q,
    high: Q,
    series: ESeries,
) -> Result<Vec<Q>> {
    Ok(values_between(low.si_value(), high.si_value(), series)?
        .into_iter()
        .map(Q::from_si)
        .collect())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn subsets_and_counts() {
        for s in ESeries::ALL {
            assert_eq!(s.mantissas().len(), s.count());
            assert!(s.mantissas().windows(2).all(|w| w[0] < w[1]));
        }
        assert_eq!(ESeries::E6.mantissas(), &[1.0, 1.5, 2.2, 3.3, 4.7, 6.8]);
        assert_eq!(nearest_value(4800.0, ESeries::E24).unwrap(), 4700.0);
        assert_eq!(at_or_above_value(4800.0, ESeries::E12).unwrap(), 5600.0);
        assert_eq!(at_or_below_value(9.5, ESeries::E6).unwrap(), 6.8);
        assert!(nearest_value(-1.0, ESeries::E24).is_err());
        assert!(ESeries::parse("E25").is_err());
    }
}
