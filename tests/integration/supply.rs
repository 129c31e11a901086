//! The whole supply from one specification (`supply_design`): the specification read from
//! TOML, JSON and Rhai with the same names, the power stage and transformer made consistent,
//! every part's checks collected with their worst corner, bad input named.
//!
//! The consistency checks compare the supply's power stage with its own transformer (the loop
//! must close within its stated tolerance): they test the method, not a published value.

use super::common::host;
use gapwise::flyback::flyback_design;
use gapwise::magnetics::{transformer_check, transformer_design};
use gapwise::supply::{
    supply_design, SupplySpec, LEAKAGE_TOLERANCE, LOSS_TOLERANCE, SUPPLY_SECTIONS,
};
use gapwise::ErrorKind;

const DEMO: &str = include_str!("../../scripts/fernbank_12v.toml");

fn demo_spec() -> SupplySpec {
    toml::from_str(DEMO).expect("the demo spec reads")
}

#[test]
fn toml_and_json_give_the_same_spec() {
    let from_toml = demo_spec();
    let v: serde_json::Value = toml::from_str(DEMO).unwrap();
    let from_json = SupplySpec::from_json(serde_json::from_str(&v.to_string()).unwrap()).unwrap();
    assert_eq!(from_toml, from_json);
    assert_eq!(from_toml.power_stage.output_voltage.value, 12.0);
    assert_eq!(from_toml.isolation.altitude.value, 3000.0);
}

#[test]
fn the_consistency_loop_closes_within_its_tolerance() {
    let s = supply_design(&demo_spec()).unwrap();
    let p_out = s.flyback_spec.output_power().value;
    // the loss the power stage used at the transformer's corner equals the transformer's
    // computed copper + core loss within LOSS_TOLERANCE of the output power
    // (the method's own tolerance; common practice, no published source)
    let corner = s.power_stage.corner(s.transformer_corner).unwrap();
    let used = corner.losses.transformer.value;
    let computed = s.transformer.total_loss.value;
    assert!(
        (used - computed).abs() <= LOSS_TOLERANCE * p_out,
        "power stage used {used} W, transformer computed {computed} W"
    );
    // the clamp sees the transformer's leakage
    let lk_used = s.power_stage.leakage_inductance.value;
    let lk = s.transformer.leakage_inductance.value;
    assert!(
        (lk_used - lk).abs() <= LEAKAGE_TOLERANCE * lk,
        "{lk_used} vs {lk}"
    );
    // the transformer was designed for the power stage it sits in: redesigning it from the
    // final power stage gives the same transformer (no hidden state between the parts)
    let d = flyback_design(&s.flyback_spec).unwrap();
    assert_eq!(d.primary_inductance, s.power_stage.primary_inductance);
    let again = match &s.given_turns {
        None => transformer_design(&s.transformer_spec).unwrap(),
        Some(g) => transformer_check(&s.transformer_spec, g).unwrap().design,
    };
    assert_eq!(again.total_loss, s.transformer.total_loss);
    assert_eq!(again.leakage_inductance, s.transformer.leakage_inductance);
    // and the loop did something: the starting estimate (2 % of output power) was replaced
    assert!(s.consistency.len() >= 2, "{:?}", s.consistency);
    assert_ne!(s.flyback_spec.losses.transformer_loss_fraction, 0.02);
}

#[test]
fn every_part_reports_its_checks_with_corners() {
    let s = supply_design(&demo_spec()).unwrap();
    for part in [
        "power_stage",
        "transformer",
        "regulation",
        "emi_filter",
        "isolation",
    ] {
        assert!(
            s.checks.iter().any(|c| c.part == part),
            "no checks from {part}"
        );
    }
    let drain = s
        .checks
        .iter()
        .find(|c| c.check.id == "drain_voltage_derating")
        .unwrap();
    // the drain peak is highest at the current limit, high line (the clamp is sized there)
    assert_eq!(
        drain.worst_corner.as_deref(),
        Some("current_limit_high_line")
    );
    assert_eq!(
        drain.check.limit.value(),
        552.5,
        "the house rule's override reaches the rule"
    );
    let flux = s
        .checks
        .iter()
        .find(|c| c.check.id == "flux_at_current_limit")
        .unwrap();
    assert_eq!(
        flux.worst_corner.as_deref(),
        Some("current_limit_worst_case")
    );
    let pm = s
        .checks
        .iter()
        .find(|c| c.check.id == "phase_margin_minimum")
        .unwrap();
    assert!(
        pm.worst_corner
            .as_deref()
            .is_some_and(|c| c.contains("ctr")),
        "{pm:?}"
    );
    assert!(!pm.check.description.contains("(worst:"));
}

#[test]
fn every_key_has_help_and_sections_have_unique_keys() {
    for (section, _, keys) in SUPPLY_SECTIONS {
        let mut names: Vec<&str> = keys.iter().map(|k| k.name).collect();
        assert!(!names.is_empty(), "{section}");
        let n = names.len();
        names.sort_unstable();
        names.dedup();
        assert_eq!(n, names.len(), "duplicate key in {section}");
        for k in keys.iter() {
            assert!(!k.help.is_empty(), "{section}.{} has no help", k.name);
        }
    }
}

#[test]
fn bad_input_names_the_key_and_unit() {
    let bad = DEMO.replace("output_voltage = \"12 V\"", "output_voltage = \"12 A\"");
    let e = toml::from_str::<SupplySpec>(&bad).unwrap_err().to_string();
    assert!(e.contains("power_stage.output_voltage"), "{e}");
    let bad = DEMO.replace("[isolation]", "[isolaton]");
    let e = toml::from_str::<SupplySpec>(&bad).unwrap_err().to_string();
    assert!(e.contains("isolaton"), "{e}");
    let mut spec = demo_spec();
    spec.transformer.core = "no such core".into();
    let e = supply_design(&spec).unwrap_err();
    assert!(e.to_string().contains("no such core"), "{e}");
    spec = demo_spec();
    spec.power_stage.output_current = gapwise::units::si(-1.0);
    let e = supply_design(&spec).unwrap_err();
    assert_eq!(e.kind(), ErrorKind::InvalidSpec, "{e}");
}

#[test]
fn the_script_function_reads_the_same_keys() {
    let h = host();
    let v = h
        .eval(
            r#"let sd = supply_design(#{
                power_stage: #{ output_voltage: 12 * V, output_current: 1.25 * A, target_valley_voltage: 80 * V },
                transformer: #{ core: "EF25", max_flux_density: 0.32 * T },
                emi_filter: #{ margin: 6 * dB },
                isolation: #{ altitude: 3000 * m, provided_clearance: 8 * mm },
            });
            sd.summary.primary_turns"#,
            "<test>",
        )
        .unwrap_or_else(|e| panic!("{e}"));
    let turns = v.as_float().unwrap();
    let native = supply_design(
        &SupplySpec::from_json(serde_json::json!({
            "power_stage": {"output_voltage": "12 V", "output_current": "1.25 A", "target_valley_voltage": "80 V"},
            "transformer": {"core": "EF25", "max_flux_density": "0.32 T"},
            "emi_filter": {"margin": "6 dB"},
            "isolation": {"altitude": "3000 m", "provided_clearance": "8 mm"},
        }))
        .unwrap(),
    )
    .unwrap();
    assert_eq!(turns, f64::from(native.transformer.primary_turns));
    let e = h
        .eval(
            r#"supply_design(#{ power_stage: #{ output_voltage: 12 * V, output_curent: 1 * A }, transformer: #{ core: "EF25" } })"#,
            "<test>",
        )
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("output_curent") && e.contains("output_current"),
        "{e}"
    );
}

#[test]
fn script_bad_values_are_named_not_passed_on() {
    let h = host();
    let e = h
        .eval(
            r#"supply_design(#{ power_stage: #{ output_voltage: (0.0 / 0.0) * V, output_current: 1 * A }, transformer: #{ core: "E30/15/7" } })"#,
            "<test>",
        )
        .unwrap_err()
        .to_string();
    assert!(e.contains("output_voltage"), "{e}");
    let e = h
        .eval(
            r#"supply_design(#{ power_stage: #{ output_voltage: 12 * A, output_current: 1 * A }, transformer: #{ core: "E30/15/7" } })"#,
            "<test>",
        )
        .unwrap_err()
        .to_string();
    assert!(
        e.contains("power_stage.output_voltage") && e.contains("V"),
        "{e}"
    );
    let e = h
        .eval(
            r#"supply_design(#{ power_stage: #{ output_voltage: 12 * V, output_current: 1 * A } })"#,
            "<test>",
        )
        .unwrap_err()
        .to_string();
    assert!(e.contains("transformer"), "{e}");
}

proptest::proptest! {
    #![proptest_config(proptest::prelude::ProptestConfig::with_cases(12))]
    /// Over the family's load range the whole supply either designs with the power stage and
    /// transformer consistent within the stated tolerance, or ends in a named error — never a
    /// panic, NaN or a loop left open (common practice, no published source: the method's own
    /// tolerance).
    #[test]
    fn the_loop_closes_or_says_why(current in 0.6f64..1.6, valley in 70.0f64..95.0) {
        let mut spec = demo_spec();
        spec.power_stage.output_current = gapwise::units::si(current);
        spec.power_stage.target_valley_voltage = Some(gapwise::units::si(valley));
        match supply_design(&spec) {
            Ok(s) => {
                let p_out = s.flyback_spec.output_power().value;
                let used = s.power_stage.corner(s.transformer_corner).unwrap().losses.transformer.value;
                let computed = s.transformer.total_loss.value;
                proptest::prop_assert!(computed.is_finite() && computed > 0.0);
                proptest::prop_assert!((used - computed).abs() <= LOSS_TOLERANCE * p_out);
                proptest::prop_assert!(s.power_stage.efficiency > 0.0 && s.power_stage.efficiency < 1.0);
                for c in &s.checks {
                    proptest::prop_assert!(c.check.margin.is_finite(), "{:?}", c);
                }
            }
            Err(e) => {
                let text = e.to_string();
                proptest::prop_assert!(text.starts_with("supply_design") || text.contains('`'), "{text}");
            }
        }
    }
}

#[test]
fn the_script_help_lists_exactly_the_specification_keys() {
    // the help of supply_design and the serde reader come from one definition: every
    // `section.key` of the help is a key the reader accepts, with the same default, and back
    let doc = host()
        .doc("supply_design")
        .expect("supply_design is documented");
    let mut from_spec: Vec<String> = vec!["name".into()];
    for (section, _, keys) in SUPPLY_SECTIONS {
        from_spec.extend(keys.iter().map(|k| format!("{section}.{}", k.name)));
    }
    let from_help: Vec<String> = doc.keys.iter().map(|k| k.name.to_string()).collect();
    assert_eq!(from_help, from_spec);
    let demo = demo_spec();
    // a default in the help reads to the value the reader gives when the key is left out
    let max_layers = doc
        .keys
        .iter()
        .find(|k| k.name == "transformer.max_layers")
        .unwrap();
    assert_eq!(
        max_layers.default,
        gapwise::script::docs::ParamDefault::Value("3")
    );
    assert_eq!(demo.transformer.max_layers, 3);
}
