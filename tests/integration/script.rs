//! The script surface: operators, constants, conversions, errors with places, records, families.

use super::common::{eval, eval_err, host};

#[test]
fn prompt_examples_from_the_foundation_issue() {
    assert_eq!(eval("12 * V * (1.5 * A)"), "18 W");
    assert_eq!(eval("(4.7 * uF).to(\"nF\")"), "4700 nF");
    let e = eval_err("1 * mH + 1 * A");
    assert!(
        e.message
            .contains("cannot add 1 mH (inductance) and 1 A (current)"),
        "{}",
        e.message
    );
    assert_eq!(e.line, Some(1));
}

#[test]
fn ints_and_floats_mix_both_ways() {
    assert_eq!(eval("12 * V"), "12 V");
    assert_eq!(eval("V * 12"), "12 V");
    assert_eq!(eval("2.5 * mA"), "2.5 mA");
    assert_eq!(eval("mA * 2.5"), "2.5 mA");
    assert_eq!(eval("10 * V / (2 * V)"), "5");
    assert_eq!(eval("(10 * V / (2 * V)) + 1"), "6");
    assert_eq!(eval("(3 * mm) ** 2"), "9 mm²");
    assert_eq!(eval("sqrt(1 * uH * (1 * uF))"), "1 µs");
    assert_eq!(eval("min(3 * V, 2500 * mV)"), "2.5 V");
    assert_eq!(eval("abs(-3 * V)"), "3 V");
    assert_eq!(eval("celsius(100) - celsius(25)"), "75 K");
    assert_eq!(eval("quantity(\"100 mΩ\")"), "100 mΩ");
    assert_eq!(eval("12 * V > 5000 * mV"), "true");
}

#[test]
fn unit_constants_cannot_be_shadowed() {
    // issue 10: `let V = 2; 12 * V` gave 24, a leftover `s` turned seconds into a number
    for src in [
        "let V = 2; 12 * V",
        "let s = 10; 1 * V * 1 * s",
        "const mm = 0.1 * mm; mm",
        "for m in [1, 2] { print(m) }",
        "fn g(m) { m + 1 } g(1)",
        "param(\"mm\", 1 * mm, \"a unit\")",
    ] {
        let e = eval_err(src);
        assert!(
            e.message.contains("unit constant") && e.message.contains("cannot be redefined"),
            "{src}: {}",
            e.message
        );
    }
    assert_eq!(eval("fn f(x) { x * V } f(2)"), "2 V");
    assert_eq!(eval("let volts = 3; volts * V"), "3 V");
}

#[test]
fn dimension_errors_name_both_sides() {
    let e = eval_err("5 * V < 2 * A");
    assert!(
        e.message.contains("5 V (voltage)") && e.message.contains("2 A (current)"),
        "{}",
        e.message
    );
    let e = eval_err("sqrt(4 * V)");
    assert!(e.message.contains("odd exponent"), "{}", e.message);
    let e = eval_err("let x = 1;\nlet y = 2 * V + 3;");
    assert_eq!(e.line, Some(2));
    let shown = e.to_string();
    assert!(
        shown.contains("2 | let y = 2 * V + 3;") && shown.contains('^'),
        "{shown}"
    );
}

#[test]
fn decibels_stay_apart_from_ratios() {
    assert_eq!(eval("level_db(1 * mV)"), "60 dBµV");
    assert_eq!(eval("level_db(1 * mV) - 6 * dB"), "54 dBµV");
    assert_eq!(eval("66 * dBuV - 60 * dBuV"), "6 dB");
    assert!(eval_err("60 * dBuV + 60 * dBuV")
        .message
        .contains("cannot add two levels"));
}

#[test]
fn object_maps_check_their_keys() {
    let e = eval_err("resistor_divider(#{output_voltag: 12 * V, reference_voltage: 2.5 * V})");
    assert!(
        e.message
            .contains("unknown key `output_voltag`; did you mean `output_voltage`?"),
        "{}",
        e.message
    );
    let e = eval_err("resistor_divider(#{reference_voltage: 2.5 * V})");
    assert!(
        e.message.contains("missing key `output_voltage`") && e.message.contains("V"),
        "{}",
        e.message
    );
    let e = eval_err("resistor_divider(#{output_voltage: 12, reference_voltage: 2.5 * V})");
    assert!(e.message.contains("write a unit"), "{}", e.message);
    // integers are accepted where a plain number is expected
    assert!(eval("let r = rule_book(); r.add_rule(#{id: \"x\", description: \"d\", limit: 1 * V, warn_margin: 0}); r.check(\"x\", 0.5 * V).status") == "pass");
}

#[test]
fn records_read_as_properties() {
    let out = eval("let d = resistor_divider(#{output_voltage: 12 * V, reference_voltage: 2.5 * V}); d.lower_resistor");
    assert!(out.ends_with("Ω"), "{out}");
    let e = eval_err("let d = resistor_divider(#{output_voltage: 12 * V, reference_voltage: 2.5 * V}); d.lower_resistr");
    assert!(
        e.message.contains("did you mean `lower_resistor`"),
        "{}",
        e.message
    );
}

#[test]
fn family_keeps_going_after_a_failing_variant() {
    let h = host();
    let src = r#"
        fn design(v) {
            if v.output_voltage > 40 * V { throw "output voltage too high for this recipe"; }
            #{ power: v.output_voltage * v.output_current }
        }
        let t = family(Fn("design"), grid(#{output_voltage: [5 * V, 12 * V, 48 * V], output_current: [1 * A]}));
        output_table("family", t);
        t
    "#;
    let v = h.eval(src, "<test>").unwrap();
    let t = v.read_lock::<gapwise::report::Table>().unwrap().clone();
    assert_eq!(t.len(), 3);
    assert_eq!(t.error_count(), 1);
    assert!(t.error(2).unwrap().contains("too high"));
    let csv = t.to_csv(&gapwise::report::WriteOptions::default()).unwrap();
    assert!(
        // columns in the order the recipe's map literals wrote them (issue 10)
        csv.starts_with("output_voltage [V],output_current [A],power [W],error"),
        "{csv}"
    );
    let outs = h.take_outputs();
    assert_eq!(outs.len(), 1);
    assert_eq!(outs[0].0, "family");
}

#[test]
fn closures_and_scalar_variants_work_in_families() {
    let out = eval("let k = 2; family(|x| x * k, [1 * V, 2 * V]).column(\"value\")");
    assert_eq!(out, "[2 V, 4 V]");
}

#[test]
fn every_registered_function_has_help() {
    let h = host();
    let builtin = ["to_string", "to_debug", "len"];
    for sig in h.engine().gen_fn_signatures(false) {
        let n = sig.split('(').next().unwrap_or("").trim().to_string();
        let identifier = n
            .chars()
            .next()
            .is_some_and(|c| c.is_ascii_alphabetic() || c == '_')
            && n.chars().all(|c| c.is_ascii_alphanumeric() || c == '_');
        if !identifier || builtin.contains(&n.as_str()) {
            continue;
        }
        assert!(h.doc(&n).is_some(), "function `{n}` has no FunctionDoc");
    }
    for d in h.docs() {
        assert!(
            !d.summary.is_empty() && !d.example.is_empty(),
            "{} lacks summary or example",
            d.name
        );
        // every example runs
        if let Err(e) = h.eval(&format!("let rules = rule_book(); rules.add_rule(#{{id: \"switch_voltage\", description: \"x\", limit: 552.5 * V}}); {}", d.example), "<example>") {
            panic!("example of {} fails: {}\n{e}", d.name, d.example);
        }
    }
}

#[test]
fn select_keeps_the_given_order_and_names_unknown_columns() {
    let out = eval("table([#{a: 1 * V, b: 2 * A}]).select([\"b\", \"a\"]).columns");
    assert_eq!(out, "[\"b\", \"a\"]");
    let e = eval_err("table([#{alpha: 1 * V}]).select([\"alpah\"])");
    assert!(e.message.contains("did you mean `alpha`"), "{}", e.message);
}

#[test]
fn wrong_arguments_to_a_gapwise_function_say_what_it_takes() {
    let e = eval_err("safety_capacitor_class(5)").to_string();
    assert!(
        e.contains("`safety_capacitor_class` cannot take (integer)")
            && e.contains("safety_capacitor_class(subclass: text)")
            && e.contains(":help safety_capacitor_class"),
        "{e}"
    );
    let e = eval_err("emi_limit(150 * kHz, \"B\")").to_string();
    assert!(
        e.contains("(quantity, text)") && e.contains("detector: text"),
        "{e}"
    );
    // inside a script function the context stays at the end
    let e = eval_err("fn f() { creepage_distance() } f()").message;
    assert!(
        e.contains("cannot take no arguments") && e.ends_with("(in `f`)"),
        "{e}"
    );
    // names that are not gapwise functions keep the engine's message
    let e = eval_err("no_such_function(1)").to_string();
    assert!(e.contains("Function not found"), "{e}");
}

#[test]
fn whole_numbers_divide_to_the_real_quotient() {
    // issue 10: `3/2 * mH` printed 1 mH and `1/2 * 100 * uF` 0 F
    assert_eq!(eval("3/2 * mH"), "1.5 mH");
    assert_eq!(eval("1/2 * 100 * uF"), "50 µF");
    assert_eq!(eval("let x = 7; x /= 2; x"), "3.5");
    assert_eq!(eval("div_floor(7, 2)"), "3");
    assert_eq!(eval("div_floor(-7, 2)"), "-4");
    assert_eq!(eval("div_floor(7, -2)"), "-4");
    assert!(eval_err("1 / 0").message.contains("division by zero"));
    assert!(eval_err("div_floor(1, 0)").message.contains("`b`"));
}

#[test]
fn quantity_equality_has_a_stated_tolerance() {
    // issue 10: `22 * uF == 22000 * nF` was false
    assert_eq!(eval("22 * uF == 22000 * nF"), "true");
    assert_eq!(
        eval("22 * uF <= 22000 * nF && 22 * uF >= 22000 * nF"),
        "true"
    );
    assert_eq!(eval("22 * uF < 22000 * nF"), "false");
    assert_eq!(eval("exactly_equal(22 * uF, 22000 * nF)"), "false");
    assert_eq!(eval("exactly_equal(22 * uF, 22 * uF)"), "true");
    // one part in a million is not equal
    assert_eq!(eval("1 * V == 1.000001 * V"), "false");
}

#[test]
fn one_scope_for_constants_functions_and_families() {
    // issue 10: a top-level const was invisible in fn and in family closures
    assert_eq!(
        eval("const f = 65 * kHz; fn g() { f * 2 } let t = family(|v| #{x: v * f, y: g()}, [1, 2]); t.column(\"y\")[1]"),
        "130 kHz"
    );
    let e = eval_err("let x = 1; fn f() { x } f()");
    assert!(
        e.message.contains("no variable `x`") && e.message.contains("const"),
        "{}",
        e.message
    );
}

#[test]
fn built_in_functions_cannot_be_redefined() {
    for src in [
        "fn creepage_distance(s_) { #{creepage: 0.1 * mm} }",
        "fn flyback_checks(d) { [] }",
    ] {
        let e = eval_err(src);
        assert!(
            e.message.contains("built-in function") && e.message.contains("cannot be redefined"),
            "{src}: {}",
            e.message
        );
    }
    let e = eval_err("flyback_desing(1)");
    assert!(
        e.message.contains("did you mean `flyback_design`?"),
        "{}",
        e.message
    );
}

#[test]
fn angles_and_temperatures_have_no_traps() {
    // issue 10: `quantity("1 rad/s")` was 1 Hz, `quantity("25 C")` 25 coulombs without a word,
    // `celsius(25) * 2` 596 K, `celsius(-300)` accepted
    assert_eq!(
        eval("dimension_of(quantity(\"1 rad/s\"))"),
        "angular frequency"
    );
    assert!(eval_err("quantity(\"1 rad/s\") == 1 * Hz")
        .message
        .contains("dimensions differ"));
    assert_eq!(eval("angular_frequency(50 * Hz)"), "314.2 rad/s");
    assert_eq!(
        eval("frequency_from_angular(angular_frequency(50 * Hz))"),
        "50 Hz"
    );
    assert_eq!(eval("sin(30 * deg)"), "0.5");
    let e = eval_err("quantity(\"25 C\")");
    assert!(
        e.message.contains("25 °C") && e.message.contains("coulombs"),
        "{}",
        e.message
    );
    assert_eq!(eval("quantity(\"2 nC\")"), "2 nC");
    assert!(eval_err("celsius(25) * 2")
        .message
        .contains("absolute temperature"));
    assert!(eval_err("-celsius(25)")
        .message
        .contains("absolute temperature"));
    assert!(eval_err("celsius(-300)").message.contains("absolute zero"));
    assert!(eval_err("quantity(\"-300 °C\")")
        .message
        .contains("absolute zero"));
    assert_eq!(eval("(celsius(100) - celsius(25)) * 2"), "150 K");
}

#[test]
fn a_family_variant_that_is_not_a_row_is_an_error_row() {
    let h = host();
    let v = h
        .eval("let t = family(|v| if v == 1 { () } else if v == 2 { [1, 2] } else { #{x: v} }, [1, 2, 3]); [t.error_count, t.rows]", "<test>")
        .unwrap();
    assert_eq!(h.display(&v), "[2, 3]");
    // a design flattens as its summary (every field, not an empty row)
    let v = h
        .eval("family(|v| flyback_design(#{output_voltage: v, output_current: 1 * A}), [5 * V, 12 * V]).columns.len() > 10", "<test>")
        .unwrap();
    assert_eq!(h.display(&v), "true");
}

#[test]
fn a_design_prints_its_summary_not_its_type() {
    let text = eval("flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A})");
    assert!(
        !text.contains("ScriptFlyback") && text.contains("primary_inductance"),
        "{text}"
    );
    let text = eval("let b = rule_book(); b.add_rule(#{id: \"house_drain\", description: \"drain at most 550 V\", reference: \"house rule\", limit: 550 * V}); b");
    assert!(
        !text.contains("RuleBook") && text.contains("house_drain"),
        "{text}"
    );
}

#[test]
fn a_script_record_serialises_with_units_issue_10() {
    let h = host();
    let v = h
        .eval(
            "resistor_divider(#{output_voltage: 12 * V, reference_voltage: 2.5 * V, series: \"E96\"})",
            "<test>",
        )
        .unwrap();
    let r = v
        .read_lock::<gapwise::script::ScriptRecord>()
        .expect("a record")
        .clone();
    let j: serde_json::Value = serde_json::from_str(&serde_json::to_string(&r).unwrap()).unwrap();
    assert_eq!(j["upper_resistor"]["unit"], "Ω");
    assert_eq!(j["actual_output_voltage"]["dimension"], "voltage");
}
