//! The sandbox: runaway scripts end with a clear error, never a hang or a panic.

use gapwise::script::{EngineLimits, ScriptHost};
use std::time::Duration;

fn small_host() -> ScriptHost {
    ScriptHost::new(EngineLimits {
        max_operations: 2_000_000,
        time_budget: Duration::from_secs(20),
        ..EngineLimits::default()
    })
}

#[test]
fn endless_loop_stops_at_the_operation_limit() {
    let e = small_host().eval("loop {}", "<test>").unwrap_err();
    assert!(
        e.message.contains("more than 2000000 operations"),
        "{}",
        e.message
    );
}

#[test]
fn endless_loop_stops_at_the_time_budget() {
    let h = ScriptHost::new(EngineLimits {
        max_operations: 0, // unlimited: only the clock stops it
        time_budget: Duration::from_millis(200),
        ..EngineLimits::default()
    });
    let e = h.eval("loop {}", "<test>").unwrap_err();
    assert!(e.message.contains("time budget"), "{}", e.message);
}

#[test]
fn deep_recursion_stops_at_the_call_depth() {
    let e = small_host()
        .eval("fn f(n) { f(n + 1) } f(0)", "<test>")
        .unwrap_err();
    assert!(e.message.contains("nested deeper than"), "{}", e.message);
}

#[test]
fn huge_string_stops_at_the_size_limit() {
    let e = small_host()
        .eval("let text = \"x\"; loop { text += text; }", "<test>")
        .unwrap_err();
    assert!(e.message.contains("size limit"), "{}", e.message);
}

#[test]
fn imports_are_refused() {
    let e = small_host()
        .eval("import \"secrets\" as s; s::x", "<test>")
        .unwrap_err();
    assert!(e.message.contains("cannot import"), "{}", e.message);
}

#[test]
fn eval_is_not_available() {
    assert!(small_host().eval("eval(\"1 + 1\")", "<test>").is_err());
}

#[test]
fn runaway_variant_in_a_family_becomes_an_error_row() {
    let h = small_host();
    let v = h
        .eval(
            "family(|n| { if n == 2 { loop {} } n * V }, [1, 2, 3])",
            "<test>",
        )
        .unwrap();
    let t = v.read_lock::<gapwise::report::Table>().unwrap().clone();
    assert_eq!(t.len(), 3);
    assert_eq!(t.error_count(), 1);
    assert!(t.error(1).unwrap().contains("operations"));
}

#[test]
fn default_limits_allow_a_family_of_ten_thousand_variants() {
    // the foundation issue asks for families of 10,000 variants; nested maps count against the
    // map-size limit, so the default limits must leave room for them
    let h = ScriptHost::new(EngineLimits::default());
    let v = h
        .eval(
            "let axis = []; for i in 0..100 { axis.push(i * V); }\n\
             family(|v| #{power: v.a * v.b / (1 * V)}, grid(#{a: axis, b: axis}))",
            "<test>",
        )
        .unwrap_or_else(|e| panic!("{e}"));
    let t = v.read_lock::<gapwise::report::Table>().unwrap().clone();
    assert_eq!(t.len(), 10_000);
    assert_eq!(t.error_count(), 0);
}

#[test]
fn an_interrupt_stops_a_running_script() {
    // the prompt sets this flag on Ctrl-C; only the flag may stop this loop
    let h = ScriptHost::new(EngineLimits {
        max_operations: 0,
        time_budget: Duration::from_secs(60),
        ..EngineLimits::default()
    });
    let flag = h.interrupt_flag();
    let t = std::thread::spawn(move || {
        std::thread::sleep(Duration::from_millis(200));
        flag.store(true, std::sync::atomic::Ordering::Relaxed);
    });
    let e = h.eval("loop {}", "<test>").unwrap_err();
    t.join().unwrap();
    assert!(e.message.contains("interrupted"), "{}", e.message);
    // the next run starts clean
    assert!(h.eval("1 + 1", "<test>").is_ok());
}
