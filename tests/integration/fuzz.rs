//! Arbitrary and mutated recipe text into the parser, `eval` and `quantity()`, in process,
//! with a fixed budget (operations, time, cases): whatever the text, the engine answers with
//! a value or an error — never a panic (proptest reports one as a failure), never a hang
//! (the budgets stop it), never a non-finite quantity from `quantity()`. The process-level
//! hostile scripts (aborts, memory under `ulimit -v`) are in `repl/tests/hostile.rs`.

use gapwise::script::{EngineLimits, ScriptHost};
use proptest::prelude::*;
use std::time::Duration;

fn fuzz_host() -> ScriptHost {
    ScriptHost::new(EngineLimits {
        max_operations: 200_000,
        time_budget: Duration::from_secs(5),
        ..EngineLimits::default()
    })
}

/// Pieces of the recipe language and of gapwise's vocabulary, so that random sequences
/// reach past the tokenizer into the parser, the evaluator and the registered functions.
const TOKENS: &[&str] = &[
    "let",
    "const",
    "fn",
    "if",
    "else",
    "for",
    "in",
    "while",
    "loop",
    "break",
    "return",
    "(",
    ")",
    "{",
    "}",
    "[",
    "]",
    "#{",
    ",",
    ";",
    ":",
    ".",
    "..",
    "..=",
    "=",
    "==",
    "+",
    "-",
    "*",
    "/",
    "%",
    "**",
    "|v|",
    "||",
    "!",
    "&&",
    "x",
    "v",
    "0",
    "1",
    "-1",
    "0.0",
    "1e308",
    "1e-308",
    "12",
    "\"V\"",
    "\"12 V\"",
    "\"\"",
    "V",
    "A",
    "mm",
    "kHz",
    "uF",
    "W",
    "ohm",
    "s",
    "quantity",
    "family",
    "grid",
    "table",
    "flyback_design",
    "core_by_size",
    "\"E25/13/7\"",
    "output_voltage:",
    "output_current:",
    "creepage_distance",
    "rule_book",
    "set_limit",
    "check_all",
    "print",
    "to_unit",
    "value_in",
    "sqrt",
    "abs",
    "min",
    "max",
];

fn token_soup() -> impl Strategy<Value = String> {
    prop::collection::vec(prop::sample::select(TOKENS), 0..40).prop_map(|t| t.join(" "))
}

/// The repository's recipes, read once.
fn recipes() -> Vec<String> {
    let dir = std::path::Path::new(env!("CARGO_MANIFEST_DIR")).join("scripts");
    let mut out: Vec<String> = std::fs::read_dir(dir)
        .expect("scripts folder")
        .filter_map(|e| e.ok())
        .filter(|e| e.path().extension().is_some_and(|x| x == "rhai"))
        .filter_map(|e| std::fs::read_to_string(e.path()).ok())
        .collect();
    out.sort();
    out
}

/// A recipe with one edit chosen by `(which, at, how)`: a line dropped, duplicated, cut at a
/// character, or a number replaced by an extreme.
fn mutate(recipes: &[String], which: usize, at: usize, how: u8, cut: usize) -> String {
    let text = &recipes[which % recipes.len()];
    let mut lines: Vec<String> = text.lines().map(str::to_string).collect();
    if lines.is_empty() {
        return String::new();
    }
    let i = at % lines.len();
    match how % 5 {
        0 => {
            lines.remove(i);
        }
        1 => {
            let l = lines[i].clone();
            lines.insert(i, l);
        }
        2 => {
            let l = &mut lines[i];
            let c = (cut % (l.len() + 1)..=l.len())
                .find(|&c| l.is_char_boundary(c))
                .unwrap_or(0);
            l.truncate(c);
        }
        3 => lines[i] = lines[i].replace(|c: char| c.is_ascii_digit(), "9"),
        _ => lines[i] = lines[i].replace("1", "1e308"),
    }
    lines.join("\n")
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 96, ..ProptestConfig::default() })]

    #[test]
    fn arbitrary_text_parses_or_is_refused(text in "\\PC{0,200}") {
        let h = fuzz_host();
        // either outcome is fine; a panic fails the property
        let _ = h.compile(&text, "<fuzz>");
    }

    #[test]
    fn token_soup_evaluates_or_errs(text in token_soup()) {
        let h = fuzz_host();
        if let Err(e) = h.eval(&text, "<fuzz>") {
            prop_assert!(!e.message.is_empty(), "an error says something: {text}");
        }
    }

    #[test]
    fn quantity_of_any_text_is_finite_or_an_error(text in prop_oneof![
        "\\PC{0,40}",
        // numbers near the ends of the float range with units and prefixes
        "-?[0-9]{1,4}(\\.[0-9]{0,3})?(e[+-]?[0-9]{1,3})? ?(V|mV|kV|uF|nF|mm|mm2|m2|W|Hz|kHz|MHz|ohm|kohm|%|T|mT|A/m|)",
    ]) {
        let h = fuzz_host();
        let src = format!("quantity({text:?})");
        if let Ok(v) = h.eval(&src, "<fuzz>") {
            let shown = h.display(&v);
            prop_assert!(
                !shown.contains("NaN") && !shown.contains("inf"),
                "`{src}` gave {shown}"
            );
        }
    }

    #[test]
    fn mutated_recipes_end_with_a_value_or_an_error(
        which in 0usize..64, at in 0usize..400, how in 0u8..5, cut in 0usize..200
    ) {
        let r = recipes();
        prop_assume!(!r.is_empty());
        let text = mutate(&r, which, at, how, cut);
        let h = fuzz_host();
        if let Err(e) = h.eval(&text, "<fuzz>") {
            prop_assert!(!e.message.is_empty(), "an error says something");
        }
    }
}
