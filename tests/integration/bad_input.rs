//! The bad-input matrix: every registered script function, fed bad values in each parameter
//! and map key, gives a finite result or a clear error naming the parameter — never a panic,
//! NaN or infinity. A new function joins by having a `FunctionDoc` with a runnable example.
//!
//! Method: each function's documented example is the valid call. Each of its arguments, and
//! each key of a map argument, is replaced in turn by a bad value (the example's own value
//! times NaN, ±inf, zero, −1 and 1e300; times a second, for a wrong dimension; a plain number;
//! text; an array; a map; a flag); each required key is left out, and an unknown key added.
//! These are checks of behaviour (common practice, no published source).

use super::common::host;
use gapwise::report::Value;
use gapwise::script::{ParamDefault, ScriptHost, ScriptRecord};
use gapwise::units::{Decibel, Quantity};
use rhai::{Array, Dynamic, Map};
use std::panic::{catch_unwind, AssertUnwindSafe};

/// Bad values that keep the argument's own expression (and so its dimension).
const SCALED: [(&str, &str); 6] = [
    ("nan", "(0.0 / 0.0)"),
    ("+inf", "(1.0 / 0.0)"),
    ("-inf", "(-1.0 / 0.0)"),
    ("zero", "0.0"),
    ("negative", "(-1.0)"),
    ("huge", "1.0e300"),
];
/// Bad values that replace the argument.
const REPLACED: [(&str, &str); 6] = [
    ("wrong dimension", "(ARG) * 1 * s"),
    ("plain number", "1.5"),
    ("text", "\"not a value\""),
    ("array", "[1, 2]"),
    ("map", "#{}"),
    ("flag", "true"),
];

/// Splits `a, b(c, d), #{e: f}` at its top-level commas (outside brackets and strings).
fn split_top_level(s: &str, sep: char) -> Vec<String> {
    let mut parts = Vec::new();
    let mut depth = 0i32;
    let mut in_text = false;
    let mut current = String::new();
    let mut prev = '\0';
    for c in s.chars() {
        match c {
            '"' if prev != '\\' => in_text = !in_text,
            '(' | '[' | '{' if !in_text => depth += 1,
            ')' | ']' | '}' if !in_text => depth -= 1,
            _ => {}
        }
        if c == sep && depth == 0 && !in_text {
            parts.push(current.trim().to_string());
            current.clear();
        } else {
            current.push(c);
        }
        prev = c;
    }
    if !current.trim().is_empty() {
        parts.push(current.trim().to_string());
    }
    parts
}

/// The example's call of `name`: the text before its arguments, the arguments, and the text
/// after the closing bracket.
fn find_call(example: &str, name: &str) -> Option<(String, Vec<String>, String)> {
    let bytes: Vec<char> = example.chars().collect();
    let pattern: Vec<char> = format!("{name}(").chars().collect();
    let mut start = None;
    for i in 0..bytes.len().saturating_sub(pattern.len() - 1) {
        let before_ok = i == 0 || !(bytes[i - 1].is_alphanumeric() || bytes[i - 1] == '_');
        if before_ok && bytes[i..i + pattern.len()] == pattern[..] {
            start = Some(i + pattern.len());
            break;
        }
    }
    let open = start?;
    let mut depth = 1;
    let mut in_text = false;
    let mut end = open;
    while end < bytes.len() {
        match bytes[end] {
            '"' if bytes[end - 1] != '\\' => in_text = !in_text,
            '(' | '[' | '{' if !in_text => depth += 1,
            ')' | ']' | '}' if !in_text => {
                depth -= 1;
                if depth == 0 {
                    break;
                }
            }
            _ => {}
        }
        end += 1;
    }
    let args: String = bytes[open..end].iter().collect();
    let head: String = bytes[..open].iter().collect();
    let tail: String = bytes[end..].iter().collect();
    Some((head, split_top_level(&args, ','), tail))
}

/// Where a non-finite number hides in a result, if anywhere.
fn non_finite(h: &ScriptHost, v: &Dynamic, depth: usize) -> Option<String> {
    if depth > 8 {
        return None;
    }
    if let Some(q) = v.read_lock::<Quantity>() {
        return (!q.value().is_finite()).then(|| q.to_string());
    }
    if let Ok(x) = v.as_float() {
        return (!x.is_finite()).then(|| x.to_string());
    }
    if let Some(d) = v.read_lock::<Decibel>() {
        return (!d.value.is_finite()).then(|| d.to_string());
    }
    if let Some(r) = v.read_lock::<ScriptRecord>() {
        return r.fields().iter().find_map(|f| match &f.value {
            Value::Quantity(q) if !q.value().is_finite() => Some(format!("{} = {q}", f.name)),
            Value::Number(x) if !x.is_finite() => Some(format!("{} = {x}", f.name)),
            Value::Decibel(d) if !d.value.is_finite() => Some(format!("{} = {d}", f.name)),
            _ => None,
        });
    }
    if let Some(a) = v.read_lock::<Array>() {
        return a.iter().find_map(|x| non_finite(h, x, depth + 1));
    }
    if let Some(m) = v.read_lock::<Map>() {
        return m
            .iter()
            .find_map(|(k, x)| non_finite(h, x, depth + 1).map(|s| format!("{k}: {s}")));
    }
    // other custom types: look at what they print
    let text = h.display(v);
    text.split(|c: char| !(c.is_alphanumeric() || c == '+' || c == '-'))
        .find(|w| matches!(*w, "NaN" | "inf" | "+inf" | "-inf" | "∞"))
        .map(|w| format!("prints {w}"))
}

struct Case {
    function: &'static str,
    what: String,
    parameter: String,
    source: String,
}

/// Runs one mutated call; returns a problem, if any.
fn run_case(h: &ScriptHost, case: &Case, must_name: bool) -> Option<String> {
    let outcome = catch_unwind(AssertUnwindSafe(|| h.eval(&case.source, "<bad input>")));
    let label = format!("{} [{} in `{}`]", case.function, case.what, case.parameter);
    match outcome {
        Err(_) => Some(format!("{label}: panicked\n    {}", case.source)),
        Ok(Ok(v)) => non_finite(h, &v, 0)
            .map(|s| format!("{label}: non-finite result ({s})\n    {}", case.source)),
        Ok(Err(e)) => {
            let m = e.message.trim().to_string();
            if m.is_empty() {
                return Some(format!("{label}: empty error message"));
            }
            if m.contains("panicked") {
                return Some(format!("{label}: {m}"));
            }
            // a clear error names the parameter, says what the function takes, or quotes
            // the value it refuses
            let names = m.contains(&case.parameter)
                || m.contains("cannot take")
                || m.contains("not a value")
                // an assertion that fails on a changed value is doing its job
                || (case.function.starts_with("assert") && m.contains("assertion failed"));
            if must_name && !names {
                return Some(format!(
                    "{label}: the error does not name `{}`: {m}\n    {}",
                    case.parameter, case.source
                ));
            }
            None
        }
    }
}

/// Whether an expression evaluates on its own to a number or quantity.
fn is_number(h: &ScriptHost, expr: &str) -> bool {
    h.eval(&format!("let x = {expr}; x * 1.0"), "<probe>")
        .is_ok()
}

fn cases_for(h: &ScriptHost, d: &gapwise::script::FunctionDoc) -> Vec<Case> {
    let mut cases = Vec::new();
    let Some((head, args, tail)) = find_call(d.example, d.name) else {
        return cases;
    };
    let call = |args: &[String]| format!("{head}{}{tail}", args.join(", "));
    // positional arguments: a method call's receiver is before the name, not among the args
    let offset = usize::from(
        head.trim_end_matches(&format!("{}(", d.name))
            .ends_with('.'),
    );
    for (i, arg) in args.iter().enumerate() {
        let parameter = d
            .params
            .get(i + offset)
            .map(|p| p.name.to_string())
            .unwrap_or_else(|| format!("argument {}", i + 1));
        if arg.starts_with("#{") && arg.ends_with('}') {
            // a map argument: each key in turn, then missing and unknown keys
            let pairs = split_top_level(&arg[2..arg.len() - 1], ',');
            let rebuilt = |pairs: &[String]| format!("#{{{}}}", pairs.join(", "));
            for (k, pair) in pairs.iter().enumerate() {
                let Some((key, value)) = pair.split_once(':') else {
                    continue;
                };
                let (key, value) = (key.trim(), value.trim());
                let mut mutate = |what: &str, new_value: String| {
                    let mut p = pairs.clone();
                    p[k] = format!("{key}: {new_value}");
                    let mut a = args.clone();
                    a[i] = rebuilt(&p);
                    cases.push(Case {
                        function: d.name,
                        what: what.to_string(),
                        parameter: key.to_string(),
                        source: call(&a),
                    });
                };
                if is_number(h, value) {
                    for (what, x) in SCALED {
                        mutate(what, format!("({value}) * {x}"));
                    }
                }
                for (what, x) in REPLACED {
                    if what != "wrong dimension" || is_number(h, value) {
                        mutate(what, x.replace("ARG", value));
                    }
                }
                let required = d
                    .keys
                    .iter()
                    .any(|p| p.name == key && p.default == ParamDefault::Required);
                if required {
                    let mut p = pairs.clone();
                    p.remove(k);
                    let mut a = args.clone();
                    a[i] = rebuilt(&p);
                    cases.push(Case {
                        function: d.name,
                        what: "missing key".into(),
                        parameter: key.to_string(),
                        source: call(&a),
                    });
                }
            }
            let mut p = pairs.clone();
            p.push("bogus_key_xyz: 1".into());
            let mut a = args.clone();
            a[i] = rebuilt(&p);
            cases.push(Case {
                function: d.name,
                what: "unknown key".into(),
                parameter: "bogus_key_xyz".into(),
                source: call(&a),
            });
            continue;
        }
        let mut mutate = |what: &str, new_value: String| {
            let mut a = args.clone();
            a[i] = new_value;
            cases.push(Case {
                function: d.name,
                what: what.to_string(),
                parameter: parameter.clone(),
                source: call(&a),
            });
        };
        // numbers get the scaled values; every argument gets the replacements
        if is_number(h, arg) {
            for (what, x) in SCALED {
                mutate(what, format!("({arg}) * {x}"));
            }
        }
        for (what, x) in REPLACED {
            if what != "wrong dimension" || is_number(h, arg) {
                mutate(what, x.replace("ARG", arg));
            }
        }
    }
    cases
}

#[test]
fn every_registered_function_survives_the_bad_input_matrix() {
    let h = host();
    let prelude = "let rules = rule_book(); rules.add_rule(#{id: \"switch_voltage\", description: \"x\", limit: 552.5 * V}); ";
    let mut problems = Vec::new();
    let mut total = 0;
    let mut covered = 0;
    for d in h.docs() {
        let cases = cases_for(&h, d);
        if !cases.is_empty() {
            covered += 1;
        }
        for mut case in cases {
            case.source = format!("{prelude}{}", case.source);
            total += 1;
            // values a user could mean (NaN, ±inf, zero, negative, a missing or unknown key)
            // must be refused by name; a huge value or a wrong type needs a clear error, which
            // may be about the design it leads to
            let must_name = !matches!(
                case.what.as_str(),
                "huge" | "array" | "map" | "flag" | "plain number" | "wrong dimension"
            );
            if let Some(p) = run_case(&h, &case, must_name) {
                problems.push(p);
            }
        }
    }
    assert!(
        covered > 50,
        "the matrix reaches most functions ({covered})"
    );
    assert!(
        problems.is_empty(),
        "{} of {total} bad-input cases misbehave:\n{}",
        problems.len(),
        problems.join("\n")
    );
}

#[test]
fn the_example_parser_finds_calls_and_keys() {
    let (head, args, tail) =
        find_call("let x = f(1 * V, #{a: g(2, 3), b: \"x,y\"}); x", "f").unwrap();
    assert_eq!(head, "let x = f(");
    assert_eq!(args, vec!["1 * V", "#{a: g(2, 3), b: \"x,y\"}"]);
    assert_eq!(tail, "); x");
    assert_eq!(
        split_top_level("a: g(2, 3), b: \"x,y\"", ','),
        vec!["a: g(2, 3)", "b: \"x,y\""]
    );
    assert!(find_call("nf(1)", "f").is_none());
}

#[test]
fn a_panic_in_native_code_becomes_that_variants_error_row() {
    // an embedder's function with a bug: it panics on one input
    let h = ScriptHost::with_extensions(gapwise::script::EngineLimits::default(), |engine| {
        engine.register_fn("fragile_square", |x: i64| -> i64 {
            assert!(x != 3, "fragile_square cannot take three");
            x * x
        });
    });
    let v = h
        .eval(
            "let t = family(|v| #{ square: fragile_square(v) }, [1, 2, 3, 4]); \
             [t.rows, t.error_count, t.column(\"square\")]",
            "<panic>",
        )
        .unwrap_or_else(|e| panic!("the family itself must not fail: {e}"));
    let shown = h.display(&v);
    assert!(
        shown.starts_with("[4, 1, "),
        "four rows, one error: {shown}"
    );
    let v = h
        .eval(
            "family(|v| #{ square: fragile_square(v) }, [3]).to_csv()",
            "<panic>",
        )
        .expect("family runs");
    let csv = h.display(&v);
    assert!(
        csv.contains("internal error: native code panicked in this variant")
            && csv.contains("fragile_square cannot take three"),
        "{csv}"
    );
}
