//! Cores (IEC 60205), gaps and the bench workflow, core loss (iGSE), Dowell, winding
//! harmonics, transformer design, build sheet and rules; invariants by proptest.

use super::common::{check_near, eval, eval_err, eval_quantity, host};
use gapwise::magnetics::{
    self, air_gap_for_inductance, core_by_size, dowell_resistance_factor, igse_coefficient,
    igse_loss_density, igse_loss_density_sampled, inductance_for_air_gap, steinmetz_loss_density,
    FluxSegment, GapPlacement, SteinmetzBand, WindingCurrent,
};
use gapwise::units::{si, Length};
use proptest::prelude::*;
use std::f64::consts::PI;

fn mm(x: f64) -> Length {
    si(x * 1e-3)
}

#[test]
fn toroid_effective_parameters_iec_60205() {
    // IEC 60205 ring formula against ferrite makers' handbook values for the standard ring
    // sizes (value recalled from memory): T25/15/10 le = 60.2 mm, Ae = 48.9 mm², Ve = 2940 mm³;
    // T16/9.6/6.3 le = 38.5 mm, Ae = 19.7 mm², Ve = 760 mm³
    for (name, le, ae, ve) in [
        ("T25/15/10", "60.2 mm", "48.9 mm2", "2940 mm3"),
        ("T16/9.6/6.3", "38.5 mm", "19.7 mm2", "760 mm3"),
    ] {
        let c = format!("core_by_size(\"{name}\")");
        check_near(eval_quantity(&format!("{c}.effective_length")), le, 0.005);
        check_near(eval_quantity(&format!("{c}.effective_area")), ae, 0.006);
        check_near(eval_quantity(&format!("{c}.effective_volume")), ve, 0.01);
    }
}

#[test]
fn e_type_effective_parameters_against_handbook_values() {
    // IEC 60205 summation method from our built-in dimensions against makers' handbook
    // values (every handbook value here is a value recalled from memory, as are the
    // dimensions). Tolerances are what the method achieves with those dimensions:
    // ETD and EFD within 2.5 % on Ae and 3.5 % on le (IEC 60205 method, recalled handbook values)
    let from_dimensions = |name: &str| {
        gapwise::units::Quantity::from_typed(
            magnetics::core_from_built_in_dimensions(name)
                .unwrap()
                .effective_area,
        )
    };
    let length_from_dimensions = |name: &str| {
        gapwise::units::Quantity::from_typed(
            magnetics::core_from_built_in_dimensions(name)
                .unwrap()
                .effective_length,
        )
    };
    for (name, ae, le) in [
        ("ETD29", "76 mm2", "72.0 mm"),
        ("ETD34", "97.1 mm2", "78.6 mm"),
        ("ETD39", "125 mm2", "92.2 mm"),
        ("ETD44", "173 mm2", "103 mm"),
        ("EFD20", "31 mm2", "47 mm"),
        ("EFD25", "58 mm2", "57 mm"),
    ] {
        check_near(from_dimensions(name), ae, 0.025);
        check_near(length_from_dimensions(name), le, 0.035);
    }
    // plain E and EF cores: le within 6 %, Ae high by up to 17 % because the recalled
    // centre-leg and depth dimensions are too large (E16/8/5: every section of the path is
    // at least 22 mm², above the handbook Ae of 20.1 mm²); RM and PQ are shaped cores the
    // E-type model only approximates: Ae within 12 %, le within 6 %
    // (IEC 60205 method, recalled handbook values). This is why the built-in cores carry the
    // handbook values themselves (next test).
    for (name, ae, le, tol_ae, tol_le) in [
        ("E16/8/5", "20.1 mm2", "37.6 mm", 0.17, 0.06),
        ("E30/15/7", "60 mm2", "67 mm", 0.17, 0.06),
        ("E32/16/9", "83 mm2", "74 mm", 0.17, 0.06),
        ("EF20", "32 mm2", "46 mm", 0.17, 0.06),
        ("EF25", "52.5 mm2", "57.5 mm", 0.17, 0.06),
        ("RM8", "64 mm2", "38 mm", 0.12, 0.06),
        ("RM10", "98 mm2", "44 mm", 0.12, 0.06),
        ("PQ20/16", "62 mm2", "37.4 mm", 0.12, 0.06),
        ("PQ26/25", "120 mm2", "54.3 mm", 0.12, 0.06),
        ("PQ32/30", "161 mm2", "74.7 mm", 0.12, 0.06),
    ] {
        check_near(from_dimensions(name), ae, tol_ae);
        check_near(length_from_dimensions(name), le, tol_le);
    }
}

#[test]
fn built_in_cores_carry_handbook_effective_parameters() {
    // makers' handbook values (value recalled from memory): a built-in core uses them for Ae,
    // le, Ve and Amin, and says so; its window and turn length still come from the dimensions
    for (name, ae, le) in [
        ("EF25", "52.5 mm2", "57.5 mm"),
        ("E16/8/5", "20.1 mm2", "37.6 mm"),
        ("ETD34", "97.1 mm2", "78.6 mm"),
    ] {
        let c = format!("core_by_size(\"{name}\")");
        check_near(eval_quantity(&format!("{c}.effective_area")), ae, 1e-9);
        check_near(eval_quantity(&format!("{c}.effective_length")), le, 1e-9);
        assert!(eval(&format!("{c}.effective_parameters_from")).contains("handbook"));
        let plain = magnetics::core_from_built_in_dimensions(name).unwrap();
        let built = core_by_size(name).unwrap();
        assert_eq!(plain.window_area, built.window_area, "{name}");
        assert_eq!(plain.mean_turn_length, built.mean_turn_length, "{name}");
        assert!(built.minimum_area.value <= built.effective_area.value);
    }
    // a size without handbook values keeps the summation and says so
    assert!(eval("core_by_size(\"E19/8/5\").effective_parameters_from").contains("IEC 60205"));
    // the flux check divides by Amin (N ≥ L·I/(B·Amin)): EF25's is the handbook 51.5 mm²
    let c = core_by_size("EF25").unwrap();
    assert!((c.minimum_area.value - 51.5e-6).abs() < 1e-12);
}

#[test]
fn e_core_of_uniform_section_has_that_section_as_ae() {
    // hand calculation of the IEC 60205 E-core formulas themselves (not a reference value):
    // centre leg 8 mm × 10 mm, outer legs 4 mm wide, yokes 4 mm thick, depth 10 mm, so every
    // segment is 80 mm²; then Ae = 80 mm² exactly and le is the plain sum of the lengths:
    // 2·12 mm (legs) + (24 − 8) mm (yokes) + π/4·(4 + 4) + π/4·(4 + 4) (corners)
    let c = "core_from_dimensions(#{family: \"E\", overall_width: 32 * mm, overall_height: 20 * mm, depth: 10 * mm, window_height: 12 * mm, window_width: 24 * mm, centre_leg_width: 8 * mm})";
    check_near(
        eval_quantity(&format!("{c}.effective_area")),
        "80 mm2",
        1e-9,
    );
    check_near(eval_quantity(&format!("{c}.minimum_area")), "80 mm2", 1e-9);
    let le = 2.0 * 12.0 + 16.0 + 2.0 * PI / 4.0 * 8.0;
    check_near(
        eval_quantity(&format!("{c}.effective_length")),
        &format!("{le} mm"),
        1e-9,
    );
}

#[test]
fn every_built_in_core_is_plausible() {
    // physical bounds, no published source: Ve = Ae·le; Amin ≤ Ae for pairs (Ae is an
    // l/A²-weighted mean of the section areas) and Ae within 1.6·Amin; the mean path of a
    // pair is longer than the window's inner perimeter and shorter than the outline's;
    // a ring's le lies between its inner and outer circumference
    let all = magnetics::core_shapes().unwrap();
    assert!(all.len() >= 20);
    for c in &all {
        let (ae, le, ve, amin) = (
            c.effective_area.value,
            c.effective_length.value,
            c.effective_volume.value,
            c.minimum_area.value,
        );
        assert!(
            (ve / (ae * le) - 1.0).abs() < 1e-9,
            "{}: Ve = Ae·le",
            c.name
        );
        let wh = c.window_height.value;
        if c.family == magnetics::CoreFamily::Toroid {
            let r1 = (c.window_area.value / PI).sqrt();
            assert!(
                le > 2.0 * PI * r1,
                "{}: le beyond the inner circumference",
                c.name
            );
            assert!(ae <= amin, "{}: a ring's Ae is below its section", c.name);
            continue;
        }
        let half_ww = c.window_area.value / wh;
        let inner = 2.0 * (wh + half_ww);
        assert!(amin <= ae * (1.0 + 1e-12), "{}: Amin ≤ Ae", c.name);
        assert!(ae <= 1.6 * amin, "{}: Ae within 1.6·Amin", c.name);
        assert!(
            le > inner,
            "{}: le {le} beyond the window perimeter {inner}",
            c.name
        );
        assert!(
            le < inner + 8.0 * ae.sqrt(),
            "{}: le {le} within the core outline",
            c.name
        );
        assert!(
            c.centre_leg_area.value >= amin * (1.0 - 1e-12),
            "{}",
            c.name
        );
    }
}

#[test]
fn user_cores_by_dimensions_and_by_effective_parameters() {
    let a = eval_quantity(
        "core_from_dimensions(#{family: \"toroid\", outer_diameter: 25 * mm, inner_diameter: 15 * mm, height: 10 * mm}).effective_area",
    );
    let b = eval_quantity("core_by_size(\"T25/15/10\").effective_area");
    assert!((a.value() - b.value()).abs() < 1e-12);
    // a user core by effective parameters gives L = µ0·µr·N²·Ae/le without gap
    // (hand calculation of the same formula, not a reference): 4π·10⁻⁷·2000·100·52e-6/58e-3
    let l = eval_quantity(
        "let c = core_from_effective(#{effective_area: 52 * mm2, effective_length: 58 * mm, window_area: 60 * mm2, winding_width: 14 * mm, winding_height: 4 * mm, mean_turn_length: 50 * mm, surface_area: 2000 * mm2}); inductance_for_air_gap(c, 10, 0 * mm)",
    );
    check_near(
        l,
        &format!("{} H", 4e-7 * PI * 2000.0 * 100.0 * 52e-6 / 58e-3),
        1e-9,
    );
}

#[test]
fn bench_spacer_for_a_small_e_core() {
    // common practice, no published source: a small E core of about 24 mm² Ae wound with 96
    // primary turns measures a few thousand µH ungapped (3 mH here); a spacer of about
    // 0.1 mm under the halves brings it near 1.1 mH
    let ae = eval_quantity("core_by_size(\"E19/8/5\").effective_area");
    check_near(ae, "24 mm2", 0.1);
    let g = eval_quantity("spacer_for_target_inductance(\"E19/8/5\", 96, 3 * mH, 1.1 * mH).gap");
    check_near(g, "0.1 mm", 0.3);
    let path = eval_quantity(
        "spacer_for_target_inductance(\"E19/8/5\", 96, 3 * mH, 1.1 * mH).gap_in_path",
    );
    check_near(path, &format!("{} m", 2.0 * g.value()), 1e-12);
    // the reverse: the effective gap from the measured gapped inductance is the same gap
    let back =
        eval_quantity("effective_gap_from_inductance(\"E19/8/5\", 96, 1.1 * mH, 3 * mH).gap");
    check_near(back, &format!("{} m", g.value()), 1e-6);
    // a spacer can only lower inductance
    let e = eval_err("spacer_for_target_inductance(\"E19/8/5\", 96, 1 * mH, 1.1 * mH)");
    assert!(
        e.message.contains("must be below the measured ungapped"),
        "{}",
        e.message
    );
}

#[test]
fn gap_and_inductance_are_inverse() {
    // AL ⇄ gap consistency (the solver against the forward formula; not a reference value)
    for (core, place) in [
        ("ETD29", "centre_leg"),
        ("EF25", "spacer"),
        ("PQ26/25", "centre_leg"),
    ] {
        let g = eval_quantity(&format!(
            "air_gap_for_inductance(\"{core}\", 40, 600 * uH, \"{place}\").gap"
        ));
        let l = eval_quantity(&format!(
            "inductance_for_air_gap(\"{core}\", 40, {} * m, \"{place}\")",
            g.value()
        ));
        check_near(l, "600 uH", 1e-6);
        let al = eval_quantity(&format!(
            "air_gap_for_inductance(\"{core}\", 40, 600 * uH, \"{place}\").inductance_factor"
        ));
        check_near(al, &format!("{} H", 600e-6 / 1600.0), 1e-6);
    }
}

#[test]
fn gap_functions_refuse_bad_input() {
    for (src, needle) in [
        ("air_gap_for_inductance(\"ETD29\", -3, 1 * mH)", "turns"),
        ("air_gap_for_inductance(\"ETD29\", 40, 1 * A)", "inductance"),
        ("inductance_for_air_gap(\"ETD29\", 40, -0.1 * mm)", "gap"),
        (
            "inductance_for_air_gap(\"T25/15/10\", 40, 0.1 * mm, \"spacer\")",
            "toroid",
        ),
        (
            "inductance_for_air_gap(\"ETD29\", 40, 0.1 * mm, \"sideways\")",
            "gap_placement",
        ),
        ("air_gap_for_inductance(\"ETD29\", 40, 1 * H)", "no air gap"),
        ("core_by_size(\"ETD 99\")", "unknown core size"),
        ("dowell_resistance_factor(1.0, 0)", "layers"),
    ] {
        let e = eval_err(src);
        assert!(e.message.contains(needle), "{src}: {}", e.message);
    }
}

#[test]
fn fringing_factor_formula() {
    // McLyman, Transformer and Inductor Design Handbook, 4th ed. 2011, ch. 8:
    // F = 1 + (lg/√A)·ln(2G/lg); hand calculation of the same formula (not an independent
    // reference) for lg = 0.5 mm, A = 76 mm², G = 22 mm: 1 + 0.5/8.7178·ln(88) = 1.2568
    let f = magnetics::fringing_factor(mm(0.5), si(76e-6), mm(22.0)).unwrap();
    assert!((f - (1.0 + 0.5 / 76f64.sqrt() * 88f64.ln())).abs() < 1e-12);
    assert!((f - 1.2568).abs() < 1e-3);
    // a gap as long as the window is outside the formula's range
    assert!(magnetics::fringing_factor(mm(22.0), si(76e-6), mm(22.0)).is_err());
}

#[test]
fn energy_in_the_gap_equals_half_l_i_squared() {
    // Erickson & Maksimović, Fundamentals of Power Electronics, 3rd ed. 2020, magnetics
    // chapter: with a core of negligible reluctance the energy ½·L·I² sits in the gap,
    // W = B²·Vgap/(2µ0), with the fringing-widened gap area A·F and B = Φ/(A·F)
    let core = core_by_size("ETD29").unwrap();
    let n = 50.0;
    let g = mm(0.4);
    let mu = 1e9;
    let l = inductance_for_air_gap(&core, n, g, GapPlacement::CentreLeg, mu)
        .unwrap()
        .value;
    let f = magnetics::fringing_factor(g, core.centre_leg_area, core.window_height).unwrap();
    let i = 0.8;
    let phi = l * i / n;
    let area = core.centre_leg_area.value * f;
    let b = phi / area;
    let w_gap = b * b * area * g.value / (2.0 * magnetics::VACUUM_PERMEABILITY);
    let w_l = 0.5 * l * i * i;
    assert!((w_gap - w_l).abs() / w_l < 1e-6, "{w_gap} vs {w_l}");
}

fn band() -> SteinmetzBand {
    magnetics::ferrite_material("mnzn_power_100khz")
        .unwrap()
        .band_at(si(65e3))
        .unwrap()
}

#[test]
fn igse_equals_steinmetz_for_a_sinusoid() {
    // Venkatachalam, Sullivan, Abdallah, Tacca, COMPEL 2002: ki is defined so that the
    // iGSE gives the classic Steinmetz loss k·f^α·B̂^β for a sinusoid
    let b = band();
    let f = 65e3;
    let bpk = 0.12;
    let n = 20_000;
    let samples: Vec<f64> = (0..n)
        .map(|k| bpk * (2.0 * PI * k as f64 / n as f64).sin())
        .collect();
    let igse = igse_loss_density_sampled(&b, si(1.0 / f), &samples)
        .unwrap()
        .value;
    let classic = steinmetz_loss_density(&b, si(f), si(bpk)).unwrap().value;
    assert!(
        (igse - classic).abs() / classic < 1e-3,
        "{igse} vs {classic}"
    );
}

#[test]
fn igse_of_a_dcm_waveform_against_independent_quadrature() {
    // Cross-check of the closed-form piecewise-linear iGSE against an independent
    // fine-step midpoint quadrature (2·10⁶ steps) of the iGSE integral
    // (1/T)∫ ki·|dB/dt|^α·ΔB^(β−α) dt on the waveform B(t), with ki's ∫|cos θ|^α dθ also
    // integrated independently; no crate is added, the quadrature lives here in the test.
    let b = band();
    let (t, d, fall, swing) = (1.0 / 65e3, 0.35, 0.4, 0.2);
    let segs = [
        FluxSegment {
            duration: si(d * t),
            change: si(swing),
        },
        FluxSegment {
            duration: si(fall * t),
            change: si(-swing),
        },
        FluxSegment {
            duration: si((1.0 - d - fall) * t),
            change: si(0.0),
        },
    ];
    let closed = igse_loss_density(&b, &segs).unwrap().value;
    let bt = |x: f64| {
        if x < d * t {
            swing * x / (d * t)
        } else if x < (d + fall) * t {
            swing * (1.0 - (x - d * t) / (fall * t))
        } else {
            0.0
        }
    };
    let steps = 2_000_000;
    let h = t / steps as f64;
    let mut integral = 0.0;
    for k in 0..steps {
        let x = (k as f64 + 0.5) * h;
        let slope = (bt((x + h / 4.0).min(t)) - bt((x - h / 4.0).max(0.0))) / (h / 2.0);
        integral += slope.abs().powf(b.alpha) * h;
    }
    let m = 1_000_000;
    let cos_int: f64 = (0..m)
        .map(|k| {
            ((k as f64 + 0.5) * 2.0 * PI / m as f64)
                .cos()
                .abs()
                .powf(b.alpha)
        })
        .sum::<f64>()
        * 2.0
        * PI
        / m as f64;
    let ki = b.k / ((2.0 * PI).powf(b.alpha - 1.0) * cos_int * 2f64.powf(b.beta - b.alpha));
    assert!((ki - igse_coefficient(&b)).abs() / ki < 1e-6);
    let numeric = ki * swing.powf(b.beta - b.alpha) * integral / t;
    assert!(
        (numeric - closed).abs() / closed < 1e-3,
        "{numeric} vs {closed}"
    );
    // a waveform that does not return to its start is refused
    assert!(igse_loss_density(&b, &segs[..1]).is_err());
}

#[test]
fn core_loss_from_script_prints_with_units() {
    let q = eval_quantity(
        "core_loss_igse(#{frequency: 65 * kHz, flux_swing: 0.2 * T, duty_cycle: 0.4, core: \"EF25\"}).core_loss",
    );
    assert!(q.value() > 0.0 && q.value() < 5.0);
    let e = eval_err("core_loss_igse(#{frequency: 2 * MHz, flux_swing: 0.2 * T, duty_cycle: 0.4})");
    assert!(
        e.message.contains("outside the Steinmetz bands"),
        "{}",
        e.message
    );
}

#[test]
fn dowell_limits_and_values() {
    // Dowell 1966 / Kazimierczuk 2014 ch. 5: Fr → 1 at low frequency
    for m in [1.0, 2.0, 5.0] {
        assert!((dowell_resistance_factor(1e-4, m).unwrap() - 1.0).abs() < 1e-9);
        assert!((dowell_resistance_factor(0.05, m).unwrap() - 1.0).abs() < 1e-3);
    }
    // Δ = 1: hand calculation of Dowell's formula (not an independent reference):
    // m = 1: (sinh 2 + sin 2)/(cosh 2 − cos 2) = 1.0856; m = 2 adds 2·(sinh 1 − sin 1)/(cosh 1 + cos 1) = 0.3203
    check_near(
        eval_quantity("dowell_resistance_factor(1.0, 1)"),
        "1.0856",
        1e-3,
    );
    check_near(
        eval_quantity("dowell_resistance_factor(1.0, 2)"),
        "1.4060",
        1e-3,
    );
    // Dowell's curves (Dowell 1966, Fig. 6, value recalled from memory): at Δ = 2 with
    // 3 layers the factor is about 9
    let f = dowell_resistance_factor(2.0, 3.0).unwrap();
    assert!((8.0..11.0).contains(&f), "{f}");
    assert!(dowell_resistance_factor(f64::NAN, 2.0).is_err());
    assert!(dowell_resistance_factor(1.0, 0.5).is_err());
}

#[test]
fn winding_harmonics_against_an_fft() {
    // the closed-form Fourier series of a CCM secondary current against rustfft on 4096
    // samples (independent general-purpose FFT crate)
    use rustfft::{num_complex::Complex, FftPlanner};
    let w = WindingCurrent {
        start_fraction: 0.42,
        conduction_fraction: 0.5,
        initial: si(3.0),
        final_value: si(1.2),
    };
    let n = 4096;
    let mut buf: Vec<Complex<f64>> = (0..n)
        .map(|k| {
            let t = (k as f64 + 0.5) / n as f64;
            let u = t - w.start_fraction;
            let v = if (0.0..w.conduction_fraction).contains(&u) {
                3.0 + (1.2 - 3.0) * u / w.conduction_fraction
            } else {
                0.0
            };
            Complex::new(v, 0.0)
        })
        .collect();
    FftPlanner::new().plan_fft_forward(n).process(&mut buf);
    let ours = w.harmonics_rms(10).unwrap();
    for h in 1..=10 {
        let fft_rms = 2.0 * buf[h].norm() / n as f64 / 2f64.sqrt();
        assert!(
            (fft_rms - ours[h - 1].value).abs() < 2e-3 * ours[0].value,
            "harmonic {h}: {fft_rms} vs {}",
            ours[h - 1].value
        );
    }
    // Parseval: DC² + Σ harmonics² approaches the RMS²
    let dc = w.average().unwrap().value;
    let sum: f64 = dc * dc
        + w.harmonics_rms(2000)
            .unwrap()
            .iter()
            .map(|x| x.value.powi(2))
            .sum::<f64>();
    let rms = w.rms().unwrap().value;
    assert!((sum - rms * rms).abs() / (rms * rms) < 2e-3);
}

const DESIGN: &str = "#{core: \"EF25\", primary_inductance: 1.2 * mH, switching_frequency: 65 * kHz, primary_peak_current: 0.5 * A, duty_cycle: 0.4, secondary_conduction_fraction: 0.45, current_limit: 0.55 * A, reflected_voltage: 90 * V, output_voltage: 12 * V, bias_voltage: 14 * V, margin_width: 2 * mm}";

#[test]
fn transformer_design_turns_flux_and_checks() {
    let d = format!("transformer_design({DESIGN})");
    // Np·Ae·B = L·I at the worst-case limit: B_limit = 1.1·1.2 mH·1.1·0.55 A/(Np·Amin)
    let np = eval(&format!("{d}.design.primary_turns"))
        .parse::<f64>()
        .unwrap();
    let ns = eval(&format!("{d}.design.secondary_turns"))
        .parse::<f64>()
        .unwrap();
    let amin = eval_quantity("core_by_size(\"EF25\").minimum_area").value();
    let b = eval_quantity(&format!("{d}.design.flux_density_limit_peak"));
    check_near(
        b,
        &format!("{} T", 1.1 * 1.2e-3 * 1.1 * 0.55 / (np * amin)),
        1e-9,
    );
    assert!(b.value() <= 0.3 + 1e-12);
    // reflected voltage from integer turns: (Np/Ns)·(12 V + 0.5 V)
    check_near(
        eval_quantity(&format!("{d}.design.reflected_voltage")),
        &format!("{} V", np / ns * 12.5),
        1e-9,
    );
    let text = eval(&format!("{d}.build_sheet"));
    assert!(
        text.contains("Caution: mains voltages are lethal"),
        "{text}"
    );
    assert!(text.contains("Step 1: primary, first half"), "{text}");
    assert!(text.contains("Gap and bench check"));
    let worst = eval(&format!("worst_status({d}.checks)"));
    assert_ne!(
        worst,
        "fail",
        "{}",
        eval(&format!("checks_table({d}.checks)"))
    );
    let flux = eval(&format!("{d}.checks[0].status"));
    assert_ne!(flux, "fail");
    // house limit tightened: the temperature-rise check fails
    let fail = eval(&format!(
        "let spec = {DESIGN}; spec.max_temperature_rise = 1 * K; worst_status(transformer_design(spec).checks)"
    ));
    assert_eq!(fail, "fail");
}

#[test]
fn transformer_design_bad_inputs_name_the_parameter() {
    let e = eval_err(&format!(
        "let spec = {DESIGN}; spec.primary_inductance = -1 * mH; transformer_design(spec)"
    ));
    assert!(e.message.contains("primary_inductance"), "{}", e.message);
    let e = eval_err(&format!(
        "let spec = {DESIGN}; spec.core = \"ETD28\"; transformer_design(spec)"
    ));
    assert!(
        e.message.contains("did you mean `ETD29`") || e.message.contains("ETD29"),
        "{}",
        e.message
    );
    let e = eval_err(&format!(
        "let spec = {DESIGN}; spec.switching_frequency = 5 * V; transformer_design(spec)"
    ));
    assert!(e.message.contains("switching_frequency"), "{}", e.message);
    let e = eval_err(&format!(
        "let spec = {DESIGN}; spec.primary_peak_curent = 1 * A; transformer_design(spec)"
    ));
    assert!(e.message.contains("unknown key"), "{}", e.message);
}

#[test]
fn interleaving_lowers_leakage_and_creepage_is_checked() {
    // MMF energy method (Erickson & Maksimović 3rd ed., magnetics chapter, interleaved
    // windings): splitting the primary around the secondary halves the peak MMF, so the
    // leakage drops to well under half
    let split = eval_quantity(&format!(
        "transformer_design({DESIGN}).design.leakage_inductance"
    ));
    let plain = eval_quantity(&format!(
        "let spec = {DESIGN}; spec.winding_order = \"primary_secondary_bias\"; transformer_design(spec).design.leakage_inductance"
    ));
    assert!(split.value() < 0.5 * plain.value(), "{split} vs {plain}");
    let st = eval(&format!(
        "let spec = {DESIGN}; spec.required_creepage = 6.4 * mm; let c = transformer_design(spec).checks; c.filter(|x| x.id == \"creepage_along_bobbin\")[0].status"
    ));
    assert_eq!(st, "fail", "2 × 2 mm margins are below 6.4 mm");
    // a given thermal resistance replaces the surface fit: ΔT = Rθ·P
    let r = eval_quantity(&format!(
        "let spec = {DESIGN}; spec.thermal_resistance = 30 * K / W; let d = transformer_design(spec).design; d.temperature_rise / d.total_loss"
    ));
    check_near(r, "30 K/W", 1e-9);
}

#[test]
fn wire_by_current_density_and_skin_depth() {
    // 2.6 A at 6 A/mm² needs 0.433 mm² (d = 0.743 mm), above two skin depths at 65 kHz and
    // 100 °C (2 × 0.297 mm), so 0.56 mm strands in parallel: 2 give 0.493 mm²
    // (hand calculation of the rule, not a reference)
    let w = "winding_wire(#{rms_current: 2.6 * A, frequency: 65 * kHz})";
    assert_eq!(eval(&format!("{w}.strands")), "2");
    check_near(
        eval_quantity(&format!("{w}.strand_diameter")),
        "0.56 mm",
        1e-9,
    );
    assert!(eval_quantity(&format!("{w}.current_density")).value() <= 6e6);
    // AWG: 0.5 A needs 0.0833 mm² (d = 0.326 mm); ASTM B258: AWG 27 is 0.361 mm, AWG 28
    // is 0.321 mm (too thin), so one strand of AWG 27
    let a = "winding_wire(#{rms_current: 0.5 * A, wire_system: \"awg\", frequency: 65 * kHz})";
    assert_eq!(eval(&format!("{a}.gauge")), "27");
    assert_eq!(eval(&format!("{a}.strands")), "1");
    let e = eval_err("winding_wire(#{rms_current: 0.5 * A, insulation: \"paper\"})");
    assert!(e.message.contains("insulation"), "{}", e.message);
}

#[test]
fn secondary_wire_kinds() {
    // litz: strands of the given diameter, copper area for 6 A/mm², and a lower AC factor
    // than solid parallel strands at the same current (Dowell per strand layer)
    let litz = eval(&format!("let spec = {DESIGN}; spec.secondary_litz = true; transformer_design(spec).design[\"secondary.wire\"]"));
    assert!(litz.contains("litz") && litz.contains("0.100 mm"), "{litz}");
    let tiw = eval(&format!("let spec = {DESIGN}; spec.secondary_triple_insulated = true; transformer_design(spec).design[\"secondary.wire\"]"));
    assert!(tiw.contains("triple-insulated"), "{tiw}");
    let e = eval_err(&format!("let spec = {DESIGN}; spec.secondary_triple_insulated = true; spec.secondary_litz = true; transformer_design(spec)"));
    assert!(e.message.contains("exclude each other"), "{}", e.message);
}

#[test]
fn materials_are_editable_from_scripts() {
    let b = eval_quantity(
        "ferrite_material(\"mnzn_power_100khz\", #{saturation_100c: 0.35 * T}).saturation_100c",
    );
    check_near(b, "0.35 T", 1e-12);
    let e = eval_err("ferrite_material(\"mnzn_power_100khz\", #{saturation_100c: 3 * A})");
    assert!(e.message.contains("saturation_100c"), "{}", e.message);
    // an edited material feeds the design: lower Bsat lowers the margin
    let m = eval(&format!(
        "let spec = {DESIGN}; spec.material = ferrite_material(\"mnzn_power_100khz\", #{{saturation_100c: 0.3 * T}}); transformer_design(spec).design.saturation_margin"
    ));
    assert!(m.parse::<f64>().unwrap() < 0.2, "{m}");
}

#[test]
fn core_selection_respects_the_stock_list() {
    let t = eval("core_selection(#{primary_inductance: 1 * mH, peak_current: 0.5 * A, primary_rms_current: 0.2 * A, secondary_rms_current_referred: 0.25 * A, stock: [\"ETD29\", \"E16/8/5\"]}).rows");
    assert_eq!(t, "2");
    let t = eval("core_selection(#{primary_inductance: 10 * mH, peak_current: 2 * A, primary_rms_current: 1 * A, secondary_rms_current_referred: 1 * A, stock: [\"E16/8/5\"]}).rows");
    assert_eq!(t, "0");
    let _ = host();
}

#[test]
fn temperature_rise_mclyman() {
    // McLyman 2011, ch. 6: ΔT = 450·(P/At)^0.826; 1 W over 50 cm² → 450·0.02^0.826 = 17.78 K
    // (hand calculation of the same formula, not an independent reference)
    check_near(
        eval_quantity("transformer_temperature_rise(1 * W, 50 * cm2)"),
        "17.78 K",
        1e-3,
    );
    assert!(eval_err("transformer_temperature_rise(10 * W, 50 * cm2)")
        .message
        .contains("0.1 W/cm²"));
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(64))]

    #[test]
    fn dowell_rises_with_layers(delta in 0.01f64..15.0, m in 1.0f64..20.0, more in 0.5f64..5.0) {
        // Dowell 1966: at a fixed penetration ratio, more layers never lower Fr, and Fr ≥ 1
        let a = dowell_resistance_factor(delta, m).unwrap();
        let b = dowell_resistance_factor(delta, m + more).unwrap();
        prop_assert!(a >= 1.0 - 1e-12 && b >= a);
    }

    #[test]
    fn more_turns_never_lower_inductance(n in 1.0f64..300.0, extra in 0.0f64..100.0, g in 0.0f64..1.5) {
        let core = core_by_size("ETD29").unwrap();
        let l1 = inductance_for_air_gap(&core, n, mm(g), GapPlacement::Spacer, 2000.0).unwrap().value;
        let l2 = inductance_for_air_gap(&core, n + extra, mm(g), GapPlacement::Spacer, 2000.0).unwrap().value;
        prop_assert!(l2 >= l1);
    }

    #[test]
    fn larger_gap_never_raises_inductance(g in 0.0f64..2.0, more in 0.0f64..2.0) {
        let core = core_by_size("PQ26/25").unwrap();
        let l1 = inductance_for_air_gap(&core, 40.0, mm(g), GapPlacement::CentreLeg, 2000.0).unwrap().value;
        let l2 = inductance_for_air_gap(&core, 40.0, mm(g + more), GapPlacement::CentreLeg, 2000.0).unwrap().value;
        prop_assert!(l2 <= l1 * (1.0 + 1e-12));
    }

    #[test]
    fn flux_density_scales_with_current(scale in 0.1f64..1.0) {
        let mk = |ip: f64| {
            let mut spec = tests_support::spec();
            spec.primary_peak_current = si(ip);
            magnetics::transformer_design(&spec).unwrap()
        };
        let full = mk(0.5);
        let part = mk(0.5 * scale);
        prop_assert_eq!(full.primary_turns, part.primary_turns);
        let r = part.flux_density_peak.value / full.flux_density_peak.value;
        prop_assert!((r - scale).abs() < 1e-9);
    }

    #[test]
    fn no_panic_or_nan_on_finite_inputs(
        l in -1e-2f64..1e-1, ip in -1.0f64..20.0, iv in -1.0f64..5.0, d in -0.5f64..1.5,
        f in -1e5f64..1e6, vor in -10.0f64..400.0, bmax in -0.1f64..1.0, core_ix in 0usize..22,
    ) {
        let cores = magnetics::core_shapes().unwrap();
        let mut spec = tests_support::spec();
        spec.core = cores[core_ix % cores.len()].clone();
        spec.primary_inductance = si(l);
        spec.primary_peak_current = si(ip);
        spec.current_limit = si(ip.abs() * 1.1);
        spec.primary_valley_current = si(iv);
        spec.duty_cycle = d;
        spec.secondary_conduction_fraction = (1.0 - d).clamp(-1.0, 2.0);
        spec.switching_frequency = si(f);
        spec.reflected_voltage = si(vor);
        spec.max_flux_density = si(bmax);
        if let Ok(t) = magnetics::transformer_design(&spec) {
            use gapwise::report::{Record, Value};
            for field in t.fields() {
                if let Value::Quantity(q) = field.value { prop_assert!(q.value().is_finite(), "{}", field.name); }
                if let Value::Number(x) = field.value { prop_assert!(x.is_finite(), "{}", field.name); }
            }
        }
        let core = &cores[core_ix % cores.len()];
        let _ = air_gap_for_inductance(core, ip, si(l), GapPlacement::Spacer, vor);
        let _ = inductance_for_air_gap(core, ip, mm(iv), GapPlacement::CentreLeg, vor);
        let _ = dowell_resistance_factor(d * 100.0, vor);
    }
}

mod tests_support {
    use gapwise::magnetics::*;
    use gapwise::units::{si, Quantity};

    /// A fixed operating point for the invariant tests.
    pub fn spec() -> TransformerSpec {
        let c = |x: f64| Quantity::celsius(x).to_typed("t").unwrap();
        TransformerSpec {
            core: core_by_size("EF25").unwrap(),
            material: ferrite_material("mnzn_power_100khz").unwrap(),
            primary_inductance: si(1.2e-3),
            inductance_tolerance: 0.1,
            switching_frequency: si(65e3),
            primary_peak_current: si(0.5),
            primary_valley_current: si(0.0),
            duty_cycle: 0.4,
            secondary_conduction_fraction: 0.45,
            current_limit: si(0.55),
            current_limit_tolerance: 0.1,
            current_limit_overshoot: si(0.0),
            short_circuit_peak_current: None,
            reflected_voltage: si(90.0),
            output_voltage: si(12.0),
            rectifier_drop: si(0.5),
            output_current: None,
            additional_outputs: Vec::new(),
            bias: None,
            max_flux_density: si(0.3),
            saturation_margin: 0.1,
            core_temperature: c(100.0),
            winding_temperature: c(100.0),
            ambient_temperature: c(40.0),
            gap_placement: GapPlacement::CentreLeg,
            wire_system: WireSystem::Metric,
            enamel_grade: 2,
            secondary_triple_insulated: false,
            primary_litz: false,
            secondary_litz: false,
            litz_strand_diameter: si(0.1e-3),
            max_strand_diameter: None,
            max_current_density: si(6e6),
            max_window_fill: 0.35,
            max_temperature_rise: si(40.0),
            max_layers: 3,
            insulation_layers: 3,
            functional_tape_layers: 1,
            tape_thickness: si(50e-6),
            margin_width: si(2e-3),
            required_creepage: None,
            thermal_resistance: None,
            winding_order: WindingOrder::SplitPrimary,
            insulation_class: "B".into(),
        }
    }
}

#[test]
fn transformer_inputs_come_from_the_flyback_design() {
    // The adapter carries the design's own numbers: the corner with the highest primary peak
    // below the current limit (low line, full load), the nominal limit and its tolerance.
    // Checked against the same design's fields read independently (a consistency check, not
    // a reference value).
    let d = "let d = flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, bias_voltage: 13 * V}); let t = transformer_inputs_from_flyback(d); ";
    let peak = eval_quantity(&format!("{d} t.primary_peak_current / flyback_corner(d, \"low_line_full_load\").primary_current_peak"));
    check_near(peak, "1", 1e-12);
    let limit = eval_quantity(&format!("{d} t.current_limit / d.current_limit"));
    check_near(limit, "1", 1e-12);
    let l = eval_quantity(&format!("{d} t.primary_inductance / d.primary_inductance"));
    check_near(l, "1", 1e-12);
    // CCM at low line: the secondary conducts for the rest of the period
    let sum = eval_quantity(&format!(
        "{d} t.duty_cycle + t.secondary_conduction_fraction"
    ));
    check_near(sum, "1", 1e-12);
    assert_eq!(eval(&format!("{d} t.bias_voltage")), "13 V");
    // the transformer designed from it keeps the flux at the current limit under the house rule
    let b = eval_quantity(&format!(
        "{d} t.core = \"EF25\"; t.max_flux_density = 0.32 * T; transformer_design(t).design.flux_density_limit_peak"
    ));
    assert!(b.value() <= 0.32, "{b}");
}

#[test]
fn several_outputs_share_the_secondary_ampere_turns() {
    // 12 V / 1 A regulated plus 5 V / 1 A (0.4 V drop) on the EF25 design above
    let two = "let spec = DESIGN_SPEC; spec.output_current = 1 * A; spec.additional_outputs = [#{voltage: 5 * V, current: 1 * A, rectifier_drop: 0.4 * V}]; let d = transformer_design(spec).design; ";
    let two = two.replace("DESIGN_SPEC", DESIGN);
    let turns = |e: &str| -> f64 { eval(&format!("{two} {e}")).parse().unwrap() };
    let ns = turns("d.secondary_turns");
    let n2 = turns("d[\"output_2.turns\"]");
    // hand calculation of the same turns formula (not a reference): N2 = round(Ns·5.4/12.5)
    assert_eq!(n2, (ns * 5.4 / 12.5).round());
    // ampere-turn balance of coupled windings, Σ Nk·ik = Np·ip (Erickson & Maksimović, 3rd
    // ed. (2020), chapter 6, flyback with several outputs): the two secondaries' RMS
    // ampere-turns add up to those of the single secondary of the one-output design
    let single = eval_quantity(&format!(
        "let d = transformer_design({DESIGN}).design; d.secondary_turns * d[\"secondary.rms_current\"]"
    ));
    let shared = eval_quantity(&format!(
        "{two} d.secondary_turns * d[\"secondary.rms_current\"] + d[\"output_2.turns\"] * d[\"secondary_2.rms_current\"]"
    ));
    check_near(shared, &format!("{} A", single.value()), 1e-9);
    // shares follow Nk·Ik and add up to one (definition)
    let s1 = eval_quantity(&format!("{two} d.secondary_current_share")).value();
    let s2 = eval_quantity(&format!("{two} d[\"output_2.current_share\"]")).value();
    assert!((s1 + s2 - 1.0).abs() < 1e-12);
    assert!((s2 / s1 - n2 / ns).abs() < 1e-12, "{s1} {s2}");
    // integer turns: the output voltage lands within half a turn's volts of the wish
    let v2 = eval_quantity(&format!("{two} d[\"output_2.voltage\"]")).value();
    assert!((v2 - 5.0).abs() <= 0.5 * 12.5 / ns + 1e-9, "{v2}");
    // the extra winding is wound and appears in the build sheet and losses
    let sheet = eval(&format!(
        "let spec = {DESIGN}; spec.output_current = 1 * A; spec.additional_outputs = [#{{voltage: 5 * V, current: 1 * A}}]; transformer_design(spec).build_sheet"
    ));
    assert!(sheet.contains("secondary 2"), "{sheet}");
    // bad input names the parameter
    let e = eval_err(&format!(
        "let spec = {DESIGN}; spec.additional_outputs = [#{{voltage: 5 * V, current: 1 * A}}]; transformer_design(spec)"
    ));
    assert!(e.message.contains("output_current"), "{}", e.message);
    let e = eval_err(&format!(
        "let spec = {DESIGN}; spec.output_current = 1 * A; spec.additional_outputs = [#{{voltage: -5 * V, current: 1 * A}}]; transformer_design(spec)"
    ));
    assert!(
        e.message.contains("additional_outputs[0]") && e.message.contains("voltage"),
        "{}",
        e.message
    );
}

#[test]
fn every_flyback_output_reaches_the_transformer() {
    // the adapter carries the second output of a two-output flyback (consistency check)
    let d = "let d = flyback_design(#{outputs: [#{voltage: 12 * V, current: 1 * A}, #{voltage: 5 * V, current: 0.6 * A}]}); let t = transformer_inputs_from_flyback(d); ";
    assert_eq!(eval(&format!("{d} t.additional_outputs.len()")), "1");
    assert_eq!(eval(&format!("{d} t.additional_outputs[0].voltage")), "5 V");
    assert_eq!(eval(&format!("{d} t.output_current")), "1 A");
    let n2: i64 = eval(&format!(
        "{d} t.core = \"EF25\"; t.max_flux_density = 0.32 * T; transformer_design(t).design[\"output_2.turns\"]"
    ))
    .parse()
    .unwrap();
    assert!(n2 >= 1);
}

#[test]
fn spacer_fringing_belongs_to_each_outer_leg() {
    // McLyman, Transformer and Inductor Design Handbook, 4th ed. 2011, ch. 8: the fringing
    // factor F = 1 + (lg/√A)·ln(2G/lg) is for one pole face. With a spacer the two outer
    // legs are two faces of Ao/2 each, in parallel. Hand calculation of the same formulas
    // (not an independent reference): L = N²/(le/(µ0·µr·Ae) + lg/(µ0·Ac·Fc) + lg/(µ0·Ao·Fo))
    let core = core_by_size("ETD29").unwrap();
    let (n, g, mu_r) = (60.0, 0.2e-3, 2000.0);
    let mu0 = 4e-7 * PI;
    let h = core.window_height;
    let ac = core.centre_leg_area.value;
    let ao = core.outer_leg_area.value;
    let fc = magnetics::fringing_factor(si(g), si(ac), h).unwrap();
    let fo = magnetics::fringing_factor(si(g), si(ao / 2.0), h).unwrap();
    let r = core.effective_length.value / (mu0 * mu_r * core.effective_area.value)
        + g / (mu0 * ac * fc)
        + g / (mu0 * ao * fo);
    let l = inductance_for_air_gap(&core, n, si(g), GapPlacement::Spacer, mu_r).unwrap();
    assert!((l.value / (n * n / r) - 1.0).abs() < 1e-6, "{}", l.value);
    // a smaller face fringes relatively more: the per-leg factor exceeds the whole-area one
    let fo_whole = magnetics::fringing_factor(si(g), si(ao), h).unwrap();
    assert!(fo > fo_whole);
}

/// Issue 12: checking a transformer that already exists.
mod existing_transformer {
    use super::super::common::{check_near, eval_err, eval_quantity};
    use super::tests_support;
    use gapwise::magnetics::*;
    use gapwise::report::{Record, Value};
    use gapwise::units::si;

    fn rel_close(a: f64, b: f64, rel: f64) -> bool {
        (a - b).abs() <= rel * b.abs().max(f64::MIN_POSITIVE)
    }

    /// The given transformer that `transformer_design` chose: its own turns and gap.
    fn given_from(d: &TransformerDesign) -> GivenTransformer {
        GivenTransformer {
            primary_turns: d.primary_turns,
            primary_first_half_turns: None,
            secondary_turns: d.secondary_turns,
            additional_output_turns: d.additional_outputs.iter().map(|x| x.turns).collect(),
            bias_turns: (d.bias_turns > 0).then_some(d.bias_turns),
            magnetising: GivenMagnetising::Gap(d.gap.gap),
        }
    }

    #[test]
    fn checking_a_transformer_with_its_own_turns_and_gap_gives_back_its_design() {
        // Issue 12 round trip: transformer_check fed the turns and gap transformer_design chose
        // returns the same design (the gap gives back the inductance to the gap solver's 1 pm).
        // Single output, and two outputs with a bias winding on a spacer gap.
        let one = tests_support::spec();
        let mut multi = tests_support::spec();
        multi.output_current = Some(si(1.0));
        multi.additional_outputs = vec![AdditionalOutput {
            voltage: si(5.0),
            rectifier_drop: si(0.4),
            current: si(0.5),
        }];
        multi.bias = Some(BiasWinding {
            voltage: si(15.0),
            current: si(3e-3),
            rectifier_drop: si(0.7),
        });
        multi.gap_placement = GapPlacement::Spacer;
        multi.current_limit_overshoot = si(0.02);
        for spec in [one, multi] {
            let d = transformer_design(&spec).unwrap();
            let c = transformer_check(&spec, &given_from(&d)).unwrap();
            assert!(c.inductance_error.abs() < 1e-6, "{}", c.inductance_error);
            for (a, b) in d.fields().iter().zip(c.design.fields().iter()) {
                assert_eq!(a.name, b.name);
                match (&a.value, &b.value) {
                    (Value::Quantity(x), Value::Quantity(y)) => {
                        let (x, y) = (x.value(), y.value());
                        assert!(
                            rel_close(y, x, 1e-5) || (x - y).abs() < 1e-15,
                            "{}: {x} vs {y}",
                            a.name
                        );
                    }
                    (Value::Number(x), Value::Number(y)) => {
                        assert!(
                            rel_close(*y, *x, 1e-5) || (x - y).abs() < 1e-9,
                            "{}: {x} vs {y}",
                            a.name
                        );
                    }
                    (x, y) => assert_eq!(x, y, "{}", a.name),
                }
            }
            let rules = transformer_check_rules(&spec, &c).unwrap();
            let base = transformer_checks(&spec, &d).unwrap();
            assert_eq!(rules.len(), base.len() + 1);
            for (a, b) in base.iter().zip(&rules) {
                assert_eq!((&a.id, a.status), (&b.id, b.status));
            }
            assert_eq!(rules.last().unwrap().status, gapwise::rules::Status::Pass);
        }
    }

    #[test]
    fn a_measured_inductance_sets_the_flux_at_the_current_limit() {
        // B = L·I/(N·A) (McLyman, 4th ed. (2011), chapter 8): with 1.3 mH measured on 50 turns
        // and the limit 0.55 A + 10 % plus an overshoot of 20 mA, inductance tolerance +10 %, in
        // the smallest section: B = 1.1 × 1.3 mH × (0.605 + 0.02) A / (50 × A_min). At full load
        // B = 1.3 mH × 0.5 A/(50 × A_e). (Hand calculation of the formula.)
        let mut spec = tests_support::spec();
        spec.current_limit_overshoot = si(0.02);
        let given = GivenTransformer {
            primary_turns: 50,
            primary_first_half_turns: Some(20),
            secondary_turns: 7,
            additional_output_turns: vec![],
            bias_turns: None,
            magnetising: GivenMagnetising::MeasuredInductance(si(1.3e-3)),
        };
        let c = transformer_check(&spec, &given).unwrap();
        let core = &spec.core;
        let amin = core.minimum_area.value.min(core.effective_area.value);
        let b_lim = 1.1 * 1.3e-3 * (0.55 * 1.1 + 0.02) / (50.0 * amin);
        assert!(rel_close(
            c.design.flux_density_limit_peak.value,
            b_lim,
            1e-12
        ));
        let b_pk = 1.3e-3 * 0.5 / (50.0 * core.effective_area.value);
        assert!(rel_close(c.design.flux_density_peak.value, b_pk, 1e-12));
        // 1.3 mH against the specified 1.2 mH: +8.3 %, inside the ±10 % tolerance
        assert!(rel_close(c.inductance_error, 0.1 / 1.2, 1e-9));
        // the split primary keeps the given halves: 20 next to the centre leg, 30 outside
        assert_eq!(c.design.sections[0].turns, 20);
        assert_eq!(c.design.sections.last().unwrap().turns, 30);
        // reflected voltage from the given turns: (50/7)·(12 + 0.5) V
        assert!(rel_close(
            c.design.reflected_voltage.value,
            50.0 / 7.0 * 12.5,
            1e-12
        ));
        // 1.5 mH is 25 % off: the inductance rule fails
        let far = GivenTransformer {
            magnetising: GivenMagnetising::MeasuredInductance(si(1.5e-3)),
            ..given.clone()
        };
        let c = transformer_check(&spec, &far).unwrap();
        let rules = transformer_check_rules(&spec, &c).unwrap();
        let r = rules
            .iter()
            .find(|r| r.id == "inductance_within_tolerance")
            .unwrap();
        assert_eq!(r.status, gapwise::rules::Status::Fail);
        // fewer turns than the flux needs fail the flux rule (the same rule as the design)
        let few = GivenTransformer {
            primary_turns: 30,
            primary_first_half_turns: None,
            magnetising: GivenMagnetising::MeasuredInductance(si(1.2e-3)),
            ..given
        };
        let c = transformer_check(&spec, &few).unwrap();
        let rules = transformer_check_rules(&spec, &c).unwrap();
        let r = rules
            .iter()
            .find(|r| r.id == "flux_at_current_limit")
            .unwrap();
        assert_eq!(r.status, gapwise::rules::Status::Fail);
    }

    #[test]
    fn transformer_check_in_a_script_from_a_flyback_design() {
        // one call from the design's operating point and the sample's turns and gap; the flux at
        // the limit includes the sense-delay overshoot the flyback design computed
        let d = "let d = flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A, bias_voltage: 15 * V}); \
             let t = transformer_inputs_from_flyback(d); t.core = \"EF25\"; t.margin_width = 2 * mm; \
             let x = transformer_design(t).design; ";
        let over = eval_quantity(&format!(
        "{d} t.current_limit_overshoot - (d.primary_current_peak_at_limit - d.current_limit * 1.1)"
    ));
        assert!(over.value().abs() < 1e-12, "{over}");
        let ratio = eval_quantity(&format!(
        "{d} let c = transformer_check(t + #{{primary_turns: x.primary_turns, secondary_turns: x.secondary_turns, \
         bias_turns: x.bias_turns, gap: x.gap}}); c.check.flux_density_limit_peak / x.flux_density_limit_peak"
    ));
        check_near(ratio, "1", 1e-6);
        let e = eval_err(&format!(
            "{d} transformer_check(t + #{{primary_turns: 50, secondary_turns: 7, bias_turns: 9}})"
        ))
        .to_string();
        assert!(
            e.contains("`gap`") && e.contains("`measured_inductance`"),
            "{e}"
        );
        let e = eval_err(&format!(
            "{d} transformer_check(t + #{{primary_turns: 50, secondary_turns: 7, gap: 0.2 * mm}})"
        ))
        .to_string();
        assert!(e.contains("`bias_turns`"), "{e}");
        let e = eval_err(&format!(
        "{d} transformer_check(t + #{{primary_turns: 0, secondary_turns: 7, bias_turns: 9, gap: 0.2 * mm}})"
    ))
    .to_string();
        assert!(e.contains("`primary_turns`"), "{e}");
        let e = eval_err(&format!(
        "{d} transformer_check(t + #{{primary_turns: 50, secondary_turns: 7, bias_turns: 9, gap: 0.2 * mm, gapp: 1}})"
    ))
    .to_string();
        assert!(e.contains("gapp"), "{e}");
    }
}

#[test]
fn the_core_does_not_saturate_with_the_output_shorted() {
    // the short-circuit peak from the flyback design reaches the transformer, and its flux is
    // B = L·(1 + tol_L)·I_sc/(N·A_min) (McLyman 2011, chapter 8), checked against Bsat hot
    let d = "let d = flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}); \
             let t = transformer_inputs_from_flyback(d); t.core = \"EF25\"; t.margin_width = 2 * mm; \
             let r = transformer_design(t); let x = r.design; ";
    let b = eval_quantity(&format!(
        "{d} x.flux_density_short_circuit_peak / (t.primary_inductance * 1.1 * t.short_circuit_peak_current \
         / (x.primary_turns * core_by_size(\"EF25\").minimum_area))"
    ));
    check_near(b, "1", 1e-9);
    let ids = eval(&format!(
        "{d} let ids = []; for c in r.checks {{ ids.push(c.id); }} ids.contains(\"saturation_in_short_circuit\")"
    ));
    assert_eq!(ids, "true");
}

#[test]
fn extreme_core_dimensions_are_errors_not_nan() {
    // issue 16: a 1e-300 mm toroid height once gave NaN effective parameters with exit 0
    let e = eval_err(
        "core_from_dimensions(#{family: \"toroid\", outer_diameter: 25 * mm, inner_diameter: 15 * mm, height: 1e-300 * mm})",
    )
    .to_string();
    assert!(e.contains("`height`") && e.contains("below 0.1 mm"), "{e}");
    let e = eval_err(
        "core_from_dimensions(#{family: \"toroid\", outer_diameter: 25 * mm, inner_diameter: 1e-300 * mm, height: 10 * mm})",
    )
    .to_string();
    assert!(e.contains("`inner_diameter`"), "{e}");
    // an outer-leg area larger than the whole footprint is named, not turned into numbers
    let e = eval_err(
        "core_from_dimensions(#{family: \"E\", overall_width: 30 * mm, overall_height: 30 * mm, depth: 10 * mm, window_height: 20 * mm, window_width: 20 * mm, centre_leg_width: 10 * mm, outer_leg_area: 1e300 * m2})",
    )
    .to_string();
    assert!(
        e.contains("`outer_leg_area`") && e.contains("overall_width × depth"),
        "{e}"
    );
}
