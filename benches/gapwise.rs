//! Benchmarks: native call vs the same call from a compiled script vs the same design as one
//! variant of a family (one thread and two), one loop analysis of a regulated design, the
//! table writers, and the process time of `gapwise eval`. Run with
//! `cargo bench`; the README table is copied from its output, ratios included. A small timing
//! loop of our own keeps the build light: each case is warmed up, then timed in 7 samples of
//! about 0.3 s, and the median is reported. Wall-clock times on a shared machine are noisy;
//! the ratios are steadier, and instruction counts steadier still:
//!
//! ```text
//! cargo bench --no-run
//! valgrind --tool=callgrind target/release/deps/gapwise-<hash> --profile flyback 200
//! ```
//!
//! `--profile CASE N` runs one case N times without timing (cases: flyback, transformer,
//! barrier, family), for a profiler.

use gapwise::passives::lc_resonant_frequency;
use gapwise::script::{EngineLimits, ScriptHost};
use gapwise::units::uom_si::{capacitance::microfarad, inductance::microhenry};
use gapwise::units::{Capacitance, Inductance};
use rhai::{Scope, AST};
use std::hint::black_box;
use std::time::{Duration, Instant};

/// Median time per iteration of `f`, which performs `per_call` iterations per call.
fn time_per_iteration(name: &str, per_call: u64, f: impl FnMut()) -> f64 {
    let median = measure(per_call, f);
    row(name, &show(median), "");
    median
}

fn measure(per_call: u64, mut f: impl FnMut()) -> f64 {
    let start = Instant::now();
    let mut calls = 0u64;
    while start.elapsed() < Duration::from_millis(200) {
        f();
        calls += 1;
    }
    let calls_per_sample = (calls * 3 / 2).max(1);
    let mut samples = Vec::new();
    for _ in 0..7 {
        let t = Instant::now();
        for _ in 0..calls_per_sample {
            f();
        }
        samples.push(t.elapsed().as_secs_f64() / (calls_per_sample * per_call) as f64);
    }
    samples.sort_by(f64::total_cmp);
    samples[samples.len() / 2]
}

/// As [`time_per_iteration`], printing nothing (the caller prints a ratio).
fn time_quiet(per_call: u64, f: impl FnMut()) -> f64 {
    measure(per_call, f)
}

/// Every reported line, as Markdown rows for the README table.
static ROWS: std::sync::Mutex<Vec<String>> = std::sync::Mutex::new(Vec::new());

/// Prints one result aligned, and keeps it for the README table.
fn row(name: &str, time: &str, ratio: &str) {
    println!("{name:58} {time:>12} {ratio}");
    let name = name.trim_start_matches("=> ");
    ROWS.lock()
        .expect("rows")
        .push(format!("| {name} | {time} | {ratio} |"));
}

fn show(seconds: f64) -> String {
    if seconds < 1e-6 {
        format!("{:.0} ns", seconds * 1e9)
    } else if seconds < 1e-3 {
        format!("{:.2} µs", seconds * 1e6)
    } else {
        format!("{:.2} ms", seconds * 1e3)
    }
}

fn compile(host: &ScriptHost, source: &str) -> AST {
    host.compile(source, "<bench>")
        .expect("bench script compiles")
}

fn run(host: &ScriptHost, ast: &AST, source: &str) {
    let value = host
        .run(ast, &mut Scope::new(), source, "<bench>")
        .expect("bench script runs");
    drop(black_box(value));
}

fn call_overhead(host: &ScriptHost) {
    println!("-- one calculation: native vs script");
    let l = Inductance::new::<microhenry>(1.0);
    let c = Capacitance::new::<microfarad>(100.0);
    let t_native = time_per_iteration("native lc_resonant_frequency", 1, || {
        black_box(lc_resonant_frequency(black_box(l), black_box(c)).ok());
    });
    const N: u64 = 10_000;
    let with_call = format!(
        "let l = 1 * uH; let c = 100 * uF; for i in 0..{N} {{ lc_resonant_frequency(l, c); }}"
    );
    let empty =
        format!("let l = 1 * uH; let c = 100 * uF; let x = l; for i in 0..{N} {{ x = c; }}");
    let a = compile(host, &with_call);
    let b = compile(host, &empty);
    let t_call = time_per_iteration(
        "script loop calling lc_resonant_frequency (per call)",
        N,
        || run(host, &a, &with_call),
    );
    let t_empty = time_per_iteration("script loop without the call (per iteration)", N, || {
        run(host, &b, &empty)
    });
    let call = (t_call - t_empty).max(0.0);
    row(
        "=> cost of one call from a script",
        &show(call),
        &format!("{:.0} × native", call / t_native),
    );
}

fn family(host: &ScriptHost) {
    println!("-- a family of 10,000 variants of a small recipe");
    let source = r#"
        let variants = grid(#{
            output_voltage: [3.3 * V, 5 * V, 9 * V, 12 * V, 15 * V, 18 * V, 24 * V, 36 * V, 48 * V, 56 * V],
            output_current: [0.25 * A, 0.5 * A, 0.75 * A, 1 * A, 1.25 * A, 1.5 * A, 2 * A, 2.5 * A, 3 * A, 4 * A],
            inductance: [1 * uH, 1.5 * uH, 2.2 * uH, 3.3 * uH, 4.7 * uH, 6.8 * uH, 10 * uH, 15 * uH, 22 * uH, 33 * uH],
            capacitance: [100 * uF, 220 * uF, 330 * uF, 470 * uF, 680 * uF, 1000 * uF, 1500 * uF, 2200 * uF, 3300 * uF, 4700 * uF],
        });
        family(|v| #{
            output_power: v.output_voltage * v.output_current,
            corner: lc_resonant_frequency(v.inductance, v.capacitance),
            divider: resistor_divider(#{output_voltage: v.output_voltage, reference_voltage: 1.24 * V}),
        }, variants)
    "#;
    let ast = compile(host, source);
    let one = rayon::ThreadPoolBuilder::new()
        .num_threads(1)
        .build()
        .expect("pool");
    let t1 = one.install(|| {
        time_per_iteration("family, 1 thread (per variant)", 10_000, || {
            run(host, &ast, source)
        })
    });
    let tn = time_per_iteration("family, all cores (per variant)", 10_000, || {
        run(host, &ast, source)
    });
    row(
        "=> variants per second, 1 thread / all cores",
        &format!("{:.0} / {:.0}", 1.0 / t1, 1.0 / tn),
        &format!("{:.2} × on all cores", t1 / tn),
    );
}

fn flyback_spec() -> gapwise::flyback::FlybackSpec {
    use gapwise::flyback::{FlybackSpec, OutputWinding};
    use gapwise::units::si;
    FlybackSpec::universal(OutputWinding::new(si(12.0), si(1.25)))
}

/// The family of full designs: 10,000 variants, a grid of 100 output voltages (5–48 V) by 100
/// output currents (0.5–2 A). The grid is built natively: a script loop pushing 10,000 maps
/// into one array costs more than the designs, because the engine re-measures the whole
/// array's size on every push (quadratic; see the README).
const FLYBACK_FAMILY: &str = r#"
    let volts = [];
    let amps = [];
    for i in 0..100 {
        volts.push((5.0 + 43.0 * i / 99) * V);
        amps.push((0.5 + 1.5 * i / 99) * A);
    }
    let variants = grid(#{output_voltage: volts, output_current: amps});
    family(|v| flyback_summary(flyback_design(v)), variants)
"#;

fn ratio_line(name: &str, t: f64, base: f64, base_name: &str) {
    row(name, &show(t), &format!("{:.2} × {base_name}", t / base));
}

fn flyback(host: &ScriptHost) {
    use gapwise::flyback::flyback_design;
    println!("-- one full flyback design (all corners, efficiency iterated), 12 V / 1.25 A");
    let spec = flyback_spec();
    let native = time_per_iteration("native flyback_design", 1, || {
        black_box(flyback_design(black_box(&spec)).ok());
    });
    let source = "flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A})";
    let ast = compile(host, source);
    let script = time_quiet(1, || run(host, &ast, source));
    ratio_line("script flyback_design", script, native, "native");
    let ast = compile(host, FLYBACK_FAMILY);
    for threads in [1, 2] {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .expect("pool");
        let t = pool.install(|| time_quiet(10_000, || run(host, &ast, FLYBACK_FAMILY)));
        ratio_line(
            &format!("family of 10,000 designs, {threads} thread(s), per variant"),
            t,
            native,
            "native",
        );
        row(
            &format!("=> the 10,000-variant family, {threads} thread(s)"),
            &show(t * 10_000.0),
            "",
        );
    }
}

fn transformer(host: &ScriptHost) {
    println!("-- transformer design for one operating point, and core selection");
    let (scope, ast, source) = transformer_case(host);
    time_per_iteration("script transformer_design, EF25, 12 V / 1.25 A", 1, || {
        let mut s = scope.clone();
        drop(black_box(
            host.run(&ast, &mut s, source, "<bench>").expect("runs"),
        ));
    });
    let select = "core_selection(#{primary_inductance: 2.2 * mH, peak_current: 0.75 * A, primary_rms_current: 0.3 * A, secondary_rms_current_referred: 0.35 * A, max_flux_density: 0.32 * T, max_current_density: 6 * A / mm2, window_utilisation: 0.2})";
    let ast = compile(host, select);
    time_per_iteration("script core_selection over the built-in cores", 1, || {
        run(host, &ast, select)
    });
}

fn isolation(host: &ScriptHost) {
    println!("-- requirements of one isolation barrier (every rule, table and procedure)");
    let spec = barrier_spec();
    let native = time_per_iteration("native barrier_requirements, reinforced, 65 kHz", 1, || {
        drop(black_box(
            gapwise::safety::barrier_requirements(black_box(&spec)).expect("requirements"),
        ));
    });
    let source = "barrier_requirements(#{barrier: \"primary_secondary\", insulation: \"reinforced\", altitude: 3000 * m, working_voltage_peak: 600 * V, working_voltage_rms: 450 * V, working_frequency: 65 * kHz})";
    let ast = compile(host, source);
    let script = time_quiet(1, || run(host, &ast, source));
    ratio_line(
        "script barrier_requirements, the same barrier",
        script,
        native,
        "native",
    );
}

/// The transformer case: its inputs (from the 12 V design, on an EF25) and the script call.
fn transformer_case(host: &ScriptHost) -> (Scope<'static>, AST, &'static str) {
    let design = r#"
        let t = transformer_inputs_from_flyback(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A}));
        t.core = "EF25";
        t
    "#;
    let inputs = host.eval(design, "<bench>").expect("inputs");
    let mut scope = Scope::new();
    scope.push("inputs", inputs);
    let source = "transformer_design(inputs)";
    (scope, compile(host, source), source)
}

fn barrier_spec() -> gapwise::safety::BarrierSpec {
    use gapwise::safety::{
        Barrier, BarrierSpec, FieldCase, InsulationGrade, MaterialGroup, OvervoltageCategory,
        PollutionDegree,
    };
    use gapwise::units::si;
    BarrierSpec {
        barrier: Barrier::PrimarySecondary,
        grade: InsulationGrade::Reinforced,
        mains_voltage: si(230.0),
        overvoltage_category: OvervoltageCategory::II,
        pollution_degree: PollutionDegree::Two,
        material_group: MaterialGroup::IIIb,
        altitude: si(3000.0),
        field: FieldCase::Inhomogeneous,
        working_voltage_peak: si(600.0),
        working_voltage_rms: si(450.0),
        working_frequency: si(65e3),
        impulse_voltage: None,
    }
}

/// Runs one case `n` times without timing, for a profiler (callgrind counts instructions,
/// which stay repeatable while other work shares the machine).
fn profile(host: &ScriptHost, case: &str, n: usize) {
    match case {
        "flyback" => {
            let spec = flyback_spec();
            for _ in 0..n {
                black_box(gapwise::flyback::flyback_design(black_box(&spec)).ok());
            }
        }
        "transformer" => {
            let (scope, ast, source) = transformer_case(host);
            for _ in 0..n {
                let mut s = scope.clone();
                drop(black_box(
                    host.run(&ast, &mut s, source, "<bench>").expect("runs"),
                ));
            }
        }
        "barrier" => {
            let spec = barrier_spec();
            for _ in 0..n {
                drop(black_box(
                    gapwise::safety::barrier_requirements(black_box(&spec)).ok(),
                ));
            }
        }
        "family" => {
            let ast = compile(host, FLYBACK_FAMILY);
            for _ in 0..n {
                run(host, &ast, FLYBACK_FAMILY);
            }
        }
        other => {
            eprintln!("unknown profile case `{other}` (flyback, transformer, barrier, family)")
        }
    }
}

/// The machine, for the README table: the CPU model and the threads available.
fn machine() -> String {
    let cpu = std::fs::read_to_string("/proc/cpuinfo")
        .ok()
        .and_then(|t| {
            t.lines()
                .find(|l| l.starts_with("model name"))
                .and_then(|l| l.split(':').nth(1))
                .map(|m| m.trim().to_string())
        })
        .unwrap_or_else(|| "unknown CPU".into());
    format!("{cpu}, {} threads", rayon::current_num_threads())
}

/// Process time of `gapwise eval` on a one-line script, when a release binary is there
/// (`cargo build --release -p gapwise-repl`): start-up, engine, one design, output.
fn eval_process() {
    println!("-- `gapwise eval` as a process (start-up, engine, one design, output)");
    let exe = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("target/release/gapwise");
    let exe = std::env::var_os("CARGO_TARGET_DIR")
        .map(|d| std::path::PathBuf::from(d).join("release/gapwise"))
        .filter(|p| p.exists())
        .unwrap_or(exe);
    if !exe.exists() {
        row(
            "gapwise eval (no release binary: cargo build --release -p gapwise-repl)",
            "skipped",
            "",
        );
        return;
    }
    let script = "flyback_summary(flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A})).efficiency";
    let spawn = || {
        let out = std::process::Command::new(&exe)
            .args(["eval", script])
            .output()
            .expect("gapwise runs");
        assert!(
            out.status.success(),
            "gapwise eval failed: {}",
            String::from_utf8_lossy(&out.stderr)
        );
    };
    let mut samples: Vec<f64> = (0..15)
        .map(|_| {
            let t = Instant::now();
            spawn();
            t.elapsed().as_secs_f64()
        })
        .collect();
    samples.sort_by(f64::total_cmp);
    row(
        "gapwise eval, one design, whole process (median of 15)",
        &show(samples[7]),
        "",
    );
}

fn regulation(host: &ScriptHost) {
    use gapwise::feedback::{flyback_regulation, RegulationSpec};
    use gapwise::flyback::{flyback_design, FlybackSpec, OutputWinding};
    use gapwise::units::si;
    println!(
        "-- one loop analysis: compensation, 4 corners × 2 CTR extremes, 200 frequencies each"
    );
    let spec = FlybackSpec::universal(OutputWinding::new(si(12.0), si(1.25)));
    let design = flyback_design(&spec).expect("design");
    let reg = RegulationSpec::default();
    time_per_iteration("native flyback_regulation, 12 V / 1.25 A", 1, || {
        black_box(flyback_regulation(black_box(&design), &spec, &reg).ok());
    });
    let d = host
        .eval(
            "flyback_design(#{output_voltage: 12 * V, output_current: 1.25 * A})",
            "<bench>",
        )
        .expect("design");
    let mut scope = Scope::new();
    scope.push("d", d);
    let source = "flyback_regulation(d, #{})";
    let ast = compile(host, source);
    time_per_iteration(
        "script flyback_regulation (with Bode table and SVG)",
        1,
        || {
            let mut s = scope.clone();
            drop(black_box(
                host.run(&ast, &mut s, source, "<bench>").expect("runs"),
            ));
        },
    );
}

/// Writing a table of 100,000 rows × 5 columns as CSV and as JSON: both linear in the cells
/// (issue 16 measured the CSV writer quadratic: 6.6 s against 1.2 s for JSON).
fn tables() {
    use gapwise::report::{Field, Table, WriteOptions};
    use gapwise::units::{Dimension, Quantity};
    println!("-- writing tables");
    let mut t = Table::new();
    for i in 0..100_000 {
        let x = i as f64;
        t.push_row(vec![
            Field::new(
                "output_voltage",
                Quantity::new(5.0 + x * 1e-4, Dimension::VOLTAGE),
            ),
            Field::new(
                "primary_inductance",
                Quantity::new(1e-3 + x * 1e-9, Dimension::INDUCTANCE),
            ),
            Field::new("turns", i as i64),
            Field::new("duty_cycle", 0.4 + x * 1e-7),
            Field::new("mode", "ccm"),
        ]);
    }
    let options = WriteOptions::default();
    time_per_iteration("CSV of 100,000 rows x 5 columns", 1, || {
        drop(black_box(t.to_csv(&options).expect("csv")));
    });
    time_per_iteration("JSON of the same table", 1, || {
        drop(black_box(t.to_json(&options).expect("json")));
    });
}

fn main() {
    let args: Vec<String> = std::env::args().collect();
    // `cargo test --benches` passes --bench-less flags; only time under `cargo bench`.
    if args.iter().any(|a| a == "--list") {
        return;
    }
    // GAPWISE_BENCH=tables runs only the table writers
    if std::env::var("GAPWISE_BENCH").as_deref() == Ok("tables") {
        tables();
        return;
    }
    let host = ScriptHost::new(EngineLimits::default());
    if let Some(i) = args.iter().position(|a| a == "--profile") {
        let case = args.get(i + 1).map(String::as_str).unwrap_or("flyback");
        let n = args.get(i + 2).and_then(|n| n.parse().ok()).unwrap_or(100);
        profile(&host, case, n);
        return;
    }
    println!("gapwise benchmarks on {}", machine());
    println!("(wall-clock medians on a shared machine: compare the ratios, which are steadier)");
    call_overhead(&host);
    family(&host);
    flyback(&host);
    transformer(&host);
    isolation(&host);
    regulation(&host);
    tables();
    eval_process();
    // the README table, to paste between its benchmark markers
    println!("\n-- README table");
    println!(
        "| case (`cargo bench`, release build, {}) | time | ratio |",
        machine()
    );
    println!("| --- | --- | --- |");
    for line in ROWS.lock().expect("rows").iter() {
        println!("{line}");
    }
}
