//! Quantity algebra, formatting and parsing: properties (proptest) and fixed cases.

use gapwise::units::{format_quantity, parse_quantity, Dimension, Quantity};
use proptest::prelude::*;

const DIMS: [Dimension; 10] = [
    Dimension::NONE,
    Dimension::VOLTAGE,
    Dimension::CURRENT,
    Dimension::INDUCTANCE,
    Dimension::CAPACITANCE,
    Dimension::FREQUENCY,
    Dimension::RESISTANCE,
    Dimension::FLUX_DENSITY,
    Dimension::AREA,
    Dimension::POWER,
];

fn quantity() -> impl Strategy<Value = Quantity> {
    (
        prop_oneof![(-1e9f64..-1e-12), (1e-12f64..1e9)],
        0..DIMS.len(),
    )
        .prop_map(|(v, d)| Quantity::new(v, DIMS[d]))
}

proptest! {
    #[test]
    fn product_then_quotient_returns_the_value(a in quantity(), b in quantity()) {
        let r = a.mul(&b).div(&b);
        prop_assert_eq!(r.dimension(), a.dimension());
        prop_assert!((r.value() - a.value()).abs() <= 1e-12 * a.value().abs());
    }

    #[test]
    fn sum_then_difference_returns_the_value(a in quantity(), x in 1e-12f64..1e9) {
        let b = Quantity::new(x, a.dimension());
        let r = a.add(&b).unwrap().sub(&b).unwrap();
        let scale = a.value().abs().max(x);
        prop_assert!((r.value() - a.value()).abs() <= 1e-12 * scale);
    }

    #[test]
    fn unlike_dimensions_never_add_or_compare(a in quantity(), b in quantity()) {
        if a.dimension() != b.dimension() {
            prop_assert!(a.add(&b).is_err());
            prop_assert!(a.sub(&b).is_err());
            prop_assert!(a.compare(&b).is_err());
        } else {
            prop_assert!(a.add(&b).is_ok());
        }
    }

    #[test]
    fn format_then_parse_round_trips_within_display_precision(a in quantity()) {
        let text = format_quantity(a.value(), a.dimension(), false);
        let back = parse_quantity(&text, None).unwrap();
        prop_assert_eq!(back.dimension(), a.dimension(), "{}", text);
        // four significant digits: relative error at most half a unit in the 4th digit
        prop_assert!((back.value() - a.value()).abs() <= 5.001e-4 * a.value().abs(), "{} -> {}", text, back.value());
    }

    #[test]
    fn parser_never_panics(s in "\\PC{0,40}") {
        let _ = parse_quantity(&s, None);
        let _ = parse_quantity(&s, Some(Dimension::VOLTAGE));
    }

    #[test]
    fn parser_never_panics_on_unit_like_text(s in "[0-9.eE+-]{0,6} ?[munpkMGµμΩA-Za-z/^²³*·0-9]{0,8}") {
        let _ = parse_quantity(&s, None);
    }

    #[test]
    fn square_root_of_a_square_is_the_magnitude(a in quantity()) {
        let r = a.powi(2).sqrt().unwrap();
        prop_assert_eq!(r.dimension(), a.dimension());
        prop_assert!((r.value() - a.value().abs()).abs() <= 1e-12 * a.value().abs());
    }
}

#[test]
fn derived_units_print_as_engineers_write_them() {
    let cases = [
        ("12 V", "12 V"),
        ("0.0047 F", "4.7 mF"),
        ("4.7e-6 F", "4.7 µF"),
        ("1.1e-3 H", "1.1 mH"),
        ("65000 Hz", "65 kHz"),
        ("0.32 T", "320 mT"),
        ("2.4e-5 m^2", "24 mm²"),
        ("6e6 A/m^2", "6 A/mm²"),
        ("1e-3 V*s", "1 mWb"),
        ("5e9 V/s", "5 GV/s"),
        // lengths as the trade writes them (common practice, no published source): clearances,
        // wire diameters and air gaps in millimetres, micrometres only below 10 µm, metres
        // from one metre up (wire lengths, altitude)
        ("0.00064 m", "0.64 mm"),
        ("0.0254 m", "25.4 mm"),
        ("0.00001 m", "0.01 mm"),
        ("0.000005 m", "5 µm"),
        ("1.5 m", "1.5 m"),
        ("3000 m", "3000 m"),
    ];
    for (input, shown) in cases {
        assert_eq!(
            parse_quantity(input, None).unwrap().to_string(),
            shown,
            "{input}"
        );
    }
}

#[test]
fn junk_is_rejected_with_a_reason() {
    let e = parse_quantity("fast", None).unwrap_err();
    assert!(e.message().contains("does not start with a number"));
    let e = parse_quantity("4.7 uQ", None).unwrap_err();
    assert!(e.message().contains("unknown unit 'uQ'"));
    let e = parse_quantity("12", Some(Dimension::VOLTAGE)).unwrap_err();
    assert!(e.message().contains("no unit"));
}
