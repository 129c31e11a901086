//! Preferred values (IEC 60063), dividers, reactance and resonance.

use super::common::{check_near, eval, eval_quantity};
use gapwise::passives::ESeries;

#[test]
fn e24_values() {
    // IEC 60063:2015, E24 table: the eight values that differ from the rounded geometric series
    let m = ESeries::E24.mantissas();
    for v in [2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 8.2] {
        assert!(m.contains(&v), "E24 lacks {v}");
    }
    assert_eq!(m.len(), 24);
    assert_eq!(m[23], 9.1);
}

#[test]
fn e96_and_e192_values() {
    // IEC 60063:2015, E96 table (value recalled from memory)
    let m = ESeries::E96.mantissas();
    for v in [1.00, 1.02, 1.05, 2.49, 3.01, 4.99, 6.04, 8.06, 9.76] {
        assert!(m.contains(&v), "E96 lacks {v}");
    }
    // IEC 60063:2015, E192 table: 9.20 where the rounded series would give 9.19
    // (value recalled from memory)
    assert!(ESeries::E192.mantissas().contains(&9.20));
    assert!(!ESeries::E192.mantissas().contains(&9.19));
}

#[test]
fn nearest_values_at_the_prompt() {
    // IEC 60063:2015, E24: 4.7 is the nearest to 4.8, 5.1 the next above
    assert_eq!(eval("nearest_preferred(4.8 * kohm, \"E24\")"), "4.7 kΩ");
    assert_eq!(eval("preferred_at_or_above(4.8 * kohm, \"E24\")"), "5.1 kΩ");
    assert_eq!(eval("preferred_at_or_below(4.8 * uF, \"E6\")"), "4.7 µF");
    assert_eq!(
        eval("preferred_values_between(1 * kohm, 2 * kohm, \"E12\")"),
        "[1 kΩ, 1.2 kΩ, 1.5 kΩ, 1.8 kΩ]"
    );
}

#[test]
fn divider_meets_its_own_equation() {
    // Vout = Vref·(1 + Ru/Rl), the divider equation (Basso 2012, shunt-regulator chapter)
    let q = eval_quantity(
        "let d = resistor_divider(#{output_voltage: 12 * V, reference_voltage: 2.5 * V, series: \"E96\"}); \
         2.5 * V * (1 + d.upper_resistor / d.lower_resistor)",
    );
    check_near(q, "12 V", 0.005);
}

#[test]
fn reactance_and_resonance() {
    // X_L = 2π·f·L: 1 mH at 65 kHz is 408.4 Ω (Erickson & Maksimović 2020, ch. 8 impedance)
    check_near(
        eval_quantity("inductive_reactance(1 * mH, 65 * kHz)"),
        "408.41 ohm",
        1e-4,
    );
    // X_C = 1/(2π·f·C): 100 nF at 150 kHz is 10.61 Ω
    check_near(
        eval_quantity("capacitive_reactance(100 * nF, 150 * kHz)"),
        "10.610 ohm",
        1e-4,
    );
    // f0 = 1/(2π·√(LC)): 1 µH with 100 µF resonates at 15.92 kHz
    check_near(
        eval_quantity("lc_resonant_frequency(1 * uH, 100 * uF)"),
        "15.915 kHz",
        1e-4,
    );
    check_near(
        eval_quantity("lc_characteristic_impedance(1 * uH, 100 * uF)"),
        "0.1 ohm",
        1e-9,
    );
    check_near(
        eval_quantity("capacitance_for_resonance(1 * uH, 15.9155 * kHz)"),
        "100 uF",
        1e-4,
    );
}

#[test]
fn a_design_record_serialises_to_json_with_units_issue_10() {
    use gapwise::passives::{resistor_divider, DividerSpec};
    use gapwise::units::uom_si as si;
    use gapwise::units::{ElectricCurrent, ElectricPotential};
    let d = resistor_divider(&DividerSpec {
        output_voltage: ElectricPotential::new::<si::electric_potential::volt>(12.0),
        reference_voltage: ElectricPotential::new::<si::electric_potential::volt>(2.5),
        divider_current: ElectricCurrent::new::<si::electric_current::milliampere>(1.0),
        reference_input_current: ElectricCurrent::new::<si::electric_current::microampere>(2.0),
        series: ESeries::E96,
    })
    .unwrap();
    // serde gives the record's fields in review order, each quantity in coherent SI with
    // its unit; the numbers are the record's own (no reference value is checked here)
    let j = serde_json::to_string(&d).unwrap();
    assert!(j.starts_with(r#"{"upper_resistor":{"value":"#), "{j}");
    let v: serde_json::Value = serde_json::from_str(&j).unwrap();
    assert_eq!(v["actual_output_voltage"]["unit"], "V");
    assert_eq!(v["divider_current"]["dimension"], "current");
    let volts = d
        .actual_output_voltage
        .get::<si::electric_potential::volt>();
    assert_eq!(v["actual_output_voltage"]["value"].as_f64(), Some(volts));
    assert!(v["output_error"].is_f64());
}
