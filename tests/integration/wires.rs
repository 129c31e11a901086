//! Copper, skin depth and wire sizes against published values.

use super::common::eval;
use super::common::{check_near, eval_quantity};

#[test]
fn skin_depth_in_copper_at_20_c() {
    // δ = 66.2/√f mm for copper at 20 °C (Kazimierczuk, High-Frequency Magnetic Components,
    // 2nd ed. 2014, ch. 3; value recalled from memory), IACS resistivity per IEC 60028
    for (f, expected_mm) in [
        (50e3, 66.2 / 50e3f64.sqrt()),
        (100e3, 66.2 / 100e3f64.sqrt()),
        (200e3, 66.2 / 200e3f64.sqrt()),
    ] {
        let q = eval_quantity(&format!("skin_depth({f} * Hz, celsius(20))"));
        check_near(q, &format!("{expected_mm} mm"), 0.003);
    }
}

#[test]
fn skin_depth_in_copper_at_100_c() {
    // δ ≈ 7.5/√f cm at 100 °C (common practice, no published source)
    let q = eval_quantity("skin_depth(100 * kHz, celsius(100))");
    check_near(q, &format!("{} cm", 7.5 / 100e3f64.sqrt()), 0.02);
}

#[test]
fn awg_diameters() {
    // ASTM B258, Table 1 (value recalled from memory): bare diameters in inches
    for (gauge, inches) in [
        (-3, 0.4600),
        (10, 0.1019),
        (20, 0.0320),
        (24, 0.0201),
        (30, 0.0100),
        (36, 0.0050),
    ] {
        let q = eval_quantity(&format!("awg_diameter({gauge})"));
        check_near(q, &format!("{} mm", inches * 25.4), 0.003);
    }
}

#[test]
fn awg_outside_the_standard_is_an_error() {
    let e = super::common::eval_err("awg_diameter(57)");
    assert!(e.message.contains("outside the AWG range"), "{}", e.message);
}

#[test]
fn copper_resistance() {
    // IEC 60028: 1/58 Ω·mm²/m at 20 °C; 1 m of 1 mm² is 17.24 mΩ
    let q = eval_quantity("wire_dc_resistance(sqrt(4 * mm2 / pi), 1 * m, celsius(20))");
    check_near(q, "17.241 mohm", 1e-4);
    // 0.00393 /K: at 100 °C the resistance is 1.3144 times higher (IEC 60028)
    let r = eval_quantity("copper_resistivity(celsius(100)) / copper_resistivity(celsius(20))");
    check_near(r, "1.3144", 1e-4);
    assert_eq!(eval("metric_wire_at_or_above(0.43 * mm)"), "0.45 mm");
}
