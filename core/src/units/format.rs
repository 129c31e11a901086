//! Writing quantities: engineering prefixes, about four significant digits, derived units.

use super::catalog::{display_unit, COLUMN_UNITS, WRITE_PREFIXES};
use super::dimension::Dimension;
use super::quantity::CELSIUS_OFFSET;
use std::fmt::Write;

/// Significant digits used when writing numbers.
pub const SIGNIFICANT_DIGITS: i32 = 4;

/// Rounds to `digits` significant digits.
pub fn round_significant(x: f64, digits: i32) -> f64 {
    if x == 0.0 || !x.is_finite() {
        return x;
    }
    let magnitude = x.abs().log10().floor() as i32;
    let shift = digits - 1 - magnitude;
    if !(-300..=300).contains(&shift) {
        return x;
    }
    let factor = 10f64.powi(shift);
    (x * factor).round() / factor
}

/// Writes a plain number with about four significant digits: `0.8`, `1234`, `1.5e-9`.
/// Scientific notation is used below 0.001 and from one million up.
pub fn format_number(x: f64) -> String {
    if x.is_nan() {
        return "NaN".into();
    }
    if x.is_infinite() {
        return if x > 0.0 { "inf".into() } else { "-inf".into() };
    }
    let r = round_significant(x, SIGNIFICANT_DIGITS);
    if r == 0.0 {
        return "0".into();
    }
    let a = r.abs();
    if !(1e-3..1e6).contains(&a) {
        let s = format!("{:.*e}", (SIGNIFICANT_DIGITS - 1) as usize, r);
        // trim mantissa zeros: 1.500e-9 -> 1.5e-9
        if let Some((m, e)) = s.split_once('e') {
            return format!("{}e{}", trim_zeros(m), e);
        }
        return s;
    }
    let magnitude = a.log10().floor() as i32;
    let decimals = (SIGNIFICANT_DIGITS - 1 - magnitude).max(0) as usize;
    // r has four significant digits, so r·10^decimals is a whole number k below 10⁷: write k's
    // digits with the decimal point put in (the same text as `{r:.decimals$}` trimmed, without
    // the exact float-to-decimal conversion, which dominated the cost of a report)
    let k = (a * 10f64.powi(decimals as i32)).round() as u64;
    let mut out = String::with_capacity(12);
    if r < 0.0 {
        out.push('-');
    }
    let unit = 10u64.pow(decimals as u32);
    let _ = write!(out, "{}", k / unit);
    let mut frac = k % unit;
    if decimals > 0 && frac > 0 {
        let mut width = decimals;
        while frac % 10 == 0 {
            frac /= 10;
            width -= 1;
        }
        let _ = write!(out, ".{frac:0width$}");
    }
    out
}

fn trim_zeros(s: &str) -> String {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s.to_string()
    }
}

/// The symbol gapwise writes for a dimension without prefix (`V`, `H`, `m²`, or base units).
pub fn unit_symbol(dimension: Dimension) -> String {
    match display_unit(dimension) {
        Some(u) if u.prefixed => u.symbol.to_string(),
        Some(u) => u
            .choices
            .iter()
            .find(|c| c.1 == 1.0)
            .or(u.choices.first())
            .map(|c| c.0.to_string())
            .unwrap_or_default(),
        None => dimension.derived_units(),
    }
}

/// The coherent SI unit of a dimension: `V`, `m²`, `kg`, `A/m²`, `V/m`; empty when
/// dimensionless. Values in coherent SI are written in it with a scale of one.
pub fn si_unit_symbol(dimension: Dimension) -> String {
    if dimension == Dimension::MASS {
        return "kg".into();
    }
    match display_unit(dimension) {
        Some(u) if u.prefixed => u.symbol.to_string(),
        Some(u) => u
            .choices
            .iter()
            .find(|c| c.1 == 1.0)
            .map(|c| c.0.to_string())
            .unwrap_or_else(|| dimension.derived_units()),
        None => dimension.derived_units(),
    }
}

/// The unit a table column of this dimension is written in: (symbol, scale), so that
/// `value / scale` is written. Fixed per dimension (`units::COLUMN_UNITS`), or coherent SI
/// (scale one) when `si` is true or the dimension has no entry. Never depends on a value.
pub fn column_unit(dimension: Dimension, si: bool) -> (String, f64) {
    if !si {
        if let Some((_, sym, scale)) = COLUMN_UNITS.iter().find(|c| c.0 == dimension) {
            return ((*sym).to_string(), *scale);
        }
    }
    (si_unit_symbol(dimension), 1.0)
}

/// Chooses the unit to write `value` in: returns (symbol, scale) so that `value / scale`
/// is what is printed. Prefixed units keep the number in 1 … 999.9.
pub fn choose_unit(value: f64, dimension: Dimension) -> (String, f64) {
    let Some(u) = display_unit(dimension) else {
        return (dimension.derived_units(), 1.0);
    };
    let a = round_significant(value, SIGNIFICANT_DIGITS).abs();
    if u.prefixed {
        let p = if a == 0.0 || !a.is_finite() {
            WRITE_PREFIXES.iter().find(|p| p.factor == 1.0)
        } else {
            WRITE_PREFIXES
                .iter()
                .rev()
                .find(|p| a >= p.factor * (1.0 - 1e-12))
                .or(WRITE_PREFIXES.first())
        };
        let p = p.copied().unwrap_or(WRITE_PREFIXES[5]);
        (format!("{}{}", p.symbol, u.symbol), p.factor)
    } else {
        let c = if a == 0.0 || !a.is_finite() {
            u.choices.iter().find(|c| c.1 == 1.0).or(u.choices.first())
        } else {
            u.choices
                .iter()
                .find(|c| a >= c.2 * (1.0 - 1e-12))
                .or(u.choices.last())
        };
        c.map(|c| (c.0.to_string(), c.1))
            .unwrap_or_else(|| (dimension.derived_units(), 1.0))
    }
}

/// Writes a quantity given in coherent SI: `18 W`, `4.7 µF`, `25 °C`, `0.8` (dimensionless).
pub fn format_quantity(value: f64, dimension: Dimension, absolute_temperature: bool) -> String {
    if absolute_temperature {
        return format!("{} °C", format_number(value - CELSIUS_OFFSET));
    }
    if dimension.is_dimensionless() {
        return format_number(value);
    }
    let (symbol, scale) = choose_unit(value, dimension);
    format!("{} {}", format_number(value / scale), symbol)
}

#[cfg(test)]
mod tests {
    /// The formatter as it was before its fast path: the exact conversion, trimmed.
    fn format_number_exact(x: f64) -> String {
        let r = round_significant(x, SIGNIFICANT_DIGITS);
        let a = r.abs();
        let magnitude = a.log10().floor() as i32;
        let decimals = (SIGNIFICANT_DIGITS - 1 - magnitude).max(0) as usize;
        trim_zeros(&format!("{r:.decimals$}"))
    }

    proptest::proptest! {
        // the fast path writes exactly what the exact conversion wrote, over the whole range
        // it serves, 1e-3 to 1e6 of either sign (an identity, no published source needed)
        #[test]
        fn fast_number_text_equals_the_exact_conversion(
            mantissa in 1.0f64..10.0,
            exponent in -3i32..6,
            negative in proptest::bool::ANY,
        ) {
            let x = mantissa * 10f64.powi(exponent) * if negative { -1.0 } else { 1.0 };
            let r = round_significant(x, SIGNIFICANT_DIGITS).abs();
            proptest::prop_assume!((1e-3..1e6).contains(&r));
            proptest::prop_assert_eq!(format_number(x), format_number_exact(x));
        }
    }

    #[test]
    fn fast_number_text_on_edges() {
        for x in [
            0.001, 0.0015, 0.00999949, 1.0, 9.9995, 10.0, 0.1, 999.95, 1234.5, 123456.0, 999_949.0,
            -0.25, -4.7e3,
        ] {
            assert_eq!(format_number(x), format_number_exact(x), "{x}");
        }
    }

    use super::*;

    #[test]
    fn column_units_depend_on_the_dimension_only() {
        assert_eq!(
            column_unit(Dimension::INDUCTANCE, false),
            ("µH".into(), 1e-6)
        );
        assert_eq!(column_unit(Dimension::INDUCTANCE, true), ("H".into(), 1.0));
        assert_eq!(
            column_unit(Dimension::CURRENT_DENSITY, true),
            ("A/m²".into(), 1.0)
        );
        assert_eq!(column_unit(Dimension::MASS, true), ("kg".into(), 1.0));
        let field = Dimension::VOLTAGE / Dimension::LENGTH;
        assert_eq!(column_unit(field, false), ("V/m".into(), 1.0));
        // every listed unit reads back as its own dimension and scale
        for (d, sym, scale) in COLUMN_UNITS {
            let u = super::super::parse::parse_unit(sym).expect(sym);
            assert_eq!(u.dimension, *d, "{sym}");
            assert!((u.scale / scale - 1.0).abs() < 1e-12, "{sym}");
        }
    }

    #[test]
    fn numbers() {
        assert_eq!(format_number(18.0), "18");
        assert_eq!(format_number(0.8), "0.8");
        assert_eq!(format_number(1234.5678), "1235");
        assert_eq!(format_number(1.5e-9), "1.5e-9");
        assert_eq!(format_number(-2.0), "-2");
        assert_eq!(format_number(2.5e7), "2.5e7");
    }

    #[test]
    fn quantities() {
        let f = |v, d| format_quantity(v, d, false);
        assert_eq!(f(4.7e-6, Dimension::CAPACITANCE), "4.7 µF");
        assert_eq!(f(0.9999999, Dimension::VOLTAGE), "1 V");
        assert_eq!(f(999.96, Dimension::VOLTAGE), "1 kV");
        assert_eq!(f(65e3, Dimension::FREQUENCY), "65 kHz");
        assert_eq!(f(0.1, Dimension::RESISTANCE), "100 mΩ");
        assert_eq!(f(24e-6, Dimension::AREA), "24 mm²");
        assert_eq!(f(6e6, Dimension::CURRENT_DENSITY), "6 A/mm²");
        assert_eq!(f(0.0, Dimension::VOLTAGE), "0 V");
        assert_eq!(
            format_quantity(298.15, Dimension::TEMPERATURE, true),
            "25 °C"
        );
    }
}
