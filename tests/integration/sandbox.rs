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

/// A family long enough that only the interrupt or the clock can end it soon: 10,000 variants
/// of about 20,000 operations each.
const LONG_FAMILY: &str = "let v = []; for i in 0..10000 { v.push(i); }\n\
     family(|n| { let x = 0; for k in 0..5000 { x += k; } #{x: x} }, v)";

#[test]
fn an_interrupt_stops_a_running_family_as_a_whole() {
    // issue 10: Ctrl-C at the prompt did not stop a running family()
    let h = ScriptHost::new(EngineLimits {
        max_operations: 0,
        time_budget: Duration::from_secs(600),
        ..EngineLimits::default()
    });
    let flag = h.interrupt_flag();
    let t = std::thread::spawn(move || {
        std::thread::sleep(Duration::from_millis(300));
        flag.store(true, std::sync::atomic::Ordering::Relaxed);
    });
    let e = h.eval(LONG_FAMILY, "<test>").unwrap_err();
    t.join().unwrap();
    assert!(e.message.contains("interrupted"), "{}", e.message);
    assert!(h.eval("1 + 1", "<test>").is_ok());
}

#[test]
fn the_time_budget_ends_a_family_as_a_whole() {
    // issue 16: every variant started its budget from zero, so a 1 s budget ran 15 s; now the
    // family ends with the budget error instead of filling error rows
    let h = ScriptHost::new(EngineLimits {
        max_operations: 0,
        time_budget: Duration::from_millis(300),
        ..EngineLimits::default()
    });
    let e = h.eval(LONG_FAMILY, "<test>").unwrap_err();
    assert!(e.message.contains("time budget"), "{}", e.message);
}

#[test]
fn recursion_through_family_meets_the_call_depth_limit() {
    // issue 16: family escaped the call-depth limit (each variant started at depth zero)
    let e = small_host()
        .eval("fn r(v) { family(|x| r(x), [v]) } r(1)", "<test>")
        .unwrap_err();
    assert!(e.message.contains("nested deeper than"), "{}", e.message);
}

#[test]
fn deeply_nested_values_compare_and_print_without_aborting() {
    // issue 16: `a == a` and printing a 5,000-deep array aborted the process (SIGABRT)
    let h = small_host();
    let v = h
        .eval(
            "let a = []; for i in 0..5000 { a = [a]; } let same = a == a; let text = `${a}`; [same, text.len()]",
            "<test>",
        )
        .unwrap_or_else(|e| panic!("{e}"));
    assert_eq!(h.display(&v), "[true, 10002]");
}

#[test]
fn sleep_is_bounded_by_the_budget_and_refuses_nonsense() {
    // issue 16: sleep() ignored the budget and sleep(1e300) panicked
    let h = ScriptHost::new(EngineLimits {
        time_budget: Duration::from_millis(200),
        ..EngineLimits::default()
    });
    let e = h.eval("sleep(1e300)", "<test>").unwrap_err();
    assert!(e.message.contains("time budget"), "{}", e.message);
    let e = h.eval("sleep(-1.0)", "<test>").unwrap_err();
    assert!(e.message.contains("`seconds`"), "{}", e.message);
    assert!(h.eval("sleep(0.01)", "<test>").is_ok());
}

#[test]
fn call_depth_is_capped_at_what_the_script_stack_holds() {
    // issue 16: --max-call-depth 100000 let a recursion overflow the stack and abort
    let h = ScriptHost::new(EngineLimits {
        max_call_levels: 1_000_000,
        ..EngineLimits::default()
    });
    let e = h.eval("fn f(n) { f(n + 1) } f(0)", "<test>").unwrap_err();
    assert!(
        e.message.contains(&format!(
            "nested deeper than {}",
            gapwise::script::MAX_CALL_DEPTH
        )),
        "{}",
        e.message
    );
}

#[test]
fn errors_show_a_window_of_a_long_line() {
    // issue 16: errors repeated inputs of 100 kB in full
    let src = format!("quantity(\"{}\")", "x".repeat(100_000));
    let e = small_host().eval(&src, "<test>").unwrap_err();
    let shown = e.to_string();
    assert!(shown.len() < 2000, "{} bytes shown", shown.len());
    assert!(
        shown.contains("characters left out") || shown.contains('…'),
        "{shown}"
    );
}

#[test]
fn outputs_of_one_run_share_the_output_size_limit() {
    let h = ScriptHost::new(EngineLimits {
        max_output_bytes: 1000,
        ..EngineLimits::default()
    });
    // two texts of 600 bytes: the second passes the total
    let e = h
        .eval(
            r#"let t = "x"; for i in 0..600 { t += "y"; } output_text("one", "txt", t); output_text("two", "txt", t);"#,
            "<test>",
        )
        .unwrap_err();
    assert!(
        e.message.contains("output_text `two.txt`")
            && e.message.contains("output limit of 1000 bytes")
            && e.message.contains("--max-output-bytes"),
        "{}",
        e.message
    );
    assert_eq!(h.take_texts().len(), 1, "the first text was handed over");
    // a new run starts from zero
    assert!(h
        .eval(r#"output_text("three", "txt", "short")"#, "<test>")
        .unwrap()
        .is_unit());
    assert_eq!(h.take_texts().len(), 1);
}

#[test]
fn without_the_counting_allocator_the_memory_budget_is_not_enforced() {
    // this test binary does not install `CountingAllocator`: only the per-value limits apply
    assert_eq!(gapwise::script::memory::allocated_bytes(), None);
    let h = ScriptHost::new(EngineLimits {
        max_memory_bytes: 1,
        ..EngineLimits::default()
    });
    assert_eq!(h.eval("40 + 2", "<test>").unwrap().as_int(), Ok(42));
}

#[test]
fn a_second_output_text_under_the_same_name_is_an_error_issue_16() {
    // issue 16: a second output with the same name replaced the first without a word
    let h = small_host();
    let e = h
        .eval(
            "output_text(\"notes\", \"md\", \"# one\"); output_text(\"notes\", \"md\", \"# two\");",
            "<test>",
        )
        .unwrap_err();
    assert!(
        e.message.contains("`notes.md` was already handed over"),
        "{}",
        e.message
    );
    // another extension is another file
    assert!(h
        .eval(
            "output_text(\"plot\", \"md\", \"# a\"); output_text(\"plot\", \"svg\", \"<svg></svg>\");",
            "<test>",
        )
        .is_ok());
}
