//! Reading quantities and units from text: `4.7 uF`, `4.7µF`, `100 mΩ`, `2.2k`, `4k7`, `V/us`.

use super::catalog::{display_unit, NAMED_UNITS, READ_PREFIXES};
use super::dimension::Dimension;
use super::quantity::Quantity;
use crate::error::{Error, Result};

/// A unit read from text: the SI value of one of it and its dimension.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct UnitExpr {
    /// Value of one unit in coherent SI.
    pub scale: f64,
    /// Dimension.
    pub dimension: Dimension,
    /// True for `°C` (an absolute temperature with an offset).
    pub celsius: bool,
}

fn is_celsius(text: &str) -> bool {
    matches!(text, "°C" | "degC" | "℃" | "celsius")
}

fn superscript_value(c: char) -> Option<i32> {
    Some(match c {
        '⁰' => 0,
        '¹' => 1,
        '²' => 2,
        '³' => 3,
        '⁴' => 4,
        '⁵' => 5,
        '⁶' => 6,
        '⁷' => 7,
        '⁸' => 8,
        '⁹' => 9,
        _ => return None,
    })
}

/// Looks up one unit symbol, with or without an SI prefix.
fn lookup_symbol(term: &str) -> Option<(f64, Dimension)> {
    if let Some(u) = NAMED_UNITS.iter().find(|u| u.symbol == term) {
        return Some((u.scale, u.dimension));
    }
    for p in READ_PREFIXES {
        if let Some(rest) = term.strip_prefix(p.symbol) {
            if let Some(u) = NAMED_UNITS
                .iter()
                .find(|u| u.symbol == rest && u.prefixable)
            {
                return Some((p.factor * u.scale, u.dimension));
            }
        }
    }
    None
}

/// Splits a term into its symbol and exponent: `mm^2`, `mm²`, `mm2`, `s^-1`, `s⁻¹`.
fn split_exponent(term: &str, whole: &str) -> Result<(String, i32)> {
    if let Some((sym, exp)) = term.split_once('^') {
        let e: i32 = exp.trim().parse().map_err(|_| {
            Error::parse(format!(
                "bad exponent '{exp}' in unit '{whole}'; write e.g. mm^2"
            ))
        })?;
        return Ok((sym.trim().to_string(), e));
    }
    let chars: Vec<char> = term.chars().collect();
    let mut end = chars.len();
    while end > 0 && superscript_value(chars[end - 1]).is_some() {
        end -= 1;
    }
    let negative = end > 0 && chars[end - 1] == '⁻';
    if end < chars.len() {
        let digits: i32 = chars[end..]
            .iter()
            .filter_map(|c| superscript_value(*c))
            .fold(0, |acc, d| acc * 10 + d);
        let sym_end = if negative { end - 1 } else { end };
        let sym: String = chars[..sym_end].iter().collect();
        return Ok((sym, if negative { -digits } else { digits }));
    }
    // trailing ASCII digits as an exponent: mm2, cm4
    let mut end = chars.len();
    while end > 0 && chars[end - 1].is_ascii_digit() {
        end -= 1;
    }
    if end < chars.len() && end > 0 {
        let digits: String = chars[end..].iter().collect();
        let e: i32 = digits
            .parse()
            .map_err(|_| Error::parse(format!("bad exponent in unit '{whole}'")))?;
        return Ok((chars[..end].iter().collect(), e));
    }
    Ok((term.to_string(), 1))
}

/// Reads a unit expression: products with `*` or `·`, quotients with `/`, powers with `^`,
/// superscripts or trailing digits. Examples: `nF`, `V/us`, `A/mm^2`, `mm²`, `kohm`, `°C`.
pub fn parse_unit(text: &str) -> Result<UnitExpr> {
    let whole = text.trim();
    if whole.is_empty() {
        return Err(Error::parse("empty unit"));
    }
    if is_celsius(whole) {
        return Ok(UnitExpr {
            scale: 1.0,
            dimension: Dimension::TEMPERATURE,
            celsius: true,
        });
    }
    let mut scale = 1.0;
    let mut dimension = Dimension::NONE;
    let mut dividing = false;
    let mut term = String::new();
    let mut finish = |term: &mut String, dividing: bool| -> Result<()> {
        let t = term.trim();
        if t.is_empty() {
            return Err(Error::parse(format!(
                "unit '{whole}' has an operator with nothing beside it"
            )));
        }
        let (sym, exp) = split_exponent(t, whole)?;
        if is_celsius(&sym) {
            return Err(Error::parse(format!(
                "°C cannot be part of a compound unit in '{whole}'; use K for differences"
            )));
        }
        let (s, d) = lookup_symbol(&sym).ok_or_else(|| {
            Error::parse(format!(
                "unknown unit '{sym}' in '{whole}'; known units include V, A, W, ohm, H, F, Hz, T, Wb, J, C, s, m, K with SI prefixes"
            ))
        })?;
        let exp = if dividing { -exp } else { exp };
        scale *= s.powi(exp);
        dimension = dimension * d.powi(exp);
        term.clear();
        Ok(())
    };
    for c in whole.chars() {
        match c {
            '*' | '·' | '/' => {
                finish(&mut term, dividing)?;
                dividing = c == '/';
            }
            _ => term.push(c),
        }
    }
    finish(&mut term, dividing)?;
    Ok(UnitExpr {
        scale,
        dimension,
        celsius: false,
    })
}

/// Scans a leading number. Returns the value and the rest of the text. Accepts the resistor
/// letter code (`4k7`, `2R2`, `4u7`, IEC 60062) where a prefix letter stands for the point.
fn scan_number(text: &str) -> Option<(f64, &str, bool)> {
    let b = text.as_bytes();
    let mut i = 0;
    if i < b.len() && (b[i] == b'+' || b[i] == b'-') {
        i += 1;
    }
    let int_start = i;
    while i < b.len() && b[i].is_ascii_digit() {
        i += 1;
    }
    let int_digits = i - int_start;
    // letter code: digits, one letter, digits
    if int_digits > 0 && i < b.len() {
        let rest = &text[i..];
        for (code, factor) in [
            ("R", 1.0),
            ("k", 1e3),
            ("M", 1e6),
            ("G", 1e9),
            ("m", 1e-3),
            ("u", 1e-6),
            ("µ", 1e-6),
            ("μ", 1e-6),
            ("n", 1e-9),
            ("p", 1e-12),
        ] {
            if let Some(after) = rest.strip_prefix(code) {
                let digits = after.bytes().take_while(u8::is_ascii_digit).count();
                if digits > 0 {
                    let tail = &after[digits..];
                    if tail.is_empty() || tail.starts_with(' ') {
                        let s = format!("{}.{}", &text[..i], &after[..digits]);
                        let v: f64 = s.parse().ok()?;
                        return Some((v * factor, tail, true));
                    }
                }
            }
        }
    }
    let mut frac_digits = 0;
    if i < b.len() && b[i] == b'.' {
        i += 1;
        while i < b.len() && b[i].is_ascii_digit() {
            i += 1;
            frac_digits += 1;
        }
    }
    if int_digits + frac_digits == 0 {
        return None;
    }
    if i < b.len() && (b[i] == b'e' || b[i] == b'E') {
        let mut j = i + 1;
        if j < b.len() && (b[j] == b'+' || b[j] == b'-') {
            j += 1;
        }
        let d0 = j;
        while j < b.len() && b[j].is_ascii_digit() {
            j += 1;
        }
        if j > d0 {
            i = j;
        }
    }
    let v: f64 = text[..i].parse().ok()?;
    Some((v, &text[i..], false))
}

/// Reads a quantity from text such as `4.7 uF`, `4.7µF`, `4.7 μF`, `100 mΩ`, `100 mohm`,
/// `2.2 kohm`, `1e-3 H`, `65 kHz`, `25 °C`, `4k7`.
///
/// `expected` is the dimension the caller wants, if any. With it, a bare prefix (`2.2k`)
/// takes the expected unit, and a value of another dimension is an error. A number with no
/// unit is a plain number, and an error where a dimensioned quantity is expected.
/// NaN, infinity and junk are errors that say what was wrong.
pub fn parse_quantity(text: &str, expected: Option<Dimension>) -> Result<Quantity> {
    let t = text.trim();
    if t.is_empty() {
        return Err(Error::parse(
            "empty text where a quantity was expected, e.g. '4.7 uF'",
        ));
    }
    let (value, rest, letter_code) = scan_number(t).ok_or_else(|| {
        Error::parse(format!(
            "'{t}' does not start with a number; write a quantity such as '4.7 uF'"
        ))
    })?;
    if !value.is_finite() {
        return Err(Error::parse(format!("'{t}' is not a finite number")));
    }
    let rest = rest.trim();
    let expected_text = |d: Dimension| format!("{} ({})", d, super::format::unit_symbol(d));
    if rest.is_empty() && letter_code {
        return match expected {
            Some(d) if !d.is_dimensionless() => Ok(Quantity::new(value, d)),
            _ => Err(Error::parse(format!(
                "'{t}' is a letter code with no unit; write e.g. '{t} ohm'"
            ))),
        };
    }
    if rest.is_empty() {
        return match expected {
            Some(d) if !d.is_dimensionless() => Err(Error::parse(format!(
                "'{t}' has no unit; expected a {}, e.g. '{} {}'",
                expected_text(d),
                t,
                super::format::unit_symbol(d)
            ))),
            _ => Ok(Quantity::number(value)),
        };
    }
    // `25 C` is 25 coulombs to the parser, and almost always meant as 25 °C: refuse it with
    // a hint unless a charge is what the caller expects
    if rest == "C" && expected != Some(Dimension::CHARGE) {
        return Err(Error::parse(format!(
            "'{t}' reads as {} coulombs (C is the unit of charge); for a temperature write '{} °C' or '{} degC', for a difference '{} K'; for a charge where it is not expected write '{} A*s'",
            super::format::format_number(value),
            super::format::format_number(value),
            super::format::format_number(value),
            super::format::format_number(value),
            super::format::format_number(value)
        )));
    }
    let parsed = parse_unit(rest);
    let unit = match (parsed, expected) {
        (Ok(u), Some(d)) if u.dimension == d => u,
        (parsed, Some(d)) => {
            // a bare prefix such as `2.2k` takes the expected unit
            match (
                READ_PREFIXES.iter().find(|p| p.symbol == rest),
                display_unit(d),
            ) {
                (Some(p), Some(du)) if du.prefixed => UnitExpr {
                    scale: p.factor,
                    dimension: d,
                    celsius: false,
                },
                _ => {
                    let u = parsed?;
                    return Err(Error::dimension(format!(
                        "'{t}' is a {}, expected a {}",
                        if u.celsius {
                            "temperature".to_string()
                        } else {
                            u.dimension.to_string()
                        },
                        expected_text(d)
                    )));
                }
            }
        }
        (Ok(u), None) => u,
        (Err(e), None) => {
            if READ_PREFIXES.iter().any(|p| p.symbol == rest) {
                return Err(Error::parse(format!(
                    "'{t}' has a prefix but no unit; write e.g. '{} {rest}ohm'",
                    &t[..t.len() - rest.len()].trim()
                )));
            }
            return Err(e);
        }
    };
    if unit.celsius {
        return Quantity::celsius_checked(value).map_err(|_| {
            Error::out_of_range(format!("'{t}' is below absolute zero (−273.15 °C)"))
        });
    }
    let si = value * unit.scale;
    if !si.is_finite() {
        return Err(Error::parse(format!("'{t}' is too large to represent")));
    }
    Ok(Quantity::new(si, unit.dimension))
}

#[cfg(test)]
mod tests {
    use super::*;

    fn si(text: &str) -> f64 {
        parse_quantity(text, None).unwrap().value()
    }

    #[test]
    fn accepted_forms() {
        for t in ["4.7 uF", "4.7uF", "4.7µF", "4.7 μF", "4u7 F"] {
            let q = parse_quantity(t, None).unwrap();
            assert!((q.value() - 4.7e-6).abs() < 1e-18, "{t}");
            assert_eq!(q.dimension(), Dimension::CAPACITANCE, "{t}");
        }
        assert!((si("100 mΩ") - 0.1).abs() < 1e-15);
        assert!((si("100 mohm") - 0.1).abs() < 1e-15);
        assert!((si("2.2 kohm") - 2200.0).abs() < 1e-9);
        assert!((si("1e-3 H") - 1e-3).abs() < 1e-18);
        assert!((si("65 kHz") - 65e3).abs() < 1e-9);
        assert!((si("6 A/mm^2") - 6e6).abs() < 1e-6);
        assert!((si("24 mm²") - 24e-6).abs() < 1e-15);
        let r = parse_quantity("2.2k", Some(Dimension::RESISTANCE)).unwrap();
        assert!((r.value() - 2200.0).abs() < 1e-9);
        let r = parse_quantity("4k7", Some(Dimension::RESISTANCE)).unwrap();
        assert!((r.value() - 4700.0).abs() < 1e-9);
        let t = parse_quantity("25 °C", None).unwrap();
        assert!(t.is_absolute_temperature());
    }

    #[test]
    fn rejected_forms() {
        for t in [
            "",
            "abc",
            "4.7 uFx",
            "nan",
            "inf V",
            "1e999 V",
            "4.7 °C/W",
            "2.2k",
        ] {
            assert!(parse_quantity(t, None).is_err(), "{t}");
        }
        let e = parse_quantity("12", Some(Dimension::VOLTAGE)).unwrap_err();
        assert!(e.message().contains("no unit"), "{}", e.message());
        let e = parse_quantity("4.7 uF", Some(Dimension::VOLTAGE)).unwrap_err();
        assert_eq!(
            e.message(),
            "'4.7 uF' is a capacitance, expected a voltage (V)"
        );
    }
}
