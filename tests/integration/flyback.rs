//! The flyback power stage: worked examples, invariants across corners, bad input, scripts.

use super::common::{eval, eval_err, eval_quantity, host};
use gapwise::flyback::*;
use gapwise::report::{Record, Value};
use gapwise::units::si;
use gapwise::ErrorKind;
use proptest::prelude::*;

/// An ideal flyback from a DC bus: no rectifier drop, no leakage, efficiency fixed at 1.
fn ideal_dc(vin: f64, vo: f64, io: f64, vr: f64, l: f64, f: f64, c: f64) -> FlybackSpec {
    let mut o = OutputWinding::new(si(vo), si(io));
    o.rectifier_drop = si(0.0);
    o.capacitance = si(c);
    o.esr = si(0.0);
    let mut s = FlybackSpec::universal(o);
    s.input = InputRange::Dc {
        min: si(vin),
        max: si(vin),
    };
    s.reflected_voltage = si(vr);
    s.primary_inductance = Some(si(l));
    s.mode = None;
    s.switching_frequency = si(f);
    s.leakage = Leakage::Value(si(0.0));
    s.efficiency = EfficiencyModel::Estimate(1.0);
    s.losses.bulk_esr = si(0.0);
    s.clamp_voltage_above_reflected = Some(si(0.5 * vr));
    s
}

fn fernbank_12v() -> FlybackSpec {
    let mut o = OutputWinding::new(si(12.0), si(1.25));
    o.rectifier_drop = si(0.6);
    o.rectifier_voltage_rating = Some(si(100.0));
    o.ripple_current_rating = Some(si(2.0));
    let mut s = FlybackSpec::universal(o);
    s.bias = Some(BiasWinding {
        voltage: si(15.0),
        current: si(3e-3),
        rectifier_drop: si(0.7),
    });
    s.leakage = Leakage::Fraction(0.015);
    s
}

#[track_caller]
fn near(actual: f64, expected: f64, rel: f64) {
    let err = (actual - expected).abs() / expected.abs().max(f64::MIN_POSITIVE);
    assert!(
        err <= rel,
        "{actual} differs from {expected} by {err:.3e} (allowed {rel:e})"
    );
}

#[test]
fn hart_example_7_1_ccm_flyback() {
    // Hart, Power Electronics (2011), Example 7-1: Vs = 24 V, N1/N2 = 3, Lm = 500 µH,
    // R = 5 Ω (Vo = 5 V, so 1 A), C = 200 µF, f = 40 kHz. Values recalled from memory:
    // D = 0.385, I_Lm = 0.541 A, ΔI_Lm = 0.462 A, I_max = 0.772 A, I_min = 0.310 A,
    // ΔVo/Vo = D/(R·C·f) = 0.96 %.
    let d = flyback_design(&ideal_dc(24.0, 5.0, 1.0, 15.0, 500e-6, 40e3, 200e-6)).unwrap();
    let c = &d.corners[0];
    assert_eq!(c.mode, ConductionMode::Continuous);
    near(c.duty_cycle, 0.385, 0.002);
    let ipk = c.primary_current_peak.value;
    let iv = c.primary_current_valley.value;
    near((ipk + iv) / 2.0, 0.541, 0.003);
    near(ipk - iv, 0.462, 0.002);
    near(ipk, 0.772, 0.002);
    near(iv, 0.310, 0.005);
    // our ripple charge also counts the end of the off-time where the secondary current is
    // below the load (Hart's formula does not), about 0.3 % more here
    near(c.secondaries[0].ripple_voltage_pp.value / 5.0, 0.0096, 0.01);
    near(d.turns_ratios[0], 3.0, 1e-12);
    // secondary peak = (N1/N2)·I_max = 3 × 0.772 A (Hart 2011, section 7.2, value recalled
    // from memory)
    near(c.secondaries[0].current_peak.value, 3.0 * 0.772, 0.002);
}

#[test]
fn erickson_dcm_conversion_ratio() {
    // Erickson & Maksimović, 3rd ed. (2020), Table 5.2: buck-boost in DCM, M = D/√K with
    // K = 2L/(R·T) (value recalled from memory); for the flyback R is the load referred to the
    // primary, n²·R, and M = n·Vo/Vin.
    let (vin, vo, io, n, l, f) = (100.0, 5.0, 1.0, 10.0, 200e-6, 100e3);
    let d = flyback_design(&ideal_dc(vin, vo, io, n * vo, l, f, 1e-3)).unwrap();
    let c = &d.corners[0];
    assert_eq!(c.mode, ConductionMode::Discontinuous);
    let r_referred = n * n * vo / io;
    let k = 2.0 * l * f / r_referred;
    let m = n * vo / vin;
    near(c.duty_cycle, m * k.sqrt(), 1e-9);
    // DCM energy per cycle: ½·L·Ipk²·f = P (Erickson & Maksimović 3rd ed., ch. 5)
    near(
        0.5 * l * c.primary_current_peak.value.powi(2) * f,
        vo * io,
        1e-9,
    );
}

#[test]
fn fernbank_12v_design_is_sound() {
    let d = flyback_design(&fernbank_12v()).unwrap();
    assert_eq!(d.corners.len(), 6);
    let names: Vec<&str> = d.corners.iter().map(|c| c.corner.as_str()).collect();
    assert_eq!(
        names,
        [
            "low_line_full_load",
            "low_line_light_load",
            "high_line_full_load",
            "high_line_light_load",
            "current_limit_low_line",
            "current_limit_high_line"
        ]
    );
    // 2–3 µF/W for universal input (common practice, no published source)
    let per_watt = d.bulk_capacitance.unwrap().value / d.output_power.value * 1e6;
    assert!((1.5..=3.5).contains(&per_watt), "{per_watt} µF/W");
    // efficiency of a 15 W universal-input flyback with a diode rectifier: 75–90 %
    // (common practice, no published source)
    assert!((0.75..0.9).contains(&d.efficiency), "{}", d.efficiency);
    assert!(d.efficiency_residual < 1e-9);
    // the current-limit corners sit at the highest limit plus the sense-delay overshoot
    // V·t_d/L (definition of the model: the current keeps rising at V/L; not a reference test)
    let lim = d.current_limit.value * 1.1;
    for c in &d.corners[4..] {
        let overshoot = c.bulk_valley_voltage.value * 100e-9 / d.primary_inductance.value;
        near(c.primary_current_peak.value, lim + overshoot, 1e-6);
    }
    // overload power rises with line at a fixed current limit (peak-current-mode behaviour;
    // common practice, no published source)
    assert!(d.overload[2].output_power > d.overload[0].output_power);
    assert!(d.overload[3].output_power > d.overload[1].output_power);
    // the RCD clamp resistor dissipates at least V_r²/R even without leakage energy (the clamp
    // capacitor cannot sit below V_r; common practice, no published source)
    let r = d.clamp.resistor.unwrap().value;
    for c in &d.corners {
        assert!(c.losses.clamp.value >= 100.0 * 100.0 / r * (1.0 - 1e-12));
    }
    let bias = d.bias.unwrap();
    // the rectifier drop model lowers the bias at light load (an estimate of the model itself)
    assert!(bias.voltage_light_load < bias.voltage_full_load);
    assert!(d
        .checks
        .iter()
        .all(|c| c.status != gapwise::rules::Status::Fail));
}

#[test]
fn loss_budget_sums_to_input_power() {
    // identity of the model: line power = output + every loss
    for model in [
        EfficiencyModel::Computed { start: 0.85 },
        EfficiencyModel::Estimate(0.8),
    ] {
        let mut s = fernbank_12v();
        s.efficiency = model;
        let d = flyback_design(&s).unwrap();
        for c in &d.corners {
            near(c.losses.total().value, c.input_power.value, 1e-9);
        }
    }
}

fn finite_fields(fields: Vec<gapwise::report::Field>) {
    for f in fields {
        let x = match f.value {
            Value::Quantity(q) => q.value(),
            Value::Number(x) => x,
            Value::Decibel(d) => d.value,
            _ => 0.0,
        };
        assert!(x.is_finite(), "{} = {}", f.name, f.value);
    }
}

fn arbitrary_spec() -> impl Strategy<Value = FlybackSpec> {
    (
        2.0f64..60.0,   // output voltage
        0.2f64..3.0,    // output current
        60.0f64..140.0, // reflected voltage
        0usize..3,      // mode
        0.2f64..1.6,    // ripple ratio
        40e3f64..130e3, // frequency
        0.005f64..0.03, // leakage fraction
    )
        .prop_map(|(vo, io, vr, mode, r, f, lk)| {
            let mut o = OutputWinding::new(si(vo), si(io.min(40.0 / vo)));
            o.rectifier_drop = si(0.6);
            let mut s = FlybackSpec::universal(o);
            s.reflected_voltage = si(vr);
            s.switching_frequency = si(f);
            s.leakage = Leakage::Fraction(lk);
            // a given clamp overshoot: these invariants are about the corners, and a derived
            // clamp refuses the higher reflected voltages (tested on its own)
            s.clamp_voltage_above_reflected = Some(si(50.0));
            s.mode = Some(match mode {
                0 => ModeTarget::Continuous { ripple_ratio: r },
                1 => ModeTarget::Discontinuous { margin: 0.1 },
                _ => ModeTarget::Boundary,
            });
            s
        })
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 24, ..ProptestConfig::default() })]

    #[test]
    fn corner_invariants(spec in arbitrary_spec()) {
        // a large leakage at a high current makes the clamp loss grow faster than the power:
        // that design is refused with a clear error, never a panic or NaN
        let d = match flyback_design(&spec) {
            Ok(d) => d,
            Err(e) if e.message().contains("losses run away") => return Ok(()),
            Err(e) => panic!("{e}"),
        };
        finite_fields(d.fields());
        let l = d.primary_inductance.value;
        let f = d.switching_frequency.value;
        let vr = d.reflected_voltage.value;
        for c in &d.corners {
            finite_fields(c.fields());
            // power balance: input = output + losses
            let sum = c.output_power.value + c.losses.modelled_losses().value + c.losses.unaccounted.value;
            prop_assert!((sum - c.input_power.value).abs() <= 1e-8 * c.input_power.value);
            // RMS ≥ average for every current
            prop_assert!(c.primary_current_rms >= c.primary_current_avg);
            for s in &c.secondaries {
                prop_assert!(s.current_rms.value >= s.current_avg.value * (1.0 - 1e-12));
                prop_assert!(s.current_peak >= s.current_avg);
            }
            let vin = c.bulk_valley_voltage.value;
            match c.mode {
                // CCM volt-second balance on the magnetising inductance: D·Vin = (1 − D)·Vr
                ConductionMode::Continuous => {
                    prop_assert!((c.duty_cycle * vin - (1.0 - c.duty_cycle) * vr).abs() <= 1e-9 * vin);
                    prop_assert!((c.demagnetising_duty - (1.0 - c.duty_cycle)).abs() < 1e-12);
                }
                // DCM energy per cycle: ½·L·Ipk²·f = the magnetising power, which is the
                // converter input power less the losses drawn outside the inductance
                ConductionMode::Discontinuous => {
                    let e = 0.5 * l * c.primary_current_peak.value.powi(2) * f;
                    prop_assert!((e - c.magnetising_power.value).abs() <= 1e-9 * e);
                    prop_assert!(c.magnetising_power <= c.converter_input_power);
                    prop_assert!(c.duty_cycle + c.demagnetising_duty <= 1.0 + 1e-12);
                }
                ConductionMode::Boundary => {}
            }
        }
        // duty falls as line rises
        prop_assert!(d.corners[2].duty_cycle < d.corners[0].duty_cycle);
        prop_assert!(d.corners[3].duty_cycle < d.corners[1].duty_cycle);
    }

    #[test]
    fn drain_stress_grows_with_reflected_voltage(vr in 60.0f64..140.0, step in 1.0f64..20.0) {
        // at a given clamp overshoot (a derived one shrinks to fit the drain limit instead)
        let mut a = fernbank_12v();
        a.clamp_voltage_above_reflected = Some(si(50.0));
        a.reflected_voltage = si(vr);
        let mut b = a.clone();
        b.reflected_voltage = si(vr + step);
        let peak = |s: &FlybackSpec| {
            flyback_design(s).unwrap().corners.iter().map(|c| c.drain_voltage_peak.value).fold(0.0, f64::max)
        };
        prop_assert!(peak(&b) > peak(&a));
    }

    #[test]
    fn continuous_across_the_ccm_dcm_boundary(vin in 80.0f64..380.0, p in 3.0f64..60.0, vr in 50.0f64..150.0) {
        let f = 65e3;
        let lb = boundary_inductance(si(vin), si(p), si(vr), si(f)).unwrap().value;
        let at = |l: f64| {
            let d = flyback_design(&ideal_dc(vin, 10.0, p / 10.0, vr, l, f, 1e-3)).unwrap();
            d.corners[0].clone()
        };
        let (lo, hi) = (at(lb * (1.0 - 1e-7)), at(lb * (1.0 + 1e-7)));
        prop_assert_eq!(lo.mode, ConductionMode::Discontinuous);
        prop_assert_eq!(hi.mode, ConductionMode::Continuous);
        prop_assert!((lo.duty_cycle - hi.duty_cycle).abs() < 1e-5);
        let rel = |a: f64, b: f64| (a - b).abs() / a.abs().max(b.abs());
        prop_assert!(rel(lo.primary_current_peak.value, hi.primary_current_peak.value) < 1e-5);
        prop_assert!(rel(lo.primary_current_rms.value, hi.primary_current_rms.value) < 1e-5);
        prop_assert!(rel(lo.secondaries[0].current_rms.value, hi.secondaries[0].current_rms.value) < 1e-5);
    }

    #[test]
    fn duty_falls_as_the_bus_rises(v1 in 50.0f64..300.0, dv in 1.0f64..100.0, l in 0.2e-3f64..5e-3) {
        let duty = |v: f64| flyback_design(&ideal_dc(v, 12.0, 1.0, 100.0, l, 65e3, 1e-3)).unwrap().corners[0].duty_cycle;
        prop_assert!(duty(v1 + dv) < duty(v1));
    }
}

fn error_of(s: &FlybackSpec) -> gapwise::Error {
    match flyback_design(s) {
        Ok(_) => panic!("the design should fail"),
        Err(e) => e,
    }
}

#[test]
fn bad_input_names_the_parameter() {
    let mut s = fernbank_12v();
    s.input = InputRange::Ac {
        min_rms: si(264.0),
        max_rms: si(90.0),
        line_frequency: si(50.0),
    };
    let e = error_of(&s);
    assert_eq!(e.kind(), ErrorKind::InvalidSpec);
    assert!(e.message().contains("min_line_voltage"), "{e}");

    for i in [0.0, -1.0, f64::NAN, f64::INFINITY] {
        let mut s = fernbank_12v();
        s.outputs[0].current = si(i);
        let e = error_of(&s);
        assert!(e.message().contains("outputs[0].current"), "{e}");
        assert!(e.message().contains(" A"), "names the unit: {e}");
    }

    let mut s = fernbank_12v();
    s.reflected_voltage = si(400.0);
    s.max_duty_cycle = 0.5;
    let e = error_of(&s);
    assert_eq!(e.kind(), ErrorKind::Infeasible);
    assert!(e.message().contains("max_duty_cycle"), "{e}");

    let mut s = fernbank_12v();
    s.primary_inductance = Some(si(100e-6));
    s.mode = None;
    s.current_limit = Some(si(0.5));
    let e = error_of(&s);
    assert_eq!(e.kind(), ErrorKind::Infeasible);
    assert!(e.message().contains("primary_inductance"), "{e}");

    let mut s = fernbank_12v();
    s.current_limit = Some(si(0.2));
    assert!(error_of(&s).message().contains("current_limit"));

    let mut s = fernbank_12v();
    s.bulk = BulkChoice::Capacitance(si(1e-6));
    let e = error_of(&s);
    assert!(e.message().contains("bulk_capacitance"), "{e}");

    let mut s = fernbank_12v();
    s.rule_limits = vec![(
        "drain_voltage_deratin".into(),
        gapwise::units::Quantity::number(1.0),
    )];
    assert!(error_of(&s)
        .message()
        .contains("did you mean `drain_voltage_derating`"));
}

#[test]
fn script_design_reads_with_units() {
    let d = "let d = flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, rectifier_voltage_rating: 100 * V}); ";
    assert!(eval(&format!("{d} d.primary_inductance")).ends_with("mH"));
    assert_eq!(eval(&format!("{d} corner_table(d).rows")), "6");
    assert_eq!(eval(&format!("{d} overload_table(d).rows")), "4");
    assert_eq!(eval(&format!("{d} d.mode_low_line_full_load")), "ccm");
    let q = eval_quantity(&format!(
        "{d} flyback_corner(d, \"high_line_full_load\").drain_voltage_peak"
    ));
    assert_eq!(q.dimension(), gapwise::units::Dimension::VOLTAGE);
    assert!(eval(&format!("{d} flyback_report(d, \"t\")")).contains(gapwise::SAFETY_CAUTION));
    // a tightened rule fails, and counts for strict runs once it reaches an output (the clamp
    // is given: a derived clamp voltage would respect the tightened drain limit, or refuse)
    let h = host();
    let _ = h.eval(
        "let d = flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, clamp_voltage_above_reflected: 50 * V, rule_limits: #{drain_voltage_derating: 400 * V}}); \
         assert(worst_status(flyback_checks(d)) == \"fail\", \"tightened rule fails\"); \
         output_table(\"checks\", checks_table(flyback_checks(d)));",
        "<test>",
    )
    .unwrap();
    assert_eq!(h.take_failed_checks(), 1);
}

#[test]
fn script_errors_name_the_key() {
    let e = eval_err("flyback_design(#{output_voltag: 12 * V, output_current: 1 * A})").to_string();
    assert!(e.contains("did you mean `output_voltage`"), "{e}");
    let e =
        eval_err("flyback_design(#{output_voltage: 12 * A, output_current: 1 * A})").to_string();
    assert!(e.contains("output_voltage"), "{e}");
    let e =
        eval_err("flyback_design(#{output_voltage: 12 * V, output_current: 0 * A})").to_string();
    assert!(e.contains("current"), "{e}");
    let e = eval_err("flyback_design(#{output_voltage: 12 * V, output_current: 1 * A, min_line_voltage: 300 * V})").to_string();
    assert!(e.contains("min_line_voltage"), "{e}");
    let e = eval_err("flyback_design(#{outputs: [#{voltage: 5 * V, curent: 1 * A}]})").to_string();
    assert!(e.contains("did you mean `current`"), "{e}");
    let e =
        eval_err("flyback_design(#{output_voltage: 12 * V, output_current: 1 * A, mode: \"cmm\"})")
            .to_string();
    assert!(e.contains("mode"), "{e}");
}

#[test]
fn two_outputs_share_the_secondary_current() {
    let src =
        "let d = flyback_design(#{outputs: [#{voltage: 12 * V, current: 1 * A, regulated: true}, \
               #{voltage: 5 * V, current: 0.5 * A}]}); \
               let c = flyback_corner(d, \"low_line_full_load\"); \
               [d.output_power, c[\"output_2.current_avg\"], d.turns_ratio_2 > d.turns_ratio_1]";
    // definition: 12 V × 1 A + 5 V × 0.5 A = 14.5 W; the 5 V winding has fewer turns, so a
    // larger N_p/N_s (not a reference test)
    assert_eq!(eval(src), "[14.5 W, 500 mA, true]");
}

#[test]
fn fernbank_12v_recipe_prints_its_tables() {
    let source = std::fs::read_to_string(concat!(
        env!("CARGO_MANIFEST_DIR"),
        "/scripts/fernbank_12v.rhai"
    ))
    .unwrap();
    let h = host();
    let _ = h.eval(&source, "fernbank_12v.rhai").unwrap();
    let printed = h.take_printed().join("\n");
    assert!(printed.contains("low_line_full_load") && printed.contains("drain_voltage_derating"));
    let texts = h.take_texts();
    assert_eq!(texts.len(), 1);
    if std::env::var("GAPWISE_SHOW").is_ok() {
        println!("{printed}");
    }
}

#[test]
fn post_filter_corner_and_attenuation() {
    // hand calculation of the same formula, not a reference test: 1 µH with 100 µF resonates
    // at 15.915 kHz; at 65 kHz |1 − (f/f0)²| = 15.68, i.e. 23.91 dB
    super::common::check_near(
        eval_quantity("post_filter(1 * uH, 100 * uF, 65 * kHz).corner_frequency"),
        "15.915 kHz",
        1e-4,
    );
    let db = eval("post_filter(1 * uH, 100 * uF, 65 * kHz).attenuation");
    assert!(db.starts_with("23.9"), "{db}");
    let e = eval_err("post_filter(1 * uH, 100 * uF, 15.9 * kHz)").to_string();
    assert!(e.contains("resonates"), "{e}");
}

#[test]
fn turns_ratio_sets_the_reflected_voltage() {
    // V_r = n·(V_out + V_f): 8 × (12 V + 0.5 V) = 100 V (definition)
    let q = eval_quantity(
        "flyback_design(#{output_voltage: 12 * V, output_current: 1 * A, turns_ratio: 8}).reflected_voltage",
    );
    super::common::check_near(q, "100 V", 1e-12);
    let e = eval_err("flyback_design(#{output_voltage: 12 * V, output_current: 1 * A, turns_ratio: 8, reflected_voltage: 90 * V})").to_string();
    assert!(e.contains("turns_ratio"), "{e}");
}

#[test]
fn single_output_errors_name_the_script_keys() {
    let e =
        eval_err("flyback_design(#{output_voltage: 12 * V, output_current: -1 * A})").to_string();
    assert!(e.contains("`output_current`") && e.contains(" A"), "{e}");
    let e = eval_err("flyback_design(#{output_voltage: 12 * V, output_current: 1 * A, output_capacitance: 0 * uF})").to_string();
    assert!(e.contains("`output_capacitance`"), "{e}");
    let e = eval_err("flyback_design(#{input: \"dc\", min_line_voltage: 400 * V, max_line_voltage: 300 * V, output_voltage: 12 * V, output_current: 1 * A})").to_string();
    assert!(e.contains("min_line_voltage"), "{e}");
}

#[test]
fn runaway_losses_are_refused() {
    // a leakage energy that grows faster than the power it costs has no efficiency
    let mut s = fernbank_12v();
    s.leakage = Leakage::Value(si(600e-6));
    let e = error_of(&s);
    assert_eq!(e.kind(), ErrorKind::Infeasible);
    assert!(
        e.message().contains("losses run away") && e.message().contains("`clamp`"),
        "{e}"
    );
}

#[test]
fn inductance_meets_the_mode_target() {
    // L/L_b at low line, full load is what each target asks (the definitions of the targets:
    // CCM ripple ratio r gives L = 2·L_b/r, DCM margin m gives (1 − m)·L_b)
    for (mode, ratio) in [
        (ModeTarget::Continuous { ripple_ratio: 0.8 }, 2.5),
        (ModeTarget::Discontinuous { margin: 0.1 }, 0.9),
        (ModeTarget::Boundary, 1.0),
    ] {
        let mut s = fernbank_12v();
        s.mode = Some(mode);
        let d = flyback_design(&s).unwrap();
        near(d.corners[0].inductance_ratio, ratio, 1e-6);
        if ratio < 1.0 {
            for c in &d.corners[..4] {
                assert_eq!(c.mode, ConductionMode::Discontinuous, "{}", c.corner);
            }
        }
        let mode_check = d.checks.iter().find(|c| c.id == "mode_target").unwrap();
        assert_ne!(mode_check.status, gapwise::rules::Status::Fail);
        // the sized bulk capacitor is an E12 value holding the valley at or above 80 V
        assert!(d.corners[0].bulk_valley_voltage.value >= 80.0 * (1.0 - 1e-9));
    }
}

#[test]
fn zener_clamp_and_dc_bus() {
    // a Zener clamp holds V_r + overshoot at every corner (definition of the clamp)
    let d = eval(
        "let d = flyback_design(#{output_voltage: 12 * V, output_current: 1 * A, clamp: \"zener\", \
         clamp_voltage_above_reflected: 50 * V}); \
         let t = corner_table(d); t.column(\"clamp_voltage\")",
    );
    assert_eq!(d, "[150 V, 150 V, 150 V, 150 V, 150 V, 150 V]");
    // a DC bus has no bulk ripple: peak and valley are the bus voltage
    let q = eval(
        "let d = flyback_design(#{input: \"dc\", min_line_voltage: 300 * V, max_line_voltage: 400 * V, \
         output_voltage: 12 * V, output_current: 1 * A}); \
         let c = flyback_corner(d, \"high_line_full_load\"); [c.bulk_peak_voltage, c.bulk_valley_voltage]",
    );
    assert_eq!(q, "[400 V, 400 V]");
}

/// A wide spec: every knob a user can turn, over ranges that include the silly but finite.
fn wide_spec() -> impl Strategy<Value = FlybackSpec> {
    (
        (
            1.0f64..400.0,  // min line
            1.0f64..3.0,    // max/min line
            0.5f64..100.0,  // output voltage
            0.001f64..20.0, // output current
            1.0f64..400.0,  // reflected voltage
            1e3f64..2e6,    // frequency
            0usize..4,      // mode (3: given inductance)
            1e-7f64..0.1,   // given inductance
        ),
        (
            0.0f64..2e-6,  // sense delay
            0.0f64..1e-6,  // transition time
            0.0f64..1e-9,  // switch capacitance
            0.0f64..1e-3,  // leakage value
            0.3f64..1.0,   // efficiency
            any::<bool>(), // computed efficiency
            1e-6f64..1e-2, // output capacitance
            any::<bool>(), // zener
        ),
    )
        .prop_map(
            |((vmin, k, vo, io, vr, f, mode, l), (delay, tt, coss, lk, eta, comp, co, zener))| {
                let mut o = OutputWinding::new(si(vo), si(io));
                o.capacitance = si(co);
                let mut s = FlybackSpec::universal(o);
                s.input = InputRange::Ac {
                    min_rms: si(vmin),
                    max_rms: si(vmin * k),
                    line_frequency: si(50.0),
                };
                s.reflected_voltage = si(vr);
                s.switching_frequency = si(f);
                match mode {
                    0 => s.mode = Some(ModeTarget::Continuous { ripple_ratio: 0.5 }),
                    1 => s.mode = Some(ModeTarget::Discontinuous { margin: 0.2 }),
                    2 => s.mode = Some(ModeTarget::Boundary),
                    _ => {
                        s.mode = None;
                        s.primary_inductance = Some(si(l));
                    }
                }
                s.current_sense_delay = si(delay);
                s.losses.transition_time = si(tt);
                s.losses.switch_output_capacitance = si(coss);
                s.leakage = Leakage::Value(si(lk));
                s.efficiency = if comp {
                    EfficiencyModel::Computed { start: eta }
                } else {
                    EfficiencyModel::Estimate(eta)
                };
                if zener {
                    s.clamp = ClampKind::Zener;
                }
                s
            },
        )
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 400, ..ProptestConfig::default() })]

    #[test]
    fn any_finite_spec_gives_a_sound_design_or_a_clear_error(spec in wide_spec()) {
        match flyback_design(&spec) {
            Err(e) => prop_assert!(!e.message().is_empty()),
            Ok(d) => {
                finite_fields(d.fields());
                for c in &d.corners {
                    finite_fields(c.fields());
                    prop_assert!(c.duty_cycle > 0.0 && c.duty_cycle < 1.0, "{} duty {}", c.corner, c.duty_cycle);
                    prop_assert!(c.duty_cycle + c.demagnetising_duty <= 1.0 + 1e-9);
                    prop_assert!(c.primary_current_valley.value >= 0.0);
                    prop_assert!(c.primary_current_valley <= c.primary_current_peak);
                    prop_assert!(c.bulk_valley_voltage <= c.bulk_peak_voltage);
                    prop_assert!(c.bulk_valley_voltage.value > 0.0);
                    prop_assert!(c.efficiency > 0.0 && c.efficiency <= 1.0, "{} eff {}", c.corner, c.efficiency);
                    for (name, p) in c.losses.items() {
                        prop_assert!(p.value >= 0.0 || name == "unaccounted", "{} {name} = {}", c.corner, p.value);
                    }
                }
            }
        }
    }
}

#[test]
fn a_dcm_design_may_use_a_reflected_voltage_whose_boundary_duty_exceeds_the_limit() {
    // Review fix (issue 3). The early duty check took D_b = V_r/(V + V_r) for every design, so a
    // DCM design was refused whenever D_b at the rectified peak exceeded the duty limit. In DCM
    // the duty is √(2·P·L·f)/V < D_b (Erickson & Maksimović, 3rd ed. (2020), Table 5.2,
    // buck-boost M = D/√K, value recalled from memory). Before the fix this spec failed with
    // "`max_duty_cycle` 0.7 cannot be met … needs a duty cycle of 0.750"; now the duty at low
    // line is √(1 − 0.5)·D_b(V_valley) and stays within the limit.
    let mut s = ideal_dc(100.0, 12.0, 1.0, 300.0, 1e-3, 65e3, 1e-3);
    s.input = InputRange::Dc {
        min: si(100.0),
        max: si(200.0),
    };
    s.primary_inductance = None;
    s.mode = Some(ModeTarget::Discontinuous { margin: 0.5 });
    s.switch_voltage_rating = si(900.0);
    let d = flyback_design(&s).unwrap();
    let c = &d.corners[0];
    assert_eq!(c.mode, ConductionMode::Discontinuous);
    // D = √(1 − m)·V_r/(V + V_r) = √0.5 × 300/400 = 0.5303 (hand calculation of the
    // definitions of the DCM target, not a reference test)
    near(c.duty_cycle, 0.5f64.sqrt() * 0.75, 1e-6);
    assert!(c.duty_cycle < s.max_duty_cycle);
    // a CCM target with the same reflected voltage is still refused: D_b = 0.75 > 0.7
    s.mode = Some(ModeTarget::Continuous { ripple_ratio: 0.5 });
    let e = error_of(&s);
    assert!(
        e.message().contains("max_duty_cycle") && e.message().contains("0.750"),
        "{e}"
    );
    // a given inductance far below the boundary is judged by its own DCM duty
    s.mode = None;
    s.primary_inductance = Some(si(200e-6));
    assert!(flyback_design(&s).is_ok());
    // CCM at 100 V (L_b = (100 V × 0.75)²/(2 × 12 W × 65 kHz) = 3.6 mH): D = D_b = 0.75
    s.primary_inductance = Some(si(10e-3));
    assert!(error_of(&s).message().contains("max_duty_cycle"));
}

#[test]
fn switching_times_longer_than_the_period_are_refused() {
    // the sense delay must fit in the longest on-time, D_max/f = 0.7/65 kHz = 10.77 µs
    let mut s = fernbank_12v();
    s.current_sense_delay = si(11e-6);
    let e = error_of(&s);
    assert_eq!(e.kind(), ErrorKind::InvalidSpec);
    assert!(
        e.message().contains("current_sense_delay") && e.message().contains(" s"),
        "{e}"
    );
    // two transitions must fit in one period
    let mut s = fernbank_12v();
    s.losses.transition_time = si(8e-6);
    let e = error_of(&s);
    assert!(e.message().contains("transition_time"), "{e}");
    let e = eval_err(
        "flyback_design(#{output_voltage: 12 * V, output_current: 1 * A, current_sense_delay: 20 * us})",
    )
    .to_string();
    assert!(e.contains("current_sense_delay"), "{e}");
}

#[test]
fn erickson_dcm_worked_example() {
    // A DCM worked example of our own numbers, checked against the buck-boost DCM relations of
    // Erickson & Maksimović, 3rd ed. (2020), Table 5.2 (value recalled from memory):
    // K = 2L/(R·T_s), M = D/√K, K_crit = (1 − D)², D₂ = √K (so D₂ = D/M).
    // The flyback is the isolated buck-boost with R referred to the primary, R' = n²·R.
    // 300 V DC bus, 12 V at 1 A, n = 8 (V_r = 96 V, ideal rectifier), L = 1 mH, 100 kHz.
    let (vin, vo, io, n, l, f) = (300.0, 12.0, 1.0, 8.0, 1e-3, 100e3);
    let d = flyback_design(&ideal_dc(vin, vo, io, n * vo, l, f, 1e-3)).unwrap();
    let c = &d.corners[0];
    let r_ref = n * n * vo / io; // 768 Ω
    let k = 2.0 * l * f / r_ref; // 0.26042
    let m = n * vo / vin; // 0.32
    let duty = m * k.sqrt(); // 0.16330
    assert!(k < (1.0 - duty).powi(2), "DCM by K < K_crit");
    assert_eq!(c.mode, ConductionMode::Discontinuous);
    near(c.duty_cycle, duty, 1e-9);
    near(c.demagnetising_duty, k.sqrt(), 1e-9);
    // peak from the on-time volt-seconds: I_pk = V_in·D·T_s/L = 0.48990 A
    let ipk = vin * duty / (l * f);
    near(c.primary_current_peak.value, ipk, 1e-9);
    near(c.primary_current_valley.value, 0.0, 0.0);
    // triangle: average D·I_pk/2 (= P/V_in = 40 mA), RMS I_pk·√(D/3)
    near(c.primary_current_avg.value, vo * io / vin, 1e-9);
    near(c.primary_current_rms.value, ipk * (duty / 3.0).sqrt(), 1e-9);
    // secondary: peak n·I_pk = 3.9192 A, average I_o = n·I_pk·D₂/2, RMS n·I_pk·√(D₂/3)
    let s = &c.secondaries[0];
    near(s.current_peak.value, n * ipk, 1e-9);
    near(n * ipk * k.sqrt() / 2.0, io, 1e-9);
    near(s.current_rms.value, n * ipk * (k.sqrt() / 3.0).sqrt(), 1e-9);
    // the rectifier blocks V_in/n + V_o = 49.5 V while the switch is on (Erickson &
    // Maksimović, 3rd ed., flyback section 6.3, value recalled from memory)
    near(s.rectifier_reverse_voltage.value, vin / n + vo, 1e-12);
}

/// Independent numerical integration (midpoint rule) of a piecewise-linear pulse: the current
/// starts at `start`, changes at `slope` (A/s) for `width` seconds and is zero for the rest of
/// `period`. Returns (average, RMS).
fn integrate_pulse(start: f64, slope: f64, width: f64, period: f64) -> (f64, f64) {
    let steps = 200_000;
    let dt = width / steps as f64;
    let (mut s1, mut s2) = (0.0, 0.0);
    for k in 0..steps {
        let i = start + slope * (k as f64 + 0.5) * dt;
        s1 += i * dt;
        s2 += i * i * dt;
    }
    (s1 / period, (s2 / period).sqrt())
}

#[test]
fn currents_agree_with_a_numerical_integration_of_the_waveforms() {
    // Cross-check of the trapezoid and triangle RMS/average formulas against a numerical
    // integration built from the circuit alone (the primary current rises at V_in/L during the
    // on-time; the secondary falls at n·V_r/L, i.e. (V_o + V_f)/L_s, during demagnetisation),
    // not from the code's formulas. CCM (Hart 2011, Example 7-1 operating point) and DCM.
    for (vin, vo, io, n, l, f) in [
        (24.0, 5.0, 1.0, 3.0, 500e-6, 40e3),
        (300.0, 12.0, 1.0, 8.0, 1e-3, 100e3),
        (150.0, 24.0, 2.0, 5.0, 1.5e-3, 65e3),
    ] {
        let vr = n * vo;
        let d = flyback_design(&ideal_dc(vin, vo, io, vr, l, f, 1e-3)).unwrap();
        let c = &d.corners[0];
        let t = 1.0 / f;
        let ton = c.duty_cycle * t;
        let (avg, rms) = integrate_pulse(c.primary_current_valley.value, vin / l, ton, t);
        near(avg, c.primary_current_avg.value, 1e-6);
        near(rms, c.primary_current_rms.value, 1e-6);
        // the rise over the on-time ends at the peak (volt-second balance on L)
        near(
            c.primary_current_valley.value + vin / l * ton,
            c.primary_current_peak.value,
            1e-9,
        );
        // secondary: starts at n·I_pk, falls at n·V_r/L until the demagnetising time ends
        let s = &c.secondaries[0];
        let tdem = c.demagnetising_duty * t;
        let (s_avg, s_rms) =
            integrate_pulse(n * c.primary_current_peak.value, -n * vr / l, tdem, t);
        near(s_avg, io, 1e-6);
        near(s_rms, s.current_rms.value, 1e-6);
        // capacitor ripple current: √(I_rms² − I_o²) of the same integrated waveform
        near(
            (s_rms * s_rms - io * io).sqrt(),
            s.capacitor_ripple_current_rms.value,
            1e-5,
        );
    }
}

#[test]
fn a_hold_up_end_above_the_valley_gives_zero_hold_up_and_a_failed_rule() {
    // the bulk valley at low line, full load is about 80 V; ending the hold-up at 150 V means
    // the supply has no hold-up at all (definition of hold-up time)
    let mut s = fernbank_12v();
    s.hold_up_end_voltage = Some(si(150.0));
    s.hold_up_time = Some(si(10e-3));
    let d = flyback_design(&s).unwrap();
    assert_eq!(d.hold_up_time.unwrap().value, 0.0);
    let c = d.checks.iter().find(|c| c.id == "hold_up_time").unwrap();
    assert_eq!(c.status, gapwise::rules::Status::Fail);
}

#[test]
fn overload_power_stops_at_the_duty_limit_when_it_comes_first() {
    // Review fix (issue 3). At low line the bulk valley falls as the load rises, so a CCM
    // design's duty V_r/(V_valley + V_r) rises too (Hart 2011, section 7.2 volt-second
    // balance). When it reaches the controller's maximum before the peak current reaches the
    // limit, the output leaves regulation there. Before the fix this spec reported 20.88 W at
    // low line and the highest limit (load 1.392 at a duty of 0.626 > 0.6); now it ends at the
    // duty limit, 17.02 W.
    let mut o = OutputWinding::new(si(12.0), si(1.25));
    o.rectifier_drop = si(0.5);
    let mut s = FlybackSpec::universal(o);
    s.reflected_voltage = si(130.0);
    s.clamp_voltage_above_reflected = Some(si(50.0));
    s.max_duty_cycle = 0.6;
    s.bulk = BulkChoice::TargetValley(si(90.0));
    let d = flyback_design(&s).unwrap();
    let cl = d.corner("current_limit_low_line").unwrap();
    assert!(cl.duty_cycle > 0.6, "the case needs the duty limit to bind");
    // low line, highest limit: the duty limit comes first
    let o = &d.overload[1];
    assert_eq!((o.limit_case, o.limited_by), ("maximum", "max_duty_cycle"));
    assert!(o.output_power < cl.output_power);
    assert!(
        o.load_fraction >= 1.0,
        "full load still fits: {}",
        o.load_fraction
    );
    // the duty there is the limit (the bisection's target, not a reference value)
    assert_eq!(o.mode, ConductionMode::Continuous);
    assert!(
        o.duty_cycle <= 0.6 && o.duty_cycle > 0.6 - 1e-6,
        "{}",
        o.duty_cycle
    );
    // every overload point keeps within the duty limit
    assert!(d.overload.iter().all(|o| o.duty_cycle <= 0.6));
    // low line, lowest limit: the duty limit and the lowest current limit (with its
    // sense-delay overshoot) come at almost the same load here (peak 522 mA at the duty
    // limit against 519.3 mA + 2.7 mA), so either may end the power; it is never above the
    // highest limit's
    assert!(["current_limit", "max_duty_cycle"].contains(&d.overload[0].limited_by));
    // (both searches end on the same duty limit within their load tolerance, 1e-9 relative)
    assert!(
        d.overload[0].output_power.value <= o.output_power.value * (1.0 + 1e-6),
        "{} > {}",
        d.overload[0].output_power.value,
        o.output_power.value
    );
    // high line: far from the duty limit
    assert!(d.overload[2..]
        .iter()
        .all(|o| o.limited_by == "current_limit"));
    // with the default duty limit 0.7 nothing changes: the current limit comes first
    let d = flyback_design(&fernbank_12v()).unwrap();
    assert!(d.overload.iter().all(|o| o.limited_by == "current_limit"));
    assert_eq!(
        eval("overload_table(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, reflected_voltage: 130 * V, clamp_voltage_above_reflected: 50 * V, max_duty_cycle: 0.6, target_valley_voltage: 90 * V})).column(\"limited_by\")"),
        "[\"max_duty_cycle\", \"max_duty_cycle\", \"current_limit\", \"current_limit\"]"
    );
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 32, ..ProptestConfig::default() })]

    #[test]
    fn switching_times_beyond_the_period_are_refused_by_name(
        f in 20e3f64..500e3, dmax in 0.3f64..0.9, over in 1.0f64..10.0, which in any::<bool>()
    ) {
        // a sense delay of at least D_max/f, or a transition of at least half a period, cannot
        // happen in a converter switching at f: a clear error naming the field, never a design
        let mut s = fernbank_12v();
        s.switching_frequency = si(f);
        s.max_duty_cycle = dmax;
        let name = if which {
            s.current_sense_delay = si(over * dmax / f);
            "current_sense_delay"
        } else {
            s.losses.transition_time = si(over * 0.5 / f);
            "transition_time"
        };
        let e = error_of(&s);
        prop_assert_eq!(e.kind(), ErrorKind::InvalidSpec);
        prop_assert!(e.message().contains(name), "{}", e);
    }

    #[test]
    fn overload_never_runs_above_the_duty_limit(dmax in 0.5f64..0.8, vr in 80.0f64..140.0) {
        let mut s = fernbank_12v();
        s.max_duty_cycle = dmax;
        s.reflected_voltage = si(vr);
        if let Ok(d) = flyback_design(&s) {
            for o in &d.overload {
                prop_assert!(o.duty_cycle <= dmax, "{} {}", o.limited_by, o.duty_cycle);
                prop_assert!(o.output_power.value > 0.0 && o.output_power.value.is_finite());
            }
        }
    }
}

#[test]
fn a_post_filter_that_does_not_attenuate_is_refused() {
    // undamped LC: |H(f)| = 1/|1 − (f/f₀)²| ≥ 1 for f ≤ √2·f₀ (second-order low-pass,
    // Erickson & Maksimović, 3rd ed. (2020), ch. 8). 1 µH with 1 µF resonates at 159 kHz,
    // above 65 kHz: it used to report a "filtered" ripple 1.20 times the unfiltered one
    // (1/(1 − (65/159.15)²), hand calculation of the same formula).
    let e = eval_err(
        "flyback_design(#{output_voltage: 12 * V, output_current: 1 * A, post_filter_inductance: 1 * uH, post_filter_capacitance: 1 * uF})",
    )
    .to_string();
    assert!(
        e.contains("post_filter_inductance") && e.contains("Hz"),
        "{e}"
    );
    // the demo recipe's 2.2 µH with 100 µF (10.7 kHz) attenuates and is accepted
    assert!(eval(
        "flyback_design(#{output_voltage: 12 * V, output_current: 1 * A, post_filter_inductance: 2.2 * uH, post_filter_capacitance: 100 * uF}).output_power"
    )
    .ends_with('W'));
}

/// An independent time-stepped simulation of one switching period of a corner (forward Euler
/// with a fine step), built from the circuit alone: an ideal switch applies the bulk valley
/// voltage to the magnetising inductance for the on-time; at turn-off the leakage current is
/// driven down by the clamp (V_c − V_r across the leakage inductance) while the magnetising
/// current falls at V_r/L; the secondaries carry the rest, each winding `share`·n of it, until
/// the magnetising current reaches zero or the period ends. Returns (peak, average, RMS) of
/// the secondary current and the magnetising current at the end of the period.
#[allow(clippy::too_many_arguments)]
fn simulate_period(
    vin: f64,
    l: f64,
    llk: f64,
    vr: f64,
    vc: f64,
    duty: f64,
    f: f64,
    i_start: f64,
    turns_share: f64,
) -> (f64, f64, f64, f64) {
    let steps = 400_000;
    let t = 1.0 / f;
    let dt = t / steps as f64;
    let (mut im, mut ilk) = (i_start, i_start);
    let (mut peak, mut s1, mut s2) = (0.0f64, 0.0, 0.0);
    for k in 0..steps {
        let time = (k as f64 + 0.5) * dt;
        if time < duty * t {
            im += vin / l * dt;
            ilk = im;
        } else {
            if ilk > 0.0 && llk > 0.0 {
                ilk = (ilk - (vc - vr) / llk * dt).max(0.0);
            } else {
                ilk = 0.0;
            }
            if im > 0.0 {
                im = (im - vr / l * dt).max(0.0);
            }
            let is = turns_share * (im - ilk).max(0.0);
            peak = peak.max(is);
            s1 += is * dt;
            s2 += is * is * dt;
        }
    }
    (peak, s1 / t, (s2 / t).sqrt(), im)
}

#[test]
fn secondary_currents_follow_the_ampere_turns_of_a_time_stepped_period() {
    // Issue 12: the secondary peak is n·I_pk (ampere-turns) less the magnetising current's fall
    // during the leakage reset, and the waveform falls at the off-time volt-seconds. Checked
    // against simulate_period (an independent numerical model of the circuit), in CCM (the
    // 12 V design at low line) and DCM (the same with a DCM target), with losses, leakage, a
    // bias winding and two outputs. Hand formulas: Erickson & Maksimović, 3rd ed. (2020),
    // ch. 6 (flyback waveforms); Basso 2014, flyback chapter (secondary peak n·I_pk).
    let mut two = fernbank_12v();
    let mut o2 = OutputWinding::new(si(5.0), si(0.4));
    o2.rectifier_drop = si(0.4);
    two.outputs.push(o2);
    let mut dcm = fernbank_12v();
    dcm.mode = Some(ModeTarget::Discontinuous { margin: 0.2 });
    for (spec, want_mode) in [
        (fernbank_12v(), ConductionMode::Continuous),
        (dcm, ConductionMode::Discontinuous),
        (two, ConductionMode::Continuous),
    ] {
        let d = flyback_design(&spec).unwrap();
        let c = d.corner("low_line_full_load").unwrap();
        assert_eq!(c.mode, want_mode);
        let (l, llk, f) = (
            d.primary_inductance.value,
            d.leakage_inductance.value,
            d.switching_frequency.value,
        );
        let vr = d.reflected_voltage.value;
        // shares from the specification: the power of each winding over all of them
        let winding = |o: &OutputWinding| ((o.voltage + o.rectifier_drop) * o.current).value;
        let b = spec.bias.unwrap();
        let all: f64 = spec.outputs.iter().map(winding).sum::<f64>()
            + ((b.voltage + b.rectifier_drop) * b.current).value;
        for (k, o) in spec.outputs.iter().enumerate() {
            let share = winding(o) / all;
            let n = d.turns_ratios[k];
            let (pk, avg, rms, i_end) = simulate_period(
                c.bulk_valley_voltage.value,
                l,
                llk,
                vr,
                c.clamp_voltage.value,
                c.duty_cycle,
                f,
                c.primary_current_valley.value,
                share * n,
            );
            let s = &c.secondaries[k];
            near(s.ampere_turn_share, share, 1e-12);
            near(s.current_peak.value, pk, 2e-4);
            near(s.current_rms.value, rms, 2e-4);
            near(s.current_avg_waveform.value, avg, 2e-4);
            // steady state: the period ends where it began (volt-second balance on L)
            near(i_end, c.primary_current_valley.value, 2e-3);
            // below the ideal n·I_pk by the magnetising fall during the leakage reset
            let t_reset = llk * c.primary_current_peak.value / (c.clamp_voltage.value - vr);
            near(
                s.current_peak.value,
                share * n * (c.primary_current_peak.value - vr * t_reset / l),
                1e-9,
            );
            // charge balance: the waveform carries the load current plus this winding's share
            // of the transformer and output-capacitor losses (a few per cent, never less)
            let ratio = avg / s.current_avg.value;
            assert!((1.0..1.06).contains(&ratio), "output {k}: {ratio}");
        }
    }
}

#[test]
fn a_narrow_range_design_succeeds_with_defaults_derived_from_its_line() {
    // Issue 12: with the old fixed 80 V valley target, 180–265 V at 5 V / 3 A failed with the
    // losses running away in the clamp. The valley target is now 0.64 × the lowest rectified
    // peak (common practice, no published source): 0.64 × (√2·180 − 2·1) V = 161.64 V.
    let mut s = FlybackSpec::universal(OutputWinding::new(si(5.0), si(3.0)));
    s.input = InputRange::Ac {
        min_rms: si(180.0),
        max_rms: si(265.0),
        line_frequency: si(50.0),
    };
    let d = flyback_design(&s).unwrap();
    let peak = 2f64.sqrt() * 180.0 - 2.0;
    let valley = d
        .defaults
        .iter()
        .find(|x| x.key == "target_valley_voltage")
        .unwrap();
    near(valley.value.value_in("V").unwrap(), 0.64 * peak, 1e-12);
    assert!(valley.derivation.contains("lowest rectified line peak"));
    assert!(d.corners[0].bulk_valley_voltage.value >= 0.64 * peak * (1.0 - 1e-9));
    let keys: Vec<&str> = d.defaults.iter().map(|x| x.key).collect();
    assert_eq!(
        keys,
        [
            "target_valley_voltage",
            "clamp_voltage_above_reflected",
            "current_limit"
        ]
    );
    // the same design with the old target names the target as the cause, not the clamp
    s.bulk = BulkChoice::TargetValley(si(80.0));
    let e = flyback_design(&s).unwrap_err().to_string();
    assert!(
        e.starts_with("`target_valley_voltage` 80 V is only 32 %"),
        "{e}"
    );
    // a target at or above the peak is refused by name
    s.bulk = BulkChoice::TargetValley(si(260.0));
    let e = flyback_design(&s).unwrap_err().to_string();
    assert!(
        e.contains("`target_valley_voltage`") && e.contains("below the lowest rectified"),
        "{e}"
    );
    // the script lists what it derived
    let t = eval(
        "flyback_defaults(flyback_design(#{output_voltage: 5 * V, output_current: 3 * A, \
         min_line_voltage: 180 * V, max_line_voltage: 265 * V})).column(\"key\")",
    );
    assert_eq!(
        t,
        "[\"target_valley_voltage\", \"clamp_voltage_above_reflected\", \"current_limit\"]"
    );
    let given = eval(
        "flyback_design(#{output_voltage: 12 * V, output_current: 1 * A, target_valley_voltage: 85 * V, \
         clamp_voltage_above_reflected: 50 * V, current_limit: 0.6 * A}).derived_defaults",
    );
    assert_eq!(given, "");
}

#[test]
fn the_derived_clamp_voltage_fits_the_switch_rating_or_names_it() {
    // drain limit 0.85 × 650 V = 552.5 V; highest bulk peak √2·264 − 2 = 371.35 V; allowances
    // 5 V forward recovery + 10 V ringing; the RCD ripple top 1 + 0.1/2: the clamp may reach
    // (552.5 − 371.35 − 15)/1.05 = 158.24 V. With V_r = 120 V that leaves 38.24 V, less than
    // 0.5·V_r = 60 V, so the clamp takes the room (common practice, no published source) and
    // the drain reaches the limit at most (the resistor rounded down to E24 holds less)
    let mut s = fernbank_12v();
    s.reflected_voltage = si(120.0);
    let d = flyback_design(&s).unwrap();
    let top = (552.5 - (2f64.sqrt() * 264.0 - 2.0) - 15.0) / 1.05;
    let derived = d
        .defaults
        .iter()
        .find(|x| x.key == "clamp_voltage_above_reflected")
        .unwrap();
    near(derived.value.value_in("V").unwrap(), top - 120.0, 1e-9);
    assert!(d.clamp.clamp_voltage.value <= top * (1.0 + 1e-12));
    let drain = d
        .corners
        .iter()
        .map(|c| c.drain_voltage_peak.value)
        .fold(0.0, f64::max);
    assert!(drain <= 552.5 * (1.0 + 1e-9), "{drain}");
    // a 600 V switch with V_r = 100 V leaves (510 − 386.35)/1.05 − 100 = 17.76 V < 25 V: the
    // error names the reflected voltage and the rating
    s.reflected_voltage = si(100.0);
    s.switch_voltage_rating = si(600.0);
    let e = flyback_design(&s).unwrap_err().to_string();
    assert!(
        e.contains("`reflected_voltage`") && e.contains("`switch_voltage_rating` 600 V"),
        "{e}"
    );
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 24, ..ProptestConfig::default() })]

    #[test]
    fn derived_defaults_never_contradict_the_specification(
        vmin in 85.0f64..240.0, span in 0.0f64..120.0, vr in 50.0f64..180.0,
        rating in 450.0f64..900.0, vo in 5.0f64..24.0, p in 5.0f64..40.0,
    ) {
        let mut s = FlybackSpec::universal(OutputWinding::new(si(vo), si(p / vo)));
        s.input = InputRange::Ac { min_rms: si(vmin), max_rms: si(vmin + span), line_frequency: si(50.0) };
        s.reflected_voltage = si(vr);
        s.switch_voltage_rating = si(rating);
        let d = match flyback_design(&s) {
            Ok(d) => d,
            // a refusal names a specification value, never only a symptom
            Err(e) => {
                let m = e.message();
                prop_assert!(m.contains('`'), "{m}");
                return Ok(());
            }
        };
        let peak_lo = 2f64.sqrt() * vmin - 2.0;
        let peak_hi = 2f64.sqrt() * (vmin + span) - 2.0;
        let valley = d.defaults.iter().find(|x| x.key == "target_valley_voltage").unwrap();
        let v = valley.value.value_in("V").unwrap();
        prop_assert!(v > 0.0 && v < peak_lo);
        // the clamp sits above the reflected voltage and within the drain limit
        prop_assert!(d.clamp.clamp_voltage.value > vr * 1.2);
        prop_assert!(peak_hi + d.clamp.clamp_voltage.value <= 0.85 * rating * (1.0 + 1e-9));
        for c in &d.corners {
            prop_assert!(c.clamp_voltage.value > vr);
            prop_assert!(c.drain_voltage_peak.value <= 0.85 * rating * (1.0 + 1e-9));
        }
    }
}

/// True when `x` is a preferred value of a series with these mantissas (to 1e-9).
fn is_preferred(x: f64, mantissas: &[f64]) -> bool {
    let decade = 10f64.powf(x.log10().floor());
    let m = x / decade;
    mantissas
        .iter()
        .any(|p| (m - p).abs() < 1e-9 * p || (m / 10.0 - p).abs() < 1e-9 * p)
}

#[test]
fn the_rcd_clamp_as_built_holds_its_voltage_from_preferred_parts() {
    // Issue 12. The leakage energy ½·L_lk·I_pk² per cycle goes to the clamp, and the chosen
    // resistor holds V_c·(V_c − V_r)/R = ½·L_lk·I_pk²·f (Billings & Morey, Switchmode Power
    // Supply Handbook, 3rd ed. (2011), flyback snubber section, value recalled from memory).
    let s = fernbank_12v();
    let d = flyback_design(&s).unwrap();
    let c = &d.clamp;
    let r = c.resistor.unwrap().value;
    let cap = c.capacitor.unwrap().value;
    // IEC 60063:2015 E24 and E12 mantissas (the resistor rounded down, the capacitor up)
    let e24 = [
        1.0, 1.1, 1.2, 1.3, 1.5, 1.6, 1.8, 2.0, 2.2, 2.4, 2.7, 3.0, 3.3, 3.6, 3.9, 4.3, 4.7, 5.1,
        5.6, 6.2, 6.8, 7.5, 8.2, 9.1,
    ];
    let e12 = [1.0, 1.2, 1.5, 1.8, 2.2, 2.7, 3.3, 3.9, 4.7, 5.6, 6.8, 8.2];
    assert!(is_preferred(r, &e24), "{r}");
    assert!(is_preferred(cap, &e12), "{cap}");
    let (lk, f, vr) = (
        d.leakage_inductance.value,
        d.switching_frequency.value,
        d.reflected_voltage.value,
    );
    // the rounded-down resistor holds at most the wanted 150 V at the worst case
    assert!(c.clamp_voltage.value <= 150.0 && c.clamp_voltage.value > 140.0);
    for k in &d.corners {
        let e = 0.5 * lk * k.primary_current_peak.value.powi(2);
        let vc = k.clamp_voltage.value;
        near(vc * (vc - vr) / r, e * f, 1e-9);
        near(k.losses.clamp.value, vc * vc / r, 1e-9);
        // ripple ΔV = V_c/(R·C·f) (capacitor discharging through R over a period), its top
        // is the highest clamp voltage
        let ripple = vc / (r * cap * f);
        assert!(ripple <= 0.1 * vc * (1.0 + 1e-12));
        near(k.clamp_voltage_max.value, vc + ripple / 2.0, 1e-9);
        // the drain rule sees the highest clamp voltage, the forward recovery and ringing
        near(
            k.drain_voltage_peak.value,
            k.bulk_peak_voltage.value + k.clamp_voltage_max.value + 5.0 + 10.0,
            1e-12,
        );
        // never below the standby floor V_r²/R while switching (common practice, no
        // published source), light load included
        assert!(k.losses.clamp.value >= c.standby_power.value);
    }
    near(c.standby_power.value, vr * vr / r, 1e-12);
    let light = d.corner("high_line_light_load").unwrap();
    assert!(light.losses.clamp.value < 1.2 * c.standby_power.value);
}

#[test]
fn a_zener_clamp_spreads_with_tolerance_and_heat() {
    // V_z = 150 V nominal, ±5 %, +0.1 %/K over 75 K: highest 150 × 1.05 × 1.075 = 169.31 V
    // for the drain; the dissipation at the lowest, 142.5 V: E·f·V/(V − V_r) (the same clamp
    // formula, Billings & Morey 2011, value recalled from memory)
    let mut s = fernbank_12v();
    s.clamp = ClampKind::Zener;
    s.clamp_voltage_above_reflected = Some(si(50.0));
    let d = flyback_design(&s).unwrap();
    let (lk, f) = (d.leakage_inductance.value, d.switching_frequency.value);
    near(d.clamp.clamp_voltage_max.value, 150.0 * 1.05 * 1.075, 1e-12);
    for k in &d.corners {
        near(k.clamp_voltage.value, 150.0, 1e-12);
        let e = 0.5 * lk * k.primary_current_peak.value.powi(2);
        near(k.losses.clamp.value, e * f * 142.5 / 42.5, 1e-9);
        near(
            k.drain_voltage_peak.value,
            k.bulk_peak_voltage.value + 150.0 * 1.05 * 1.075 + 15.0,
            1e-12,
        );
    }
    // a derived Zener clamp leaves room for its spread: nominal × 1.12875 + 15 V fits 552.5 V
    s.clamp_voltage_above_reflected = None;
    let d = flyback_design(&s).unwrap();
    let drain = d
        .corners
        .iter()
        .map(|c| c.drain_voltage_peak.value)
        .fold(0.0, f64::max);
    assert!(drain <= 552.5 * (1.0 + 1e-9), "{drain}");
}

#[test]
fn the_leakage_from_the_winding_build_feeds_the_clamp() {
    // the transformer's leakage estimate (energy method) goes straight into the power stage
    let src = "let d = flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}); \
               let t = transformer_inputs_from_flyback(d); t.core = \"EF25\"; t.margin_width = 2 * mm; \
               let x = transformer_design(t).design; \
               let d2 = flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, \
                                         leakage_inductance: x.leakage_inductance}); \
               [d2.leakage_inductance / x.leakage_inductance, \
                d2.clamp_leakage_energy / (0.5 * x.leakage_inductance * d2.primary_current_peak_at_limit \
                                           * d2.primary_current_peak_at_limit)]";
    let v = eval(src);
    let nums: Vec<f64> = v
        .trim_matches(|c| c == '[' || c == ']')
        .split(',')
        .map(|x| x.trim().parse().unwrap())
        .collect();
    near(nums[0], 1.0, 1e-12);
    // the clamp's worst case is at high line with the highest limit and the overshoot at the
    // bulk peak (at least the corner's peak, which sees the lower valley)
    assert!(nums[1] >= 1.0 && nums[1] < 1.01, "{v}");
}

#[test]
fn a_shorted_output_staircases_to_the_limit_plus_the_delay_overshoot() {
    // Issue 12. Output shorted: the secondary holds only its rectifier's drop, V_rs = n·V_f,
    // so the current falls by V_rs·t_off/L per cycle and rises at V/L. Once settled the switch
    // turns off t_d after the limit: I_pk = I_lim·(1 + tol) + V·t_d/L, and the on-time is the
    // volt-second balance t_on = V_rs/(f·(V + V_rs)), so I_v = I_pk − V·t_on/L (Erickson &
    // Maksimović, 3rd ed. (2020), ch. 2: volt-second balance; closed forms of our own).
    let s = fernbank_12v();
    let d = flyback_design(&s).unwrap();
    let l = d.primary_inductance.value;
    let f = 65e3;
    let n = d.turns_ratios[0];
    let vrs = n * 0.6;
    let limit = d.current_limit.value * 1.1;
    for (p, line) in d.short_circuit.iter().zip([90.0, 264.0]) {
        let v = 2f64.sqrt() * line - 2.0;
        near(p.bus_voltage.value, v, 1e-12);
        assert!(p.settles);
        near(p.primary_current_peak.value, limit + v * 100e-9 / l, 1e-9);
        let t_on = vrs / (f * (v + vrs));
        near(p.balance_on_time.value, t_on, 1e-12);
        near(p.on_time_ratio, 150e-9 / t_on, 1e-9);
        near(
            p.primary_current_valley.value,
            p.primary_current_peak.value - v * t_on / l,
            1e-9,
        );
        // power through the inductance, ½·L·(I_pk² − I_v²)·f, all of it into the rectifier
        let pk = p.primary_current_peak.value;
        let iv = p.primary_current_valley.value;
        let power = 0.5 * l * (pk * pk - iv * iv) * f;
        near(p.power_during_fault.value, power, 2e-3);
        near(
            p.power_average.value,
            p.power_during_fault.value * 0.05 / 0.5,
            1e-12,
        );
        near(
            p.rectifier_current_during_fault.value,
            p.power_during_fault.value / 0.6,
            1e-12,
        );
        assert!(p.cycles_to_limit >= 1);
    }
    assert!(d.checks.iter().any(|c| c.id == "short_circuit_settles"));
}

#[test]
fn a_minimum_on_time_above_the_balance_runs_the_short_circuit_current_away() {
    // With t_min = 400 ns at high line (balance about 160 ns) the current climbs by
    // Δ = (V·t_min − V_rs·(1/f − t_min))/L every cycle (closed form of the staircase): the
    // peak after N + 1 cycles exceeds the one after N by Δ, and the rule fails. Folding the
    // frequency back to 20 kHz lengthens the balance on-time (×3.25) and it settles again.
    let mut s = fernbank_12v();
    s.minimum_on_time = si(400e-9);
    let f = 65e3;
    s.fault_time = si(1000.0 / f);
    let a = flyback_design(&s).unwrap();
    s.fault_time = si(1001.0 / f);
    let b = flyback_design(&s).unwrap();
    let (pa, pb) = (&a.short_circuit[1], &b.short_circuit[1]);
    assert!(!pa.settles);
    let (l, v) = (a.primary_inductance.value, pa.bus_voltage.value);
    let vrs = pa.reflected_voltage_shorted.value;
    let rise = (v * 400e-9 - vrs * (1.0 / f - 400e-9)) / l;
    near(
        pb.primary_current_peak.value - pa.primary_current_peak.value,
        rise,
        1e-6,
    );
    let c = a
        .checks
        .iter()
        .find(|c| c.id == "short_circuit_settles")
        .unwrap();
    assert_eq!(c.status, gapwise::rules::Status::Fail);
    s.short_circuit_frequency = Some(si(20e3));
    let d = flyback_design(&s).unwrap();
    assert!(d.short_circuit.iter().all(|p| p.settles));
    // bad input names the parameter
    s.minimum_on_time = si(20e-6);
    let e = flyback_design(&s).unwrap_err().to_string();
    assert!(e.contains("`minimum_on_time`"), "{e}");
    s.minimum_on_time = si(150e-9);
    s.short_circuit_frequency = Some(si(100e3));
    let e = flyback_design(&s).unwrap_err().to_string();
    assert!(e.contains("`short_circuit_frequency`"), "{e}");
    // the script table has a row per line
    let rows = eval(
        "short_circuit_table(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A})).rows",
    );
    assert_eq!(rows, "2");
}

#[test]
fn junction_temperatures_follow_the_thermal_resistances() {
    // T_j = T_a + P·(R_θjc + R_θca) and R_θca,needed = (T_j,max − T_a)/P − R_θjc (series
    // thermal resistance, Hart 2011, heat-sink section; hand calculation of the formula).
    let s = fernbank_12v();
    let d = flyback_design(&s).unwrap();
    let k = |t: f64| 273.15 + t;
    let sw = &d.junctions[0];
    assert_eq!(sw.part, "switch");
    let worst = d.corners[..4]
        .iter()
        .map(|c| {
            c.losses.switch_conduction.value
                + c.losses.switch_capacitive.value
                + c.losses.switch_overlap.value
        })
        .fold(0.0, f64::max);
    near(sw.loss.value, worst, 1e-12);
    near(sw.junction_temperature.value, k(50.0) + worst * 62.5, 1e-12);
    near(
        sw.case_to_ambient_needed.unwrap().value,
        75.0 / worst - 2.5,
        1e-12,
    );
    // the 12 V rectifier: 0.6 V × 1.25 A = 0.75 W at full load, 50 °C + 0.75 × 63 K/W
    let r = &d.junctions[1];
    near(r.loss.value, 0.75, 1e-12);
    near(r.junction_temperature.value, k(50.0 + 0.75 * 63.0), 1e-12);
    // at the current limit the overload is reported, not ruled
    let cl = d.corner("current_limit_high_line").unwrap();
    let at_limit = 0.6 * cl.secondaries[0].current_avg.value;
    assert!(r.junction_temperature_at_limit.value >= k(50.0) + at_limit * 63.0 - 1e-9);
    // a heat sink at exactly the needed resistance lands on the limit; a hotter enclosure fails
    let mut s2 = s.clone();
    s2.switch_thermal.case_to_ambient = sw.case_to_ambient_needed.unwrap();
    let d2 = flyback_design(&s2).unwrap();
    near(d2.junctions[0].junction_temperature.value, k(125.0), 1e-9);
    let mut s3 = s.clone();
    s3.ambient_temperature = si(k(85.0));
    let d3 = flyback_design(&s3).unwrap();
    let c = d3
        .checks
        .iter()
        .find(|c| c.id == "rectifier_junction_temperature")
        .unwrap();
    assert_eq!(c.status, gapwise::rules::Status::Fail);
    // a junction limit below the ambient is refused by name
    s3.ambient_temperature = si(k(130.0));
    let e = flyback_design(&s3).unwrap_err().to_string();
    assert!(e.contains("`switch_max_junction_temperature`"), "{e}");
    assert_eq!(
        eval("junction_table(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A})).rows"),
        "2"
    );
}

#[test]
fn burst_and_foldback_bring_the_no_load_input_power_below_fixed_frequency() {
    // Issue 12. A foldback or burst controller holds its peak at I_min = 0.25 × the nominal
    // limit; in DCM ½·L·I_min²·f = P (Erickson & Maksimović, 3rd ed. (2020), ch. 5: DCM energy
    // per cycle), so the frequency (burst: the average pulse rate) is f = 2·P/(L·I_min²),
    // foldback no lower than its minimum. Fewer pulses cost less switching loss: the no-load
    // input power falls below the fixed-frequency value (a Zener clamp, where the RCD's
    // V_r²/R floor does not mask it, and an RCD clamp).
    for clamp in [ClampKind::Zener, ClampKind::Rcd] {
        let mut s = fernbank_12v();
        s.clamp = clamp;
        s.clamp_voltage_above_reflected = Some(si(50.0));
        let fixed = flyback_design(&s).unwrap();
        s.light_load_control = LightLoadControl::FrequencyFoldback {
            minimum_peak_fraction: 0.25,
            minimum_frequency: si(20e3),
        };
        let fold = flyback_design(&s).unwrap();
        s.light_load_control = LightLoadControl::Burst {
            minimum_peak_fraction: 0.25,
        };
        let burst = flyback_design(&s).unwrap();
        let p = |d: &FlybackDesign| {
            d.no_load
                .iter()
                .map(|c| c.input_power.value)
                .fold(0.0, f64::max)
        };
        assert!(p(&burst) < p(&fixed), "{} vs {}", p(&burst), p(&fixed));
        assert!(p(&fold) < p(&fixed));
        assert!(p(&burst) <= p(&fold) * (1.0 + 1e-12));
        // full load is untouched
        near(
            burst.corners[0].efficiency,
            fixed.corners[0].efficiency,
            1e-9,
        );
        let l = burst.primary_inductance.value;
        for (d, floor) in [(&burst, 0.0), (&fold, 20e3)] {
            let imin = 0.25 * d.current_limit.value;
            for c in &d.no_load {
                let f = c.switching_frequency.value;
                let want = (2.0 * c.magnetising_power.value / (l * imin * imin)).clamp(floor, 65e3);
                near(f, want, 1e-9);
                // DCM energy per pulse carries the magnetising power at that rate
                near(
                    0.5 * l * c.primary_current_peak.value.powi(2) * f,
                    c.magnetising_power.value,
                    1e-9,
                );
                if f > floor {
                    near(c.primary_current_peak.value, imin, 1e-9);
                }
            }
        }
        // fixed frequency keeps 65 kHz at no load
        assert!(fixed
            .no_load
            .iter()
            .all(|c| c.switching_frequency.value == 65e3));
    }
    // the script reads the controller; bad input names the key
    let v = eval(
        "flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, clamp: \"zener\", \
         light_load_control: \"burst\"}).no_load_input_power < \
         flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, clamp: \"zener\"}).no_load_input_power",
    );
    assert_eq!(v, "true");
    let e = eval_err("flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, light_load_control: \"skip\"})").to_string();
    assert!(e.contains("light_load_control"), "{e}");
    let e = eval_err("flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, light_load_control: \"foldback\", minimum_frequency: 100 * kHz})").to_string();
    assert!(e.contains("minimum_frequency"), "{e}");
    let e = eval_err("flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, light_load_control: \"burst\", minimum_peak_fraction: 0.01})").to_string();
    assert!(e.contains("minimum_peak_fraction"), "{e}");
}
