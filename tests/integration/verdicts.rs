//! Honest verdicts (issue 16): overridden limits are marked, limits outside physical sense are
//! refused, checks are never dropped by a parameter, ignored keys are reported, grids expand.

use super::common::{eval, eval_err, host};
use gapwise::flyback::*;
use gapwise::rules::{Comparison, Rule, RuleBook, Status};
use gapwise::units::{si, Dimension, Quantity};
use proptest::prelude::*;

fn fernbank_12v() -> FlybackSpec {
    let mut o = OutputWinding::new(si(12.0), si(1.25));
    o.rectifier_drop = si(0.6);
    o.rectifier_voltage_rating = Some(si(100.0));
    o.ripple_current_rating = Some(si(2.0));
    FlybackSpec::universal(o)
}

const LOOSE_DRAIN: &str = "let d = flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, clamp_voltage_above_reflected: 50 * V, rule_limits: #{drain_voltage_derating: 10000 * V}}); \
     let c = flyback_checks(d).filter(|c| c.id == \"drain_voltage_derating\")[0];";

#[test]
fn overridden_limit_is_marked_issue_16() {
    // the loosened drain limit used to pass with the default rule's text
    assert_eq!(eval(&format!("{LOOSE_DRAIN} c.status")), "pass");
    assert_eq!(eval(&format!("{LOOSE_DRAIN} c.limit_overridden")), "true");
    assert_eq!(eval(&format!("{LOOSE_DRAIN} c.limit_loosened")), "true");
    // default: 85 % of the 650 V switch rating (common practice, no published source)
    assert_eq!(eval(&format!("{LOOSE_DRAIN} c.default_limit")), "552.5 V");
    let text = eval(&format!("{LOOSE_DRAIN} c.description"));
    assert!(
        text.contains("overridden (loosened): limit 10 kV instead of the default 552.5 V"),
        "{text}"
    );
    let line = eval(&format!("{LOOSE_DRAIN} c.to_string()"));
    assert!(
        line.contains("10 kV (overridden and loosened, default 552.5 V)"),
        "{line}"
    );
    // tables carry it as columns, the summary lists it
    let t = eval(&format!(
        "{LOOSE_DRAIN} let t = checks_table(flyback_checks(d)); t.to_string()"
    ));
    assert!(t.contains("limit_overridden"), "{t}");
    assert!(t.contains("default_limit"), "{t}");
    assert_eq!(
        eval(&format!("{LOOSE_DRAIN} d.overridden_limits")),
        "drain_voltage_derating (loosened)"
    );
    // the report shows it too
    let r = eval(&format!("{LOOSE_DRAIN} flyback_report(d, \"t\")"));
    assert!(r.contains("overridden (loosened)"), "{r}");
    // without an override nothing is marked
    assert_eq!(
        eval(
            "flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}).overridden_limits"
        ),
        ""
    );
}

#[test]
fn set_limit_marks_the_rule_and_a_reset_clears_it_issue_16() {
    let book = "let rules = rule_book(); rules.add_rule(#{id: \"creepage\", description: \"creepage primary to secondary\", comparison: \"at_least\", limit: 6.4 * mm});";
    let text = eval(&format!(
        "{book} rules.set_limit(\"creepage\", 4 * mm); rules.check(\"creepage\", 5 * mm).description"
    ));
    assert!(
        text.contains("overridden (loosened): limit 4 mm instead of the default 6.4 mm"),
        "{text}"
    );
    let shown = eval(&format!(
        "{book} rules.set_limit(\"creepage\", 4 * mm); rules.to_string()"
    ));
    assert!(shown.contains("overridden (loosened)"), "{shown}");
    // a tighter limit is marked overridden but not loosened
    let text = eval(&format!(
        "{book} rules.set_limit(\"creepage\", 8 * mm); rules.check(\"creepage\", 9 * mm).description"
    ));
    assert!(
        text.contains("overridden: limit 8 mm instead of the default 6.4 mm"),
        "{text}"
    );
    // twice overridden: the default stays the rule's own
    let text = eval(&format!(
        "{book} rules.set_limit(\"creepage\", 8 * mm); rules.set_limit(\"creepage\", 5 * mm); rules.check(\"creepage\", 9 * mm).description"
    ));
    assert!(text.contains("default 6.4 mm"), "{text}");
    // set back to the default: no longer marked
    assert_eq!(
        eval(&format!(
            "{book} rules.set_limit(\"creepage\", 4 * mm); rules.set_limit(\"creepage\", 6.4 * mm); rules.check(\"creepage\", 7 * mm).limit_overridden"
        )),
        "false"
    );
}

#[test]
fn regulation_rule_limits_are_marked_issue_16() {
    let b = gapwise::feedback::regulation_rule_book(&[(
        "phase_margin_minimum".into(),
        Quantity::number(20.0),
    )])
    .unwrap();
    let r = b.get("phase_margin_minimum").unwrap();
    assert!(r.overridden());
    assert!(r.text().contains("overridden (loosened)"), "{}", r.text());
    assert!(!b.get("gain_margin_minimum").unwrap().overridden());
}

#[test]
fn loosened_flux_limit_of_a_transformer_is_marked_issue_16() {
    let spec = "#{core: \"EF25\", primary_inductance: 1.2 * mH, switching_frequency: 65 * kHz, primary_peak_current: 0.5 * A, duty_cycle: 0.4, secondary_conduction_fraction: 0.45, current_limit: 0.55 * A, reflected_voltage: 90 * V, output_voltage: 12 * V, margin_width: 2 * mm, required_creepage: 4 * mm, max_flux_density: 0.45 * T}";
    let c = format!(
        "let c = transformer_design({spec}).checks.filter(|c| c.id == \"flux_at_current_limit\")[0];"
    );
    assert_eq!(eval(&format!("{c} c.limit_loosened")), "true");
    // the house default is 0.3 T (common practice, no published source)
    assert!(eval(&format!("{c} c.description")).contains("instead of the default 300 mT"));
    let plain = spec.replace(", max_flux_density: 0.45 * T", "");
    assert_eq!(
        eval(&format!(
            "transformer_design({plain}).checks.filter(|c| c.limit_overridden).len()"
        )),
        "0"
    );
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(12))]
    /// Overriding one rule's limit changes that check's limit, its text (the override note
    /// appended), its margin and verdict as the new limit implies, and nothing else.
    #[test]
    fn an_override_changes_only_that_verdicts_limit(limit_c in 60.0f64..200.0) {
        let base = flyback_design(&fernbank_12v()).unwrap();
        let mut s = fernbank_12v();
        let limit = Quantity::celsius(limit_c);
        s.rule_limits = vec![("switch_junction_temperature".into(), limit)];
        let over = flyback_design(&s).unwrap();
        prop_assert_eq!(base.checks.len(), over.checks.len());
        for (a, b) in base.checks.iter().zip(&over.checks) {
            if a.id != "switch_junction_temperature" {
                prop_assert_eq!(a, b);
                continue;
            }
            prop_assert_eq!(a.value, b.value);
            prop_assert_eq!(b.limit, limit);
            prop_assert_eq!(b.default_limit, Some(a.limit));
            prop_assert!(b.description.starts_with(&a.description));
            prop_assert!(b.description.contains("overridden"));
            let fails = b.value.value() > limit.value();
            prop_assert_eq!(b.status == Status::Fail, fails);
        }
    }
}

proptest! {
    /// In any rule book, `set_limit` gives the verdict a fresh rule with the new limit would
    /// give, with the same id, reference, comparison and value, and the description of the
    /// default rule followed by the override note.
    #[test]
    fn set_limit_changes_only_the_limit_and_its_note(
        default in 0.1f64..1000.0,
        new in 0.1f64..1000.0,
        value in 0.0f64..2000.0,
        at_least in any::<bool>(),
    ) {
        prop_assume!(new != default);
        let cmp = if at_least { Comparison::AtLeast } else { Comparison::AtMost };
        let v = |x: f64| Quantity::new(x, Dimension::VOLTAGE);
        let rule = |l: f64| Rule::new("r", "a rule", "house rule", cmp, v(l), 0.05).unwrap();
        let mut book = RuleBook::new();
        book.add(rule(default));
        let before = book.check("r", v(value)).unwrap();
        book.set_limit("r", v(new)).unwrap();
        let after = book.check("r", v(value)).unwrap();
        let fresh = rule(new).check(v(value)).unwrap();
        prop_assert_eq!(&after.id, &before.id);
        prop_assert_eq!(&after.reference, &before.reference);
        prop_assert_eq!(after.comparison, before.comparison);
        prop_assert_eq!(after.value, before.value);
        prop_assert_eq!(after.limit, v(new));
        prop_assert_eq!(after.status, fresh.status);
        prop_assert_eq!(after.margin, fresh.margin);
        prop_assert_eq!(after.default_limit, Some(v(default)));
        prop_assert_eq!(
            after.description.clone(),
            format!("a rule; {}", gapwise::rules::override_note(cmp, v(new), v(default)))
        );
        prop_assert_eq!(after.loosened(), if at_least { new < default } else { new > default });
    }
}

#[test]
fn limits_outside_physical_sense_are_errors_issue_16() {
    let e = eval_err("flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, rule_limits: #{bulk_valley_minimum: -100 * V}})").to_string();
    assert!(e.contains("bulk_valley_minimum"), "{e}");
    assert!(e.contains("-100 V"), "{e}");
    let e = eval_err("flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, rule_limits: #{drain_voltage_derating: -100 * V}})").to_string();
    assert!(
        e.contains("rule_limits.drain_voltage_derating") && e.contains("-100 V"),
        "{e}"
    );
    let e = eval_err("flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, rule_limits: #{duty_cycle_limit: 2}})").to_string();
    assert!(
        e.contains("rule_limits.duty_cycle_limit") && e.contains("below 1"),
        "{e}"
    );
    let e = eval_err("flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, rule_limits: #{hold_up_time: 0 * ms}, hold_up_time: 10 * ms})").to_string();
    assert!(e.contains("hold_up_time"), "{e}");
    let e = eval_err("let rules = rule_book(); rules.add_rule(#{id: \"creepage\", description: \"creepage\", comparison: \"at_least\", limit: 6.4 * mm}); rules.set_limit(\"creepage\", 0 * mm)").to_string();
    assert!(e.contains("creepage") && e.contains("got 0"), "{e}");
    let e = eval_err("let rules = rule_book(); rules.add_rule(#{id: \"creepage\", description: \"creepage\", comparison: \"at_least\", limit: 0 * mm})").to_string();
    assert!(e.contains("creepage") && e.contains("got 0"), "{e}");
    // a NaN limit, natively
    let mut b = RuleBook::new();
    let mm = |x: f64| Quantity::new(x * 1e-3, Dimension::LENGTH);
    b.add(
        Rule::new(
            "creepage",
            "creepage",
            "house rule",
            Comparison::AtLeast,
            mm(6.4),
            0.05,
        )
        .unwrap(),
    );
    assert!(b.set_limit("creepage", mm(f64::NAN)).is_err());
    assert!(b.set_limit("creepage", mm(-1.0)).is_err());
    assert!(
        !b.get("creepage").unwrap().overridden(),
        "a refused limit leaves the rule as it was"
    );
    assert!(Rule::new("x", "x", "x", Comparison::AtLeast, mm(f64::NAN), 0.05).is_err());
}

const TRANSFORMER: &str = "#{core: \"EF25\", primary_inductance: 1.2 * mH, switching_frequency: 65 * kHz, primary_peak_current: 0.5 * A, duty_cycle: 0.4, secondary_conduction_fraction: 0.45, current_limit: 0.55 * A, reflected_voltage: 90 * V, output_voltage: 12 * V";

#[test]
fn construction_values_outside_physical_sense_are_errors_issue_16() {
    let e = eval_err(&format!(
        "transformer_design({TRANSFORMER}, margin_width: 2 * mm, tape_thickness: 0 * mm}})"
    ))
    .to_string();
    assert!(e.contains("tape_thickness"), "{e}");
    let e = eval_err(&format!(
        "transformer_design({TRANSFORMER}, margin_width: 2 * mm, insulation_layers: 0}})"
    ))
    .to_string();
    assert!(e.contains("insulation_layers"), "{e}");
    // with a triple-insulated secondary the wire is the insulation: zero tape layers is fine
    assert_eq!(
        eval(&format!(
            "transformer_design({TRANSFORMER}, insulation_layers: 0, secondary_triple_insulated: true}}).design.primary_turns > 0"
        )),
        "true"
    );
}

#[test]
fn a_check_is_never_removed_by_a_parameter_issue_16() {
    let na = format!(
        "let x = transformer_design({TRANSFORMER}, margin_width: 0 * mm}}); let c = x.checks.filter(|c| c.id == \"creepage_along_bobbin\");"
    );
    assert_eq!(eval(&format!("{na} c.len()")), "1");
    assert_eq!(eval(&format!("{na} c[0].status")), "not_applicable");
    let why = eval(&format!("{na} c[0].description"));
    assert!(why.contains("no `required_creepage` given"), "{why}");
    // not a failure, and the worst status of the rest stands
    assert_eq!(eval(&format!("{na} c[0].passed")), "true");
    assert_eq!(eval(&format!("{na} worst_status(c)")), "not_applicable");
    let h = host();
    let _ = h
        .eval(
            &format!("{na} output_table(\"checks\", checks_table(x.checks));"),
            "<test>",
        )
        .unwrap();
    assert_eq!(h.take_failed_checks(), 0);
    let t = eval(&format!("{na} checks_table(c).to_string()"));
    assert!(t.contains("not_applicable"), "{t}");
    // with a triple-insulated secondary it is listed too, with that reason
    let why = eval(&format!(
        "transformer_design({TRANSFORMER}, secondary_triple_insulated: true}}).checks.filter(|c| c.id == \"creepage_along_bobbin\")[0].description"
    ));
    assert!(why.contains("triple-insulated"), "{why}");
    // given a requirement, it is checked
    assert_eq!(
        eval(&format!(
            "transformer_design({TRANSFORMER}, margin_width: 0 * mm, required_creepage: 6.4 * mm}}).checks.filter(|c| c.id == \"creepage_along_bobbin\")[0].status"
        )),
        "fail"
    );
}

#[test]
fn grid_expands_range_axes_issue_16() {
    // a range used to be taken as one value (one variant)
    assert_eq!(eval("grid(#{n: 1..4}).len()"), "3");
    assert_eq!(eval("grid(#{n: 1..=4}).len()"), "4");
    assert_eq!(eval("grid(#{n: 1..4}).map(|m| m.n)"), "[1, 2, 3]");
    assert_eq!(eval("grid(#{a: [1, 2], n: 0..3}).len()"), "6");
    // an empty range has no values
    let e = eval_err("grid(#{n: 4..1})").to_string();
    assert!(e.contains("grid axis `n` has no values"), "{e}");
    // a huge range is refused before it is built
    let e = eval_err("grid(#{n: 0..1000000000000})").to_string();
    assert!(e.contains("axis `n` is a range"), "{e}");
    // families run over it
    assert_eq!(
        eval("family(|v| #{twice: v.n * 2}, grid(#{n: 1..=3})).rows"),
        "3"
    );
}

const DCM_HARMONIC: &str =
    "primary_current_harmonic(#{conduction_mode: \"dcm\", peak_current: 1 * A, duty: 0.45";

#[test]
fn ignored_keys_are_still_validated_issue_16() {
    // in DCM the valley current is not used; it used to accept any unit and NaN
    let e = eval_err(&format!("{DCM_HARMONIC}, valley_current: 3 * V}}, 1)")).to_string();
    assert!(e.contains("valley_current") && e.contains("A"), "{e}");
    let e = eval_err(&format!(
        "{DCM_HARMONIC}, valley_current: (0.0 / 0.0) * A}}, 1)"
    ))
    .to_string();
    assert!(e.contains("valley_current") && e.contains("finite"), "{e}");
    let e = eval_err(
        "flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, leakage_inductance: 20 * uH, leakage_fraction: 1 * V})",
    )
    .to_string();
    assert!(e.contains("leakage_fraction"), "{e}");
}

#[test]
fn ignored_keys_are_reported_issue_16() {
    let warned = |src: &str| -> Vec<String> {
        let h = host();
        let _ = h
            .eval(src, "<test>")
            .unwrap_or_else(|e| panic!("{src}\n{e}"));
        h.take_warnings()
    };
    let w = warned(&format!("{DCM_HARMONIC}, valley_current: 0.3 * A}}, 1)"));
    assert_eq!(w.len(), 1, "{w:?}");
    assert!(
        w[0].contains("primary_current_harmonic: key `valley_current`"),
        "{w:?}"
    );
    // a zero valley agrees with DCM: nothing to report
    assert!(warned(&format!("{DCM_HARMONIC}, valley_current: 0 * A}}, 1)")).is_empty());
    // a Zener-clamp key on an RCD clamp
    let w = warned(
        "flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, zener_tolerance: 0.1})",
    );
    assert!(w.iter().any(|w| w.contains("`zener_tolerance`")), "{w:?}");
    assert!(warned("flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, clamp: \"zener\", zener_tolerance: 0.1})").is_empty());
    // the leakage fraction when the leakage inductance is given
    let w = warned("flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, leakage_inductance: 20 * uH, leakage_fraction: 0.02})");
    assert!(w.iter().any(|w| w.contains("`leakage_fraction`")), "{w:?}");
    // in a family, once for all variants
    let w = warned(&format!(
        "family(|v| {DCM_HARMONIC}, valley_current: v.i}}, 1), grid(#{{i: [0.1 * A, 0.2 * A, 0.3 * A]}}))"
    ));
    assert_eq!(w.len(), 1, "{w:?}");
}

#[test]
fn no_function_example_uses_an_ignored_key_issue_16() {
    let h = host();
    for d in h.docs() {
        let _ = h.eval(&format!("let rules = rule_book(); rules.add_rule(#{{id: \"switch_voltage\", description: \"x\", limit: 552.5 * V}}); {}", d.example), "<example>");
        let w = h.take_warnings();
        assert!(w.is_empty(), "example of {}: {w:?}", d.name);
    }
}

#[test]
fn filter_checks_without_a_stage_or_y_capacitance_are_listed_issue_16() {
    // no Y capacitance allowed: the touch-current check used to vanish
    let m = "#{switching_frequency: 65 * kHz, peak_current: 1 * A, duty: 0.45, bulk_capacitance: 47 * uF, drain_voltage: 480 * V, parasitic_capacitance: 0.01 * pF, max_y_capacitance: 0 * nF, minimum_input_voltage: 100 * V, input_power: 33 * W}";
    let c = eval(&format!(
        "input_filter_design({m}).checks.filter(|c| c.id == \"y_capacitor_touch_current\").map(|c| c.status)"
    ));
    assert_eq!(c, "[\"not_applicable\"]");
    let r = eval(&format!("input_filter_report({m})"));
    assert!(
        r.contains("not_applicable y_capacitor_touch_current"),
        "{r}"
    );
}

#[test]
fn flyback_rules_without_their_input_are_listed_not_dropped_issue_16() {
    let d = "let d = flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A});";
    let status = |id: &str| {
        eval(&format!(
            "{d} flyback_checks(d).filter(|c| c.id == \"{id}\").map(|c| c.status)"
        ))
    };
    for id in [
        "hold_up_time",
        "bulk_capacitor_ripple_current",
        "rectifier_voltage_derating",
        "output_capacitor_ripple_current",
    ] {
        assert_eq!(status(id), "[\"not_applicable\"]", "{id}");
    }
    // given its input, the rule is checked
    let s = eval("flyback_checks(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, hold_up_time: 10 * ms})).filter(|c| c.id == \"hold_up_time\")[0].status");
    assert_ne!(s, "not_applicable");
    // not applicable is neither a failure nor the worst status of a design with real checks
    assert_eq!(eval(&format!("{d} d.failed_checks")), "0");
    assert_ne!(eval(&format!("{d} d.worst_status")), "not_applicable");
}

#[test]
fn a_loosened_junction_limit_of_a_flyback_is_marked_issue_16() {
    let c = eval("flyback_checks(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, switch_max_junction_temperature: celsius(175)})).filter(|c| c.id == \"switch_junction_temperature\")[0].description");
    // the house limit is 125 °C (common practice, no published source)
    assert!(
        c.contains("overridden (loosened): limit 175 °C instead of the default 125 °C"),
        "{c}"
    );
    assert_eq!(
        eval(
            "flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}).overridden_limits"
        ),
        ""
    );
}
